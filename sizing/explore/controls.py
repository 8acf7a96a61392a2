"""The values of a requirement file a reviewer can move: one :class:`Control` each, in the user's units.

A control is a numeric value *written in the file* that the built sizing
problem takes as a parameter (``Problem.paths``), or an entry of a drag-polar
Mach table (structure of the problem: changing it rebuilds the problem).
Defaults the file leaves out, Mach-table breakpoints, the design-space box
and text are not controls.

Each control carries the range the file format accepts for its key
(:data:`RANGES`, in SI, converted to the user's unit) so the page refuses a
value outside it before anything is solved; cross-field rules (a Mach number
inside the polar's table, engines out fewer than engines) are checked by
validating the whole changed file (:func:`sizing.inputs.spec.validate`).
``tests/test_explore.py`` checks every range against that validation.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass

from ..physics.atmosphere import H_MAX, H_MIN

INF = math.inf


@dataclass(frozen=True)
class Range:
    """Accepted values [SI]: ``lo`` to ``hi``, each end open (excluded) or closed."""

    lo: float = -INF
    hi: float = INF
    lo_open: bool = False
    hi_open: bool = False

    def contains(self, v: float) -> bool:
        """NaN-safe membership test.

        >>> Range(0.0, 1.0, lo_open=True).contains(0.0), Range(0.0, 1.0, lo_open=True).contains(1.0)
        (False, True)
        """
        if not math.isfinite(v):
            return False
        above = v > self.lo if self.lo_open else v >= self.lo
        below = v < self.hi if self.hi_open else v <= self.hi
        return above and below


def _r(lo=-INF, hi=INF, lo_open=False, hi_open=False):
    return Range(lo, hi, lo_open, hi_open)


# The ranges the requirement-file models accept (sizing/inputs/aircraft.py, kinds.py,
# mission.py, fields.py), in SI, by the last key names of a value's path; the longest
# matching suffix wins. tests/test_explore.py validates every example file just inside
# and just outside each range, so a change of the models that is not made here fails.
RANGES = {
    ("altitude",): _r(H_MIN, H_MAX),
    ("temperature_offset",): _r(-80.0, 60.0),
    ("weight_fraction",): _r(0.0, 1.0, lo_open=True),
    ("thrust_lapse",): _r(0.0, 3.0, lo_open=True),
    ("climb_rate",): _r(0.0, 500.0),
    ("excess_power",): _r(0.0, 500.0),
    ("speed",): _r(0.0, 1700.0, lo_open=True),
    ("cas",): _r(0.0, 340.0, lo_open=True),
    ("eas",): _r(0.0, 1700.0, lo_open=True),
    ("speed_limit", "cas"): _r(0.0, 340.0, lo_open=True),
    ("mach",): _r(0.0, 5.0, lo_open=True),
    ("load_factor",): _r(0.0, 15.0, lo_open=True),
    ("throttle",): _r(0.0, 1.0, lo_open=True),
    ("ground_roll",): _r(0.0, 1.0e5, lo_open=True),
    ("distance",): _r(0.0, 1.0e5, lo_open=True),
    ("balanced_field",): _r(0.0, 1.0e5, lo_open=True),
    ("field_length",): _r(0.0, 1.0e5, lo_open=True),
    ("obstacle",): _r(0.0, 100.0),
    ("rotation_time",): _r(0.0, 10.0),
    ("approach_angle",): _r(0.017, 0.14),
    # landing: distance / field length 0.3-1; approach-speed: multiple of the stall speed 1-2
    # (the key is the same; validating the changed file refines it per kind)
    ("factor",): _r(0.3, 2.0),
    ("min_speed_factor",): _r(1.0, 2.0),
    ("rolling_friction",): _r(0.0, 0.3),
    ("liftoff_speed_ratio",): _r(1.0, 1.5),
    ("ground_lift_coefficient",): _r(0.0, 4.5),
    ("braking_friction",): _r(0.05, 1.0),
    ("touchdown_speed_ratio",): _r(1.0, 1.5),
    ("free_roll_time",): _r(0.0, 60.0),
    ("gradient",): _r(-0.1, 0.5),
    ("engines_out",): _r(0.0),
    ("speed_ratio",): _r(1.0, 2.0),
    ("cd0",): _r(0.0, 0.5, lo_open=True),
    ("k1",): _r(0.0, 2.0, lo_open=True),
    ("aspect_ratio",): _r(0.0, 40.0, lo_open=True),
    ("oswald_efficiency",): _r(0.2, 1.0),
    ("k2",): _r(-0.5, 0.5),
    ("cl_max", "clean"): _r(0.2, 4.5),
    ("cl_max", "takeoff"): _r(0.2, 4.5),
    ("cl_max", "landing"): _r(0.2, 4.5),
    ("takeoff_drag_increment",): _r(0.0, 0.3),
    ("landing_drag_increment",): _r(0.0, 0.3),
    ("gear_drag_increment",): _r(0.0, 0.3),
    ("engine_out_drag_increment",): _r(0.0, 0.3),
    ("cl_buffet",): _r(0.0, 3.0, lo_open=True),
    ("buffet_margin",): _r(1.0, 2.5),
    ("takeoff_propeller_efficiency",): _r(0.2, 0.95),
    ("propeller_diameter",): _r(0.3, 8.0),
    ("bypass_ratio",): _r(0.0, 20.0),
    ("max_landing_fraction",): _r(0.3, 1.0),
    ("engines",): _r(1.0, 8.0),
    ("throttle_ratio",): _r(0.9, 1.3),
    ("propeller_efficiency",): _r(0.2, 0.95),
    ("crew",): _r(0.0),
    ("payload",): _r(0.0),
    ("empty", "wing"): _r(0.0, 1000.0, lo_open=True),
    ("empty", "propulsion"): _r(0.0, lo_open=True),
    ("empty", "other"): _r(0.0, 1.0, hi_open=True),
    ("empty", "value"): _r(0.0, 1.0, lo_open=True, hi_open=True),
    ("empty", "max_mach"): _r(0.0, 5.0, lo_open=True),
    ("empty", "a"): _r(),
    ("empty", "b"): _r(),
    ("empty", "c"): _r(),
    ("empty", "exponents"): _r(),
    ("fuel", "fraction"): _r(0.0, 1.0, hi_open=True),
    ("segments", "fraction"): _r(0.0, 1.0, lo_open=True),
    ("tsfc",): _r(0.0, lo_open=True),
    ("range",): _r(0.0, 4.0e7, lo_open=True),
    ("time",): _r(0.0, 1.0e6, lo_open=True),
    ("reserve",): _r(0.0, 0.5),
    ("trapped",): _r(0.0, 0.1),
    ("design_speeds", "cruise"): _r(0.0, 400.0, lo_open=True),
    ("design_speeds", "dive"): _r(0.0, 500.0, lo_open=True),
    ("cl_min",): _r(-3.0, -0.1),
    ("lift_curve_slope",): _r(1.0, 7.0),
    ("max_fuel",): _r(0.0, 1.0e6, lo_open=True),
    ("wing_load_factor", "reference"): _r(1.5, 12.0),
    ("wing_load_factor", "exponent"): _r(0.0, 1.5),
    ("wing_load_factor", "wing_share"): _r(0.0, 1.0, lo_open=True, hi_open=True),
}
INTEGER_KEYS = {"engines", "engines_out"}
TABLES = ("cd0", "k1", "cl_buffet")        # coefficients that may be Mach tables

# half-width of a slider around a value of zero [SI] (a slider spans the value +-50 % otherwise)
_ZERO_SPAN = {"altitude": 3000.0, "temperature_offset": 20.0, "climb_rate": 5.0, "excess_power": 20.0,
              "gradient": 0.05, "k2": 0.05, "free_roll_time": 5.0, "crew": 100.0, "payload": 100.0}

_NUM_UNIT = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


@dataclass(frozen=True)
class Control:
    """One movable value of the file.

    key : dotted path as a study file writes it (``requirements.turn-4g.load_factor``)
    group : what it belongs to (a requirement id, ``aircraft · weights``, ``mission · cruise``)
    label : its name inside the group (``load factor``, ``cd0 at M 0.80``)
    raw_path : where it sits in the file's data (requirements by list index)
    tree_path : where it sits in the SI tree (``Problem.paths`` entry), requirements by id
    value : the value as written [user unit]
    unit : the user's unit ("" for a plain number, "%" for a percentage)
    scale : SI per user unit
    range : accepted values [SI]
    integer : a whole number (engines)
    rebuild : True for Mach-table entries (structure: the problem is rebuilt)
    requirement : the requirement id, or None
    """

    key: str
    group: str
    label: str
    raw_path: tuple
    tree_path: tuple
    value: float
    unit: str
    scale: float
    range: Range
    integer: bool = False
    rebuild: bool = False
    requirement: str | None = None

    @property
    def low(self) -> float:
        """Lowest accepted value [user unit] (an open end is excluded, see :attr:`range`)."""
        return self.range.lo / self.scale

    @property
    def high(self) -> float:
        return self.range.hi / self.scale

    def refusal(self, value) -> str | None:
        """Why ``value`` [user unit] cannot be set, or None when it is in range.

        >>> c = Control("requirements.t.load_factor", "t", "load factor", (), (), 4.0, "", 1.0,
        ...             RANGES[("load_factor",)])
        >>> c.refusal(16.0)
        'load factor 16 is outside the range the file format accepts: above 0, up to 15'
        >>> c.refusal(4.5) is None
        True
        """
        try:
            v = float(value)
        except (TypeError, ValueError):
            return f"{value!r} is not a number"
        if not math.isfinite(v):
            return f"{self.label}: {value!r} is not a finite number"
        if self.integer and v != round(v):
            return f"{self.label} is a whole number, got {shown(v)}"
        if not self.range.contains(v * self.scale):
            return f"{self.label} {shown(v, self.unit)} is outside the range the file format accepts: " \
                   f"{self.range_text()}"
        return None

    def range_text(self) -> str:
        """The accepted range in the user's unit, with open ends said as such."""
        u = f" {self.unit}" if self.unit else ""
        lo, hi = self.low, self.high
        parts = []
        if math.isfinite(lo):
            parts.append(f"above {shown(lo)}{u}" if self.range.lo_open else f"from {shown(lo)}{u}")
        if math.isfinite(hi):
            parts.append(f"below {shown(hi)}{u}" if self.range.hi_open else f"up to {shown(hi)}{u}")
        return ", ".join(parts) or "any number"

    def raw(self, value):
        """The value [user unit] as the file writes it: a number, or ``"<number> <unit>"``."""
        v = float(value)
        if self.integer:
            return int(round(v))
        num = number_text(v)
        if self.unit:
            return f"{num} {self.unit}"
        return int(num) if re.fullmatch(r"-?\d+", num) else float(num)

    def window(self, value=None) -> tuple:
        """(start, end, step) of a slider around ``value`` [user unit], inside the range."""
        v = self.value if value is None else float(value)
        field = self.tree_path[-1] if isinstance(self.tree_path[-1], str) else self.tree_path[-2]
        half = 0.5 * abs(v) if v != 0 else _ZERO_SPAN.get(field, 1.0) / self.scale
        if self.integer:
            half = max(half, 2.0)
        lo, hi = v - half, v + half
        rlo, rhi = self.low, self.high
        lo = max(lo, rlo if not self.range.lo_open else rlo + 1e-9 * max(abs(half), 1e-12))
        hi = min(hi, rhi if not self.range.hi_open else rhi - 1e-9 * max(abs(half), 1e-12))
        if self.integer:
            return float(math.ceil(lo)), float(math.floor(hi)), 1.0
        step = _nice((hi - lo) / 200.0)
        lo, hi = math.ceil(lo / step - 1e-9) * step, math.floor(hi / step + 1e-9) * step
        return round_to(lo, step), round_to(hi, step), step


def _nice(x: float) -> float:
    """The round step (1, 2 or 5 x 10^k) at or below x > 0."""
    if not x > 0:
        return 1.0
    e = 10.0 ** math.floor(math.log10(x))
    return next(k * e for k in (5.0, 2.0, 1.0) if k * e <= x * (1 + 1e-12))


def round_to(v: float, step: float) -> float:
    """v rounded to the decimals of ``step`` (so 0.1 + 0.2 shows as 0.3)."""
    digits = max(0, -math.floor(math.log10(step)) + 1) if step > 0 else 6
    return round(v, digits)


def number_text(v: float) -> str:
    """A number as a file writes it: no trailing zeros, and exactly the same number when read back.

    >>> number_text(95.0), number_text(92.5), number_text(1.5e-05), number_text(0.1 + 0.2)
    ('95', '92.5', '1.5e-05', '0.30000000000000004')
    """
    text = format(float(v), ".10g")
    return text if float(text) == float(v) else repr(float(v))


def shown(v: float, unit: str = "") -> str:
    text = format(float(v), ".6g")
    return f"{text} {unit}" if unit else text


def range_key(raw_path) -> tuple | None:
    """The key of :data:`RANGES` that holds the range of the value at ``raw_path`` (longest suffix)."""
    names = tuple(k for k in raw_path if isinstance(k, str))
    return next((names[-n:] for n in (3, 2, 1) if len(names) >= n and names[-n:] in RANGES), None)


def range_for(raw_path) -> Range:
    """The accepted range [SI] of the value at ``raw_path`` (unbounded when no rule is known)."""
    key = range_key(raw_path)
    return RANGES[key] if key is not None else Range()


def _numeric_leaves(node, path=()):
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _numeric_leaves(v, path + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _numeric_leaves(v, path + (i,))
    elif isinstance(node, (int, float, str)) and not isinstance(node, bool):
        yield path, node


def _model_at(model, raw_path):
    node = model
    for k in raw_path:
        node = node[k] if isinstance(k, int) else getattr(node, k, None)
        if node is None:
            return None
    return node


def _group_and_label(spec, raw_path):
    """(group, label, requirement id) of a value for the page."""
    data = spec.data
    head = raw_path[0]
    if head == "requirements":
        rid = data["requirements"][raw_path[1]]["id"]
        rest = raw_path[2:]
        return rid, _words(rest), rid
    if head == "mission":
        if len(raw_path) > 2 and raw_path[1] == "segments":
            seg = data["mission"]["segments"][raw_path[2]]
            name = seg.get("name") or f"{seg.get('kind', 'segment')} {raw_path[2] + 1}"
            return f"mission · {name}", _words(raw_path[3:]), None
        return "mission", _words(raw_path[1:]), None
    section = raw_path[1] if len(raw_path) > 2 else ""
    return f"aircraft · {section.replace('_', ' ')}", _words(raw_path[2:]), None


_NAMES = {"cl_max": "CLmax", "cd0": "CD0", "k1": "k1", "k2": "k2", "tsfc": "TSFC"}


def _words(rest) -> str:
    out = []
    for k in rest:
        out.append(f"[{k + 1}]" if isinstance(k, int) else _NAMES.get(k, str(k).replace("_", " ")))
    return " ".join(out).replace(" [", "[")


def _table_label(spec, raw_path) -> str:
    """'cd0 at M 0.80' for an entry of a Mach table."""
    table = spec.data
    for k in raw_path[:-2]:
        table = table[k]
    mach = table.get("mach", [])
    i = raw_path[-1]
    at = f" at M {float(mach[i]):.2f}" if i < len(mach) else f" [{i + 1}]"
    return f"{_NAMES.get(raw_path[-2], raw_path[-2])}{at}"


def study_key(spec, raw_path) -> str:
    """The dotted path a study file would write (requirements by id)."""
    parts = []
    for i, k in enumerate(raw_path):
        if i == 1 and raw_path[0] == "requirements":
            parts.append(str(spec.data["requirements"][k]["id"]))
        else:
            parts.append(str(k))
    return ".".join(parts)


def controls_of(spec, paths) -> list:
    """Every movable value of a loaded file, in file order.

    ``paths`` are the built problem's parameter paths (``Problem.paths``).
    """
    index = set(paths)
    out = []
    for raw_path, raw in _numeric_leaves({k: spec.data[k] for k in ("aircraft", "mission", "requirements")
                                          if k in spec.data}):
        tree_path = tuple(spec.data["requirements"][k]["id"] if (i == 1 and raw_path[0] == "requirements") else k
                          for i, k in enumerate(raw_path))
        table = (len(raw_path) >= 3 and isinstance(raw_path[-1], int) and raw_path[-2] in TABLES
                 and raw_path[-3] in TABLES)
        if tree_path not in index and not table:
            continue        # structure (breakpoints, ids) or not a parameter
        q = _model_at(spec.model, raw_path)
        m = _NUM_UNIT.match(raw) if isinstance(raw, str) else None
        value = float(m.group(1)) if m else float(raw) if not isinstance(raw, str) else float(q)
        if hasattr(q, "scale"):              # a Quantity: the user's unit
            unit, scale = q.unit, q.scale
            if not m:                        # a bare 0 temperature offset
                value = q.si / q.scale
        elif m and m.group(2) == "%":
            unit, scale = "%", 0.01
        else:
            unit, scale = "", 1.0
        group, label, rid = _group_and_label(spec, raw_path)
        if table:
            label = _table_label(spec, raw_path)
        field = next(k for k in reversed(raw_path) if isinstance(k, str))
        out.append(Control(key=study_key(spec, raw_path), group=group, label=label, raw_path=raw_path,
                           tree_path=tree_path, value=value, unit=unit, scale=scale,
                           range=range_for(raw_path), integer=field in INTEGER_KEYS, rebuild=table,
                           requirement=rid))
    order = {"requirements": 0, "aircraft": 1, "mission": 2}
    return sorted(out, key=lambda c: order[c.raw_path[0]])     # stable: file order inside each

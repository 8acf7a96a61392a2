"""The SI tree of a requirement file, its parameters, and the physics views built from it.

The SI tree (see :meth:`sizing.inputs.spec.Spec.tree`) keeps the YAML's key names,
with requirements keyed by id. Its numeric leaves are the *parameters* of
the sizing problem: :func:`flatten` lists them by path, :func:`substitute`
rebuilds the tree with other values (CasADi symbols for the solver, new
numbers for a trade study). Strings, booleans, Mach tables (breakpoints
and values: their monotone interpolant is built from numbers) and the
design-space box are structure, not parameters.
"""
from __future__ import annotations

import math
from types import SimpleNamespace

from ..constraints import CLIMB_SEGMENTS, KINDS, SERVICE_CEILING_CLIMB_RATE, segment_defaults
from ..physics.aero import DragPolar, MachTable, oswald_efficiency_straight_wing

STRUCTURAL_KEYS = {"design_space", "title", "objective"}   # top-level keys that are not parameters
FT = 0.3048
SPEED_FIELDS = ("mach", "speed", "cas", "eas")
FORMS = {"takeoff": ("ground_roll", "distance", "balanced_field"),
         "landing": ("ground_roll", "distance", "field_length")}
# defaults of the field forms (SI): obstacle heights (14 CFR 25.113: 35 ft takeoff screen of
# transports; 50 ft elsewhere, Raymer §17.8-17.9), 3 deg approach, 0.6 (14 CFR 121.195(b))
FIELD_DEFAULTS = {("takeoff", "distance"): {"obstacle": 50 * FT},
                  ("takeoff", "balanced_field"): {"obstacle": 35 * FT},
                  ("landing", "distance"): {"obstacle": 50 * FT, "approach_angle": math.radians(3.0)},
                  ("landing", "field_length"): {"obstacle": 50 * FT, "approach_angle": math.radians(3.0),
                                                "factor": 0.6}}
DEFAULT_BYPASS_RATIO = {"turbojet": 0.0, "turbofan-low-bypass": 1.0, "turbofan-high-bypass": 5.0}


def spec_tree(spec) -> dict:
    """SI tree of a Spec with requirements keyed by id, the defaults of the field forms and the
    keys of climb segments filled (so they are parameters like any value written in the file)."""
    tree = spec.tree()
    tree["requirements"] = {r["id"]: r for r in tree["requirements"]}
    engines = tree["aircraft"]["propulsion"].get("engines", 1.0)
    for r in tree["requirements"].values():
        fill_defaults(r)
        if r["kind"] == "climb-gradient" and r.get("segment"):
            for k, v in segment_defaults(r["segment"], engines).items():
                r.setdefault(k, v)
    return tree


def needs_takeoff_mass(tree: dict) -> bool:
    """Whether requirement curves depend on the absolute size (a propeller diameter is given)."""
    prop = tree["aircraft"]["propulsion"]
    return prop["type"] in ("turboprop", "piston") and prop.get("propeller_diameter") is not None


def form_of(r: dict):
    """The form a takeoff or landing requirement is written in (``ground_roll``, ...), or None."""
    return next((k for k in FORMS.get(r["kind"], ()) if r.get(k) is not None), None)


def fill_defaults(r: dict) -> dict:
    """Fill (in place) the defaults that depend on a requirement's form (obstacle heights, approach
    angle, field factor)."""
    for k, v in FIELD_DEFAULTS.get((r["kind"], form_of(r)), {}).items():
        r.setdefault(k, v)
    return r


def is_table(d) -> bool:
    return isinstance(d, dict) and "mach" in d and isinstance(d["mach"], list)


def flatten(tree, path=()):
    """List of (path, value) for every numeric parameter leaf of the tree."""
    out = []
    if isinstance(tree, dict):
        for k, v in tree.items():
            if not path and k in STRUCTURAL_KEYS:
                continue
            if is_table(v):
                continue   # Mach tables are structure (their interpolant is built from numbers)
            out.extend(flatten(v, path + (k,)))
    elif isinstance(tree, list):
        for i, v in enumerate(tree):
            out.extend(flatten(v, path + (i,)))
    elif isinstance(tree, float):
        out.append((path, tree))
    return out


def substitute(tree, values: dict, path=()):
    """Copy of the tree with leaves at the given paths replaced."""
    if path in values:
        return values[path]
    if isinstance(tree, dict):
        return {k: substitute(v, values, path + (k,)) for k, v in tree.items()}
    if isinstance(tree, list):
        return [substitute(v, values, path + (i,)) for i, v in enumerate(tree)]
    return tree


def structure_key(tree) -> str:
    """A string that is equal for trees that differ only in parameter values."""
    paths = {p for p, _ in flatten(tree)}

    def strip(t, path=()):
        if path in paths:
            return "#"
        if isinstance(t, dict):
            return {k: strip(v, path + (k,)) for k, v in t.items()}
        if isinstance(t, list):
            return [strip(v, path + (i,)) for i, v in enumerate(t)]
        return t

    return repr(strip(tree))


def _coef(c):
    if isinstance(c, dict):
        name = next(k for k in ("cd0", "k1", "cl_buffet") if k in c)
        return MachTable(tuple(c["mach"]), tuple(c[name]))
    return c


def induced_factor(aero: dict):
    """k1 from the tree: given directly, or 1/(pi A e) (e estimated if absent)."""
    if "k1" in aero:
        return _coef(aero["k1"])
    A = aero["aspect_ratio"]
    e = aero.get("oswald_efficiency")
    if e is None:
        e = oswald_efficiency_straight_wing(A)
    return 1.0 / (math.pi * A * e)


def aircraft(tree: dict, takeoff_mass=None) -> SimpleNamespace:
    """Physics view of the aircraft: polar, engine data, speed limit, buffet onset.

    takeoff_mass [kg] (a number, array or symbol) is needed where the absolute size matters:
    the momentum-theory cap of a propeller of given diameter. Callers set it (the solver's
    unknown, the design's mass, the closure of a scan).
    """
    a = tree["aircraft"]
    aero, prop = a["aerodynamics"], a["propulsion"]
    clm = aero["cl_max"]
    cl_takeoff = clm.get("takeoff", clm["clean"])
    cl_max = {"clean": clm["clean"], "takeoff": cl_takeoff, "landing": clm.get("landing", cl_takeoff)}
    polar = DragPolar(
        cd0=_coef(aero["cd0"]), k1=induced_factor(aero), k2=aero.get("k2", 0.0), cl_max=cl_max,
        drag_increment={"takeoff": aero.get("takeoff_drag_increment", 0.0),
                        "landing": aero.get("landing_drag_increment", 0.0)},
    )
    lim = a.get("speed_limit") or {}
    buffet = _coef(aero["cl_buffet"]) if "cl_buffet" in aero else None
    return SimpleNamespace(
        polar=polar,
        engine_type=prop["type"],
        engines=prop.get("engines", 1.0),
        throttle_ratio=prop.get("throttle_ratio", 1.0),
        afterburner=prop.get("afterburner", False),
        propeller_efficiency=prop.get("propeller_efficiency", 0.8),
        takeoff_propeller_efficiency=prop.get("takeoff_propeller_efficiency"),
        propeller_diameter=prop.get("propeller_diameter"),
        bypass_ratio=prop.get("bypass_ratio", DEFAULT_BYPASS_RATIO.get(prop["type"], 0.0)),
        speed_limit_mach=lim.get("mach"),
        speed_limit_cas=lim.get("cas"),
        speed_limit_speed=lim.get("speed"),
        gear_drag_increment=aero.get("gear_drag_increment", 0.0),
        engine_out_drag_increment=aero.get("engine_out_drag_increment", 0.0),
        cl_buffet=buffet,
        buffet_margin=aero.get("buffet_margin", 1.3) if buffet is not None else None,
        max_landing_fraction=a.get("weights", {}).get("max_landing_fraction"),
        takeoff_mass=takeoff_mass,
    )


def requirement(r: dict, ac, beta=None) -> SimpleNamespace:
    """Physics view of one requirement with kind defaults filled and beta set.

    beta: the weight fraction to use (a number or symbol); None takes the
    file's number, or 1.0 when the file gives none (``after:`` fractions are
    supplied by the caller from the mission).
    """
    d = fill_defaults(dict(r))
    d.setdefault("altitude", 0.0)
    d.setdefault("temperature_offset", 0.0)
    for key in ("mach", "speed", "cas", "eas", "thrust_lapse", "config", "segment", "gear", "ground_roll",
                "distance", "balanced_field", "field_length"):
        d.setdefault(key, None)
    if d["kind"] == "ceiling":
        d.setdefault("climb_rate", SERVICE_CEILING_CLIMB_RATE)
    if d["kind"] in ("ceiling", "climb"):
        d.setdefault("engines_out", 0.0)
    if d["kind"] == "climb-gradient":
        d.setdefault("engines_out", 1.0)
        d.setdefault("speed_ratio", 1.2)
    if d["kind"] == "takeoff":
        d.setdefault("rotation_time", 3.0)
    if d["kind"] == "landing":
        d.setdefault("free_roll_time", 3.0)
    if d["kind"] == "takeoff" and d.get("ground_lift_coefficient") is None:
        # CL for least ground-roll drag plus friction, mu / (2 k1) (from memory:
        # Raymer Ch. 17 and Anderson, Aircraft Performance and Design, §6.7)
        d["ground_lift_coefficient"] = d.get("rolling_friction", 0.04) / (2.0 * ac.polar.K1(0.0))
    if beta is None:
        wf = r.get("weight_fraction")
        beta = wf if not isinstance(wf, dict) and wf is not None else 1.0
        if wf is None and at_landing_weight(d) and getattr(ac, "max_landing_fraction", None) is not None:
            beta = ac.max_landing_fraction
    d["beta"] = beta
    return SimpleNamespace(**d)


def at_landing_weight(r) -> bool:
    """Whether a requirement is flown at landing weight by default (``weights.max_landing_fraction``):
    landing, approach speed, and the approach and landing climb segments."""
    r = r if isinstance(r, dict) else vars(r)
    if r["kind"] in ("landing", "approach-speed"):
        return True
    seg = r.get("segment")
    return r["kind"] == "climb-gradient" and seg is not None and CLIMB_SEGMENTS[seg].get("landing_weight", False)


def value_field(r: dict) -> str:
    """The field of a requirement whose value its sensitivity is taken against."""
    name = KINDS[r["kind"]].value_field
    if name in ("speed", "mach"):       # whichever the file gives
        return next((k for k in SPEED_FIELDS if r.get(k) is not None), name)
    if r["kind"] in FORMS:
        return form_of(r) or name
    return name

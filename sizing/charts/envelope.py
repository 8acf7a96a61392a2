"""Envelope check of the sized design: where in altitude and Mach it can fly.

From :mod:`.performance`: the 1 g level-flight region (Ps = 0 and the CLmax
clean stall line), sustained load-factor boundaries (Ps = 0 at n g), Ps
contours, absolute (Ps = 0) and service (100 ft/min) ceilings, top speeds,
and every requirement at its own conditions (weight fraction, temperature,
lapse, configuration, throttle) with its margin.

:func:`compute_envelope` (numpy) -> :class:`Envelope` (arrays, table,
``.to_frame()``) -> :func:`sizing.charts.envelope_plot.plot_envelope`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .. import constraints as C
from ..common.caution import CAUTION
from ..common.conversions import FPM, FT, KN
from ..common.errors import InputError
from ..physics.airspeed import as_kind
from ..physics.atmosphere import H_MAX, isa
from ..physics.propulsion import is_propeller
from ..problem import tree as M
from .coffin import CoffinCorner, Zoom, buffet_lift, coffin_corner, energy_height, zoom_ceiling
from .performance import Boundary, Conditions, Flight, domain_mach, maximise
from .style import styles_of

SERVICE_CLIMB_RATE = C.SERVICE_CEILING_CLIMB_RATE      # 100 ft/min = 0.508 m/s
ON_BOUNDARY_TOL = 1e-4     # relative: a capability this close to its requirement sits on its boundary
_DEFAULT_CONFIG = {"takeoff": "takeoff", "climb-gradient": "takeoff", "landing": "landing"}
_OWN_BOUNDARY = ("sustained-turn", "excess-power", "max-mach", "cruise", "ceiling", "climb")


@dataclass(frozen=True)
class RequirementPoint:
    """A requirement at its own flight condition: where it is flown, met or not, the solve's margin text,
    the envelope's own value of its quantity (SI; ``better`` +1: larger is better, -1: stall speed)."""

    id: str
    kind: str
    mach: float
    altitude: float
    met: bool
    active: bool
    on_boundary: bool
    detail: str
    conditions: str
    value: float | None = None
    required: float | None = None
    better: int = +1
    boundary: Boundary | None = None


_ROW_KEYS = ("quantity", "requirement", "altitude_m", "altitude_ft", "mach", "weight_fraction",
             "value", "required", "unit", "limited_by", "text")


@dataclass(frozen=True)
class Envelope:
    """Computed altitude-Mach envelope of a sized design (SI arrays; no drawing).

    altitude [m] x mach [-] grid with ps [m/s] at 1 g (NaN outside the 1 g
    region); level and turns are :class:`Boundary`; stall and speed_limit are
    (mach, altitude) lines; ceilings (altitude, Mach) or None; rows the table.
    """

    title: str
    propeller: bool
    weight_fraction: float
    wing_loading: float
    power_or_thrust: float
    mach_top: float
    altitude: np.ndarray
    mach: np.ndarray
    ps: np.ndarray
    level: Boundary
    turns: tuple
    stall: tuple
    speed_limit: tuple | None
    table_limit: float | None
    absolute_ceiling: tuple | None
    service_ceiling: tuple | None
    points: tuple
    rows: tuple
    notes: tuple = ()
    coffin: CoffinCorner | None = None      # 1 g stall (or buffet) and Mach-limit edges, where they meet
    zoom: Zoom | None = None                 # largest energy height of the 1 g envelope
    energy: np.ndarray | None = None         # energy height h + V^2/(2 g0) [m] over the altitude x mach grid
    speed_limit_text: str = "speed limit"
    styles: dict = field(default_factory=dict)   # id -> style.IdStyle (the same in every figure)
    rating: str = ""                             # the rating T_SL (P_SL) is quoted at ("dry rating", ...)

    def to_frame(self):
        """The envelope table as a pandas DataFrame, one row per quantity."""
        import pandas as pd

        return pd.DataFrame(list(self.rows), columns=list(_ROW_KEYS))

    def table_text(self) -> str:
        """The table as fixed-width text for the terminal."""
        w = max([len(r["quantity"]) for r in self.rows] + [10])
        lines = [f"Envelope check: {self.title}",
                 f"  weight fraction {self.weight_fraction:.3f}, standard day, clean, full throttle "
                 f"(requirement rows at their own conditions)"]
        lines += [f"  {r['quantity']:<{w}}  {r['text']}" for r in self.rows]
        return "\n".join(lines + [f"  note: {t}" for t in self.notes])

    def as_dict(self) -> dict:
        """The JSON object of ``sizing envelope --json``: ceilings, top speeds, coffin corner, zoom (SI)."""
        def pair(c):
            return None if c is None else {"altitude_m": c[0], "mach": c[1]}

        cc, z = self.coffin, self.zoom
        return {
            "title": self.title, "weight_fraction": self.weight_fraction, "wing_loading_Pa": self.wing_loading,
            ("power_to_weight_W_per_N" if self.propeller else "thrust_to_weight"): self.power_or_thrust,
            "absolute_ceiling": pair(self.absolute_ceiling), "service_ceiling": pair(self.service_ceiling),
            "top_speeds": [{"altitude_m": r["altitude_m"], "mach": r["mach"], "limited_by": r["limited_by"],
                            "text": r["text"]} for r in self.rows if r["quantity"].startswith("max Mach")],
            "coffin_corner": None if cc is None else {
                "low_speed_edge": cc.low_kind, "meet": pair(cc.meet),
                "narrowest_band": None if cc.narrowest is None else dict(zip(
                    ("altitude_m", "width_mach", "width_tas_m_s", "low_mach", "high_mach"), cc.narrowest)),
                "searched_up_to_m": cc.top_altitude,
                "by_altitude": [{"altitude_m": h, "low_mach": lo, "high_mach": hi, "gap_mach": hi - lo}
                                for h, lo, hi in zip(cc.altitude, cc.low, cc.high)]},
            "zoom_ceiling_upper_bound": None if z is None else {
                "energy_height_m": z.energy_height, "from_altitude_m": z.altitude, "from_mach": z.mach},
            "requirements": [{"id": p.id, "kind": p.kind, "met": p.met, "on_boundary": p.on_boundary,
                              "value": p.value, "required": p.required, "detail": p.detail} for p in self.points],
            "notes": list(self.notes), "caution": CAUTION}

    def plot(self, ax=None, **kwargs):
        """Draw the envelope (see :func:`sizing.charts.envelope_plot.plot_envelope`)."""
        from .envelope_plot import plot_envelope  # lazy: a convenience method (listed in the layering test)

        return plot_envelope(self, ax=ax, **kwargs)


def _row(quantity, text, requirement="", altitude=None, mach=None, beta=None, value=None, required=None,
         unit="", limited_by=""):
    f = (lambda v: None if v is None or not np.isfinite(v) else float(v))      # noqa: E731
    return dict(zip(_ROW_KEYS, (quantity, requirement, f(altitude), None if f(altitude) is None else altitude / FT,
                                f(mach), f(beta), f(value), f(required), unit, limited_by, text)))


def _ft(h):
    return f"{h / FT:,.0f} ft ({h:,.0f} m)"


def status_text(p):
    return "NOT MET" if not p.met else ("on its boundary" if p.on_boundary else "met")


# -- Compute -------------------------------------------------------------------------------------

def nice_step(span, count=6):
    raw = span / max(count, 1)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1.0
    return next((s * mag for s in (1, 2, 2.5, 5) if s * mag >= raw), 10 * mag)


def _conditions(r, res_r):
    """How a requirement is flown, as the solver flies it (engines out, the free-speed floor of
    min_speed_factor x stall and, for a ceiling, buffet onset)."""
    free = r["kind"] == "ceiling" or (r["kind"] == "climb" and not any(r.get(k) is not None
                                                                        for k in ("mach", "speed", "cas", "eas")))
    return Conditions(float(res_r.beta), float(r.get("temperature_offset", 0.0)), r.get("thrust_lapse"),
                      r.get("config") or _DEFAULT_CONFIG.get(r["kind"], "clean"), float(r.get("throttle", 1.0)),
                      float(r.get("engines_out", 0.0)) if r["kind"] in ("ceiling", "climb") else 0.0,
                      float(r.get("min_speed_factor", 1.2)) if free else 1.0, r["kind"] == "ceiling")


def _conditions_text(c, r, propeller):
    parts = [f"weight fraction {c.beta:.3f}", c.temperature_offset and f"ISA{c.temperature_offset:+g} K",
             c.thrust_lapse is not None and f"{'power' if propeller else 'thrust'} lapse {c.thrust_lapse:g} given",
             c.config != "clean" and c.config, c.throttle != 1.0 and f"throttle {c.throttle:g}",
             r["kind"] in ("ceiling", "climb") and f"climb rate {r.get('climb_rate', 0.0) / FPM:,.0f} ft/min",
             r["kind"] == "excess-power" and f"Ps {r.get('excess_power', 0.0):.3g} m/s at {r.get('load_factor', 1):g} g"]
    return ", ".join(p for p in parts if p)


def _point_speed(r, req, ac, W_S, res_r, air):
    """True airspeed [m/s] at which a requirement is flown (or lifts off, touches down)."""
    if any(r.get(k) is not None for k in C.SPEED_KEYS):
        return float(C.fixed_speed(req, air))
    if res_r.speed is not None:
        return float(res_r.speed)
    Vs = math.sqrt(2.0 * req.beta * W_S / (float(air.density) * ac.polar.CLmax(_conditions(r, res_r).config)))
    return Vs * {"takeoff": r.get("liftoff_speed_ratio", 1.1), "landing": r.get("touchdown_speed_ratio", 1.15),
                 "climb-gradient": r.get("speed_ratio", 1.2)}.get(r["kind"], 1.0)


def _evaluate(r, res_r, ac, W_S, Y, mach_top):
    """A requirement at its own conditions: (point fields, table row, own-boundary spec)."""
    kind, rid = r["kind"], r["id"]
    cond = _conditions(r, res_r)
    req = M.requirement(r, ac, cond.beta)
    air = C.condition(req)
    h = float(r.get("altitude", 0.0))
    V = _point_speed(r, req, ac, W_S, res_r, air)
    Mn = V / float(air.speed_of_sound)
    fl = Flight(W_S, Y, ac, cond, mach_top)
    value = required = row = None
    quantity, target, n_b, better, by, over = "", 0.0, float(r.get("load_factor", 1.0)), +1, "", {}
    at = f"at M {Mn:.3f}, {_ft(h)}"
    if kind in ("sustained-turn", "instantaneous-turn"):
        n_t, n_l = (float(v) for v in fl.load_factor(h, Mn))
        turn = kind == "sustained-turn"
        value, required, unit, by = (min(n_t, n_l) if turn else n_l), n_b, "g", "thrust" if turn and n_t <= n_l else "CLmax"
        quantity = "max sustained load factor" if turn else "CLmax load factor"
        text = f"{value:.2f} g {at} ({by} limit); {required:.2f} g required"
    elif kind == "excess-power":
        value, required, unit = float(fl.ps(h, Mn, n_b)), r["excess_power"], "m/s"
        target, quantity = required, f"Ps at {n_b:g} g"
        text = f"{value:.2f} m/s ({value / FT:,.0f} ft/s) {at}; {required:.2f} m/s required"
    elif kind in ("max-mach", "cruise"):
        fly, value, by, text = fl.max_mach(h)
        required, unit, over = Mn, "Mach", {"mach": fly, "value": fly}
        quantity = "max level Mach" + ("" if cond.throttle == 1 else f" at throttle {cond.throttle:g}")
        text = f"{text} at {_ft(h)}; M {Mn:.3f} required"
    elif kind == "ceiling":
        target, required, unit = r["climb_rate"], h, "m"
        c = fl.ceiling(target, floor=min(0.0, h))
        value, quantity = (None if c is None else c[0]), f"ceiling at {target / FPM:,.0f} ft/min"
        over = {"altitude": c and c[0], "mach": c and c[1]}
        Mn = float(fl.best(np.array(h))[1]) if res_r.speed is None else Mn
        text = "climb rate not reached at any altitude" if c is None else f"{_ft(c[0])} at M {c[1]:.3f}; {_ft(h)} required"
    elif kind == "climb":
        target = required = r["climb_rate"]
        if r.get("mach") is None and r.get("speed") is None and res_r.speed is None:
            value, Mn = (float(v) for v in fl.best(np.array(h)))
        else:
            value = float(fl.ps(h, Mn))
        quantity, unit = "rate of climb", "m/s"
        text = f"{value / FPM:,.0f} ft/min at M {Mn:.3f}, {_ft(h)} ({cond.config}); {target / FPM:,.0f} ft/min required"
    elif kind == "stall-speed":
        value = math.sqrt(2.0 * cond.beta * W_S / (float(air.density) * ac.polar.CLmax(cond.config)))
        required, quantity, better, unit, by = V, "stall speed", -1, "m/s", "CLmax"
        over = {"mach": value / float(air.speed_of_sound)}
        kind = C.speed_key(req) or "speed"
        shown = {"mach": ("M ", 1.0, ""), "speed": ("", KN, " kn TAS"), "cas": ("", KN, " kn CAS"),
                 "eas": ("", KN, " kn EAS")}[kind]
        own = float(as_kind(kind, value, air)) / shown[1]
        limit = float(as_kind(kind, V, air)) / shown[1]
        text = (f"{shown[0]}{own:.1f}{shown[2]} ({cond.config}); {shown[0]}{limit:.1f}{shown[2]} limit"
                + (f" ({value / KN:.1f} kn TAS)" if kind in ("cas", "eas") else ""))
    if quantity:
        row = _row(f"{rid}: {quantity}", text, rid, over.get("altitude", h), over.get("mach", Mn), cond.beta,
                   over.get("value", value), required, unit, by)
    tol = ON_BOUNDARY_TOL * max(abs(required or 0.0), 1e-9)
    known = value is not None and required is not None
    pt = dict(id=rid, kind=kind, mach=float(Mn), altitude=h, active=bool(res_r.active),
              met=bool(res_r.margin >= 0.0 and (not known or better * (value - required) >= -tol)),
              on_boundary=bool(res_r.active or (known and abs(value - required) <= tol)),
              detail=res_r.detail, value=value, required=required, better=better,
              conditions=_conditions_text(cond, r, is_propeller(ac.engine_type)))
    return pt, row, (fl, n_b, target) if kind in _OWN_BOUNDARY else None


def compute_envelope(spec, res, weight_fraction=None, altitudes=90, machs=150):
    """Altitude-Mach envelope of a solved design (see the module docstring) -> :class:`Envelope`.

    res : a feasible :class:`sizing.model.Result` of ``spec``; weight_fraction : beta of the
    drawn envelope, in (0, 2], default 1 (takeoff weight); altitudes, machs : the Ps contour
    grid (boundaries, ceilings and top speeds come from root finding, not from the grid).
    """
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the envelope needs a feasible design; this requirement set has none")
    B = 1.0 if weight_fraction is None else float(weight_fraction)
    if not (0.0 < B <= 2.0):
        raise InputError(f"weight fraction {weight_fraction!r} must be a number in (0, 2], the weight as "
                         f"a fraction of takeoff weight (e.g. 0.8)", field="--weight-fraction")
    tree = M.spec_tree(spec)
    ac, reqs, d = M.aircraft(tree), tree["requirements"], res.design
    W_S, Y = float(d.wing_loading), float(d.power_to_weight if res.propeller else d.thrust_to_weight)
    top = domain_mach(ac)
    fl = Flight(W_S, Y, ac, Conditions(beta=B), top)
    results, notes = {r.id: r for r in res.requirements}, []
    abs_c, svc_c = fl.ceiling(0.0), fl.ceiling(SERVICE_CLIMB_RATE)
    evaluated = [_evaluate(r, results[rid], ac, W_S, Y, top) for rid, r in reqs.items()]
    # altitudes: from the lowest requirement to past the ceilings and the highest requirement
    alts = [float(r.get("altitude", 0.0)) for r in reqs.values()]
    h_lo = min([0.0] + alts)
    h_need = max(alts + [3000.0, abs_c[0] if abs_c else 0.0]
                 + [p["value"] for p, _, _ in evaluated if p["kind"] == "ceiling" and p["value"] is not None])
    step = nice_step(1.08 * (h_need - h_lo) / FT, 8) * FT
    h_hi = min(h_lo + step * math.ceil(1.08 * (h_need - h_lo) / step), H_MAX - 1.0)
    h_b = np.linspace(h_lo, h_hi, 97)
    level = fl.boundary(h_b, 1.0, 0.0, "1 g, Ps = 0")
    n_req = [float(r["load_factor"]) for r in reqs.values() if "load_factor" in r]
    turns = []
    for n in sorted(set(range(2, int(math.ceil(max(n_req + [2.0]) - 1e-9)) + 1)) | {n for n in n_req if n > 1}):
        b = fl.boundary(h_b, float(n), 0.0, f"{n:g} g")
        if np.isfinite(b.lo).any():
            turns.append(b)
        else:
            notes.append(f"{n:g} g is not sustainable anywhere at weight fraction {B:.3f}")
    H, Mg = np.meshgrid(np.linspace(h_lo, h_hi, altitudes), np.linspace(0.0, top, machs + 1)[1:], indexing="ij")
    ps = fl.ps(H, Mg)
    ps = np.where((Mg >= fl.mach_lift(H)) & (ps >= 0.0), ps, np.nan)
    air = isa(h_b)
    given = C.speed_limit(ac, air)      # VMO/MMO: the lower of the two at each altitude
    lims = [np.asarray(given / air.speed_of_sound) + 0.0 * h_b] if given is not None else []
    table = float(ac.polar.mach_max) if math.isfinite(ac.polar.mach_max) else None
    if table is None:
        lims = lims or [C.max_free_speed(ac, air) / air.speed_of_sound]
        notes.append(f"the drag polar has no Mach table (no drag rise modelled); the grid stops at M {top:.2f}"
                     + ("" if given is not None else
                        "; no speed_limit given: free speeds stop at M 0.95 (the solver's default)"))
    rows = [_row(name, f"{_ft(c[0])} at M {c[1]:.3f}", "", c[0], c[1], B, c[0], None, "m") if c
            else _row(name, "not reached at any altitude", beta=B)
            for name, c in (("absolute ceiling (Ps = 0)", abs_c), ("service ceiling (Ps = 100 ft/min)", svc_c))]
    by_alt = {0.0: []}
    for rid, r in reqs.items():
        by_alt.setdefault(float(r.get("altitude", 0.0)), []).append(rid)
    for h in sorted(by_alt):
        ids = ", ".join(by_alt[h])
        fly, tm, by, text = fl.max_mach(h)
        rows.append(_row("max Mach at sea level" if h == 0.0 else f"max Mach at {h / FT:,.0f} ft",
                         "no level flight" if not np.isfinite(tm) else text + (f"  [{ids}]" if ids else ""),
                         ids, h, fly, B, fly, None, "Mach", by if np.isfinite(tm) else ""))
    with np.errstate(invalid="ignore"):      # the corner of the envelope at the lowest altitude
        nbest, mbest = (float(v) for v in maximise(lambda X: np.minimum(*fl.load_factor(h_lo + 0.0 * X, X)),
                                                    np.array(fl.mach_lift(h_lo)), np.array(top)))
    if np.isfinite(nbest):
        rows.append(_row(f"max sustained load factor at {h_lo / FT:,.0f} ft", f"{nbest:.2f} g at M {mbest:.3f}",
                         "", h_lo, mbest, B, nbest, None, "g"))
    # coffin corner (low-speed edge: buffet when the file gives cl_buffet, else stall) and zoom
    cl_b = buffet_lift(tree)
    cc = coffin_corner(fl, h_b, abs_c[0] if abs_c else h_hi, cl_b)
    zoom = zoom_ceiling(level, np.asarray(fl.mach_limit(h_b), dtype=float) + 0.0 * h_b)
    for q, text, h_r, m_r, v_r, unit in cc.rows() + (zoom.rows() if zoom else []):
        rows.append(_row(q, text, "", h_r, m_r, B, v_r, None, unit))
    if zoom is not None:
        notes.append("zoom ceiling: energy height h + V^2/(2 g) (Rutowski's energy method, J. Aeronaut. Sci. 1954)")
    points = []
    for pt, row, own in evaluated:
        rows += [row] if row is not None else []
        b = None if own is None else own[0].boundary(h_b, own[1], own[2], f"{pt['id']} (own conditions)")
        points.append(RequirementPoint(boundary=b, **pt))
    return Envelope(title=res.title, propeller=res.propeller, weight_fraction=B, wing_loading=W_S,
                    power_or_thrust=Y, mach_top=top, altitude=H[:, 0], mach=Mg[0], ps=ps, level=level,
                    turns=tuple(turns), stall=(fl.mach_lift(h_b), h_b), speed_limit=(np.minimum.reduce(lims), h_b)
                    if lims else None, table_limit=table, absolute_ceiling=abs_c, service_ceiling=svc_c,
                    points=tuple(points), rows=tuple(rows), notes=tuple(notes), coffin=cc, zoom=zoom,
                    energy=energy_height(H, Mg * np.asarray(isa(H).speed_of_sound, dtype=float)),
                    speed_limit_text=speed_limit_text(ac),
                    styles=styles_of(spec), rating=res.design.rating)


def speed_limit_text(ac) -> str:
    """'speed limit 340 kn CAS / M 0.88' (VMO/MMO), as the file gives it."""
    parts = ([f"{ac.speed_limit_cas / KN:.0f} kn CAS"] if getattr(ac, "speed_limit_cas", None) is not None else []) \
        + ([f"M {ac.speed_limit_mach:.2f}"] if ac.speed_limit_mach is not None else []) \
        + ([f"{ac.speed_limit_speed / KN:.0f} kn TAS"] if ac.speed_limit_speed is not None else [])
    return "speed limit " + " / ".join(parts) if parts else "speed limit"

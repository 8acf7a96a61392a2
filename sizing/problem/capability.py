"""A requirement in its own terms: capability at the design, user units.

"stall 91 kn vs 95 kn limit", "4.6 g sustainable vs 4.0 required": for each
requirement, find by bisection the value of its headline field (the one it
is sized by) at which the design just meets it, using the same constraint
functions as the solver and the diagram, and say it in the user's unit.
"""
from __future__ import annotations

import math

import numpy as np

from .. import constraints as C
from ..physics.airspeed import KINDS as AIRSPEED
from . import tree as M

# which way makes a requirement harder: +1 larger value is harder, -1 smaller
_SPEED_HARDER = {"stall-speed": -1, "approach-speed": -1, "cruise": +1, "max-mach": +1, "sustained-turn": +1,
                 "instantaneous-turn": -1, "excess-power": +1, "climb": +1}
HARDER = {
    "speed": _SPEED_HARDER, "cas": _SPEED_HARDER, "eas": _SPEED_HARDER, "mach": _SPEED_HARDER,
    "load_factor": +1, "altitude": +1, "climb_rate": +1, "excess_power": +1,
    "ground_roll": -1, "distance": -1, "balanced_field": -1, "field_length": -1, "gradient": +1,
}
_WORDS = {
    "stall-speed": ("stall", "limit"), "sustained-turn": ("sustainable", "required"),
    "max-mach": ("reachable", "required"), "ceiling": ("ceiling", "required"),
    "climb": ("climb", "required"), "excess-power": ("Ps available", "required"),
    "cruise": ("reachable", "required"), "instantaneous-turn": ("available", "required"),
    "takeoff": ("ground roll", "allowed"), "landing": ("ground roll", "allowed"),
    "climb-gradient": ("gradient", "required"), "approach-speed": ("approach", "limit"),
}
_FORM_WORDS = {("takeoff", "distance"): "takeoff distance", ("takeoff", "balanced_field"): "balanced field",
               ("landing", "distance"): "landing distance", ("landing", "field_length"): "field length"}


def airspeed_label(field) -> str:
    """' TAS', ' CAS' or ' EAS' after a speed of a requirement field (``speed``, ``cas``, ``eas``)."""
    return f" {AIRSPEED[field]}" if field in AIRSPEED else ""


def user_unit(spec, rid, field):
    """(unit text, SI per user unit) of a requirement field as written."""
    req = spec.requirement(rid)
    v = getattr(req, field, None)
    if hasattr(v, "scale"):
        return v.unit, v.scale
    if field == "load_factor":
        return "g", 1.0
    if field == "mach":
        return "Mach", 1.0
    raw = next((r for r in spec.data.get("requirements", []) if isinstance(r, dict) and r.get("id") == rid), {})
    if isinstance(raw.get(field), str) and raw[field].strip().endswith("%"):
        return "%", 0.01
    if field == "gradient" and field not in raw:       # filled from a climb segment
        return "%", 0.01
    if field == "climb_rate":        # ceiling default
        return "ft/min", 0.3048 / 60.0
    return "unit", 1.0


def sensitivity_unit(spec, rid, field):
    """('kg per <user unit>', SI per user unit) for a requirement's sensitivity (airspeeds labelled
    TAS, CAS or EAS)."""
    unit, scale = user_unit(spec, rid, field)
    return f"kg per {unit}{airspeed_label(field)}", scale


def margin_at(r: dict, tree: dict, W_S, Y, beta, takeoff_mass=None) -> float:
    """Smallest fractional margin of a requirement at (W_S, Y), best free speed."""
    ac = M.aircraft(tree, takeoff_mass)
    req = M.requirement(r, ac, beta)
    with np.errstate(all="ignore"):
        thrust, lim, _ = C.required_curve(req, ac, np.array([W_S]), samples=48, refine=24)
    margins = []
    if thrust is not None:
        t = float(thrust[0])
        margins.append(Y / t - 1.0 if np.isfinite(t) and t > 0 else -1.0)
    if lim is not None:
        margins.append(float(lim[0]) / W_S - 1.0)
    return min(margins) if margins else math.inf


def capability(r: dict, tree: dict, W_S, Y, beta, field=None, takeoff_mass=None):
    """Value of the headline field at which the design just meets the requirement.

    Field lengths are computed directly (the distance the design needs); the other fields by
    bisection on the field's value (SI) using the constraint function itself. Returns None when
    no bracket is found (for example the design meets the requirement for any value in the
    plausible range).
    """
    field = field or M.value_field(r)
    harder = HARDER.get(field, +1)
    if isinstance(harder, dict):
        harder = harder.get(r["kind"], +1)
    v0 = float(r[field])

    ac = M.aircraft(tree, takeoff_mass)
    direct = field_length(r, ac, W_S, Y, beta)
    if direct is not None:
        return direct

    def beyond_limit(rr):
        """A speed above the speed limit or the polar's Mach table is not flown."""
        if field not in ("mach", "speed") or r["kind"] == "stall-speed":
            return False
        air = C.condition(M.requirement(rr, ac, beta))
        V = C.fixed_speed(M.requirement(rr, ac, beta), air)
        return float(V) > float(C.max_free_speed(ac, air)) * (1 + 1e-9)

    def g(v):
        rr = dict(r)
        rr[field] = v
        try:
            if beyond_limit(rr):
                return -1.0
            return margin_at(rr, tree, W_S, Y, beta, takeoff_mass)
        except ValueError:
            return -1.0

    g0 = g(v0)
    if not np.isfinite(g0):
        return None
    # walk outwards in the "harder" direction if met, "easier" if not
    direction = harder if g0 >= 0 else -harder
    lo, hi = v0, v0
    step = max(abs(v0) * 0.05, 1e-3)
    for _ in range(60):
        hi = lo + direction * step
        if field in ("load_factor", "mach", "speed", "ground_roll", "climb_rate") and hi <= 0:
            hi = lo / 2
        if field == "altitude" and not (-4900 < hi < 80000):
            return None
        gh = g(hi)
        if (gh >= 0) != (g0 >= 0):
            break
        lo, step = hi, step * 1.6
    else:
        return None
    a, b = lo, hi
    ga = g(a)
    for _ in range(40):
        if abs(b - a) <= 1e-6 * max(abs(a), abs(b), 1e-3):   # 6 digits: plenty for a margin text
            break
        c = 0.5 * (a + b)
        gc = g(c)
        if (gc >= 0) == (ga >= 0):
            a, ga = c, gc
        else:
            b = c
    return 0.5 * (a + b)


def fmt(value_si, unit, scale):
    v = value_si / scale
    if unit == "g":
        return f"{v:.2f} g"
    if unit == "Mach":
        return f"M {v:.3f}"
    if unit == "%":
        return f"{v:.2f} %"
    mag = abs(v)
    digits = 0 if mag >= 100 else (1 if mag >= 10 else 2)
    return f"{v:,.{digits}f} {unit}"


def field_length(r: dict, ac, W_S, Y, beta):
    """The distance a design needs for a takeoff over an obstacle, a balanced field, a landing from
    the obstacle or a landing field length [m]; None for other requirements (and ground rolls)."""
    form = M.form_of(r)
    if form in (None, "ground_roll"):
        return None
    req = M.requirement(r, ac, beta)
    with np.errstate(all="ignore"):
        if r["kind"] == "takeoff":
            f = C.takeoff_distance_of if form == "distance" else C.balanced_field_of
            return float(np.asarray(f(float(W_S), float(Y), req, ac)))
        S = float(np.asarray(C.landing_distance_of(float(W_S), req, ac)))
    return S if form == "distance" else S / float(req.factor)


def describe_margin(r: dict, tree: dict, spec, W_S, Y, beta, takeoff_mass=None) -> str:
    """The margin of a requirement in its own terms ("takeoff distance 1,234 m over 50 ft vs
    1,500 m allowed", "approach 121 kn CAS vs 125 kn CAS limit"), airspeeds labelled TAS, CAS
    or EAS, and what the requirement assumed where a reviewer would ask (the climb segment's
    paragraph, the propeller efficiency of a field kind)."""
    field = M.value_field(r)
    unit, scale = user_unit(spec, r["id"], field)
    unit_shown = unit + airspeed_label(field)
    have, need = _WORDS.get(r["kind"], ("design", "required"))
    have = _FORM_WORDS.get((r["kind"], M.form_of(r)), have)
    cap = capability(r, tree, float(W_S), float(Y), float(np.asarray(beta)), field, takeoff_mass)
    req_text = fmt(float(r[field]), unit_shown, scale)
    notes = assumptions(r, tree, takeoff_mass)
    if cap is None:
        return f"{req_text} {need}{notes}"
    note = ""
    if field in ("mach", "speed", "cas", "eas") and r["kind"] not in ("stall-speed", "approach-speed"):
        ac = M.aircraft(tree, takeoff_mass)
        req = M.requirement(dict(r, **{field: cap}), ac, beta)
        air = C.condition(req)
        if float(C.fixed_speed(req, air)) >= 0.999 * float(C.max_free_speed(ac, air)):
            note = " (at the speed limit)"
    return f"{have} {fmt(cap, unit_shown, scale)}{note} vs {req_text} {need}{notes}"


def assumptions(r: dict, tree: dict, takeoff_mass=None) -> str:
    """' (...)' naming what a requirement assumed: obstacle height, climb segment and paragraph,
    the propeller efficiency of field kinds; '' when nothing needs saying."""
    parts = []
    form = M.form_of(r)
    if form in ("distance", "balanced_field", "field_length") and "obstacle" in r:
        parts.append(f"{'over' if r['kind'] == 'takeoff' else 'from'} {r['obstacle'] / 0.3048:.0f} ft")
    if form == "field_length":
        parts.append(f"landing distance / {r.get('factor', 0.6):g}")
    seg = r.get("segment")
    if r["kind"] == "climb-gradient" and seg:
        parts.append(f"{C.CLIMB_SEGMENTS[seg]['paragraph']}, {C.CLIMB_SEGMENTS[seg]['what']}")
    prop = tree["aircraft"]["propulsion"]
    field_kind = r["kind"] == "takeoff" or (r["kind"] == "climb-gradient" and seg in ("first", "second"))
    if field_kind and prop["type"] in ("turboprop", "piston"):
        eta_to, D = prop.get("takeoff_propeller_efficiency"), prop.get("propeller_diameter")
        if eta_to is not None:
            eta = f"propeller efficiency {eta_to:g}, the takeoff value"
        else:
            eta = f"propeller efficiency {prop.get('propeller_efficiency', 0.8):g}: the cruise value, no takeoff value"
            eta += " given" if D is not None else " or propeller diameter given"
        if D is not None:
            eta += f"; momentum-theory cap at {D:.2f} m diameter"
        parts.append(eta)
    return f" ({'; '.join(parts)})" if parts else ""

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
    field = M.value_field(r)
    ac = M.aircraft(tree, takeoff_mass)
    return float(margins_at(r, ac, W_S, Y, beta, field, np.array([float(r[field])]))[0])


def margins_at(r: dict, ac, W_S, Y, beta, field, values, sign_only=False) -> np.ndarray:
    """Smallest fractional margin of a requirement at (W_S, Y), best free speed, for an array
    of values of its headline field at once (one evaluation of the constraint function).

    -1 where a thrust cannot be had at any speed; the smaller of the thrust margin
    Y/T - 1 and the wing-loading margin W/S_limit / W/S - 1 where the kind has both.
    ``sign_only``: only the sign of each margin is sure (a free speed is refined only as
    far as the sign needs, :func:`sizing.constraints.required_curve` ``level``).
    """
    level = Y if sign_only else None
    values = np.asarray(values, dtype=float)
    rr = dict(r)
    rr[field] = values
    req = M.requirement(rr, ac, beta)
    with np.errstate(all="ignore"):
        thrust, lim, _ = C.required_curve(req, ac, np.full(values.shape, float(W_S)), samples=48, refine=48,
                                          rtol=MARGIN_RTOL, level=level)
        out = np.full(values.shape, math.inf)
        if thrust is not None:
            out = np.where(np.isfinite(thrust) & (thrust > 0), Y / thrust - 1.0, -1.0)
        if lim is not None:
            m_lim = lim / W_S - 1.0
            # min(thrust margin, limit margin) as Python's min takes it (NaN-safe the same way)
            out = m_lim if thrust is None else np.where(m_lim < out, m_lim, out)
    return out


WALK_STEPS = 60        # outward steps before a margin search gives up
WALK_FIRST = 6         # of which the first few are tried in the first call
BISECTIONS = 40        # at most this many halvings of the bracket
BISECT_RTOL = 1e-6     # the bracket is halved down to this fraction: 6 digits, plenty for a text
TREE_DEPTH = (9, 7)    # most bisection levels evaluated in one call (2^depth - 1 probes):
                       # fixed-speed kinds, kinds with a free speed (each probe a speed scan)
MARGIN_RTOL = 1e-10    # thrust accuracy of a probe (a text shows five digits at most)


def capability(r: dict, tree: dict, W_S, Y, beta, field=None, takeoff_mass=None):
    """Value of the headline field at which the design just meets the requirement.

    Field lengths are computed directly (the distance the design needs, :func:`field_length`);
    the other fields by a bisection on the field's value (SI) using the constraint
    function itself: from the file's value, steps growing by 1.6 (the first 5 %)
    walk outwards, harder while the requirement is met, easier while it is not,
    until the margin changes sign; then the bracket is halved until it is below
    :data:`BISECT_RTOL` of the value. The probes are evaluated in a few array calls
    rather than one by one: the first walk steps at once, then several levels of
    the bisection at once (all midpoints it could visit), so the answer is
    the sequential bisection's own. Returns None when no bracket is found (for
    example the design meets the requirement for any value in the plausible range).
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
    g = _margin_function(r, ac, W_S, Y, beta, field)
    max_depth = TREE_DEPTH[1] if C.KINDS[r["kind"]].has_free_speed(M.requirement(r, ac, beta)) else TREE_DEPTH[0]

    # the walk in both directions (which one is taken depends on the sign at v0): its
    # first steps with v0 in one call, the rest only when they are needed
    walks = {d: _walk(v0, d, field) for d in (+1, -1)}
    n = WALK_FIRST
    G = g(np.concatenate([[v0], walks[+1][:n], walks[-1][:n]]))
    g0 = G[0]
    if not np.isfinite(g0):
        return None
    direction = harder if g0 >= 0 else -harder
    seq = walks[direction]
    gs = G[1:1 + min(n, walks[+1].size)] if direction == +1 else G[1 + min(n, walks[+1].size):]
    flips = np.flatnonzero(((gs >= 0) != (g0 >= 0)) & np.isfinite(seq[:n]))
    if flips.size == 0 and seq.size > n:
        gs = np.concatenate([gs, g(seq[n:])])
        flips = np.flatnonzero(((gs >= 0) != (g0 >= 0)) & np.isfinite(seq))
    if flips.size == 0:
        return None
    k = int(flips[0])
    a, b = (seq[k - 1] if k else v0), seq[k]
    a_met = (gs[k - 1] if k else g0) >= 0
    # the bisection, TREE_DEPTH levels per array call
    done = 0
    while done < BISECTIONS and abs(b - a) > BISECT_RTOL * max(abs(a), abs(b), 1e-3):
        # the levels still needed, in as few calls as the depth allows, split evenly
        need = math.ceil(math.log2(abs(b - a) / (BISECT_RTOL * max(abs(a), abs(b), 1e-3))))
        need = max(1, min(need, BISECTIONS - done))
        depth = math.ceil(need / math.ceil(need / max_depth))
        mids = _midpoint_tree(a, b, depth)
        met = g(mids) >= 0
        i = 0
        for _ in range(depth):
            if abs(b - a) <= BISECT_RTOL * max(abs(a), abs(b), 1e-3):
                break
            c = mids[i]
            if met[i] == a_met:
                a, i = c, 2 * i + 2
            else:
                b, i = c, 2 * i + 1
            done += 1
    return float(0.5 * (a + b))


def _walk(v0, direction, field):
    """The outward walk's probes from v0 (steps 5 % then x1.6; positive fields halve
    towards zero instead of crossing it; an altitude walk ends at the atmosphere's edge)."""
    out, lo, step = [], v0, max(abs(v0) * 0.05, 1e-3)
    for _ in range(WALK_STEPS):
        hi = lo + direction * step
        if field in _POSITIVE and hi <= 0:
            hi = lo / 2
        if field == "altitude" and not (-4900 < hi < 80000):
            out.append(math.nan)          # the walk leaves the atmosphere model here: no bracket
            break
        out.append(hi)
        lo, step = hi, step * 1.6
    return np.array(out)


_POSITIVE = ("load_factor", "mach", "speed", "ground_roll", "climb_rate")


def _midpoint_tree(a, b, depth):
    """Every midpoint a bisection of [a, b] can visit in ``depth`` steps, as a heap
    (node i's children are 2i + 1, left half, and 2i + 2, right half), computed level by
    level with the same floating-point operations as the sequential bisection."""
    lo, hi = np.array([a], dtype=float), np.array([b], dtype=float)
    levels = []
    for _ in range(depth):
        c = 0.5 * (lo + hi)
        levels.append(c)
        lo2, hi2 = np.empty(2 * c.size), np.empty(2 * c.size)
        lo2[0::2], lo2[1::2], hi2[0::2], hi2[1::2] = lo, c, c, hi
        lo, hi = lo2, hi2
    return np.concatenate(levels)


def _margin_function(r, ac, W_S, Y, beta, field):
    """g(values) -> margins at the design for an array of headline values; -1 where a speed
    lies above the speed limit or the polar's Mach table (not flown) or the value is
    outside the models (NaN probes included)."""
    limited = field in ("mach", "speed") and r["kind"] != "stall-speed"

    def one(v):
        rr = dict(r)
        rr[field] = v
        try:
            if limited:
                req = M.requirement(rr, ac, beta)
                air = C.condition(req)
                if float(C.fixed_speed(req, air)) > float(C.max_free_speed(ac, air)) * (1 + 1e-9):
                    return -1.0
            return float(margins_at(r, ac, W_S, Y, beta, field, np.array([v]))[0])
        except ValueError:
            return -1.0

    def g(values):
        values = np.asarray(values, dtype=float)
        ok = np.isfinite(values)
        out = np.full(values.shape, -1.0)
        v = values[ok]
        if not v.size:
            return out
        try:
            with np.errstate(all="ignore"):
                res = margins_at(r, ac, W_S, Y, beta, field, v, sign_only=True)
                if limited:
                    rr = dict(r)
                    rr[field] = v
                    req = M.requirement(rr, ac, beta)
                    air = C.condition(req)
                    beyond = np.asarray(C.fixed_speed(req, air)) > np.asarray(C.max_free_speed(ac, air)) * (1 + 1e-9)
                    res = np.where(beyond, -1.0, res)
        except ValueError:          # a probe outside a model: each on its own, as one would
            res = np.array([one(float(x)) for x in v])
        out[ok] = res
        return out

    return g


def fmt(value_si, unit, scale):
    v = value_si / scale
    if unit == "g":
        return f"{v:.2f} g"
    if unit == "Mach":
        return f"M {v:.3f}"
    if unit == "%":
        return f"{v:.2f} %"
    return f"{v:,.{digits_for(v)}f} {unit}"


def digits_for(v) -> int:
    """Decimals of a number in a margin text: none from 100 up, one from 10, two below
    (a value a rounding error below 100 or 10 counts as 100 or 10)."""
    mag = round(abs(v), 6)
    return 0 if mag >= 100 else (1 if mag >= 10 else 2)


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
    paragraph, the propeller efficiency of a field kind). See :func:`capability_of`."""
    return capability_of(r, tree, spec, W_S, Y, beta, takeoff_mass)[1]


# fields whose value moves the flight condition: a thrust lapse given for the condition does not
# hold at other values of these
_CONDITION_FIELDS = ("altitude", "mach", "speed", "cas", "eas")
_LAPSE_KINDS = ("sustained-turn", "max-mach", "ceiling", "climb", "excess-power", "cruise", "climb-gradient",
                "takeoff")


def capability_of(r: dict, tree: dict, spec, W_S, Y, beta, takeoff_mass=None, basis="T/W"):
    """(:class:`~sizing.problem.result.Capability`, text): the requirement in its own quantity.

    The capability is the value of the requirement's headline field at which the design just meets
    it (:func:`capability`), in the unit the file wrote. A ``thrust_lapse`` given for the
    requirement holds at its own condition only: a ceiling then states the climb rate available at
    the required altitude (against the ceiling's climb rate), and a speed kind states no capability
    at other speeds; the text says the lapse was given. A free speed that ends on its stall bound
    (``min_speed_factor`` x the stall speed), on buffet onset or on the speed limit is named.
    """
    from .result import Capability

    beta = float(np.asarray(beta))
    field = M.value_field(r)
    lapse = r.get("thrust_lapse") if r["kind"] in _LAPSE_KINDS else None
    rr = r
    lapse_note = ""
    no_capability = False
    if lapse is not None and field in _CONDITION_FIELDS:
        at = _condition_text(r, spec)
        if r["kind"] == "ceiling":
            field = "climb_rate"
            rr = dict(r, climb_rate=float(M.requirement(r, M.aircraft(tree, takeoff_mass), beta).climb_rate))
            lapse_note = f"at {at}; thrust lapse {lapse:g} given for this condition"
        else:
            no_capability = True
            lapse_note = f"thrust lapse {lapse:g} given for {at}: no capability at other speeds"
    elif lapse is not None:
        lapse_note = f"thrust lapse {lapse:g} given for this condition"
    unit, scale = user_unit(spec, r["id"], field)
    if field == "climb_rate" and unit == "unit":
        unit, scale = "ft/min", 0.3048 / 60.0
    unit_shown = unit + airspeed_label(field)
    have, need = _WORDS.get(r["kind"], ("design", "required"))
    have = _FORM_WORDS.get((r["kind"], M.form_of(r)), have)
    if field == "climb_rate" and r["kind"] == "ceiling":
        have = "climb rate"
    harder = HARDER.get(field, +1)
    if isinstance(harder, dict):
        harder = harder.get(r["kind"], +1)
    cap = None if no_capability else capability(rr, tree, float(W_S), float(Y), beta, field, takeoff_mass)
    req_text = fmt(float(rr[field]), unit_shown, scale)
    notes = assumptions(r, tree, takeoff_mass)
    bound = _speed_bound_note(r, tree, field, cap, W_S, beta, takeoff_mass)
    extra = [t for t in (lapse_note, bound) if t]
    tail = f" ({'; '.join(extra)})" if extra else ""
    if cap is None:
        text = f"{req_text} {need}{notes}{tail}"
    else:
        text = f"{have} {fmt(cap, unit_shown, scale)}{tail} vs {req_text} {need}{notes}"
    c = Capability(value=None if cap is None else cap / scale, required=float(rr[field]) / scale,
                   unit=unit, harder=harder, field=field, airspeed=AIRSPEED.get(field, ""), basis=basis,
                   note="; ".join(extra), lapse_given=None if lapse is None else float(lapse))
    return c, text


def _condition_text(r, spec):
    """'42,000 ft' or 'M 0.85 at 25,000 ft': where a requirement is flown, as the file wrote it."""
    req = spec.requirement(r["id"])
    alt = getattr(getattr(req, "altitude", None), "text", None) or f"{r.get('altitude', 0.0) / 0.3048:,.0f} ft"
    key = next((k for k in ("mach", "speed", "cas", "eas") if r.get(k) is not None), None)
    if key is None:
        return alt
    v = getattr(req, key, None)
    spd = f"M {v:g}" if key == "mach" else f"{getattr(v, 'text', v)}{airspeed_label(key)}"
    return f"{spd} at {alt}"


def _speed_bound_note(r, tree, field, cap, W_S, beta, takeoff_mass=None) -> str:
    """'at the speed limit' where a speed capability (a max-mach's reachable Mach) ends on the
    speed limit; for a free speed, 'best speed on its stall bound (1.2 x stall speed)', '... on
    buffet onset' or '... at the speed limit' where the speed the requirement is flown at, at the
    design (a ceiling: at the ceiling the text names), ends on one of its bounds; '' otherwise."""
    ac = M.aircraft(tree, takeoff_mass)
    if field in ("mach", "speed", "cas", "eas") and r["kind"] not in ("stall-speed", "approach-speed"):
        if cap is None:
            return ""
        req = M.requirement(dict(r, **{field: cap}), ac, beta)
        air = C.condition(req)
        if float(C.fixed_speed(req, air)) >= 0.999 * float(C.max_free_speed(ac, air)):
            return "at the speed limit"
        return ""
    if field == "altitude" and cap is not None:
        r = dict(r, altitude=cap)      # a ceiling's speed at the ceiling the text names
    req = M.requirement(r, ac, beta)
    if not C.KINDS[r["kind"]].has_free_speed(req):
        return ""
    with np.errstate(all="ignore"):
        thrust, _lim, Vb = C.required_curve(req, ac, np.array([float(W_S)]), rtol=MARGIN_RTOL)
        if Vb is None or not np.isfinite(Vb[0]):
            return ""
        V = float(Vb[0])
        lo, hi = (float(np.asarray(v).ravel()[0]) for v in C.free_speed_range(req, ac, float(W_S)))
        stall = float(np.asarray(C.min_free_speed(req, ac, float(W_S))))
    a = float(C.condition(req).speed_of_sound)
    k = float(r.get("min_speed_factor", C.DEFAULT_MIN_SPEED_FACTOR))
    speed = f"best speed M {V / a:.3f}, {V / 0.514444:,.0f} kn TAS"
    tol = 1e-4
    if V >= hi * (1 - tol):
        return f"{speed}: at the speed limit"
    if V <= lo * (1 + tol):
        if lo <= stall * (1 + tol):
            return f"{speed}: on its stall bound, {k:g} x the stall speed"
        return f"{speed}: on buffet onset"
    return ""


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

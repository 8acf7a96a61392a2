"""The margin search as it was first written: a sequential outward walk and bisection, one
constraint evaluation per probe. Kept as the slow reference the staged search of
:func:`sizing.problem.capability.capability` is checked against.  # common practice, no source
"""
import math

import numpy as np

from sizing import constraints as C
from sizing.problem import tree as M
from sizing.problem.capability import HARDER, MARGIN_RTOL, field_length


def margin_at(r, tree, W_S, Y, beta, takeoff_mass=None):
    """Smallest fractional margin of a requirement at (W_S, Y), best free speed."""
    ac = M.aircraft(tree, takeoff_mass)
    req = M.requirement(r, ac, beta)
    with np.errstate(all="ignore"):
        thrust, lim, _ = C.required_curve(req, ac, np.array([W_S]), samples=48, refine=48, rtol=MARGIN_RTOL)
    margins = []
    if thrust is not None:
        t = float(thrust[0])
        margins.append(Y / t - 1.0 if np.isfinite(t) and t > 0 else -1.0)
    if lim is not None:
        margins.append(float(lim[0]) / W_S - 1.0)
    return min(margins) if margins else math.inf


def capability(r, tree, W_S, Y, beta, field=None, takeoff_mass=None):
    """Value of the headline field at which the design just meets the requirement (bisection;
    field lengths directly)."""
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
        if abs(b - a) <= 1e-6 * max(abs(a), abs(b), 1e-3):
            break
        c = 0.5 * (a + b)
        gc = g(c)
        if (gc >= 0) == (ga >= 0):
            a, ga = c, gc
        else:
            b = c
    return 0.5 * (a + b)

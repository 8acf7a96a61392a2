"""What a real step of a requirement costs: re-solved, beside the slope's linear estimate.

The optimizer's sensitivity d m_TO / d value is a slope: exact for a small step,
misleading for a large one (a turn's cost grows faster than linearly in load
factor). For each requirement this module picks the step a reviewer would ask
about, a few percent of the value in the user's unit (:func:`readable_step`),
re-solves the problem with that step in the harder direction (warm-started from
the solution: a few IPOPT iterations, about a millisecond) and reports both
numbers. They are flagged "non-linear" when they differ by more than
:data:`NONLINEAR_REL`; a step that leaves no feasible design is reported as such.

Solver noise: IPOPT stops at ``tol`` 1e-10 of the scaled problem (acceptable
1e-8), the tie-break terms (1e-7 per unit T/W, 1e-9 per unit of the scaled
inverse wing loading) move the optimum by about 1e-7 of the reference mass, and
the post-solve check accepts a closure residual of 1e-6 of it. A mass change
smaller than :data:`NOISE_REL` (1e-5) of the takeoff mass, ten times the largest
of these, is noise and reported as exactly 0 (the slope's estimate as well).
"""
from __future__ import annotations

import math

import numpy as np

from . import tree as M
from .capability import HARDER, airspeed_label, user_unit
from .result import NONLINEAR_REL, StepCost  # noqa: F401 (NONLINEAR_REL re-exported)

NOISE_REL = 1e-5          # a mass change below this fraction of m_TO is solver noise: reported as 0
STEP_REL = 0.03           # the step is about this fraction of the value


def readable_step(unit: str, value: float) -> float:
    """A step a reviewer would ask about, in the user's unit: 0.01 for a Mach number, otherwise
    the number of the form 1 or 5 x 10^k nearest (on a log scale) to 3 % of the value.

    >>> [readable_step(u, v) for u, v in (("g", 4.0), ("kn", 100.0), ("ft", 42000.0), ("m", 1300.0))]
    [0.1, 5.0, 1000.0, 50.0]
    >>> readable_step("Mach", 0.85)
    0.01
    """
    if unit == "Mach":
        return 0.01
    target = STEP_REL * abs(value)
    if not target > 0 or not math.isfinite(target):
        return 1.0
    k = math.floor(math.log10(target))
    candidates = [m * 10.0 ** e for e in (k - 1, k, k + 1) for m in (1.0, 5.0)]
    best = min(candidates, key=lambda c: abs(math.log10(c / target)))
    return float(f"{best:.6g}")          # 0.1, not 0.10000000000000002


def harder_sign(r: dict, field: str, slope) -> int:
    """+1 when a larger value is the harder direction, -1 when a smaller one is: the slope's
    sign where the slope says (it is the direction in which mass grows), else the kind's rule."""
    if slope is not None and math.isfinite(slope) and slope != 0.0:
        return 1 if slope > 0 else -1
    h = HARDER.get(field, +1)
    if isinstance(h, dict):
        h = h.get(r["kind"], +1)
    return h


def step_costs(prob, x, lam_g, p, spec, slopes: dict, room: dict | None = None) -> dict:
    """{requirement id: :class:`StepCost`} for every requirement whose value is a parameter.

    ``slopes``: d m_TO / d value [kg per SI unit] by requirement (see
    :func:`sizing.problem.package.sensitivities_of`). Each step is a warm-started
    re-solve of the same built problem with the requirement's value moved.

    ``room``: {id: (margin, unit)} of requirements that are not active, their margin in their own
    quantity at the design point (:class:`sizing.problem.result.Capability`). A step smaller than
    that margin leaves the requirement met at the same point, which stays the optimum (its row
    is inactive, its multiplier zero): the change is exactly 0 and no re-solve is needed."""
    room = room or {}
    idx = {path: i for i, path in enumerate(prob.paths)}
    m0 = float(x[2] * prob.m_ref)
    noise = NOISE_REL * m0
    lam_x = np.zeros(len(x))
    out = {}
    for rid in prob.req_ids:
        r = prob.tree0["requirements"][rid]
        field = M.value_field(r)
        j = idx.get(("requirements", rid, field))
        if j is None:
            continue
        unit, scale = user_unit(spec, rid, field)
        value = float(p[j]) / scale
        slope = slopes.get(rid)
        slope_user = None if slope is None else slope * scale            # kg per user unit
        sign = harder_sign(r, field, slope_user)
        step = sign * readable_step(unit, value)
        linear = None if slope_user is None or not math.isfinite(slope_user) else slope_user * step
        if linear is not None and abs(linear) < noise:
            linear = 0.0
        spare, spare_unit = room.get(rid, (None, None))
        if (spare is not None and spare_unit == unit and math.isfinite(spare)
                and spare > 1.01 * abs(step) and linear == 0.0):
            out[rid] = StepCost(step=step, unit=unit + airspeed_label(field), value=value, delta_mass=0.0,
                                linear_estimate=0.0, feasible=True)
            continue
        pp = np.array(p, dtype=float)
        pp[j] += step * scale
        xs, _lg, _lx, _st, ok = prob.solve_raw(pp, x0=x, lam_g0=lam_g, lam_x0=lam_x)
        dm = None
        if ok:
            dm = float(xs[2] * prob.m_ref) - m0
            if abs(dm) < noise:
                dm = 0.0
        out[rid] = StepCost(step=step, unit=unit + airspeed_label(field), value=value, delta_mass=dm, linear_estimate=linear,
                            feasible=bool(ok))
    return out


def denoised(slope_user, step_cost) -> float | None:
    """The sensitivity as reported: exactly 0 when one step of it moves the mass by less than
    solver noise (the step's linear estimate is 0)."""
    if slope_user is None or step_cost is None:
        return slope_user
    return 0.0 if step_cost.linear_estimate == 0.0 else slope_user

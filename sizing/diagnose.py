"""Infeasible requirement sets: which requirements conflict, and by how much.

When no design meets every requirement and closes its weight, each
requirement's headline value is in turn made a free variable (an elastic
re-solve of the same CasADi problem, with the value's change scaled by the
value itself) and the smallest change that restores feasibility is found.
Requirements whose relaxation alone restores feasibility are the
conflicting ones; closure failures are said in words.
"""
from __future__ import annotations

import casadi as ca
import numpy as np

from . import model as M
from . import weights as Wt
from .terms import _HARDER, _user_unit, fmt

_BOUNDS = {  # plausible range of a relaxed value (SI)
    "load_factor": (1.0, 15.0), "mach": (0.02, 5.0), "speed": (1.0, 1500.0),
    "altitude": (-4000.0, 80000.0), "climb_rate": (0.0, 500.0), "excess_power": (0.0, 1000.0),
    "ground_roll": (1.0, 1.0e5), "gradient": (-0.1, 0.5),
}


def _direction(r, field):
    h = _HARDER.get(field, +1)
    if isinstance(h, dict):
        h = h.get(r["kind"], +1)
    return h


def relax_one(prob, p, rid):
    """Smallest change of one requirement's value that makes the set feasible.

    Returns the relaxed value (SI) or None when no value in the plausible
    range restores feasibility.
    """
    r = prob.tree0["requirements"][rid]
    field = M.value_field(r)
    idx = {path: i for i, path in enumerate(prob.paths)}
    j = idx.get(("requirements", rid, field))
    if j is None:
        return None
    v0 = float(p[j])
    lo, hi = _BOUNDS.get(field, (-1e9, 1e9))
    h = _direction(r, field)
    if h > 0:
        vlo, vhi = lo, v0
    else:
        vlo, vhi = v0, hi
    if vlo >= vhi:
        return None
    x, P = prob._x, prob._P
    v = ca.SX.sym("v")
    g = ca.substitute(prob._g_expr, P[j], v)
    S = abs(v0) if abs(v0) > 1e-9 else 1.0
    f = ((v - v0) / S) ** 2
    nlp = {"x": ca.vertcat(x, v), "p": P, "f": f, "g": g}
    opts = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes", "ipopt.tol": 1e-10,
            "ipopt.max_iter": 400}
    solver = ca.nlpsol("relax", "ipopt", nlp, opts)
    easy = vlo if h > 0 else vhi
    pe = np.array(p, dtype=float)
    pe[j] = easy
    x0 = prob.initial_guess(pe)
    best = None
    for start in (easy, 0.5 * (easy + v0)):
        sol = solver(x0=np.append(x0, start), p=p, lbx=np.append(prob.lbx, vlo), ubx=np.append(prob.ubx, vhi),
                     lbg=prob.lbg, ubg=prob.ubg)
        if solver.stats().get("return_status") not in ("Solve_Succeeded", "Solved_To_Acceptable_Level"):
            continue
        z = np.array(sol["x"]).ravel()
        pv = np.array(p, dtype=float)
        # step a hair further into the easy side so the check passes robustly
        pv[j] = z[-1] - h * 1e-7 * S
        if prob.verify(z[:-1], pv):
            if best is None or abs(pv[j] - v0) < abs(best - v0):
                best = pv[j]
    return best


def closure_explanation(prob, p) -> str:
    """Words for a weight closure that cannot work anywhere in the search region."""
    tree = prob.tree_of(p)
    ac = M.aircraft(tree)
    W = np.geomspace(prob.WS_bounds[0], prob.WS_bounds[1], 200)
    with np.errstate(all="ignore"):
        f_fuel = np.asarray(Wt.fuel_fraction(tree, ac, W)) + 0 * W
        fixed = prob._fixed_mass(tree)
        Ymin = prob.Y_bounds[0]
        best = None
        for mass in (fixed, 3 * fixed, 10 * fixed, 100 * fixed):
            f_e = np.asarray(Wt.empty_fraction(tree["aircraft"]["weights"], tree["aircraft"], mass, W,
                                                Ymin, prob.propeller)) + 0 * W
            tot = f_fuel + f_e
            i = int(np.nanargmin(tot))
            if best is None or tot[i] < best[0]:
                best = (tot[i], f_e[i], f_fuel[i])
    if best is not None and best[0] >= 0.99:
        return (f"empty {best[1]:.2f} + fuel {best[2]:.2f} of takeoff mass leave nothing for crew "
                f"and payload, even at the lightest engine and the best wing loading")
    return ""


def diagnose(prob, p, stats, spec=None):
    """Build the infeasible :class:`sizing.model.Result` with conflicts and relaxations."""
    spec = spec or prob.spec
    explanation = closure_explanation(prob, p)
    conflicts, relax = [], {}
    for rid in prob.req_ids:
        v = relax_one(prob, p, rid)
        if v is None:
            continue
        field = M.value_field(prob.tree0["requirements"][rid])
        unit, scale = _user_unit(spec, rid, field)
        conflicts.append(rid)
        relax[rid] = {"value": v / scale, "unit": unit, "text": fmt(v, unit, scale), "field": field}
    if not conflicts and not explanation:
        explanation = ("no single requirement's relaxation restores feasibility; check the weights, "
                       "the design_space box and the combination of requirements")
    info = M.Infeasibility(conflicts=tuple(conflicts), relaxations=relax, explanation=explanation)
    return M.Result(title=spec.title, status="infeasible", propeller=prob.propeller, design=None,
                    infeasibility=info, objective=prob.objective, stats=dict(stats), spec=spec)

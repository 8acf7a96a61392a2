"""Infeasible requirement sets: which requirements conflict, and by how much.

When the sizing solve finds no verified design, this module decides what
the user is told:

1. **Closure in words.** If the empty and fuel fractions leave nothing for
   crew and payload even with the lightest engine at the best wing loading,
   no requirement can help: say so with the numbers.
2. **Is it really infeasible?** An elastic re-solve of the same CasADi
   problem in which every requirement's headline value becomes a variable
   bounded on its easy side, minimising the sum of the scaled slacks
   ``sum |v - v0| / S``. A zero optimum means a design meeting every
   requirement exists: the main solve failed, so it is solved again from that
   design, and if that fails too a :class:`~sizing.errors.SolverError` says
   so. Never an "infeasible" that is not.
3. **Smallest relaxation of each requirement alone.** The same elastic
   problem with one requirement's value free at a time. Every relaxed value
   is confirmed by re-solving the real problem with it (a verified design).
   Requirements whose relaxation alone restores feasibility are the
   conflicting ones; when no single change is enough, the joint relaxation
   of step 2 is reported instead (all its changes together).

Relaxed values are given in the units the user wrote, rounded towards the
easy side so that the printed value itself works.
"""
from __future__ import annotations

import math
import weakref

import casadi as ca
import numpy as np

from .. import weights as Wt
from ..common import stop
from ..common.errors import SolverError
from ..physics.airspeed import as_kind
from ..physics.atmosphere import isa
from . import tree as M
from .capability import HARDER, user_unit
from .result import Infeasibility, Result

# plausible range of a relaxed value (SI): the same limits the requirement
# file accepts (sizing.spec), so every reported value can be written back
# (a turn's load factor must exceed 1: 1.01 is the least written to two decimals)
_BOUNDS = {
    "load_factor": (1.01, 15.0), "mach": (0.02, 5.0), "speed": (1.0, 1700.0),
    "altitude": (-4000.0, 80000.0), "climb_rate": (0.0, 500.0), "excess_power": (0.0, 500.0),
    "ground_roll": (1.0, 1.0e5), "gradient": (-0.1, 0.5), "cas": (1.0, 300.0), "eas": (1.0, 300.0),
    "distance": (1.0, 1.0e5), "balanced_field": (1.0, 1.0e5), "field_length": (1.0, 1.0e5),
}
# smallest scale of a slack (SI), so a value written as 0 (sea level, zero
# climb rate) still has a meaningful relative change (common practice, no source)
_FLOOR = {
    "load_factor": 1.0, "mach": 0.1, "speed": 10.0, "altitude": 1000.0, "climb_rate": 1.0,
    "excess_power": 10.0, "ground_roll": 100.0, "gradient": 0.01, "cas": 10.0, "eas": 10.0,
    "distance": 100.0, "balanced_field": 100.0, "field_length": 100.0,
}
_OK = ("Solve_Succeeded", "Solved_To_Acceptable_Level")
_OPTS = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes", "ipopt.tol": 1e-10,
         "ipopt.acceptable_tol": 1e-8, "ipopt.max_iter": 500, "ipopt.mu_strategy": "adaptive"}
_STEPS = (1e-6, 1e-4, 1e-3, 1e-2)   # fractions of the scale stepped past the elastic optimum
_SOLVERS: "weakref.WeakKeyDictionary" = weakref.WeakKeyDictionary()


# --------------------------------------------------------------------------
# The requirement values that may move
# --------------------------------------------------------------------------

def _direction(r, field) -> int:
    """+1 when a larger value is harder to meet, -1 when a smaller one is."""
    h = HARDER.get(field, +1)
    if isinstance(h, dict):
        h = h.get(r["kind"], +1)
    return h


# value fields whose easy direction depends on the design (a cruise or dash
# speed meets a thrust limit above and a lift limit below): both ways may move
_TWO_SIDED = {(k, f) for k in ("cruise", "max-mach") for f in ("speed", "mach", "cas", "eas")}


class _Slack:
    """One requirement value made elastic: where it sits in p, which ways it may move.

    The value becomes ``v0 + up - down`` with ``up, down >= 0`` bounded by the
    range a requirement file accepts; ``up`` is held at 0 when a larger value
    is harder, ``down`` when a smaller one is (one-sided), both free for
    speeds of cruise and dash requirements (two-sided).
    """

    def __init__(self, prob, p, rid, tree=None):
        r = (tree or prob.tree0)["requirements"][rid]
        self.rid = rid
        self.field = M.value_field(r)
        self.j = {path: i for i, path in enumerate(prob.paths)}.get(("requirements", rid, self.field))
        self.h = _direction(r, self.field)
        self.two_sided = (r["kind"], self.field) in _TWO_SIDED
        if self.j is None:
            return
        self.v0 = float(p[self.j])
        lo, hi = _BOUNDS.get(self.field, (-1e9, 1e9))
        if self.two_sided:      # a faster cruise or dash must stay inside the drag polar's table
            top = prob.spec.model.aircraft.aerodynamics.mach_max
            if math.isfinite(top):
                air = isa(r.get("altitude", 0.0), r.get("temperature_offset", 0.0))
                if self.field != "mach":      # the table's top Mach as this field's kind of airspeed
                    top = float(as_kind(self.field, top * float(air.speed_of_sound), air))
                hi = min(hi, top * (1 - 1e-9))
        self.up = max(hi - self.v0, 0.0) if (self.two_sided or self.h < 0) else 0.0
        self.down = max(self.v0 - lo, 0.0) if (self.two_sided or self.h > 0) else 0.0
        self.S = max(abs(self.v0), _FLOOR.get(self.field, 1.0))

    @property
    def usable(self) -> bool:
        return self.j is not None and (self.up > 0 or self.down > 0)

    def starts(self):
        """Starting (up, down) pairs: the easy end, half-way, unchanged; both ways when two-sided."""
        if self.two_sided:
            return [(0.0, 0.0), (min(self.up, 0.3 * self.S), 0.0), (0.0, min(self.down, 0.3 * self.S))]
        return [(self.up, self.down), (0.5 * self.up, 0.5 * self.down), (0.0, 0.0)]


def _slacks(prob, p, rids):
    tree = prob.tree_of(p)
    return [s for s in (_Slack(prob, p, rid, tree) for rid in rids) if s.usable]


def _elastic_solver(prob, slacks):
    """IPOPT solver of the sizing constraints with each slack's value ``p + up - down``.

    Variables: the sizing unknowns, then ``up`` and ``down`` of each slack.
    Extra parameters: the scale S of each slack. Objective: the sum of the
    scaled slacks (up + down) / S. Cached per built problem and slack set.
    """
    key = tuple(s.j for s in slacks)
    cache = _SOLVERS.setdefault(prob, {})
    if key in cache:
        return cache[key]
    n = len(slacks)
    up, down = ca.SX.sym("up", n), ca.SX.sym("down", n)
    S = ca.SX.sym("S", n)
    P = prob.p_sym
    old = ca.vertcat(*[P[s.j] for s in slacks])
    g = ca.substitute(prob.g_sym, old, old + up - down)
    f = ca.sum1((up + down) / S)
    nlp = {"x": ca.vertcat(prob.x_sym, up, down), "p": ca.vertcat(P, S), "f": f, "g": g}
    solver = ca.nlpsol("elastic", "ipopt", nlp, _OPTS)
    cache[key] = solver
    return solver


def _elastic(prob, p, slacks):
    """Solve the elastic problem; (x, relaxed values, cost) of the best start, or None."""
    solver = _elastic_solver(prob, slacks)
    nx, n = prob.lbx.size, len(slacks)
    p = np.asarray(p, dtype=float)
    par = np.concatenate([p, [s.S for s in slacks]])
    lbx = np.concatenate([prob.lbx, np.zeros(2 * n)])
    ubx = np.concatenate([prob.ubx, [s.up for s in slacks], [s.down for s in slacks]])
    best = None
    for k in range(3):
        ud = [s.starts()[k] for s in slacks]
        pv = p.copy()
        for s, (u, d) in zip(slacks, ud):
            pv[s.j] = s.v0 + u - d
        x0 = prob.start_point(pv)
        z0 = np.concatenate([x0, [u for u, _ in ud], [d for _, d in ud]])
        sol = solver(x0=z0, p=par, lbx=lbx, ubx=ubx, lbg=prob.lbg, ubg=prob.ubg)
        stop.check()
        if solver.stats().get("return_status") not in _OK:
            continue
        z = np.clip(np.array(sol["x"]).ravel(), lbx, ubx)
        u, d = z[nx:nx + n], z[nx + n:]
        vals = np.array([s.v0 for s in slacks]) + u - d
        cost = float(np.sum((u + d) / np.array([s.S for s in slacks])))
        if best is None or cost < best[2] - 1e-12:
            best = (z[:nx], vals, cost)
    return best


def _confirm(prob, p, slacks, vals, x0):
    """Step each relaxed value a little further from its original value until the
    real problem solves with a verified design; the values, or None."""
    for step in _STEPS:
        pv = np.array(p, dtype=float)
        out = []
        for s, v in zip(slacks, vals):
            d = np.sign(v - s.v0) if abs(v - s.v0) > 1e-9 * s.S else 0.0
            w = float(np.clip(v + d * step * s.S, s.v0 - s.down, s.v0 + s.up))
            pv[s.j] = w
            out.append(w)
        x, _lg, _lx, _st, ok = prob.solve_raw(pv, x0=x0)
        if ok:
            return out
    return None


def relax_one(prob, p, rid):
    """Smallest change of one requirement's value that makes the set feasible.

    Returns the relaxed value (SI), confirmed by a verified re-solve, or None
    when no value in the plausible range restores feasibility.
    """
    slacks = _slacks(prob, p, [rid])
    if not slacks:
        return None
    found = _elastic(prob, p, slacks)
    if found is None:
        return None
    x, vals, _cost = found
    ok = _confirm(prob, p, slacks, vals, x)
    return None if ok is None else ok[0]


# --------------------------------------------------------------------------
# Words and numbers for the user
# --------------------------------------------------------------------------

def closure_explanation(prob, p) -> str:
    """Words for a weight closure that cannot work anywhere in the search region."""
    tree = prob.tree_of(p)
    ac = M.aircraft(tree)
    W = np.geomspace(prob.WS_bounds[0], prob.WS_bounds[1], 200)
    best = None
    with np.errstate(all="ignore"):
        f_fuel = np.asarray(Wt.fuel_fraction(tree, ac, W)) + 0 * W
        fixed = prob.fixed_mass(tree)
        Ymin = prob.Y_bounds[0]
        for mass in (fixed, 3 * fixed, 10 * fixed, 100 * fixed, 1000 * fixed):
            f_e = np.asarray(Wt.empty_fraction_of(tree, mass, W, Ymin, prob.propeller)) + 0 * W
            tot = np.where(np.isfinite(f_fuel + f_e), f_fuel + f_e, np.inf)
            i = int(np.argmin(tot))
            if best is None or tot[i] < best[0]:
                best = (tot[i], f_e[i], f_fuel[i])
    # the solver keeps 1 % of takeoff mass for crew and payload (sizing.solve margin row)
    if best is not None and best[0] >= 0.99:
        return (f"empty {best[1]:.2f} + fuel {best[2]:.2f} of takeoff mass leave nothing for crew and "
                f"payload, even with the lightest engine at the best wing loading; the two must sum "
                f"to less than 0.99")
    return ""


def _decimals(unit, value) -> int:
    if unit == "g":
        return 2
    if unit == "Mach":
        return 3
    if unit in ("%", ""):
        return 2 if unit == "%" else 4
    mag = abs(value)
    return 0 if mag >= 100 else (1 if mag >= 10 else 2)


def _shown(value_si, unit, scale, away):
    """(number, text) in the user's unit, rounded away from the original value
    (``away`` > 0: up, < 0: down, 0: nearest); the text is the value as a requirement
    file writes it, so it pastes back: ``57556 ft`` (no thousands separator), ``5.01``
    for a load factor, ``0.872`` for a Mach number, ``8.80 %``.

    >>> _shown(57556.2 * 0.3048, "ft", 0.3048, +1)[1], _shown(5.004, "g", 1.0, +1)[1]
    ('57557 ft', '5.01')
    """
    v = value_si / scale
    d = _decimals(unit, v)
    k = 10.0 ** d
    r = (math.ceil(v * k) if away > 0 else math.floor(v * k) if away < 0 else round(v * k)) / k
    if abs(r) < 0.5 / k:
        r = 0.0
    if unit in ("Mach", "g", ""):       # dimensionless in the file: a plain number
        return r, f"{r:.{d}f}"
    return r, f"{r:.{d}f} {unit}"


def _written(spec, rid, field):
    """The value of a requirement field exactly as the file gives it, or None."""
    raw = next((r for r in spec.data.get("requirements", []) if isinstance(r, dict) and r.get("id") == rid), {})
    v = raw.get(field)
    return None if v is None or isinstance(v, (dict, list, bool)) else str(v).strip()


def _entry(spec, s, value, together=False):
    """One relaxation: the value in the user's unit and as the file writes it (``text``,
    and ``yaml``: the ``key: value`` to paste into the requirement), the value it replaces."""
    unit, scale = user_unit(spec, s.rid, s.field)
    unit = "" if unit == "unit" else unit
    shown, text = _shown(value, unit, scale, np.sign(value - s.v0))
    was = _written(spec, s.rid, s.field) or _shown(s.v0, unit, scale, 0)[1]
    return {"value": value / scale, "unit": unit, "text": text, "field": s.field, "from": was,
            "yaml": f"{s.field}: {text}", "shown": shown, "si": value, "together": together}


# --------------------------------------------------------------------------
# The diagnosis
# --------------------------------------------------------------------------

def diagnose(prob, p, stats, spec=None):
    """The infeasible :class:`sizing.problem.result.Result` with conflicts and relaxations.

    Raises :class:`~sizing.errors.SolverError` when the requirement set is
    feasible but no optimum could be verified, or when neither infeasibility
    nor a design can be established.
    """
    spec = spec or prob.spec
    p = np.asarray(p, dtype=float)
    explanation = closure_explanation(prob, p)
    conflicts, relax = [], {}
    if not explanation:
        slacks = _slacks(prob, p, prob.req_ids)
        joint = _elastic(prob, p, slacks) if slacks else None
        if joint is not None and joint[2] <= 1e-7 and prob.verify(joint[0], p):
            rescued = _rescue(prob, p, joint[0], stats, spec)
            if rescued is not None:
                return rescued
            raise SolverError(
                "the optimizer did not converge to a verified optimum from any starting point, although "
                "a design meeting every requirement exists; try a design_space box around the expected "
                "design point, check for nearly equal requirements, or rerun with --debug")
        for s in slacks:
            v = relax_one(prob, p, s.rid)
            if v is not None:
                conflicts.append(s.rid)
                relax[s.rid] = _entry(spec, s, v)
        if not conflicts and joint is not None:
            x, vals, _cost = joint
            moved = [(s, v) for s, v in zip(slacks, vals) if abs(v - s.v0) > 1e-7 * s.S]
            ok = _confirm(prob, p, [s for s, _ in moved], [v for _, v in moved], x) if moved else None
            if ok is not None:
                for (s, _v), w in zip(moved, ok):
                    conflicts.append(s.rid)
                    relax[s.rid] = _entry(spec, s, w, together=True)
                explanation = ("no single requirement's change restores feasibility; these changes "
                               "together do: " + "; ".join(f"{rid} {relax[rid]['yaml']}" for rid in conflicts))
        if not conflicts:
            if stats.get("return_status") not in ("Infeasible_Problem_Detected",
                                                  "Converged_To_Local_Infeasibility", "Restoration_Failed"):
                raise SolverError(
                    f"the optimizer found no verified design ({stats.get('return_status')}) and no "
                    f"requirement change that gives one; the set may be infeasible or the problem badly "
                    f"scaled: check the weights, the design_space box and the aircraft data, or rerun "
                    f"with --debug")
            explanation = ("no change of the requirement values (alone or together, within the values "
                           "a requirement file accepts) restores feasibility; the aircraft data, the "
                           "weights or the design_space box rule out every design")
    _closes_at_shown(prob, p, relax)
    info = Infeasibility(conflicts=tuple(conflicts), relaxations=relax, explanation=explanation)
    return Result(title=spec.title, status="infeasible", propeller=prob.propeller, design=None,
                    infeasibility=info, objective=prob.objective, stats=dict(stats), spec=spec)


def _closes_at_shown(prob, p, relax):
    """Add to each relaxation what the lightest design weighs with the value as printed (the one
    that pastes back; all of them at once where they are needed together): ``takeoff_mass_kg``
    and ``runaway_margin`` (:func:`sizing.problem.health.runaway_margin`), from one solve."""
    from .health import runaway_margin

    idx = {path: i for i, path in enumerate(prob.paths)}
    together = [rid for rid, rel in relax.items() if rel.get("together")]
    groups = [together] if together else []
    groups += [[rid] for rid in relax if rid not in together]
    for group in groups:
        pv = np.array(p, dtype=float)
        for rid in group:
            rel = relax[rid]
            j = idx.get(("requirements", rid, rel["field"]))
            if j is None or rel.get("shown") is None or not rel.get("value"):
                break
            pv[j] = rel["shown"] * rel["si"] / rel["value"]          # SI per user unit x shown
        else:
            x, _lg, _lx, _st, ok = prob.solve_raw(pv)
            if ok:
                W_S, Y, m = float(x[0] * prob.WS_scale), float(x[1] * prob.Y_scale), float(x[2] * prob.m_ref)
                with np.errstate(all="ignore"):
                    rm = float(runaway_margin(prob, prob.tree_of(pv), W_S, Y, m))
                for rid in group:
                    relax[rid].update(takeoff_mass_kg=m, runaway_margin=rm)


def _rescue(prob, p, x0, stats, spec):
    """Solve again from a design known to meet every requirement; a Result or None."""
    x, lam_g, lam_x, st, ok = prob.solve_raw(p, x0=x0)
    if not ok:
        return None
    stats = dict(stats, return_status=st.get("return_status"), iterations=st.get("iter_count"),
                 rescued_from_feasible_point=True)
    res = prob.package(x, lam_g, p, stats, True, spec)
    res.stats["warm"] = (x, lam_g, lam_x)
    return res

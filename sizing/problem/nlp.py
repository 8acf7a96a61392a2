"""The built sizing problem: CasADi + IPOPT, built once per file structure.

Unknowns: wing loading W/S, T_SL/W_TO (or P_SL/W_TO), takeoff mass m_TO and
one speed per free-speed requirement. Every numeric input of the file is a
CasADi *parameter*, so a trade study re-solves the same built problem with
new values. Minimise the objective subject to every requirement's
constraint (the functions of :mod:`sizing.constraints`, the same the diagram
draws) and the weight closure (:mod:`sizing.weights`).

After every solve the answer is re-evaluated in plain numpy; a solver
success that violates a requirement is never returned as a design.

Public interface (what studies and the diagnosis use): :attr:`Problem.x_sym`,
:attr:`~Problem.p_sym` (decision and parameter vectors), :attr:`~Problem.f_sym`,
:attr:`~Problem.g_sym` (objective and constraint expressions), :attr:`~Problem.rows`
(row labels), :meth:`~Problem.constraint_values` and :meth:`~Problem.verify` (the
numpy check), :meth:`~Problem.solve_raw` (a raw solve), :meth:`~Problem.start_point`,
:meth:`~Problem.package` (a solution -> :class:`~sizing.problem.result.Result`),
:meth:`~Problem.mission_drives`, :meth:`~Problem.fixed_mass`, the scales
``WS_scale``, ``Y_scale``, ``m_ref``, ``V_scale`` and the bounds ``lbx``, ``ubx``,
``lbg``, ``ubg``.
"""
from __future__ import annotations

import time

import casadi as ca
import numpy as np

from .. import constraints as C
from .. import weights as Wt
from ..common import stop
from ..physics.propulsion import is_propeller
from . import cached
from . import tree as M
from .package import ACTIVE_TOL, mission_drives, package  # noqa: F401 (ACTIVE_TOL re-exported)
from .start import scan

VERIFY_TOL = 1e-6     # post-solve numpy check tolerance (fractional)
TIE_ENGINE = 1e-7     # tie-break weights: smallest engine, then smallest wing
TIE_WING = 1e-9

IPOPT_OPTIONS = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes",
          "ipopt.tol": 1e-10, "ipopt.acceptable_tol": 1e-8, "ipopt.max_iter": 500,
          "ipopt.mu_strategy": "adaptive",
          "ipopt.bound_relax_factor": 0.0}   # active requirements end exactly on their boundary
_INFEASIBLE = ("Infeasible_Problem_Detected", "Restoration_Failed", "Converged_To_Local_Infeasibility")
_IPOPT_WARM = {"ipopt.warm_start_init_point": "yes", "ipopt.warm_start_bound_push": 1e-9,
               "ipopt.warm_start_mult_bound_push": 1e-9, "ipopt.mu_init": 1e-6}




class Problem:
    """A built sizing problem for one requirement-file structure.

    Build once with ``Problem(spec)``; then ``solve(p)`` for any parameter
    vector ``p`` of the same structure (``parameters(spec)``).
    """

    def __init__(self, spec):
        t0 = time.perf_counter()
        self.spec = spec
        self.tree0 = M.spec_tree(spec)
        self.structure = M.structure_key(self.tree0)
        self.propeller = is_propeller(self.tree0["aircraft"]["propulsion"]["type"])
        leaves = M.flatten(self.tree0)
        self.paths = [p for p, _ in leaves]
        self.p0 = np.array([v for _, v in leaves], dtype=float)
        self.objective = spec.model.objective
        self.req_ids = list(self.tree0["requirements"].keys())
        self.free = [rid for rid in self.req_ids if self._has_free(rid, self.tree0)]

        # scales
        fixed = self.fixed_mass(self.tree0)
        self.m_ref = 5.0 * fixed
        self.Y_scale = 10.0 if self.propeller else 1.0
        self.WS_scale = 1000.0
        self.V_scale = 100.0

        # bounds of the search region
        box = spec.model.design_space
        ds = {k: getattr(box, k) for k in ("wing_loading", "thrust_to_weight", "power_to_weight")} if box else {}
        ws = ds.get("wing_loading")
        self.WS_bounds = (ws[0].si, ws[1].si) if ws else (100.0, 15000.0)
        yk = "power_to_weight" if self.propeller else "thrust_to_weight"
        yb = ds.get(yk)
        if yb:
            self.Y_bounds = (float(getattr(yb[0], "si", yb[0])), float(getattr(yb[1], "si", yb[1])))
        else:
            self.Y_bounds = (0.0, 100.0) if self.propeller else (0.0, 2.0)

        self.scan_found_design = True
        self._solver_infeasible = None
        self._last_scan = None
        self._build()
        self.build_time = time.perf_counter() - t0

    # ------------------------------------------------------------------ build
    def _has_free(self, rid, tree):
        r = tree["requirements"][rid]
        ns = M.requirement(r, M.aircraft(tree))
        return C.KINDS[r["kind"]].has_free_speed(ns)

    @staticmethod
    def fixed_mass(tree):
        """Crew plus payload of a tree [kg]: what the weight closure scales."""
        w = tree["aircraft"]["weights"]
        return w.get("crew", 0.0) + w.get("payload", 0.0)

    def expressions(self, tree, W_S, Y, m_TO, V: dict):
        """All constraint rows and the closure, on numbers or symbols.

        Returns (rows, values, fuel_fraction, empty_fraction, betas) where
        rows are (rid, what) labels and values the matching expressions
        (>= 0 when satisfied, except "closure" which is == 0).
        """
        ac = M.aircraft(tree, m_TO)
        betas = {}
        segs = Wt.mission_fractions(tree, ac, W_S) if Wt.has_mission_fuel(tree) else None
        seg_end = Wt.segment_end_fractions(tree, ac, W_S, segs)
        f_fuel = Wt.fuel_fraction(tree, ac, W_S, segs)
        f_empty = Wt.empty_fraction_of(tree, m_TO, W_S, Y, self.propeller)
        rows, vals = [], []
        for rid in self.req_ids:
            r = tree["requirements"][rid]
            wf = r.get("weight_fraction")
            beta = seg_end[wf["after"]] if isinstance(wf, dict) else None
            req = M.requirement(r, ac, beta)
            betas[rid] = req.beta
            kind = C.KINDS[r["kind"]]
            Vf = V.get(rid)
            b = kind.function(W_S, Vf, req, ac)
            if b.margin_of is not None:       # a field length: its fractional distance margin
                rows.append((rid, "thrust"))
                vals.append(b.margin_of(Y))
            elif b.thrust is not None:
                rows.append((rid, "thrust"))
                vals.append((Y - b.thrust) / self.Y_scale)
            if b.wing_loading is not None:
                rows.append((rid, "wing_loading"))
                vals.append((b.wing_loading - W_S) / self.WS_scale)
            if Vf is not None:
                air = C.condition(req)
                # min_speed_factor x the configuration's stall speed, and buffet onset
                for what, have, need in C.speed_floors(req, ac, W_S, Vf):
                    rows.append((rid, what))
                    vals.append((have - need) / self.WS_scale)
                rows.append((rid, "speed_max"))
                vals.append((C.max_free_speed(ac, air) - Vf) / self.V_scale)
        rows.append(("", "closure"))
        vals.append((m_TO * (1.0 - f_fuel - f_empty) - self.fixed_mass(tree)) / self.m_ref)
        rows.append(("", "margin"))
        vals.append(1.0 - f_fuel - f_empty - 0.01)
        return rows, vals, f_fuel, f_empty, betas

    def _objective(self, W_S, Y, m_TO, f_fuel):
        obj = self.objective
        if obj == "thrust":
            f = Y * m_TO / (self.Y_scale * self.m_ref)
        elif obj == "wing-area":
            f = (m_TO / self.m_ref) * (self.WS_scale / W_S)
        elif obj == "fuel-mass":
            f = f_fuel * m_TO / self.m_ref
        else:
            f = m_TO / self.m_ref
        return f + TIE_ENGINE * Y / self.Y_scale + TIE_WING * self.WS_scale / W_S

    def _build(self):
        nv = 3 + len(self.free)
        x = ca.SX.sym("x", nv)
        P = ca.SX.sym("p", len(self.paths))
        name = hit = None
        if cached.wanted(self.spec):
            # what the graph depends on besides the parameters: structure, scales, options
            name = cached.key(self.structure, self.paths, self.free, self.objective, self.propeller,
                              repr((self.m_ref, self.Y_scale, self.WS_scale, self.V_scale)),
                              sorted(IPOPT_OPTIONS.items()), TIE_ENGINE, TIE_WING)
            hit = cached.load(name, nv, len(self.paths))
        self.built_from_cache = hit is not None
        if hit is not None:
            rows, expr, self.solver = hit
            g, f, f_fuel, f_empty = expr(x, P)
        else:
            tree = M.substitute(self.tree0, {p: P[i] for i, p in enumerate(self.paths)})
            W_S = x[0] * self.WS_scale
            Y = x[1] * self.Y_scale
            m_TO = x[2] * self.m_ref
            V = {rid: x[3 + i] * self.V_scale for i, rid in enumerate(self.free)}
            rows, vals, f_fuel, f_empty, _betas = self.expressions(tree, W_S, Y, m_TO, V)
            f = self._objective(W_S, Y, m_TO, f_fuel)
            # one node per distinct subexpression (the same atmosphere, polar or lapse is
            # written several times per requirement): a third fewer operations for IPOPT's
            # derivatives to build and evaluate
            shared = ca.cse(ca.vertcat(*vals, f, f_fuel, f_empty))
            g, f, f_fuel, f_empty = shared[:len(vals)], shared[len(vals)], shared[-2], shared[-1]
            self.solver = ca.nlpsol("sizing", "ipopt", {"x": x, "p": P, "f": f, "g": g}, IPOPT_OPTIONS)
            if name is not None:
                cached.save(name, rows, ca.Function("expressions", [x, P], [g, f, f_fuel, f_empty]),
                            self.solver)
        self.rows = rows
        self._x, self._P = x, P
        self._g_expr, self._f_expr = g, f
        self._solver_warm = self._dLdp = None      # built on first use
        self._g_fun = ca.Function("g", [x, P], [g, f_fuel, f_empty])
        self.lbg = np.zeros(len(rows))
        self.ubg = np.array([0.0 if w == "closure" else np.inf for _, w in rows])
        self.lbx = np.array([self.WS_bounds[0] / self.WS_scale, self.Y_bounds[0] / self.Y_scale,
                             1e-3 * self.fixed_mass(self.tree0) / self.m_ref] + [0.01] * len(self.free))
        self.ubx = np.array([self.WS_bounds[1] / self.WS_scale, self.Y_bounds[1] / self.Y_scale,
                             1000.0 * self.fixed_mass(self.tree0) / self.m_ref] + [20.0] * len(self.free))

    # ------------------------------------------------------- public interface
    @property
    def x_sym(self):
        """Decision vector (CasADi SX): W/S, Y, m_TO and the free speeds, each over its scale."""
        return self._x

    @property
    def p_sym(self):
        """Parameter vector (CasADi SX), one entry per :attr:`paths` item."""
        return self._P

    @property
    def f_sym(self):
        """Objective expression (scaled, with the tie-break terms)."""
        return self._f_expr

    @property
    def g_sym(self):
        """Constraint rows (expression); labels in :attr:`rows`, bounds :attr:`lbg`, :attr:`ubg`."""
        return self._g_expr

    def constraint_values(self, x, p):
        """(rows g, fuel fraction, empty fraction) at a numeric (x, p), from the CasADi graph."""
        g, f_fuel, f_empty = self._g_fun(x, p)
        return np.array(g, dtype=float).ravel(), float(f_fuel), float(f_empty)

    def lagrangian_gradient(self, x, p, lam_g):
        """d L / d p of L = f + lam_g . g at a solution [objective units per SI parameter unit]."""
        if self._dLdp is None:
            lam = ca.SX.sym("lam", self._g_expr.shape[0])
            L = self._f_expr + ca.dot(lam, self._g_expr)
            self._dLdp = ca.Function("dLdp", [self._x, self._P, lam], [ca.jacobian(L, self._P)])
        return np.array(self._dLdp(x, p, lam_g), dtype=float).ravel()

    @property
    def solver_warm(self):
        """IPOPT with warm-start options (multipliers given), built on first use."""
        if self._solver_warm is None:
            nlp = {"x": self._x, "p": self._P, "f": self._f_expr, "g": self._g_expr}
            self._solver_warm = ca.nlpsol("sizing_warm", "ipopt", nlp, {**IPOPT_OPTIONS, **_IPOPT_WARM})
        return self._solver_warm

    # --------------------------------------------------------------- parameters
    def parameters(self, spec=None) -> np.ndarray:
        """Parameter vector of a spec with this problem's structure."""
        if spec is None:
            return self.p0.copy()
        tree = M.spec_tree(spec)
        if M.structure_key(tree) != self.structure:
            raise ValueError("this file's structure differs from the built problem; build a new Problem")
        return np.array([v for _, v in M.flatten(tree)], dtype=float)

    def tree_of(self, p) -> dict:
        return M.substitute(self.tree0, {path: float(p[i]) for i, path in enumerate(self.paths)})

    # ------------------------------------------------------------ start point
    def start_point(self, p, n=48):
        """Best point of a coarse numpy scan over W/S (the spreadsheet way), clipped to the
        bounds; sets :attr:`scan_found_design` (see :func:`sizing.problem.start.scan`)."""
        stop.check()        # a stop request CasADi swallowed during a solve before this scan
        key = (np.asarray(p, dtype=float).tobytes(), n)
        if self._last_scan is None or self._last_scan[0] != key:     # the same scan is asked for twice
            self._last_scan = (key, *scan(self, p, n))                # when a warm start failed
        _key, x0, self.scan_found_design = self._last_scan
        return x0.copy()

    # --------------------------------------------------------------------- solve
    def solve_raw(self, p=None, x0=None, lam_g0=None, lam_x0=None):
        """One IPOPT solve; returns (x, lam_g, lam_x, stats, verified: bool).

        Raises :class:`sizing.common.stop.Interrupted` on a stop request (Ctrl-C,
        SIGTERM), also one that arrived while IPOPT ran."""
        stop.check()
        p = self.p0 if p is None else np.asarray(p, dtype=float)

        def attempts():
            if x0 is not None and lam_g0 is not None:
                yield "warm", np.asarray(x0), lam_g0, lam_x0
            if x0 is not None:
                yield "cold", np.asarray(x0), None, None
            guess = self.start_point(p)          # only when the given start did not do
            yield "scan", guess, None, None
            # other starting points: lower wing loading and heavier, higher, much lower
            for fws, fy, fm in ((0.5, 1.5, 1.5), (1.5, 1.2, 1.2), (0.3, 2.0, 2.0)):
                alt = guess.copy()
                alt[0] *= fws
                alt[1] = max(alt[1] * fy, 0.05)
                alt[2] *= fm
                yield "cold", np.clip(alt, self.lbx, self.ubx), None, None

        last = None
        for mode, xs, lg, lx in attempts():
            args = dict(x0=xs, p=p, lbx=self.lbx, ubx=self.ubx, lbg=self.lbg, ubg=self.ubg)
            solver = self.solver
            if mode == "warm":
                args.update(lam_g0=lg, lam_x0=lx)
                solver = self.solver_warm
            elif mode == "scan" and not self.scan_found_design:
                solver = self._expecting_infeasible()
            sol = solver(**args)
            stop.check()
            stats = solver.stats()
            x = np.array(sol["x"]).ravel()
            ok_status = stats.get("return_status") in ("Solve_Succeeded", "Solved_To_Acceptable_Level")
            verified = ok_status and self.verify(x, p)
            last = (x, np.array(sol["lam_g"]).ravel(), np.array(sol["lam_x"]).ravel(), stats, verified)
            if verified:
                return last
            if (mode == "scan" and stats.get("return_status") in _INFEASIBLE
                    and not self.scan_found_design and not self._finer_scan_finds_design(p)):
                # IPOPT's local infeasibility certificate from the scan's best point, and
                # a finer scan over the whole W/S range finds no design either
                return last
        return last

    def _expecting_infeasible(self):
        """IPOPT told to expect an infeasible problem (quicker certificate), with a monotone
        barrier (on the trainer's Monte Carlo it certified every infeasible point, in at
        most 183 iterations, where the adaptive one ran out of its 500); built on first use."""
        if self._solver_infeasible is None:
            nlp = {"x": self._x, "p": self._P, "f": self._f_expr, "g": self._g_expr}
            self._solver_infeasible = ca.nlpsol("sizing_infeasible", "ipopt", nlp,
                                                {**IPOPT_OPTIONS, "ipopt.expect_infeasible_problem": "yes",
                                                 "ipopt.mu_strategy": "monotone"})
        return self._solver_infeasible

    def _finer_scan_finds_design(self, p) -> bool:
        self.start_point(p, n=200)
        return self.scan_found_design

    def verify(self, x, p) -> bool:
        """Re-evaluate every constraint in plain numpy at the answer."""
        tree = self.tree_of(p)
        W_S, Y, m_TO = x[0] * self.WS_scale, x[1] * self.Y_scale, x[2] * self.m_ref
        V = {rid: float(x[3 + i] * self.V_scale) for i, rid in enumerate(self.free)}
        with np.errstate(all="ignore"):
            rows, vals, *_ = self.expressions(tree, float(W_S), float(Y), float(m_TO), V)
        for (rid, what), v in zip(rows, vals):
            v = float(np.asarray(v))
            if not np.isfinite(v):
                return False
            if what == "closure":
                if abs(v) > 1e-6:
                    return False
            elif v < -VERIFY_TOL:
                return False
        return True

    def solve(self, p=None, x0=None, warm=None, sensitivities=True, spec=None):
        """Solve and package a :class:`sizing.problem.result.Result`."""
        t0 = time.perf_counter()
        spec = spec or self.spec
        p = self.p0 if p is None else np.asarray(p, dtype=float)
        lam_g0 = lam_x0 = None
        if warm is not None:
            x0, lam_g0, lam_x0 = warm
        x, lam_g, lam_x, stats, verified = self.solve_raw(p, x0, lam_g0, lam_x0)
        elapsed = time.perf_counter() - t0
        st = {"return_status": stats.get("return_status"), "iterations": stats.get("iter_count"),
              "solve_time_s": elapsed, "build_time_s": self.build_time}
        if not verified:
            # infeasible set, or solver trouble: diagnose tells them apart (it raises
            # SolverError when it cannot show infeasibility)
            from .diagnose import diagnose  # lazy: diagnosis only when needed
            return diagnose(self, p, st, spec)
        res = self.package(x, lam_g, p, st, sensitivities, spec)
        res.stats["warm"] = (x, lam_g, lam_x)
        return res

    # ------------------------------------------------------------------ package
    def package(self, x, lam_g, p, stats, sensitivities=True, spec=None):
        """A solution (x, multipliers) -> :class:`~sizing.problem.result.Result` (see
        :func:`sizing.problem.package.package`)."""
        return package(self, x, lam_g, p, stats, sensitivities, spec)

    def mass_independent(self, p) -> bool:
        """Whether the closed takeoff mass is the same at every design point (fixed empty and fuel
        fractions): see :func:`sizing.problem.corner.mass_independent`."""
        from .corner import mass_independent

        return mass_independent(self, p)

    def corner(self, p, m_TO):
        """The smallest engine, then the smallest wing, at takeoff mass ``m_TO`` [kg], as a scaled
        decision vector (None when none is found): see :func:`sizing.problem.corner.corner`."""
        from .corner import corner

        return corner(self, p, m_TO)

    def mission_drives(self, x, p, rows, vals) -> bool:
        """Whether mission fuel, not two requirements, sets the wing loading (see
        :func:`sizing.problem.package.mission_drives`)."""
        return mission_drives(self, x, p, rows, vals)

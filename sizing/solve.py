"""The sizing optimization: CasADi + IPOPT, built once per file structure.

Unknowns: wing loading W/S, T_SL/W_TO (or P_SL/W_TO), takeoff mass m_TO and
one speed per free-speed requirement. Every numeric input of the file is a
CasADi *parameter*, so a trade study re-solves the same built problem with
new values. Minimise the objective subject to every requirement's
constraint (the functions of :mod:`sizing.constraints`, the same the diagram
draws) and the weight closure (:mod:`sizing.weights`).

After every solve the answer is re-evaluated in plain numpy; a solver
success that violates a requirement is never returned as a design.
"""
from __future__ import annotations

import math
import sys
import time
import types
from dataclasses import dataclass

import casadi as ca
import numpy as np

from . import constraints as C
from . import model as M
from . import weights as Wt
from .atmosphere import g0
from .propulsion import is_propeller

ACTIVE_TOL = 1e-5     # a requirement within this fractional margin is active
VERIFY_TOL = 1e-6     # post-solve numpy check tolerance (fractional)
TIE_ENGINE = 1e-7     # tie-break weights: smallest engine, then smallest wing
TIE_WING = 1e-9

_IPOPT = {"ipopt.print_level": 0, "print_time": False, "ipopt.sb": "yes",
          "ipopt.tol": 1e-10, "ipopt.acceptable_tol": 1e-8, "ipopt.max_iter": 500,
          "ipopt.mu_strategy": "adaptive",
          "ipopt.bound_relax_factor": 0.0}   # active requirements end exactly on their boundary
_INFEASIBLE = ("Infeasible_Problem_Detected", "Restoration_Failed", "Converged_To_Local_Infeasibility")
_IPOPT_WARM = {"ipopt.warm_start_init_point": "yes", "ipopt.warm_start_bound_push": 1e-9,
               "ipopt.warm_start_mult_bound_push": 1e-9, "ipopt.mu_init": 1e-6}


@dataclass
class _Row:
    rid: str
    what: str          # "thrust" | "wing_loading" | "stall" | "speed_max" | "closure" | "margin"
    index: int         # position in g


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
        fixed = self._fixed_mass(self.tree0)
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
        self._build()
        self.build_time = time.perf_counter() - t0

    # ------------------------------------------------------------------ build
    def _has_free(self, rid, tree):
        r = tree["requirements"][rid]
        ns = M.requirement(r, M.aircraft(tree))
        return C.KINDS[r["kind"]].has_free_speed(ns)

    @staticmethod
    def _fixed_mass(tree):
        w = tree["aircraft"]["weights"]
        return w.get("crew", 0.0) + w.get("payload", 0.0)

    def expressions(self, tree, W_S, Y, m_TO, V: dict):
        """All constraint rows and the closure, on numbers or symbols.

        Returns (rows, values, fuel_fraction, empty_fraction, betas) where
        rows are (rid, what) labels and values the matching expressions
        (>= 0 when satisfied, except "closure" which is == 0).
        """
        ac = M.aircraft(tree)
        betas = {}
        segs = Wt.mission_fractions(tree, ac, W_S) if Wt.has_mission_fuel(tree) else None
        seg_end = Wt.segment_end_fractions(tree, ac, W_S, segs)
        f_fuel = Wt.fuel_fraction(tree, ac, W_S, segs)
        f_empty = Wt.empty_fraction(tree["aircraft"]["weights"], tree["aircraft"], m_TO, W_S, Y, self.propeller)
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
            if b.thrust is not None:
                rows.append((rid, "thrust"))
                vals.append((Y - b.thrust) / self.Y_scale)
            if b.wing_loading is not None:
                rows.append((rid, "wing_loading"))
                vals.append((b.wing_loading - W_S) / self.WS_scale)
            if Vf is not None:
                air = C.condition(req)
                q = 0.5 * air.density * Vf ** 2
                rows.append((rid, "stall"))
                vals.append((q * ac.polar.CLmax(C.config_of(req)) - req.beta * W_S) / self.WS_scale)
                rows.append((rid, "speed_max"))
                vals.append((C.max_free_speed(ac, air) - Vf) / self.V_scale)
        rows.append(("", "closure"))
        vals.append((m_TO * (1.0 - f_fuel - f_empty) - self._fixed_mass(tree)) / self.m_ref)
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
        self._P = P
        tree = M.substitute(self.tree0, {p: P[i] for i, p in enumerate(self.paths)})
        W_S = x[0] * self.WS_scale
        Y = x[1] * self.Y_scale
        m_TO = x[2] * self.m_ref
        V = {rid: x[3 + i] * self.V_scale for i, rid in enumerate(self.free)}
        rows, vals, f_fuel, f_empty, betas = self.expressions(tree, W_S, Y, m_TO, V)
        g = ca.vertcat(*vals)
        f = self._objective(W_S, Y, m_TO, f_fuel)
        self.rows = rows
        self._x = x
        self._g_expr, self._f_expr = g, f
        nlp = {"x": x, "p": P, "f": f, "g": g}
        self.solver = ca.nlpsol("sizing", "ipopt", nlp, _IPOPT)
        self.solver_warm = ca.nlpsol("sizing_warm", "ipopt", nlp, {**_IPOPT, **_IPOPT_WARM})
        lam = ca.SX.sym("lam", g.shape[0])
        L = f + ca.dot(lam, g)
        self._dLdp = ca.Function("dLdp", [x, P, lam], [ca.jacobian(L, P)])
        self._g_fun = ca.Function("g", [x, P], [g, f_fuel, f_empty])
        self.lbg = np.zeros(len(rows))
        self.ubg = np.array([0.0 if w == "closure" else np.inf for _, w in rows])
        self.lbx = np.array([self.WS_bounds[0] / self.WS_scale, self.Y_bounds[0] / self.Y_scale,
                             1e-3 * self._fixed_mass(self.tree0) / self.m_ref] + [0.01] * len(self.free))
        self.ubx = np.array([self.WS_bounds[1] / self.WS_scale, self.Y_bounds[1] / self.Y_scale,
                             1000.0 * self._fixed_mass(self.tree0) / self.m_ref] + [20.0] * len(self.free))

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

    # ------------------------------------------------------------ initial guess
    def initial_guess(self, p, n=48):
        """Best point of a coarse numpy scan over W/S (the spreadsheet way)."""
        tree = self.tree_of(p)
        ac = M.aircraft(tree)
        W = np.geomspace(self.WS_bounds[0], self.WS_bounds[1], n)
        Y_need = np.zeros_like(W)
        ok = np.ones_like(W, dtype=bool)
        speeds = {}
        ws_lim = np.full_like(W, np.inf)
        try:
            seg_end = Wt.segment_end_fractions(tree, ac, W)
        except Exception:  # noqa: BLE001 - a guess only
            seg_end = {}
        for rid in self.req_ids:
            r = tree["requirements"][rid]
            wf = r.get("weight_fraction")
            beta = seg_end.get(wf["after"], 1.0) if isinstance(wf, dict) else None
            req = M.requirement(r, ac, beta)
            with np.errstate(all="ignore"):
                thrust, lim, Vb = C.required_curve(req, ac, W, samples=60)
            if thrust is not None:
                Y_need = np.maximum(Y_need, np.where(np.isfinite(thrust), thrust, np.inf))
            if lim is not None:
                ws_lim = np.minimum(ws_lim, lim)
            if Vb is not None:
                speeds[rid] = Vb
        ok &= W <= ws_lim
        Y_need = np.maximum(Y_need, self.Y_bounds[0])
        ok &= Y_need <= self.Y_bounds[1]
        with np.errstate(all="ignore"):
            f_fuel = Wt.fuel_fraction(tree, ac, W)
            fixed = self._fixed_mass(tree)
            mass = np.full_like(W, 3.0 * fixed)
            closes = np.ones_like(W, dtype=bool)
            for _ in range(30):
                f_e = Wt.empty_fraction(tree["aircraft"]["weights"], tree["aircraft"], mass, W, Y_need, self.propeller)
                closes = 1 - f_fuel - f_e > 0.01
                mass = np.where(closes, fixed / (1 - f_fuel - f_e), np.inf)
                mass = np.clip(mass, fixed, 1000 * fixed)     # a finite start for the next step
            closes &= mass < 1000 * fixed                      # inside the search region
        score = np.where(ok & closes & np.isfinite(mass), mass * (1 + 1e-6 * Y_need), np.inf)
        self.scan_found_design = bool(np.any(np.isfinite(score)))
        if not np.any(np.isfinite(score)):
            i = int(np.argmin(np.where(np.isfinite(Y_need), Y_need, np.inf)))
        else:
            i = int(np.argmin(score))
        x0 = [W[i] / self.WS_scale,
              min(max(Y_need[i] if np.isfinite(Y_need[i]) else 0.5 * self.Y_bounds[1], self.Y_bounds[0]), self.Y_bounds[1]) / self.Y_scale,
              (mass[i] if np.isfinite(mass[i]) else 3.0 * fixed) / self.m_ref]
        for rid in self.free:
            v = speeds.get(rid, np.full_like(W, 100.0))[i]
            x0.append((v if np.isfinite(v) else 100.0) / self.V_scale)
        return np.clip(np.array(x0, dtype=float), self.lbx, self.ubx)

    # --------------------------------------------------------------------- solve
    def solve_raw(self, p=None, x0=None, lam_g0=None, lam_x0=None):
        """One IPOPT solve; returns (x, lam_g, lam_x, stats, verified: bool)."""
        p = self.p0 if p is None else np.asarray(p, dtype=float)

        def attempts():
            if x0 is not None and lam_g0 is not None:
                yield "warm", np.asarray(x0), lam_g0, lam_x0
            if x0 is not None:
                yield "cold", np.asarray(x0), None, None
            guess = self.initial_guess(p)          # only when the given start did not do
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
        """IPOPT told to expect an infeasible problem (quicker certificate); built on first use."""
        if self._solver_infeasible is None:
            nlp = {"x": self._x, "p": self._P, "f": self._f_expr, "g": self._g_expr}
            self._solver_infeasible = ca.nlpsol("sizing_infeasible", "ipopt", nlp,
                                                {**_IPOPT, "ipopt.expect_infeasible_problem": "yes"})
        return self._solver_infeasible

    def _finer_scan_finds_design(self, p) -> bool:
        self.initial_guess(p, n=200)
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
        """Solve and package a :class:`sizing.model.Result`."""
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
            from .diagnose import diagnose
            return diagnose(self, p, st, spec)
        res = self._package(x, lam_g, p, st, sensitivities, spec)
        res.stats["warm"] = (x, lam_g, lam_x)
        return res

    # ------------------------------------------------------------------ package
    def _package(self, x, lam_g, p, stats, sensitivities=True, spec=None):
        spec = spec or self.spec
        from .terms import describe_margin, sensitivity_unit

        tree = self.tree_of(p)
        ac = M.aircraft(tree)
        W_S, Y, m_TO = float(x[0] * self.WS_scale), float(x[1] * self.Y_scale), float(x[2] * self.m_ref)
        V = {rid: float(x[3 + i] * self.V_scale) for i, rid in enumerate(self.free)}
        with np.errstate(all="ignore"):
            rows, vals, f_fuel, f_empty, betas = self.expressions(tree, W_S, Y, m_TO, V)
        f_fuel, f_empty = float(np.asarray(f_fuel)), float(np.asarray(f_empty))
        if sensitivities:
            dm = self._sensitivities(x, lam_g, p)
            other = self._other_costs(x, lam_g, p, tree)
        else:
            dm, other = {}, ()
        out = []
        drivers = []
        for rid in self.req_ids:
            r = tree["requirements"][rid]
            req = M.requirement(r, ac, float(np.asarray(betas[rid])))
            b = C.KINDS[r["kind"]].function(W_S, V.get(rid), req, ac)
            margins = []
            if b.thrust is not None:
                margins.append(Y / float(np.asarray(b.thrust)) - 1.0)
            if b.wing_loading is not None:
                margins.append(float(np.asarray(b.wing_loading)) / W_S - 1.0)
            if rid in V:
                air = C.condition(req)
                q = 0.5 * air.density * V[rid] ** 2
                margins.append(q * ac.polar.CLmax(C.config_of(req)) / (req.beta * W_S) - 1.0)
            margin = min(margins) if margins else math.inf
            active = margin <= ACTIVE_TOL
            if active:
                drivers.append(rid)
                margin = 0.0
            spec_req = spec.requirement(rid)
            field = M.value_field(r)
            unit_text, scale = sensitivity_unit(spec, rid, field)
            sens = dm.get(rid)
            if sens is not None:
                sens = sens * scale
            wf = r.get("weight_fraction")
            src = f"after {wf['after']}" if isinstance(wf, dict) else ("given" if wf is not None else "default 1.0")
            out.append(M.RequirementResult(
                id=rid, kind=r["kind"], active=active, margin=max(margin, 0.0),
                sensitivity=sens, sensitivity_unit=unit_text,
                value_text=_value_text(spec_req, field),
                detail=describe_margin(r, tree, spec, W_S, Y, betas[rid]),
                speed=V.get(rid), beta=float(np.asarray(req.beta)), beta_source=src))
        if self._mission_drives(x, p, rows, vals):
            drivers.append("mission fuel")
        g = m_TO * g0
        design = M.Design(
            wing_loading=W_S, thrust_to_weight=None if self.propeller else Y,
            power_to_weight=Y if self.propeller else None, takeoff_mass=m_TO,
            wing_area=g / W_S, empty_mass=f_empty * m_TO, fuel_mass=f_fuel * m_TO,
            thrust=None if self.propeller else Y * g, power=Y * g if self.propeller else None,
            crew_mass=tree["aircraft"]["weights"].get("crew", 0.0),
            payload_mass=tree["aircraft"]["weights"].get("payload", 0.0))
        edges = []
        for name, val, (lo, hi) in (
                ("wing_loading", W_S, self.WS_bounds),
                ("power_to_weight" if self.propeller else "thrust_to_weight", Y, self.Y_bounds)):
            span = hi - lo
            if abs(val - lo) <= 1e-6 * span and lo > 0:
                edges.append(f"{name} lower bound")
            if abs(val - hi) <= 1e-6 * span:
                edges.append(f"{name} upper bound")
        fuel_rows = ()
        if Wt.has_mission_fuel(tree):
            segs = Wt.mission_fractions(tree, ac, W_S)
            fuel_rows = tuple((name, float(np.asarray(f)), float((np.asarray(b0) - np.asarray(be)) * m_TO))
                              for (name, f, be), b0 in zip(segs, [1.0] + [s[2] for s in segs[:-1]]))
        return M.Result(title=spec.title, status="optimal", propeller=self.propeller, design=design,
                        requirements=tuple(out), drivers=tuple(drivers), on_edge=tuple(edges),
                        fuel_breakdown=fuel_rows, other_costs=other, objective=self.objective,
                        stats=dict(stats),
                        spec=spec)

    def _mission_drives(self, x, p, rows, vals) -> bool:
        """Mission fuel sets the wing loading when fewer than two requirement
        rows are active (no vertex of the diagram pins W/S), the optimum is
        inside the W/S range and the fuel fraction changes with W/S."""
        if not Wt.has_mission_fuel(self.tree0):
            return False
        W_S = x[0] * self.WS_scale
        lo, hi = self.WS_bounds
        if W_S <= lo * (1 + 1e-6) or W_S >= hi * (1 - 1e-6):
            return False
        active = sum(1 for (rid, what), v in zip(rows, vals)
                     if what in ("thrust", "wing_loading") and float(np.asarray(v)) <= ACTIVE_TOL)
        if active >= 2:
            return False
        tree = self.tree_of(p)
        ac = M.aircraft(tree)
        f = [float(np.asarray(Wt.fuel_fraction(tree, ac, W_S * s))) for s in (1 - 1e-3, 1 + 1e-3)]
        return abs(f[1] - f[0]) > 1e-7

    def _other_costs(self, x, lam_g, p, tree):
        """Takeoff-mass cost of payload (the growth factor) and of each mission leg."""
        if self.objective != "takeoff-mass":
            return ()
        dL = np.array(self._dLdp(x, p, lam_g)).ravel() * self.m_ref
        idx = {path: i for i, path in enumerate(self.paths)}
        out = []
        j = idx.get(("aircraft", "weights", "payload"))
        if j is not None:
            out.append(("payload (growth factor)", float(dL[j]), "kg per kg"))
        for i, seg in enumerate((tree.get("mission") or {}).get("segments", [])):
            name = seg.get("name") or f"{seg['kind']}-{i + 1}"
            if seg["kind"] == "cruise":
                j = idx.get(("mission", "segments", i, "range"))
                if j is not None:
                    out.append((f"range of {name}", float(dL[j]) * 1000.0, "kg per km"))
            elif seg["kind"] in ("loiter", "combat", "maneuver"):
                j = idx.get(("mission", "segments", i, "time"))
                if j is not None:
                    out.append((f"time of {name}", float(dL[j]) * 60.0, "kg per min"))
        return tuple(out)

    def _sensitivities(self, x, lam_g, p):
        """d m_TO / d value [kg per SI unit] for each requirement's headline value."""
        idx = {path: i for i, path in enumerate(self.paths)}
        out = {}
        if self.objective == "takeoff-mass":
            dL = np.array(self._dLdp(x, p, lam_g)).ravel() * self.m_ref
            for rid in self.req_ids:
                field = M.value_field(self.tree0["requirements"][rid])
                j = idx.get(("requirements", rid, field))
                if j is not None:
                    out[rid] = float(dL[j])
            return out
        # other objectives: central differences of re-solves
        for rid in self.req_ids:
            field = M.value_field(self.tree0["requirements"][rid])
            j = idx.get(("requirements", rid, field))
            if j is None:
                continue
            h = 1e-4 * max(abs(p[j]), 1e-3)
            vals = []
            for s in (+1, -1):
                pp = p.copy()
                pp[j] += s * h
                r = self.solve_raw(pp, x0=x)
                vals.append(r[0][2] * self.m_ref if r[4] else np.nan)
            out[rid] = float((vals[0] - vals[1]) / (2 * h))
        return out


def _value_text(spec_req, field):
    v = getattr(spec_req, field, None)
    if v is None:
        return ""
    return getattr(v, "text", None) or f"{v:g}"


_CACHE: dict = {}


def build(spec) -> Problem:
    """A Problem for the spec, reused when the structure was built before."""
    key = M.structure_key(M.spec_tree(spec))
    prob = _CACHE.get(key)
    if prob is None:
        prob = Problem(spec)
        _CACHE.clear()
        _CACHE[key] = prob
    return prob


def solve(spec, sensitivities=True) -> M.Result:
    """Solve a requirement file (a :class:`sizing.spec.Spec`)."""
    prob = build(spec)
    res = prob.solve(prob.parameters(spec), sensitivities=sensitivities, spec=spec)
    return res


class _CallableModule(types.ModuleType):
    """``sizing.solve(spec)`` keeps working after ``import sizing.solve`` (which
    replaces the package attribute ``sizing.solve`` by this module)."""

    def __call__(self, spec, sensitivities=True):
        return solve(spec, sensitivities=sensitivities)


sys.modules[__name__].__class__ = _CallableModule

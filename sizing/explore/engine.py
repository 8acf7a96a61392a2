"""The what-if engine behind the page: changed values -> the same built problem re-solved, warm-started.

One :class:`Explorer` per requirement file: it loads the file, builds the
sizing problem once (:class:`sizing.problem.Problem`) and lists the movable
values (:mod:`.controls`). A change is answered in three steps, so the design
numbers never wait for the slower parts:

1. :meth:`Explorer.quick` validates the changed file with the file format's
   own models, reads its parameter vector (``Problem.parameters``) and
   re-solves the built problem from the last good answer
   (``Problem.solve_raw`` with its multipliers): takeoff mass, wing loading,
   T/W or P/W, masses and the drivers come straight from that solution
   (``Problem.constraint_values``), a few milliseconds.
2. :meth:`Explorer.curves`: the constraint diagram's numbers
   (:func:`sizing.charts.diagram_data.diagram_data`, the functions
   ``sizing diagram`` draws from).
3. :meth:`Explorer.complete`: the full :class:`~sizing.problem.result.Result`
   (``Problem.package``: costs, margins in each requirement's own terms), or,
   when no verified design was found, the diagnosis of the infeasible set
   (:func:`sizing.problem.diagnose.diagnose`: conflicts and relaxations; a
   :class:`~sizing.common.errors.SolverError` when the solver failed).

:class:`Session` runs these steps for one open page on one worker thread
shared by every page (the built problem is not thread-safe), and coalesces
changes that arrive while a solve runs: only the newest values are solved.
Mach-table entries are structure of the built problem; changing one builds
(and keeps) the problem for the new table.
"""
from __future__ import annotations

import hashlib
import math
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF
from ..common.errors import InputError, SizingError
from ..common.fileio import atomic_write
from ..inputs.rewrite import replace_values, set_value
from ..inputs.spec import load, load_text, validate
from ..physics.atmosphere import g0
from ..physics.propulsion import axis_label, reference_label
from ..problem import ACTIVE_TOL, Problem
from ..problem import tree as M
from ..problem.package import rating_fields
from ..problem.result import Design, RequirementResult, Result
from .controls import controls_of, shown

FT2 = 0.09290304         # m^2 per ft^2 (exact)
MAX_PROBLEMS = 4         # built problems kept (one per Mach-table structure)

# The step from the last answer: the built problem's own NLP and tolerances with IPOPT's
# warm-start options, a monotone barrier started small and an iteration cap (the trade
# studies' warm step, sizing/studies/runner.py); its answer is checked in numpy
# (Problem.verify) and a step that does not settle goes to Problem.solve_raw.
WARM_OPTIONS = {"ipopt.warm_start_init_point": "yes", "ipopt.warm_start_bound_push": 1e-10,
                "ipopt.warm_start_mult_bound_push": 1e-10, "ipopt.mu_strategy": "monotone",
                "ipopt.mu_init": 1e-8, "ipopt.max_iter": 60}
_SUCCESS = ("Solve_Succeeded", "Solved_To_Acceptable_Level")


@dataclass(frozen=True)
class Numbers:
    """The design numbers of a verified solution (what the page shows first)."""

    propeller: bool
    wing_loading: float      # [N/m^2]
    y: float                 # T_SL/W_TO [-] or P_SL/W_TO [W/N]
    takeoff_mass: float      # [kg]
    wing_area: float         # [m^2]
    empty_mass: float        # [kg]
    fuel_mass: float         # [kg]
    fixed_mass: float        # crew + payload [kg]
    drivers: tuple = ()      # active requirement ids (and "mission fuel")
    rating: str = ""         # the rating thrust (power) is quoted at ("dry rating", ...)
    engines: int = 1
    dry_fraction: float | None = None   # dry over rated sea-level static thrust (afterburning jets)

    @property
    def thrust_or_power(self) -> float:
        """Installed sea-level static thrust [N] (jets, top rating) or shaft power [W] (propeller
        aircraft, takeoff rating), standard day."""
        return self.y * self.takeoff_mass * g0

    def rows(self) -> list:
        """(id, name, value text, other units) rows, worded and rounded as ``sizing solve`` prints them."""
        W, m = self.wing_loading, self.takeoff_mass
        out = [("wing-loading", "wing loading", f"{W:,.0f} N/m²",
                f"{W / g0:,.1f} kg/m², {W / LBF_FT2:,.2f} lb/ft²")]
        if self.propeller:
            out.append(("power-to-weight", "power-to-weight", f"{self.y:,.2f} W/N",
                        f"{self.y * g0 / 1000:,.4f} kW/kg, {self.y * N_PER_LBF / HP:,.4f} hp/lb"))
            P, n = self.thrust_or_power, self.engines
            out.append(("power", reference_label(True, self.rating), f"{P / 1000:,.1f} kW", f"{P / HP:,.0f} hp"))
            out.append(("power-per-engine", f"shaft power per engine ({n} engine{'s' if n != 1 else ''})",
                        f"{P / n / 1000:,.1f} kW", f"{P / n / HP:,.0f} hp"))
        else:
            T, n = self.thrust_or_power, self.engines
            out.append(("thrust-to-weight", f"thrust-to-weight {axis_label(False, self.rating)}", f"{self.y:,.4f}", ""))
            out.append(("thrust", reference_label(False, self.rating), f"{T / 1000:,.2f} kN",
                        f"{T / N_PER_LBF:,.0f} lbf"))
            out.append(("thrust-per-engine", f"thrust per engine ({n} engine{'s' if n != 1 else ''})",
                        f"{T / n / 1000:,.2f} kN", f"{T / n / N_PER_LBF:,.0f} lbf"))
            if self.dry_fraction is not None:
                out.append(("dry-thrust", reference_label(False, "dry rating"), f"{T * self.dry_fraction / 1000:,.2f} kN",
                            f"T/W {self.y * self.dry_fraction:,.4f}"))
        out += [("takeoff-mass", "takeoff mass", f"{m:,.0f} kg", f"{m / LB:,.0f} lb"),
                ("wing-area", "wing area", f"{self.wing_area:,.2f} m²", f"{self.wing_area / FT2:,.1f} ft²"),
                ("empty-mass", "empty mass", f"{self.empty_mass:,.0f} kg", f"{self.empty_mass / m:.3f} of takeoff"),
                ("fuel-mass", "fuel mass", f"{self.fuel_mass:,.0f} kg", f"{self.fuel_mass / m:.3f} of takeoff"),
                ("fixed-mass", "crew + payload", f"{self.fixed_mass:,.0f} kg", "")]
        return out

    @classmethod
    def of(cls, result) -> "Numbers | None":
        """The numbers of a packaged :class:`~sizing.problem.result.Result` (None when infeasible)."""
        d = result.design
        if d is None:
            return None
        return cls(result.propeller, d.wing_loading, d.power_to_weight if result.propeller else d.thrust_to_weight,
                   d.takeoff_mass, d.wing_area, d.empty_mass, d.fuel_mass, d.crew_mass + d.payload_mass,
                   tuple(result.drivers), d.rating, d.engines,
                   None if d.dry_thrust is None else d.dry_thrust / d.thrust)


@dataclass
class Step:
    """One re-solve: the values asked for, the validated file, the raw solution, its numbers."""

    values: dict               # control key -> value [user unit]
    spec: object               # the validated changed file (sizing.inputs.spec.Spec)
    problem: Problem
    p: np.ndarray
    x: np.ndarray
    lam_g: np.ndarray
    lam_x: np.ndarray
    stats: dict
    verified: bool
    numbers: Numbers | None
    seconds: float = 0.0       # from the change to the numbers [s]
    timings: dict = field(default_factory=dict)
    t0: float = 0.0            # time.perf_counter() at the change
    serial: int = 0            # order in which a page showed it

    @property
    def warm(self):
        return (self.x, self.lam_g, self.lam_x)


class NeedsConfirmation(SizingError):
    """Saving would overwrite a file (the input, or another existing one): ask first."""


class Explorer:
    """A requirement file, its built problem and its movable values, ready for what-if changes."""

    def __init__(self, path):
        self.path = str(path)
        raw = Path(path).read_bytes()
        self.spec = load(path)                 # located errors for a bad file
        self.text = raw.decode("utf-8").lstrip("\ufeff")
        if self.spec.sha256 and hashlib.sha256(self.text.encode()).hexdigest() != self.spec.sha256:
            self.text = ""                     # changed on disk between the reads: never splice into it
        self.problem = Problem(self.spec)
        self._problems = {self.problem.structure: self.problem}
        self._warm_solvers = {}
        self._twins = {}
        self.controls = controls_of(self.spec, self.problem.paths)
        self.by_key = {c.key: c for c in self.controls}
        self.initial = {c.key: c.value for c in self.controls}
        t0 = time.perf_counter()
        self.base = self.problem.solve(self.problem.parameters(self.spec), spec=self.spec)
        self.base_seconds = time.perf_counter() - t0
        self.base_warm = self.base.stats.get("warm")
        if self.base_warm is not None:
            self.quick(self.initial, self.base_warm)     # builds the warm step once, before any page opens
        from ..charts.diagram_data import diagram_data

        self.curves_base = diagram_data(self.spec, self.base)

    # ------------------------------------------------------------------ values
    def refusal(self, key, value) -> str | None:
        """Why a control cannot take ``value`` (outside its range), or None."""
        c = self.by_key.get(key)
        if c is None:
            return f"no movable value {key!r} in {self.path}"
        return c.refusal(value)

    def changes(self, values) -> list:
        """[(control, value as written in the file, new value as the file writes it)] that differ from the file."""
        out = []
        for c in self.controls:
            v = values.get(c.key, c.value)
            if float(v) != float(c.value):
                out.append((c, self._as_written(c), c.raw(v)))
        return out

    def _as_written(self, c):
        node = self.spec.data
        for k in c.raw_path:
            node = node[k]
        return node

    def data_for(self, values) -> dict:
        """The file's data with ``values`` [user units] set."""
        data = self.spec.data
        for c, _old, new in self.changes(values):
            data = set_value(data, c.raw_path, new)
        return data

    def spec_for(self, values):
        """The changed file, validated by the file format's models (:class:`InputError` if it does not fit)."""
        changed = self.changes(values)
        if not changed:
            return self.spec
        return validate(self.data_for(values), self.path)

    def problem_for(self, spec) -> tuple:
        """(built problem, parameter vector) for a changed file; a new Mach table builds a new problem."""
        try:
            return self.problem, self.problem.parameters(spec)
        except ValueError:
            pass
        key = M.structure_key(M.spec_tree(spec))
        prob = self._problems.get(key)
        if prob is None:
            prob = Problem(spec)
            if len(self._problems) >= MAX_PROBLEMS:
                old = self._problems.pop(next(k for k in self._problems if k != self.problem.structure))
                self._warm_solvers.pop(id(old), None)
                self._twins.pop(id(old), None)
            self._problems[key] = prob
        return prob, prob.parameters(spec)

    # ------------------------------------------------------------------ solve
    def quick(self, values, warm=None, t0=None) -> Step:
        """Validate, re-solve warm-started, and read the design numbers (step 1).

        Raises :class:`InputError` when the changed file does not validate.
        """
        t0 = time.perf_counter() if t0 is None else t0
        spec = self.spec_for(values)
        t1 = time.perf_counter()
        prob, p = self.problem_for(spec)
        x0, lam_g0, lam_x0 = warm if warm is not None else (None, None, None)
        if x0 is not None and len(x0) != len(prob.lbx):
            x0 = lam_g0 = lam_x0 = None
        t2 = time.perf_counter()
        x, lam_g, lam_x, stats, verified = self.solve(prob, p, x0, lam_g0, lam_x0)
        t3 = time.perf_counter()
        numbers = self.numbers(prob, x, p) if verified else None
        t4 = time.perf_counter()
        st = {"return_status": stats.get("return_status"), "iterations": stats.get("iter_count"),
              "solve_time_s": t3 - t2, "build_time_s": prob.build_time}
        return Step(dict(values), spec, prob, p, x, lam_g, lam_x, st, verified, numbers, t4 - t0,
                    {"validate": t1 - t0, "parameters": t2 - t1, "solve": t3 - t2, "numbers": t4 - t3}, t0)

    def solve(self, prob, p, x0=None, lam_g0=None, lam_x0=None):
        """(x, lam_g, lam_x, stats, verified): the warm step from the last answer, checked in numpy,
        else ``Problem.solve_raw`` (its warm start, cold start, W/S scan and other starting points)."""
        if x0 is not None and lam_g0 is not None:
            solver = self._warm_solvers.get(id(prob))
            if solver is None:
                import casadi as ca

                from ..problem.nlp import IPOPT_OPTIONS

                nlp = {"x": prob.x_sym, "p": prob.p_sym, "f": prob.f_sym, "g": prob.g_sym}
                solver = self._warm_solvers[id(prob)] = ca.nlpsol("explore_warm", "ipopt", nlp,
                                                                  {**IPOPT_OPTIONS, **WARM_OPTIONS})
            sol = solver(x0=x0, p=p, lbx=prob.lbx, ubx=prob.ubx, lbg=prob.lbg, ubg=prob.ubg,
                         lam_g0=lam_g0, lam_x0=lam_x0)
            stats = solver.stats()
            x = np.array(sol["x"]).ravel()
            if stats.get("return_status") in _SUCCESS and prob.verify(x, p):
                return x, np.array(sol["lam_g"]).ravel(), np.array(sol["lam_x"]).ravel(), stats, True
        return prob.solve_raw(p, x0, lam_g0, lam_x0)

    @staticmethod
    def numbers(prob, x, p) -> Numbers:
        """Design numbers of a verified solution, from the built problem's own rows.

        Drivers are the requirements whose rows are active (fractional margin at
        most :data:`sizing.problem.ACTIVE_TOL`, as in the packaged result).
        """
        W_S, Y, m = float(x[0] * prob.WS_scale), float(x[1] * prob.Y_scale), float(x[2] * prob.m_ref)
        g, f_fuel, f_empty = prob.constraint_values(x, p)
        drivers = []
        for (rid, what), v in zip(prob.rows, g):
            if rid in drivers or not rid:
                continue
            if what == "thrust":
                need = Y - v * prob.Y_scale
                margin = Y / need - 1.0 if need > 0 else math.inf
            elif what == "wing_loading":
                margin = (W_S + v * prob.WS_scale) / W_S - 1.0
            elif what == "stall":
                margin = v * prob.WS_scale / W_S
            else:
                continue
            if margin <= ACTIVE_TOL:
                drivers.append(rid)
        if prob.mission_drives(x, p, prob.rows, g):
            drivers.append("mission fuel")
        tree = prob.tree_of(p)
        fixed = prob.fixed_mass(tree)
        r = rating_fields(M.aircraft(tree, m), None if prob.propeller else 1.0)
        return Numbers(prob.propeller, W_S, Y, m, m * g0 / W_S, f_empty * m, f_fuel * m, fixed, tuple(drivers),
                       r["rating"], r["engines"], r["dry_thrust"])

    def light_result(self, step) -> Result:
        """A result with the quick numbers only (for drawing the curves before the margins)."""
        n = step.numbers
        if n is None:
            return Result(title=step.spec.title, status="infeasible", propeller=step.problem.propeller,
                          design=None, spec=step.spec)
        design = Design(n.wing_loading, None if n.propeller else n.y, n.y if n.propeller else None,
                        n.takeoff_mass, n.wing_area, n.empty_mass, n.fuel_mass,
                        None if n.propeller else n.thrust_or_power, n.thrust_or_power if n.propeller else None,
                        engines=n.engines, rating=n.rating,
                        dry_thrust=None if n.dry_fraction is None else n.dry_fraction * n.thrust_or_power)
        reqs = tuple(RequirementResult(rid, r["kind"], rid in n.drivers, math.nan, None, "", "", "")
                     for rid, r in M.spec_tree(step.spec)["requirements"].items())
        return Result(title=step.spec.title, status="optimal", propeller=n.propeller, design=design,
                      requirements=reqs, drivers=n.drivers, spec=step.spec)

    def curves(self, step, result=None):
        """The constraint diagram's numbers for a step (step 2)."""
        from ..charts.diagram_data import diagram_data

        return diagram_data(step.spec, result or self.light_result(step))

    def complete(self, step, twin=False) -> Result:
        """The full result: costs and margins, or the diagnosis of an infeasible set (step 3).

        ``twin``: work on :meth:`twin` of the step's problem (another thread may be
        solving with the problem itself). Raises
        :class:`~sizing.common.errors.SolverError` when the solver found no verified
        design and could not show the set infeasible either.
        """
        prob = self.twin(step.problem) if twin else step.problem
        if step.verified:
            return prob.package(step.x, step.lam_g, step.p, step.stats, True, step.spec)
        from ..problem.diagnose import diagnose

        return diagnose(prob, step.p, dict(step.stats), step.spec)

    def twin(self, prob) -> Problem:
        """A second built problem identical to ``prob`` (same file, so the same scales) for the
        follow-up thread; built on first use and kept while ``prob`` is."""
        twin = self._twins.get(id(prob))
        if twin is None or twin[0] is not prob:
            twin = self._twins[id(prob)] = (prob, Problem(prob.spec))
        return twin[1]

    # ------------------------------------------------------------------- save
    def save_text(self, values) -> tuple:
        """(YAML text of the changed file, kept_in_place): the file's own text with the changed
        values spliced in (comments and units kept), a note of the changes on top."""
        changed = self.changes(values)
        spec = self.spec_for(values)               # never write a file that does not validate
        text, in_place = replace_values(self.text, self.spec.data, [(c.raw_path, new) for c, _o, new in changed],
                                        self.path)
        if changed:
            note = [f"# Saved by sizing explore from {Path(self.path).name}; values changed there:"]
            note += [f"#   {c.key}: {_written(old)} -> {_written(new)}" for c, old, new in changed]
            text = "\n".join(note) + "\n" + text
        a, b = M.spec_tree(load_text(text, self.path)), M.spec_tree(spec)
        if M.structure_key(a) != M.structure_key(b) or M.flatten(a) != M.flatten(b):
            raise SizingError("the saved text does not read back as the changed file")   # pragma: no cover
        return text, in_place

    def save(self, values, target, overwrite=False) -> Path:
        """Write the changed file to ``target``; :class:`NeedsConfirmation` before overwriting anything."""
        target = Path(target).expanduser()
        if not target.suffix:
            target = target.with_suffix(".yaml")
        if not overwrite:
            if target.resolve() == Path(self.path).resolve():
                raise NeedsConfirmation(f"{target} is the input file itself; overwrite it?")
            if target.exists():
                raise NeedsConfirmation(f"{target} exists; overwrite it?")
        text, _in_place = self.save_text(values)
        atomic_write(target, text, "w")
        return target

    def default_target(self) -> Path:
        """``<input>-whatif.yaml`` beside the input (a free name: -whatif-2, -3, ... if taken)."""
        p = Path(self.path)
        for i in range(1, 1000):
            cand = p.with_name(f"{p.stem}-whatif{'' if i == 1 else f'-{i}'}{p.suffix or '.yaml'}")
            if not cand.exists():
                return cand
        return p.with_name(f"{p.stem}-whatif{p.suffix or '.yaml'}")


def _written(v) -> str:
    return shown(v) if isinstance(v, (int, float)) and not isinstance(v, bool) else str(v)


# --------------------------------------------------------------------------
# One page's state: coalesced changes, solved on one thread, followed up on another
# --------------------------------------------------------------------------

WORKER = ThreadPoolExecutor(max_workers=1, thread_name_prefix="sizing-explore-solve")
FOLLOW_UP = ThreadPoolExecutor(max_workers=1, thread_name_prefix="sizing-explore-follow")


class Session:
    """The values of one open page, their solves and follow-ups.

    Solves run on :data:`WORKER` (one thread for every page: the built problems
    are not thread-safe); the slower follow-ups (curves, costs and margins, the
    diagnosis) run on :data:`FOLLOW_UP` with a twin of the built problem
    (:meth:`Explorer.twin`), so a new change is solved at once even while the
    margins of the last one are still being worked out. Changes that arrive
    while a solve runs are coalesced (only the newest is solved), and
    follow-ups of a superseded change are dropped.

    ``publish(kind, payload)`` receives, from those threads:
    ``("refused", (key, message))`` when the changed file does not validate;
    ``("numbers", step)`` as soon as the solve is done (``step.numbers`` None
    when no verified design was found; ``step.serial`` counts up); then, for
    the newest step only, ``("curves", (step, data))`` and ``("result", (step,
    result))``, or ``("failed", (step, message))`` when the solver failed.
    """

    def __init__(self, explorer: Explorer, publish, executor=None, follow_up=None):
        self.explorer = explorer
        self.publish = publish
        self.executor = executor or WORKER
        self.follow_up = follow_up or FOLLOW_UP
        self.accepted = dict(explorer.initial)       # the last values that validated
        self.warm = explorer.base_warm
        self.last_good = Numbers.of(explorer.base)  # shown (marked stale) while no design is found
        self._lock = threading.Lock()
        self._pending = None                         # newest change not yet solved
        self._running = False
        self._busy = False                           # a solve is under way
        self._next = None                            # newest step whose follow-ups are due
        self._following = False
        self._serial = 0
        self._latest = 0                             # serial of the newest step
        self._last_step = None
        self._followed = 0                           # serial of the newest step followed up in full
        self.log = []                                # (kind, seconds since the change) of every publish

    # -------------------------------------------------------------- changes
    def request(self, values, key=None, t0=None):
        """Solve for ``values`` (all controls) soon; ``key`` names the control that changed."""
        t0 = time.perf_counter() if t0 is None else t0
        with self._lock:
            self._pending = (dict(values), key, t0)
            if self._running:
                return None
            self._running = True
        return self.executor.submit(self._run)

    def _emit(self, kind, payload, t0):
        self.log.append((kind, time.perf_counter() - t0))
        self.publish(kind, payload)

    def _run(self):
        while True:
            with self._lock:
                job, self._pending = self._pending, None
                if job is None:
                    self._running = False
                    return
                self._busy = True
            try:
                self._solve(*job)
            except Exception as e:  # noqa: BLE001 - a worker never dies silently: the page says what broke
                self._emit("failed", (None, f"{type(e).__name__}: {e}"), job[2])
            finally:
                with self._lock:
                    self._busy = False

    def _solve(self, values, key, t0):
        try:
            step = self.explorer.quick(values, self.warm, t0)
        except InputError as e:
            with self._lock:
                self._busy = False
            self._emit("refused", (key, e.message), t0)
            with self._lock:            # the shown state stands: finish its follow-ups if they were dropped
                redo = self._last_step if self._last_step is not None and self._followed < self._latest else None
            if redo is not None:
                self._follow(redo)
            return
        self.accepted = dict(values)
        if step.verified:
            self.warm = step.warm
            self.last_good = step.numbers
        with self._lock:
            self._serial += 1
            step.serial = self._latest = self._serial
            self._last_step = step
            self._busy = False
        self._emit("numbers", step, t0)
        self._follow(step)

    # ----------------------------------------------------------- follow-ups
    def _follow(self, step):
        with self._lock:
            self._next = step
            if self._following:
                return
            self._following = True
        self.follow_up.submit(self._run_follow_ups)

    def _superseded(self, step) -> bool:
        with self._lock:
            return step.serial < self._latest or self._pending is not None or self._busy or self._next is not None

    def _run_follow_ups(self):
        while True:
            with self._lock:
                step, self._next = self._next, None
                if step is None:
                    self._following = False
                    return
            try:
                self._follow_up(step)
            except Exception as e:  # noqa: BLE001 - the page says what broke
                self._emit("failed", (step, f"{type(e).__name__}: {e}"), step.t0)

    def _follow_up(self, step):
        ex = self.explorer
        if step.verified:
            if self._superseded(step):
                return
            self._emit("curves", (step, ex.curves(step)), step.t0)
        if self._superseded(step):
            return
        try:
            result = ex.complete(step, twin=True)
        except SizingError as e:
            if not self._superseded(step):
                self._emit("failed", (step, str(e)), step.t0)
                if not step.verified:
                    self._emit("curves", (step, ex.curves(step)), step.t0)
            self._done(step)
            return
        if self._superseded(step):
            return
        self._emit("result", (step, result), step.t0)
        if not step.verified:
            self._emit("curves", (step, ex.curves(step, result)), step.t0)
        self._done(step)

    def _done(self, step):
        with self._lock:
            self._followed = max(self._followed, step.serial)

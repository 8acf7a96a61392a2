"""Running a study: one built problem per worker, warm-started re-solves, chunks that depend on
the study alone, executors (serial, local processes, Dask) with identical numbers, and the result.

The runner builds the sizing problem once per worker process and re-solves
it with new parameter values, warm-started from the nearest point already
solved. A point with no feasible design is kept with status ``infeasible``
and NaNs.
"""
from __future__ import annotations

import copy
import hashlib
import math
import os
import time
from dataclasses import dataclass

import numpy as np

from ..common import stop
from ..common.errors import InputError, SizingError
from ..inputs.spec import validate
from ..physics.atmosphere import g0 as G0
from ..problem import ACTIVE_TOL, VERIFY_TOL, Problem
from ..problem import tree as M
from ..problem.continuation import Continuation
from ..problem.health import RUNAWAY_WARN, runaway_margin
from ..problem.nlp import IPOPT_OPTIONS
from .definition import Study, load_study

STATUS_OK, STATUS_INFEASIBLE, STATUS_FAILED = "optimal", "infeasible", "failed"
_CODES = {0: STATUS_OK, 1: STATUS_INFEASIBLE, 2: STATUS_FAILED}
# IPOPT outcomes for which Problem.solve diagnoses infeasibility instead of raising
_INFEASIBLE_RETURNS = {"Infeasible_Problem_Detected", "Solve_Succeeded", "Solved_To_Acceptable_Level",
                       "Restoration_Failed", "Maximum_Iterations_Exceeded",
                       "Search_Direction_Becomes_Too_Small", "Converged_To_Local_Infeasibility"}

# --------------------------------------------------------------------------
# Solving chunks (in the worker processes; no Problem crosses a process)
# --------------------------------------------------------------------------

# The study's own solver for the step from a neighbour: the Problem's NLP and
# tolerances with IPOPT's warm-start options, a monotone barrier started small and
# an iteration cap; a step that does not settle goes to Problem.solve_raw instead.
WARM_MAX_ITER = 20     # a settling step takes 4 to 15 (trainer Monte Carlo); more means trouble
_WARM_OPTIONS = {"ipopt.warm_start_init_point": "yes", "ipopt.warm_start_bound_push": 1e-10,
                 "ipopt.warm_start_mult_bound_push": 1e-10, "ipopt.mu_strategy": "monotone",
                 "ipopt.mu_init": 1e-8, "ipopt.max_iter": WARM_MAX_ITER}
_SUCCESS = ("Solve_Succeeded", "Solved_To_Acceptable_Level")


class _Context:
    """A worker's problem for one base file (built once), its solved base point."""

    def __init__(self, job):
        spec = validate(copy.deepcopy(job["data"]), job["filename"])
        # a fresh Problem, not the structure cache: its scaling comes from the base
        # file in every process, so every executor solves the very same problem
        self.prob = prob = Problem(spec)
        self.p0 = prob.parameters(spec)
        self.index = np.asarray(job["index"], dtype=int)
        self.confirm = bool(job.get("confirm", True))
        x, lg, lx, _st, ok = prob.solve_raw(self.p0)
        self.base_warm = (x, lg, lx) if ok else None
        self._warm_solver = None
        self.continuation = Continuation(prob)

    @property
    def warm_solver(self):
        """IPOPT warm-started from a neighbour (built on first use: most steps are Newton's)."""
        if self._warm_solver is None:
            import casadi as ca

            prob = self.prob
            nlp = {"x": prob.x_sym, "p": prob.p_sym, "f": prob.f_sym, "g": prob.g_sym}
            self._warm_solver = ca.nlpsol("study_warm", "ipopt", nlp, {**IPOPT_OPTIONS, **_WARM_OPTIONS})
        return self._warm_solver

    def params(self, values):
        p = self.p0.copy()
        p[self.index] = values
        return p


_CONTEXTS: dict = {}


def _context(job) -> _Context:
    if job["key"] not in _CONTEXTS:
        _CONTEXTS.clear()
        _CONTEXTS[job["key"]] = _Context(job)
    return _CONTEXTS[job["key"]]


def _rows(prob, x, p):
    return prob.constraint_values(x, p)[0]


def _drivers(ctx, x, p, g=None):
    """Active requirements from the constraint rows (given, or evaluated at x), by the rule of
    Problem.package: a thrust or wing-loading row on its bound (a free speed's floors, stall
    and buffet, bound the speed, not the design)."""
    prob = ctx.prob
    g = _rows(prob, x, p) if g is None else g
    W_S, Y = x[0] * prob.WS_scale, x[1] * prob.Y_scale
    worst = {}
    for (rid, what), v in zip(prob.rows, g):
        if what == "thrust":
            margin = Y / (Y - v * prob.Y_scale) - 1.0
        elif what == "wing_loading":
            margin = v * prob.WS_scale / W_S
        else:
            continue
        worst[rid] = min(worst.get(rid, math.inf), margin)
    drivers = [rid for rid in prob.req_ids if worst.get(rid, math.inf) <= ACTIVE_TOL]
    return drivers + (["mission fuel"] if prob.mission_drives(x, p, prob.rows, g) else [])


def _conflicting(prob, x, p, tol=1e-6) -> list:
    """The requirements in conflict at an infeasible point, cheaply: those whose constraint
    rows are violated (by more than ``tol`` in the rows' scaling) where the infeasible solve
    ended, IPOPT's point of least infeasibility (or the coarse scan's best point), and
    ``weight closure`` when the closure row does not hold there. A pointer for the reviewer,
    not a proof: a different point of least infeasibility may name another set;
    ``sizing solve`` on the sample's file gives the full diagnosis with relaxations."""
    try:
        g = _rows(prob, x, p)
    except Exception:  # noqa: BLE001 - a point the model cannot evaluate names nothing
        return []
    names = []
    for (rid, what), v in zip(prob.rows, g):
        bad = (abs(v) > tol) if what == "closure" else (v < -tol)
        name = rid or "weight closure"          # the closure and the useful-load rows
        if (bad or not math.isfinite(v)) and name not in names:
            names.append(name)
    return names


def _rows_ok(prob, vals, tol_closure=1e-6, tol=None) -> np.ndarray:
    """The acceptance rule of Problem.verify on constraint rows (scalars or arrays)."""
    tol = VERIFY_TOL if tol is None else tol
    ok = True
    for (_rid, what), v in zip(prob.rows, vals):
        v = np.asarray(v, dtype=float)
        ok = ok & np.isfinite(v) & ((np.abs(v) <= tol_closure) if what == "closure" else (v >= -tol))
    return np.asarray(ok, dtype=bool)


def _solve_point(ctx, p, warm):
    """(code, x, warm data or None, iterations, checked in numpy) for one point.

    One step from the neighbour (Newton on its active set, :class:`~sizing.problem.
    continuation.Continuation`, else IPOPT warm-started), accepted when every
    constraint row holds (CasADi rows; the plain-numpy check follows for the whole
    chunk, :func:`_verify_chunk`). Otherwise every starting point of a single solve
    (Problem.solve_raw, verified in numpy): a point called infeasible is one
    ``sizing solve`` calls infeasible too. IPOPT's warm step is skipped when the
    coarse W/S scan (Problem.start_point) finds no design: the single solve starts
    from that scan. With ``confirm_infeasible=False``: infeasible when the step fails
    and that scan finds no design.
    """
    prob, iters, x = ctx.prob, 0, None
    if warm is not None:
        # Newton on the neighbour's active set first (a few steps when the same requirements
        # stay active or a few swap), then IPOPT from the neighbour, but only while the
        # coarse W/S scan finds a design: else the single solve below decides from that scan
        step = ctx.continuation.step(*warm[:3], p)
        if step is not None and _rows_ok(prob, step[4]):
            return 0, step[0], step[:3] + (step[4],), step[3], False
        guess = prob.start_point(p)
        if prob.scan_found_design:
            solver = ctx.warm_solver
            sol = solver(x0=warm[0], p=p, lbx=prob.lbx, ubx=prob.ubx, lbg=prob.lbg, ubg=prob.ubg,
                         lam_g0=warm[1], lam_x0=warm[2])
            st = solver.stats()
            iters, x = st.get("iter_count", 0) or 0, np.array(sol["x"]).ravel()
            if st.get("return_status") in _SUCCESS and _rows_ok(prob, _rows(prob, x, p)):
                return 0, x, (x, np.array(sol["lam_g"]).ravel(), np.array(sol["lam_x"]).ravel()), iters, False
        if not ctx.confirm and not _rows_ok(prob, _rows(prob, guess, p), 1e-3, 1e-3):
            return 1, (guess if x is None else x), None, iters, True
    x, lg, lx, st, ok = prob.solve_raw(p)
    iters += st.get("iter_count", 0) or 0
    if ok:
        return 0, x, (x, lg, lx), iters, True
    return (1 if st.get("return_status") in _INFEASIBLE_RETURNS else 2), x, None, iters, True


def _verify_chunk(ctx, X, P):
    """Plain-numpy re-evaluation of every constraint at many answers at once: the
    solver's own expressions (Problem.expressions) on arrays, or point by point
    with Problem.verify where a model takes only scalars."""
    prob = ctx.prob
    try:
        values = {path: float(ctx.p0[i]) for i, path in enumerate(prob.paths)}
        values.update({prob.paths[i]: P[:, j].copy() for j, i in enumerate(ctx.index)})
        V = {rid: X[:, 3 + i] * prob.V_scale for i, rid in enumerate(prob.free)}
        with np.errstate(all="ignore"):
            _r, vals, *_ = prob.expressions(M.substitute(prob.tree0, values), X[:, 0] * prob.WS_scale,
                                            X[:, 1] * prob.Y_scale, X[:, 2] * prob.m_ref, V)
        return np.broadcast_to(_rows_ok(prob, vals), (X.shape[0],)).copy()
    except Exception:  # noqa: BLE001 - a model that takes only scalars: one by one
        return np.array([prob.verify(X[i], ctx.params(P[i])) for i in range(X.shape[0])], dtype=bool)


def _run_chunk(job, chunk):
    """Solve one chunk (id, point indices, normalised coordinates, SI values), each
    point warm-started from the nearest one of the chunk already solved (the
    first from the base point); a dict of arrays."""
    cid, idx, Z, P = chunk
    ctx = _context(job)
    prob, n, t0 = ctx.prob, len(idx), time.perf_counter()
    code = np.full(n, 2, dtype=np.int8)
    X = np.full((n, len(prob.lbx)), np.nan)
    checked = np.zeros(n, dtype=bool)
    iters = np.zeros(n, dtype=np.int64)
    done, warms, rows = [], [], [None] * n        # rows: the constraint rows where a step gave them
    for i in range(n):
        warm = warms[int(np.argmin(np.sum((Z[done] - Z[i]) ** 2, axis=1)))] if done else ctx.base_warm
        try:
            code[i], x, w, iters[i], checked[i] = _solve_point(ctx, ctx.params(P[i]), warm)
        except Exception:  # noqa: BLE001 - one bad point never stops a study
            code[i], checked[i] = 2, True
        if code[i] == 1 and x is not None:
            X[i] = x                    # where the infeasible solve ended: names the conflict
        if code[i] == 0:
            X[i] = x
            done.append(i)
            warms.append(w)
            rows[i] = w[3] if len(w) > 3 else None
    # the numpy check of what the warm step accepted; a point that fails it is solved
    # again from scratch (Problem.solve_raw checks in numpy itself)
    todo = np.flatnonzero((code == 0) & ~checked)
    for i in todo[~_verify_chunk(ctx, X[todo], P[todo])] if todo.size else ():
        x, _lg, _lx, st, ok = prob.solve_raw(ctx.params(P[i]))
        iters[i] += st.get("iter_count", 0) or 0
        code[i] = 0 if ok else (1 if st.get("return_status") in _INFEASIBLE_RETURNS else 2)
        X[i] = x if ok or code[i] == 1 else np.nan
        rows[i] = None
    out = np.full((n, 5), np.nan)
    drivers, conflicting = [""] * n, [""] * n
    for i in np.flatnonzero((code == 1) & np.all(np.isfinite(X), axis=1)):
        conflicting[i] = ";".join(_conflicting(prob, X[i], ctx.params(P[i])))
    for i in np.flatnonzero(code == 0):
        W_S, Y, m = X[i, 0] * prob.WS_scale, X[i, 1] * prob.Y_scale, X[i, 2] * prob.m_ref
        with np.errstate(all="ignore"):
            rm = runaway_margin(prob, prob.tree_of(ctx.params(P[i])), W_S, Y, m)
        out[i] = (W_S, Y, m, m * G0 / W_S, rm)
        drivers[i] = ";".join(_drivers(ctx, X[i], ctx.params(P[i]), rows[i]))
    return {"chunk": cid, "idx": np.asarray(idx), "code": code, "out": out, "drivers": drivers,
            "conflicting": conflicting,
            "iterations": iters, "fallbacks": int(checked.sum()), "seconds": time.perf_counter() - t0}


# --------------------------------------------------------------------------
# Ordering, chunks, executors
# --------------------------------------------------------------------------

def chunk_size(n: int) -> int:
    """Points per chunk: depends on the study size only (so every executor agrees)."""
    return int(max(16, min(200, math.ceil(n / 32))))


def _chunks(study, n):
    """Chunks of points along an order in which neighbours are close: a serpentine
    over a sweep's grid, a Morton (Z-order) curve through the samples."""
    si = study.si_values[:n]
    span = np.ptp(si, axis=0)
    Z = (si - si.min(axis=0)) / np.where(span > 0, span, 1.0)
    if study.mode == "sweep":
        r = [np.unique(si[:, d], return_inverse=True)[1] for d in range(si.shape[1])]    # value ranks
        order = (np.argsort(r[0], kind="stable") if len(r) == 1 else
                 np.lexsort((np.where(r[0] % 2 == 0, r[1], r[1].max() - r[1]), r[0])))
    else:
        q = np.minimum((Z * 1023).astype(np.int64), 1023)
        k = min(q.shape[1], 6)
        code = sum(((q[:, d] >> b) & 1) << (b * k + d) for b in range(10) for d in range(k))
        order = np.argsort(code, kind="stable")
    size = chunk_size(n)
    return [(c, order[s:s + size], Z[order[s:s + size]], study.si_values[order[s:s + size]])
            for c, s in enumerate(range(0, n, size))]


def _job(study, confirm=True):
    """What a worker needs (picklable: raw data, never a built Problem)."""
    index = [v.index for v in study.varied]
    key = hashlib.sha256(repr((study.base.data, study.base.path, index, confirm)).encode()).hexdigest()
    return {"key": key, "data": study.base.data, "filename": study.base.path, "index": index,
            "confirm": bool(confirm)}


def _run_serial(job, chunks):
    return (_run_chunk(job, ch) for ch in chunks)


def _mp_context():
    import multiprocessing as mp
    import threading

    # fork is fastest (the workers inherit the imported modules); with other threads
    # running (a Dask client, say) forking is unsafe, so spawn clean interpreters
    if "fork" in mp.get_all_start_methods() and threading.active_count() == 1:
        return mp.get_context("fork")
    return mp.get_context("spawn")


def _start_worker(job, parent_pid):
    """Worker start: signals left to the parent, death with the parent, the problem built once."""
    stop.worker_signals(parent_pid)
    _context(job)


def _run_pool(job, chunks, workers):
    import multiprocessing as mp
    from concurrent.futures import ProcessPoolExecutor, as_completed

    # each worker builds its problem once, at start (the job is small: raw data, no Problem)
    before = set(mp.active_children())
    ex = ProcessPoolExecutor(workers, mp_context=_mp_context(), initializer=_start_worker,
                             initargs=(job, os.getpid()))
    finished = False
    try:
        yield from (f.result() for f in as_completed([ex.submit(_run_chunk, job, ch) for ch in chunks]))
        finished = True
    finally:
        if not finished:
            # interrupted (or a chunk raised): end the workers now rather than after their
            # queued chunks; they ignore Ctrl-C and die at once on SIGTERM
            ours = [p for p in mp.active_children() if p not in before]
            for p in ours:
                p.terminate()
            for p in ours:
                p.join(2.0)
                if p.is_alive():
                    p.kill()
        ex.shutdown(wait=True, cancel_futures=not finished)


def _run_dask(job, chunks, address):
    try:
        from dask.distributed import Client, as_completed
    except ImportError as e:
        raise SizingError("--dask needs dask.distributed: install the [dask] extra (pip install 'sizing[dask]')") from e
    own = not hasattr(address, "submit")
    try:
        client = Client(address, timeout=10) if own else address
    except (OSError, TimeoutError) as e:
        raise SizingError(f"cannot reach the Dask scheduler at {address}: {e}") from e
    try:
        job_f = client.scatter(job, broadcast=True)
        yield from (f.result() for f in as_completed([client.submit(_run_chunk, job_f, ch, pure=False)
                                                      for ch in chunks]))
    finally:
        if own:
            client.close()


# --------------------------------------------------------------------------
# Results
# --------------------------------------------------------------------------

@dataclass
class StudyResult:
    """A finished study: the table (pandas, one row per point in the study's order)
    and what the outputs need; ``base`` is the full solve at the base point."""

    study: Study
    table: object
    base: object = None
    executor: str = "serial"
    workers: int = 1
    elapsed_s: float = 0.0
    iterations: int = 0
    points: int = 0
    fallbacks: int = 0            # points the warm step did not settle

    @property
    def feasible_fraction(self) -> float:
        """Share of the points with a feasible design (for sampling: the probability)."""
        return float((self.table["status"] == STATUS_OK).mean()) if len(self.table) else float("nan")

    def percentiles(self, q=(5, 50, 95)) -> dict:
        """{q: takeoff mass [kg]} over the feasible points only (NaN without any)."""
        from .statistics import percentiles_feasible

        return percentiles_feasible(self.table["takeoff_mass_kg"], self.table["status"], q)

    def percentiles_all(self, q=(5, 50, 95)) -> dict:
        """{q: takeoff mass [kg] or None} over every point with a verdict, infeasible points
        ranked above every feasible mass (None: not reached; :mod:`sizing.studies.statistics`)."""
        from .statistics import percentiles_all

        return percentiles_all(self.table["takeoff_mass_kg"], self.table["status"], q)

    def influence(self) -> list:
        """[(parameter path, Spearman rho)] of the varied inputs on takeoff mass, strongest first."""
        from .statistics import rank_influence

        t = self.table
        return rank_influence({v.path: t[v.path] for v in self.study.varied}, t["takeoff_mass_kg"], t["status"])

    def near_runaway(self):
        """Boolean Series: designs whose runaway margin is below :data:`RUNAWAY_WARN`."""
        t = self.table
        return (t["status"] == "optimal") & (t["runaway_margin"] < RUNAWAY_WARN)

    def csv_text(self) -> str:
        """results.csv: ``#`` comment lines (title, how to read it, the caution), then one row per
        point. Every numeric column names its unit: a varied path as ``<path> [<unit as written>]``
        (``[-]`` for a plain number), the design as ``wing_loading_Pa``, ``thrust_to_weight`` [-] or
        ``power_to_weight_W_per_N``, ``takeoff_mass_kg``, ``wing_area_m2``, ``runaway_margin`` [-]
        (1 - d(m_empty + m_fuel)/d m_TO at the point: the closure diverges at 0); an empty cell where no
        number exists (an infeasible point has no design). Read with ``pandas.read_csv(path,
        comment="#")``."""
        import numpy as np

        from ..common.caution import CAUTION

        t = self.table.rename(columns={v.path: f"{v.path} [{v.unit or '-'}]" for v in self.study.varied})
        t = t.replace([np.inf, -np.inf], np.nan)
        head = (f"# {self.study.title}: one row per point; varied values in the unit written in the study "
                "file; design point SI; empty: no number (an infeasible point has no design); drivers: "
                "active requirements, conflicting: the requirements in conflict where an infeasible solve "
                f"ended; runaway_margin: 1 - d(m_empty + m_fuel)/d m_TO, below {RUNAWAY_WARN:g} near weight "
                f"runaway\n# {CAUTION}\n")
        return head + t.to_csv(index=False, float_format="%.10g", lineterminator="\n")

    def write(self, output_dir) -> list:
        """Write results.csv, study.json and the plots into output_dir; the paths."""
        from .plots import write_outputs

        return write_outputs(self, output_dir)


def run_study(source, workers=None, dask=None, limit=None, progress=None, costs=True, base_dir=None,
              confirm_infeasible=True) -> StudyResult:
    """Run a study (file path, mapping or :class:`Study`); returns a :class:`StudyResult`.

    workers: local processes (default all cores; 1 runs in this process);
    dask: a scheduler address or a ``dask.distributed.Client``; limit: only the
    first N points; progress: show a bar (default: when stderr is a terminal);
    costs: also solve the base point fully for the requirement costs;
    confirm_infeasible: a point is called infeasible only after every starting
    point of a single solve failed (default); False calls it infeasible when
    the warm start from the neighbour's answer fails and the single solve's
    coarse W/S scan finds no design either (much faster where many points are
    infeasible; a heuristic that can miss a feasible window narrower than the
    scan's spacing: compare with the default before relying on it).
    """
    import pandas as pd

    from .plots import Progress

    study = source if isinstance(source, Study) else load_study(source, base_dir)
    for name, v in (("limit", limit), ("workers", workers)):
        if v is not None and not int(v) >= 1:
            raise InputError(f"--{name} must be at least 1, got {v}", study.file)
    n = study.size if limit is None else min(int(limit), study.size)
    job, chunks = _job(study, confirm_infeasible), _chunks(study, n)
    nw = 0 if dask is not None else min(int(workers or os.cpu_count() or 1), len(chunks)) or 1
    executor = "dask" if dask is not None else ("serial" if nw == 1 else "processes")
    bar = Progress(n, label="study", enabled=progress)
    code, out = np.full(n, 2, dtype=np.int8), np.full((n, 5), np.nan)
    drivers = np.array([""] * n, dtype=object)
    conflicting = np.array([""] * n, dtype=object)
    iters = fallbacks = 0
    # Ctrl-C or SIGTERM stop the study within a solve: Interrupted propagates, the
    # workers are ended, and no result (so no output) exists
    with stop.handling():
        t0 = time.perf_counter()
        results = (_run_dask(job, chunks, dask) if dask is not None else
                   _run_serial(job, chunks) if nw == 1 else _run_pool(job, chunks, nw))
        try:
            for r in results:
                code[r["idx"]], out[r["idx"]], drivers[r["idx"]] = r["code"], r["out"], r["drivers"]
                conflicting[r["idx"]] = r["conflicting"]
                iters, fallbacks = iters + int(r["iterations"].sum()), fallbacks + r["fallbacks"]
                bar.update(len(r["idx"]))
                stop.check()
        finally:
            results.close()
            bar.close()
        elapsed = time.perf_counter() - t0
    cols = {v.path: study.user_values[:n, j] for j, v in enumerate(study.varied)}
    y_col = "power_to_weight_W_per_N" if study.base.is_propeller else "thrust_to_weight"
    table = pd.DataFrame({**cols, "status": [_CODES[int(c)] for c in code],
                          "wing_loading_Pa": out[:, 0], y_col: out[:, 1], "takeoff_mass_kg": out[:, 2],
                          "wing_area_m2": out[:, 3], "runaway_margin": out[:, 4], "drivers": list(drivers),
                          "conflicting": list(conflicting)})
    base = None
    if costs:
        from ..problem import solve

        with stop.handling():
            try:
                base = solve(study.base)
            except SizingError:          # no costs plot then; the study itself stands
                base = None
    return StudyResult(study, table, base, executor, nw, elapsed, iters, n, fallbacks)

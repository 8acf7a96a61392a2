"""Benchmarks of the sizing solver and the trade-study runner (not timed tests).

    make bench            # or: .venv/bin/python bench/run.py

Measures, prints side by side and writes bench/RESULTS.md:

(a) one solve against a brute-force numpy grid on the same model at 0.1 %
    resolution in W/S and T/W (the spreadsheet way: every requirement's
    ``required_curve`` and the weight closure evaluated on the grid), time
    and error of each against a reference found by repeatedly zooming the
    grid around its best point;
(b) a 1,000-point two-parameter sweep, serial and on 2 local processes;
(c) a 10,000-sample Monte Carlo on 2 local processes;
and the problem build time, the per-solve time of a built 10-requirement
problem and the wall time of a cold ``sizing solve``; then (d) the speed
targets measured before and after in one run (``bench/paired.py``: an
earlier commit and this tree, alternating, so that both see the same load).

The machine is shared: the load average before and after is recorded with
the figures. Wall-clock times; medians where a measurement is repeated.

    .venv/bin/python bench/run.py [--before REF] [--quick]   # --quick: (d) only
"""
from __future__ import annotations

import copy
import datetime
import math
import os
import platform
import shutil
import signal
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sizing import constraints as C  # noqa: E402
from sizing import weights as Wt  # noqa: E402
from sizing.common.caution import CAUTION  # noqa: E402
from sizing.common.fileio import atomic_write  # noqa: E402
from sizing.inputs.spec import load, validate  # noqa: E402
from sizing.problem import Problem, build, solve  # noqa: E402
from sizing.problem import tree as M  # noqa: E402

TRAINER = ROOT / "requirements" / "trainer-jet.yaml"
MC_STUDY = ROOT / "studies" / "trainer-uncertainty.yaml"
STEP = 1.001            # 0.1 % grid resolution (geometric steps)
WORKERS = 2
REPEAT = 3              # the sweep is timed this many times: fastest and median reported
NOTES: list = []        # explanations added while measuring (misses and where the time goes)


def _now():
    return time.perf_counter()


def _load():
    return ", ".join(f"{x:.2f}" for x in os.getloadavg())


def ten_requirements():
    """The trainer example with four more requirements: a 10-requirement file."""
    spec = load(TRAINER)
    data = copy.deepcopy(spec.data)
    data["requirements"] += [
        {"id": "climb-sl", "kind": "climb", "climb_rate": "4000 ft/min", "weight_fraction": 0.95},
        {"id": "cruise-30k", "kind": "cruise", "mach": 0.7, "altitude": "30000 ft", "throttle": 0.9,
         "weight_fraction": 0.9},
        {"id": "break-turn", "kind": "instantaneous-turn", "load_factor": 6.0, "mach": 0.5,
         "altitude": "10000 ft", "weight_fraction": 0.85},
        {"id": "ps-10k", "kind": "excess-power", "excess_power": "60 m/s", "mach": 0.6,
         "altitude": "10000 ft", "weight_fraction": 0.85},
    ]
    return validate(data, "trainer-jet + 4 requirements")


# --------------------------------------------------------------------------
# (a) the spreadsheet way
# --------------------------------------------------------------------------

def _curves(tree, W):
    """Required Y per wing loading (max over requirements) and the W/S limit."""
    ac = M.aircraft(tree)
    seg = {}
    if "mission" in tree and "fraction" not in tree["aircraft"]["weights"].get("fuel", {}):
        for name, _f, be in Wt.mission_fractions(tree, ac, W):
            seg[name] = np.asarray(be) + 0 * W
    need = np.zeros_like(W)
    lim = np.full_like(W, np.inf)
    for _rid, r in tree["requirements"].items():
        wf = r.get("weight_fraction")
        beta = seg[wf["after"]] if isinstance(wf, dict) else None
        req = M.requirement(r, ac, beta)
        with np.errstate(all="ignore"):
            thrust, wsl, _v = C.required_curve(req, ac, W)
        if thrust is not None:
            need = np.maximum(need, np.where(np.isfinite(thrust), thrust, np.inf))
        if wsl is not None:
            lim = np.minimum(lim, wsl)
    return need, lim


def _closure(tree, W, Y, propeller):
    """Closed takeoff mass on arrays (fixed point), inf where it does not close."""
    ac = M.aircraft(tree)
    w = tree["aircraft"]["weights"]
    fixed = w.get("crew", 0.0) + w.get("payload", 0.0)
    with np.errstate(all="ignore"):
        f_fuel = np.asarray(Wt.fuel_fraction(tree, ac, W)) + 0 * W
        m = np.full(np.broadcast(W, Y).shape, 3.0 * fixed)
        for _ in range(200):
            f_e = np.asarray(Wt.empty_fraction(w, tree["aircraft"], m, W, Y, propeller)) + 0 * m
            den = 1.0 - f_fuel - f_e
            m_new = np.where(den > 0.01, fixed / den, np.inf)
            done = np.allclose(m_new, m, rtol=1e-14, atol=0, equal_nan=True)
            m = np.where(np.isfinite(m_new), m_new, 3.0 * fixed)
            if done:
                break
        return np.where(den > 0.01, m_new, np.inf)


def grid_best(tree, W, Y, propeller, block=200):
    """Lightest closed design on the grid W x Y that meets every requirement."""
    need, lim = _curves(tree, W)
    best = (np.inf, None, None)
    for a in range(0, W.size, block):
        Wb = W[a:a + block, None]
        ok = (Y[None, :] >= need[a:a + block, None]) & (Wb <= lim[a:a + block, None])
        if not ok.any():
            continue
        m = _closure(tree, Wb, Y[None, :], propeller)
        m = np.where(ok, m, np.inf)
        k = int(np.argmin(m))
        i, j = divmod(k, Y.size)
        if m[i, j] < best[0]:
            best = (float(m[i, j]), a + i, j)
    return best


def reference(tree, W, Y, i, j, propeller, n=201, rtol=1e-13):
    """The optimum of the same model to ~1e-12: the brute force zoomed around its best node.

    Each round grids a window of n x n nodes; when the best node lies on the
    window's edge the window moves there at the same size, otherwise it
    shrinks to +/- 5 nodes around the best one.
    """
    lo_w, hi_w = W[max(i - 20, 0)], W[min(i + 20, W.size - 1)]
    lo_y, hi_y = Y[max(j - 20, 0)], Y[min(j + 20, Y.size - 1)]
    best = (np.inf, None, None)
    for _ in range(60):
        Wz, Yz = np.linspace(lo_w, hi_w, n), np.linspace(lo_y, hi_y, n)
        m, a, b = grid_best(tree, Wz, Yz, propeller)
        if a is None:
            break
        best = (m, Wz[a], Yz[b])
        dw, dy = Wz[1] - Wz[0], Yz[1] - Yz[0]
        edge = a in (0, n - 1) or b in (0, n - 1)
        half_w, half_y = ((hi_w - lo_w) / 2, (hi_y - lo_y) / 2) if edge else (5 * dw, 5 * dy)
        lo_w, hi_w = Wz[a] - half_w, Wz[a] + half_w
        lo_y, hi_y = max(Yz[b] - half_y, 0.0), Yz[b] + half_y
        if not edge and dw / Wz[a] < rtol and dy / Yz[b] < rtol:
            break
    return best


def bench_grid(spec):
    prob = Problem(spec)
    tree = M.spec_tree(spec)
    lo_w, hi_w = prob.WS_bounds
    lo_y, hi_y = max(prob.Y_bounds[0], prob.Y_bounds[1] / 200.0), prob.Y_bounds[1]
    W = lo_w * STEP ** np.arange(int(math.log(hi_w / lo_w) / math.log(STEP)) + 1)
    Y = lo_y * STEP ** np.arange(int(math.log(hi_y / lo_y) / math.log(STEP)) + 1)
    t = _now()
    m_grid, i, j = grid_best(tree, W, Y, prob.propeller)
    t_grid = _now() - t
    m_ref, W_ref, Y_ref = reference(tree, W, Y, i, j, prob.propeller)
    # the solver, end to end from the validated file: build, solve, numpy check
    t = _now()
    prob2 = Problem(spec)
    x, _lg, _lx, _st, ok = prob2.solve_raw(prob2.parameters(spec))
    t_solver = _now() - t
    assert ok
    t = _now()
    res = solve(spec)
    t_full = _now() - t
    m_s, W_s, Y_s = x[2] * prob2.m_ref, x[0] * prob2.WS_scale, x[1] * prob2.Y_scale
    return {
        "file": spec.path, "grid_points": W.size * Y.size, "grid_shape": (W.size, Y.size),
        "box": (lo_w, hi_w, lo_y, hi_y),
        "t_grid": t_grid, "t_solver": t_solver, "t_full": t_full,
        "err_grid": abs(m_grid - m_ref) / m_ref, "err_solver": abs(m_s - m_ref) / m_ref,
        "err_grid_ws": abs(W[i] - W_ref) / W_ref, "err_solver_ws": abs(W_s - W_ref) / W_ref,
        "err_grid_y": abs(Y[j] - Y_ref) / Y_ref, "err_solver_y": abs(Y_s - Y_ref) / Y_ref,
        "m_ref": m_ref, "m_grid": m_grid, "m_solver": m_s, "m_full": res.design.takeoff_mass,
    }


# --------------------------------------------------------------------------
# build, per-solve, cold start
# --------------------------------------------------------------------------

def bench_solve(spec):
    from sizing.studies import runner as S

    builds = []
    for _ in range(5):
        t = _now()
        prob = Problem(spec)
        builds.append(_now() - t)
    p0 = prob.parameters(spec)
    cold = []
    for _ in range(30):
        prob._last_scan = None        # a new point's scan each time, not the remembered one
        t = _now()
        x, lg, lx, st, ok = prob.solve_raw(p0)
        cold.append(_now() - t)
    # the study's step: warm start from the neighbour, CasADi row check, numpy check
    j = prob.paths.index(("requirements", "turn-4g", "load_factor"))
    ctx = S._Context({"key": "bench", "data": spec.data, "filename": spec.path, "index": [j]})
    warm, iters = ctx.base_warm, []
    values = np.linspace(3.5, 4.5, 201)
    t = _now()
    for v in values:
        p = ctx.p0.copy()
        p[j] = v
        code, x, w, it, _checked = S._solve_point(ctx, p, warm)
        warm = w if w is not None else warm
        iters.append(it)
    t_warm = (_now() - t) / values.size
    t = _now()
    ok = S._verify_chunk(ctx, np.tile(x, (values.size, 1)), values[:, None])
    t_verify = (_now() - t) / values.size
    packaged = []
    for _ in range(5):
        prob._last_scan = None
        t = _now()
        prob.solve(p0, sensitivities=False, spec=spec)
        packaged.append(_now() - t)
    full = []
    for _ in range(3):
        prob._last_scan = None
        build(spec)._last_scan = None
        t = _now()
        solve(spec)
        full.append(_now() - t)
    t = _now()
    for _ in range(10):
        prob.start_point(np.array(p0) * (1 + 1e-12 * _))      # a new point each time (the scan is remembered)
    t_guess = (_now() - t) / 10
    return {"requirements": len(spec.requirements), "build": statistics.median(builds), "guess": t_guess,
            "cold": statistics.median(cold), "warm": t_warm, "warm_iters": float(np.mean(iters)),
            "verify": t_verify, "packaged": statistics.median(packaged), "full": statistics.median(full),
            "verified": bool(np.all(ok))}


def bench_cold_cli(runs=5):
    exe = Path(sys.executable).with_name("sizing")
    times = []
    # the on-disk cache in a folder of its own, filled by a first run (not timed): the file seen before
    cache_dir = tempfile.mkdtemp(prefix="sizing-bench-cache-")
    env = {**os.environ, "SIZING_CACHE": "1", "SIZING_CACHE_DIR": cache_dir}
    subprocess.run([str(exe), "solve", str(TRAINER)], capture_output=True, cwd=ROOT, env=env, check=True)
    for _ in range(runs):
        t = _now()
        r = subprocess.run([str(exe), "solve", str(TRAINER)], capture_output=True, text=True, cwd=ROOT, env=env)
        times.append(_now() - t)
        assert r.returncode == 0, r.stderr
    shutil.rmtree(cache_dir, ignore_errors=True)
    t = _now()
    subprocess.run([sys.executable, "-c", "import sizing.cli"], check=True)
    t_import = _now() - t
    return {"median": statistics.median(times), "min": min(times), "runs": runs, "import_cli": t_import}


# --------------------------------------------------------------------------
# (b) sweep, (c) Monte Carlo
# --------------------------------------------------------------------------

def _burn(n):
    s = 0
    for i in range(n):
        s += i * i
    return s


def parallel_capacity(n=4_000_000):
    """Speed-up of a pure-Python CPU burn on WORKERS processes right now: how many
    free cores the machine had (2.0 on two idle cores)."""
    from concurrent.futures import ProcessPoolExecutor

    t = _now()
    for _ in range(2 * WORKERS):
        _burn(n)
    serial = _now() - t
    with ProcessPoolExecutor(WORKERS) as ex:
        list(ex.map(_burn, [n]))
        t = _now()
        list(ex.map(_burn, [n] * (2 * WORKERS)))
        return serial / (_now() - t)


def bench_sweep():
    from sizing.studies.runner import run_study

    study = {"base": str(TRAINER), "title": "1,000-point sweep",
             "sweep": {"requirements.turn-4g.load_factor": {"from": 3.0, "to": 5.0, "steps": 40},
                       "requirements.field.ground_roll": {"from": "550 m", "to": "950 m", "steps": 25}}}
    out = {"capacity_before": parallel_capacity()}
    for label, workers in (("serial", 1), (f"{WORKERS} processes", WORKERS)):
        runs = []
        for _ in range(REPEAT):
            t, c = _now(), os.times()
            r = run_study(study, workers=workers, costs=False, progress=False)
            c2 = os.times()
            cpu = sum(getattr(c2, k) - getattr(c, k) for k in ("user", "system", "children_user", "children_system"))
            runs.append({"wall": _now() - t, "solve": r.elapsed_s, "points": r.points, "cpu": cpu,
                         "feasible": int((r.table["status"] == "optimal").sum()),
                         "iters": r.iterations / r.points, "fallbacks": r.fallbacks, "table": r.table})
        best = min(runs, key=lambda v: v["wall"])
        best["wall_median"] = statistics.median(v["wall"] for v in runs)
        out[label] = best
    out["capacity_after"] = parallel_capacity()
    ser, par = out["serial"], out[f"{WORKERS} processes"]
    out["identical"] = bool(ser["table"].equals(par["table"]))
    NOTES.append(f"- (b) Fastest of {REPEAT} runs each (medians: serial {_ms(ser['wall_median'])}, parallel "
                 f"{_ms(par['wall_median'])}). Parallel speed-up {ser['solve'] / par['solve']:.2f}x on {WORKERS} "
                 f"processes (solving "
                 f"time {_ms(ser['solve'])} serial, {_ms(par['solve'])} parallel, CPU time of the parallel run "
                 f"including its workers {_ms(par['cpu'])}, that is {100 * par['cpu'] / (WORKERS * par['wall']):.0f} % "
                 f"of {WORKERS} cores over its wall time). A pure-Python CPU burn on {WORKERS} processes, timed just "
                 f"before and after, ran {out['capacity_before']:.2f}x and {out['capacity_after']:.2f}x as fast as "
                 f"serially ({WORKERS:.1f}x means {WORKERS} free cores): where that is near 1, other work held a "
                 f"core and the study's workers could not run side by side either. The 1,000 warm-started solves take {_ms(ser['solve'] / ser['points'])} "
                 f"each serially.")
    return out


def bench_mc(count=10_000):
    import yaml

    from sizing.studies.runner import run_study

    data = yaml.safe_load(MC_STUDY.read_text())
    data["sample"]["count"] = count
    out = {}
    for label, confirm in (("confirmed infeasible", True), ("quick infeasible", False)):
        t = _now()
        r = run_study(data, workers=WORKERS, costs=False, progress=False, base_dir=MC_STUDY.parent,
                      confirm_infeasible=confirm)
        wall = _now() - t
        pc = r.percentiles()
        out[label] = {"wall": wall, "solve": r.elapsed_s, "points": r.points, "feasible": r.feasible_fraction,
                      "p5": pc[5], "p50": pc[50], "p95": pc[95], "iters": r.iterations / r.points,
                      "fallbacks": r.fallbacks, "status": r.table["status"].to_numpy()}
    a, b = (v["status"] for v in out.values())
    out["status_mismatches"] = int((a != b).sum())
    conf, quick = out["confirmed infeasible"], out["quick infeasible"]
    n_inf = int((a != "optimal").sum())
    if n_inf:
        per = (conf["solve"] - quick["solve"]) * WORKERS / n_inf
        verdict = ("keeps the default within" if conf["wall"] <= 30.0 else "is why the default misses")
        NOTES.append(
            f"- (c) {n_inf:,} of the {count:,} samples ({100 * n_inf / count:.1f} %) have no feasible design. By "
            f"default a point is called infeasible only by a single solve (`Problem.solve_raw`): IPOPT's "
            f"infeasibility certificate from the best point of the starting W/S scan, with a finer scan over "
            f"the whole W/S range finding no closed design either (otherwise every other starting point is "
            f"tried), so that a study's verdicts are those of `sizing solve`. That costs about {_ms(per)} of "
            f"CPU per infeasible point, {_ms(conf['solve'] - quick['solve'])} of the {_ms(conf['solve'])} here, "
            f"and {verdict} the 30 s target. With `confirm_infeasible=False` a point is called infeasible when "
            f"the step from its neighbour fails and the coarse W/S scan (`Problem.start_point`) finds "
            f"no closed design: {_ms(quick['wall'])}, with {out['status_mismatches']} points classed "
            f"differently in this run.")
    return out


# --------------------------------------------------------------------------
# report
# --------------------------------------------------------------------------

def _ms(x):
    if x < 1e-3:
        return f"{1e6 * x:,.0f} us"
    return f"{1000 * x:,.1f} ms" if x < 1 else f"{x:,.2f} s"


def _mark(ok):
    return "met" if ok else "**missed**"


def bench_make_test(runs=(("CI unset, installing .venv first", {}), ("CI=true", {"CI": "true"}))):
    """`make test` twice in a fresh clone of this repository: the first run creates its .venv
    (as a newcomer's does), the second reuses it."""
    import shutil
    import tempfile

    out = []
    with tempfile.TemporaryDirectory(prefix="sizing-clone-") as tmp:
        clone = Path(tmp) / "clone"
        subprocess.run(["git", "clone", "-q", str(ROOT), str(clone)], check=True)
        env0 = {k: v for k, v in os.environ.items() if k not in ("CI", "VIRTUAL_ENV", "PYTHONPATH")}
        for label, extra in runs:
            load = _load()
            t = _now()
            # Ctrl-C as in a terminal: a bench started in the background ignores SIGINT, and its
            # children would inherit that (the what-if page's server is stopped with it)
            r = subprocess.run(["make", "test"], cwd=clone, capture_output=True, text=True, env={**env0, **extra},
                               preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
            tail = [ln for ln in r.stdout.splitlines() if " passed" in ln or " failed" in ln][-1:]
            bad = [ln.split(" - ")[0] for ln in r.stdout.splitlines() if ln.startswith(("FAILED", "ERROR"))]
            if r.returncode:
                (ROOT / "out").mkdir(exist_ok=True)
                (ROOT / "out" / f"make-test-{len(out)}.log").write_text(r.stdout + r.stderr)
            out.append({"label": label, "wall": _now() - t, "ok": r.returncode == 0,
                        "summary": "".join(tail) + (f" ({'; '.join(bad)})" if bad else ""),
                        "load_before": load, "load_after": _load()})
        shutil.rmtree(clone / ".venv", ignore_errors=True)
    return out


def main():
    import argparse

    import casadi
    import paired

    ap = argparse.ArgumentParser(description="sizing benchmarks")
    ap.add_argument("--before", default=paired.BEFORE, help="the commit to compare with (d)")
    ap.add_argument("--quick", action="store_true", help="only (d), the before/after pairs")
    ap.add_argument("--make-test", action="store_true", help="also time `make test` in a fresh clone (minutes)")
    args = ap.parse_args()
    print("sizing benchmarks (wall clock; the machine is shared, load average recorded)")
    load0 = _load()
    t0 = _now()
    if args.quick:
        pair = paired.compare(args.before, log=print)
        for _n, label, b, a, ratio, target in paired.summary_rows(pair):
            print(f"{label}: before {_ms(b)}, after {_ms(a)}, {ratio:.1f}x  (target {target})")
        return
    spec10 = ten_requirements()
    trainer = load(TRAINER)

    print("\n(a) one solve against the brute-force grid (0.1 % steps in W/S and T/W)")
    grids = [bench_grid(trainer), bench_grid(spec10)]
    for g in grids:
        print(f"  {g['file']}: grid {g['grid_shape'][0]} x {g['grid_shape'][1]} = {g['grid_points']:,} points")
        print(f"    {'':22}{'grid':>14}{'solver':>14}")
        print(f"    {'time':22}{_ms(g['t_grid']):>14}{_ms(g['t_solver']):>14}   (solver: build + solve + numpy "
              f"check; full solve() with costs and texts {_ms(g['t_full'])})")
        print(f"    {'takeoff-mass error':22}{g['err_grid']:>14.2e}{g['err_solver']:>14.2e}")
        print(f"    {'W/S error':22}{g['err_grid_ws']:>14.2e}{g['err_solver_ws']:>14.2e}")
        print(f"    {'T/W error':22}{g['err_grid_y']:>14.2e}{g['err_solver_y']:>14.2e}")

    print("\nbuild and per-solve time")
    solves = [bench_solve(trainer), bench_solve(spec10)]
    for s in solves:
        print(f"  {s['requirements']} requirements: build {_ms(s['build'])}, cold solve_raw {_ms(s['cold'])}, "
              f"study warm step {_ms(s['warm'])} ({s['warm_iters']:.1f} IPOPT iterations) + numpy check "
              f"{_ms(s['verify'])}, Problem.solve packaged {_ms(s['packaged'])}, sizing.solve.solve "
              f"{_ms(s['full'])}")
    cli = bench_cold_cli()
    s10 = solves[-1]
    NOTES.append(
        f"- Per-solve time: the study's step (Newton on the neighbour's active set, "
        f"{s10['warm_iters']:.1f} Newton or IPOPT iterations on average, constraint rows checked, numpy check "
        f"batched per chunk) takes {_ms(s10['warm'] + s10['verify'])} for {s10['requirements']} requirements. A "
        f"solve from scratch (`Problem.solve_raw` without a start) takes {_ms(s10['cold'])}, of which "
        f"{_ms(s10['guess'])} is the numpy W/S scan for the starting point (`Problem.start_point`). "
        f"`sizing.solve.solve` ({_ms(s10['full'])}) adds the result packaging: the margins in the requirements' "
        f"own terms (a staged search per requirement, `sizing/problem/capability.py`), the costs and texts.")
    NOTES.append(
        "- (a) The solver runs IPOPT with `bound_relax_factor` 0, so active requirement rows end on their "
        "boundary rather than 1e-8 past it; its remaining error is IPOPT's tolerance (1e-10).")
    print(f"  cold `sizing solve`: median {_ms(cli['median'])} (min {_ms(cli['min'])}, {cli['runs']} runs); "
          f"`import sizing.cli` alone {_ms(cli['import_cli'])}")

    print("\n(b) 1,000-point sweep")
    sw = bench_sweep()
    rows = [(k, v) for k, v in sw.items() if isinstance(v, dict)]
    print(f"    {'':16}" + "".join(f"{k:>16}" for k, _ in rows))
    print(f"    {'wall':16}" + "".join(f"{_ms(v['wall']):>16}" for _, v in rows))
    print(f"    {'solving':16}" + "".join(f"{_ms(v['solve']):>16}" for _, v in rows))
    print(f"    {'per point':16}" + "".join(f"{_ms(v['solve'] / v['points']):>16}" for _, v in rows))
    print(f"    {'feasible':16}" + "".join(f"{v['feasible']:>16,}" for _, v in rows))
    print(f"    identical tables: {sw['identical']}; free-core probe (CPU burn speed-up on {WORKERS} processes) "
          f"{sw['capacity_before']:.2f}x before, {sw['capacity_after']:.2f}x after")

    print(f"\n(c) 10,000-sample Monte Carlo ({MC_STUDY.name}), {WORKERS} processes")
    mc = bench_mc()
    rows_mc = [(k, v) for k, v in mc.items() if isinstance(v, dict)]
    print(f"    {'':18}" + "".join(f"{k:>22}" for k, _ in rows_mc))
    print(f"    {'wall':18}" + "".join(f"{_ms(v['wall']):>22}" for _, v in rows_mc))
    print(f"    {'P(feasible)':18}" + "".join(f"{100 * v['feasible']:>21.2f}%" for _, v in rows_mc))
    print(f"    {'P5/P50/P95 kg':18}" + "".join(f"{v['p5']:>8,.0f}{v['p50']:>7,.0f}{v['p95']:>7,.0f}"
                                                for _, v in rows_mc))
    print(f"    {'not settled':18}" + "".join(f"{v['fallbacks']:>22,}" for _, v in rows_mc))
    print(f"    status mismatches between the two: {mc['status_mismatches']}")
    print(f"\n(d) before ({args.before}) and after (this tree), alternating, in fresh interpreters")
    pair = paired.compare(args.before, log=print)
    mt = []
    if args.make_test:
        print("\n(e) `make test` in a fresh clone")
        mt = bench_make_test()
        for m in mt:
            print(f"  {m['label']}: {_ms(m['wall'])}, {m['summary']} (load {m['load_before']})")
    load1 = _load()
    total = _now() - t0
    print(f"\nload average before {load0}, after {load1}; benchmarks took {total:.0f} s")

    write_results(grids, solves, cli, sw, mc, pair, mt, args.before, load0, load1, total, casadi.__version__)
    print(f"wrote {ROOT / 'bench' / 'RESULTS.md'}")
    print(CAUTION)


def _speed_targets(pair, mt, before):
    """The issue's speed targets: before, after and their ratio from one run (bench/paired.py)."""
    import paired

    rows = {name: (label, b, a, ratio, target) for name, label, b, a, ratio, target in paired.summary_rows(pair)}
    limit = {"solve10": 0.025, "raw10": 0.003, "build10": 0.020, "build10_cache": 0.020, "cli": 0.5,
             "cli_nocache": 0.5, "sweep": 0.4, "mc": 6.0}
    L = ["## Speed targets: before and after in one run", "",
         f"Each line is the median of the pairs `bench/paired.py` ran: commit `{before}` (before this round's "
         f"speed work) and this tree, each measurement in a fresh interpreter (a study's worker processes "
         f"started cold, as `sizing study` starts them), the two alternating so that both met the same load. "
         f"The ratio is before / after. The targets are for a quiet 2-core machine, and this one was "
         f"shared (load averages above): where the 'before' here is slower than the quiet-machine figure "
         f"the previous `bench/RESULTS.md` gave, the load slowed both sides. The column 'quiet estimate' "
         f"divides that earlier quiet figure by this run's ratio; it is an estimate, not a measurement, "
         f"and the verdict uses it only where it says so.", "",
         "| measure | before | after | before / after | quiet estimate | target | |",
         "|---|---|---|---|---|---|---|"]
    for name, (label, b, a, ratio, target) in rows.items():
        if name == "imports":
            continue
        quiet = paired.QUIET_BEFORE[name] / ratio
        ok_measured, ok_quiet = a <= limit[name], quiet <= limit[name]
        extra = ""
        if name in ("cli", "cli_nocache") and "imports" in rows:
            floor = rows["imports"][2]
            ok_measured = ok_measured and a <= 1.6 * floor
            ok_quiet = ok_quiet and a <= 1.6 * floor
            extra = f" ({a / floor:.1f}x the {_ms(floor)} of `import numpy, casadi`)"
        verdict = ("met" if ok_measured else "met by the quiet estimate only" if ok_quiet else "**missed**")
        L.append(f"| {label} | {_ms(b)} | {_ms(a)}{extra} | {ratio:.1f}x | {_ms(quiet)} | {target} | {verdict} |")
    for m in mt:
        L.append(f"| `make test`, fresh clone, {m['label']} | | {_ms(m['wall'])}: {m['summary'] or 'see log'} "
                 f"(load {m['load_before']} when it started) | | | 4 min or less, passes | "
                 f"{_mark(m['ok'] and m['wall'] <= 240)} |")
    if "mc" in rows:
        for side in ("before", "after"):
            f = pair.get("mc_feasible", {}).get(f"{side}_mc_feasible")
            p50 = pair.get("mc_p50", {}).get(f"{side}_mc_p50")
            if f is not None:
                L += ["", f"Monte Carlo {side}: P(feasible) {100 * f:.2f} %, median takeoff mass {p50:,.0f} kg."]
    return L


def write_results(grids, solves, cli, sw, mc, pair, mt, before, load0, load1, total, casadi_version):
    g10 = grids[-1]
    s10 = solves[-1]
    par = sw[f"{WORKERS} processes"]
    mcc, mcq = mc["confirmed infeasible"], mc["quick infeasible"]
    speed = [g["t_grid"] / g["t_solver"] for g in grids]
    acc = [g["err_grid"] / max(g["err_solver"], 1e-300) for g in grids]
    L = [
        "# Benchmark results",
        "",
        f"Written by `bench/run.py` (`make bench`) on {datetime.date.today().isoformat()}: "
        f"{os.cpu_count()} cores, Python {platform.python_version()}, CasADi {casadi_version}, "
        f"{platform.machine()}. Wall-clock times. The machine is shared with other work: load average "
        f"{load0} before and {load1} after (1, 5, 15 min); timings on a quiet machine are lower. "
        f"All figures below are what this run measured; rerun `make bench` to refresh them.",
        "",
        *_speed_targets(pair, mt, before),
        "",
        "## Accuracy and the earlier limits (this tree)",
        "",
        "| measure | measured | target | |",
        "|---|---|---|---|",
        f"| (a) solver vs 0.1 % grid, speed | {min(speed):,.0f}x to {max(speed):,.0f}x faster | at least 5x | "
        f"{_mark(min(speed) >= 5)} |",
        f"| (a) solver vs 0.1 % grid, takeoff-mass error | {min(acc):.1e}x to {max(acc):.1e}x smaller | at least "
        f"100x | {_mark(min(acc) >= 100)} |",
        f"| (b) 1,000-point sweep, {WORKERS} processes | {_ms(par['wall'])} | 3 s or less | "
        f"{_mark(par['wall'] <= 3)} |",
        f"| (c) 10,000-sample Monte Carlo, {WORKERS} processes (default: infeasible points confirmed) | "
        f"{_ms(mcc['wall'])} | 30 s or less | {_mark(mcc['wall'] <= 30)} |",
        f"| (c) the same, quick infeasibility verdict (`confirm_infeasible=False`) | {_ms(mcq['wall'])} | 30 s or "
        f"less | {_mark(mcq['wall'] <= 30)} |",
        f"| per-solve time, built problem, {s10['requirements']} requirements (study warm step incl. checks) | "
        f"{_ms(s10['warm'] + s10['verify'])} | 5 ms or less | {_mark(s10['warm'] + s10['verify'] <= 0.005)} |",
        f"| per-solve time, built problem, {s10['requirements']} requirements (`solve_raw` from scratch) | "
        f"{_ms(s10['cold'])} | 5 ms or less | {_mark(s10['cold'] <= 0.005)} |",
        f"| problem build, {s10['requirements']} requirements | {_ms(s10['build'])} | (recorded) | |",
        f"| cold `sizing solve requirements/trainer-jet.yaml` | {_ms(cli['median'])} (median of {cli['runs']}) | "
        f"under 1.5 s | {_mark(cli['median'] < 1.5)} |",
        "",
        "## (a) One solve against the brute-force grid",
        "",
        "The grid is the spreadsheet way on the same model: every requirement's `required_curve` "
        "(free speeds scanned and refined) on a geometric W/S grid with 0.1 % steps over the solver's "
        "whole search region, and the weight closure (fixed-point iteration) on every (W/S, T/W) node "
        "of a geometric T/W grid with 0.1 % steps from 1/200 of the upper bound to the upper bound; the "
        "lightest closed node that meets every requirement. The reference optimum is the same brute "
        "force zoomed around its best node until the node spacing is below 1e-13 of the values (201 x 201 "
        "nodes a round, the window moved when the best node lies on its edge, else shrunk to +/- 5 nodes). "
        "Solver time: build the CasADi problem, solve, numpy check (what a study pays once per process); "
        "`solve()` adds the requirement costs, margins and texts.",
        "",
        "| file | grid nodes | grid time | solver time | `solve()` | mass error grid | mass error solver "
        "| W/S error grid / solver | T/W error grid / solver |",
        "|---|---|---|---|---|---|---|---|---|",
    ]
    for g in grids:
        L.append(f"| {Path(g['file']).name} ({g['grid_shape'][0]} x {g['grid_shape'][1]}) | {g['grid_points']:,} "
                 f"| {_ms(g['t_grid'])} | {_ms(g['t_solver'])} | {_ms(g['t_full'])} | {g['err_grid']:.2e} | "
                 f"{g['err_solver']:.2e} | {g['err_grid_ws']:.1e} / {g['err_solver_ws']:.1e} | "
                 f"{g['err_grid_y']:.1e} / {g['err_solver_y']:.1e} |")
    L += ["", f"Takeoff mass: reference {g10['m_ref']:,.3f} kg, grid {g10['m_grid']:,.3f} kg, solver "
          f"{g10['m_solver']:,.3f} kg (10-requirement file). The grid's error is its step (amplified in mass "
          f"by the weight closure); the solver's is explained in the notes below.", "",
          "## Build and per-solve time", "",
          "| requirements | build | `solve_raw` from scratch | study step (Newton or IPOPT iterations) | numpy check "
          "per point (batched) | `Problem.solve` packaged, no sensitivities | `sizing.solve.solve` |",
          "|---|---|---|---|---|---|---|"]
    for s in solves:
        L.append(f"| {s['requirements']} | {_ms(s['build'])} | {_ms(s['cold'])} | {_ms(s['warm'])} "
                 f"({s['warm_iters']:.1f}) | {_ms(s['verify'])} | {_ms(s['packaged'])} | {_ms(s['full'])} |")
    L += ["", f"Cold `sizing solve requirements/trainer-jet.yaml`: median {_ms(cli['median'])}, fastest "
          f"{_ms(cli['min'])} over {cli['runs']} runs; `import sizing.cli` alone {_ms(cli['import_cli'])}.", "",
          "## (b) 1,000-point sweep", "",
          "`requirements.turn-4g.load_factor` 3.0 to 5.0 (40 steps) x `requirements.field.ground_roll` "
          "550 m to 950 m (25 steps) on the trainer; wall time of `run_study` including starting the worker "
          "processes.", "",
          "| | wall | solving | per point | feasible | Newton or IPOPT iterations per point | not settled by the step |",
          "|---|---|---|---|---|---|---|"]
    for k, v in sw.items():
        if isinstance(v, dict):
            L.append(f"| {k} | {_ms(v['wall'])} | {_ms(v['solve'])} | {_ms(v['solve'] / v['points'])} | "
                     f"{v['feasible']:,} | {v['iters']:.1f} | {v['fallbacks']:,} |")
    L += ["", f"Serial and parallel tables identical: {sw['identical']}.", "",
          "## (c) 10,000-sample Monte Carlo", "",
          f"`{MC_STUDY.relative_to(ROOT)}` with count 10,000, {WORKERS} processes.", "",
          "| infeasible points | wall | P(feasible) | P5 / P50 / P95 takeoff mass | Newton or IPOPT iterations per "
          "point | not settled by the step |", "|---|---|---|---|---|---|"]
    for k, v in mc.items():
        if isinstance(v, dict):
            L.append(f"| {k} | {_ms(v['wall'])} | {100 * v['feasible']:.2f} % | {v['p5']:,.0f} / {v['p50']:,.0f} / "
                     f"{v['p95']:,.0f} kg | {v['iters']:.1f} | {v['fallbacks']:,} |")
    L += ["", f"Points whose status differs between the two modes: {mc['status_mismatches']}.", "",
          "## Notes on the figures", "", "NOTES_PLACEHOLDER", "", f"Benchmarks took {total:.0f} s.", "",
          CAUTION, ""]
    text = "\n".join(L).replace("NOTES_PLACEHOLDER", "\n".join(NOTES) or "(none)")
    # the section bench/explore.py writes (between its markers) is kept
    path = ROOT / "bench" / "RESULTS.md"
    old = path.read_text() if path.exists() else ""
    begin, end = old.find("<!-- explore:"), old.find("<!-- /explore -->")
    if begin >= 0 and end > begin:
        text = text.rstrip("\n") + "\n\n" + old[begin:end + len("<!-- /explore -->")] + "\n"
    atomic_write(path, text)


if __name__ == "__main__":
    main()

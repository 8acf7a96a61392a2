"""Before / after in one run: the same measurements on an earlier commit and on this tree.

The earlier commit is exported with ``git archive`` into a temporary directory; every
measurement runs in a fresh interpreter with that tree (or this one) first on
``PYTHONPATH``, the two alternating, so both see the same load on the shared machine. The
ratio is before / after (above 1: faster now). Used by ``bench/run.py``; on its own:

    .venv/bin/python bench/paired.py [--before REF] [--reps N]

The measurements use only what both trees have (``load``, ``validate``, ``Problem``,
``solve``, ``run_study`` and the console entry point ``python -m sizing``).
"""
from __future__ import annotations

import argparse
import copy
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
BEFORE = "cef045a"        # main before the speed work (issue 12)
WORKERS = 2

# the figures bench/RESULTS.md gave for the code before, on a quiet machine (seconds)
QUIET_BEFORE = {"solve10": 0.388, "raw10": 0.027, "build10": 0.072, "build10_cache": 0.072, "cli": 0.844,
                "cli_nocache": 0.844, "sweep": 0.826, "mc": 17.2}
# name -> (what is measured, target, reps of the pair)
MEASURES = {
    "solve10": ("`sizing.solve(spec)`, 10 requirements, with margins, costs and texts", "25 ms or less", 3),
    "raw10": ("`Problem.solve_raw` from scratch (no start given), 10 requirements", "3 ms or less", 3),
    "build10": ("problem build, 10 requirements (no cache)", "20 ms or less", 3),
    "build10_cache": ("problem build, 10 requirements, from the on-disk cache", "20 ms or less (a cache hit)", 0),
    "cli": ("cold `sizing solve requirements/trainer-jet.yaml` (the file seen before: on-disk cache)",
            "0.5 s or less and at most 1.6x the imports", 2),
    "cli_nocache": ("cold `sizing solve requirements/trainer-jet.yaml` with `SIZING_CACHE=0` (a new file)",
                    "0.5 s or less and at most 1.6x the imports", 0),
    "imports": ("`python -c \"import numpy, casadi\"` (the floor)", "", 0),
    "sweep": ("1,000-point sweep, 2 processes", "0.4 s or less", 3),
    "mc": ("10,000-sample Monte Carlo, 2 processes, infeasible verdicts confirmed", "6 s or less", 1),
}


# --------------------------------------------------------------------------
# in the child interpreter (either tree)
# --------------------------------------------------------------------------

def _ten(load, validate):
    spec = load("requirements/trainer-jet.yaml")
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


def _timed(f, n):
    out = []
    for _ in range(n):
        t = time.perf_counter()
        f()
        out.append(time.perf_counter() - t)
    return out


def child(name: str) -> dict:
    """One measurement in this interpreter (cwd: the tree's root); seconds."""
    if name in ("cli", "imports"):
        # the CLI with the on-disk cache (filled by one run first, in a folder of its own), the
        # floor, and the CLI with the cache off, alternating (the tree before the cache ignores it)
        cache_dir = tempfile.mkdtemp(prefix="sizing-bench-cache-")
        env = {**os.environ, "SIZING_CACHE": "1", "SIZING_CACHE_DIR": cache_dir}
        off = {**env, "SIZING_CACHE": "0"}
        argv = [sys.executable, "-m", "sizing", "solve", "requirements/trainer-jet.yaml"]
        subprocess.run(argv, capture_output=True, env=env, check=True)
        cli, imp, nocache = [], [], []
        for _ in range(5):
            for out, cmd, e in ((cli, argv, env), (imp, [sys.executable, "-c", "import numpy, casadi"], env),
                                (nocache, argv, off)):
                t = time.perf_counter()
                r = subprocess.run(cmd, capture_output=True, text=True, env=e)
                out.append(time.perf_counter() - t)
                assert r.returncode == 0, r.stderr
        shutil.rmtree(cache_dir, ignore_errors=True)
        return {"cli": cli, "imports": imp, "cli_nocache": nocache}
    from sizing.inputs.spec import load, validate
    if name in ("solve10", "raw10", "build10"):
        from sizing.problem import Problem, solve
        spec = _ten(load, validate)
        if name == "build10":
            plain = _timed(lambda: Problem(spec), 5)
            # from the on-disk cache (a spec loaded with cache=True uses it; the tree before
            # the cache builds as usual): one build stores, then every build reads it back
            cache_dir = tempfile.mkdtemp(prefix="sizing-bench-cache-")
            os.environ.update(SIZING_CACHE="1", SIZING_CACHE_DIR=cache_dir)
            spec.cached = True
            Problem(spec)
            hit = _timed(lambda: Problem(spec), 5)
            shutil.rmtree(cache_dir, ignore_errors=True)
            return {name: plain, "build10_cache": hit}
        if name == "raw10":
            prob = Problem(spec)
            p0 = prob.parameters(spec)
            prob.solve_raw(p0)

            def raw():
                prob._last_scan = None          # a new point's scan, not the remembered one
                prob.solve_raw(p0)
            return {name: _timed(raw, 15)}
        from sizing.problem import build
        solve(spec)

        def full():
            build(spec)._last_scan = None
            solve(spec)
        return {name: _timed(full, 7)}
    import pandas  # noqa: F401 - imported before the clock starts (a study's table needs it)

    from sizing.studies.runner import run_study
    if name == "sweep":
        study = {"base": str(Path("requirements/trainer-jet.yaml").resolve()), "title": "1,000-point sweep",
                 "sweep": {"requirements.turn-4g.load_factor": {"from": 3.0, "to": 5.0, "steps": 40},
                           "requirements.field.ground_roll": {"from": "550 m", "to": "950 m", "steps": 25}}}
        walls = []
        for _ in range(2):
            t = time.perf_counter()
            r = run_study(study, workers=WORKERS, costs=False, progress=False)
            walls.append(time.perf_counter() - t)
        return {name: walls, "sweep_feasible": int((r.table["status"] == "optimal").sum())}
    if name == "mc":
        import yaml
        path = Path("studies/trainer-uncertainty.yaml").resolve()
        data = yaml.safe_load(path.read_text())
        data["sample"]["count"] = 10_000
        t = time.perf_counter()
        r = run_study(data, workers=WORKERS, costs=False, progress=False, base_dir=path.parent)
        return {name: [time.perf_counter() - t], "mc_feasible": r.feasible_fraction, "mc_p50": r.percentiles()[50]}
    raise ValueError(name)


# --------------------------------------------------------------------------
# in the parent
# --------------------------------------------------------------------------

def export(ref: str, where: Path) -> Path:
    """The tree of a git commit in a directory (git archive)."""
    tar = subprocess.run(["git", "-C", str(ROOT), "archive", ref], capture_output=True, check=True).stdout
    subprocess.run(["tar", "-x", "-C", str(where)], input=tar, check=True)
    # byte-compiled once, as an installed tree is (else every cold start would compile)
    subprocess.run([sys.executable, "-m", "compileall", "-q", str(where / "sizing")], check=True)
    return where


def run_child(tree: Path, name: str) -> dict:
    env = {**os.environ, "PYTHONPATH": str(tree)}
    r = subprocess.run([sys.executable, str(Path(__file__).resolve()), "--child", name], cwd=tree, env=env,
                       capture_output=True, text=True)
    if r.returncode != 0:
        raise RuntimeError(f"{name} in {tree}: {r.stderr[-2000:]}")
    return json.loads(r.stdout.strip().splitlines()[-1])


def compare(before: str = BEFORE, reps: int | None = None, only=None, log=print) -> dict:
    """{measure: {"before": [s...], "after": [s...], extra}} measured in alternation."""
    out: dict = {}
    with tempfile.TemporaryDirectory(prefix="sizing-before-") as tmp:
        old = export(before, Path(tmp))
        for name, (_label, _target, n) in MEASURES.items():
            if n == 0 or (only and name not in only):
                continue
            for _ in range(reps or n):
                for side, tree in (("before", old), ("after", ROOT)):
                    res = run_child(tree, name)
                    for key, vals in res.items():
                        if isinstance(vals, list):
                            out.setdefault(key, {"before": [], "after": []})[side] += vals
                        else:
                            out.setdefault(key, {"before": [], "after": []}).setdefault(f"{side}_{key}", vals)
                    log(f"  {name} {side}: {', '.join(_ms(v) for v in res[name])}")
    return out


def _ms(x):
    return f"{1e3 * x:,.1f} ms" if x < 1 else f"{x:,.2f} s"


def summary_rows(out: dict) -> list:
    """(label, before, after, ratio, target) per measure: medians."""
    rows = []
    for name, (label, target, _n) in MEASURES.items():
        if name not in out or not out[name]["before"]:
            continue
        b, a = statistics.median(out[name]["before"]), statistics.median(out[name]["after"])
        rows.append((name, label, b, a, b / a, target))
    return rows


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--child", help=argparse.SUPPRESS)
    ap.add_argument("--before", default=BEFORE)
    ap.add_argument("--reps", type=int, default=None)
    ap.add_argument("--only", nargs="*")
    args = ap.parse_args(argv)
    if args.child:
        print(json.dumps(child(args.child)))
        return
    out = compare(args.before, args.reps, args.only)
    for _name, label, b, a, ratio, target in summary_rows(out):
        print(f"{label}: before {_ms(b)}, after {_ms(a)}, {ratio:.1f}x  (target {target})")


if __name__ == "__main__":
    main()

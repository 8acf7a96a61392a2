"""Benchmark of ``sizing explore``: from a value change to the new design numbers, server side.

    make bench            # or: .venv/bin/python bench/explore.py

For every example file, each requirement's headline value (and the payload) is
moved like a slider: 16 steps of 1 % of the value, away and back, each change
solved warm-started from the last answer exactly as the page does it
(:meth:`sizing.explore.engine.Explorer.quick`: validate the changed file,
parameters, the warm step checked in numpy, the design numbers). Measured:

* quick: the engine's own time from the change to the numbers;
* session: the page's path, a change handed to :class:`~sizing.explore.engine.Session`
  on the event loop's side and the numbers published from its worker thread
  (what the page then shows; Bokeh's push to the browser is not included);
* the slower follow-ups on a few of the changes: the curves
  (``diagram_data``) and the full result (costs and margin texts).

Target: the design numbers within 50 ms of a change. Writes its section of
bench/RESULTS.md (between the ``explore`` markers), leaving the rest alone.
"""
from __future__ import annotations

import datetime
import os
import platform
import re
import statistics
import sys
import threading
import time
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sizing.common.fileio import atomic_write  # noqa: E402
from sizing.explore.engine import Explorer, Session  # noqa: E402
from sizing.problem import tree as M  # noqa: E402

sys.setswitchinterval(0.001)          # as the explore server sets it

EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
RESULTS = ROOT / "bench" / "RESULTS.md"
TARGET_MS = 50.0
STEPS = 16
BEGIN, END = "<!-- explore: written by bench/explore.py -->", "<!-- /explore -->"


def pct(values, q):
    v = sorted(values)
    return v[min(len(v) - 1, int(round(q * (len(v) - 1))))]


def slider_path(value, steps=STEPS):
    """Values a slider passes through: 1 % steps away from the value and back."""
    half = steps // 2
    return [value * (1 - 0.01 * k) for k in range(1, half + 1)] + [value * (1 - 0.01 * k) for k in range(half, -1, -1)]


def moved_controls(ex):
    keys = []
    tree = M.spec_tree(ex.spec)
    for rid in ex.problem.req_ids:
        key = f"requirements.{rid}.{M.value_field(tree['requirements'][rid])}"
        if key in ex.by_key:
            keys.append(key)
    if "aircraft.weights.payload" in ex.by_key:
        keys.append("aircraft.weights.payload")
    return keys


def run_file(path):
    t0 = time.perf_counter()
    ex = Explorer(path)
    start = time.perf_counter() - t0
    quick, session_ms, curves, complete, verified, n = [], [], [], [], 0, 0
    for key in moved_controls(ex):
        c = ex.by_key[key]
        warm = ex.base_warm
        for i, v in enumerate(slider_path(c.value)):
            if c.refusal(v):
                continue
            values = dict(ex.initial, **{key: v})
            step = ex.quick(values, warm)
            n += 1
            quick.append(step.seconds * 1000)
            if step.verified:
                verified += 1
                warm = step.warm
            if i == 3:                                   # the slower follow-ups, on one change per value
                t = time.perf_counter()
                if step.verified:
                    ex.curves(step)
                    curves.append((time.perf_counter() - t) * 1000)
                    t = time.perf_counter()
                    ex.complete(step)
                    complete.append((time.perf_counter() - t) * 1000)
    # the page's path: requests through a Session, numbers published from its worker thread
    pool, follow = ThreadPoolExecutor(max_workers=1), ThreadPoolExecutor(max_workers=1)
    done = threading.Event()
    seen = []

    def publish(kind, payload):
        if kind == "numbers":
            seen.append((time.perf_counter() - payload.t0) * 1000)
            done.set()

    s = Session(ex, publish, executor=pool, follow_up=follow)
    key = moved_controls(ex)[0]
    c = ex.by_key[key]
    for v in slider_path(c.value):
        done.clear()
        s.request(dict(ex.initial, **{key: v}), key)
        done.wait(30)
        time.sleep(0.002)
    pool.shutdown(wait=True)
    follow.shutdown(wait=True)         # lets the follow-ups of the last change finish
    session_ms = seen
    return dict(file=path.name, controls=len(ex.controls), start=start * 1000, n=n, verified=verified,
                quick=quick, session=session_ms, curves=curves, complete=complete)


def table(rows):
    out = ["| file | movable values | start (build, solve, diagram) | changes | quick median / p95 / max | "
           "session median / max | curves median | costs and margins median |",
           "|---|---|---|---|---|---|---|---|"]
    for r in rows:
        q, s = r["quick"], r["session"]
        out.append(f"| {r['file']} | {r['controls']} | {r['start']:.0f} ms | {r['n']} ({r['verified']} feasible) | "
                   f"{statistics.median(q):.1f} / {pct(q, 0.95):.1f} / {max(q):.1f} ms | "
                   f"{statistics.median(s):.1f} / {max(s):.1f} ms | "
                   f"{statistics.median(r['curves']):.0f} ms | {statistics.median(r['complete']):.0f} ms |")
    return "\n".join(out)


def main():
    load0 = os.getloadavg()
    rows = [run_file(p) for p in EXAMPLES]
    load1 = os.getloadavg()
    worst = max(pct(r["quick"], 0.95) for r in rows)
    worst_session = max(max(r["session"]) for r in rows)
    met = "met" if worst <= TARGET_MS and worst_session <= TARGET_MS else "**missed**"
    import casadi

    text = "\n".join([
        BEGIN,
        "## sizing explore: from a value change to the design numbers",
        "",
        f"Written by `bench/explore.py` on {datetime.date.today()}: {os.cpu_count()} cores, Python "
        f"{platform.python_version()}, CasADi {casadi.__version__}; load average "
        f"{', '.join(f'{x:.2f}' for x in load0)} before and {', '.join(f'{x:.2f}' for x in load1)} after.",
        "",
        f"Each requirement's headline value and the payload moved like a slider ({STEPS} steps of 1 %, away and "
        "back), every change solved warm-started from the last answer as the page does: validate the changed "
        "file, its parameters, the warm step checked in numpy, the design numbers (quick). Session: the same "
        "through the page's worker thread, from the request to the published numbers. The curves and the "
        "costs and margin texts follow the numbers on the page; they are timed on one change per value.",
        "",
        table(rows),
        "",
        f"Target: the design numbers within {TARGET_MS:.0f} ms of a change (p95 of quick, max of session): "
        f"{worst:.1f} ms and {worst_session:.1f} ms, {met}.",
        END,
    ])
    print(text)
    old = RESULTS.read_text() if RESULTS.exists() else "# Benchmark results\n"
    pattern = re.compile(re.escape(BEGIN) + ".*?" + re.escape(END), re.S)
    new = pattern.sub(lambda _m: text, old) if pattern.search(old) else old.rstrip("\n") + "\n\n" + text + "\n"
    atomic_write(RESULTS, new, "w")
    print(f"wrote {RESULTS.relative_to(ROOT)}")


if __name__ == "__main__":
    main()

"""What a trade study shows: progress bar, terminal summary, files and figures.

Nothing is computed here. :func:`write_outputs` writes ``results.csv``,
``study.json`` and the figures. Each plot function (matplotlib, Agg, never
pyplot) takes the study's data and ``ax=None``, rejects unknown keywords by
signature, and returns the artists it drew. :func:`write_plots` draws the
set that fits the study (mass against the parameter, carpet and driver map,
mass distribution, requirement costs) and writes PNG files atomically with
the caution footer.
"""
from __future__ import annotations

import io
import math
import sys
import textwrap
import time
from pathlib import Path

import numpy as np

from ..problem.health import RUNAWAY_WARN

NONE_LABEL = "(no requirement active)"


class Progress:
    """A one-line progress bar on stderr; silent when stderr is not a terminal."""

    def __init__(self, total, label="study", stream=None, enabled=None):
        self.stream = stream or sys.stderr
        self.enabled = (getattr(self.stream, "isatty", lambda: False)() if enabled is None else enabled)
        self.total, self.label, self.done = total, label, 0
        self.t0 = self._last = time.perf_counter()

    def update(self, n):
        self.done += n
        now = time.perf_counter()
        if self.enabled and (now - self._last > 0.1 or self.done >= self.total):
            self._last = now
            frac = self.done / self.total if self.total else 1.0
            width = 30
            bar = "#" * int(frac * width) + "." * (width - int(frac * width))
            el = now - self.t0
            eta = el / frac - el if frac > 0 else float("nan")
            self.stream.write(f"\r{self.label} [{bar}] {self.done}/{self.total} points  {el:5.1f} s"
                              f"  eta {eta:5.1f} s ")
            self.stream.flush()

    def close(self):
        if self.enabled:
            self.stream.write("\n")
            self.stream.flush()


# every file a study writes; an output folder holding only these may be replaced
OUTPUT_NAMES = ("results.csv", "results.xlsx", "study.json", "mass.png", "carpet.png", "drivers-map.png",
                "mass-distribution.png", "mass-influence.png", "costs.png")


def output_folder(output_dir):
    """The study's output folder, checked before any point is solved: a file in the way,
    a place that cannot be written or a folder of other files is an InputError (exit 2)."""
    from ..common.fileio import FolderSwap

    return FolderSwap(output_dir, OUTPUT_NAMES)


def write_outputs(result, output_dir, folder=None, xlsx=False) -> list:
    """results.csv, study.json, the plots (and with ``xlsx`` results.xlsx); returns the written paths.

    The set is written into a fresh staging folder and swapped in whole
    (:class:`sizing.common.fileio.FolderSwap`): an earlier study's files that
    this one does not produce are gone, an interrupted write leaves the earlier
    set as it was, and two studies writing to one folder never mix. ``folder``
    is the :func:`output_folder` made (and checked) before the study ran.
    """
    import json

    from ..common.caution import CAUTION
    from ..common.fileio import atomic_write

    with (folder or output_folder(output_dir)) as fs:
        stage = fs.staging
        written = [atomic_write(stage / "results.csv", result.csv_text())]
        st = result.study
        meta = {
            "title": st.title, "study_file": st.file, "base_file": st.base_file, "base_sha256": st.base.sha256,
            "mode": st.mode, "points": result.points, "of_points": st.size,
            "parameters": [{"path": v.path, "unit": v.unit or None, "parameter_path": list(v.tree_path)}
                           for v in st.varied],
            "seed": st.seed, "distributions": st.distributions or None,
            "feasible_fraction": _finite(result.feasible_fraction),
            "takeoff_mass_percentiles_kg": {str(k): _finite(v) for k, v in result.percentiles().items()},
            "takeoff_mass_percentiles_basis": "feasible samples only",
            "takeoff_mass_percentiles_all_samples_kg": {str(k): v for k, v in result.percentiles_all().items()},
            "takeoff_mass_percentiles_all_samples_basis": (
                "every sample with a verdict, infeasible ones ranked heavier than any design; "
                "null: not reached (no design at that probability)"),
            "input_influence_spearman": ({p: (r if math.isfinite(r) else None) for p, r in result.influence()}
                                         if st.mode == "sample" else None),
            "near_runaway_points": int(result.near_runaway().sum()),
            "near_runaway_threshold": RUNAWAY_WARN,
            "executor": result.executor, "workers": result.workers, "elapsed_s": result.elapsed_s,
            "ipopt_iterations": result.iterations, "points_solved_from_scratch": result.fallbacks,
            "caution": CAUTION,
        }
        written.append(atomic_write(stage / "study.json", json.dumps(meta, indent=2, allow_nan=False) + "\n"))
        if xlsx:
            written.append(atomic_write(stage / "results.xlsx", study_workbook(result), "wb"))
        written += write_plots(result, stage)
        fs.commit()
    return [fs.path / Path(w).name for w in written]


def column_header(col, study) -> str:
    """A study table column's header with its unit: a varied parameter by its name in the file format
    (``turn-4g load factor [g]``), an output column by its unit suffix (``takeoff mass [kg]``)."""
    for v in study.varied:
        if v.path == col:
            return axis_name(v.path, v.unit, study.base)
    for suffix, unit in _SUFFIX_UNITS:
        if col.endswith(suffix):
            return f"{col[: -len(suffix)].replace('_', ' ')} [{unit}]"
    return f"{col.replace('_', ' ')} [{_COLUMN_UNITS.get(col, 'text')}]"


_SUFFIX_UNITS = (("_W_per_N", "W/N"), ("_kg", "kg"), ("_Pa", "N/m²"), ("_m2", "m²"), ("_kN", "kN"), ("_N", "N"),
                 ("_kW", "kW"), ("_W", "W"), ("_ms", "ms"), ("_s", "s"), ("_m", "m"), ("_pct", "%"))
_COLUMN_UNITS = {"thrust_to_weight": "-", "conflicting": "text", "iterations": "count", "point": "index", "feasible": "yes/no",
                 "margin": "-"}


def study_workbook(result) -> bytes:
    """results.xlsx: the study table (units in every header) and the study's description, the caution
    on every sheet."""
    import pandas as pd

    from ..common.version import __version__
    from ..reports.workbook import frames_workbook

    st, t = result.study, result.table
    table = t.rename(columns={c: column_header(c, st) for c in t.columns})
    about = [("title [text]", st.title), ("study file [text]", st.file), ("base file [text]", st.base_file),
             ("base sha256 [text]", st.base.sha256), ("mode [text]", st.mode), ("points [count]", result.points),
             ("seed [-]", st.seed if st.seed is not None else "")]
    about += [(f"varied: {axis_name(v.path, v.unit, st.base)}", f"{v.path} "
               f"{_dist_text(st.distributions.get(v.path, {})) if st.distributions else ''}".strip())
              for v in st.varied]
    sheets = {"results": table, "study": pd.DataFrame(about, columns=["item [unit]", "value [as written]"])}
    return frames_workbook(sheets, f"{st.title} · base {st.base_file} · sha256 {st.base.sha256} · "
                                   f"sizing {__version__}")


def _finite(x):
    return x if isinstance(x, float) and math.isfinite(x) else None


def summary(result) -> str:
    """Terminal lines for a finished study."""
    st, t = result.study, result.table
    ok = t["status"] == "optimal"
    n = len(t)
    what = (f"sweep of {len(st.varied)} parameter{'s' if len(st.varied) > 1 else ''}" if st.mode == "sweep"
            else f"Monte Carlo, {st.size:,} samples, seed {st.seed}")
    lines = [st.title, "=" * len(st.title), f"base: {st.base_file}", f"{what}: {n:,} points"
             + (f" (first {n:,} of {st.size:,})" if n < st.size else "")]
    lines.append("varied: " + ", ".join(f"{v.path}" + (f" [{v.unit}]" if v.unit else "") for v in st.varied))
    n_ok, n_inf = int(ok.sum()), int((t["status"] == "infeasible").sum())
    lines.append(f"feasible at {n_ok:,} of {n:,} points ({100 * n_ok / n if n else 0:.1f} %); "
                 f"infeasible {n_inf:,}; failed {n - n_ok - n_inf:,}")
    if n_ok:
        m = t.loc[ok, "takeoff_mass_kg"]
        lines.append(f"takeoff mass {m.min():,.0f} to {m.max():,.0f} kg")
        if st.mode == "sample":
            pc, pa = result.percentiles(), result.percentiles_all()
            lines.append("takeoff mass percentiles over feasible samples only: "
                         + ", ".join(f"P{k} {v:,.0f} kg" for k, v in pc.items()))
            lines.append("takeoff mass percentiles over all samples (infeasible counted heavier than any design): "
                         + ", ".join(f"P{k} {v:,.0f} kg" if v is not None else f"P{k} not reached"
                                     for k, v in pa.items()))
            top = [(p, r) for p, r in result.influence() if math.isfinite(r)][:3]
            if top:
                lines.append("inputs that move takeoff mass most (Spearman rank correlation): "
                             + "; ".join(f"{p} {r:+.2f}" for p, r in top))
        near = result.near_runaway()
        if near.any():
            lines.append(f"WARNING: near weight runaway (runaway margin below {RUNAWAY_WARN:g}) at {int(near.sum()):,} "
                         f"of {n_ok:,} designs, {t.loc[near, 'takeoff_mass_kg'].min():,.0f} kg and heavier: "
                         "there small errors in the weight estimate become large errors in takeoff mass")
        counts = t.loc[ok, "drivers"].replace("", "(none)").value_counts()
        lines.append("drivers: " + "; ".join(f"{k.replace(';', ' + ')} at {v:,}" for k, v in counts.head(6).items()))
    if n_inf:
        conf = t.loc[t["status"] == "infeasible", "conflicting"].replace("", "(not named)").value_counts()
        lines.append("infeasible points, requirements in conflict where the solve ended: "
                     + "; ".join(f"{k.replace(';', ' + ')} at {v:,}" for k, v in conf.head(4).items()))
    how = {"serial": "in this process", "processes": f"on {result.workers} local processes",
           "dask": "on a Dask cluster"}[result.executor]
    lines.append(f"solved {how} in {result.elapsed_s:.2f} s "
                 f"({1000 * result.elapsed_s / max(n, 1):.2f} ms per point)")
    return "\n".join(lines)


def _figure(figsize=(9.0, 6.0)):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _footer(fig, extra=""):
    """The caution (and a source line) under the axes, with room kept for it."""
    from ..common.caution import CAUTION

    width = int(fig.get_figwidth() * 15.5)
    lines = textwrap.wrap(CAUTION, width) + (textwrap.wrap(extra, width) if extra else [])
    frac = min(0.4, (0.1 + 0.13 * len(lines)) / fig.get_figheight())
    fig.get_layout_engine().set(rect=(0, frac, 1, 1 - frac))
    fig.text(0.01, 0.005, "\n".join(lines), fontsize=7.5, color="0.3", va="bottom", ha="left")


def _save(fig, path):
    from ..common.fileio import atomic_write

    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=120)
    return atomic_write(path, buf.getvalue(), "wb")


_CONTEXT = {"aerodynamics": "", "propulsion": "", "weights": "", "aircraft": "", "empty": "empty-mass",
            "cl_max": "CLmax", "fuel": "fuel", "mission": "mission", "design_speeds": "design speed",
            "speed_limit": "speed limit"}
_WORDS = {"oswald_efficiency": "Oswald efficiency", "cd0": "CD0", "other": "other (fraction of takeoff mass)",
          "aspect_ratio": "aspect ratio", "tsfc": "TSFC", "psfc": "PSFC"}


def axis_name(path, unit="", spec=None) -> str:
    """A study parameter named as the file format names it, with its unit: ``requirements.turn-4g.load_factor``
    -> ``turn-4g load factor [g]``; ``aircraft.aerodynamics.oswald_efficiency`` -> ``Oswald efficiency [-]``.

    >>> axis_name("requirements.field.ground_roll", "m"), axis_name("aircraft.weights.empty.other")
    ('field ground roll [m]', 'empty-mass other (fraction of takeoff mass) [-]')
    """
    parts = path.split(".")
    words = lambda k: _WORDS.get(k, k.replace("_", " "))      # noqa: E731
    if parts[0] == "requirements" and len(parts) >= 3:
        if not unit and spec is not None:
            from ..problem.capability import user_unit

            try:
                unit = user_unit(spec, parts[1], parts[2])[0]
            except (KeyError, AttributeError, StopIteration):
                unit = ""
            unit = "" if unit in ("unit", "Mach") else unit
        name = f"{parts[1]} {' '.join(words(k) for k in parts[2:])}"
    else:
        ctx = [_CONTEXT.get(k, k.replace("_", " ")) for k in parts[:-1]]
        name = " ".join([c for c in ctx[-1:] if c] + [words(parts[-1])])
    return f"{name} [{unit or '-'}]"


def _label(path, unit, spec=None):
    return axis_name(path, unit, spec)


def write_plots(result, out_dir) -> list:
    """Draw and write the figures of a study result; the written paths."""
    from ..charts.style import styles_of
    from . import figures as F

    out = Path(out_dir)
    st, t = result.study, result.table
    styles = styles_of(st.base)
    written = []
    title = st.title
    base = f"base: {st.base_file}"
    status = t["status"].to_numpy()
    if st.mode == "sweep" and len(st.varied) == 1:
        v = st.varied[0]
        fig = _figure()
        ax = fig.add_subplot()
        F.mass_curve(t[v.path].to_numpy(), t["takeoff_mass_kg"].to_numpy(), list(t["drivers"]), status,
                     xlabel=_label(v.path, v.unit, st.base), styles=styles, ax=ax)
        ax.set_title(title, fontsize=F.FS["title"])
        _footer(fig, base)
        written.append(_save(fig, out / "mass.png"))
    elif st.mode == "sweep":
        va, vb = st.varied
        na, nb = st.shape
        n = len(t)
        rows = na if n == na * nb else n // nb          # a --limit run: whole rows only
        la, lb = _label(va.path, va.unit, st.base), _label(vb.path, vb.unit, st.base)
        if rows >= 1:
            k = rows * nb
            mass = t["takeoff_mass_kg"].to_numpy()[:k].reshape(rows, nb)
            drv = np.asarray(t["drivers"].to_numpy()[:k], dtype=object).reshape(rows, nb)
            a = t[va.path].to_numpy()[:k].reshape(rows, nb)[:, 0]
            b = t[vb.path].to_numpy()[:k].reshape(rows, nb)[0, :]
            fig = _figure()
            ax = fig.add_subplot()
            ax.set_title(title, fontsize=F.FS["title"])
            F.carpet(a, b, mass, la, lb, drivers=drv, styles=styles, ax=ax)
            _footer(fig, base)
            written.append(_save(fig, out / "carpet.png"))
            fig = _figure()
            ax = fig.add_subplot()
            F.driver_map(a, b, mass, drv, la, lb, styles=styles, ax=ax)
            fig.suptitle(f"{title}: which requirements drive", fontsize=F.FS["title"])
            _footer(fig, base)
            written.append(_save(fig, out / "drivers-map.png"))
        # mass against the first parameter, one line per value of the second
        fig = _figure()
        ax = fig.add_subplot()
        ax.set_title(title, fontsize=F.FS["title"])
        F.mass_family(t[va.path].to_numpy(), t[vb.path].to_numpy(), t["takeoff_mass_kg"].to_numpy(),
                      list(t["drivers"]), status, la, lb, styles=styles, ax=ax)
        _footer(fig, base)
        written.append(_save(fig, out / "mass.png"))
    else:
        fig = _figure(figsize=(13.0, 6.2))
        ax1, ax2 = fig.subplots(1, 2, width_ratios=(3, 1.6))
        base_mass = (result.base.design.takeoff_mass if result.base is not None and result.base.feasible
                     else None)
        F.mass_distribution(t["takeoff_mass_kg"].to_numpy(), status, result.percentiles(),
                            result.percentiles_all(), result.feasible_fraction, base_mass, ax=ax1)
        ax1.set_title(title, fontsize=F.FS["title"])
        F.driver_frequency(list(t["drivers"]), status, styles=styles, ax=ax2)
        vary = "; ".join(f"{v.path} {_dist_text(st.distributions.get(v.path, {}))}" for v in st.varied)
        _footer(fig, f"{base}; seed {st.seed}; {vary}")
        written.append(_save(fig, out / "mass-distribution.png"))
        if len(st.varied) >= 1:
            fig = _figure(figsize=(9.0, 2.4 + 0.5 * len(st.varied)))
            ax = fig.add_subplot()
            F.influence(result.influence(), {v.path: _label(v.path, v.unit, st.base) for v in st.varied}, ax=ax)
            _footer(fig, f"{base}; seed {st.seed}; {len(t):,} samples")
            written.append(_save(fig, out / "mass-influence.png"))
    if result.base is not None and result.base.feasible:
        fig = _figure(figsize=(9.0, 1.8 + 0.42 * len(result.base.requirements)))
        ax = fig.add_subplot()
        F.costs(result.base.requirements, styles=styles, ax=ax)
        _footer(fig, base)
        written.append(_save(fig, out / "costs.png"))
    return written


def _dist_text(d):
    for k, v in d.items():
        if k != "unit":
            return f"{k}({', '.join(f'{x:g}' for x in v)}{' ' + d['unit'] if d.get('unit') else ''})"
    return ""

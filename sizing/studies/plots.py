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

from ..charts.style import PALETTE

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
                "mass-distribution.png", "costs.png")


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
        written = [atomic_write(stage / "results.csv", result.table.to_csv(index=False, float_format="%.10g"))]
        st = result.study
        meta = {
            "title": st.title, "study_file": st.file, "base_file": st.base_file, "base_sha256": st.base.sha256,
            "mode": st.mode, "points": result.points, "of_points": st.size,
            "parameters": [{"path": v.path, "unit": v.unit or None, "parameter_path": list(v.tree_path)}
                           for v in st.varied],
            "seed": st.seed, "distributions": st.distributions or None,
            "feasible_fraction": _finite(result.feasible_fraction),
            "takeoff_mass_percentiles_kg": {str(k): _finite(v) for k, v in result.percentiles().items()},
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
_COLUMN_UNITS = {"thrust_to_weight": "-", "iterations": "count", "point": "index", "feasible": "yes/no",
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
            pc = result.percentiles()
            lines.append("takeoff mass percentiles: " + ", ".join(f"P{k} {v:,.0f} kg" for k, v in pc.items()))
        counts = t.loc[ok, "drivers"].replace("", "(none)").value_counts()
        lines.append("drivers: " + "; ".join(f"{k.replace(';', ' + ')} at {v:,}" for k, v in counts.head(6).items()))
    how = {"serial": "in this process", "processes": f"on {result.workers} local processes",
           "dask": "on a Dask cluster"}[result.executor]
    lines.append(f"solved {how} in {result.elapsed_s:.2f} s "
                 f"({1000 * result.elapsed_s / max(n, 1):.2f} ms per point)")
    return "\n".join(lines)


def _figure(figsize=(8.0, 5.6)):
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def _footer(fig, extra=""):
    """The caution (and a source line) under the axes, with room kept for it."""
    from ..common.caution import CAUTION

    width = int(fig.get_figwidth() * 19)
    lines = textwrap.wrap(CAUTION, width) + (textwrap.wrap(extra, width) if extra else [])
    frac = min(0.4, (0.1 + 0.105 * len(lines)) / fig.get_figheight())
    fig.get_layout_engine().set(rect=(0, frac, 1, 1 - frac))
    fig.text(0.01, 0.005, "\n".join(lines), fontsize=6, color="0.35", va="bottom", ha="left")


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


def _driver_name(d):
    return d.replace(";", " + ") if d else NONE_LABEL


def _colours(names):
    """The constraint diagram's own palette (sizing.plots.PALETTE), lightened on repeat."""
    from matplotlib.colors import to_rgb

    from ..charts.style import PALETTE

    out = {}
    for i, n in enumerate(names):
        rgb = np.array(to_rgb(PALETTE[i % len(PALETTE)]))
        k = i // len(PALETTE)
        out[n] = tuple(rgb + (1 - rgb) * min(0.3 * k, 0.7))
    return out


def _driver_sets(drivers, ok):
    names = []
    for d, good in zip(drivers, ok):
        if good and d not in names:
            names.append(d)
    return names


def mass_curve(x, mass, drivers, status, xlabel="", ax=None):
    """Takeoff mass against one parameter, coloured and labelled by the driving requirements.

    x, mass: arrays; drivers: ';'-joined ids per point; status: per point.
    Infeasible points are marked along the bottom edge.
    """
    ax = ax if ax is not None else _figure().add_subplot()
    x, mass = np.asarray(x, float), np.asarray(mass, float)
    ok = np.asarray(status) == "optimal"
    order = np.argsort(x, kind="stable")
    x, mass, ok = x[order], mass[order], ok[order]
    drivers = [drivers[i] for i in order]
    names = _driver_sets(drivers, ok)
    col = _colours(names)
    handles = [ax.plot(x[ok], mass[ok], color="0.75", lw=1, zorder=1)[0]]
    # runs of equal driver sets: a coloured stretch with its label at the middle
    runs, start = [], None
    for i in range(len(x) + 1):
        key = drivers[i] if i < len(x) and ok[i] else None
        if start is not None and (key != drivers[start] or i == len(x) or not ok[i]):
            runs.append((start, i))
            start = None
        if start is None and key is not None:
            start = i
    labelled = set()
    for a, b in runs:
        d = drivers[a]
        lab = _driver_name(d) if d not in labelled else None
        labelled.add(d)
        handles.append(ax.plot(x[a:b], mass[a:b], "o-", color=col[d], ms=4, lw=2.2, label=lab, zorder=2)[0])
        mid = (a + b - 1) // 2
        handles.append(ax.annotate(_driver_name(d), (x[mid], mass[mid]), xytext=(0, 9), textcoords="offset points",
                                   ha="center", fontsize=7, color=col[d]))
    if (~ok).any():
        lo = np.nanmin(mass[ok]) if ok.any() else 0.0
        handles.append(ax.plot(x[~ok], np.full((~ok).sum(), lo), "x", color="0.15", ms=7,
                               label="no feasible design", zorder=3)[0])
    ax.set_xlabel(xlabel)
    ax.set_ylabel("takeoff mass [kg]")
    ax.grid(True, alpha=0.3)
    if names or (~ok).any():
        ax.legend(fontsize=7, title="driving requirements", title_fontsize=7)
    return handles


def carpet(a, b, mass, a_label="", b_label="", drivers=None, ax=None, offset=0.5):
    """Carpet plot: takeoff mass over two parameters as a sheared grid of lines.

    a, b: the two axes' values (lengths na, nb); mass: (na, nb). Lines of
    constant ``a`` and of constant ``b``; the horizontal position is the
    carpet's own (index of a plus ``offset`` times index of b) and carries
    no scale. Nodes are coloured by their driving requirements when given.
    """
    ax = ax if ax is not None else _figure().add_subplot()
    mass = np.asarray(mass, float)
    na, nb = mass.shape
    ia, ib = np.meshgrid(np.arange(na) / max(na - 1, 1), np.arange(nb) / max(nb - 1, 1), indexing="ij")
    X = ia + offset * ib
    handles = []
    for i in range(na):
        handles.append(ax.plot(X[i], mass[i], color="0.25", lw=1.2)[0])
        j = np.flatnonzero(np.isfinite(mass[i]))
        if j.size:
            handles.append(ax.annotate(f"{a[i]:g}", (X[i, j[-1]], mass[i, j[-1]]), xytext=(3, 0),
                                       textcoords="offset points", fontsize=7, color="0.25", va="center"))
    for k in range(nb):
        handles.append(ax.plot(X[:, k], mass[:, k], color="0.55", lw=1.2, ls="--")[0])
        i = np.flatnonzero(np.isfinite(mass[:, k]))
        if i.size:
            handles.append(ax.annotate(f"{b[k]:g}", (X[i[0], k], mass[i[0], k]), xytext=(-3, -2),
                                       textcoords="offset points", fontsize=7, color="0.45",
                                       ha="right", va="top"))
    if drivers is not None:
        d = np.asarray(drivers, dtype=object)
        ok = np.isfinite(mass)
        names = _driver_sets(d.ravel(), ok.ravel())
        col = _colours(names)
        for n in names:
            sel = ok & (d == n)
            handles.append(ax.scatter(X[sel], mass[sel], s=18, color=col[n], zorder=3, label=_driver_name(n)))
        if names:
            ax.legend(fontsize=7, title="driving requirements", title_fontsize=7, loc="best")
    ax.plot([], [], color="0.25", label=f"constant {a_label} (labelled at the right)")
    ax.plot([], [], color="0.55", ls="--", label=f"constant {b_label} (labelled at the left)")
    handles.append(ax.legend(fontsize=7, loc="upper left", handles=ax.get_legend_handles_labels()[0]))
    ax.set_xticks([])
    ax.set_xlabel(f"carpet of {a_label}\nand {b_label} (the horizontal position has no scale)", fontsize=8)
    ax.set_ylabel("takeoff mass [kg]")
    ax.grid(True, axis="y", alpha=0.3)
    return handles


def driver_map(a, b, mass, drivers, a_label="", b_label="", ax=None):
    """Which requirements drive, over two parameters, with lines of constant takeoff mass."""
    from matplotlib.colors import ListedColormap
    from matplotlib.patches import Patch

    ax = ax if ax is not None else _figure().add_subplot()
    mass = np.asarray(mass, float)
    d = np.asarray(drivers, dtype=object)
    ok = np.isfinite(mass)
    names = _driver_sets(d.ravel(), ok.ravel())
    col = _colours(names)
    code = np.full(mass.shape, np.nan)
    for k, n in enumerate(names):
        code[ok & (d == n)] = k
    handles = []
    if names:
        cmap = ListedColormap([col[n] for n in names])
        handles.append(ax.pcolormesh(np.asarray(b, float), np.asarray(a, float), np.ma.masked_invalid(code),
                                     cmap=cmap, vmin=-0.5, vmax=len(names) - 0.5, shading="nearest", alpha=0.8))
    if (~ok).any():
        bb, aa = np.meshgrid(b, a)
        handles.append(ax.scatter(bb[~ok], aa[~ok], marker="x", color="0.15", s=25))
    if ok.sum() >= 4 and min(mass.shape) >= 2:
        cs = ax.contour(np.asarray(b, float), np.asarray(a, float), np.ma.masked_invalid(mass), colors="k",
                        linewidths=0.8)
        ax.clabel(cs, fontsize=7, fmt=lambda v: f"{v:,.0f} kg")
        handles.append(cs)
    patches = [Patch(color=col[n], label=_driver_name(n)) for n in names]
    if (~ok).any():
        patches.append(Patch(color="0.15", label="x: no feasible design"))
    if patches:
        ax.legend(handles=patches, fontsize=7, title="driving requirements", title_fontsize=7, loc="best")
    ax.set_xlabel(b_label)
    ax.set_ylabel(a_label)
    return handles


def mass_distribution(mass, n_total, feasible_fraction, percentiles, drivers=None, ax=None):
    """Histogram of the feasible takeoff masses with percentiles and P(feasible)."""
    ax = ax if ax is not None else _figure().add_subplot()
    m = np.asarray(mass, float)
    m = m[np.isfinite(m)]
    handles = []
    if m.size:
        handles.append(ax.hist(m, bins=min(60, max(10, int(math.sqrt(m.size)))), color=PALETTE[0], alpha=0.75)[2])
        for (k, v), ls in zip(percentiles.items(), (":", "-", "--", "-.")):
            if math.isfinite(v):
                handles.append(ax.axvline(v, color="k", ls=ls, lw=1, label=f"P{k} {v:,.0f} kg"))
    n_ok = m.size
    se = math.sqrt(max(feasible_fraction * (1 - feasible_fraction), 0.0) / n_total) if n_total else float("nan")
    txt = (f"P(requirement set feasible) = {100 * feasible_fraction:.1f} %"
           f"  (+/- {100 * 1.96 * se:.1f} %, 95 % binomial)\n{n_ok:,} of {n_total:,} samples feasible")
    handles.append(ax.text(0.02, 0.97, txt, transform=ax.transAxes, va="top", fontsize=8,
                           bbox=dict(facecolor="white", alpha=0.8, edgecolor="0.7")))
    ax.set_xlabel("takeoff mass [kg]")
    ax.set_ylabel("samples")
    if m.size:
        ax.legend(fontsize=7, loc="upper right")
    return handles


def driver_frequency(drivers, status, ax=None):
    """Share of the samples driven by each set of requirements (horizontal bars)."""
    ax = ax if ax is not None else _figure().add_subplot()
    ok = np.asarray(status) == "optimal"
    names, counts = np.unique(np.asarray(drivers, dtype=object)[ok].astype(str), return_counts=True)
    order = np.argsort(counts)
    n = max(len(status), 1)
    bars = ax.barh([_driver_name(names[i]) for i in order], 100 * counts[order] / n, color=PALETTE[2])
    ax.set_xlabel("share of all samples [%]")
    ax.set_title("driving requirements", fontsize=9)
    ax.tick_params(axis="y", labelsize=7)
    return [bars]


def costs(requirements, ax=None):
    """Bar chart of each requirement's cost at the base point (one step of its value, kg)."""
    from ..reports.summary import cost_step

    ax = ax if ax is not None else _figure().add_subplot()
    labels, values, colours = [], [], []
    for r in requirements:
        c = cost_step(r)
        if r.active and c is not None:
            labels.append(f"{c[0]} on {r.id}")
            values.append(c[1])
            colours.append(PALETTE[1])
        else:
            labels.append(f"{r.id} (margin {100 * r.margin:.1f} %)" if math.isfinite(r.margin) else r.id)
            values.append(0.0 if c is None or not r.active else c[1])
            colours.append("0.6")
    y = np.arange(len(labels))
    bars = ax.barh(y, values, color=colours)
    ax.set_yticks(y, labels, fontsize=7)
    ax.invert_yaxis()
    for yi, v in zip(y, values):
        ax.annotate(f"{v:+,.1f} kg" if v else "not active: 0 kg", (v, yi), xytext=(3, 0),
                    textcoords="offset points", va="center", fontsize=7)
    ax.set_xlabel("takeoff mass added by one step of the requirement [kg]")
    ax.set_title("what each requirement costs at the base point (sensitivity)", fontsize=9)
    return [bars]


def write_plots(result, out_dir) -> list:
    """Draw and write the figures of a study result; the written paths."""
    out = Path(out_dir)
    st, t = result.study, result.table
    written = []
    ok = (t["status"] == "optimal").to_numpy()
    title = st.title
    base = f"base: {st.base_file}"
    if st.mode == "sweep" and len(st.varied) == 1:
        v = st.varied[0]
        fig = _figure()
        ax = fig.add_subplot()
        mass_curve(t[v.path].to_numpy(), t["takeoff_mass_kg"].to_numpy(), list(t["drivers"]),
                   t["status"].to_numpy(), xlabel=_label(v.path, v.unit, st.base), ax=ax)
        ax.set_title(title, fontsize=10)
        _footer(fig, base)
        written.append(_save(fig, out / "mass.png"))
    elif st.mode == "sweep":
        va, vb = st.varied
        na, nb = st.shape
        n = len(t)
        if n == na * nb:
            shape = (na, nb)
            rows = na
        else:                      # a --limit run: whole rows only
            rows = n // nb
            shape = (rows, nb)
        if rows >= 1:
            k = rows * nb
            mass = t["takeoff_mass_kg"].to_numpy()[:k].reshape(shape)
            drv = np.asarray(t["drivers"].to_numpy()[:k], dtype=object).reshape(shape)
            a = t[va.path].to_numpy()[:k].reshape(shape)[:, 0]
            b = t[vb.path].to_numpy()[:k].reshape(shape)[0, :]
            la, lb = _label(va.path, va.unit, st.base), _label(vb.path, vb.unit, st.base)
            fig = _figure()
            ax = fig.add_subplot()
            carpet(a, b, mass, la, lb, drivers=drv, ax=ax)
            ax.set_title(title, fontsize=10)
            _footer(fig, base)
            written.append(_save(fig, out / "carpet.png"))
            fig = _figure()
            ax = fig.add_subplot()
            driver_map(a, b, mass, drv, la, lb, ax=ax)
            ax.set_title(f"{title}: which requirements drive", fontsize=10)
            _footer(fig, base)
            written.append(_save(fig, out / "drivers-map.png"))
        # mass against the first parameter, one line per value of the second
        fig = _figure()
        ax = fig.add_subplot()
        mass_family(t, va, vb, ax=ax)
        ax.set_title(title, fontsize=10)
        _footer(fig, base)
        written.append(_save(fig, out / "mass.png"))
    else:
        fig = _figure(figsize=(11.0, 5.0))
        ax1, ax2 = fig.subplots(1, 2, width_ratios=(3, 2))
        mass_distribution(t["takeoff_mass_kg"].to_numpy()[ok], len(t), result.feasible_fraction,
                          result.percentiles(), ax=ax1)
        ax1.set_title(title, fontsize=10)
        driver_frequency(list(t["drivers"]), t["status"].to_numpy(), ax=ax2)
        vary = "; ".join(f"{v.path} {_dist_text(st.distributions.get(v.path, {}))}" for v in st.varied)
        _footer(fig, f"{base}; seed {st.seed}; {vary}")
        written.append(_save(fig, out / "mass-distribution.png"))
    if result.base is not None and result.base.feasible:
        fig = _figure(figsize=(8.0, 1.6 + 0.35 * len(result.base.requirements)))
        ax = fig.add_subplot()
        costs(result.base.requirements, ax=ax)
        _footer(fig, base)
        written.append(_save(fig, out / "costs.png"))
    return written


def _dist_text(d):
    for k, v in d.items():
        if k != "unit":
            return f"{k}({', '.join(f'{x:g}' for x in v)}{' ' + d['unit'] if d.get('unit') else ''})"
    return ""


def mass_family(t, va, vb, ax=None):
    """Takeoff mass against the first parameter, one line per value of the second,
    each point coloured by its driving requirements."""
    from matplotlib import colormaps
    from matplotlib.lines import Line2D

    ax = ax if ax is not None else _figure().add_subplot()
    handles = []
    ok = (t["status"] == "optimal").to_numpy()
    names = _driver_sets(list(t["drivers"]), ok)
    col = _colours(names)
    grey = colormaps["Greys"]
    vals = list(dict.fromkeys(t[vb.path].to_numpy()))
    for k, bv in enumerate(vals):
        sel = (t[vb.path] == bv).to_numpy()
        x = t.loc[sel, va.path].to_numpy()
        m = t.loc[sel, "takeoff_mass_kg"].to_numpy()
        o = np.argsort(x, kind="stable")
        handles.append(ax.plot(x[o], m[o], "-", color=grey(0.35 + 0.6 * k / max(len(vals) - 1, 1)), lw=1.1)[0])
        j = np.flatnonzero(np.isfinite(m[o]))
        if j.size:
            handles.append(ax.annotate(f"{bv:g}", (x[o][j[-1]], m[o][j[-1]]), xytext=(3, 0),
                                       textcoords="offset points", fontsize=7, va="center"))
    for n in names:
        sel = ok & (t["drivers"] == n).to_numpy()
        handles.append(ax.scatter(t.loc[sel, va.path], t.loc[sel, "takeoff_mass_kg"], s=14, color=col[n],
                                  zorder=3, label=_driver_name(n)))
    leg = [Line2D([], [], color="0.5", label=f"lines: constant {_label(vb.path, vb.unit)} (labelled at the right)")]
    ax.legend(handles=leg + [h for h in handles if hasattr(h, "get_offsets")], fontsize=7,
              title="driving requirements", title_fontsize=7)
    ax.set_xlabel(_label(va.path, va.unit))
    ax.set_ylabel("takeoff mass [kg]")
    ax.grid(True, alpha=0.3)
    return handles

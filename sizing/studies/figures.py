"""The figures of a trade study, drawn to be read on a slide.

Each function takes the study's data and ``ax=None``, rejects unknown keywords
by signature and returns the artists it drew (matplotlib, Agg, never pyplot).

Conventions shared by every figure:

- a requirement id has the colour and marker it has on the constraint diagram
  (:func:`sizing.charts.style.styles_of`); a *set* of drivers is drawn in the
  colour of its first id with the second id's colour as the edge of its marker
  or the hatching of its cell, so no invented colour stands for a set;
- takeoff masses spread over more than a factor of three (a few samples far
  heavier than the rest) go on a logarithmic axis, said in the axis name;
- labels at line ends are spread apart so that none prints over another;
- nothing is drawn between samples that the study did not solve: the driver
  map shows each sample's cell with its mass written in it, no contour lines.
"""
from __future__ import annotations

import math

import numpy as np

from ..charts.style import DESIGN_COLOUR, MISSION_FUEL, NEUTRAL, PALETTE, driver_style

NONE_LABEL = "(no requirement active)"
# font sizes [pt] for a figure projected on a slide (8 in wide at 120 dpi)
FS = {"title": 12, "axis": 11, "tick": 10, "legend": 9, "note": 9, "label": 9}
HIST = "#b9c3cc"        # the histogram's bars: furniture, not a requirement's colour
ALL_SAMPLES = "#8c510a"  # percentiles over all samples (brown: furniture)
LOG_SPREAD = 3.0        # heaviest / median feasible mass above which the mass axis is logarithmic


def figure(figsize=(9.0, 6.0)):
    """A new Agg figure with constrained layout (no pyplot)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, layout="constrained")
    FigureCanvasAgg(fig)
    return fig


def driver_name(d) -> str:
    """A ';'-joined set of driving ids as a reader sees it: ``turn-4g + field``."""
    return d.replace(";", " + ") if d else NONE_LABEL


def set_style(name, styles):
    """(face colour, edge colour, marker) of a set of driving ids: its first id's colour and
    marker, the second id's colour as the edge (the face again for a single id); grey when
    nothing is active."""
    ids = [i for i in (name or "").split(";") if i]
    if not ids:
        return "0.75", "0.45", "o"
    first = driver_style(styles, ids[0])
    edge = driver_style(styles, ids[1]).colour if len(ids) > 1 else first.colour
    return first.colour, edge, first.marker


def driver_sets(drivers, ok) -> list:
    """The distinct driver sets of the feasible points, in order of first appearance."""
    names = []
    for d, good in zip(drivers, ok):
        if good and d not in names:
            names.append(d)
    return names


def mass_axis(ax, masses, axis="y") -> bool:
    """A logarithmic takeoff-mass axis when the heaviest feasible mass is more than
    :data:`LOG_SPREAD` times the median (outliers would flatten the rest); True if so."""
    m = np.asarray(masses, float)
    m = m[np.isfinite(m) & (m > 0)]
    log = bool(m.size >= 3 and m.max() > LOG_SPREAD * np.median(m))
    name = "takeoff mass [kg]" + (", logarithmic scale" if log else "")
    if axis == "y":
        ax.set_ylabel(name, fontsize=FS["axis"])
        if log:
            ax.set_yscale("log")
    else:
        ax.set_xlabel(name, fontsize=FS["axis"])
        if log:
            ax.set_xscale("log")
    if log:
        from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter

        a = ax.yaxis if axis == "y" else ax.xaxis
        a.set_major_locator(LogLocator(base=10, subs=(1.0, 2.0, 5.0)))
        a.set_major_formatter(FuncFormatter(lambda v, _p: f"{v:,.0f}"))
        a.set_minor_formatter(NullFormatter())
    return log


def spread_labels(ax, items, side="right", gap_pt=None):
    """End labels that never overprint: ``items`` are (x, y, text, colour) in data
    coordinates; labels of points that coincide are joined into one ("550, 600"), and
    each label is placed beside its point, the stack pushed apart to at least one line
    height and kept inside the axes, with a thin leader where a label moved."""
    if not items:
        return []
    fig = ax.figure
    fig.canvas.draw()                  # the final layout, so that display positions hold
    gap = (gap_pt or 1.3 * FS["label"]) * fig.dpi / 72.0
    groups = []                        # [[x, y, display point, texts, colour]]
    for x, y, text, colour in items:
        pt = ax.transData.transform((x, y))
        for g in groups:
            if abs(g[2][0] - pt[0]) < 2 and abs(g[2][1] - pt[1]) < 2:
                g[3].append(text)
                break
        else:
            groups.append([x, y, pt, [text], colour])
    groups.sort(key=lambda g: g[2][1])
    ys = [g[2][1] for g in groups]
    placed = []
    for y in ys:                                    # push up past the one below
        placed.append(max(y, placed[-1] + gap) if placed else y)
    placed = [p - (placed[-1] - ys[-1]) / 2 for p in placed] if len(placed) > 1 else placed   # centred
    (_x0, low), (_x1, high) = ax.transAxes.transform((0, 0)), ax.transAxes.transform((1, 1))
    top = high - gap / 2
    if placed and placed[-1] > top:                 # keep the stack inside the axes
        placed = [p - (placed[-1] - top) for p in placed]
    if placed and placed[0] < low + gap / 2:
        placed = [p + (low + gap / 2 - placed[0]) for p in placed]
    for k in range(1, len(placed)):
        placed[k] = max(placed[k], placed[k - 1] + gap)
    out = []
    dx = 7 if side == "right" else -7
    for (x, y, pt, texts, colour), y_new in zip(groups, placed):
        dy = (y_new - pt[1]) * 72.0 / fig.dpi
        arrow = dict(arrowstyle="-", color=colour, lw=0.6, shrinkA=0, shrinkB=3) if abs(dy) > 2 else None
        text = ", ".join(texts) + (" (lines meet)" if len(texts) > 1 else "")
        out.append(ax.annotate(text, (x, y), xytext=(dx, dy), textcoords="offset points", fontsize=FS["label"],
                               color=colour, va="center", ha="left" if side == "right" else "right",
                               arrowprops=arrow, annotation_clip=False))
    return out


def _style_axes(ax, xlabel=None):
    ax.tick_params(labelsize=FS["tick"])
    if xlabel is not None:
        ax.set_xlabel(xlabel, fontsize=FS["axis"])
    ax.grid(True, alpha=0.3)


def mass_curve(x, mass, drivers, status, xlabel="", styles=None, ax=None):
    """Takeoff mass against one parameter; each point in the style of its driving requirements
    (the legend names them), infeasible points marked along the bottom edge."""
    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    x, mass = np.asarray(x, float), np.asarray(mass, float)
    ok = np.asarray(status) == "optimal"
    order = np.argsort(x, kind="stable")
    x, mass, ok = x[order], mass[order], ok[order]
    drivers = [drivers[i] for i in order]
    handles = [ax.plot(x[ok], mass[ok], color="0.6", lw=1.2, zorder=1)[0]]
    for d in driver_sets(drivers, ok):
        sel = ok & np.array([k == d for k in drivers])
        face, edge, marker = set_style(d, styles)
        handles.append(ax.plot(x[sel], mass[sel], ls="none", marker=marker, ms=8, mfc=face, mec=edge, mew=1.3,
                               label=driver_name(d), zorder=3)[0])
    log = mass_axis(ax, mass[ok])
    if (~ok).any():
        lo = np.nanmin(mass[ok]) if ok.any() else 1.0
        handles.append(ax.plot(x[~ok], np.full((~ok).sum(), lo * (0.97 if log else 1.0)), "x", color="0.15", ms=8,
                               label="no feasible design", zorder=3)[0])
    _style_axes(ax, xlabel)
    if handles[1:]:
        ax.legend(fontsize=FS["legend"], title="driving requirements", title_fontsize=FS["legend"])
    return handles


def mass_family(x, b, mass, drivers, status, xlabel="", blabel="", styles=None, ax=None):
    """Takeoff mass against the first parameter, one grey line per value of the second
    (labelled at its right end, spread apart), each point in its drivers' style."""
    from matplotlib import colormaps

    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    x, b, mass = np.asarray(x, float), np.asarray(b, float), np.asarray(mass, float)
    ok = np.asarray(status) == "optimal"
    drivers = list(drivers)
    grey = colormaps["Greys"]
    vals = list(dict.fromkeys(b.tolist()))
    handles, ends = [], []
    for k, bv in enumerate(vals):
        sel = np.flatnonzero(b == bv)
        o = sel[np.argsort(x[sel], kind="stable")]
        c = grey(0.35 + 0.6 * k / max(len(vals) - 1, 1))
        handles.append(ax.plot(x[o], np.where(ok[o], mass[o], np.nan), "-", color=c, lw=1.2)[0])
        j = [i for i in o if ok[i]]
        if j:
            ends.append((x[j[-1]], mass[j[-1]], f"{bv:g}", "0.2"))
    for d in driver_sets(drivers, ok):
        sel = ok & np.array([k == d for k in drivers])
        face, edge, marker = set_style(d, styles)
        handles.append(ax.plot(x[sel], mass[sel], ls="none", marker=marker, ms=7.5, mfc=face, mec=edge, mew=1.2,
                               label=driver_name(d), zorder=3)[0])
    mass_axis(ax, mass[ok])
    _style_axes(ax, xlabel)
    from matplotlib.lines import Line2D

    key = [Line2D([], [], color="0.5", label=f"lines: constant {blabel},\nvalue at the right end")]
    ax.legend(handles=key + handles[len(vals):], fontsize=FS["legend"], title="driving requirements",
              title_fontsize=FS["legend"])
    ax.margins(x=0.08)
    handles += spread_labels(ax, ends, "right")
    return handles


def carpet(a, b, mass, a_label="", b_label="", drivers=None, styles=None, ax=None, offset=0.5):
    """Carpet plot: takeoff mass over two parameters as a sheared grid of lines.

    a, b: the two axes' values (lengths na, nb); mass: (na, nb). Lines of constant ``a``
    (solid, labelled at their right ends) and of constant ``b`` (dashed, at their left
    ends); the horizontal position is the carpet's own (index of a plus ``offset`` times
    index of b) and carries no scale. Nodes in the style of their driving requirements.
    """
    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    mass = np.asarray(mass, float)
    na, nb = mass.shape
    ia, ib = np.meshgrid(np.arange(na) / max(na - 1, 1), np.arange(nb) / max(nb - 1, 1), indexing="ij")
    X = ia + offset * ib
    handles, right, left = [], [], []
    for i in range(na):
        handles.append(ax.plot(X[i], mass[i], color="0.25", lw=1.3)[0])
        j = np.flatnonzero(np.isfinite(mass[i]))
        if j.size:
            right.append((X[i, j[-1]], mass[i, j[-1]], f"{a[i]:g}", "0.2"))
    for k in range(nb):
        handles.append(ax.plot(X[:, k], mass[:, k], color="0.55", lw=1.3, ls="--")[0])
        i = np.flatnonzero(np.isfinite(mass[:, k]))
        if i.size:
            left.append((X[i[0], k], mass[i[0], k], f"{b[k]:g}", "0.4"))
    key = []
    if drivers is not None:
        d = np.asarray(drivers, dtype=object)
        ok = np.isfinite(mass)
        for n in driver_sets(d.ravel(), ok.ravel()):
            sel = ok & (d == n)
            face, edge, marker = set_style(n, styles)
            key.append(ax.plot(X[sel], mass[sel], ls="none", marker=marker, ms=8, mfc=face, mec=edge, mew=1.2,
                               zorder=3, label=driver_name(n))[0])
    from matplotlib.lines import Line2D

    key += [Line2D([], [], color="0.25", label=f"constant {a_label}\n(value at the right end)"),
            Line2D([], [], color="0.55", ls="--", label=f"constant {b_label}\n(value at the left end)")]
    ax.legend(handles=key, fontsize=FS["legend"], loc="upper left", title="driving requirements",
              title_fontsize=FS["legend"])
    ax.set_xticks([])
    ax.set_xlabel(f"carpet of {a_label} and {b_label}\n(the horizontal position has no scale)", fontsize=FS["axis"])
    mass_axis(ax, mass[np.isfinite(mass)])
    ax.tick_params(labelsize=FS["tick"])
    ax.grid(True, axis="y", alpha=0.3)
    ax.margins(x=0.1)
    handles += key + spread_labels(ax, right, "right") + spread_labels(ax, left, "left")
    return handles


def _edges(v):
    """Cell edges around sorted sample values (midpoints; half a step beyond the ends)."""
    v = np.asarray(v, float)
    if v.size == 1:
        return np.array([v[0] - 0.5, v[0] + 0.5]) if v[0] == 0 else np.array([v[0] * 0.95, v[0] * 1.05])
    mid = (v[1:] + v[:-1]) / 2
    return np.concatenate([[v[0] - (mid[0] - v[0])], mid, [v[-1] + (v[-1] - mid[-1])]])


def driver_map(a, b, mass, drivers, a_label="", b_label="", styles=None, ax=None):
    """Which requirements drive, over two parameters: one cell per solved sample in the style
    of its drivers (a set: the first id's colour hatched with the second's), its takeoff mass
    written in it; no lines are interpolated between samples."""
    from matplotlib.patches import Patch, Rectangle
    from matplotlib.patheffects import withStroke

    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    mass = np.asarray(mass, float)
    d = np.asarray(drivers, dtype=object)
    a, b = np.asarray(a, float), np.asarray(b, float)
    ia, ib = np.argsort(a), np.argsort(b)
    ea, eb = _edges(a[ia]), _edges(b[ib])
    ok = np.isfinite(mass)
    names = driver_sets(d.ravel(), ok.ravel())
    write = mass.size <= 160
    tonnes = np.nanmax(mass, initial=0.0) >= 10000
    handles = []
    for r, i in enumerate(ia):
        for c, j in enumerate(ib):
            x0, y0, w, h = eb[c], ea[r], eb[c + 1] - eb[c], ea[r + 1] - ea[r]
            if ok[i, j]:
                face, edge, _m = set_style(d[i, j], styles)
                multi = ";" in (d[i, j] or "")
                handles.append(ax.add_patch(Rectangle((x0, y0), w, h, facecolor=face, alpha=0.85, lw=0.4,
                                                      edgecolor="white", hatch="///" if multi else None,
                                                      hatchcolor=edge if multi else None)))
                if write:
                    txt = f"{mass[i, j] / 1000:.1f} t" if tonnes else f"{mass[i, j]:,.0f}"
                    handles.append(ax.text(x0 + w / 2, y0 + h / 2, txt, ha="center", va="center",
                                           fontsize=FS["label"], color="white", fontweight="bold",
                                           path_effects=[withStroke(linewidth=2.2, foreground="0.1")]))
            else:
                handles.append(ax.add_patch(Rectangle((x0, y0), w, h, facecolor="white", edgecolor="0.8", lw=0.4)))
                handles.append(ax.text(x0 + w / 2, y0 + h / 2, "x", ha="center", va="center", color="0.15",
                                       fontsize=FS["label"]))
    ax.set_xlim(eb[0], eb[-1])
    ax.set_ylim(ea[0], ea[-1])
    patches = []
    for n in names:
        face, edge, _m = set_style(n, styles)
        multi = ";" in (n or "")
        patches.append(Patch(facecolor=face, edgecolor=edge if multi else face, hatch="///" if multi else None,
                             label=driver_name(n)))
    if (~ok).any():
        patches.append(Patch(facecolor="white", edgecolor="0.6", label="x: no feasible design"))
    if patches:
        ax.legend(handles=patches, fontsize=FS["legend"], title="driving requirements",
                  title_fontsize=FS["legend"], loc="upper left", bbox_to_anchor=(1.01, 1.0))
    unit = "t" if tonnes else "kg"
    note = (f"each cell: one solved sample, its takeoff mass [{unit}] written in it; nothing between samples "
            "is interpolated" if write else "each cell: one solved sample; takeoff masses in results.csv")
    handles.append(ax.set_title(note, fontsize=FS["note"], color="0.3"))
    ax.tick_params(labelsize=FS["tick"])
    ax.set_xlabel(b_label, fontsize=FS["axis"])
    ax.set_ylabel(a_label, fontsize=FS["axis"])
    return handles


def mass_distribution(mass, status, percentiles_feasible, percentiles_all, feasible_fraction, base_mass=None,
                      ax=None):
    """Histogram of the feasible takeoff masses with the cumulative share of all samples, the
    percentiles over feasible samples and over all samples (infeasible counted heavier than
    any design; "not reached" where a percentile lands among them), and the base design."""
    ax = ax if ax is not None else figure().add_subplot()
    m = np.asarray(mass, float)
    status = np.asarray(status)
    feas = m[(status == "optimal") & np.isfinite(m)]
    n_verdict = int(((status == "optimal") | (status == "infeasible")).sum())
    handles = []
    log = mass_axis(ax, feas, axis="x")
    if feas.size:
        nb = min(60, max(10, int(math.sqrt(feas.size))))
        bins = np.geomspace(feas.min(), feas.max(), nb + 1) if log else nb
        handles.append(ax.hist(feas, bins=bins, color=HIST, label="feasible samples")[2])
    ax.set_ylabel("samples per bin", fontsize=FS["axis"])
    ax.set_ylim(0, ax.get_ylim()[1] * 1.22)          # room for the note above the bars
    styles = {"feasible": ("0.45", ":", "-", "--"), "all": (ALL_SAMPLES, ":", "-", "--")}
    for basis, pc, tag in (("feasible", percentiles_feasible, "of feasible samples"),
                           ("all", percentiles_all, "of all samples")):
        colour, *ls = styles[basis]
        for (k, v), line in zip(pc.items(), ls + ["-."] * 4):
            if v is not None and math.isfinite(v):
                handles.append(ax.axvline(v, color=colour, ls=line, lw=1.4 if basis == "all" else 1.0,
                                          label=f"P{k} {tag}: {v:,.0f} kg"))
            else:
                handles.append(ax.plot([], [], color=colour, ls=line, label=f"P{k} {tag}: not reached "
                                       f"(no design in {100 - k} % of samples)")[0])
    if base_mass is not None and math.isfinite(base_mass):
        handles.append(ax.axvline(base_mass, color=DESIGN_COLOUR, lw=2.6, label=f"base design: {base_mass:,.0f} kg"))
    cum = ax.twinx()
    if feas.size and n_verdict:
        s = np.sort(feas)
        share = 100.0 * np.arange(1, s.size + 1) / n_verdict
        handles.append(cum.step(s, share, where="post", color=NEUTRAL, lw=2.0,
                                label="cumulative share of all samples")[0])
    cum.set_ylim(0, 100)
    cum.set_ylabel("samples at or below this mass [% of all samples]", fontsize=FS["axis"])
    cum.tick_params(labelsize=FS["tick"])
    n_ok = feas.size
    se = (math.sqrt(max(feasible_fraction * (1 - feasible_fraction), 0.0) / n_verdict) if n_verdict
          else float("nan"))
    txt = (f"P(requirement set feasible) = {100 * feasible_fraction:.1f} % (+/- {100 * 1.96 * se:.1f} %, "
           f"95 % binomial)\n{n_ok:,} of {len(m):,} samples feasible; the cumulative curve ends at that share")
    handles.append(ax.text(0.01, 0.99, txt, transform=ax.transAxes, va="top", fontsize=FS["note"],
                           bbox=dict(facecolor="white", alpha=0.85, edgecolor="0.7"), zorder=5))
    lines = ax.get_legend_handles_labels()
    extra = cum.get_legend_handles_labels()
    ax.legend(lines[0] + extra[0], lines[1] + extra[1], fontsize=FS["legend"], loc="upper center",
              bbox_to_anchor=(0.5, -0.13), ncol=2, frameon=False)
    ax.tick_params(labelsize=FS["tick"])
    ax.grid(True, alpha=0.3)
    return handles


def driver_frequency(drivers, status, styles=None, ax=None):
    """Share of all samples driven by each set of requirements (horizontal bars in the sets'
    styles), the infeasible share as its own bar."""
    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    status = np.asarray(status)
    ok = status == "optimal"
    names, counts = np.unique(np.asarray(drivers, dtype=object)[ok].astype(str), return_counts=True)
    labels, values, faces, edges = [], [], [], []
    for i in np.argsort(counts):
        face, edge, _m = set_style(names[i], styles)
        labels.append(driver_name(names[i]))
        values.append(counts[i])
        faces.append(face)
        edges.append(edge)
    n_inf = int((status == "infeasible").sum())
    if n_inf:
        labels.insert(0, "no feasible design")
        values.insert(0, n_inf)
        faces.insert(0, "white")
        edges.insert(0, "0.2")
    n = max(len(status), 1)
    share = 100.0 * np.asarray(values, float) / n
    bars = ax.barh(labels, share, color=faces, edgecolor=edges, linewidth=2.0,
                   hatch=["///" if "+" in lab else None for lab in labels])
    for y, v in enumerate(share):
        ax.annotate(f"{v:.1f} %", (v, y), xytext=(3, 0), textcoords="offset points", va="center",
                    fontsize=FS["label"])
    ax.set_xlabel("share of all samples [%]", fontsize=FS["axis"])
    ax.set_title("driving requirements", fontsize=FS["title"] - 1)
    ax.tick_params(labelsize=FS["tick"])
    ax.margins(x=0.15)
    return [bars]


def influence(rows, names=None, ax=None):
    """Which uncertain inputs move takeoff mass most: Spearman's rank correlation of each input
    with takeoff mass over all samples (infeasible ranked heaviest), sorted bars."""
    ax = ax if ax is not None else figure().add_subplot()
    names = names or {}
    rows = [(p, r) for p, r in rows if math.isfinite(r)][::-1]
    labels = [names.get(p, p) for p, _r in rows]
    vals = np.array([r for _p, r in rows], float)
    bars = ax.barh(labels, vals, color=[ALL_SAMPLES if v > 0 else "0.55" for v in vals])
    for y, v in enumerate(vals):
        ax.annotate(f"{v:+.2f}", (v, y), xytext=(4 if v >= 0 else -4, 0), textcoords="offset points",
                    va="center", ha="left" if v >= 0 else "right", fontsize=FS["label"])
    ax.axvline(0, color="0.3", lw=0.8)
    ax.set_xlim(-1.15, 1.15)
    ax.set_xlabel("Spearman rank correlation with takeoff mass [-]\n(+: larger input, heavier design; "
                  "infeasible samples ranked heaviest)", fontsize=FS["axis"] - 1)
    ax.set_title("which uncertain inputs move takeoff mass most", fontsize=FS["title"])
    ax.tick_params(labelsize=FS["tick"])
    ax.grid(True, axis="x", alpha=0.3)
    return [bars]


def costs(requirements, styles=None, ax=None):
    """Bar chart of what a step of each requirement costs at the base point (kg): the step
    re-solved where the result has it (:mod:`sizing.problem.steps`), in the requirement's
    colour; requirements that are not active and whose step costs nothing show their margin."""
    from ..reports.summary import cost_step, fraction_margin, step_reaches

    ax = ax if ax is not None else figure().add_subplot()
    styles = styles or {}
    labels, values, colours, notes = [], [], [], []
    for r in requirements:
        c = cost_step(r)
        if c is not None and (r.active or step_reaches(r)):
            labels.append(f"{c[0]} on {r.id}" + ("" if r.active else " (not active now)"))
            values.append(c[1] if c[1] is not None else 0.0)
            sc = getattr(r, "step_cost", None)
            notes.append("no feasible design after this step" if c[1] is None else
                         f"{c[1]:+,.1f} kg" + (" (non-linear)" if sc is not None and sc.nonlinear else ""))
            colours.append(driver_style(styles, r.id).colour if styles else PALETTE[1])
        else:
            labels.append(f"{r.id} ({fraction_margin(r)})" if math.isfinite(r.margin) else r.id)
            values.append(0.0)
            notes.append("not active: 0 kg")
            colours.append("0.6")
    y = np.arange(len(labels))
    bars = ax.barh(y, values, color=colours)
    ax.set_yticks(y, labels, fontsize=FS["tick"])
    ax.invert_yaxis()
    for yi, v, note in zip(y, values, notes):
        ax.annotate(note, (v, yi), xytext=(3, 0), textcoords="offset points", va="center", fontsize=FS["label"])
    ax.margins(x=0.32 if any("non-linear" in n for n in notes) else 0.18)   # room for the longest note
    ax.set_xlabel("takeoff mass added by a step of the requirement (about 3 % of its value) [kg]",
                  fontsize=FS["axis"])
    ax.set_title("what a step of each requirement costs at the base point (re-solved)", fontsize=FS["title"] - 1)
    ax.tick_params(axis="x", labelsize=FS["tick"])
    return [bars]


__all__ = ["FS", "MISSION_FUEL", "NEUTRAL", "carpet", "costs", "driver_frequency", "driver_map", "driver_name",
           "driver_sets", "figure", "influence", "mass_axis", "mass_curve", "mass_distribution", "mass_family",
           "set_style", "spread_labels"]

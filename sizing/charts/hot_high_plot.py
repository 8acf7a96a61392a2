"""Drawing of the WAT chart (:class:`sizing.charts.hot_high.WatChart`); no physics here."""
from __future__ import annotations

import numpy as np

from ..common.caution import CAUTION
from ..common.conversions import FT
from .files import write_chart
from .hot_high import ZERO_C, WatChart
from .style import MARKERS, add_footer, figure_bytes, new_axes

_OPTIONS = ("title", "caution")
# elevations are ordered: light to dark grey-brown (the palette's colours belong to the requirement ids)
_ELEVATION = ("#c9b79c", "#a88f6a", "#87693f", "#64481f", "#3f2a0c", "#1f1405")


def plot_wat(chart: WatChart, ax=None, **kwargs):
    """Draw a WAT chart: the largest takeoff mass over outside air temperature, one line per
    airfield elevation, markers by the limiting requirement, the design takeoff mass, and on the
    right axis the payload available with the design fuel.

    Keywords: title (str), caution (notes and caution under the axes, default True).
    Returns a dict of handles: figure, ax, lines {elevation: Line2D}, marks, design, legend, caution.
    """
    bad = set(kwargs) - set(_OPTIONS)
    if bad:
        raise TypeError(f"plot_wat() got unknown keyword(s) {', '.join(sorted(bad))}; valid: {', '.join(_OPTIONS)}")
    opt = {"title": None, "caution": True, **kwargs}
    if ax is None:
        ax = new_axes(figsize=(10.0, 6.4), rect=(0.09, 0.2, 0.78, 0.66))
    fig = ax.figure
    h = {"figure": fig, "ax": ax, "lines": {}, "marks": {}}
    marker = {rid: (chart.styles[rid].marker if rid in chart.styles else MARKERS[i % len(MARKERS)])
              for i, rid in enumerate(chart.requirements)}
    idcol = {rid: (chart.styles[rid].colour if rid in chart.styles else "#444444") for rid in chart.requirements}
    n_el = len(chart.elevations)
    finite = [m for _, ms, _ in chart.curves for m in ms if np.isfinite(m) and m > 0]
    lo, hi = min(finite + [chart.design_mass]), max(finite + [chart.design_mass])
    pad = 0.08 * (hi - lo or chart.design_mass)
    ax.set_ylim(lo - pad, hi + pad + 0.45 * (hi - lo or chart.design_mass))      # headroom for the legend
    t0, t1 = min(chart.temperatures) - ZERO_C, max(chart.temperatures) - ZERO_C
    ax.set_xlim(t0 - 0.03 * (t1 - t0 or 10.0), t1 + 0.16 * (t1 - t0 or 10.0))     # room for the line names
    for i, (h_el, (T, m, by)) in enumerate(zip(chart.elevations, chart.curves)):
        col = _ELEVATION[min(int(round(i * (len(_ELEVATION) - 1) / max(n_el - 1, 1))), len(_ELEVATION) - 1)]
        x = T - ZERO_C
        (ln,) = ax.plot(x, np.where(np.isfinite(m) & (m > 0), m, np.nan), color=col, lw=1.8, zorder=3,
                        label=f"{h_el / FT:,.0f} ft ({h_el:,.0f} m)")
        h["lines"][h_el] = ln
        table_T = set(chart.temperatures)
        for xt, mt, rid in zip(x, m, by):
            if xt + ZERO_C in table_T and np.isfinite(mt) and mt > 0 and rid:
                ax.plot([xt], [mt], marker[rid], ms=7.5, mfc="white", mec=idcol[rid], mew=1.6, zorder=4)
        ax.annotate(f"{h_el / FT:,.0f} ft", (x[-1], m[-1]), xytext=(5, 0), textcoords="offset points", fontsize=8,
                    color=col, va="center", annotation_clip=False)
    h["design"] = ax.axhline(chart.design_mass, color="#111111", lw=1.2, ls="--", zorder=2,
                             label=f"design takeoff mass {chart.design_mass:,.0f} kg (structural maximum)")
    if chart.design_mass - chart.payload > ax.get_ylim()[0]:
        ax.axhspan(ax.get_ylim()[0], chart.design_mass - chart.payload, color="#f3e3e3", zorder=0, lw=0)
        ax.annotate("shaded: no payload with the design fuel (fuel must be offloaded)", (0.5, 0.0),
                    xycoords="axes fraction", xytext=(0, 4), textcoords="offset points", fontsize=7.5, ha="center",
                    va="bottom", color="#8a3a3a")
    limiting = {c.limited_by for c in chart.cells if c.limited_by}
    for rid, mk in ((r, mk) for r, mk in marker.items() if r in limiting):
        ax.plot([], [], mk, ms=7.5, mfc="white", mec=idcol[rid], mew=1.6, ls="none", label=f"limited by {rid}")
    ax.set_xlabel("outside air temperature [°C]")
    ax.set_ylabel("largest takeoff mass [kg]")
    ax.secondary_xaxis("top", functions=(lambda c: c * 1.8 + 32.0, lambda f: (f - 32.0) / 1.8)).set_xlabel(
        "outside air temperature [°F]", fontsize=9)
    off = chart.design_mass - chart.payload
    right = ax.secondary_yaxis("right", functions=(lambda m: m - off, lambda p: p + off))
    right.set_ylabel("payload with the design fuel [kg]", fontsize=9)
    from matplotlib.ticker import MaxNLocator

    y0, y1 = ax.get_ylim()
    count = int(8 * chart.payload / (y1 - y0))       # ticks only over the payload, as many as fit
    ticks = [0.0, chart.payload] if count < 3 else \
        [t for t in MaxNLocator(count).tick_values(0.0, chart.payload) if 0.0 <= t <= chart.payload + 1e-9]
    right.set_yticks(ticks)
    ax.grid(True, color="#e2e2e2", lw=0.5, zorder=-1)
    h["legend"] = ax.legend(loc="upper right", ncol=2, fontsize=7.5, framealpha=0.92, title="airfield elevation",
                            title_fontsize=7.5)
    ax.set_title(opt["title"] or f"{chart.title}: hot-and-high limits (WAT)\nlargest takeoff mass meeting "
                 f"{', '.join(chart.requirements)}; sized wing and engine, elevation at standard pressure",
                 fontsize=10, pad=24)
    if opt["caution"]:
        h["caution"] = add_footer(ax, [f"Note: {t}." for t in chart.notes] + [CAUTION])
    return h


def render(chart: WatChart, fmt="png", dpi=150, **kwargs) -> bytes:
    fig = plot_wat(chart, **kwargs)["figure"]
    try:
        return figure_bytes(fig, fmt, dpi, tight=True)
    finally:
        fig.clear()


def write_wat(chart: WatChart, output, data=None) -> list:
    return write_chart(lambda fmt: render(chart, fmt), output, chart.to_frame() if data else None, data,
                       (f"{chart.title}: hot-and-high limits (WAT); largest takeoff mass meeting "
                        f"{', '.join(chart.requirements)}; design takeoff mass {chart.design_mass:.1f} kg",))


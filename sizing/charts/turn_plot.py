"""Drawing of the turn chart (:class:`sizing.charts.turn.TurnChart`); no physics here."""
from __future__ import annotations

import numpy as np

from ..common.caution import CAUTION, LOADS_CAUTION
from ..common.conversions import FT, KN
from .envelope import nice_step
from .files import write_chart
from .style import DPI, FEASIBLE_FILL, add_footer, figure_bytes
from .turn import DEG, TurnChart

_OPTIONS = ("contours", "title", "caution")
_SUSTAINED = "#7b4a12"        # chart furniture in black and brown: the palette belongs to the requirement ids


def plot_turn(chart: TurnChart, axes=None, **kwargs):
    """Draw a turn chart: one panel per altitude with the sustained and instantaneous boundaries,
    Ps contours, lines of constant load factor and radius, the corner speed, the best rates and
    the turn requirements flown there.

    Keywords: contours (Ps contours, default True), title (str), caution (notes and caution
    under the panels, default True). axes: a sequence of matplotlib Axes, one per altitude, or
    None for a new figure. Returns a dict of handles: figure, axes, sustained {altitude: Line2D},
    instantaneous, corner, best, points, labels, caution.
    """
    bad = set(kwargs) - set(_OPTIONS)
    if bad:
        raise TypeError(f"plot_turn() got unknown keyword(s) {', '.join(sorted(bad))}; valid: {', '.join(_OPTIONS)}")
    opt = {"contours": True, "title": None, "caution": True, **kwargs}
    k = len(chart.levels)
    if axes is None:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure

        fig = Figure(figsize=(1.4 + 5.2 * k, 6.4), dpi=DPI)
        FigureCanvasAgg(fig)
        axes = fig.subplots(1, k, sharey=True, squeeze=False)[0]
        fig.subplots_adjust(left=0.9 / (1.4 + 5.2 * k) + 0.02, right=0.98, top=0.74, bottom=0.17, wspace=0.08)
    fig = axes[0].figure
    h = {"figure": fig, "axes": list(axes), "sustained": {}, "instantaneous": {}, "corner": {}, "best": {},
         "points": {}, "labels": []}
    top = max(float(np.nanmax(lv.instantaneous)) for lv in chart.levels) * DEG * 1.12
    for ax, lv in zip(axes, chart.levels):
        Mn = lv.mach
        ax.set_xlim(Mn[0] - 0.02 * (Mn[-1] - Mn[0]), Mn[-1] + 0.02 * (Mn[-1] - Mn[0]))
        ax.set_ylim(0.0, top)
        inst, sust = lv.instantaneous * DEG, lv.sustained * DEG
        ax.fill_between(Mn, 0.0, inst, color=FEASIBLE_FILL, lw=0, zorder=0)
        if opt["contours"] and np.isfinite(lv.ps).any():
            span = float(np.nanmax(np.abs(lv.ps)))
            step = nice_step(span, 6)
            levels = [v for v in np.arange(-np.floor(span / step) * step, span, step) if abs(v) > 1e-9]
            if levels:
                cs = ax.contour(Mn, lv.rate_grid * DEG, lv.ps, levels=levels, colors="#9aa5b1", linewidths=0.6,
                                zorder=1)
                ax.clabel(cs, fmt=lambda v: f"{v:+g}", fontsize=6.5, inline=True)
        for n, w in lv.n_lines.items():
            ax.plot(Mn, w * DEG, color="#b0b0b0", lw=0.6, ls=(0, (4, 3)), zorder=1)
            j = int(np.nanargmax(np.where(w * DEG < top * 0.97, Mn, -np.inf)))
            h["labels"].append(ax.annotate(f"{n:g} g", (Mn[j], w[j] * DEG), xytext=(-2, 2), textcoords="offset points",
                                           fontsize=7, color="#8a8a8a", ha="right", va="bottom"))
        for R, w in lv.radius_lines.items():
            y = w * DEG
            if not (y < top).any():
                continue
            ax.plot(Mn, y, color="#c9b27c", lw=0.6, ls=(0, (1, 2)), zorder=1)
            j = int(np.argmax(y >= top * 0.9)) if (y >= top * 0.9).any() else len(y) - 1
            h["labels"].append(ax.annotate(f"R {R / 1000:g} km", (Mn[j], y[j]), xytext=(2, -2), textcoords="offset points",
                                           fontsize=7, color="#9c8446", ha="left", va="top"))
        (h["instantaneous"][lv.altitude],) = ax.plot(Mn, inst, color="#111111", lw=1.8, zorder=4,
                                                      label="instantaneous (CLmax, then limit n)")
        (h["sustained"][lv.altitude],) = ax.plot(Mn, sust, color=_SUSTAINED, lw=2.2, zorder=5,
                                                  label="sustained (Ps = 0)")
        if lv.corner is not None:
            m, V, w = lv.corner
            ax.axvline(m, color="#555555", lw=0.7, ls=":", zorder=2)
            (h["corner"][lv.altitude],) = ax.plot([m], [w * DEG], "D", ms=7, mfc="white", mec="#111111", zorder=6,
                                                   label="corner speed")
            h["labels"].append(ax.annotate(f"corner M {m:.2f}\n{V / KN:,.0f} kn, {w * DEG:.1f} deg/s", (m, w * DEG),
                                           xytext=(6, 4), textcoords="offset points", fontsize=7.5, va="bottom",
                                           bbox={"fc": "white", "ec": "none", "alpha": 0.8, "boxstyle": "round,pad=0.15"}))
        r, m, n = lv.best_sustained
        if np.isfinite(r):
            (h["best"][lv.altitude],) = ax.plot([m], [r * DEG], "o", ms=7, mfc=_SUSTAINED, mec="white", zorder=6,
                                                 label="best sustained rate")
            x0, x1 = ax.get_xlim()
            left = (m - x0) / (x1 - x0) > 0.4         # room on the left of the point, else below right
            h["labels"].append(ax.annotate(f"best sustained {r * DEG:.1f} deg/s\nM {m:.2f}, {n:.2f} g", (m, r * DEG),
                                           xytext=(-8, 0) if left else (6, -24), textcoords="offset points",
                                           fontsize=7.5, color=_SUSTAINED, ha="right" if left else "left",
                                           va="center" if left else "top",
                                           bbox={"fc": "white", "ec": "none", "alpha": 0.8, "boxstyle": "round,pad=0.15"}))
        for i, (rid, m, w, n, _text) in enumerate(lv.points):
            st = chart.styles.get(rid)
            (h["points"][rid],) = ax.plot([m], [w * DEG], "X", ms=10, mfc=st.colour if st else "#444444", mec="black",
                                          mew=0.7, zorder=7, label=f"{rid}: {n:g} g required ({_text.split('; ')[-1]})")
        alt = "sea level" if lv.altitude == 0 else f"{lv.altitude / FT:,.0f} ft ({lv.altitude / 1000:,.1f} km)"
        ax.set_title(alt, fontsize=10)
        ax.set_xlabel("Mach number")
        ax.grid(True, color="#e4e4e4", lw=0.5, zorder=-1)
        a = lv.speed[0] / lv.mach[0]
        sec = ax.secondary_xaxis("top", functions=(lambda x, a=a: x * a / KN, lambda v, a=a: v * KN / a))
        sec.tick_params(labelsize=8)
        sec.set_xlabel("true airspeed [kn]", fontsize=8.5)
    axes[0].set_ylabel("turn rate [deg/s]")
    seen = {}
    for ax in axes:
        for ln, lab in zip(*ax.get_legend_handles_labels()):
            seen.setdefault(lab, ln)
    h["legend"] = fig.legend(list(seen.values()), list(seen), loc="lower center", bbox_to_anchor=(0.5, 0.835),
                             ncol=min(len(seen), 6), fontsize=7.5, frameon=False)
    fig.suptitle(opt["title"] or f"{chart.title}: turn performance at weight fraction {chart.weight_fraction:.2f}\n"
                 f"standard day, clean, full throttle; limit load factor {chart.n_limit:.2f} g; grey dashed: constant "
                 f"load factor, dotted: constant radius, thin solid: Ps [m/s]", fontsize=10)
    if opt["caution"]:
        h["caution"] = add_footer(axes[0], [f"Note: {t}." for t in chart.notes] + [LOADS_CAUTION, CAUTION],
                                  width=int(60 + 70 * (len(chart.levels) - 1)))
    return h


def render(chart: TurnChart, fmt="png", dpi=150, **kwargs) -> bytes:
    fig = plot_turn(chart, **kwargs)["figure"]
    try:
        return figure_bytes(fig, fmt, dpi, tight=True)
    finally:
        fig.clear()


def write_turn(chart: TurnChart, output, data=None) -> list:
    alts = ", ".join(f"{lv.altitude / FT:,.0f} ft" for lv in chart.levels)
    return write_chart(lambda fmt: render(chart, fmt), output, chart.to_frame() if data else None, data,
                       (f"{chart.title}: turn performance at {alts}, weight fraction {chart.weight_fraction:g}; "
                        f"rates in deg/s, true airspeeds",))

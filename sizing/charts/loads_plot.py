"""Drawing of the load-factor (V-n) chart (:class:`sizing.charts.loads.VnDiagram`); no physics here."""
from __future__ import annotations

import numpy as np

from ..common.caution import CAUTION, LOADS_CAUTION
from ..common.conversions import FT, KN
from .files import write_chart
from .loads import VnDiagram
from .style import FEASIBLE_FILL, PALETTE, add_footer, figure_bytes, new_axes

_OPTIONS = ("gust", "title", "caution")
_SPEED_LABELS = {"stall": "VS1", "maneuvering": "VA", "rough_air": "VB", "cruise": "VC", "dive": "VD"}


def _reject(name, kwargs, valid):
    bad = set(kwargs) - set(valid)
    if bad:
        raise TypeError(f"{name}() got unknown keyword(s) {', '.join(sorted(bad))}; valid: {', '.join(valid)}")


def plot_vn(vn: VnDiagram, ax=None, **kwargs):
    """Draw a V-n chart: the combined envelope (shaded), the manoeuvring envelope, the gust lines
    and gust envelope, the design speeds.

    Keywords: gust (gust lines and envelope, default True), title (str), caution (the loads note,
    the notes and the caution under the axes, default True). ax: matplotlib Axes or None.
    Returns a dict of handles: figure, ax, envelope, maneuver, gust_lines {name: Line2D},
    gust_envelope, speeds {name: Line2D}, labels, legend, caution.
    """
    _reject("plot_vn", kwargs, _OPTIONS)
    opt = {"gust": True, "title": None, "caution": True, **kwargs}
    if ax is None:
        ax = new_axes()
    fig, V = ax.figure, vn.V / KN
    h = {"figure": fig, "ax": ax, "gust_lines": {}, "speeds": {}, "labels": []}
    top = max(float(np.nanmax(vn.envelope_hi)), vn.n_positive) * 1.12 + 0.3
    bottom = min(float(np.nanmin(vn.envelope_lo)), vn.n_negative) * 1.15 - 0.3
    ax.set_xlim(0.0, V[-1] * 1.06)
    ax.set_ylim(bottom, top)
    h["envelope"] = ax.fill_between(V, vn.envelope_lo, vn.envelope_hi, color=FEASIBLE_FILL, lw=0, zorder=0)
    x = np.concatenate([V, V[::-1], V[:1]])
    (h["combined"],) = ax.plot(x, np.concatenate([vn.envelope_hi, vn.envelope_lo[::-1], vn.envelope_hi[:1]]),
                               color="#111111", lw=2.2, zorder=4, label="combined envelope (limit loads)")
    (h["maneuver"],) = ax.plot(x, np.concatenate([vn.maneuver_hi, vn.maneuver_lo[::-1], vn.maneuver_hi[:1]]),
                               color=PALETTE[0], lw=1.4, zorder=5, label="manoeuvring envelope")
    if opt["gust"] and vn.gust_hi is not None:
        (h["gust_envelope"],) = ax.plot(x, np.concatenate([vn.gust_hi, vn.gust_lo[::-1], vn.gust_hi[:1]]),
                                        color=PALETTE[1], lw=1.3, ls=(0, (6, 2.5)), zorder=5,
                                        label="gust envelope")
        for key, g in vn.gust.items():
            vv = np.array([0.0, V[-1]])
            slope = g["increment"] / (g["speed"] / KN)
            for sign in (+1, -1):
                (ln,) = ax.plot(vv, 1.0 + sign * slope * vv, color=PALETTE[1], lw=0.7, ls=(0, (1.5, 2)), zorder=2)
            h["gust_lines"][key] = ln
            y_end = 1.0 + slope * V[-1]
            if y_end < top:      # name the line at its end, else where it leaves the axes
                xy = (V[-1], y_end)
            else:
                xy = ((top - 1.0) / slope, top)
            h["labels"].append(ax.annotate(f"{g['velocity'] / FT:.0f} ft/s", xy, xytext=(2, -2),
                                           textcoords="offset points", fontsize=7.5, color=PALETTE[1],
                                           ha="left" if y_end < top else "right", va="top"))
        ax.plot([], [], color=PALETTE[1], lw=0.7, ls=(0, (1.5, 2)), label="derived gust lines (U_de EAS)")
    last, level = -1.0, 0
    for key, lab in sorted(((k, t) for k, t in _SPEED_LABELS.items() if vn.speeds.get(k) is not None),
                           key=lambda kt: vn.speeds[kt[0]]):
        v = vn.speeds[key] / KN
        (h["speeds"][key],) = ax.plot([v] * 2, [bottom, top], color="#8a8a8a", lw=0.7, ls="--", zorder=1)
        level = level + 1 if (v - last) < 0.07 * V[-1] * 1.06 else 0     # close speeds: stack their labels
        last = v
        h["labels"].append(ax.annotate(f"{lab}\n{v:,.0f} kn", (v, bottom), xytext=(2, 3 + 22 * level),
                                       textcoords="offset points", fontsize=7.5, color="#444444",
                                       ha="left", va="bottom", bbox={"fc": "white", "ec": "none", "alpha": 0.7,
                                                                     "boxstyle": "round,pad=0.1"}))
    VA, VC, VD = (vn.speeds[k] / KN for k in ("maneuvering", "cruise", "dive"))
    VG = vn.speeds["negative_stall"] * abs(vn.n_negative) ** 0.5 / KN
    for n, x, text in ((vn.n_positive, 0.5 * (VA + VD), f"limit n = {vn.n_positive:.2f}"),
                       (vn.n_negative, 0.5 * (min(VG, VC) + VC), f"limit n = {vn.n_negative:.2f} at VC")):
        h["labels"].append(ax.annotate(text, (x, n), xytext=(0, 3 if n > 0 else -3), textcoords="offset points",
                                       fontsize=8, ha="center", va="bottom" if n > 0 else "top", color=PALETTE[0]))
        ax.axhline(n, color=PALETTE[0], lw=0.5, ls=":", zorder=1)
    ax.axhline(0.0, color="#555555", lw=0.6, zorder=1)
    ax.axhline(1.0, color="#bbbbbb", lw=0.5, zorder=1)
    ax.set_xlabel("equivalent airspeed [kn EAS]")
    ax.set_ylabel("load factor n [-]")
    ax.secondary_xaxis("top", functions=(lambda k: k * KN, lambda s: s / KN)).set_xlabel(
        "equivalent airspeed [m/s EAS]", fontsize=9)
    ax.grid(True, color="#e2e2e2", lw=0.5, zorder=-1)
    alt = "sea level" if vn.altitude == 0 else f"{vn.altitude / FT:,.0f} ft ({vn.altitude:,.0f} m)"
    ax.set_title(opt["title"] or f"{vn.title}: load-factor (V-n) chart\n{vn.category} category, "
                 f"weight fraction {vn.weight_fraction:.2f} ({vn.mass:,.0f} kg), {alt}, standard day",
                 fontsize=10.5, pad=22)
    h["legend"] = ax.legend(loc="upper left", fontsize=7.5, framealpha=0.92)
    if opt["caution"]:
        h["caution"] = add_footer(ax, [LOADS_CAUTION] + [f"Note: {t}." for t in vn.notes] + [CAUTION])
    return h


def render(vn: VnDiagram, fmt="png", dpi=150, **kwargs) -> bytes:
    """The V-n figure as PNG, SVG or PDF bytes."""
    fig = plot_vn(vn, **kwargs)["figure"]
    try:
        return figure_bytes(fig, fmt, dpi, tight=True)
    finally:
        fig.clear()


def write_vn(vn: VnDiagram, output, data=None) -> list:
    """Write the figure (by suffix) and optionally the curves as CSV; the paths written."""
    return write_chart(lambda fmt: render(vn, fmt), output, vn.to_frame() if data else None, data,
                       (f"{vn.title}: V-n chart, {vn.category} category, weight fraction {vn.weight_fraction:g}, "
                        f"altitude {vn.altitude:g} m; speeds EAS. {LOADS_CAUTION}",))

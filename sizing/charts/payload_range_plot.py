"""Drawing of the payload-range diagram (:class:`sizing.charts.payload_range.PayloadRange`); no physics here."""
from __future__ import annotations

import math

from ..common.caution import CAUTION
from ..common.conversions import NMI
from .files import write_chart
from .payload_range import CORNER_NAMES, PayloadRange
from .style import DESIGN_COLOUR, FEASIBLE_FILL, PALETTE, add_footer, figure_bytes, new_axes

_OPTIONS = ("title", "caution")
_MARKS = {"max-payload": ("s", PALETTE[0]), "design": ("*", DESIGN_COLOUR), "max-fuel": ("D", PALETTE[1]),
          "ferry": ("o", PALETTE[2])}


def plot_payload_range(pr: PayloadRange, ax=None, **kwargs):
    """Draw a payload-range diagram: the boundary (maximum payload, design takeoff mass, full fuel),
    its corners and the design point.

    Keywords: title (str), caution (notes and caution under the axes, default True).
    Returns a dict of handles: figure, ax, boundary, corners {name: Line2D}, labels, caution.
    """
    bad = set(kwargs) - set(_OPTIONS)
    if bad:
        raise TypeError(f"plot_payload_range() got unknown keyword(s) {', '.join(sorted(bad))}; valid: "
                        f"{', '.join(_OPTIONS)}")
    opt = {"title": None, "caution": True, **kwargs}
    if ax is None:
        ax = new_axes(figsize=(10.0, 6.2), rect=(0.09, 0.2, 0.84, 0.66))
    fig = ax.figure
    h = {"figure": fig, "ax": ax, "corners": {}, "labels": []}
    R, P = pr.curve
    km = R / 1000.0
    ax.fill_between(km, 0.0, P, color=FEASIBLE_FILL, lw=0, zorder=0)
    (h["boundary"],) = ax.plot(km, P, color="#111111", lw=2.0, zorder=3)
    finite = [c.range for c in pr.corners if math.isfinite(c.range)]
    ax.set_xlim(0.0, max(finite + [float(km.max()) * 1000.0]) / 1000.0 * 1.12)
    ax.set_ylim(0.0, pr.max_payload * 1.25 if pr.max_payload > 0 else 1.0)
    for c in pr.corners:
        if not math.isfinite(c.range):
            continue
        mk, col = _MARKS[c.name]
        (h["corners"][c.name],) = ax.plot([c.range / 1000.0], [c.payload], mk, ms=14 if mk == "*" else 8, mfc=col,
                                          mec="white" if mk != "*" else DESIGN_COLOUR, zorder=5,
                                          label=f"{CORNER_NAMES[c.name]}: {c.range / 1000:,.0f} km "
                                                f"({c.range / NMI:,.0f} nmi), {c.payload:,.0f} kg payload, "
                                                f"{c.fuel:,.0f} kg fuel")
    ax.set_xlabel(f"range [km] (the mission with its segment '{pr.segment}' lengthened or shortened)")
    ax.set_ylabel("payload [kg]")
    ax.secondary_xaxis("top", functions=(lambda k: k * 1000.0 / NMI, lambda n: n * NMI / 1000.0)).set_xlabel(
        "range [nmi]", fontsize=9)
    ax.grid(True, color="#e2e2e2", lw=0.5, zorder=-1)
    ax.legend(loc="upper right", fontsize=7.5, framealpha=0.92)
    ax.set_title(opt["title"] or f"{pr.title}: payload-range\nempty {pr.empty:,.0f} kg, crew {pr.crew:,.0f} kg, "
                 f"design takeoff mass {pr.design_mass:,.0f} kg, fuel capacity {pr.max_fuel:,.0f} kg; reserves as in "
                 f"the mission", fontsize=10, pad=24)
    if opt["caution"]:
        h["caution"] = add_footer(ax, [f"Note: {t}." for t in pr.notes] + [CAUTION])
    return h


def render(pr: PayloadRange, fmt="png", dpi=150, **kwargs) -> bytes:
    fig = plot_payload_range(pr, **kwargs)["figure"]
    try:
        return figure_bytes(fig, fmt, dpi, tight=True)
    finally:
        fig.clear()


def write_payload_range(pr: PayloadRange, output, data=None) -> list:
    return write_chart(lambda fmt: render(pr, fmt), output, pr.to_frame() if data else None, data,
                       (f"{pr.title}: payload-range corners; cruise segment '{pr.segment}' varied",))

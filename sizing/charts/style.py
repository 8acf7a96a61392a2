"""The look of every figure (this project's own choice), display units, and figure files.

One palette for every chart; axis units for ``units="si"`` or ``"us"``;
:func:`figure_bytes` renders PNG/SVG/PDF without timestamps (byte-identical
reruns).
"""
from __future__ import annotations

import io
from collections import namedtuple

from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF

# Six line colours picked for this project: each has at least 3:1 contrast
# on white (WCAG 2.1 non-text contrast) and every pair stays at least
# Delta E 20 (CIE76) apart under simulated protanopia, deuteranopia and
# tritanopia (checked in tests/test_plots.py). Curves are labelled on the
# plot and carry a marker too, so no reading depends on colour alone.
PALETTE = ("#225599", "#bb2233", "#1f95a8", "#968a14", "#7a2fc7", "#83385a")
MARKERS = ("o", "s", "^", "D", "v", "P", "X")
LINESTYLES = ("-", (0, (7, 2.5)), (0, (1.5, 1.5)))   # after every six requirements
FEASIBLE_FILL = "#e4eef6"
NO_CLOSURE_FILL = "#efefef"     # where the weight closure has no solution
MASS_COLOUR = "#6b6b6b"
DESIGN_COLOUR = "#111111"
FIGSIZE = (11.0, 7.4)        # [in]; 16:10-ish, readable on a projected slide
DPI = 150
FONT = {"title": 15, "subtitle": 10.5, "axis": 12, "tick": 10.5, "label": 10.5,
        "mass": 9, "design": 10, "footer": 7.5, "banner": 20}



# display units per SI unit of wing loading, T/W (or P/W) and mass, with their names
DisplayUnits = namedtuple("DisplayUnits", "x x_unit y y_unit mass mass_unit")


def units_for(name: str, propeller: bool) -> DisplayUnits:
    if name == "si":
        return DisplayUnits(1.0, "N/m²", 1.0, "W/N" if propeller else "–", 1.0, "kg")
    if name == "us":
        y = N_PER_LBF / HP if propeller else 1.0
        return DisplayUnits(1.0 / LBF_FT2, "lb/ft²", y, "hp/lb" if propeller else "lb/lb", 1.0 / LB, "lb")
    raise ValueError(f"units must be 'si' or 'us', got {name!r}")


FORMATS = {".png": "png", ".svg": "svg", ".pdf": "pdf"}


def figure_bytes(fig, fmt="png", dpi=DPI, tight=False) -> bytes:
    """Render a figure to PNG/SVG/PDF bytes (SVG/PDF keep text as text, no timestamps);
    ``tight``: crop to the drawn artists (footers placed below the axes)."""
    import matplotlib

    meta = {"png": {"Software": None}, "svg": {"Date": None}, "pdf": {"CreationDate": None}}[fmt]
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.fonttype": "none", "pdf.fonttype": 42, "svg.hashsalt": "sizing"}):
        fig.savefig(buf, format=fmt, dpi=dpi, metadata=meta,
                    **({"bbox_inches": "tight", "pad_inches": 0.15} if tight else {}))
    return buf.getvalue()


def curve_style(i):
    """(colour, marker, line style) of the i-th requirement of a file."""
    return PALETTE[i % len(PALETTE)], MARKERS[i % len(MARKERS)], LINESTYLES[(i // len(PALETTE)) % len(LINESTYLES)]


def new_axes(figsize=(10.0, 6.6), rect=(0.085, 0.2, 0.83, 0.68)):
    """A new Agg figure (no pyplot) with one axes at ``rect`` (figure fractions)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure

    fig = Figure(figsize=figsize, dpi=DPI)
    FigureCanvasAgg(fig)
    return fig.add_axes(rect)


def add_footer(ax, lines, width=150, below=44.0, fontsize=None):
    """Notes and the caution, wrapped, under an axes (``below`` points under its lower edge,
    clear of the tick labels and the axis label); save with ``tight=True``."""
    import textwrap

    text = "\n".join(w for line in lines if line for w in textwrap.wrap(line, width))
    return ax.annotate(text, xy=(0.0, 0.0), xycoords="axes fraction", xytext=(-30.0, -below),
                       textcoords="offset points", ha="left", va="top", fontsize=fontsize or FONT["footer"],
                       color="#333333", annotation_clip=False)

"""The look of every figure (this project's own choice), display units, and figure files.

One palette for every chart; axis units for ``units="si"`` or ``"us"``;
:func:`figure_bytes` renders PNG/SVG/PDF without timestamps (byte-identical
reruns).
"""
from __future__ import annotations

import io
from collections import namedtuple
from dataclasses import dataclass

from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF

# Eight line colours picked for this project: each has at least 3:1 contrast on
# white (WCAG 2.1 non-text contrast) and every pair stays at least Delta E*ab 20
# (CIE76) apart under simulated protanopia, deuteranopia and tritanopia (Machado et
# al. 2009; checked in tests/test_plots.py with our written-out matrices and with
# the colorspacious library). Every requirement id keeps one colour, one marker and
# one line style in every figure of a run (:func:`requirement_styles`), so no
# reading depends on colour alone: in greyscale the marker and the label tell.
PALETTE = ("#225599", "#bb2233", "#1f95a8", "#968a14", "#7a2fc7", "#83385a", "#9977dd", "#779977")
MARKERS = ("o", "s", "^", "D", "v", "P", "X", "h", "<", ">")
LINESTYLES = ("-", (0, (7, 2.5)), (0, (1.5, 1.5)), (0, (6, 2, 1.5, 2)))   # after every eight requirements
# the colour slot a requirement kind asks for first (the same kind keeps its colour
# from file to file where the file has no two of it)
KIND_SLOTS = {"stall-speed": 0, "takeoff": 1, "cruise": 2, "max-mach": 2, "ceiling": 3, "climb": 4,
              "climb-gradient": 4, "excess-power": 4, "landing": 5, "sustained-turn": 6,
              "instantaneous-turn": 6, "approach-speed": 7}
NEUTRAL = "#5a5a5a"           # what is not a requirement (mission fuel as a driver, chart furniture)
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


@dataclass(frozen=True)
class IdStyle:
    """How one requirement id is drawn in every figure: colour, marker, line style."""

    colour: str
    marker: str
    linestyle: object
    slot: int                     # colour index + len(PALETTE) x line-style round


MISSION_FUEL = IdStyle(NEUTRAL, "*", (0, (3, 1.5)), -1)


def requirement_styles(requirements) -> dict:
    """{id: IdStyle} for (id, kind) pairs in file order: one colour, marker and line style per id.

    Each id first asks for its kind's colour (:data:`KIND_SLOTS`, in file order);
    ids whose colour is taken get the next free one; past eight requirements the
    colours repeat with the next line style, so no two ids share colour and line style.

    >>> s = requirement_styles([("stall", "stall-speed"), ("tow", "takeoff"), ("roll", "takeoff")])
    >>> s["stall"].colour == PALETTE[0], s["tow"].colour == PALETTE[1], s["roll"].colour == PALETTE[2]
    (True, True, True)
    """
    pairs = [(str(rid), kind) for rid, kind in requirements]
    n, taken, slot = len(PALETTE), set(), {}
    for rid, kind in pairs:             # first pass: the kind's own colour where it is free
        want = KIND_SLOTS.get(kind)
        if want is not None and want not in taken and rid not in slot:
            slot[rid] = want
            taken.add(want)
    for rid, kind in pairs:             # second pass: the next free colour, then the next line style
        if rid in slot:
            continue
        start = KIND_SLOTS.get(kind, 0)
        s = next(r * n + (start + k) % n for r in range(len(pairs) + 1) for k in range(n)
                 if r * n + (start + k) % n not in taken)
        slot[rid] = s
        taken.add(s)
    out = {}
    for rid, _ in pairs:
        s = slot[rid]
        c, r = s % n, s // n
        out[rid] = IdStyle(PALETTE[c], MARKERS[(c + r * n) % len(MARKERS)], LINESTYLES[r % len(LINESTYLES)], s)
    return out


def styles_of(spec) -> dict:
    """{id: IdStyle} of a requirement file (:func:`requirement_styles` in its order)."""
    return requirement_styles((r.id, r.kind) for r in spec.requirements)


def driver_style(styles, name):
    """The style of a driver name: a requirement's own, or the neutral one (mission fuel)."""
    return styles.get(name, MISSION_FUEL)


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

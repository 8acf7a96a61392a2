"""Constraint diagram: every requirement over wing loading, the design point
and lines of constant takeoff mass (the only module here that draws).

Compute, then data, then plot. :func:`diagram_data` samples each requirement
with :func:`sizing.constraints.required_curve`, the function the optimizer's
constraints are built from, and the weight closure with
:mod:`sizing.weights`; :func:`constraint_diagram` draws those numbers and
computes no physics; :func:`write_diagram` writes PNG, SVG or PDF (and the
curves as CSV) atomically. Axes: W_TO/S [N/m^2] against T_SL/W_TO [-] or, for
propeller aircraft, P_SL/W_TO [W/N]; ``units="us"``: lb/ft^2, lb/lb or hp/lb.
Figures are plain :class:`matplotlib.figure.Figure` objects (no pyplot, no
display, nothing left open); matplotlib is imported only when drawing.
"""
from __future__ import annotations

import math
import textwrap
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..physics.atmosphere import g0
from ..physics.propulsion import axis_label
from .diagram_data import DiagramData, curves_csv, diagram_data, nice
from .labels import Placer, clear, put, thin
from .style import (
    DESIGN_COLOUR,
    DPI,
    FEASIBLE_FILL,
    FIGSIZE,
    FONT,
    FORMATS,
    MASS_COLOUR,
    NO_CLOSURE_FILL,
    PALETTE,
    figure_bytes,
)
from .style import units_for as _units

# --------------------------------------------------------------------------
# Drawing
# --------------------------------------------------------------------------

@dataclass
class DiagramHandles:
    """What :func:`constraint_diagram` drew (matplotlib artists)."""

    figure: object
    ax: object
    curves: dict = field(default_factory=dict)       # id -> Line2D of the thrust curve
    limits: dict = field(default_factory=dict)       # id -> Line2D of the W/S limit line
    labels: dict = field(default_factory=dict)       # id (or "id:limit") -> Text
    design_point: object = None                      # Line2D marker, None when infeasible
    design_label: object = None
    mass_lines: list = field(default_factory=list)   # (mass [display unit], Line2D)
    mass_labels: list = field(default_factory=list)  # (Text, mass [display unit]): on that mass's line
    references: dict = field(default_factory=dict)   # label -> (Line2D marker, Text)
    region_labels: list = field(default_factory=list)   # Text naming a region ("feasible", ...)
    unlabelled: object = None                        # key under the axes of ids with no clear label place
    feasible: object = None                          # the filled region
    no_closure: object = None                        # where the weight does not close
    data: DiagramData | None = None

    def _repr_png_(self):       # notebooks show the figure
        return figure_bytes(self.figure, "png", dpi=100)


def _fmt(v, digits=3):
    if not np.isfinite(v):
        return "n/a"
    return f"{v:,.0f}" if abs(v) >= 1000 else (f"{v:.{digits}g}" if abs(v) >= 1 else f"{v:.{digits}f}")


def _mass_levels(mass, m_ref):
    finite = mass[np.isfinite(mass)]
    if finite.size == 0:
        return []
    if not (m_ref and np.isfinite(m_ref)):
        m_ref = float(np.percentile(finite, 20))
    lo, hi = max(float(finite.min()), 0.6 * m_ref), min(float(finite.max()), 1.6 * m_ref)
    step = nice(0.12 * m_ref)
    return [v for v in np.arange(math.ceil(lo / step) * step, hi, step)
            if abs(v - m_ref) > 0.25 * step][:12]


LABELS = ("short", "full")
VIEWS = ("auto", "full")


def constraint_diagram(spec, result=None, ax=None, *, units="si", title=True, footer=True,
                       mass_lines=True, hatch=True, samples=None, figsize=FIGSIZE, labels="short", view="auto"):
    """Draw the constraint diagram of a requirement file.

    Parameters
    ----------
    spec : :class:`sizing.spec.Spec`
    result : :class:`sizing.model.Result`, or None to solve the spec first
    ax : matplotlib Axes to draw in, or None for a new Figure (no pyplot)
    units : "si" (N/m^2; T/W or W/N) or "us" (lb/ft^2; lb/lb or hp/lb)
    title : draw the file's title and the drivers above the axes
    footer : add the caution, input file name and sha256 at the figure foot
    mass_lines : draw lines of constant closed takeoff mass
    hatch : hatch the infeasible side of every requirement
    samples : wing loadings sampled per curve (None: see :func:`diagram_data`)
    figsize : size of a new figure [in]
    labels : "short" (the id) or "full" (the id and its condition: altitude, Mach or
        airspeed, load factor, weight fraction)
    view : "auto" (axes zoomed on the design point, the active curves and the feasible
        region near them) or "full" (every W/S limit and every curve's minimum)

    Returns
    -------
    DiagramHandles : figure, axes, curve and limit lines by requirement id,
    labels, design-point marker, mass lines, feasible-region fill, the data.
    """
    from matplotlib.figure import Figure

    if labels not in LABELS:
        raise ValueError(f"labels must be one of {', '.join(LABELS)}, got {labels!r}")
    data = diagram_data(spec, result, units=units, samples=samples, view=view)
    u = _units(units, data.propeller)
    own = ax is None
    if own:
        fig = Figure(figsize=figsize, dpi=DPI)
        right = 0.86 if spec.is_propeller and units == "si" else 0.89
        ax = fig.add_axes((0.085, 0.175, right - 0.085, 0.655 if title else 0.76))
    fig = ax.figure
    h = DiagramHandles(figure=fig, ax=ax, data=data)
    X = data.W_S * u.x
    (xl, xh), (yl, yh) = (v * u.x for v in data.x_range), (v * u.y for v in data.y_range)
    ax.set(xlim=(xl, xh), ylim=(yl, yh))
    ax.tick_params(labelsize=FONT["tick"])
    ax.set_xlabel(f"wing loading  W/S  [{u.x_unit}]", fontsize=FONT["axis"])
    ax.set_ylabel(f"{axis_label(data.propeller, data.rating)}  [{u.y_unit}]", fontsize=FONT["axis"])
    ax.grid(True, color="#d9d9d9", linewidth=0.6, zorder=0)
    ax.set_axisbelow(True)
    if units == "si":      # the same axes in kg/m^2 and kW/kg, for those who think in mass
        ax.secondary_xaxis("top", functions=(lambda x: x / g0, lambda x: x * g0)).tick_params(
            labelsize=FONT["tick"] - 1, colors="#555555")
        ax.text(1.008, 1.012, "kg/m²", transform=ax.transAxes, fontsize=FONT["tick"] - 1,
                color="#555555", ha="left", va="bottom")
        if data.propeller:
            right = ax.secondary_yaxis("right", functions=(lambda y: y * g0 / 1000.0, lambda y: y * 1000.0 / g0))
            right.set_ylabel("[kW/kg]", fontsize=FONT["tick"], color="#555555")
            right.tick_params(labelsize=FONT["tick"] - 1, colors="#555555")
    y_span, x_span = yh - yl, xh - xl
    clip_hi = yh + 2.0 * y_span

    # feasible region (lightly filled)
    env, lim = data.envelope()
    envd = np.minimum(env * u.y, clip_hi)
    where = (data.W_S <= lim) & np.isfinite(env) & (envd < yh)
    if np.any(where):
        h.feasible = ax.fill_between(X, np.maximum(envd, yl), yh, where=where, color=FEASIBLE_FILL,
                                     linewidth=0, zorder=0.5, interpolate=True)

    # lines of constant takeoff mass
    if mass_lines:
        _draw_mass_lines(ax, data, u, h)

    # requirement curves, hatching on the infeasible side; a part drawn bold only where the
    # design sits on it (an active requirement's other part stays plain)
    placer = Placer(ax)
    lw = {True: 2.8, False: 1.6}
    for c in data.curves:
        st = data.styles[c.id]
        colour, marker, ls = st.colour, st.marker, st.linestyle
        hatch_kw = dict(facecolor="none", edgecolor=colour, linewidth=0.0, alpha=0.55, zorder=2)
        if c.thrust is not None:
            Yd = np.where(np.isfinite(c.thrust), c.thrust * u.y, np.nan)
            Yd = np.where(Yd < clip_hi, Yd, np.nan)
            h.curves[c.id], = ax.plot(X, Yd, color=colour, lw=lw[c.thrust_active], ls=ls, marker=marker,
                                      markersize=5.5, markevery=(0.06 + 0.035 * (st.slot % 5), 0.22),
                                      markerfacecolor="white", markeredgewidth=1.3, zorder=3 + c.thrust_active)
            placer.add_line(c.id, X, Yd)
            band = 0.028 * y_span
            placer.add_line(("hatch", c.id), X, Yd - 0.6 * band)
            if hatch:
                thin(ax.fill_between(X, Yd - band, Yd, hatch="////", **hatch_kw))
        if c.boundary is not None and xl <= c.boundary * u.x <= xh:
            b = c.boundary * u.x
            alone = c.thrust is None        # a pure W/S limit; else the lift limit of a thrust kind
            h.limits[c.id] = ax.axvline(b, color=colour, lw=lw[c.limit_active] if alone else
                                        (2.4 if c.limit_active else 1.3),
                                        ls=ls if alone else (0, (5, 2.5)), zorder=3 + c.limit_active)
            placer.add_line(c.id if alone else f"{c.id}:limit", np.full(50, b), np.linspace(yl, yh, 50))
            if hatch:
                thin(ax.fill_betweenx([yl, yh], b, b + 0.016 * x_span, hatch="\\\\\\\\", **hatch_kw))
    for k, (m, line) in enumerate(h.mass_lines):
        placer.add_line(("mass", m, k), line.get_xdata(), line.get_ydata())
    if data.references:
        _draw_references(ax, data, u, h, placer)

    # design point (placed first so labels keep clear of it)
    if data.design is not None:
        _draw_design(ax, data, u, h, placer)
    else:
        _draw_no_design(ax, data, placer)

    _label_curves(ax, data, h, placer, full=labels == "full")
    _label_references(ax, h, placer)
    if mass_lines:
        h.no_closure = _draw_no_closure(ax, data, u, placer, h)
    if h.feasible is not None:
        WW, YY = np.meshgrid(data.mass_W_S, data.mass_Y)
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(data.mass) & (YY >= np.interp(WW, data.W_S, env)) & (WW <= lim)
        _label_region(ax, placer, data, u, ok, "feasible", h, fontsize=FONT["label"], color="#4a6b85",
                      style="italic")
    if mass_lines:
        _label_mass_lines(ax, h, placer, u)
    if title:
        _draw_title(ax, fig, data, own)
    if footer:
        _draw_footer(fig, data)
    return h


def _draw_mass_lines(ax, data, u, h):
    import contourpy

    mass = data.mass * u.mass
    m_ref = data.design[2] * u.mass if data.design else None
    gen = contourpy.contour_generator(data.mass_W_S * u.x, data.mass_Y * u.y, mass)
    levels = [(v, MASS_COLOUR, 0.9) for v in _mass_levels(mass, m_ref)] + ([(m_ref, DESIGN_COLOUR, 1.2)] if m_ref else [])
    for level, colour, lw in levels:
        for seg in gen.lines(level):
            line, = ax.plot(seg[:, 0], seg[:, 1], color=colour, lw=lw, ls=(0, (4, 3)), zorder=1 + (lw > 1))
            h.mass_lines.append((float(level), line))


def _draw_no_closure(ax, data, u, placer, h=None):
    """Grey out where no takeoff mass closes the weights (boundary interpolated)."""
    bad = ~np.isfinite(data.mass)
    if not np.any(bad):
        return None
    rest = np.where(np.isfinite(data.closure_rest), data.closure_rest, -1.0)
    cs = ax.contourf(data.mass_W_S * u.x, data.mass_Y * u.y, rest, levels=[-1e9, 1e-3],
                     colors=[NO_CLOSURE_FILL], zorder=0.6)
    _label_region(ax, placer, data, u, bad, "weight does not close", h, fontsize=FONT["mass"],
                  color=MASS_COLOUR)
    return cs


def _label_region(ax, placer, data, u, ok, text, h=None, **style):
    """Name a region (a mask on the mass grid) in its least crowded spot."""
    WW, YY = (g[::4, ::4] for g in np.meshgrid(data.mass_W_S, data.mass_Y))
    ok = ok[::4, ::4]
    pts = ax.transData.transform(np.column_stack([WW[ok] * u.x, YY[ok] * u.y]))
    spot = placer.free_spot(*placer.size(text, style["fontsize"]), pts)
    if spot is not None:
        t = put(ax, placer, spot, text, **style)
        if h is not None:
            h.region_labels.append(t)


def _label_mass_lines(ax, h, placer, u):
    """One inline label per mass level, on the least crowded of its line pieces, over no other line
    (a level with no such place stays unlabelled; the design's own mass is tried first)."""
    levels = list(dict.fromkeys(m for m, _ in h.mass_lines))
    design = h.data.design[2] * u.mass if h.data.design is not None else None
    levels.sort(key=lambda m: design is None or abs(m - design) > 1e-6 * m)
    for m in levels:
        text = f"{_fmt(m)} {u.mass_unit}"
        w, hh = placer.size(text, FONT["mass"], pad=1.5)
        spots = [placer.inline(("mass", m, k), w, hh, prefer=0.8, spread=0.35)
                 for k, (mk, _) in enumerate(h.mass_lines) if mk == m]
        spots = [sp for sp in spots if sp is not None and clear(sp[3])]
        if spots:
            is_design = design is not None and abs(m - design) < 1e-6 * m
            spot = min(spots, key=lambda sp: sp[3])
            t = put(ax, placer, spot, text, fontsize=FONT["mass"], style="italic", rotation=spot[4],
                    rotation_mode="anchor", color=DESIGN_COLOUR if is_design else MASS_COLOUR,
                    bbox=dict(boxstyle="square,pad=0.1", fc="white", ec="none", alpha=1.0))
            h.mass_labels.append((t, m))


def _label_curves(ax, data, h, placer, full=False):
    """Each id beside its curve or limit line, over no other line (drivers first, bold and boxed where
    the design sits on that part); ``full``: the condition under the id. A label with no clear place
    beside its line is named in the corner list rather than drawn over another curve."""
    missing = []
    for c in sorted(data.curves, key=lambda c: (not c.active, c.index)):
        colour = data.styles[c.id].colour
        cond = f"\n{c.condition}" if full and c.condition else ""
        items = [(c.id, c.id + cond, 0, c.thrust_active)] if c.thrust is not None else []
        if c.id in h.limits:
            items.append((c.id, c.id + cond, 90, c.limit_active) if c.thrust is None else
                         (f"{c.id}:limit", f"{c.id} {c.limit_name}", 90, c.limit_active))
        for key, text, rot, bold in items:
            weight = "bold" if bold else "normal"
            spot = None
            # as written, then broken after the id (a shorter box fits between neighbours)
            for text in dict.fromkeys([text, text.replace(" ", "\n", 1) if "\n" not in text else text]):
                w, hh = placer.size(text, FONT["label"], weight)
                for gap in (4.0, 12.0, 22.0):
                    spot = placer.along(key, *((hh, w) if rot else (w, hh)), prefer=0.82 if rot else 0.5,
                                        spread=0.3 if rot else 0.35, side=True, gap=gap)
                    if spot is not None and clear(spot[3]):
                        break
                    spot = None
                if spot is not None:
                    break
            if spot is None:
                missing.append(c.id if not key.endswith(":limit") else f"{c.id} {c.limit_name}")
                continue
            h.labels[key] = put(ax, placer, spot, text, fontsize=FONT["label"], color=colour, zorder=6,
                                fontweight=weight, rotation=rot, rotation_mode="anchor", linespacing=1.1,
                                bbox=dict(boxstyle="round,pad=0.2", fc="white", lw=0.8, alpha=0.92,
                                          ec=colour if bold else "none"))
    if missing:     # still named, never silently dropped: a key under the axes, clear of every curve
        from matplotlib.lines import Line2D

        handles = []
        for name in dict.fromkeys(missing):
            st = data.styles[name.split(" ")[0]]
            handles.append(Line2D([], [], color=st.colour, marker=st.marker, markerfacecolor="white",
                                  ls=st.linestyle if " " not in name else (0, (5, 2.5)), lw=1.6, label=name))
        ax.xaxis.set_label_coords(0.0, -0.055)           # the axis name to the left, the key to the right
        ax.xaxis.label.set(horizontalalignment="left", verticalalignment="top")
        h.unlabelled = ax.legend(handles=handles, loc="upper right", bbox_to_anchor=(1.0, -0.055),
                                        ncol=min(len(handles), 3), fontsize=FONT["mass"], frameon=False,
                                        title="not labelled on the plot (no clear place beside the line)",
                                        title_fontsize=FONT["mass"] - 0.5, alignment="right", borderaxespad=0.0,
                                        handlelength=3.0, columnspacing=1.2)


def _draw_references(ax, data, u, h, placer):
    """The file's reference designs: a hollow grey star each (labels after the curves')."""
    for label, W, Y in data.references:
        x, y = W * u.x, Y * u.y
        mk, = ax.plot([x], [y], marker="*", markersize=13, markerfacecolor="white", markeredgecolor="#333333",
                      markeredgewidth=1.4, ls="none", zorder=7, clip_on=True)
        px, py = ax.transData.transform((x, y))
        placer.take((px - 9, py - 9, px + 9, py + 9))
        h.references[label] = (mk, None)


def _label_references(ax, h, placer):
    for label, (mk, _) in list(h.references.items()):
        x, y = mk.get_xdata()[0], mk.get_ydata()[0]
        px, py = ax.transData.transform((x, y))
        text = f"{label} (reference)"
        w, hh = placer.size(text, FONT["mass"])
        cands = [(px + sx * (12 + w / 2), py + sy * (hh / 2 + dy)) for dy in (0, 8, 18, 30)
                 for sx in (1, -1) for sy in (1, -1)]
        spot = placer.free_spot(w, hh, cands, pad=1.0)
        if spot is None:
            continue
        t = put(ax, placer, spot, text, fontsize=FONT["mass"], color="#333333", zorder=7,
                bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.9))
        h.references[label] = (mk, t)


def _draw_design(ax, data, u, h, placer):
    W, Y, m = data.design
    x, y = W * u.x, Y * u.y
    h.design_point, = ax.plot([x], [y], marker="o", markersize=13, markerfacecolor="white",
                              markeredgecolor=DESIGN_COLOUR, markeredgewidth=2.4, zorder=8, ls="none")
    ax.plot([x], [y], marker="o", markersize=4.5, color=DESIGN_COLOUR, zorder=9, ls="none")
    ylab = "P/W" if data.propeller else "T/W"
    yval = (f"{Y * u.y:.4f} {u.y_unit}" if u.y != 1.0 else f"{Y:.1f} {u.y_unit}") if data.propeller else f"{Y:.3f}"
    lines = ["design point", f"W/S  {_fmt(x)} {u.x_unit}", f"{ylab}  {yval}", f"m_TO  {_fmt(m * u.mass)} {u.mass_unit}"]
    if data.on_edge:
        lines.append("on the search-region edge")
    text = "\n".join(lines)
    w, hh = placer.size(text, FONT["design"], "bold", pad=6)
    px, py = ax.transData.transform((x, y))
    cands = []       # around the point, nearer and above preferred
    for dist in (70, 110, 160, 220, 290):
        for a in np.radians(np.arange(0, 360, 30)):
            cx, cy = px + (dist + w / 2) * math.cos(a), py + (dist + hh / 2) * math.sin(a)
            rect = (cx - w / 2, cy - hh / 2, cx + w / 2, cy + hh / 2)
            cands.append((placer.cost(rect, soft_mass=True) + 0.3 * dist + 20.0 * (math.sin(a) < 0), cx, cy, rect))
    _c, cx, cy, rect = min(cands, key=lambda t: t[0])
    tx, ty = ax.transData.inverted().transform((cx, cy))
    h.design_label = ax.annotate(
        text, xy=(x, y), xytext=(tx, ty), textcoords="data", ha="center", va="center",
        fontsize=FONT["design"], zorder=10, linespacing=1.3,
        bbox=dict(boxstyle="round,pad=0.45", fc="white", ec=DESIGN_COLOUR, lw=1.2),
        arrowprops=dict(arrowstyle="-", color=DESIGN_COLOUR, lw=1.2, shrinkA=0, shrinkB=7))
    placer.take(rect)
    placer.take((px - 14, py - 14, px + 14, py + 14))


def _draw_no_design(ax, data, placer):
    lines = ["no feasible design"]
    inf = data.infeasibility
    if inf is not None and inf.conflicts:
        lines.append("conflicting: " + ", ".join(inf.conflicts))
        for rid in inf.conflicts[:4]:
            rel = inf.relaxations.get(rid, {})
            lines.append(f"relax {rid}: {rel.get('field', 'value')} -> {rel.get('text', '?')}")
    elif inf is not None and inf.explanation:
        lines += textwrap.wrap(inf.explanation, 60)
    for y, text, size, ec in ((0.93, lines[0], FONT["banner"], PALETTE[1]),
                              (0.83, "\n".join(lines[1:]), FONT["design"], "#999999")):
        if text:
            ax.text(0.5, y, text, transform=ax.transAxes, ha="center", va="top", zorder=10, fontsize=size,
                    fontweight="bold" if ec == PALETTE[1] else "normal", color=ec if ec == PALETTE[1] else "black",
                    bbox=dict(boxstyle="round,pad=0.4", fc="white", ec=ec, lw=1.2))
    bx0, by0, bx1, by1 = placer.box
    placer.take((bx0 + 0.2 * (bx1 - bx0), by0 + 0.62 * (by1 - by0), bx1 - 0.2 * (bx1 - bx0), by1))


def _draw_title(ax, fig, data, own):
    drivers = ", ".join(data.drivers) if data.drivers else "none"
    m = data.mass[np.isfinite(data.mass)] if data.mass is not None else np.array([])
    same = m.size == 0 or float(np.ptp(m)) <= 1e-9 * float(np.max(np.abs(m)))
    mass_lines = ("takeoff mass the same at every point" if same else "dashed grey: constant takeoff mass")
    sub = ("constraint diagram · no feasible design" if data.design is None else
           f"constraint diagram · drivers: {drivers} · hatched: infeasible side · {mass_lines}")
    if own:
        fig.text(0.085, 0.955, data.title, fontsize=FONT["title"], fontweight="bold", va="top")
        fig.text(0.085, 0.915, sub, fontsize=FONT["subtitle"], color="#444444", va="top")
    else:
        ax.set_title(f"{data.title}\n{sub}", fontsize=FONT["subtitle"])


def _draw_footer(fig, data):
    from ..common.caution import CAUTION
    from ..common.version import __version__

    src = f"input: {data.source or 'in memory'}   sha256 {data.sha256[:12] or 'n/a'}   sizing {__version__}"
    caution = "\n".join([*getattr(data, "notices", ()), *textwrap.wrap(CAUTION, 150)])
    fig.text(0.085, 0.012, f"{caution}\n{src}", fontsize=FONT["footer"], color="#333333", va="bottom",
             linespacing=1.35)


def write_diagram(spec, res, output, data=None, units="si", *, dpi=DPI, labels="short", view="auto") -> list:
    """Write the constraint diagram (format from the suffix) and optionally the curves CSV.

    Returns the list of written paths.
    """
    from ..common.errors import InputError
    from ..common.fileio import atomic_write

    out = Path(output)
    fmt = FORMATS.get(out.suffix.lower())
    if fmt is None:
        raise InputError(f"cannot tell the format from {out.suffix or 'no suffix'!r}; "
                         f"use one of {', '.join(FORMATS)}", str(output), field="--output")
    h = constraint_diagram(spec, result=res, units=units, labels=labels, view=view)
    atomic_write(out, figure_bytes(h.figure, fmt, dpi), "wb")
    if data:
        atomic_write(Path(data), curves_csv(h.data), "w")
    return [str(out)] + ([str(data)] if data else [])

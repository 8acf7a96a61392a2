"""Drawing the envelope check: boundaries, Ps contours, limits, requirement marks (matplotlib
imported here only; Agg canvas, no pyplot state), and its files."""
from __future__ import annotations

import io
import textwrap

import numpy as np

from ..common.caution import CAUTION
from ..common.conversions import FT, KN
from ..common.errors import InputError
from ..common.fileio import atomic_write
from .envelope import Envelope, nice_step, status_text

_SUFFIXES = (".png", ".svg", ".pdf")
_PLOT_OPTIONS = ("contours", "energy", "coffin", "own_boundaries", "details", "title", "caution")
_COLOURS = ("#444444",)       # a requirement without a style (never in a file's own run)
# chart furniture in greys and browns: the palette's colours belong to the requirement ids
_BLUES = ("#a8a8a8", "#808080", "#5c5c5c", "#3a3a3a", "#1e1e1e")
_STALL, _ZOOM, _BAND, _ENERGY = "#7b4a12", "#333333", "#4d4d4d", "#8c8c8c"


def _place_labels(ax, items, obstacles):
    """Annotate (x, y, text, colour, own-marker bbox) items at the first offset whose label
    stays inside the axes and clear of the obstacles (display Bboxes); else the first offset."""
    renderer, taken = ax.figure.canvas.get_renderer(), list(obstacles)
    frame, out = ax.get_window_extent(renderer), []
    offsets = [(dx, dy) for dy in (4, -4, 14, -14, 24, 34) for dx in (6, -6)] + [(6, 4)]
    for x, y, text, col, own in items:
        clear = [t for t in taken if t is not own]
        for k, (dx, dy) in enumerate(offsets):
            ann = ax.annotate(text, (x, y), xytext=(dx, dy), textcoords="offset points", fontsize=7.5,
                              ha="left" if dx > 0 else "right", va="bottom" if dy > 0 else "top", color=col,
                              zorder=8, annotation_clip=False,
                              bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8})
            bb = ann.get_window_extent(renderer).padded(2)
            if k == len(offsets) - 1 or (frame.contains(bb.x0, bb.y0) and frame.contains(bb.x1, bb.y1)
                                         and not any(bb.overlaps(t) for t in clear)):
                break
            ann.remove()
        taken.append(bb)
        out.append(ann)
    return out


def _differs(pt, env):
    """True when a requirement's own boundary is not one the envelope already draws."""
    b = pt.boundary
    c = b.cond if b is not None else None
    return b is not None and not (abs(c.beta - env.weight_fraction) < 1e-12 and c.temperature_offset == 0.0
                                  and b.target == 0.0 and c.thrust_lapse is None and c.config == "clean"
                                  and c.throttle == 1.0 and (b.n == 1.0 or b.n in {t.n for t in env.turns}))


def plot_envelope(env: Envelope, ax=None, **kwargs):
    """Draw an :class:`Envelope`: boundaries, Ps contours, limits, requirement marks.

    Keywords: contours (Ps contours, default True); energy (energy-height contours and the zoom
    ceiling, True); coffin (the 1 g stall or buffet edge and the Mach limit up to where they meet,
    the narrowest speed band, True); own_boundaries (each
    requirement's boundary at its own conditions, dotted in its colour, where it
    differs from the drawn ones; True); details (the requirements and margins
    below the plot; True); title (str); caution (the caution line; True).
    ax: matplotlib Axes, or None for a new Agg figure.

    Returns a dict of handles: figure, ax, region, level, stall, turns {n: Line2D}, contours,
    speed_limit, table_limit, ceilings, points {id: Line2D}, own {id: Line2D}, energy, zoom, coffin,
    narrowest, labels, legends, caution.
    """
    if set(kwargs) - set(_PLOT_OPTIONS):
        raise TypeError(f"plot_envelope() got unknown keyword(s) {', '.join(sorted(set(kwargs) - set(_PLOT_OPTIONS)))}"
                        f"; valid: {', '.join(_PLOT_OPTIONS)}")
    opt = {"contours": True, "energy": True, "coffin": True, "own_boundaries": True, "details": True, "title": None,
           "caution": True, **kwargs}
    from matplotlib.lines import Line2D
    from matplotlib.ticker import FuncFormatter

    if ax is None:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
        height = 6.4 + (0.2 * (len(env.points) + 2) if opt["details"] else 0.0)
        ax = FigureCanvasAgg(Figure(figsize=(10.0, height))).figure.add_axes((0.08, 1 - 5.6 / height, 0.84, 5 / height))
    fig, kft, top = ax.figure, 1.0 / FT, env.mach_top     # altitude drawn in ft
    h = {"figure": fig, "ax": ax, "turns": {}, "points": {}, "own": {}, "ceilings": {}, "legends": []}
    style, n_items, texts = [], [], []
    ax.set_xlim(0.0, top * 1.03)
    y_top = env.altitude[-1]
    cc = env.coffin if opt["coffin"] else None
    if cc is not None and cc.meet is not None and cc.meet[0] <= 1.35 * y_top:
        y_top = cc.meet[0] * 1.04          # show where stall (buffet) and the Mach limit meet
    ax.set_ylim(env.altitude[0] * kft, y_top * kft)
    x, y = env.level.line(drop_domain=False)
    h["region"] = ax.fill(x[np.isfinite(x)], y[np.isfinite(x)] * kft, fc="#e6f0f9", ec="none", zorder=0)[0]
    if opt["contours"] and np.isfinite(env.ps).any():
        step = nice_step(float(np.nanmax(env.ps)), 8)
        if len(levels := np.arange(step, float(np.nanmax(env.ps)), step)):
            cs = h["contours"] = ax.contour(env.mach, env.altitude * kft, env.ps, levels=levels,
                                            colors="#8494a3", linewidths=0.6, zorder=1)
            ax.clabel(cs, fmt=lambda v: f"{v:g}", fontsize=6.5, inline=True)
            style.append((Line2D([], [], color="#8494a3", lw=0.6), f"Ps at 1 g, every {step:g} m/s"))
    if opt["energy"] and env.energy is not None:
        step_ft = nice_step(float(np.nanmax(env.energy)) / FT, 6)
        lv = np.arange(step_ft, float(np.nanmax(env.energy)) / FT, step_ft) * FT
        if len(lv):
            ce = h["energy"] = ax.contour(env.mach, env.altitude * kft, env.energy, levels=lv, colors=_ENERGY,
                                          linewidths=0.6, linestyles=[(0, (6, 2, 1, 2))], zorder=1)
            ax.clabel(ce, fmt=lambda v: f"he {v / FT / 1000:g}k", fontsize=6.5, inline=True)
            style.append((Line2D([], [], color=_ENERGY, lw=0.6, ls=(0, (6, 2, 1, 2))),
                          f"energy height h + V²/2g, every {step_ft:,.0f} ft"))
    for i, b in enumerate(env.turns):
        col = _BLUES[min(i, len(_BLUES) - 1)]
        x, y = b.line()
        (h["turns"][b.n],) = ax.plot(x, y * kft, color=col, lw=1.2, zorder=3)
        k = int(np.nonzero(np.isfinite(b.hi))[0][-1])
        xy = (b.top[1], b.top[0]) if b.top is not None else (b.hi[k], b.altitude[k])
        n_items.append((xy[0], xy[1] * kft, f"{b.n:g} g", col, None))
    if env.turns:
        style.append((Line2D([], [], color=_BLUES[1], lw=1.2), "sustained n g (Ps = 0 at n g, CLmax)"))
    b = env.level
    x, y = b.line(drop_lift=True)
    (h["level"],) = ax.plot(x, y * kft, color="black", lw=2.0, zorder=4)
    style.append((h["level"], "1 g level flight (Ps = 0)"))
    ok = np.isfinite(b.lo) & b.lo_is_lift
    if ok.any():      # the stall line where it bounds the 1 g region, joined to the Ps = 0 line
        k = int(np.nonzero(ok)[0][-1])
        nxt = (b.lo[k + 1], b.altitude[k + 1]) if k + 1 < len(b.lo) and np.isfinite(b.lo[k + 1]) else \
            ((b.top[1], b.top[0]) if b.top else (np.nan, np.nan))
        (h["stall"],) = ax.plot(np.append(b.lo[ok], nxt[0]), np.append(b.altitude[ok], nxt[1]) * kft,
                                color=_STALL, lw=1.6, ls=(0, (5, 2)), zorder=4)
        style.append((h["stall"], "1 g stall (CLmax clean)"))
    if cc is not None:        # the low-speed edge above the 1 g region and the Mach limit, up to where they meet
        hi_h = cc.altitude[cc.altitude > env.altitude[-1] - 1.0]
        lift = np.isfinite(env.level.lo) & env.level.lo_is_lift      # where the stall already bounds the 1 g region
        above = cc.altitude >= (env.level.altitude[lift][-1] if lift.any() and cc.low_kind.startswith("stall") else -1e9)
        (h["coffin"],) = ax.plot(cc.low[above], cc.altitude[above] * kft, color=_STALL, lw=0.9, ls=(0, (2, 2)),
                                 zorder=3)
        if len(hi_h):
            hi_m = cc.high[cc.altitude > env.altitude[-1] - 1.0]
            ax.plot(hi_m, hi_h * kft, color="#555555", lw=1.2, ls="-.", zorder=4)
            ax.fill_betweenx(hi_h * kft, hi_m, np.maximum(hi_m, top), fc="none", ec="#c4c4c4", hatch="///", lw=0.0,
                             zorder=0.5)
        if cc.meet is not None and cc.meet[0] <= y_top:
            ax.plot([cc.meet[1]], [cc.meet[0] * kft], "v", ms=8, mfc=_STALL, mec="black", zorder=7)
            n_items.append((cc.meet[1], cc.meet[0] * kft, f"coffin corner {cc.meet[0] / FT:,.0f} ft", "#7a2020", None))
        if cc.narrowest is not None:
            hn, w, wv, lo, hi = cc.narrowest
            h["narrowest"] = ax.annotate("", (hi, hn * kft), xytext=(lo, hn * kft), arrowprops={
                "arrowstyle": "<->", "color": _BAND, "lw": 1.1, "shrinkA": 0, "shrinkB": 0}, zorder=6)
            n_items.append((0.5 * (lo + hi), hn * kft, f"narrowest band M {w:.3f} ({wv / KN:,.0f} kn TAS)", _BAND,
                            None))
        style.append((Line2D([], [], color=_STALL, lw=0.9, ls=(0, (2, 2))),
                      f"1 g {cc.low_kind} up to the coffin corner"))
    if opt["energy"] and env.zoom is not None:
        z = env.zoom
        y_arrow = min(z.energy_height, y_top * 0.985)
        h["zoom"] = ax.annotate("", (z.mach, y_arrow * kft), xytext=(z.mach, z.altitude * kft),
                                arrowprops={"arrowstyle": "->", "color": _ZOOM, "lw": 1.2}, zorder=6)
        n_items.append((z.mach, y_arrow * kft, f"zoom ≤ {z.energy_height / FT:,.0f} ft" +
                        ("" if z.energy_height <= y_top else " (above)"), _ZOOM, None))
    if env.speed_limit is not None:
        lm, lh = env.speed_limit
        (h["speed_limit"],) = ax.plot(lm, lh * kft, color="#555555", lw=1.2, ls="-.", zorder=4)
        ax.fill_betweenx(lh * kft, lm, np.maximum(lm, top), fc="none", ec="#c4c4c4", hatch="///", lw=0.0,
                         zorder=0.5)
        style.append((h["speed_limit"], env.speed_limit_text + " (hatched beyond)"))
    if env.table_limit is not None:
        h["table_limit"] = ax.axvline(env.table_limit, color="#777777", lw=0.8, zorder=4)
        style.append((h["table_limit"], f"end of the polar's Mach table (M {env.table_limit:g})"))
    for key, c, va, dy in (("absolute", env.absolute_ceiling, "bottom", 1), ("service", env.service_ceiling, "top", -1)):
        if c is not None:
            (h["ceilings"][key],) = ax.plot([c[1] - 0.05 * top, c[1] + 0.05 * top], [c[0] * kft] * 2,
                                            color="black", lw=0.9, ls="--", zorder=5)
            texts.append(ax.annotate(f"{key} ceiling {c[0] / FT:,.0f} ft", (c[1] - 0.05 * top, c[0] * kft),
                                     xytext=(-3, dy), textcoords="offset points", fontsize=7.5, va=va,
                                     ha="right", zorder=6, bbox={"fc": "white", "ec": "none", "alpha": 0.75,
                                                                 "boxstyle": "round,pad=0.1"}))
    entries, items = [], []
    for i, pt in enumerate(env.points):
        st = env.styles.get(pt.id)
        col = st.colour if st is not None else _COLOURS[0]
        mk, face, size = ("X", col, 11) if not pt.met else ("D" if pt.on_boundary else "o", col, 8)
        (ln,) = ax.plot([pt.mach], [pt.altitude * kft], marker=mk, ms=size, mfc=face, mec="black", mew=0.8,
                        ls="none", zorder=7, clip_on=False)
        h["points"][pt.id] = ln
        items.append((pt.mach, pt.altitude * kft, pt.id, col))
        if opt["own_boundaries"] and _differs(pt, env):
            x, y = pt.boundary.line(drop_lift=True)
            (h["own"][pt.id],) = ax.plot(x, y * kft, color=col, lw=1.0, ls=(0, (1, 1.5)), zorder=3)
        entries.append((ln, f"{pt.id} ({pt.kind}): {status_text(pt)}; {pt.detail}  [{pt.conditions}]"))
    ax.set_xlabel("Mach number")
    ax.set_ylabel("pressure altitude [ft]")
    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:,.0f}"))
    ax.secondary_yaxis("right", functions=(lambda f: f * FT / 1000.0, lambda k: k * 1000.0 / FT)
                       ).set_ylabel("pressure altitude [km]")
    ax.grid(True, color="#dddddd", lw=0.5, zorder=-1)
    y_text = f"P/W {env.power_or_thrust:.2f} W/N" if env.propeller else f"T/W {env.power_or_thrust:.3f}"
    ax.set_title(opt["title"] or f"{env.title}: flight envelope at weight fraction {env.weight_fraction:.2f}\n"
                 f"W/S {env.wing_loading:,.0f} N/m$^2$, {y_text}; standard day, clean, full throttle", fontsize=10)
    if h["own"]:
        style.append((Line2D([], [], color="#444444", lw=1.0, ls=(0, (1, 1.5))),
                      "a requirement's boundary at its own conditions"))
    leg = ax.legend(*zip(*style), loc="upper left", fontsize=7.5, framealpha=0.92)
    h["legends"].append(leg)
    if not hasattr(fig.canvas, "get_renderer"):      # a bare Figure(): give it an Agg canvas
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
    renderer = fig.canvas.get_renderer()
    marks = [ln.get_window_extent(renderer).padded(2) for ln in h["points"].values()]
    for t in texts:       # a ceiling label under the legend moves to the right end of its tick
        if t.get_window_extent(renderer).overlaps(leg.get_window_extent(renderer)):
            t.xy, t.xyann, _ = (t.xy[0] + 0.1 * top, t.xy[1]), (3, t.xyann[1]), t.set_ha("left")
    obstacles = [t.get_window_extent(renderer) for t in texts + [leg]] + marks
    h["labels"] = _place_labels(ax, n_items + [it + (mk,) for it, mk in zip(items, marks)], obstacles)
    anchor, xy = ax, (-0.07, -0.1)
    if opt["details"] and entries:
        ax.add_artist(leg)
        anchor = ax.legend(*zip(*entries), loc="upper left", bbox_to_anchor=xy, fontsize=7.5, frameon=False,
                           borderaxespad=0.0, title_fontsize=8, alignment="left",
                           title="requirements at their own conditions (diamond: on its boundary; X: not met)")
        h["legends"].append(anchor)
        xy = (0.0, 0.0)
    if opt["caution"]:
        text = "\n".join(textwrap.wrap(" ".join(f"Note: {t}." for t in env.notes), 150) + textwrap.wrap(CAUTION, 150))
        h["caution"] = ax.annotate(text, xy=xy, xycoords=anchor,
                                   xytext=(0, -6), textcoords="offset points", ha="left", va="top",
                                   fontsize=7, color="#333333", annotation_clip=False)
    return h


def render(env: Envelope, fmt="png", dpi=150, **kwargs) -> bytes:
    """The envelope figure as PNG, SVG or PDF bytes (the figure is cleared afterwards)."""
    fig, buf = plot_envelope(env, **kwargs)["figure"], io.BytesIO()
    try:
        fig.savefig(buf, format=fmt, dpi=dpi, bbox_inches="tight", pad_inches=0.15)
    finally:
        fig.clear()
    return buf.getvalue()


def check_output(path):
    suffix = ("." + str(path).rsplit(".", 1)[-1].lower()) if "." in str(path).rsplit("/", 1)[-1] else ""
    if suffix not in _SUFFIXES:
        raise InputError(f"{str(path)!r}: {suffix or 'no suffix'} is not a figure format; use "
                         f"{', '.join(_SUFFIXES)}", field="-o/--output")
    return suffix[1:]


def write_envelope(env: Envelope, output, data=None) -> list:
    """Write the figure (PNG/SVG/PDF by suffix) and optionally the table as CSV
    (first line a ``#`` comment with the title and the caution); the paths written."""
    written = [atomic_write(output, render(env, check_output(output)), "wb")]
    if data:
        head = f"# {env.title}: envelope at weight fraction {env.weight_fraction:g}. {CAUTION}\n"
        written.append(atomic_write(data, head + env.to_frame().to_csv(index=False, lineterminator="\n"), "w"))
    return [str(p) for p in written]

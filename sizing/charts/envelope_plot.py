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
_PLOT_OPTIONS = ("contours", "energy", "coffin", "own_boundaries", "details", "title", "caution", "speed", "units")
SPEEDS = ("mach", "cas", "tas")
_SPEED_LABEL = {"mach": "Mach number", "cas": "calibrated airspeed [kn CAS]", "tas": "true airspeed [kn TAS]"}
FT_PER_MIN = FT / 60.0        # [m/s]
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


def speed_map(kind):
    """The horizontal coordinate of a (Mach, pressure altitude [m]) point: the Mach number, or the
    calibrated or true airspeed in knots at that altitude (standard day; NaN stays NaN)."""
    if kind == "mach":
        return lambda M, h: np.asarray(M, float)
    if kind not in SPEEDS:
        raise ValueError(f"speed axis must be one of {', '.join(SPEEDS)}, got {kind!r}")
    from ..physics.airspeed import tas_to_cas
    from ..physics.atmosphere import isa

    def f(M, h):
        M, h = np.broadcast_arrays(np.asarray(M, float), np.asarray(h, float))
        out = np.full(M.shape, np.nan)
        ok = np.isfinite(M) & np.isfinite(h)
        if ok.any():
            air = isa(h[ok])
            tas = M[ok] * air.speed_of_sound
            out[ok] = (tas if kind == "tas" else tas_to_cas(tas, air, strict=False)) / KN
        return out if out.ndim else float(out)
    return f


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
           "caution": True, "speed": None, "units": "si", **kwargs}
    speed = opt["speed"] or ("cas" if env.propeller else "mach")
    X = speed_map(speed)
    if opt["units"] not in ("si", "us"):
        raise ValueError(f"units must be 'si' or 'us', got {opt['units']!r}")
    ps_unit, ps_scale = ("ft/min", 1.0 / FT_PER_MIN) if opt["units"] == "us" else ("m/s", 1.0)
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
    if speed == "mach":
        right = top * 1.03
    else:                          # in airspeed: to just beyond the fastest point drawn
        lx, ly = env.level.line(drop_domain=False)
        far = [X(lx, ly), [X(p.mach, p.altitude) for p in env.points]]
        if env.speed_limit is not None:
            far.append(X(*env.speed_limit))
        right = 1.1 * max(float(np.nanmax(np.asarray(f, float), initial=0.0)) for f in far if len(f))
    ax.set_xlim(0.0, right)
    span = right
    y_top = env.altitude[-1]
    cc = env.coffin if opt["coffin"] else None
    if cc is not None and cc.meet is not None and cc.meet[0] <= 1.35 * y_top:
        y_top = cc.meet[0] * 1.04          # show where stall (buffet) and the Mach limit meet
    ax.set_ylim(env.altitude[0] * kft, y_top * kft)
    x, y = env.level.line(drop_domain=False)
    fin = np.isfinite(x)
    h["region"] = ax.fill(X(x[fin], y[fin]), y[fin] * kft, fc="#e6f0f9", ec="none", zorder=0)[0]
    MM, HH = np.meshgrid(env.mach, env.altitude)
    XX = X(MM, HH)
    if opt["contours"] and np.isfinite(env.ps).any():
        ps = env.ps * ps_scale
        step = nice_step(float(np.nanmax(ps)), 8)
        if len(levels := np.arange(step, float(np.nanmax(ps)), step)):
            cs = h["contours"] = ax.contour(XX, HH * kft, ps, levels=levels,
                                            colors="#8494a3", linewidths=0.6, zorder=1)
            ax.clabel(cs, fmt=lambda v: f"{v:,.0f}" if ps_unit == "ft/min" else f"{v:g}", fontsize=6.5, inline=True)
            style.append((Line2D([], [], color="#8494a3", lw=0.6), f"Ps at 1 g, every {step:,g} {ps_unit}"))
    if opt["energy"] and env.energy is not None:
        step_ft = nice_step(float(np.nanmax(env.energy)) / FT, 6)
        lv = np.arange(step_ft, float(np.nanmax(env.energy)) / FT, step_ft) * FT
        if len(lv):
            ce = h["energy"] = ax.contour(XX, HH * kft, env.energy, levels=lv, colors=_ENERGY,
                                          linewidths=0.6, linestyles=[(0, (6, 2, 1, 2))], zorder=1)
            ax.clabel(ce, fmt=lambda v: f"he {v / FT / 1000:g}k", fontsize=6.5, inline=True)
            style.append((Line2D([], [], color=_ENERGY, lw=0.6, ls=(0, (6, 2, 1, 2))),
                          f"energy height h + V²/2g, every {step_ft:,.0f} ft"))
    for i, b in enumerate(env.turns):
        col = _BLUES[min(i, len(_BLUES) - 1)]
        x, y = b.line()
        (h["turns"][b.n],) = ax.plot(X(x, y), y * kft, color=col, lw=1.2, zorder=3)
        k = int(np.nonzero(np.isfinite(b.hi))[0][-1])
        xy = (b.top[1], b.top[0]) if b.top is not None else (b.hi[k], b.altitude[k])
        n_items.append((X(xy[0], xy[1]), xy[1] * kft, f"{b.n:g} g", col, None))
    if env.turns:
        style.append((Line2D([], [], color=_BLUES[1], lw=1.2), "sustained n g (Ps = 0 at n g, CLmax)"))
    b = env.level
    x, y = b.line(drop_lift=True)
    (h["level"],) = ax.plot(X(x, y), y * kft, color="black", lw=2.0, zorder=4)
    style.append((h["level"], "1 g level flight (Ps = 0)"))
    ok = np.isfinite(b.lo) & b.lo_is_lift
    if ok.any():      # the stall line where it bounds the 1 g region, joined to the Ps = 0 line
        k = int(np.nonzero(ok)[0][-1])
        nxt = (b.lo[k + 1], b.altitude[k + 1]) if k + 1 < len(b.lo) and np.isfinite(b.lo[k + 1]) else \
            ((b.top[1], b.top[0]) if b.top else (np.nan, np.nan))
        sh = np.append(b.altitude[ok], nxt[1])
        (h["stall"],) = ax.plot(X(np.append(b.lo[ok], nxt[0]), sh), sh * kft,
                                color=_STALL, lw=1.6, ls=(0, (5, 2)), zorder=4)
        style.append((h["stall"], "1 g stall (CLmax clean)"))
    if cc is not None:        # the low-speed edge above the 1 g region and the Mach limit, up to where they meet
        hi_h = cc.altitude[cc.altitude > env.altitude[-1] - 1.0]
        lift = np.isfinite(env.level.lo) & env.level.lo_is_lift      # where the stall already bounds the 1 g region
        above = cc.altitude >= (env.level.altitude[lift][-1] if lift.any() and cc.low_kind.startswith("stall") else -1e9)
        (h["coffin"],) = ax.plot(X(cc.low[above], cc.altitude[above]), cc.altitude[above] * kft, color=_STALL,
                                 lw=0.9, ls=(0, (2, 2)),
                                 zorder=3)
        if len(hi_h):
            hi_m = X(cc.high[cc.altitude > env.altitude[-1] - 1.0], hi_h)
            ax.plot(hi_m, hi_h * kft, color="#555555", lw=1.2, ls="-.", zorder=4)
            ax.fill_betweenx(hi_h * kft, hi_m, np.maximum(hi_m, right), fc="none", ec="#c4c4c4", hatch="///", lw=0.0,
                             zorder=0.5)
        if cc.meet is not None and cc.meet[0] <= y_top:
            ax.plot([X(cc.meet[1], cc.meet[0])], [cc.meet[0] * kft], "v", ms=8, mfc=_STALL, mec="black", zorder=7)
            n_items.append((X(cc.meet[1], cc.meet[0]), cc.meet[0] * kft, f"coffin corner {cc.meet[0] / FT:,.0f} ft", "#7a2020", None))
        if cc.narrowest is not None:
            hn, w, wv, lo, hi = cc.narrowest
            h["narrowest"] = ax.annotate("", (X(hi, hn), hn * kft), xytext=(X(lo, hn), hn * kft), arrowprops={
                "arrowstyle": "<->", "color": _BAND, "lw": 1.1, "shrinkA": 0, "shrinkB": 0}, zorder=6)
            n_items.append((0.5 * (X(lo, hn) + X(hi, hn)), hn * kft,
                            f"narrowest band M {w:.3f} ({wv / KN:,.0f} kn TAS)", _BAND,
                            None))
        style.append((Line2D([], [], color=_STALL, lw=0.9, ls=(0, (2, 2))),
                      f"1 g {cc.low_kind} up to the coffin corner"))
    if opt["energy"] and env.zoom is not None:
        z = env.zoom
        y_arrow = min(z.energy_height, y_top * 0.985)
        xz = X(z.mach, z.altitude)          # drawn upwards from the speed it starts at
        h["zoom"] = ax.annotate("", (xz, y_arrow * kft), xytext=(xz, z.altitude * kft),
                                arrowprops={"arrowstyle": "->", "color": _ZOOM, "lw": 1.2}, zorder=6)
        n_items.append((xz, y_arrow * kft, f"zoom ≤ {z.energy_height / FT:,.0f} ft" +
                        ("" if z.energy_height <= y_top else " (above)"), _ZOOM, None))
    if env.speed_limit is not None:
        lm, lh = env.speed_limit
        lm = X(lm, lh)
        (h["speed_limit"],) = ax.plot(lm, lh * kft, color="#555555", lw=1.2, ls="-.", zorder=4)
        ax.fill_betweenx(lh * kft, lm, np.maximum(lm, right), fc="none", ec="#c4c4c4", hatch="///", lw=0.0,
                         zorder=0.5)
        style.append((h["speed_limit"], env.speed_limit_text + " (hatched beyond)"))
    if env.table_limit is not None:
        if speed == "mach":
            h["table_limit"] = ax.axvline(env.table_limit, color="#777777", lw=0.8, zorder=4)
        else:
            (h["table_limit"],) = ax.plot(X(np.full_like(env.altitude, env.table_limit), env.altitude),
                                          env.altitude * kft, color="#777777", lw=0.8, zorder=4)
        style.append((h["table_limit"], f"end of the polar's Mach table (M {env.table_limit:g})"))
    for key, c, va, dy in (("absolute", env.absolute_ceiling, "bottom", 1), ("service", env.service_ceiling, "top", -1)):
        if c is not None:
            xc = X(c[1], c[0])
            (h["ceilings"][key],) = ax.plot([xc - 0.05 * span, xc + 0.05 * span], [c[0] * kft] * 2,
                                            color="black", lw=0.9, ls="--", zorder=5)
            texts.append(ax.annotate(f"{key} ceiling {c[0] / FT:,.0f} ft", (xc - 0.05 * span, c[0] * kft),
                                     xytext=(-3, dy), textcoords="offset points", fontsize=7.5, va=va,
                                     ha="right", zorder=6, bbox={"fc": "white", "ec": "none", "alpha": 0.75,
                                                                 "boxstyle": "round,pad=0.1"}))
    entries, items = [], []
    for i, pt in enumerate(env.points):
        st = env.styles.get(pt.id)
        col = st.colour if st is not None else _COLOURS[0]
        mk, face, size = ("X", col, 11) if not pt.met else ("D" if pt.on_boundary else "o", col, 8)
        xp = X(pt.mach, pt.altitude)
        (ln,) = ax.plot([xp], [pt.altitude * kft], marker=mk, ms=size, mfc=face, mec="black", mew=0.8,
                        ls="none", zorder=7, clip_on=False)
        h["points"][pt.id] = ln
        items.append((xp, pt.altitude * kft, pt.id, col))
        if opt["own_boundaries"] and _differs(pt, env):
            x, y = pt.boundary.line(drop_lift=True)
            (h["own"][pt.id],) = ax.plot(X(x, y), y * kft, color=col, lw=1.0, ls=(0, (1, 1.5)), zorder=3)
        entries.append((ln, f"{pt.id} ({pt.kind}): {status_text(pt)}; {pt.detail}  [{pt.conditions}]"))
    if speed != "mach":            # Mach as well: thin lines of constant Mach number, labelled at the top
        h["mach_lines"] = []
        m_step = nice_step(top, 6)
        for Mk in np.arange(m_step, top + 1e-9, m_step):
            xs = X(np.full_like(env.altitude, Mk), env.altitude)
            (ln,) = ax.plot(xs, env.altitude * kft, color="#b0b0b0", lw=0.6, ls=(0, (1, 2)), zorder=0.8)
            h["mach_lines"].append(ln)
            k = int(np.searchsorted(env.altitude * kft, ax.get_ylim()[1] * 0.97) - 1)
            k = min(max(k, 0), len(xs) - 1)
            if np.isfinite(xs[k]) and xs[k] < right:
                ax.annotate(f"M {Mk:g}", (xs[k], env.altitude[k] * kft), xytext=(2, 0), textcoords="offset points",
                            fontsize=6.5, color="#808080", va="top", zorder=1)
        style.append((Line2D([], [], color="#b0b0b0", lw=0.6, ls=(0, (1, 2))),
                      f"constant Mach number (every {m_step:g})"))
    ax.set_xlabel(_SPEED_LABEL[speed] + (", standard day" if speed != "mach" else ""))
    ax.set_ylabel("pressure altitude [ft]")
    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:,.0f}"))
    ax.secondary_yaxis("right", functions=(lambda f: f * FT / 1000.0, lambda k: k * 1000.0 / FT)
                       ).set_ylabel("pressure altitude [km]")
    ax.grid(True, color="#dddddd", lw=0.5, zorder=-1)
    y_text = (f"P_SL/W_TO {env.power_or_thrust:.2f} W/N" if env.propeller
              else f"T_SL/W_TO {env.power_or_thrust:.3f}") + f" ({env.rating or 'top rating'})"
    ax.set_title(opt["title"] or f"{env.title}: flight envelope at weight fraction {env.weight_fraction:.2f}\n"
                 f"W/S {env.wing_loading:,.0f} N/m$^2$, {y_text}; standard day, clean, full throttle", fontsize=10)
    if h["own"]:
        style.append((Line2D([], [], color="#444444", lw=1.0, ls=(0, (1, 1.5))),
                      "a requirement's boundary at its own conditions"))
    # in airspeed the low, slow corner fills the upper left: the key goes beside the plot then
    leg = (ax.legend(*zip(*style), loc="upper left", fontsize=7.5, framealpha=0.92) if speed == "mach" else
           ax.legend(*zip(*style), loc="upper left", bbox_to_anchor=(1.1, 1.0), fontsize=7.5, frameon=False))
    h["legends"].append(leg)
    if not hasattr(fig.canvas, "get_renderer"):      # a bare Figure(): give it an Agg canvas
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
    renderer = fig.canvas.get_renderer()
    marks = [ln.get_window_extent(renderer).padded(2) for ln in h["points"].values()]
    for t in texts:       # a ceiling label under the legend moves to the right end of its tick
        if t.get_window_extent(renderer).overlaps(leg.get_window_extent(renderer)):
            t.xy, t.xyann, _ = (t.xy[0] + 0.1 * span, t.xy[1]), (3, t.xyann[1]), t.set_ha("left")
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


def write_envelope(env: Envelope, output, data=None, **kwargs) -> list:
    """Write the figure (PNG/SVG/PDF by suffix; ``kwargs`` go to :func:`plot_envelope`) and
    optionally the table as CSV (first line a ``#`` comment with the title and the caution);
    the paths written."""
    written = [atomic_write(output, render(env, check_output(output), **kwargs), "wb")]
    if data:
        from .files import csv_text

        text = csv_text(env.to_frame(), f"{env.title}: envelope at weight fraction {env.weight_fraction:g}; "
                        "altitude_m, altitude_ft, mach in their units; value and required in the row's unit "
                        "column; empty: no number", float_format=None)
        written.append(atomic_write(data, text, "w"))
    return [str(p) for p in written]

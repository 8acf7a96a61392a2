"""The constraint diagram drawn in the browser (Bokeh), from the numbers ``sizing diagram`` draws.

:class:`DiagramView` draws a :class:`sizing.charts.diagram_data.DiagramData`
(the same sampled curves, weight-closure grid and axis ranges as the static
figure) with the same colour, marker and line style per requirement
(:func:`sizing.charts.style.requirement_styles`): required T/W (or P/W) curves,
wing-loading limits, the feasible region, where the weight does not close,
lines of constant takeoff mass and the design point. Updates replace the data
of the existing glyphs, so the page never rebuilds the figure. SI axes.
"""
from __future__ import annotations

import math

import numpy as np

from ..charts.diagram_data import nice
from ..charts.style import DESIGN_COLOUR, FEASIBLE_FILL, MASS_COLOUR, NO_CLOSURE_FILL
from ..physics.propulsion import axis_label

# matplotlib marker and dash codes of charts.style -> Bokeh's names
_MARKERS = {"o": "circle", "s": "square", "^": "triangle", "D": "diamond", "v": "inverted_triangle",
            "P": "plus", "X": "x", "h": "hex", "<": "square_pin", ">": "triangle_pin"}
STALE_COLOUR = "#8a8a8a"


def _dash(ls):
    if ls == "-":
        return "solid"
    return [round(v * 2) for v in ls[1]]


def _fmt(v):
    return f"{v:,.0f}" if abs(v) >= 1000 else f"{v:.3g}"


class DiagramView:
    """A Bokeh figure of one requirement file's constraint diagram, updated in place."""

    def __init__(self, data, width=780, height=560):
        from bokeh.models import ColumnDataSource, HoverTool, Label, Legend, LegendItem, Range1d
        from bokeh.plotting import figure

        self.propeller = data.propeller
        ylab = f"{axis_label(data.propeller, data.rating)}  [{'W/N' if data.propeller else '–'}]"
        self.fig = fig = figure(width=width, height=height, x_axis_label="wing loading  W/S  [N/m²]",
                                y_axis_label=ylab, tools="pan,wheel_zoom,box_zoom,reset,save",
                                x_range=Range1d(*data.x_range), y_range=Range1d(*data.y_range),
                                toolbar_location="above", html_id="diagram")
        fig.title.text = "constraint diagram"
        fig.title.text_font_size = "13px"
        fig.grid.grid_line_color = "#d9d9d9"
        fig.axis.axis_label_text_font_style = "normal"
        fig.axis.axis_label_text_font_size = "13px"
        self.feasible = ColumnDataSource(dict(x=[], y1=[], y2=[]))
        fig.varea(source=self.feasible, x="x", y1="y1", y2="y2", fill_color=FEASIBLE_FILL, level="underlay")
        # grey over blue: where the weight does not close, no design exists whatever the requirements say
        self.no_closure = ColumnDataSource(dict(xs=[], ys=[]))
        fig.multi_polygons(source=self.no_closure, xs="xs", ys="ys", fill_color=NO_CLOSURE_FILL, line_color=None,
                           level="underlay")
        self.mass = ColumnDataSource(dict(xs=[], ys=[], colour=[], width=[]))
        fig.multi_line(source=self.mass, xs="xs", ys="ys", line_color="colour", line_width="width",
                       line_dash=[6, 4])
        self.mass_labels = ColumnDataSource(dict(x=[], y=[], text=[], colour=[]))
        fig.text(source=self.mass_labels, x="x", y="y", text="text", text_color="colour", text_font_size="11px",
                 text_font_style="italic", text_align="center", text_baseline="middle",
                 background_fill_color="white", background_fill_alpha=0.85)
        self.curves, self.marks, self.limits, items = {}, {}, {}, []
        hover = []
        for c in data.curves:
            st = data.styles[c.id]
            colour, marker, ls = st.colour, st.marker, st.linestyle
            src = ColumnDataSource(dict(x=[], y=[], id=[]))
            line = fig.line(source=src, x="x", y="y", line_color=colour, line_width=1.8, line_dash=_dash(ls))
            msrc = ColumnDataSource(dict(x=[], y=[]))
            mk = fig.scatter(source=msrc, x="x", y="y", marker=_MARKERS.get(marker, "circle"), size=8,
                             line_color=colour, fill_color="white", line_width=1.5)
            lsrc = ColumnDataSource(dict(x=[], y=[], id=[]))
            lim = fig.line(source=lsrc, x="x", y="y", line_color=colour, line_width=1.8,
                           line_dash="solid" if c.thrust is None else [8, 4])
            self.curves[c.id], self.marks[c.id], self.limits[c.id] = (src, line), msrc, (lsrc, lim)
            items.append(LegendItem(label=c.id, renderers=[line, mk, lim]))
            hover += [line, lim]
        self.curve_labels = ColumnDataSource(dict(x=[], y=[], text=[], colour=[], weight=[], align=[], dx=[]))
        fig.text(source=self.curve_labels, x="x", y="y", text="text", text_color="colour", text_font_size="12px",
                 text_font_style=dict(field="weight"), text_align=dict(field="align"), text_baseline="bottom",
                 x_offset=dict(field="dx"), y_offset=-2, background_fill_color="white", background_fill_alpha=0.8)
        self.design = ColumnDataSource(dict(x=[], y=[]))
        fig.scatter(source=self.design, x="x", y="y", size=17, marker="circle", fill_color="white",
                    line_color=DESIGN_COLOUR, line_width=2.6)
        fig.scatter(source=self.design, x="x", y="y", size=5, marker="circle", color=DESIGN_COLOUR)
        self.stale = ColumnDataSource(dict(x=[], y=[]))
        fig.scatter(source=self.stale, x="x", y="y", size=17, marker="circle", fill_color=None,
                    line_color=STALE_COLOUR, line_width=2.0, line_dash=[3, 3])
        self.design_label = Label(x=0, y=0, text="", x_offset=14, y_offset=10, text_font_size="12px",
                                  background_fill_color="white", background_fill_alpha=0.9,
                                  border_line_color=DESIGN_COLOUR, visible=False, text_line_height=1.3)
        fig.add_layout(self.design_label)
        self.banner = Label(x=8, y=8, x_units="screen", y_units="screen", text="", text_font_size="15px",
                            text_color="#bb2233", text_font_style="bold", background_fill_color="white",
                            background_fill_alpha=0.92, border_line_color="#bb2233", visible=False)
        fig.add_layout(self.banner)
        legend = Legend(items=items, location="top_left", click_policy="hide", label_text_font_size="12px",
                        title="requirements (click to hide)", title_text_font_size="11px")
        fig.add_layout(legend, "right")
        fig.add_tools(HoverTool(renderers=hover, tooltips=[("requirement", "@id"), ("W/S", "$x{0,0} N/m²"),
                                                           ("P/W" if data.propeller else "T/W",
                                                            "$y{0.00}" if data.propeller else "$y{0.000}")]))
        self.show(data)

    # ---------------------------------------------------------------- updates
    def _view(self):
        f = self.fig
        return (f.x_range.start, f.x_range.end), (f.y_range.start, f.y_range.end)

    def show(self, data, active=None):
        """Draw a DiagramData: curves, limits, regions, mass lines (the design point: :meth:`point`)."""
        fig = self.fig
        (x0, x1), (y0, y1) = self._view()
        # the view stays put while the design point is in it (before and after compare at a
        # glance); it follows the data when the point leaves it or there is no design
        if data.design is None or not (x0 <= data.design[0] <= x1 and y0 <= data.design[1] <= y1):
            fig.x_range.update(start=data.x_range[0], end=data.x_range[1])
            fig.y_range.update(start=data.y_range[0], end=data.y_range[1])
        xr, yr = self._view()
        placer = _Placer(xr, yr, fig.width - 235, fig.height - 105)
        if data.design is not None:
            placer.take_design(data.design[0], data.design[1])
        active = {c.id for c in data.curves if c.active} if active is None else set(active)
        clip = yr[1] + 2.0 * (yr[1] - yr[0])
        labels = dict(x=[], y=[], text=[], colour=[], weight=[], align=[], dx=[])

        def label(spot, text, colour, bold):
            labels["x"].append(spot[0])
            labels["y"].append(spot[1])
            labels["text"].append(text)
            labels["colour"].append(colour)
            labels["weight"].append("bold" if bold else "normal")
            labels["align"].append(spot[2])
            labels["dx"].append(4 if spot[2] == "left" else -4)

        for c in sorted(data.curves, key=lambda c: (c.id not in active, c.index)):
            colour = data.styles[c.id].colour
            src, line = self.curves[c.id]
            # a part is drawn as a driver only where the design sits on it (diagram_data's parts; an
            # active id whose parts are not known yet keeps its curve bold)
            known = c.thrust_active or c.limit_active
            on_curve = c.id in active and (c.thrust_active or not known)
            on_limit = c.id in active and (c.limit_active or (not known and c.thrust is None))
            width = 3.2 if on_curve else 1.8
            line.glyph.line_width = width
            if c.thrust is not None:
                Y = np.where(np.isfinite(c.thrust) & (c.thrust < clip), c.thrust, np.nan)
                src.data = dict(x=data.W_S, y=Y, id=[c.id] * len(Y))
                step = max(len(Y) // 5, 1)
                start = int((0.06 + 0.035 * (data.styles[c.id].slot % 5)) * len(Y))
                idx = [i for i in range(start, len(Y), step) if np.isfinite(Y[i])]
                self.marks[c.id].data = dict(x=data.W_S[idx], y=Y[idx])
                ok = np.where(np.isfinite(Y) & (Y > yr[0]) & (Y < yr[1]) & (data.W_S > xr[0]) & (data.W_S < xr[1]))[0]
                cands = [(float(data.W_S[ok[int(f * (ok.size - 1))]]), float(Y[ok[int(f * (ok.size - 1))]]))
                         for f in (0.9, 0.75, 0.6, 0.45, 0.3, 0.15)] if ok.size else []
                spot = placer.place(cands, c.id, 12, "left")
                if spot is not None:
                    label(spot, c.id, colour, on_curve)
            else:
                src.data = dict(x=[], y=[], id=[])
                self.marks[c.id].data = dict(x=[], y=[])
            lsrc, lim = self.limits[c.id]
            if c.boundary is not None and np.isfinite(c.boundary):
                text = c.id if c.thrust is None else f"{c.id} CLmax"
                lsrc.data = dict(x=[c.boundary, c.boundary], y=[yr[0] - 10 * (yr[1] - yr[0]), clip],
                                 id=[c.id if c.thrust is None else f"{c.id} (CLmax)"] * 2)
                lim.glyph.line_width = (3.2 if on_limit else 1.8) if c.thrust is None else (2.6 if on_limit else 1.4)
                heights = [yr[0] + f * (yr[1] - yr[0]) for f in (0.93, 0.86, 0.79, 0.72, 0.65, 0.3, 0.2)]
                spot = placer.place([(c.boundary, h) for h in heights], text, 12, "left") or \
                    placer.place([(c.boundary, h) for h in heights], text, 12, "right")   # left of the line
                if spot is not None:
                    label(spot, text, colour, on_limit)
            else:
                lsrc.data = dict(x=[], y=[], id=[])
        self.curve_labels.data = labels
        env, lim = data.envelope()
        ok = (data.W_S <= lim) & np.isfinite(env) & (env < yr[1])
        self.feasible.data = dict(x=data.W_S[ok], y1=np.maximum(env[ok], yr[0]), y2=np.full(ok.sum(), clip))
        self._no_closure(data)
        self._mass_lines(data, placer)

    def _no_closure(self, data):
        """Grey polygons where the weight does not close (the residual's zero, interpolated)."""
        import contourpy

        rest = np.where(np.isfinite(data.closure_rest), data.closure_rest, -1.0)
        xs, ys = [], []
        if (rest <= 1e-3).any():
            gen = contourpy.contour_generator(data.mass_W_S, data.mass_Y, rest, fill_type="OuterOffset")
            for pts, offs in zip(*gen.filled(-1e9, 1e-3)):
                rings = [pts[offs[i]:offs[i + 1]] for i in range(len(offs) - 1)]
                xs.append([[r[:, 0] for r in rings]])
                ys.append([[r[:, 1] for r in rings]])
        self.no_closure.data = dict(xs=xs, ys=ys)

    def _mass_lines(self, data, placer):
        """Lines of constant closed takeoff mass (the design's own in black), one label each."""
        import contourpy

        mass = data.mass
        finite = mass[np.isfinite(mass)]
        lines, lab = dict(xs=[], ys=[], colour=[], width=[]), dict(x=[], y=[], text=[], colour=[])
        if finite.size:
            m_ref = data.design[2] if data.design is not None else float(np.percentile(finite, 20))
            step = nice(0.12 * m_ref)
            lo, hi = max(float(finite.min()), 0.6 * m_ref), min(float(finite.max()), 1.6 * m_ref)
            levels = [(v, MASS_COLOUR, 1.0) for v in np.arange(math.ceil(lo / step) * step, hi, step)
                      if abs(v - m_ref) > 0.25 * step][:12]
            if data.design is not None:
                levels.append((m_ref, DESIGN_COLOUR, 1.4))
            gen = contourpy.contour_generator(data.mass_W_S, data.mass_Y, mass)
            xr, yr = self._view()
            for level, colour, width in levels:
                placed = False
                for seg in sorted(gen.lines(level), key=len, reverse=True):
                    if len(seg) < 2:
                        continue
                    lines["xs"].append(seg[:, 0])
                    lines["ys"].append(seg[:, 1])
                    lines["colour"].append(colour)
                    lines["width"].append(width)
                    inside = [(px, py) for px, py in seg if xr[0] < px < xr[1] and yr[0] < py < yr[1]]
                    if inside and not placed:
                        text = f"{_fmt(level)} kg"
                        inside.sort()            # right-hand end first: away from the crowded closure edge
                        cands = [inside[int(f * (len(inside) - 1))] for f in (0.9, 0.75, 0.6, 0.45, 0.3, 0.15)]
                        spot = placer.place(cands, text, 11, "center")
                        if spot is not None:
                            lab["x"].append(spot[0])
                            lab["y"].append(spot[1])
                            lab["text"].append(text)
                            lab["colour"].append(colour)
                            placed = True
        self.mass.data = lines
        self.mass_labels.data = lab

    def point(self, numbers, stale=None):
        """The design point (from the quick numbers), or none; ``stale``: the last good one, dashed grey."""
        if numbers is not None:
            self.fig.title.text = f"constraint diagram · drivers: {', '.join(numbers.drivers) or 'none'}"
            self.design.data = dict(x=[numbers.wing_loading], y=[numbers.y])
            ylab = "P/W" if self.propeller else "T/W"
            yval = f"{numbers.y:.2f} W/N" if self.propeller else f"{numbers.y:.3f}"
            self.design_label.update(x=numbers.wing_loading, y=numbers.y, visible=True,
                                     text=f"design point\nW/S  {_fmt(numbers.wing_loading)} N/m²\n"
                                          f"{ylab}  {yval}\nm_TO  {numbers.takeoff_mass:,.0f} kg",
                                     border_line_color=DESIGN_COLOUR, text_color=DESIGN_COLOUR)
            self.stale.data = dict(x=[], y=[])
            self.banner.visible = False
            fig = self.fig
            if not (fig.x_range.start <= numbers.wing_loading <= fig.x_range.end
                    and fig.y_range.start <= numbers.y <= fig.y_range.end):
                fig.x_range.update(start=0.0, end=max(fig.x_range.end, 1.3 * numbers.wing_loading))
                fig.y_range.update(start=0.0, end=max(fig.y_range.end, 1.3 * numbers.y))
            return
        self.design.data = dict(x=[], y=[])
        self.fig.title.text = "constraint diagram · no feasible design for these values"
        if stale is not None:
            self.stale.data = dict(x=[stale.wing_loading], y=[stale.y])
            self.design_label.update(x=stale.wing_loading, y=stale.y, visible=True,
                                     text=f"last feasible design (stale)\nm_TO  {stale.takeoff_mass:,.0f} kg",
                                     border_line_color=STALE_COLOUR, text_color=STALE_COLOUR)
        else:
            self.stale.data = dict(x=[], y=[])
            self.design_label.visible = False

    def say(self, text):
        """A banner in the plot's corner ("no feasible design"), or none."""
        self.banner.update(text=text or "", visible=bool(text))


class _Placer:
    """Greedy label placement on the plot: each label takes the first candidate spot whose
    box (estimated from the text length, in screen pixels) overlaps no label placed before."""

    def __init__(self, xr, yr, width_px, height_px):
        self.x0, self.y0 = xr[0], yr[0]
        self.sx = width_px / max(xr[1] - xr[0], 1e-12)
        self.sy = height_px / max(yr[1] - yr[0], 1e-12)
        self.w, self.h = width_px, height_px
        self.boxes = []

    def _box(self, x, y, text, size, align):
        px, py = (x - self.x0) * self.sx, (y - self.y0) * self.sy
        w, h = 0.58 * size * len(text) + 6, 1.35 * size
        if align == "center":
            return px - w / 2, py - h / 2, px + w / 2, py + h / 2
        if align == "right":
            return px - 2 - w, py, px - 2, py + h
        return px + 2, py, px + 2 + w, py + h

    def _free(self, b):
        inside = b[0] >= 0 and b[2] <= self.w + 20 and b[1] >= 0 and b[3] <= self.h
        return inside and not any(b[0] < o[2] and o[0] < b[2] and b[1] < o[3] and o[1] < b[3] for o in self.boxes)

    def take_design(self, x, y):
        """The design point and its label box (drawn 14 px right of and 10 px above the point)."""
        px, py = (x - self.x0) * self.sx, (y - self.y0) * self.sy
        self.boxes += [(px - 12, py - 12, px + 12, py + 12), (px + 12, py + 8, px + 150, py + 82)]

    def place(self, candidates, text, size, align):
        for x, y in candidates:
            b = self._box(x, y, text, size, align)
            if self._free(b):
                self.boxes.append(b)
                return x, y, align
        return None

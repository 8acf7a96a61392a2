"""The what-if page (a Bokeh document): controls by requirement, the diagram, the design panel.

One :class:`Page` per open browser tab. Every movable value of the file
(:mod:`.controls`) gets a slider (around its value) and a number box (any
value in range), grouped by requirement id with the requirement's curve
colour; a value outside the range the file format accepts is refused at the
control (message beside it, previous value kept). Changes go to the tab's
:class:`~.engine.Session`; its answers arrive on the server's event loop:
the design numbers first, then the curves, then costs and margins (or the
diagnosis of an infeasible set). While no design is found the last good
numbers stay on the page, marked stale. "Reset" returns to the file's
values; "Save as YAML" writes the changed file (never over an existing file
or the input without a second click).
"""
from __future__ import annotations

import html
import time
from functools import partial

from ..common.caution import CAUTION
from ..common.errors import InputError, SizingError
from ..reports.summary import cost_line, margin_cells, relaxation_heading, relaxation_text, step_reaches
from .controls import round_to, shown
from .engine import Explorer, NeedsConfirmation, Numbers, Session
from .plot import DiagramView

CSS = """
:host { font-family: system-ui, -apple-system, "Segoe UI", Roboto, Arial, sans-serif; font-size: 13px; }
table.nums { border-collapse: collapse; width: 100%; }
table.nums td { padding: 2px 6px 2px 0; vertical-align: top; }
table.nums td.v { font-weight: 600; text-align: right; white-space: nowrap; }
table.nums td.o { color: #555; font-size: 12px; }
.stale { color: #8a8a8a; }
.stale td.v { text-decoration: line-through; text-decoration-color: #bbb; }
.badge { display: inline-block; padding: 1px 6px; border-radius: 3px; font-size: 11px; font-weight: 600; }
.ok { background: #e4eef6; color: #225599; }
.bad { background: #f8e1e4; color: #bb2233; }
.warn { background: #fff3cd; color: #6b5000; }
h3 { margin: 10px 0 4px 0; font-size: 14px; }
ul { margin: 2px 0; padding-left: 18px; }
.muted { color: #666; font-size: 12px; }
"""
CAUTION_CSS = ("background:#fff3cd;border:1px solid #e0c060;padding:6px 10px;border-radius:4px;"
               "font-size:13px;color:#3d3000")


def _e(text) -> str:
    return html.escape(str(text))


class _Html:
    """A Div whose content sits in an element with a known id (what tests and styles reach;
    Bokeh renders a Div's HTML inside its shadow root)."""

    def __init__(self, div, inner_id):
        self.div, self.inner_id, self._text = div, inner_id, ""

    @property
    def text(self):
        return self._text

    @text.setter
    def text(self, value):
        self._text = value
        self.div.text = f"<div id='{self.inner_id}'>{value}</div>"


class Page:
    """The widgets of one tab and their updates (all on the server's event loop)."""

    def __init__(self, explorer: Explorer, doc):
        from bokeh.layouts import column, row
        from bokeh.models import Button, Div, InlineStyleSheet, TextInput

        self.ex, self.doc = explorer, doc
        self.css = InlineStyleSheet(css=CSS)
        self.session = Session(explorer, self._publish)
        self.wanted = dict(explorer.initial)
        self.widgets = {}                 # key -> (slider, number box, message)
        self._syncing = False
        self._shown = 0                   # newest step shown (older answers are dropped)
        self._pending_save = None

        base = explorer.base
        self.view = DiagramView(explorer.curves_base)
        self.view.point(Numbers.of(base))
        title = Div(text=f"<b style='font-size:18px'>{_e(explorer.spec.title)}</b>"
                         f"<div class='muted'>what-if page for {_e(explorer.path)} · sha256 "
                         f"{_e(explorer.spec.sha256[:12] or 'n/a')} · move a value: the design follows</div>",
                    stylesheets=[self.css], width=1200)
        caution = Div(text=f"<div style='{CAUTION_CSS}' id='caution-text'>{_e(CAUTION)}</div>", width=1200)
        self.status = _Html(Div(text="", stylesheets=[self.css], width=780), "status")
        self.panel = _Html(Div(text="", stylesheets=[self.css], width=400), "panel")
        self.numbers_div = _Html(Div(text="", stylesheets=[self.css], width=400), "numbers")

        groups = self._controls()
        controls = column(*groups, width=410, height=720, styles={"overflow-y": "auto", "padding-right": "6px"})
        reset = Button(label="Reset to the file's values", width=210, html_id="reset")
        reset.on_click(self.reset)
        self.target = TextInput(value=str(explorer.default_target()), width=400, title="save as",
                                html_id="save-path")
        save = Button(label="Save as YAML", button_type="primary", width=130, html_id="save")
        save.on_click(self.save)
        self.confirm = Button(label="Overwrite", button_type="danger", width=100, visible=False,
                              html_id="confirm-overwrite")
        self.confirm.on_click(partial(self.save, overwrite=True))
        self.cancel = Button(label="Cancel", width=80, visible=False, html_id="cancel-overwrite")
        self.cancel.on_click(self._cancel_save)
        self.save_msg = _Html(Div(text="", stylesheets=[self.css], width=560), "save-message")
        actions = row(reset, self.target, column(Div(text="&nbsp;"), save))
        key = Div(text="<span class='muted'>blue: meets every requirement · grey: the weight does not close · "
                       "dashed: constant takeoff mass (black: the design's) · thick: drivers · hover a line for its "
                       "values, click a legend entry to hide it</span>", stylesheets=[self.css], width=780)
        middle = column(self.view.fig, key, self.status.div, actions,
                        row(self.save_msg.div, self.confirm, self.cancel))
        right = column(self.numbers_div.div, self.panel.div)
        doc.add_root(column(title, caution, row(controls, middle, right)))
        doc.title = f"sizing explore · {explorer.spec.title}"
        self._show_numbers(Numbers.of(base), stale=False)
        self._show_result(base)
        self.status.text = (f"<span class='muted'>the file as written: solved in "
                            f"{explorer.base_seconds * 1000:.0f} ms at start (built problem, then every change "
                            f"re-solved warm-started)</span>")

    # --------------------------------------------------------------- controls
    def _controls(self):
        from bokeh.layouts import column, row
        from bokeh.models import Div, Slider, Spinner

        from ..charts.style import styles_of

        colour = {rid: st.colour for rid, st in styles_of(self.ex.spec).items()}
        kinds = {r.id: r.kind for r in self.ex.spec.requirements}
        out, group = [], None
        for c in self.ex.controls:
            if c.group != group:
                group = c.group
                col = colour.get(group, "#444444")
                what = f" <span class='muted'>{_e(kinds[group])}</span>" if group in kinds else ""
                out.append(Div(text=f"<div style='border-left:6px solid {col};padding-left:6px;margin-top:8px'>"
                                    f"<b>{_e(group)}</b>{what}</div>", stylesheets=[self.css], width=380))
            start, end, step = c.window()
            unit = f" [{c.unit}]" if c.unit else ""
            slug = c.key.replace(".", "-")
            label = Div(text=f"{_e(c.label)}{_e(unit)} <span class='muted'>· accepted: {_e(c.range_text())}</span>",
                        stylesheets=[self.css], width=380, margin=(2, 5, 0, 5))
            slider = Slider(start=start, end=end, value=c.value, step=step, show_value=False, title=None,
                            width=250, html_id=f"slider-{slug}", margin=(0, 5, 0, 5))
            box = Spinner(value=c.value, step=step, width=110, html_id=f"value-{slug}", margin=(0, 5, 0, 5),
                          format="0[.][000000]")
            msg = _Html(Div(text="", visible=False, stylesheets=[self.css], width=380,
                            styles={"color": "#bb2233", "font-size": "12px"}), f"msg-{slug}")
            slider.on_change("value", partial(self._changed, c.key, "slider"))
            box.on_change("value", partial(self._changed, c.key, "box"))
            self.widgets[c.key] = (slider, box, msg)
            out.append(column(label, row(slider, box), msg.div, spacing=0))
        return out

    def _set_widgets(self, key, value):
        slider, box, _msg = self.widgets[key]
        self._syncing = True
        try:
            c = self.ex.by_key[key]
            if not (slider.start <= value <= slider.end):
                start, end, step = c.window(value if value != 0 or c.value == 0 else c.value)
                slider.update(start=min(start, value), end=max(end, value), step=step)
            slider.value = value
            box.value = value
        finally:
            self._syncing = False

    def _say_at(self, key, text):
        msg = self.widgets[key][2]
        msg.text = _e(text) if text else ""
        msg.div.visible = bool(text)

    def _changed(self, key, source, _attr, _old, new):
        if self._syncing:
            return
        t0 = time.perf_counter()
        if new is None:
            self._set_widgets(key, self.wanted[key])
            return
        if source == "slider":                    # 84.99999999 from the slider's float steps is 85
            new = round_to(float(new), self.widgets[key][0].step)
        why = self.ex.refusal(key, new)
        if why:
            self._set_widgets(key, self.wanted[key])
            self._say_at(key, f"refused: {why}; kept {shown(self.wanted[key], self.ex.by_key[key].unit)}")
            return
        self._say_at(key, "")
        self.wanted[key] = float(new)
        self._set_widgets(key, float(new))
        self.status.text = "<span class='muted'>solving…</span>"
        self.session.request(self.wanted, key, t0)

    def reset(self):
        self.wanted = dict(self.ex.initial)
        for key, v in self.wanted.items():
            self._set_widgets(key, v)
            self._say_at(key, "")
        self.save_msg.text = ""
        self.session.request(self.wanted, None)

    # ---------------------------------------------------------------- answers
    def _publish(self, kind, payload):
        """Called on the worker thread: hand the answer to the event loop (Bokeh's thread-safe way)."""
        t_ready = time.perf_counter()
        try:
            self.doc.add_next_tick_callback(partial(self._apply, kind, payload, t_ready))
        except Exception:  # noqa: BLE001 - the tab was closed meanwhile: nobody to tell
            pass

    def _apply(self, kind, payload, t_ready):
        if kind == "refused":
            key, message = payload
            if key is not None:
                keep = self.session.accepted.get(key, self.ex.by_key[key].value)
                self.wanted[key] = keep
                self._set_widgets(key, keep)
                self._say_at(key, f"refused: {message}; kept {shown(keep, self.ex.by_key[key].unit)}")
            self.status.text = f"<span class='bad badge'>refused</span> {_e(message)}"
            return
        step = payload if kind == "numbers" else payload[0]
        if kind == "numbers":
            self._shown = max(self._shown, step.serial)
            now = time.perf_counter()
            t = step.timings
            what = "design numbers" if step.numbers is not None else "no verified design found"
            self.status.text = (
                f"{what} <b><span id='latency-ms'>{(now - step.t0) * 1000:.1f}</span> ms</b> after the "
                f"change, server side (validate {t['validate'] * 1000:.1f}, solve {t['solve'] * 1000:.1f} ms, "
                f"IPOPT {_e(step.stats.get('return_status'))}, {step.stats.get('iterations')} iterations); "
                + ("curves, costs and margins follow" if step.numbers is not None else
                   "the diagnosis follows"))
            if step.numbers is not None:
                self._show_numbers(step.numbers, stale=False)
                self.view.point(step.numbers)
                self.view.say("")
                self.panel.text = "<p class='muted'>costs and margins: computing…</p>"
            else:
                self._show_numbers(self.session.last_good, stale=True)
                self.view.point(None, stale=self.session.last_good)
                self.view.say("no feasible design")
                self.panel.text = ("<h3><span class='bad badge'>NO FEASIBLE DESIGN</span></h3>"
                                   "<p>no verified design for these values; finding which requirements "
                                   "conflict and by how much…</p>")
            return
        if getattr(step, "serial", self._shown) < self._shown:
            return                                    # an older answer: a newer one is on the page
        if kind == "curves":
            self.view.show(payload[1])
            self.view.point(step.numbers, stale=None if step.numbers else self.session.last_good)
        elif kind == "result":
            self._show_result(payload[1])
        elif kind == "failed":
            self._show_numbers(self.session.last_good, stale=True)
            self.view.point(None, stale=self.session.last_good)
            self.view.say("solver failed")
            self.panel.text = (f"<h3><span class='bad badge'>SOLVER FAILED</span></h3><p>{_e(payload[1])}</p>"
                               f"<p class='muted'>the numbers shown are the last good design, marked stale</p>")

    def _show_numbers(self, n, stale):
        if n is None:
            self.numbers_div.text = "<h3>Design point</h3><p class='muted'>no feasible design yet</p>"
            return
        rows = "".join(f"<tr><td>{_e(name)}</td><td class='v' id='{rid}'>{_e(v)}</td><td class='o'>{_e(o)}</td></tr>"
                       for rid, name, v, o in n.rows())
        drivers = ", ".join(n.drivers) or "none"
        tag = ("<span class='warn badge' id='stale'>STALE: last feasible design, not the values shown "
               "in the controls</span>" if stale else "")
        self.numbers_div.text = (f"<h3>Design point {tag}</h3><table class='nums{' stale' if stale else ''}'>"
                                 f"{rows}</table><p>drivers: <b id='drivers'>{_e(drivers)}</b></p>")

    def _show_result(self, res):
        if not res.feasible:
            inf = res.infeasibility
            parts = ["<h3><span class='bad badge'>NO FEASIBLE DESIGN</span></h3>",
                     "<div id='infeasible'><p>no aircraft meets every requirement and closes its weight.</p>"]
            if inf is not None and inf.explanation:
                parts.append(f"<p>{_e(inf.explanation)}</p>")
            if inf is not None and inf.conflicts:
                parts.append(f"<p>{_e(relaxation_heading(inf))}</p><ul id='relaxations'>")
                parts += [f"<li>{_e(relaxation_text(rid, inf.relaxations[rid]))}</li>" for rid in inf.conflicts]
                parts.append("</ul>")
            parts.append("</div><p class='muted'>the numbers shown are the last feasible design, marked stale</p>")
            self.panel.text = "".join(parts)
            return
        active = [r for r in res.requirements if r.active]
        costs = "".join(f"<li>{_e(cost_line(r))}</li>" for r in active) or "<li>none</li>"
        costs += "".join(f"<li>{_e(cost_line(r))} (not active now)</li>" for r in res.requirements
                         if step_reaches(r))
        if "mission fuel" in res.drivers:
            costs += "<li>mission fuel (the cruise L/D trade sets the wing loading)</li>"
        other = "".join(f"<li>{_e(w)}: {per:+,.2f} {_e(u)}</li>" for w, per, u in res.other_costs)
        margins = "".join(
            f"<tr><td>{_e(r.id)}</td><td class='v'>{_e(margin_cells(r)[0])}</td>"
            f"<td class='o'>{_e(margin_cells(r)[1])}</td></tr>" for r in res.requirements)
        edge = (f"<p><span class='warn badge'>NOTE</span> the optimum lies on the edge of the search region "
                f"({_e(', '.join(res.on_edge))})</p>" if res.on_edge else "")
        if getattr(res, "mass_notice", ""):
            edge += f"<p id='mass-notice'><span class='warn badge'>NOTE</span> {_e(res.mass_notice)}</p>"
        fuel = ""
        if res.fuel_breakdown:
            rows = [(name, f"W1/W0 {f:.4f}", f"{mf:,.0f} kg") for name, f, mf in res.fuel_breakdown]
            extra = res.design.fuel_mass - sum(mf for _, _, mf in res.fuel_breakdown)
            if extra > 0.5:
                rows.append(("reserve and trapped fuel", "", f"{extra:,.0f} kg"))
            rows.append(("total", "", f"{res.design.fuel_mass:,.0f} kg"))
            fuel = ("<h3>Mission fuel by segment</h3><table class='nums'>" + "".join(
                f"<tr><td>{_e(a)}</td><td class='o'>{_e(b)}</td><td class='v'>{_e(c)}</td></tr>" for a, b, c in rows)
                + "</table>")
        ch = res.closure
        closure = "" if ch is None else (
            "<h3>Closure health</h3><ul id='closure'>"
            f"<li>payload growth factor dm_TO/dm_payload: {ch.growth_factor:,.2f} kg per kg</li>"
            f"<li>runaway margin 1 - d(m_empty+m_fuel)/dm_TO: {ch.runaway_margin:.3f} (diverges at 0)</li></ul>"
            + (f"<p id='closure-warning'><span class='warn badge'>WARNING</span> {_e(ch.warning)}</p>"
               if ch.warning else ""))
        self.panel.text = (f"{edge}<h3>Drivers and what each costs</h3><ul id='costs'>{costs}</ul>"
                           + (f"<h3>Other costs</h3><ul>{other}</ul>" if other else "") + closure
                           + f"<h3>Margins</h3><table class='nums' id='margins'>{margins}</table>{fuel}")

    # ------------------------------------------------------------------- save
    def save(self, overwrite=False):
        target = self.target.value.strip()
        if not target:
            self.save_msg.text = "<span class='bad badge'>no file name</span> give a path to save to"
            return
        try:
            path = self.ex.save(self.session.accepted, target, overwrite=overwrite)
        except NeedsConfirmation as e:
            self.save_msg.text = f"<span class='warn badge'>confirm</span> {_e(e)}"
            self.confirm.visible = self.cancel.visible = True
            return
        except (InputError, SizingError, OSError) as e:
            self.save_msg.text = f"<span class='bad badge'>not saved</span> {_e(e)}"
            return
        self.confirm.visible = self.cancel.visible = False
        n = len(self.ex.changes(self.session.accepted))
        self.save_msg.text = (f"<span class='ok badge'>saved</span> wrote <b id='saved-path'>{_e(path)}</b> "
                              f"({n} value{'s' if n != 1 else ''} changed, comments and units kept); check it "
                              f"with <code>sizing solve {_e(path)}</code>")

    def _cancel_save(self):
        self.confirm.visible = self.cancel.visible = False
        self.save_msg.text = "<span class='muted'>not saved</span>"


def make_document(explorer, doc):
    """Bokeh application entry: fill ``doc`` with a new page for ``explorer``."""
    Page(explorer, doc)

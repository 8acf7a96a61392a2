"""The review report: one self-contained HTML or Markdown file per design.

Title, caution, solver status, design point, weight statement, drivers with
what each costs, margins, the constraint diagram (PNG embedded as base64),
the envelope check with its coffin corner and zoom, the load-factor (V-n) chart, turn
performance, hot-and-high limits and payload-range (:mod:`.sections`), the
inputs echoed as the user wrote them, and the provenance (tool version,
input file hash). Nothing here computes physics: the numbers come from the
:class:`sizing.model.Result`, the figures from the plotting modules.
"""
from __future__ import annotations

import base64
import html
import math
import re
from pathlib import Path

from ..common.caution import CAUTION
from ..common.conversions import FT, FT2, HP, KN, LB, LBF_FT2, N_PER_LBF
from ..physics.atmosphere import g0
from ..physics.propulsion import axis_label, reference_label
from .summary import (
    cost_line,
    fraction_margin,
    md_cell,
    md_escape,
    quantity_margin,
    relaxation_heading,
    step_reaches,
)

REPORT_DPI = 110

# --------------------------------------------------------------------------
# A tiny document model: a list of blocks, rendered to HTML or Markdown
# --------------------------------------------------------------------------
# ("h", level, text) | ("p", text) | ("table", header, rows) | ("img", alt, png_bytes)
# | ("caution", text) | ("md", markdown_text) | ("pre", text)


def _n(x, digits=4):
    if x is None or not isinstance(x, (int, float)) or not math.isfinite(x):
        return "n/a"
    if abs(x) >= 1e4:
        return f"{x:,.0f}"
    return f"{x:,.{digits}g}"


def _design_rows(res, facts=None):
    d = res.design
    W = d.wing_loading
    rows = [["wing loading W/S", f"{W:,.0f} N/m²", f"{W / g0:,.1f} kg/m²", f"{W / LBF_FT2:,.2f} lb/ft²"]]
    if res.propeller:
        P = d.power_to_weight
        rows.append([f"power-to-weight {axis_label(True, d.rating)}", f"{P:,.2f} W/N", f"{P * g0 / 1000:,.4f} kW/kg",
                     f"{P * N_PER_LBF / HP:,.4f} hp/lb"])
        rows.append([reference_label(True, d.rating), f"{d.power / 1000:,.1f} kW", f"{d.power / HP:,.0f} hp", ""])
    else:
        rows.append([f"thrust-to-weight {axis_label(False, d.rating)}", f"{d.thrust_to_weight:.4f}", "", ""])
        rows.append([reference_label(False, d.rating), f"{d.thrust / 1000:,.2f} kN", f"{d.thrust / N_PER_LBF:,.0f} lbf", ""])
        if d.dry_thrust is not None:
            rows.append([f"thrust-to-weight {axis_label(False, 'dry rating')}", f"{d.dry_thrust_to_weight:.4f}", "", ""])
            rows.append([reference_label(False, "dry rating"), f"{d.dry_thrust / 1000:,.2f} kN",
                         f"{d.dry_thrust / N_PER_LBF:,.0f} lbf", ""])
    rows.append(["takeoff mass", f"{d.takeoff_mass:,.0f} kg", f"{d.takeoff_mass / LB:,.0f} lb", ""])
    rows.append(["wing area", f"{d.wing_area:,.2f} m²", f"{d.wing_area / FT2:,.1f} ft²", ""])
    f = facts
    if f is not None:
        rows.append([f"wing span (aspect ratio {f.aspect_ratio:g})", f"{f.span:,.2f} m", f"{f.span / FT:,.1f} ft", ""])
        if f.thrust_per_engine is not None:
            rows.append([f"sea-level static thrust per engine, {d.rating} ({f.engines} engine{'s' if f.engines > 1 else ''})",
                         f"{f.thrust_per_engine / 1000:,.2f} kN", f"{f.thrust_per_engine / N_PER_LBF:,.0f} lbf", ""])
        else:
            rows.append([f"sea-level static shaft power per engine, {d.rating} "
                         f"({f.engines} engine{'s' if f.engines > 1 else ''})",
                         f"{f.power_per_engine / 1000:,.1f} kW", f"{f.power_per_engine / HP:,.0f} hp", ""])
    return rows


def _weight_rows(res, facts=None):
    d = res.design
    m = d.takeoff_mass
    items = [("crew", d.crew_mass), ("payload", d.payload_mass), ("empty", d.empty_mass),
             ("fuel", d.fuel_mass)]
    rows = []
    for name, v in items:
        rows.append([name, f"{v:,.0f}", f"{v / LB:,.0f}", f"{v / m:.3f}", ""])
        if name == "empty" and facts is not None:
            rows += [[f"  of which {part}", f"{mp:,.0f}", f"{mp / LB:,.0f}", f"{mp / m:.3f}", how]
                     for part, mp, how in facts.empty_breakdown]
    rows.append(["takeoff (closure)", f"{m:,.0f}", f"{m / LB:,.0f}", "1.000", ""])
    return rows


def _requirement_inputs(spec):
    """One row per requirement, values exactly as written in the file."""
    rows = []
    for raw in spec.data.get("requirements", []):
        if not isinstance(raw, dict):
            continue
        values = []
        for k, v in raw.items():
            if k in ("id", "kind", "note"):
                continue
            if isinstance(v, dict):
                v = ", ".join(f"{a}: {b}" for a, b in v.items())
            values.append(f"{k}: {v}")
        rows.append([str(raw.get("id", "")), str(raw.get("kind", "")), "; ".join(values),
                     str(raw.get("note", ""))])
    return rows


def _flatten(d, prefix=""):
    out = []
    if isinstance(d, dict):
        if "mach" in d and isinstance(d.get("mach"), list):        # a Mach table: one row
            return [(prefix, "; ".join(f"{k}: {v}" for k, v in d.items()))]
        for k, v in d.items():
            out += _flatten(v, f"{prefix}.{k}" if prefix else str(k))
    elif isinstance(d, list) and d and all(isinstance(x, dict) for x in d):
        for i, x in enumerate(d):
            out.append((f"{prefix}[{i + 1}]", ", ".join(f"{k}: {v}" for k, v in x.items())))
    else:
        out.append((prefix, str(d)))
    return out


def _other_inputs(spec):
    rows = []
    for key in ("aircraft", "mission", "design_space", "objective"):
        if key in spec.data:
            rows += [[k, v] for k, v in _flatten(spec.data[key], key)]
    return rows


def envelope_section(spec, res):
    """(markdown_text, png_bytes) of the review report's envelope section. The text has no
    image link (the report places the PNG); for an infeasible result it says so, with no PNG."""
    if res is None or not res.feasible:
        return "## Envelope check\n\nNo feasible design, so no envelope to check.\n", b""
    from ..charts.envelope import compute_envelope, status_text
    from ..charts.envelope_plot import render

    env = compute_envelope(spec, res)
    lines = ["## Envelope check", "", f"Altitude-Mach envelope of the sized design at weight fraction "
             f"{env.weight_fraction:g} (standard day, clean, full throttle): level flight where the specific "
             "excess power Ps = V (T - D)/W is at least 0 at 1 g, above the CLmax stall line; sustained "
             "load-factor boundaries where Ps = 0 at n g. Requirement rows use each requirement's own weight "
             "fraction, temperature, lapse, configuration and throttle. The coffin corner is where the 1 g stall "
             "(or buffet) Mach meets the Mach limit; the zoom ceiling is the largest energy height h + V^2/(2 g) of "
             "the 1 g envelope, an upper bound with no drag losses.", "", "| quantity | value |", "|---|---|"]
    lines += [f"| {md_cell(r['quantity'])} | {md_cell(r['text'].replace('|', '/'))} |" for r in env.rows]
    lines += ["", "| requirement | status | margin | own conditions |", "|---|---|---|---|"]
    lines += [f"| {md_cell(p.id)} | {md_cell(status_text(p))} | {md_cell(p.detail)} | {md_cell(p.conditions)} |"
              for p in env.points]
    return "\n".join(lines + [f"\nNote: {t}" for t in env.notes] + ["", CAUTION, ""]), render(env, "png")


def _diagram_png(spec, res, labels="short", view="auto"):
    from ..charts.diagram import constraint_diagram
    from ..charts.style import figure_bytes

    h = constraint_diagram(spec, result=res, labels=labels, view=view)
    return figure_bytes(h.figure, "png", dpi=REPORT_DPI)


def report_date() -> str:
    """Today's date (UTC, ISO 8601), or the date of ``SOURCE_DATE_EPOCH`` when set (reproducible
    builds: a rerun on another day gives the same bytes)."""
    import datetime
    import os

    epoch = os.environ.get("SOURCE_DATE_EPOCH")
    if epoch and epoch.strip().isdigit():
        return datetime.datetime.fromtimestamp(int(epoch), datetime.timezone.utc).date().isoformat()
    return datetime.datetime.now(datetime.timezone.utc).date().isoformat()


def document(spec, res, *, diagram=True, envelope=True, flight=True, revision=None, date=None,
             labels="short", view="auto"):
    """The report as a list of blocks (see the module comment).

    revision: the user's revision mark (``--revision``); date: the report's date (default
    :func:`report_date`); labels, view: the constraint diagram's curve labels and axes.
    """
    from ..common.version import __version__
    from ..problem.crosscheck import cross_check
    from ..problem.facts import design_facts

    src = Path(str(spec.path)).name
    date = date or report_date()
    rev = f" · revision {revision}" if revision else ""
    blocks = [("h", 1, spec.title or res.title),
              ("p", f"Sizing review of {src}{rev} · {date} · sizing {__version__} · input sha256 "
                    f"{spec.sha256[:12] or 'n/a'}"),
              ("caution", CAUTION)]
    if getattr(res, "closure_warning", ""):        # before the numbers it makes uncertain
        blocks.append(("caution", f"{res.closure_warning}: small errors in the weight estimate become "
                                  "large errors in takeoff mass (see Closure health)."))
    facts = design_facts(spec, res)
    check = cross_check(res, spec)
    st = res.stats or {}
    status = "optimal: every requirement met, weight closed" if res.feasible else "infeasible: no feasible design"
    # no solve time here: a rerun of the same file gives the same report, byte for byte
    # (the terminal summary prints the time)
    solver = f"{st.get('return_status', 'n/a')}, {st.get('iterations', 'n/a')} iterations"
    blocks += [("h", 2, "Solver status"),
               ("table", ["item", "value"], [["status", status], ["objective", res.objective],
                                              ["solver", solver]])]
    if res.on_edge:
        blocks.append(("p", "Note: the optimum lies on the edge of the search region "
                            f"({', '.join(res.on_edge)}); widen design_space to see whether it moves."))

    if res.feasible:
        blocks += [("h", 2, "Design point"),
                   ("table", ["quantity", "value", "also", "also"], _design_rows(res, facts))]
        if getattr(res, "mass_notice", ""):
            blocks.append(("p", f"Note: {res.mass_notice}; the requirements that bound that point are "
                                "the drivers, each with a margin of exactly zero."))
        if facts is not None and facts.cruise:
            blocks.append(("table", ["cruise condition", "altitude", "speed", "W/W_TO", "CL", "L/D"],
                           [[c.name, f"{c.altitude / FT:,.0f} ft", f"M {c.mach:.3f} ({c.speed / KN:,.0f} kn TAS)",
                             f"{c.weight_fraction:.3f}", f"{c.CL:.3f}", f"{c.lift_to_drag:.2f}"]
                            for c in facts.cruise]))
        if check is not None:
            blocks += [("h", 2, "Class cross-check"),
                       ("p", f"The design beside the typical values of its declared class, {check.title} "
                             f"({check.source}). " + (check.note[0].upper() + check.note[1:] + ". " if check.note
                                                      else "") +
                             ("Every value lies within the class range." if not check.outliers else
                              f"{len(check.outliers)} of {len(check.rows)} values lie OUTSIDE the class range: "
                              "check the inputs, or say why this design differs from its class.")),
                       ("table", ["quantity", "design", "typical", "class range", "verdict"],
                        [[r.quantity, f"{_n(r.design)} {r.unit}", _n(r.typical), f"{_n(r.lo)} to {_n(r.hi)}",
                          r.verdict] for r in check.rows])]
        rows = _weight_rows(res, facts)
        blocks += [("h", 2, "Weight statement"),
                   ("table", ["item", "mass [kg]", "mass [lb]", "fraction of takeoff", "how"], rows)]
        if res.fuel_breakdown:
            seg_rows = [[n, f"{f:.4f}", f"{mf:,.0f}"] for n, f, mf in res.fuel_breakdown]
            extra = res.design.fuel_mass - sum(mf for _, _, mf in res.fuel_breakdown)
            if extra > 0.5:
                seg_rows.append(["reserve and trapped fuel", "", f"{extra:,.0f}"])
            seg_rows.append(["total", "", f"{res.design.fuel_mass:,.0f}"])
            blocks.append(("table", ["mission segment", "weight fraction W_end/W_start", "fuel [kg]"], seg_rows))
        active = [r for r in res.requirements if r.active]
        drows = [[r.id, r.kind, cost_line(r),
                  f"{_n(r.sensitivity)} {r.sensitivity_unit}" if r.sensitivity is not None else "n/a"]
                 for r in active]
        drows += [[r.id, f"{r.kind} (not active now)", cost_line(r),
                   f"{_n(r.sensitivity)} {r.sensitivity_unit}" if r.sensitivity is not None else "n/a"]
                  for r in res.requirements if step_reaches(r)]
        if "mission fuel" in res.drivers:
            drows.append(["mission fuel", "weight closure", "the cruise L/D trade sets the wing loading", ""])
        blocks += [("h", 2, "Drivers and what each costs"),
                   ("p", "Active requirements (met with equality at the optimum) and the change in takeoff "
                         "mass for a step of each in the harder direction (about 3 % of its value, rounded "
                         "to a readable unit), found by solving again with the stepped value; beside it the "
                         "first-order estimate from the optimizer's sensitivity (slope x step). NON-LINEAR: "
                         "the estimate is off by more than 10 %. Requirements not active now appear when "
                         "their step costs mass. Changes below solver noise (1e-5 of takeoff mass) are 0."),
                   ("table", ["requirement", "kind", "cost", "d m_TO / d value"], drows or
                    [["none", "", "the design sits where the weight model alone puts it", ""]])]
        ch = res.closure
        if ch is not None:
            blocks += [("h", 2, "Closure health"),
                       ("p", "How strongly takeoff mass answers to payload, and how far the weight closure "
                             "m_TO = (m_crew + m_payload) / (1 - f_empty - f_fuel) is from diverging. The runaway "
                             "margin is 1 - d(m_empty + m_fuel)/d m_TO at the design point (1 - f_empty - f_fuel "
                             "for fixed fractions): the closure diverges when the empty-mass or fuel fraction "
                             "grows by this much. A warning is given above a growth factor of 10 kg per kg or "
                             "below a runaway margin of 0.10." + (f" {ch.warning}" if ch.warning else "")),
                       ("table", ["quantity", "value", "how"],
                        [["payload growth factor d m_TO / d m_payload", f"{ch.growth_factor:,.2f} kg per kg",
                          ch.growth_source],
                         ["runaway margin 1 - d(m_empty + m_fuel) / d m_TO", f"{ch.runaway_margin:.3f}",
                          "central difference at the design point"]])]
        mrows = [[r.id, r.kind, r.value_text, quantity_margin(r) or "not computed", r.detail,
                  fraction_margin(r), f"{r.beta:.3f} ({r.beta_source})"] for r in res.requirements]
        blocks += [("h", 2, "Margins"),
                   ("p", "Margin first in the requirement's own quantity: what the design can do less what "
                         "is required (for a limit, such as a stall speed limit or a field length allowed, "
                         "the limit less what the design needs), with its percentage of the requirement. "
                         "Beside it the margin of the design point: T/W (P/W) designed over T/W (P/W) "
                         "required minus 1 for thrust requirements, W/S limit over W/S designed minus 1 for "
                         "wing-loading limits. A thrust lapse given in the file holds at the requirement's "
                         "own condition only: such a requirement is stated there."),
                   ("table", ["requirement", "kind", "value", "margin in its own quantity", "in its own terms",
                              "design-point margin", "weight fraction"], mrows)]
    else:
        inf = res.infeasibility
        blocks += [("h", 2, "No feasible design"),
                   ("p", "No aircraft meets every requirement and closes its weight. No design point is "
                         "reported.")]
        if inf is not None:
            if inf.explanation:
                blocks.append(("p", inf.explanation))
            if inf.conflicts:
                heading = relaxation_heading(inf)
                blocks.append(("p", heading[0].upper() + heading[1:]))
                rel = inf.relaxations
                blocks.append(("table", ["requirement", "now", "change to (as the file writes it)"],
                               [[rid, f"{rel[rid].get('field', '')}: {rel[rid].get('from', '')}",
                                 rel[rid].get("yaml") or rel[rid].get("text", "")] for rid in inf.conflicts]))

    if diagram:
        blocks += [("h", 2, "Constraint diagram"),
                   ("p", "Every requirement over wing loading, from the same constraint functions the "
                         "optimizer uses; hatching on the infeasible side, the feasible region shaded, "
                         "dashed grey lines of constant closed takeoff mass."),
                   ("img", f"Constraint diagram of {spec.title}", _diagram_png(spec, res, labels, view))]
    if envelope:
        sec = envelope_section(spec, res)
        if sec is not None:
            text, png = sec
            blocks.append(("md", text))
            if png:
                blocks.append(("img", "Envelope check", png))
    if flight:
        from .sections import flight_sections

        for text, png, alt in flight_sections(spec, res):
            blocks.append(("md", text))
            if png:
                blocks.append(("img", alt, png))

    blocks += [("h", 2, "Inputs as written"),
               ("table", ["requirement", "kind", "values", "note"], _requirement_inputs(spec)),
               ("table", ["input", "value"], _other_inputs(spec)),
               ("h", 2, "Provenance"),
               ("table", ["item", "value"], [["input file", str(spec.path)],
                                             ["input sha256", spec.sha256 or "n/a"],
                                             ["revision", revision or "not given (--revision)"],
                                             ["date", date],
                                             ["tool", f"sizing {__version__}"]]),
               ("caution", CAUTION)]
    return blocks


# --------------------------------------------------------------------------
# Renderers
# --------------------------------------------------------------------------

_CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;max-width:1100px;margin:2em auto;
padding:0 1.2em;color:#1a1a1a;line-height:1.45}
h1{font-size:1.7em;margin-bottom:.2em}h2{font-size:1.25em;margin-top:1.8em;border-bottom:1px solid #ccc}
table{border-collapse:collapse;margin:.6em 0 1em;font-size:.93em}
th,td{border:1px solid #c8c8c8;padding:.3em .6em;text-align:left;vertical-align:top}
th{background:#eef3f8}tr:nth-child(even) td{background:#fafafa}
.caution{border:2px solid #bb2233;background:#fdf3f4;padding:.7em 1em;margin:1em 0;font-weight:600}
img{max-width:100%;height:auto;border:1px solid #ddd}
.meta{color:#555}
"""


def _md_inline_html(text):
    held = []

    def hold(m):
        held.append(m.group(1))
        return f"\x00{len(held) - 1}\x00"

    t = html.escape(re.sub(r"\\(.)", hold, html.unescape(text)))      # backslash escapes kept literal
    t = re.sub(r"\*\*(.+?)\*\*", r"<strong>\1</strong>", t)
    t = re.sub(r"`(.+?)`", r"<code>\1</code>", t)
    return re.sub("\x00(\\d+)\x00", lambda m: html.escape(held[int(m.group(1))]), t)


def md_to_html(text: str) -> str:
    """Headings, pipe tables, bullet lists and paragraphs of Markdown as HTML."""
    out, para, lines = [], [], text.splitlines()

    def flush():
        if para:
            out.append(f"<p>{_md_inline_html(' '.join(para))}</p>")
            para.clear()

    i = 0
    while i < len(lines):
        ln = lines[i].rstrip()
        m = re.match(r"^(#{1,6})\s+(.*)$", ln)
        if m:
            flush()
            lvl = min(len(m.group(1)) + 0, 6)
            out.append(f"<h{lvl}>{_md_inline_html(m.group(2))}</h{lvl}>")
        elif ln.startswith("|"):
            flush()
            rows = []
            while i < len(lines) and lines[i].strip().startswith("|"):
                rows.append(lines[i].strip())
                i += 1
            cells = [[c.strip() for c in re.split(r"(?<!\\)\|", r[1:-1] if r.endswith("|") else r[1:])]
                     for r in rows]                       # an escaped \| stays in its cell
            body = [c for c in cells[1:] if not all(re.fullmatch(r":?-{2,}:?", x) for x in c)]
            out.append(_html_table(cells[0], body, inline=_md_inline_html))
            continue
        elif re.match(r"^\s*[-*]\s+", ln):
            flush()
            items = []
            while i < len(lines) and re.match(r"^\s*[-*]\s+", lines[i]):
                items.append(re.sub(r"^\s*[-*]\s+", "", lines[i]))
                i += 1
            out.append("<ul>" + "".join(f"<li>{_md_inline_html(x)}</li>" for x in items) + "</ul>")
            continue
        elif not ln.strip():
            flush()
        else:
            para.append(ln.strip())
        i += 1
    flush()
    return "\n".join(out)


def _html_table(header, rows, inline=html.escape):
    head = "".join(f"<th>{inline(str(h))}</th>" for h in header)
    body = "".join("<tr>" + "".join(f"<td>{inline(str(c))}</td>" for c in r) + "</tr>" for r in rows)
    return f"<table><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def to_html(blocks) -> str:
    title = next((b[2] for b in blocks if b[0] == "h" and b[1] == 1), "Sizing review")
    parts = ["<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
             '<meta name="viewport" content="width=device-width, initial-scale=1">',
             f"<title>{html.escape(title)}</title><style>{_CSS}</style></head><body>"]
    first_p = True
    for b in blocks:
        kind = b[0]
        if kind == "h":
            parts.append(f"<h{b[1]}>{html.escape(b[2])}</h{b[1]}>")
        elif kind == "p":
            cls = ' class="meta"' if first_p else ""
            first_p = False
            parts.append(f"<p{cls}>{html.escape(b[1])}</p>")
        elif kind == "table":
            parts.append(_html_table(b[1], b[2]))
        elif kind == "img":
            data = base64.b64encode(b[2]).decode("ascii")
            parts.append(f'<figure><img alt="{html.escape(b[1])}" src="data:image/png;base64,{data}">'
                         f"</figure>")
        elif kind == "caution":
            parts.append(f'<div class="caution">{html.escape(b[1])}</div>')
        elif kind == "md":
            parts.append(md_to_html(b[1]))
        elif kind == "pre":
            parts.append(f"<pre>{html.escape(b[1])}</pre>")
    parts.append("</body></html>\n")
    return "\n".join(parts)


def to_markdown(blocks, images=None) -> str:
    """Markdown text; ``images(alt, png_bytes) -> relative path`` writes each figure as a file
    (None: data URIs, a self-contained text)."""
    out = []
    for b in blocks:
        kind = b[0]
        if kind == "h":
            out += ["#" * b[1] + " " + md_escape(b[2]).replace("\n", " "), ""]
        elif kind == "p":
            out += [md_escape(b[1]), ""]
        elif kind == "table":
            out.append("| " + " | ".join(md_cell(h) for h in b[1]) + " |")
            out.append("|" + "---|" * len(b[1]))
            out += ["| " + " | ".join(md_cell(c) for c in r) + " |" for r in b[2]]
            out.append("")
        elif kind == "img":
            if images is not None:          # a file beside the report
                out += [f"![{md_escape(b[1])}]({images(b[1], b[2])})", ""]
            else:
                data = base64.b64encode(b[2]).decode("ascii")
                out += [f"![{md_escape(b[1])}](data:image/png;base64,{data})", ""]
        elif kind == "caution":
            out += [f"> **{md_escape(b[1])}**", ""]
        elif kind == "md":
            out += [b[1].rstrip(), ""]
        elif kind == "pre":
            out += ["```", b[1], "```", ""]
    return "\n".join(out)


def render_report(spec, res, fmt="html", images=None, **kwargs) -> str:
    """The report text in ``fmt`` ("html" or "md"); ``images``: see :func:`to_markdown`."""
    if fmt not in ("html", "md"):
        raise ValueError(f"report format must be 'html' or 'md', got {fmt!r}")
    blocks = document(spec, res, **kwargs)
    return to_html(blocks) if fmt == "html" else to_markdown(blocks, images)


REPORT_SUFFIXES = {".html": "html", ".htm": "html", ".md": "md", ".markdown": "md"}


def report_format(output, fmt=None) -> str:
    """"html" or "md" for an output path (and an optional --format); InputError (exit 2) for a
    suffix the report cannot be, such as .pdf (print the HTML report to PDF from a browser)."""
    from ..common.errors import InputError

    suffix = Path(str(output)).suffix.lower()
    by_suffix = REPORT_SUFFIXES.get(suffix)
    if by_suffix is None:
        raise InputError(f"{str(output)!r}: the review report is HTML or Markdown, so name it .html or .md "
                         f"(got {suffix or 'no suffix'}); for a PDF, print the HTML report from a browser",
                         field="-o/--output")
    if fmt is not None and fmt != by_suffix:
        raise InputError(f"{str(output)!r}: --format {fmt} does not match the suffix {suffix}",
                         field="-o/--output")
    return by_suffix


def _slug(text):
    return re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")[:40] or "figure"


def write_report(spec, res, output, fmt="html", **kwargs) -> str:
    """Write the review report atomically; returns the path.

    HTML is self-contained (figures as data URIs). Markdown writes its figures as PNG files
    in the folder ``<name>-figures`` beside it and links them by relative path (each file
    written atomically; the folder's old figures of this report are replaced).
    """
    from ..common.fileio import atomic_write

    out = Path(output)
    images = None
    if fmt == "md":
        folder = out.with_name(out.stem + "-figures")
        folder.mkdir(exist_ok=True)
        names = []

        def images(alt, png):
            name = f"{len(names) + 1:02d}-{_slug(alt)}.png"
            names.append(name)
            atomic_write(folder / name, png, "wb")
            return f"{folder.name}/{name}"

        text = render_report(spec, res, fmt, images=images, **kwargs)
        for old in folder.glob("*.png"):          # figures of an earlier report with more of them
            if old.name not in names:
                old.unlink()
    else:
        text = render_report(spec, res, fmt, **kwargs)
    atomic_write(out, text, "w")
    return str(out)

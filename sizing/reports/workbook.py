"""Spreadsheet export (``sizing export FILE -o design.xlsx``): the design in a workbook.

Sheets: design (the design point and what a reviewer asks beside it), weights (the weight
statement, the empty mass by component, fuel by mission segment), requirements (margins,
costs and sensitivities), class check (where the file declares ``aircraft.class``),
diagram curves (every requirement sampled over wing loading, as the diagram draws them)
and inputs (the file as written). Every sheet opens with the caution and the provenance
(file, sha256, tool); every column header carries its unit. Written through pandas with
openpyxl (imported only here), to bytes, then atomically.
"""
from __future__ import annotations

import io
import math

from ..common.caution import CAUTION
from ..common.conversions import FT, HP, KN, LB, LBF_FT2, N_PER_LBF
from ..physics.atmosphere import g0
from ..physics.propulsion import axis_label, reference_label

HEAD_ROWS = 3          # caution, provenance, a blank row; the table's header is on row 4


def frames_workbook(sheets, provenance: str) -> bytes:
    """An .xlsx of {sheet name: DataFrame}; each sheet: the caution (row 1), the provenance (row 2),
    the table from row 4 with its header (units in the names), columns sized to fit."""
    import pandas as pd
    from openpyxl.styles import Alignment, Font

    buf = io.BytesIO()
    with pd.ExcelWriter(buf, engine="openpyxl") as xw:
        for name, frame in sheets.items():
            frame.to_excel(xw, sheet_name=name[:31], index=False, startrow=HEAD_ROWS)
            ws = xw.sheets[name[:31]]
            ws["A1"] = CAUTION
            ws["A1"].font = Font(bold=True, color="BB2233")
            ws["A1"].alignment = Alignment(wrap_text=False)
            ws["A2"] = provenance
            ws["A2"].font = Font(italic=True, color="444444")
            for i, col in enumerate(frame.columns, start=1):
                width = max([len(str(col))] + [len(str(v)) for v in frame.iloc[:200, i - 1].tolist()])
                ws.column_dimensions[ws.cell(row=HEAD_ROWS + 1, column=i).column_letter].width = min(
                    max(10, width + 2), 60)
            ws.freeze_panes = ws.cell(row=HEAD_ROWS + 2, column=1)
    data = buf.getvalue()
    return _fixed_times(data)


def _fixed_times(data: bytes) -> bytes:
    """The workbook with its creation and modification times removed from docProps/core.xml
    (a rerun gives the same cells; the times would only differ)."""
    import re
    import zipfile

    src = zipfile.ZipFile(io.BytesIO(data))
    out = io.BytesIO()
    with zipfile.ZipFile(out, "w", zipfile.ZIP_DEFLATED) as dst:
        for item in src.infolist():
            body = src.read(item.filename)
            if item.filename == "docProps/core.xml":
                body = re.sub(rb"<dcterms:(created|modified)[^>]*>[^<]*</dcterms:\1>", b"", body)
            info = zipfile.ZipInfo(item.filename, date_time=(1980, 1, 1, 0, 0, 0))
            info.compress_type = zipfile.ZIP_DEFLATED
            dst.writestr(info, body)
    return out.getvalue()


def _provenance(spec):
    from pathlib import Path

    from ..common.version import __version__

    return (f"{spec.title} · input {Path(str(spec.path)).name} · sha256 {spec.sha256 or 'n/a'} · "
            f"sizing {__version__}")


def _design_frame(spec, res, facts):
    import pandas as pd

    d = res.design
    rows = [("wing loading W/S", d.wing_loading, "N/m²"), ("wing loading W/S", d.wing_loading / g0, "kg/m²"),
            ("wing loading W/S", d.wing_loading / LBF_FT2, "lb/ft²")]
    if res.propeller:
        rows += [(f"power-to-weight {axis_label(True, d.rating)}", d.power_to_weight, "W/N"),
                 (f"power-to-weight {axis_label(True, d.rating)}", d.power_to_weight * N_PER_LBF / HP, "hp/lb"),
                 (reference_label(True, d.rating), d.power / 1000.0, "kW"),
                 (reference_label(True, d.rating), d.power / HP, "hp")]
    else:
        rows += [(f"thrust-to-weight {axis_label(False, d.rating)}", d.thrust_to_weight, "-"),
                 (reference_label(False, d.rating), d.thrust / 1000.0, "kN"),
                 (reference_label(False, d.rating), d.thrust / N_PER_LBF, "lbf")]
        if d.dry_thrust is not None:
            rows += [(f"thrust-to-weight {axis_label(False, 'dry rating')}", d.dry_thrust_to_weight, "-"),
                     (reference_label(False, "dry rating"), d.dry_thrust / 1000.0, "kN"),
                     (reference_label(False, "dry rating"), d.dry_thrust / N_PER_LBF, "lbf")]
    rows += [("takeoff mass", d.takeoff_mass, "kg"), ("takeoff mass", d.takeoff_mass / LB, "lb"),
             ("wing area", d.wing_area, "m²")]
    if facts is not None:
        rows += [("wing span", facts.span, "m"), ("aspect ratio", facts.aspect_ratio, "-"),
                 ("engines", facts.engines, "-")]
        if facts.thrust_per_engine is not None:
            rows.append((f"sea-level static thrust per engine, {d.rating}", facts.thrust_per_engine / 1000.0, "kN"))
        else:
            rows.append((f"sea-level static shaft power per engine, {d.rating}", facts.power_per_engine / 1000.0, "kW"))
        for c in facts.cruise:
            rows += [(f"{c.name}: altitude", c.altitude / FT, "ft"), (f"{c.name}: Mach", c.mach, "-"),
                     (f"{c.name}: true airspeed", c.speed / KN, "kn"),
                     (f"{c.name}: weight fraction W/W_TO", c.weight_fraction, "-"),
                     (f"{c.name}: lift coefficient CL", c.CL, "-"), (f"{c.name}: L/D", c.lift_to_drag, "-")]
    rows += [("drivers", ", ".join(res.drivers) or "none", "text"), ("objective", res.objective, "text")]
    if getattr(res, "mass_notice", ""):
        rows.append(("note", res.mass_notice, "text"))
    rows += _closure_rows(res.closure)
    return pd.DataFrame(rows, columns=["quantity [text]", "value [unit in the next column]", "unit [text]"])


def _closure_rows(ch) -> list:
    """Closure health (sizing.problem.health) as design-sheet rows."""
    if ch is None:
        return []
    return [("payload growth factor dm_TO/dm_payload", ch.growth_factor, "kg per kg"),
            ("runaway margin 1 - d(m_empty+m_fuel)/dm_TO (diverges at 0)", ch.runaway_margin, "-"),
            ("closure warning", ch.warning or "none (growth factor <= 10 kg per kg, runaway margin >= 0.10)",
             "text")]


def _weights_frame(res, facts):
    import pandas as pd

    d = res.design
    m = d.takeoff_mass
    rows = [("crew", d.crew_mass, ""), ("payload", d.payload_mass, ""), ("empty", d.empty_mass, "")]
    if facts is not None:
        rows += [(f"empty: {part}", mp, how) for part, mp, how in facts.empty_breakdown]
    rows += [("fuel", d.fuel_mass, "")]
    rows += [(f"fuel: {name} (W_end/W_start {f:.4f})", mf, "mission segment") for name, f, mf in res.fuel_breakdown]
    rows += [("takeoff (closure)", m, "")]
    return pd.DataFrame([(a, v, v / LB, v / m, how) for a, v, how in rows],
                        columns=["item [text]", "mass [kg]", "mass [lb]", "fraction of takeoff mass [-]",
                                 "how it is computed [text]"])


def _requirements_frame(res):
    import pandas as pd

    from .summary import cost_line, step_reaches

    rows = []
    for r in res.requirements:
        cap = getattr(r, "capability", None)
        rows.append({"id [text]": r.id, "kind [text]": r.kind, "value as written [text]": r.value_text,
                     "active [yes/no]": "yes" if r.active else "no",
                     "margin in its own quantity [see unit]": (0.0 if r.active else cap.margin)
                     if cap is not None else None,
                     "margin in its own quantity [% of required]": (0.0 if r.active else cap.percent)
                     if cap is not None else None,
                     "capability [see unit]": cap.value if cap is not None else None,
                     "required [see unit]": cap.required if cap is not None else None,
                     "unit [text]": (cap.unit + (f" {cap.airspeed}" if cap.airspeed else "")) if cap is not None
                     else None,
                     "margin [%]": 0.0 if r.active else (100.0 * r.margin if math.isfinite(r.margin) else None),
                     "margin [%] is of [text]": cap.basis if cap is not None else None,
                     "in its own terms [text]": r.detail,
                     "cost of one step [text]": cost_line(r) if r.active or step_reaches(r) else "not active",
                     **_step_columns(r),
                     "sensitivity d m_TO / d value [see unit]": r.sensitivity,
                     "sensitivity unit [text]": r.sensitivity_unit,
                     "weight fraction W/W_TO [-]": r.beta, "weight fraction from [text]": r.beta_source})
    return pd.DataFrame(rows)


def _step_columns(r) -> dict:
    """The re-solved step of a requirement (sizing.problem.steps) as workbook columns."""
    sc = r.step_cost
    return {"step [see step unit]": None if sc is None else sc.step,
            "step unit [text]": "" if sc is None else sc.unit,
            "step: re-solved change of takeoff mass [kg]": None if sc is None else sc.delta_mass,
            "step: slope x step [kg]": None if sc is None else sc.linear_estimate,
            "step: feasible after it [yes/no]": "" if sc is None else ("yes" if sc.feasible else "no"),
            "step: non-linear (estimate off > 10 %) [yes/no]": "" if sc is None else
            ("yes" if sc.nonlinear else "no")}


def _curves_frame(spec, res):
    import pandas as pd

    from ..charts.diagram_data import diagram_data

    data = diagram_data(spec, res, view="full", samples=121, grid=(40, 30))
    unit = "W/N" if data.propeller else "-"
    cols = {"wing loading W/S [N/m²]": data.W_S}
    for c in data.curves:
        if c.thrust is not None:
            cols[f"{c.id}: required {'P/W' if data.propeller else 'T/W'} [{unit}]"] = \
                [v if math.isfinite(v) else None for v in c.thrust]
        if c.limit is not None:
            cols[f"{c.id}: W/S limit [N/m²]"] = [v if math.isfinite(v) else None for v in c.limit]
    return pd.DataFrame(cols)


def _flatten(d, prefix=""):
    out = []
    if isinstance(d, dict):
        for k, v in d.items():
            out += _flatten(v, f"{prefix}.{k}" if prefix else str(k))
    elif isinstance(d, list):
        for i, v in enumerate(d):
            key = f"{prefix}[{i + 1}]"
            if isinstance(v, dict) and "id" in v:
                key = f"{prefix}[{v['id']}]"
            out += _flatten(v, key)
    else:
        out.append((prefix, d if isinstance(d, (int, float)) and not isinstance(d, bool) else str(d)))
    return out


def _inputs_frame(spec):
    import pandas as pd

    return pd.DataFrame(_flatten(spec.data), columns=["key [text]", "value as written [unit as written]"])


def design_workbook(spec, res) -> bytes:
    """The workbook of a solved requirement file (an infeasible one: requirements and inputs only)."""
    import pandas as pd

    from ..problem.crosscheck import cross_check
    from ..problem.facts import design_facts

    sheets = {}
    if res.feasible:
        facts = design_facts(spec, res)
        sheets["design"] = _design_frame(spec, res, facts)
        sheets["weights"] = _weights_frame(res, facts)
        sheets["requirements"] = _requirements_frame(res)
        check = cross_check(res, spec)
        if check is not None:
            sheets["class check"] = pd.DataFrame(
                [(r.quantity, r.unit, r.design, r.typical, r.lo, r.hi, r.verdict) for r in check.rows],
                columns=["quantity [text]", "unit [text]", "design [unit]", "typical [unit]", "range low [unit]",
                         "range high [unit]", f"verdict against {check.title} ({check.source}) [text]"])
        sheets["diagram curves"] = _curves_frame(spec, res)
    else:
        inf = res.infeasibility
        rows = [(rid, (inf.relaxations.get(rid) or {}).get("text", "")) for rid in (inf.conflicts if inf else ())]
        sheets["no feasible design"] = pd.DataFrame(rows or [("none found", "")],
                                                    columns=["conflicting requirement [text]",
                                                             "smallest relaxation [as written]"])
    sheets["inputs"] = _inputs_frame(spec)
    return frames_workbook(sheets, _provenance(spec))


def write_workbook(spec, res, output) -> str:
    from ..common.fileio import atomic_write

    atomic_write(output, design_workbook(spec, res), "wb")
    return str(output)

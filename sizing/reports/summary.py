"""The terminal summary of a sizing result (no physics here), and the texts other outputs share:
what a step of a requirement costs, what a relaxation says."""
from __future__ import annotations

import math
import re

from ..common.caution import CAUTION
from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF
from ..physics.atmosphere import g0
from ..physics.propulsion import axis_label, reference_label


def step_text(step: float, unit: str) -> str:
    """'+0.1 g', '-10 m', '+1,000 ft', '+0.01 Mach': a signed step in the user's unit."""
    unit_txt = f" {unit}" if unit != "unit" else ""
    return f"{step:+,g}{unit_txt}"


def cost_step(r):
    """(step text, kg) for one step of a requirement's value in the harder direction: the
    re-solved change where the result has one (kg None when the step leaves no feasible
    design), else the slope times the same readable step."""
    sc = getattr(r, "step_cost", None)
    if sc is not None:
        return step_text(sc.step, sc.unit), sc.delta_mass
    if r.sensitivity is None or not math.isfinite(r.sensitivity):
        return None
    unit = r.sensitivity_unit.replace("kg per ", "")
    try:
        val = float(r.value_text.split()[0]) if r.value_text else 1.0
    except ValueError:
        val = 1.0
    from ..problem.steps import readable_step  # the one rule for a readable step

    step = readable_step(unit.split()[0] if unit else unit, val)
    dm = r.sensitivity * step
    if dm < 0:
        step, dm = -step, -dm
    sign = "+" if step > 0 else "-"
    unit_txt = f" {unit}" if unit != "unit" else ""
    return f"{sign}{abs(step):g}{unit_txt}", dm


def _kg(v) -> str:
    return "0 kg" if v == 0 else f"{v:+,.1f} kg"


def cost_line(r) -> str:
    """'+0.1 g on turn-4g: +66.7 kg re-solved (slope x step +30.1 kg, NON-LINEAR)': the cost of a
    real step of a requirement, re-solved, beside the optimizer's first-order estimate."""
    sc = getattr(r, "step_cost", None)
    if sc is None:
        c = cost_step(r)
        if c is None:
            return f"{r.id}: cost not available"
        return f"{c[0]} on {r.id}: +{c[1]:,.1f} kg (slope x step)"
    head = f"{step_text(sc.step, sc.unit)} on {r.id}"
    lin = "slope x step n/a" if sc.linear_estimate is None else f"slope x step {_kg(sc.linear_estimate)}"
    if sc.delta_mass is None:
        return f"{head}: NO FEASIBLE DESIGN after this step ({lin})"
    tag = ", NON-LINEAR" if sc.nonlinear else ""
    return f"{head}: {_kg(sc.delta_mass)} re-solved ({lin}{tag})"


def step_reaches(r) -> bool:
    """A requirement that is not active now, but one step of it costs mass or leaves no design."""
    sc = getattr(r, "step_cost", None)
    return (not r.active and sc is not None
            and (sc.delta_mass is None or sc.delta_mass != 0.0))


def closure_lines(ch) -> list:
    """The 'Closure health' block of the terminal summary (empty list when there is none)."""
    if ch is None:
        return []
    out = ["", "Closure health",
           f"  {'payload growth factor dm_TO/dm_payload':<44} {ch.growth_factor:,.2f} kg per kg ({ch.growth_source})",
           f"  {'runaway margin 1 - d(m_empty+m_fuel)/dm_TO':<44} {ch.runaway_margin:.3f} (the closure diverges at 0)"]
    if ch.warning:
        out.append(f"  {ch.warning}")
    return out


def quantity_margin(r) -> str:
    """A requirement's margin in its own quantity with its share of the requirement,
    '+7,246 ft (+17.3 % of 42,000 ft)', 'ACTIVE' for a driver, '' where there is none (no
    capability found, or a thrust lapse given for the condition only)."""
    if r.active:
        return "ACTIVE"
    c = getattr(r, "capability", None)
    if c is None or c.margin is None:
        return ""
    from ..problem.capability import digits_for, fmt

    unit = c.unit + (f" {c.airspeed}" if c.airspeed else "")
    m = c.margin
    if c.unit == "Mach":
        text = f"{m:+.3f} Mach"
    elif c.unit == "g":
        text = f"{m:+.2f} g"
    elif c.unit == "%":
        text = f"{m:+.2f} % points"
    else:
        digits = digits_for(min(abs(c.required), abs(c.value)))    # as the numbers beside it
        text = f"{m:+,.{digits}f} {unit}"
    if c.percent is not None:
        text += f" ({c.percent:+,.1f} % of {fmt(c.required, unit, 1.0)})"
    return text


def fraction_margin(r) -> str:
    """'T/W margin +32.6 %' (or P/W, W/S): the fractional margin of the design point, labelled;
    exactly '0 %' for a driver."""
    c = getattr(r, "capability", None)
    basis = c.basis if c is not None else "fractional"
    if r.active:
        return f"{basis} margin 0 %"
    if r.margin is None or not math.isfinite(r.margin):
        return f"{basis} margin not bounded"
    return f"{basis} margin +{r.margin * 100:,.1f} %"


def margin_cells(r):
    """(lead, text) of a margin row: the margin in the requirement's quantity (or ACTIVE), then
    the requirement in its own terms with the labelled fractional margin after it."""
    lead = quantity_margin(r)
    if not lead:          # no quantity (a thrust lapse given for the condition only): the fraction leads
        return fraction_margin(r), r.detail
    return lead, f"{r.detail}; {fraction_margin(r)}"


def relaxation_heading(inf) -> str:
    """What the list of relaxations means: each alone, or all together."""
    if any(rel.get("together") for rel in inf.relaxations.values()):
        return "conflicting requirements; these changes together restore feasibility:"
    return "conflicting requirements, and the smallest change of each that alone restores feasibility:"


def relaxation_text(rid, rel) -> str:
    """'stall: speed: 40 kn -> speed: 66.9 kn' for one relaxation: the key and the value as
    the requirement file writes them, so the part after '->' pastes back into the file."""
    field = rel.get("field", "value")
    was = f"{field}: {rel['from']} -> " if rel.get("from") else "-> "
    return f"{rid}: {was}{rel.get('yaml') or f'{field}: ' + rel.get('text', '?')}{relaxed_design_text(rel)}"


def relaxed_design_text(rel) -> str:
    """' (closes at 47,388 kg; WARNING: near weight runaway, runaway margin 0.011)': what the
    relaxed set's lightest design weighs, after the part that pastes back ('' when not known)."""
    m = rel.get("takeoff_mass_kg")
    if m is None:
        return ""
    from ..problem.health import RUNAWAY_WARN

    rm = rel.get("runaway_margin")
    warn = (f"; WARNING: near weight runaway, runaway margin {rm:.3f}"
            if rm is not None and rm < RUNAWAY_WARN else "")
    return f" (closes at {m:,.0f} kg{warn})"


DRY = "dry rating"


def _engines(n) -> str:
    return f"{n} engine{'s' if n != 1 else ''}"


def summary(result, path: str = "") -> str:
    """The readable terminal summary of a result."""
    lines = [result.title, "=" * len(result.title)]
    if path:
        lines.append(f"file: {path}")
    if result.status != "optimal":
        lines.append("")
        lines.append("NO FEASIBLE DESIGN: no aircraft meets every requirement and closes its weight.")
        inf = result.infeasibility
        if inf is not None:
            if inf.explanation:
                lines.append(f"  {inf.explanation}")
            if inf.conflicts:
                lines.append("  " + relaxation_heading(inf))
                for rid in inf.conflicts:
                    lines.append("    " + relaxation_text(rid, inf.relaxations[rid]))
        lines += ["", CAUTION]
        return "\n".join(lines)
    d = result.design
    W = d.wing_loading
    lines += ["", "Design point"]
    lines.append(f"  wing loading       {W:,.0f} N/m^2  ({W / g0:,.1f} kg/m^2, {W / LBF_FT2:,.2f} lb/ft^2)")
    if result.propeller:
        P = d.power_to_weight
        lines.append(f"  power-to-weight    {P:,.2f} W/N  ({P * g0 / 1000:,.4f} kW/kg, "
                     f"{P * N_PER_LBF / HP:,.4f} hp/lb): {axis_label(True, d.rating)}")
        lines.append(f"  sea-level power    {d.power / 1000:,.1f} kW  ({d.power / HP:,.0f} hp): "
                     f"{reference_label(True, d.rating)}")
        lines.append(f"  power per engine   {d.power_per_engine / 1000:,.1f} kW  ({d.power_per_engine / HP:,.0f} hp), "
                     f"{_engines(d.engines)}")
    else:
        lines.append(f"  thrust-to-weight   {d.thrust_to_weight:,.4f}  ({axis_label(False, d.rating)})")
        lines.append(f"  sea-level thrust   {d.thrust / 1000:,.2f} kN  ({d.thrust / N_PER_LBF:,.0f} lbf): "
                     f"{reference_label(False, d.rating)}")
        lines.append(f"  thrust per engine  {d.thrust_per_engine / 1000:,.2f} kN  "
                     f"({d.thrust_per_engine / N_PER_LBF:,.0f} lbf), {_engines(d.engines)}")
        if d.dry_thrust is not None:
            lines.append(f"  dry T/W            {d.dry_thrust_to_weight:,.4f}  ({axis_label(False, DRY)})")
            lines.append(f"  dry thrust         {d.dry_thrust / 1000:,.2f} kN  ({d.dry_thrust / N_PER_LBF:,.0f} lbf): "
                         f"{reference_label(False, DRY)}")
    lines.append(f"  takeoff mass       {d.takeoff_mass:,.0f} kg  ({d.takeoff_mass / LB:,.0f} lb)")
    lines.append(f"  wing area          {d.wing_area:,.2f} m^2  ({d.wing_area / 0.09290304:,.1f} ft^2)")
    lines.append(f"  empty mass         {d.empty_mass:,.0f} kg  ({d.empty_mass / d.takeoff_mass:.3f} of takeoff)")
    lines.append(f"  fuel mass          {d.fuel_mass:,.0f} kg  ({d.fuel_mass / d.takeoff_mass:.3f} of takeoff)")
    lines.append(f"  crew + payload     {d.crew_mass + d.payload_mass:,.0f} kg")
    if result.on_edge:
        lines.append(f"  NOTE: the optimum lies on the edge of the search region ({', '.join(result.on_edge)})")
    from ..problem.crosscheck import cross_check

    check = cross_check(result)          # only where the file declares aircraft.class
    if check is not None:
        lines += [""] + check.lines()
    if result.fuel_breakdown:
        lines += ["", "Mission fuel by segment"]
        for name, f, mf in result.fuel_breakdown:
            lines.append(f"  {name:<28} W1/W0 {f:.4f}   {mf:,.0f} kg")
        extra = d.fuel_mass - sum(mf for _, _, mf in result.fuel_breakdown)
        if extra > 0.5:
            lines.append(f"  {'reserve and trapped fuel':<28} {'':12}   {extra:,.0f} kg")
        lines.append(f"  {'total':<28} {'':12}   {d.fuel_mass:,.0f} kg")
    if getattr(result, "mass_notice", ""):
        lines += ["", f"NOTE: {result.mass_notice}; the requirements that bound it are the drivers below"]
    lines += ["", "Drivers (active requirements) and what each costs",
              "  (a step of about 3 % of the value, the harder way, solved again; beside it the optimizer's",
              "   slope x step; NON-LINEAR: the slope's estimate is off by more than 10 %)"]
    active = [r for r in result.requirements if r.active]
    if not active:
        lines.append("  none: the design sits where the weight model alone puts it")
    for r in active:
        lines.append(f"  {r.id:<18} {r.kind:<20} {cost_line(r)}")
    for r in result.requirements:
        if step_reaches(r):
            lines.append(f"  {r.id:<18} {'(not active now)':<20} {cost_line(r)}")
    if "mission fuel" in result.drivers:
        lines.append("  mission fuel       (the cruise L/D trade sets the wing loading)")
    if result.other_costs:
        lines += ["", "Other costs"]
        for what, per, unit in result.other_costs:
            lines.append(f"  {what:<38} {per:+,.2f} {unit}")
    lines += closure_lines(result.closure)
    lines += ["", "Margins"]
    for r in result.requirements:
        lead, text = margin_cells(r)
        beta = f"   [weight fraction {r.beta:.3f}, {r.beta_source}]"
        lines.append(f"  {r.id:<18} {lead:<36} {text}{beta}")
    st = result.stats
    lines += ["", f"solver: {st.get('return_status')}, {st.get('iterations')} iterations, "
                  f"{st.get('solve_time_s', 0) * 1000:.0f} ms", "", CAUTION]
    return "\n".join(lines)


def md_escape(text) -> str:
    r"""Text as Markdown shows it literally: Markdown's markup characters backslash-escaped,
    and ``& < >`` as entities so an id such as ``<script>`` stays text (raw HTML passes
    through Markdown renderers).

    >>> md_escape("<script>a_b*</script>")
    '&lt;script&gt;a\\_b\\*&lt;/script&gt;'
    """
    t = re.sub(r"([\\`*_\[\]])", r"\\\1", str(text))
    return t.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")


def md_cell(x) -> str:
    """A table cell's text: :func:`md_escape`, ``|`` escaped, one line."""
    return md_escape(x).replace("|", "\\|").replace("\n", " ")

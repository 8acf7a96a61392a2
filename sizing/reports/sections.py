"""The review report's flight-envelope sections: the load-factor (V-n) chart, turn performance,
hot-and-high limits (WAT) and payload-range, each a Markdown text with its table and a PNG.

Nothing here computes physics: the numbers come from the chart modules of :mod:`sizing.charts`.
A section that does not apply to the design (no mission, no airfield requirement) says so in
one paragraph and has no picture.
"""
from __future__ import annotations

import math

from ..common.caution import CAUTION, LOADS_CAUTION
from ..common.conversions import FT, KN, LB, NMI
from ..common.errors import InputError
from .summary import md_cell, md_escape

SECTION_DPI = 110


def _cell(text) -> str:
    return md_cell(str(text).replace("|", "/"))      # what the user wrote stays text (ids, names)


def _table(header, rows) -> list:
    return ["| " + " | ".join(header) + " |", "|" + "---|" * len(header)] + \
        ["| " + " | ".join(_cell(c) for c in r) + " |" for r in rows]


def vn_section(spec, res):
    """(markdown, png) of the load-factor chart at sea level and takeoff weight."""
    from ..charts.loads import compute_vn
    from ..charts.loads_plot import render

    vn = compute_vn(spec, res)
    lines = ["## Load-factor (V-n) chart", "",
             f"Manoeuvring envelope (CLmax clean, limit load factors of the {vn.category} category), derived-gust "
             f"lines with Pratt's alleviation factor and the combined envelope of the sized design at takeoff weight, "
             f"sea level, in equivalent airspeed. {LOADS_CAUTION}", ""]
    lines += _table(["quantity", "value", "source"], [list(r) for r in vn.rows()])
    lines += [f"\nNote: {t}" for t in vn.notes] + ["", CAUTION, ""]
    return "\n".join(lines), render(vn, "png", dpi=SECTION_DPI)


def turn_section(spec, res):
    """(markdown, png) of the turn chart at the default altitudes."""
    from ..charts.turn import compute_turn
    from ..charts.turn_plot import render

    chart = compute_turn(spec, res)
    rows = []
    for lv in chart.levels:
        s, c = lv.summary(), lv.corner
        rows.append([f"{lv.altitude / FT:,.0f} ft",
                     "outside the Mach range" if c is None else f"M {c[0]:.3f}, {c[1] / KN:,.0f} kn TAS",
                     f"{s['max_instantaneous_turn_rate_deg_s']:.2f} deg/s at M {s['max_instantaneous_turn_mach']:.3f}",
                     "none" if not math.isfinite(s["max_sustained_turn_rate_deg_s"]) else
                     f"{s['max_sustained_turn_rate_deg_s']:.2f} deg/s at M {s['max_sustained_turn_mach']:.3f} "
                     f"({s['max_sustained_turn_load_factor']:.2f} g)"])
    lines = ["## Turn performance", "",
             f"Turn rate g sqrt(n^2 - 1)/V against Mach at weight fraction {chart.weight_fraction:g} (standard day, "
             f"clean, full throttle): sustained where the specific excess power is zero, instantaneous at CLmax up to "
             f"the limit load factor {chart.n_limit:.2f} g ({chart.n_limit_source}). The corner speed is where CLmax "
             f"meets the limit load factor.", ""]
    lines += _table(["altitude", "corner speed", "best instantaneous rate", "best sustained rate"], rows)
    pts = [f"- {md_escape(p[0])}: {md_escape(p[4])}" for lv in chart.levels for p in lv.points]
    lines += ([""] + pts if pts else []) + [f"\nNote: {t}" for t in chart.notes] + ["", CAUTION, ""]
    return "\n".join(lines), render(chart, "png", dpi=SECTION_DPI)


def wat_section(spec, res):
    """(markdown, png) of the hot-and-high limits, or a plain paragraph when nothing limits at an airfield."""
    from ..charts.hot_high import ZERO_C, compute_wat
    from ..charts.hot_high_plot import render

    head = ["## Hot-and-high limits (WAT)", ""]
    try:
        chart = compute_wat(spec, res)
    except InputError as e:
        return "\n".join(head + [e.message, ""]), b""
    temps = [t - ZERO_C for t in chart.temperatures]
    rows = []
    for i, h in enumerate(chart.elevations):
        cells = [chart.cell(i, j) for j in range(len(temps))]
        rows.append([f"{h / FT:,.0f} ft"] + [f"{c.mass:,.0f} kg ({c.limited_by or '-'})" if math.isfinite(c.mass)
                                              else "above the range" for c in cells])
    hh = chart.hot_and_high()
    lines = head + [f"Largest takeoff mass of the sized design (wing and engine fixed) that still meets its airfield "
                    f"requirements ({md_escape(', '.join(chart.requirements))}), by airfield elevation (at standard pressure) and "
                    f"outside air temperature, from the same constraint functions as the sizing; the limiting "
                    f"requirement in parentheses. Design takeoff mass {chart.design_mass:,.0f} kg "
                    f"({chart.design_mass / LB:,.0f} lb).", ""]
    lines += _table(["elevation"] + [f"OAT {t:g} C ({t * 1.8 + 32:g} F)" for t in temps], rows)
    lines += ["", f"**Hot-day payload**: at {hh.elevation / FT:,.0f} ft and {hh.oat - ZERO_C:g} C "
                  f"(ISA{hh.isa_offset:+.1f} K) the largest takeoff mass is {hh.mass:,.0f} kg ({hh.limited_by}): "
                  f"payload {chart.payload_available(hh):,.0f} kg of the design's {chart.payload:,.0f} kg with the "
                  f"design fuel {chart.fuel:,.0f} kg."]
    lines += [f"\nNote: {t}" for t in chart.notes] + ["", CAUTION, ""]
    return "\n".join(lines), render(chart, "png", dpi=SECTION_DPI)


def payload_range_section(spec, res):
    """(markdown, png) of the payload-range diagram, or a plain paragraph for designs without a mission."""
    from ..charts.payload_range import CORNER_NAMES, compute_payload_range
    from ..charts.payload_range_plot import render

    head = ["## Payload-range", ""]
    try:
        pr = compute_payload_range(spec, res)
    except InputError as e:
        return "\n".join(head + [e.message[0].upper() + e.message[1:] + ".", ""]), b""
    rows = [[CORNER_NAMES[c.name], "fuel too small" if not math.isfinite(c.range) else
             f"{c.range / 1000:,.0f} km ({c.range / NMI:,.0f} nmi)", f"{c.payload:,.0f} kg", f"{c.fuel:,.0f} kg",
             f"{c.takeoff_mass:,.0f} kg"] for c in pr.corners]
    lines = head + [f"The mission flown with its cruise segment '{md_escape(pr.segment)}' lengthened or shortened (Breguet on "
                    f"the sizing's polar and fuel consumption, the other segments and reserves as in the mission), "
                    f"for the sized design: empty {pr.empty:,.0f} kg, crew {pr.crew:,.0f} kg, maximum payload "
                    f"{pr.max_payload:,.0f} kg, fuel capacity {pr.max_fuel:,.0f} kg.", ""]
    lines += _table(["corner", "range", "payload", "fuel", "takeoff mass"], rows)
    lines += [f"\nNote: {t}" for t in pr.notes] + ["", CAUTION, ""]
    return "\n".join(lines), render(pr, "png", dpi=SECTION_DPI)


SECTIONS = (("Load-factor (V-n) chart", vn_section), ("Turn performance", turn_section),
            ("Hot-and-high limits", wat_section), ("Payload-range diagram", payload_range_section))


def flight_sections(spec, res):
    """[(markdown, png, alt text)] of every flight-envelope section (a feasible design only)."""
    if res is None or not res.feasible:
        return [("## Flight envelope charts\n\nNo feasible design, so no load-factor, turn, hot-and-high or "
                 "payload-range chart.\n", b"", "")]
    return [(*f(spec, res), alt) for alt, f in SECTIONS]

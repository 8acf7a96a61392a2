"""Closure health (sizing.problem.health): the payload growth factor and the runaway margin,
against the closed form of the weight closure."""
import json
import re
from pathlib import Path

import pytest

from sizing.inputs.spec import load
from sizing.problem import Problem
from sizing.reports.review import document, to_markdown
from sizing.reports.serialize import to_json
from sizing.reports.summary import summary

ROOT = Path(__file__).resolve().parents[1]
TRAINER = (ROOT / "requirements" / "trainer-jet.yaml").read_text()
# the trainer's empty-mass and fuel blocks, whatever their factors and comments
COMPONENTS = re.compile(r"    empty:\n      model: components\n(?:      .*\n)+?    fuel:\n      fraction: 0.24\n")


def _solve(tmp_path, empty_yaml, fuel=0.24, name="t.yaml"):
    text = COMPONENTS.sub(lambda _m: empty_yaml + f"    fuel:\n      fraction: {fuel}\n", TRAINER, count=1)
    assert text != TRAINER
    path = tmp_path / name
    path.write_text(text)
    return Problem(load(path)).solve()


def test_fixed_fractions_growth_factor_closed_form(tmp_path):
    """m_TO = (m_crew + m_payload) / (1 - f_e - f_f), so d m_TO / d m_payload = 1 / (1 - f_e - f_f)
    and the runaway margin is 1 - f_e - f_f.
    # Source: Raymer 2018, Ch. 3, Eq. 3.4 (the sizing equation W0 = (Wcrew + Wpayload) /
    # (1 - We/W0 - Wf/W0)), differentiated by hand."""
    res = _solve(tmp_path, "    empty: {model: fraction, value: 0.55}\n", fuel=0.37)
    ch = res.closure
    assert res.design.takeoff_mass == pytest.approx(500.0 / (1 - 0.55 - 0.37), rel=1e-6)
    assert ch.runaway_margin == pytest.approx(1 - 0.55 - 0.37, abs=1e-6)
    assert ch.growth_factor == pytest.approx(1 / (1 - 0.55 - 0.37), rel=1e-5)
    # 12.5 kg per kg and a margin of 0.08: both thresholds crossed, said in every output
    assert "growth factor 12.5 kg per kg exceeds 10" in ch.warning and "runaway margin 0.080" in ch.warning
    assert ch.warning in summary(res)
    js = json.loads(to_json(res))["closure"]
    assert js["growth_factor"] == pytest.approx(12.5, rel=1e-5) and js["warning"] == ch.warning
    md = to_markdown(document(res.spec, res, diagram=False, envelope=False, flight=False))
    assert "near weight runaway" in md.split("## Design point")[0]      # at the top, before the numbers
    from sizing.charts.diagram_data import diagram_data

    # the figures carry it too (the diagram's footer, above the caution); the fixed fractions
    # also make the takeoff mass the same at every feasible point, which is said as well
    notes = diagram_data(res.spec, res, samples=11).notices
    assert any(n.startswith("WARNING: near weight runaway") and "12.5 kg per kg" in n for n in notes)
    assert any("does not depend on W/S" in n for n in notes)


def test_power_law_runaway_margin_is_marginal(tmp_path):
    """For We/W0 = a W0^c the empty mass a W0^(1+c) grows by (1 + c) f_e per kg of W0, so the
    runaway margin is 1 - (1 + c) f_e - f_f (hand calculation from Raymer 2018, Eq. 3.4 and the
    Table 3.1 power law); with the design point held the growth factor is its inverse."""
    res = _solve(tmp_path, "    empty: {model: statistical, a: 1.59, c: -0.10}\n")
    d = res.design
    f_e, f_f = d.empty_mass / d.takeoff_mass, d.fuel_mass / d.takeoff_mass
    ch = res.closure
    assert ch.runaway_margin == pytest.approx(1 - 0.9 * f_e - f_f, abs=1e-6)
    # the average fraction would say 1 - f_e - f_f: the marginal one is larger for c < 0
    assert ch.runaway_margin > 1 - f_e - f_f + 0.05
    assert ch.growth_factor == pytest.approx(1 / ch.runaway_margin, rel=1e-3)


def test_healthy_trainer_no_warning():
    res = Problem(load(ROOT / "requirements" / "trainer-jet.yaml")).solve()
    ch = res.closure
    d = res.design
    # the components model is linear in m_TO at a held design point: margin = 1 - f_e - f_f
    # (hand calculation: wing kg/m^2 x S and kg/N x T both scale with m_TO)
    assert ch.runaway_margin == pytest.approx(1 - (d.empty_mass + d.fuel_mass) / d.takeoff_mass, abs=1e-6)
    assert ch.growth_factor < 10 and ch.runaway_margin > 0.1 and ch.warning == ""
    assert "Closure health" in summary(res) and "WARNING: near weight runaway" not in summary(res)
    assert json.loads(to_json(res))["closure"]["warning"] is None


def test_explore_page_shows_closure_and_warning(tmp_path):
    """The what-if page's result panel: closure health, and the warning near runaway."""
    from bokeh.document import Document

    from sizing.explore.engine import Explorer
    from sizing.explore.page import Page

    text = COMPONENTS.sub(lambda _m: "    empty: {model: fraction, value: 0.55}\n    fuel:\n      fraction: 0.37\n",
                          TRAINER, count=1)
    path = tmp_path / "near-runaway.yaml"
    path.write_text(text)
    ex = Explorer(path)
    page = Page(ex, Document())
    page._show_result(ex.base)
    html = page.panel.text
    assert "id='closure'" in html and "12.50 kg per kg" in html
    assert "id='closure-warning'" in html and "near weight runaway" in html
    page._show_result(Problem(load(ROOT / "requirements" / "trainer-jet.yaml")).solve())
    assert "id='closure'" in page.panel.text and "closure-warning" not in page.panel.text


def test_a_relaxation_says_what_the_relaxed_design_weighs(tmp_path):
    """The trainer asked for a 6 g sustained turn has no design; the relaxation printed says what
    the lightest design weighs with the value as printed, and warns that it sits near weight
    runaway. Independent check: the file with that value written in it, solved from scratch
    (runaway margin 1 - f_empty - f_fuel for the components model, Raymer 2018 Eq. 3.4)."""
    six = TRAINER.replace("load_factor: 4.0", "load_factor: 6.0")
    assert six != TRAINER
    (tmp_path / "six.yaml").write_text(six)
    res = Problem(load(tmp_path / "six.yaml")).solve()
    assert not res.feasible
    rel = res.infeasibility.relaxations["turn-4g"]
    line = summary(res)
    assert f"load_factor: {rel['text']} (closes at {rel['takeoff_mass_kg']:,.0f} kg; WARNING: near weight runaway" \
        in line
    (tmp_path / "pasted.yaml").write_text(TRAINER.replace("load_factor: 4.0", f"load_factor: {rel['text']}"))
    cold = Problem(load(tmp_path / "pasted.yaml")).solve()
    d = cold.design
    assert d.takeoff_mass == pytest.approx(rel["takeoff_mass_kg"], rel=1e-6)
    assert rel["runaway_margin"] == pytest.approx(1 - (d.empty_mass + d.fuel_mass) / d.takeoff_mass, abs=1e-5)
    assert rel["runaway_margin"] < 0.10
    js = json.loads(to_json(res))["infeasibility"]
    assert js["relaxation_takeoff_mass_kg"]["turn-4g"] == pytest.approx(rel["takeoff_mass_kg"])

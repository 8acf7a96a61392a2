"""The cost of a real step of a requirement (sizing.problem.steps): re-solved, beside the slope.

Each check compares the tool's warm-started re-solve with an independent computation: a fresh
problem built from a requirement file with the stepped value written in it and solved cold.
"""
import json
import math
from pathlib import Path

import pytest

from sizing.inputs.spec import load
from sizing.problem import Problem
from sizing.problem.steps import NOISE_REL, readable_step
from sizing.reports.serialize import to_json
from sizing.reports.summary import cost_line, summary

ROOT = Path(__file__).resolve().parents[1]
TRAINER = (ROOT / "requirements" / "trainer-jet.yaml").read_text()


def _cold(tmp_path, text, name):
    path = tmp_path / name
    path.write_text(text)
    return Problem(load(path)).solve()


@pytest.fixture(scope="module")
def trainer():
    return Problem(load(ROOT / "requirements" / "trainer-jet.yaml")).solve()


def test_readable_steps():
    # common practice, no source: the steps a reviewer asks about, about 3 % of the value
    assert readable_step("g", 4.0) == 0.1
    assert readable_step("kn", 100.0) == 5.0
    assert readable_step("ft", 42000.0) == 1000.0
    assert readable_step("m", 1300.0) == 50.0
    assert readable_step("Mach", 0.85) == 0.01


def test_turn_step_is_a_re_solve(trainer, tmp_path):
    """+0.1 g on the trainer's 4 g turn: the tool's re-solve against a cold solve of the file
    with 4.1 g written in it (independent computation: a new problem, no warm start)."""
    r = trainer.requirement("turn-4g")
    sc = r.step_cost
    assert sc.step == pytest.approx(0.1) and sc.unit == "g" and sc.feasible
    stepped = _cold(tmp_path, TRAINER.replace("load_factor: 4.0", "load_factor: 4.1"), "t41.yaml")
    expected = stepped.design.takeoff_mass - trainer.design.takeoff_mass
    assert sc.delta_mass == pytest.approx(expected, rel=1e-4, abs=0.05)
    # the slope: a central difference of two cold solves a thousandth of a g either side
    lo = _cold(tmp_path, TRAINER.replace("load_factor: 4.0", "load_factor: 3.999"), "lo.yaml")
    hi = _cold(tmp_path, TRAINER.replace("load_factor: 4.0", "load_factor: 4.001"), "hi.yaml")
    slope = (hi.design.takeoff_mass - lo.design.takeoff_mass) / 0.002
    assert sc.linear_estimate == pytest.approx(0.1 * slope, rel=0.02)
    # this step is far from linear (the wing loading moves along the turn's curve): flagged
    assert abs(sc.delta_mass - sc.linear_estimate) > 0.1 * abs(sc.delta_mass)
    assert sc.nonlinear and "NON-LINEAR" in cost_line(r) and "re-solved" in cost_line(r)
    assert "+0.1 g on turn-4g" in summary(trainer)


def test_field_step_direction_and_linearity(trainer, tmp_path):
    """A shorter ground roll is the harder direction; -10 m on 700 m re-solved against a cold solve."""
    sc = trainer.requirement("field").step_cost
    assert sc.step == pytest.approx(-10.0) and sc.unit == "m"
    stepped = _cold(tmp_path, TRAINER.replace("ground_roll: 700 m", "ground_roll: 690 m"), "f690.yaml")
    assert sc.delta_mass == pytest.approx(stepped.design.takeoff_mass - trainer.design.takeoff_mass,
                                          rel=1e-4, abs=0.05)
    assert sc.delta_mass > 0


def test_slack_requirements_cost_exactly_zero(trainer):
    """Requirements with margin larger than their step: the re-solve moves the mass by less than
    solver noise, reported as exact zeros (not 1e-9 kg)."""
    for rid in ("approach-stall", "dash", "ceiling", "stop"):
        r = trainer.requirement(rid)
        assert r.step_cost.delta_mass == 0.0 and r.step_cost.linear_estimate == 0.0, rid
        assert r.sensitivity == 0.0, rid
    assert NOISE_REL * trainer.design.takeoff_mass < 0.1     # below the printed 0.1 kg


def test_step_that_leaves_no_design(tmp_path):
    """A search box that just holds the design: +0.1 g needs a point outside it. The independent
    check: the file with 4.1 g written in it has no feasible design."""
    free = _cold(tmp_path, TRAINER, "free.yaml").design
    box = (f"design_space: {{wing_loading: [{free.wing_loading * 0.998:.0f} Pa, 15000 Pa], "
           f"thrust_to_weight: [0.1, {free.thrust_to_weight * 1.001:.5f}]}}\n")
    text = TRAINER.replace("requirements:\n", box + "requirements:\n", 1)
    res = _cold(tmp_path, text, "box.yaml")
    assert res.feasible
    stepped = _cold(tmp_path, text.replace("load_factor: 4.0", "load_factor: 4.1"), "box41.yaml")
    assert not stepped.feasible
    r = res.requirement("turn-4g")
    assert r.step_cost.feasible is False and r.step_cost.delta_mass is None
    assert "NO FEASIBLE DESIGN after this step" in cost_line(r)
    js = json.loads(to_json(res))
    step = next(q for q in js["requirements"] if q["id"] == "turn-4g")["cost_of_step"]
    assert step["delta_mass_kg"] is None and step["feasible"] is False
    assert math.isclose(step["linear_estimate_kg"], r.step_cost.linear_estimate)


def test_json_cost_of_step(trainer):
    js = json.loads(to_json(trainer))
    for q in js["requirements"]:
        c = q["cost_of_step"]
        assert set(c) >= {"step", "unit", "delta_mass_kg", "linear_estimate_kg"}, q["id"]
    turn = next(q for q in js["requirements"] if q["id"] == "turn-4g")["cost_of_step"]
    assert turn["unit"] == "g" and turn["step"] == pytest.approx(0.1) and turn["nonlinear"] is True


def test_workbook_and_study_chart_show_the_re_solved_step(trainer):
    from matplotlib.figure import Figure

    from sizing.reports.workbook import _requirements_frame
    from sizing.studies.figures import costs

    frame = _requirements_frame(trainer).set_index("id [text]")
    sc = trainer.requirement("turn-4g").step_cost
    assert frame.loc["turn-4g", "step: re-solved change of takeoff mass [kg]"] == sc.delta_mass
    assert frame.loc["turn-4g", "step: non-linear (estimate off > 10 %) [yes/no]"] == "yes"
    ax = Figure().add_subplot()
    costs(trainer.requirements, ax=ax)
    assert "re-solved" in ax.get_title() and "sensitivity" not in ax.get_title()
    texts = [t.get_text() for t in ax.texts]
    assert f"{sc.delta_mass:+,.1f} kg (non-linear)" in texts


@pytest.mark.parametrize("name", ["trainer-jet.yaml", "long-range-jet.yaml", "regional-turboprop.yaml"])
def test_steps_within_the_margin_need_no_re_solve(name):
    """A step smaller than a requirement's margin in its own quantity is taken as costing exactly 0
    without solving again; solving every step again must agree (common practice, no source: an
    inactive row with room left does not move the optimum)."""
    from sizing.problem.package import sensitivities_of
    from sizing.problem.steps import step_costs

    spec = load(ROOT / "requirements" / name)
    prob = Problem(spec)
    p = prob.parameters(spec)
    x, lam_g, _lam_x, _stats, ok = prob.solve_raw(p)
    assert ok
    res = prob.solve(p)
    skipped = [r for r in res.requirements if not r.active and r.capability is not None
               and r.capability.margin is not None and r.capability.margin > 1.01 * abs(r.step_cost.step)]
    assert skipped                      # the shortcut is taken somewhere in each example
    every = step_costs(prob, x, lam_g, p, spec, sensitivities_of(prob, x, lam_g, p))   # no shortcut
    m0 = res.design.takeoff_mass
    for r in res.requirements:
        full = every[r.id]
        assert full.feasible == r.step_cost.feasible, r.id
        if r.step_cost.delta_mass is not None:
            assert r.step_cost.delta_mass == pytest.approx(full.delta_mass, abs=NOISE_REL * m0 * 2), r.id

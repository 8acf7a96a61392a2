"""Which thrust is the sea-level thrust: the installed sea-level static thrust, standard day, at
the engine's top rating (dry without afterburner, maximum with one), and per engine.

The lapse correlations are Mattingly's as published (Mattingly, Heiser, Pratt, *Aircraft Engine
Design*, 2nd ed., 2002, Eqs. 2.52-2.55); the military ones are referenced to the maximum
sea-level static thrust. The model divides each by its own value at sea-level static, standard
day. The checks below recompute the published formulas and the standard atmosphere here, with
numpy, and compare.
"""
from __future__ import annotations

import json
import math
from pathlib import Path

import numpy as np
import pytest

from sizing.inputs.spec import load_text
from sizing.physics.propulsion import dry_to_rated, rated_lapse, thrust_lapse
from sizing.problem import solve
from sizing.reports.serialize import to_json
from sizing.reports.summary import summary

ROOT = Path(__file__).resolve().parents[1]

# U.S. Standard Atmosphere 1976, troposphere (geopotential altitude), written here
T0, P0, L, R, G0, GAMMA = 288.15, 101325.0, 0.0065, 287.05287, 9.80665, 1.4


def _air(h, dT=0.0):
    """(theta, delta) at geopotential h [m] below 11 km and ISA offset dT [K]."""
    T_std = T0 - L * h
    return (T_std + dT) / T0, (T_std / T0) ** (G0 / (R * L))


def _published(engine, ab, theta0, delta0, M, TR):
    """Mattingly Eqs. 2.54a/b (low-bypass) and 2.55a/b (turbojet), written here."""
    hot = theta0 > TR
    if engine == "turbofan-low-bypass":
        if ab:
            return delta0 * (1 - (3.5 * (theta0 - TR) / theta0 if hot else 0))
        return 0.6 * delta0 * (1 - (3.8 * (theta0 - TR) / theta0 if hot else 0))
    if ab:
        return delta0 * (1 - 0.3 * (theta0 - 1) - 0.1 * math.sqrt(M) - (1.5 * (theta0 - TR) / theta0 if hot else 0))
    return 0.8 * delta0 * (1 - 0.16 * math.sqrt(M) - (24 * (theta0 - TR) / ((9 + M) * theta0) if hot else 0))


RATINGS = [("turbofan-low-bypass", False, 0.6), ("turbojet", False, 0.8),
           ("turbofan-low-bypass", True, 1.0), ("turbojet", True, 1.0)]


@pytest.mark.parametrize("engine, ab, sls", RATINGS)
@pytest.mark.parametrize("TR", [1.0, 1.05, 1.07])
def test_published_lapse_at_sea_level_static_and_the_rated_one(engine, ab, sls, TR):
    # Source: Mattingly 2002, Eqs. 2.54a-b and 2.55a-b: at sea-level static (theta0 = delta0 = 1, M 0,
    # TR >= 1) military gives 0.6 (low-bypass) and 0.8 (turbojet) of the maximum thrust, maximum 1.
    assert float(thrust_lapse(engine, 0.0, 0.0, 0.0, TR, ab)) == pytest.approx(sls, abs=1e-12)
    # the model's lapse is 1 there, for every rating
    assert float(rated_lapse(engine, 0.0, 0.0, 0.0, TR, ab)) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("engine", ["turbofan-high-bypass", "turboprop", "piston"])
def test_single_rating_families_are_unchanged(engine):
    # Source: Mattingly Eq. 2.53 (high-bypass: delta0 (1 - 0.49 sqrt(M)) = 1 at sea-level static),
    # Anderson Eq. 3.36 (sigma^0.7) and Gagg and Ferrar (sigma - (1 - sigma)/7.55): 1 at sea level,
    # so dividing by the sea-level static value changes nothing.
    for h, M in [(0.0, 0.0), (3000.0, 0.4), (9000.0, 0.8)]:
        assert float(rated_lapse(engine, h, M, 0.0, 1.05)) == pytest.approx(float(thrust_lapse(engine, h, M, 0.0, 1.05)),
                                                                           rel=1e-12)


def test_throttle_ratio_below_one_still_rates_to_one():
    # Source: Mattingly Eq. 2.54b with TR 0.95: at sea-level static theta0 = 1 > TR, so the published
    # military lapse is 0.6 (1 - 3.8 x 0.05) = 0.486 (hand calculation); the rated lapse is 1.
    assert float(thrust_lapse("turbofan-low-bypass", 0.0, 0.0, 0.0, 0.95)) == pytest.approx(0.486, abs=1e-12)
    assert float(rated_lapse("turbofan-low-bypass", 0.0, 0.0, 0.0, 0.95)) == pytest.approx(1.0, abs=1e-12)


@pytest.mark.parametrize("engine, ab, sls", RATINGS)
@pytest.mark.parametrize("h, M, dT", [(4000.0, 0.6, 0.0), (4000.0, 0.6, 30.0), (9000.0, 0.85, 0.0)])
def test_rated_lapse_is_published_over_its_sea_level_static_value(engine, ab, sls, h, M, dT):
    # Source: Mattingly Eqs. 2.52, 2.54, 2.55 and the 1976 standard atmosphere, recomputed here;
    # the hot case (dT 30 K at 4 km, theta0 1.087 > TR 1.05) takes the hot branch.
    theta, delta = _air(h, dT)
    ram = 1 + 0.2 * M ** 2
    want = _published(engine, ab, theta * ram, delta * ram ** 3.5, M, 1.05) / sls
    assert float(rated_lapse(engine, h, M, dT, 1.05, ab)) == pytest.approx(want, rel=1e-5)


@pytest.mark.parametrize("engine, sls", [("turbofan-low-bypass", 0.6), ("turbojet", 0.8)])
def test_dry_share_of_an_afterburning_engine(engine, sls):
    # Source: Mattingly Eqs. 2.54b/2.54a and 2.55b/2.55a at sea-level static: dry = 0.6 (0.8) of maximum
    assert float(dry_to_rated(engine, 1.05, True)) == pytest.approx(sls, abs=1e-12)
    assert dry_to_rated(engine, 1.05, False) == 1.0


# --------------------------------------------------------------------------
# End to end: the printed thrust is the one an independent sizing finds
# --------------------------------------------------------------------------

FILE = """\
title: rating check concept
aircraft:
  aerodynamics: {{cd0: 0.020, k1: 0.12, cl_max: {{clean: 1.3, landing: 1.9}}}}
  propulsion: {{type: {engine}, engines: 2, throttle_ratio: 1.05, afterburner: {ab}}}
  weights:
    crew: 200 kg
    payload: 300 kg
    empty: {{model: components, wing: 45 kg/m^2, propulsion: 0.03 kg/N, other: 0.30}}
    fuel: {{fraction: 0.22}}
requirements:
  - {{id: stall, kind: stall-speed, speed: 110 kn, config: landing, weight_fraction: 0.8}}
  - {{id: turn, kind: sustained-turn, load_factor: 4.0, mach: 0.6, altitude: 4000 m,
     weight_fraction: 0.85, temperature_offset: {dT} K}}
"""
# invented values for the test only


def _brute_force(engine, ab, dT):
    """(W/S, T_SL/W_TO, m_TO) of the lightest closed design, by a grid over W/S (numpy).

    Turn: master equation (Mattingly Eq. 2.11 with Ps = 0, k2 = 0),
    T_SL/W_TO = (beta/alpha) [q CD0/(beta W/S) + K1 n^2 beta (W/S)/q], q = gamma/2 p M^2, with alpha
    the published lapse over its sea-level static value. Stall: W/S <= rho0 V_s^2 CLmax/(2 beta).
    Closure: m = m_fixed/(1 - f_fuel - other - wing g0/(W/S) - propulsion g0 T/W).
    """
    theta, delta = _air(4000.0, dT)
    M, TR, n, beta, CD0, K1 = 0.6, 1.05, 4.0, 0.85, 0.020, 0.12
    ram = 1 + 0.2 * M ** 2
    sls = _published(engine, ab, 1.0, 1.0, 0.0, TR)
    alpha = _published(engine, ab, theta * ram, delta * ram ** 3.5, M, TR) / sls
    q = 0.5 * GAMMA * P0 * delta * M ** 2
    V_s = 110 * 1852 / 3600
    ws_max = min(0.5 * P0 / (R * T0) * V_s ** 2 * 1.9 / 0.8, q * 1.3 / (n * beta))
    ws = np.linspace(300.0, ws_max, 400001)
    tw = beta / alpha * (q * CD0 / (beta * ws) + K1 * n ** 2 * beta * ws / q)
    rest = 1 - 0.22 - 0.30 - 45 * G0 / ws - 0.03 * G0 * tw
    m = np.where(rest > 0, 500.0 / np.where(rest > 0, rest, 1.0), np.inf)
    i = int(np.argmin(m))
    return ws[i], tw[i], m[i], (lambda w: beta / alpha * (q * CD0 / (beta * w) + K1 * n ** 2 * beta * w / q))


@pytest.mark.parametrize("engine, ab, dT", [("turbofan-low-bypass", False, 0), ("turbofan-low-bypass", False, 30),
                                            ("turbojet", False, 0), ("turbofan-low-bypass", True, 0),
                                            ("turbojet", True, 30)])
def test_printed_thrust_is_the_rated_sea_level_static_thrust(engine, ab, dT):
    spec = load_text(FILE.format(engine=engine, ab=str(ab).lower(), dT=dT), "rating-check.yaml")
    res = solve(spec)
    assert res.feasible
    d = res.design
    ws, tw, m, tw_of = _brute_force(engine, ab, dT)
    # the turn drives T/W: the solver's T/W is the requirement's at the solver's W/S
    assert res.requirement("turn").active
    assert d.thrust_to_weight == pytest.approx(tw_of(d.wing_loading), rel=1e-6)
    # and the whole design is the brute-force optimum (a flat minimum: W/S to 0.5 %, mass to 1e-5)
    assert d.takeoff_mass == pytest.approx(m, rel=1e-5)
    assert d.wing_loading == pytest.approx(ws, rel=5e-3)
    assert d.thrust_to_weight == pytest.approx(tw, rel=5e-3)
    # the printed thrust is that T/W times the takeoff weight; per engine, over the two engines
    assert d.thrust == pytest.approx(tw_of(d.wing_loading) * d.takeoff_mass * G0, rel=1e-6)
    assert d.thrust_per_engine == pytest.approx(d.thrust / 2, rel=1e-12)
    # with an afterburner the dry thrust is written beside it: 0.6 (0.8) of the maximum
    # (Mattingly Eqs. 2.54b/2.55b at sea-level static)
    dry = {"turbofan-low-bypass": 0.6, "turbojet": 0.8}[engine]
    if ab:
        assert d.dry_thrust == pytest.approx(dry * d.thrust, rel=1e-12)
        assert d.dry_thrust_to_weight == pytest.approx(dry * d.thrust_to_weight, rel=1e-12)
        assert d.rating == "maximum (wet) rating"
    else:
        assert d.dry_thrust is None
        assert d.rating == "dry rating"
    js = json.loads(to_json(res))["design"]
    assert js["thrust_N"] == pytest.approx(d.thrust, rel=1e-12)
    assert js["thrust_per_engine_N"] == pytest.approx(d.thrust / 2, rel=1e-12)
    assert js["engines"] == 2
    assert ("dry_thrust_N" in js) is ab
    if ab:
        assert js["dry_thrust_N"] == pytest.approx(dry * js["thrust_N"], rel=1e-12)
        assert "dry rating" in js["dry_thrust_N_is"]
    assert js["thrust_N_is"] == f"sea-level static thrust, {d.rating}, installed, standard day"
    text = summary(res)
    assert f"sea-level static thrust, {d.rating}, installed, standard day" in text
    assert "thrust per engine" in text and ("dry thrust" in text) is ab


def test_json_keys_carry_units_for_every_example():
    # common practice, no source: every number's key names its unit; per-engine values add up
    for path in sorted((ROOT / "requirements").glob("*.yaml")):
        spec = load_text(path.read_text(), str(path))
        res = solve(spec)
        js = json.loads(to_json(res))["design"]
        n = js["engines"]
        if res.propeller:
            assert js["power_per_engine_W"] * n == pytest.approx(js["power_W"], rel=1e-12)
            assert "thrust_N" not in js
            assert js["power_W_is"].startswith("sea-level static shaft power, takeoff rating")
        else:
            assert js["thrust_per_engine_N"] * n == pytest.approx(js["thrust_N"], rel=1e-12)
            assert "power_W" not in js
            assert js["thrust_N_is"].startswith("sea-level static thrust")


def test_trainer_engine_mass_and_class_check_use_the_dry_thrust():
    # Source: Raymer Table 5.1 via the jet-trainer class (T/W 0.30-0.55 at the rating the engines fly at
    # takeoff, from memory): the trainer flies without afterburner, so the printed T/W is the dry one and
    # the class row compares it as printed. The engine mass factor 0.0467 kg/N applies to that same
    # printed thrust (docs/file-format.md, components model).
    from sizing.problem.crosscheck import cross_check
    from sizing.problem.facts import design_facts

    path = ROOT / "requirements" / "trainer-jet.yaml"
    spec = load_text(path.read_text(), str(path))
    res = solve(spec)
    d = res.design
    assert d.rating == "dry rating"
    parts = {name: (mass, how) for name, mass, how in design_facts(spec, res).empty_breakdown}
    mass, how = parts["propulsion"]
    assert mass == pytest.approx(0.0467 * d.thrust, rel=1e-12)
    assert "dry rating" in how
    check = cross_check(res, spec)
    row = next(r for r in check.rows if r.key == "thrust_to_weight")
    assert row.design == d.thrust_to_weight and "dry rating" in row.quantity
    assert all(r.inside for r in check.rows)


def test_one_lapse_for_the_whole_model():
    # common practice, no source: the model flies one lapse. Outside the physics module only
    # constraints.flight.lapse calls the rated lapse, and nothing outside it calls the published one,
    # so constraints, charts (envelope, turn, hot-and-high, performance) and the explore page agree.
    import re

    calls = {}
    for path in sorted((ROOT / "sizing").rglob("*.py")):
        if path.name == "propulsion.py":
            continue
        text = path.read_text()
        for name in ("thrust_lapse", "rated_lapse", "lapse_low_bypass", "lapse_turbojet", "lapse_high_bypass",
                     "power_lapse_piston", "power_lapse_turboprop"):
            if re.search(rf"\b{name}\(", text):
                calls.setdefault(name, []).append(path.relative_to(ROOT).as_posix())
    assert calls == {"rated_lapse": ["sizing/constraints/flight.py"]}

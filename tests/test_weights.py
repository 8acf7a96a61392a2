"""Mission fuel (Breguet), empty-mass regressions and the weight closure."""
import copy
import math
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sizing import weights as W
from sizing.inputs import units
from sizing.inputs.spec import load, validate
from sizing.problem import solve

from . import bruteforce as BF
from .test_solve import check_against_grid

FT = 0.3048
LB = 0.45359237
ROOT = Path(__file__).resolve().parents[1]


def test_breguet_propeller_range_anderson():
    # Source: Anderson, Introduction to Flight, Ch. 6 light piston example (docs/references.md check 12.8-a):
    # eta 0.8, c 0.45 lb/(hp h), (L/D)max 13.6059, W0 2 950 lb, W1 2 583.4 lb -> R = 6.3553e6 ft.
    c = units.parse("0.45 lb/(hp*h)", "psfc").si      # weight-based, 1/m (mass-based x g0)
    R = 6.3553e6 * FT
    f = W.breguet_cruise_fraction(R, None, 13.6059, c, propeller=True, eta_p=0.8)
    assert float(f) == pytest.approx(2583.4 / 2950.0, rel=2e-5)


def test_breguet_jet_endurance_anderson():
    # Source: Anderson, Introduction to Flight, Ch. 6 twin-jet example (docs/references.md check 12.8-d):
    # c_t 0.6 1/h, (L/D)max 16.8572, W0 19 815 lb, W1 12 351.3 lb -> E = 13.28 h (4.7808e4 s).
    c = units.parse("0.6 1/h", "tsfc").si
    f = W.breguet_loiter_fraction(4.7808e4, 16.8572, c)
    assert float(f) == pytest.approx(12351.3 / 19815.0, rel=5e-5)


def test_raymer_asw_segment_fractions():
    # Source: Raymer Ch. 3 ASW example inputs (docs/references.md check 12.8-e), fractions computed there:
    # cruise 1 500 nmi at 596.9 ft/s, C 0.5 1/h, L/D 0.866*16 -> 0.858083; loiter 3 h, C 0.4 1/h,
    # L/D 16 -> 0.927743; 20 min -> 0.991701.
    cruise = W.breguet_cruise_fraction(1500 * 1852.0, 596.9 * FT, 0.866 * 16, 0.5 / 3600)
    assert float(cruise) == pytest.approx(0.858083, abs=2e-6)
    assert float(W.breguet_loiter_fraction(3 * 3600, 16.0, 0.4 / 3600)) == pytest.approx(0.927743, abs=1e-6)
    assert float(W.breguet_loiter_fraction(20 * 60, 16.0, 0.4 / 3600)) == pytest.approx(0.991701, abs=1e-6)


def test_mass_based_consumption_is_converted_with_g0():
    # Source: docs/references.md §16 exact conversions and check 12.7-a: mass-based 22 mg/(N s) times g0 is a weight-based
    # TSFC of 22e-6 * 9.80665 1/s (0.7767 1/h).
    assert units.parse("22 mg/(N*s)", "tsfc").si == pytest.approx(22e-6 * 9.80665, rel=1e-12)
    assert units.parse("22 mg/(N*s)", "tsfc").si * 3600 == pytest.approx(0.77669, rel=1e-4)


def test_reserve_convention():
    # Source: Raymer Ch. 3 (docs/references.md §12.6, check 12.6-a): Wf/W0 = 1.06 (1 - Wx/W0) for 6 % reserve and trapped fuel
    assert W.fuel_fraction_from_segments(0.644023, reserve=0.06) == pytest.approx(1.06 * (1 - 0.644023))
    assert W.fuel_fraction_from_segments(0.7, reserve=0.04, trapped=0.01) == pytest.approx(1.05 * 0.3)


@pytest.mark.parametrize("preset, W0, expected", [
    # Source: Raymer Table 3.1 (docs/references.md check 11.5-a)
    ("general-aviation-single", 3000.0, 0.55851),
    ("general-aviation-single", 30000.0, 0.36900),
    ("jet-transport", 150000.0, 0.49892),
    ("jet-fighter", 30000.0, 0.61262),
    ("military-cargo-bomber", 50000.0, 0.43607),
])
def test_raymer_table_3_1(preset, W0, expected):
    c = W.STATISTICAL_PRESETS[preset]
    assert float(W.empty_fraction_power_law(W0, c["a"], c["c"])) == pytest.approx(expected, abs=1e-4)
    # and through the model switch, with the mass in kg (converted at the edge)
    e = {"empty": {"model": "statistical", "preset": preset}}
    assert float(W.empty_fraction(e, {}, W0 * LB, 3000.0, 0.3, False)) == pytest.approx(expected, abs=1e-4)


def test_raymer_table_6_1_refined():
    # Source: Raymer Table 6.1 (docs/references.md check 11.5-b): jet transport 150 000 lb, A 9, T/W 0.3,
    # W/S 120 psf, M 0.85 -> 0.51682; fighter 24 000 lb, A 3.5, T/W 1.25, W/S 64, M 1.8 -> 0.68620
    c = W.STATISTICAL_PRESETS["jet-transport-refined"]
    assert float(W.empty_fraction_refined(150000.0, 9, 0.3, 120, 0.85, c["a"], c["b"], c["exponents"])) == \
        pytest.approx(0.51682, abs=1e-5)
    c = W.STATISTICAL_PRESETS["jet-fighter-refined"]
    assert float(W.empty_fraction_refined(24000.0, 3.5, 1.25, 64, 1.8, c["a"], c["b"], c["exponents"])) == \
        pytest.approx(0.68620, abs=1e-5)
    # through the model switch: W/S given in N/m^2, converted to lbf/ft^2 at the edge
    e = {"empty": {"model": "statistical", "preset": "jet-transport-refined", "max_mach": 0.85}}
    got = W.empty_fraction(e, {"aerodynamics": {"aspect_ratio": 9.0}}, 150000 * LB, 120 * 47.880259, 0.3, False)
    assert float(got) == pytest.approx(0.51682, abs=1e-5)


ASW = {
    "title": "closure check",
    "aircraft": {
        "aerodynamics": {"cd0": 0.02, "aspect_ratio": 8.0, "cl_max": {"clean": 1.5}},
        "propulsion": {"type": "turbofan-high-bypass", "engines": 2},
        "weights": {"crew": "800 lb", "payload": "10000 lb",
                    "empty": {"model": "statistical", "a": 0.93, "c": -0.07},
                    "fuel": {"fraction": 0.387}},
    },
    "requirements": [{"id": "lax-stall", "kind": "stall-speed", "speed": "150 kn"},
                     {"id": "lax-cruise", "kind": "cruise", "mach": 0.3, "altitude": "5000 ft"}],
}


def test_raymer_asw_closure_fixed_point():
    # Source: Raymer 3rd ed. Ch. 3 ASW example (docs/references.md check 13.2-a): W_fixed 10 800 lb,
    # Wf/W0 0.387, We/W0 = 0.93 W0^-0.07 -> W0 = 59 305 lb (0.1 %). The coupled solve must find
    # it whatever its own starting point.
    res = solve(validate(copy.deepcopy(ASW), "<asw>"))
    assert res.status == "optimal"
    assert res.design.takeoff_mass / LB == pytest.approx(59305, rel=1e-3)
    assert res.design.empty_mass / res.design.takeoff_mass == pytest.approx(0.43089, abs=2e-4)


@pytest.mark.parametrize("guess_lb", [20000.0, 50000.0, 200000.0])
def test_closure_iteration_converges_from_any_guess(guess_lb):
    # Source: docs/references.md check 13.2-a: the fixed point W0 = 59 305 lb from guesses 20 000 to 200 000 lb
    W0 = guess_lb
    for _ in range(200):
        W0 = W.closure_mass(10800.0, 0.387, float(W.empty_fraction_power_law(W0, 0.93, -0.07)))
    assert W0 == pytest.approx(59305, rel=1e-3)


def test_long_range_variant_is_mission_driven():
    # common practice, no source: with the approach and field limits relaxed (145 kn CAS, 2,200 m), the
    # long-range example's wing loading lies inside the range the limits allow, where the cruise L/D
    # trade sets it, and "mission fuel" is named among the drivers
    data = copy.deepcopy(load(ROOT / "requirements" / "long-range-jet.yaml").data)
    for r in data["requirements"]:
        if r["kind"] == "approach-speed":
            r["cas"] = "145 kn"
        if r["kind"] == "takeoff":
            r["balanced_field"] = "2200 m"
    res = solve(validate(data, "<relaxed long-range>"))
    assert "mission fuel" in res.drivers
    limits = [r for r in res.requirements if r.kind in ("approach-speed", "landing")]
    assert all(not r.active and r.margin > 0.05 for r in limits)
    assert res.fuel_breakdown and sum(f for _, _, f in res.fuel_breakdown) * 1.06 == \
        pytest.approx(res.design.fuel_mass, rel=1e-9)


def test_mission_fuel_varies_with_wing_loading():
    # common practice, no source: cruise L/D comes from the polar at the design W/S, so the
    # fuel fraction is lowest near the best-range lift coefficient
    spec = load(ROOT / "requirements" / "long-range-jet.yaml")
    tree = BF.M.spec_tree(spec)
    ac = BF.M.aircraft(tree)
    Ws = np.geomspace(1000, 15000, 400)
    f = np.asarray(W.fuel_fraction(tree, ac, Ws))
    i = int(np.argmin(f))
    assert 0 < i < len(Ws) - 1
    assert f[0] > f[i] * 1.05 and f[-1] > f[i] * 1.01


MISSION_BASE = load(ROOT / "requirements" / "long-range-jet.yaml").data


@st.composite
def mission_sets(draw):
    d = copy.deepcopy(MISSION_BASE)
    seg = d["mission"]["segments"]
    seg[2]["range"] = f"{draw(st.floats(2000, 11000)):.0f} km"
    seg[2]["mach"] = round(draw(st.floats(0.6, 0.84)), 3)
    seg[2]["altitude"] = f"{draw(st.floats(25000, 45000)):.0f} ft"
    seg[3]["time"] = f"{draw(st.floats(10, 60)):.0f} min"
    d["mission"]["tsfc"] = f"{draw(st.floats(0.5, 0.75)):.3f} 1/h"
    d["aircraft"]["weights"]["empty"]["wing"] = f"{draw(st.floats(25, 60)):.1f} kg/m^2"
    for r in d["requirements"]:
        if r["kind"] == "approach-speed":
            r["cas"] = f"{draw(st.floats(105, 140)):.1f} kn"
        if r["kind"] == "ceiling":
            r["altitude"] = f"{draw(st.floats(35000, 48000)):.0f} ft"
        if r["kind"] == "takeoff":
            r["balanced_field"] = f"{draw(st.floats(1300, 2500)):.0f} m"
        if r["kind"] == "landing":
            r["field_length"] = f"{draw(st.floats(1400, 2400)):.0f} m"
    return d


@pytest.mark.slow
@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(mission_sets())
def test_coupled_mission_solve_against_brute_force(data):
    # common practice, no source: coupled fuel fraction and `after:` weight fractions, solver
    # against the independent grid on the same models
    check_against_grid(validate(data, "<mission>"))


def test_units_of_fuel_consumption_for_props():
    # Source: docs/references.md §12.1 and check 12.8-f: propeller Breguet uses C = C_bhp V/(550 eta_p) in English units;
    # equivalently W1/W0 = exp(-R c/(eta_p L/D)) with c weight-based per energy. 0.5 lb/(hp h),
    # 1 000 nmi, L/D 12, eta 0.8 -> ratio computed both ways.
    c_si = units.parse("0.5 lb/(hp*h)", "psfc").si
    R = 1000 * 1852.0
    ours = float(W.breguet_cruise_fraction(R, None, 12.0, c_si, propeller=True, eta_p=0.8))
    V_fts = 500.0
    C_eng = 0.5 * V_fts / (550 * 0.8)             # 1/h
    english = math.exp(-(R / FT) * (C_eng / 3600) / (V_fts * 12.0))
    assert ours == pytest.approx(english, rel=1e-9)


def test_payload_growth_factor_and_range_cost_match_re_solves():
    # common practice, no source: the multiplier-based costs equal central differences
    from sizing.problem import Problem
    spec = load(ROOT / "requirements" / "long-range-jet.yaml")
    prob = Problem(spec)
    p0 = prob.parameters(spec)
    res = prob.solve(p0)
    costs = {what: per for what, per, _ in res.other_costs}
    idx = {pp: i for i, pp in enumerate(prob.paths)}
    for what, path, scale in [("payload (growth factor)", ("aircraft", "weights", "payload"), 1.0),
                              ("range of outbound cruise", ("mission", "segments", 2, "range"), 1000.0)]:
        j = idx[path]
        h = 1e-4 * p0[j]
        ms = []
        for s in (1, -1):
            p = p0.copy()
            p[j] += s * h
            ms.append(prob.solve(p, sensitivities=False).design.takeoff_mass)
        assert costs[what] == pytest.approx((ms[0] - ms[1]) / (2 * h) * scale, rel=1e-2)


def _mission_tree(segment, engine="turbofan-high-bypass"):
    from sizing.problem import tree as Mo
    tree = {"aircraft": {"aerodynamics": {"cd0": 0.02, "k1": 0.05, "cl_max": {"clean": 1.5}},
                         "propulsion": {"type": engine, "engines": 2.0, "propeller_efficiency": 0.8},
                         "weights": {"crew": 100.0, "payload": 500.0, "empty": {"model": "fraction", "value": 0.5}}},
            "mission": {"tsfc": 0.6 / 3600, "reserve": 0.0, "segments": [segment]}, "requirements": {}}
    return tree, Mo.aircraft(tree)


def test_loiter_at_best_endurance_speed_uses_max_lift_to_drag():
    # Source: Raymer Ch. 3 (docs/references.md §12.2-12.3): jet loiter at (L/D)max, W1/W0 = exp(-E C/(L/D));
    # (L/D)max = 1/(2 sqrt(CD0 k1)) (Anderson, Aircraft Performance and Design §5.4).
    tree, ac = _mission_tree({"kind": "loiter", "time": 3600.0, "altitude": 3000.0})
    (_n, f, _b), = W.mission_fractions(tree, ac, 4000.0)
    LDmax = 1 / (2 * math.sqrt(0.02 * 0.05))
    assert float(f) == pytest.approx(math.exp(-3600 * 0.6 / 3600 / LDmax), rel=1e-12)


def test_combat_segment_burns_fuel_at_the_thrust_of_its_load_factor():
    # Source: Mattingly, Aircraft Engine Design 2nd ed., Eq. 3.16 (docs/references.md §12.5, check 12.5-a):
    # W_f/W_i = exp(-TSFC (D/W) dt), D/W = q CD/(W/S) with CL = n (W/S)/q; hand calculation at
    # 3 000 m, 200 m/s, n 3, W/S 4 000 N/m^2, 2 min.
    from sizing.physics.atmosphere import isa
    tree, ac = _mission_tree({"kind": "combat", "time": 120.0, "load_factor": 3.0, "speed": 200.0,
                              "altitude": 3000.0})
    (_n, f, _b), = W.mission_fractions(tree, ac, 4000.0)
    q = 0.5 * float(isa(3000.0).density) * 200.0 ** 2
    CL = 3 * 4000.0 / q
    D_W = q * (0.02 + 0.05 * CL ** 2) / 4000.0
    assert float(f) == pytest.approx(math.exp(-(0.6 / 3600) * D_W * 120.0), rel=1e-12)

"""Field lengths, climb segments, engines out, approach speed, speed margins and buffet, the
propeller momentum-theory cap: each against its published form or an independent computation.

Raymer's Chapter 17 equation numbers are from memory (docs/references.md says so); the forms
are checked here against numerical integration of the equations of motion and against the
published English-unit forms.
"""
import math
from types import SimpleNamespace

import numpy as np
import pytest
from scipy.integrate import quad

from sizing import cli
from sizing import constraints as C
from sizing.common.errors import InputError
from sizing.inputs.spec import load_text
from sizing.physics.aero import induced_drag_factor
from sizing.physics.atmosphere import RHO0, g0, isa
from sizing.physics.propulsion import actuator_disk_thrust, propeller_static_thrust
from sizing.problem import solve
from sizing.problem import tree as M
from sizing.reports.summary import summary

FT = 0.3048
KN = 1852.0 / 3600.0
LBF = 4.4482216152605      # N per lbf (exact)
K = induced_drag_factor(8.0, 0.8)


def aircraft(engine="turbofan-high-bypass", engines=2.0, **extra):
    tree = {"aircraft": {"aerodynamics": {"cd0": 0.025, "aspect_ratio": 8.0, "oswald_efficiency": 0.8,
                                          "cl_max": {"clean": 1.4, "takeoff": 1.8, "landing": 2.2},
                                          "takeoff_drag_increment": 0.02},
                         "propulsion": {"type": engine, "engines": engines}}}
    ac = M.aircraft(tree)
    for k, v in extra.items():
        setattr(ac, k, v)
    return ac


def req(kind, ac, **fields):
    return M.requirement({"id": "r", "kind": kind, "thrust_lapse": 1.0, **fields}, ac)


# ---------------------------------------------------------------- takeoff over an obstacle

def test_ground_roll_closed_form_against_the_equation_of_motion():
    # Source: Raymer §17.8 ground roll, Eqs. 17.101-17.104 (from memory): dV/dt = g (K_T + K_A V^2)
    # integrated here numerically, S = int V dV / (g (K_T + K_A V^2)) from 0 to V_LOF (check 7.7-a)
    for K_T, K_A, V in [(0.25, -3e-5, 70.0), (0.12, -8e-6, 55.0), (0.3, 2e-6, 40.0), (0.2, 0.0, 60.0)]:
        ref, _ = quad(lambda v: v / (g0 * (K_T + K_A * v ** 2)), 0.0, V, epsabs=1e-10, epsrel=1e-12)
        assert float(C.ground_roll_distance(V, K_T, K_A)) == pytest.approx(ref, rel=1e-9)


def test_transition_and_climb_to_the_obstacle():
    # Source: Raymer §17.8, Eqs. 17.106-17.111 (from memory), written out here: the arc of
    # radius R to the climb angle, h_TR = R (1 - cos g), S_TR = R sin g, S_C = (h - h_TR)/tan g;
    # when h_TR > h the arc alone: S_TR = sqrt(R^2 - (R - h)^2) (docs/references.md check 7.7-b)
    h = 50 * FT
    for gam, R in [(math.radians(4.0), 2500.0), (math.radians(9.0), 1800.0), (math.radians(2.0), 900.0)]:
        h_TR = R * (1 - math.cos(gam))
        if h_TR < h:
            ref = R * math.sin(gam) + (h - h_TR) / math.tan(gam)
        else:
            ref = math.sqrt(R ** 2 - (R - h) ** 2)
        assert float(C.transition_climb_distance(math.sin(gam), R, h)) == pytest.approx(ref, rel=1e-12)
    # the two forms meet where the arc ends at the obstacle (continuous distance)
    R = 2000.0
    gam = math.acos(1 - h / R)
    below = float(C.transition_climb_distance(math.sin(gam) * (1 - 1e-9), R, h))
    above = float(C.transition_climb_distance(math.sin(gam) * (1 + 1e-9), R, h))
    assert below == pytest.approx(above, rel=1e-6)


def test_takeoff_distance_is_the_sum_of_the_four_segments():
    # Source: Raymer §17.8 (from memory for the constants): V_LOF = 1.1 V_s, thrust at
    # V_LOF/sqrt(2), 3 s rotation, transition at 1.15 V_s with n = 1.2, 50 ft obstacle;
    # assembled here from the equations, each piece computed independently (check 7.7-c)
    ac = aircraft()
    r = req("takeoff", ac, distance=1500.0, rolling_friction=0.04, liftoff_speed_ratio=1.1,
            ground_lift_coefficient=0.5, rotation_time=3.0)
    for W_S, Y in [(4000.0, 0.32), (5500.0, 0.21)]:
        _takeoff_case(ac, r, W_S, Y)


def _takeoff_case(ac, r, W_S, Y):
    rho = float(isa(0.0).density)
    Vs = math.sqrt(2 * W_S / (rho * 1.8))
    V_LOF = 1.1 * Vs
    CD = 0.025 + 0.02 + K * 0.5 ** 2
    K_T, K_A = Y - 0.04, rho / (2 * W_S) * (0.04 * 0.5 - CD)
    S_G, _ = quad(lambda v: v / (g0 * (K_T + K_A * v ** 2)), 0.0, V_LOF, epsrel=1e-12)
    S_R = 3.0 * V_LOF
    V_TR, CL_TR = 1.15 * Vs, 1.8 / 1.15 ** 2
    gam = math.asin(Y - (0.045 + K * CL_TR ** 2) / CL_TR)
    R = V_TR ** 2 / (0.2 * g0)
    h_TR = R * (1 - math.cos(gam))
    if h_TR < 50 * FT:
        S_air = R * math.sin(gam) + (50 * FT - h_TR) / math.tan(gam)
    else:                                   # the arc clears the obstacle before the climb begins
        S_air = math.sqrt(R ** 2 - (R - 50 * FT) ** 2)
    hand = S_G + S_R + S_air
    assert float(C.takeoff_distance_of(W_S, Y, r, ac)) == pytest.approx(hand, rel=1e-9)
    # the kind's required T/W is the one whose distance is exactly the allowed one
    b = C.takeoff(W_S, None, req("takeoff", ac, distance=hand, rolling_friction=0.04, liftoff_speed_ratio=1.1,
                                 ground_lift_coefficient=0.5, rotation_time=3.0), ac)
    assert float(b.thrust) == pytest.approx(Y, rel=1e-10)


# ---------------------------------------------------------------- balanced field length

def bfl_english(W_S_psf, rho_slug, CL_climb, h_ft, T_W, U, G, sigma, g=32.174):
    """Raymer's printed English-unit form of Torenbeek's approximation (Eq. 17.113, from memory);
    Raymer writes g = 32.2 ft/s^2, here g0 in ft/s^2 so the SI comparison is exact."""
    return (0.863 / (1 + 2.3 * G) * (W_S_psf / (rho_slug * g * CL_climb) + h_ft) * (1 / (T_W - U) + 2.7)
            + 655 / math.sqrt(sigma))


@pytest.mark.parametrize("alt_ft, W_S_psf, T_W, G", [(0, 80.0, 0.30, 0.03), (5000, 60.0, 0.25, 0.01),
                                                     (2000, 100.0, 0.35, 0.05)])
def test_balanced_field_length_against_the_english_unit_form(alt_ft, W_S_psf, T_W, G):
    # Source: Raymer Eq. 17.113 (Torenbeek's approximation, English units; from memory) with
    # exact unit conversions (docs/references.md §16; check 7.8-a)
    air = isa(alt_ft * FT)
    rho, sigma = float(air.density), float(air.sigma)
    CL, h, U = 2.1 / 1.44, 35.0, 0.01 * 2.1 + 0.02
    slug_ft3 = LBF / FT / FT ** 3                # kg/m^3 per slug/ft^3 (1 slug = 1 lbf s^2/ft)
    ref_ft = bfl_english(W_S_psf, rho / slug_ft3, CL, h, T_W, U, G, sigma, g=g0 / FT)
    si = float(C.balanced_field_length(W_S_psf * LBF / FT ** 2, rho, CL, h * FT, T_W, U, G))
    assert si / FT == pytest.approx(ref_ft, rel=1e-10)
    # with Raymer's printed g = 32.2 ft/s^2 the first term differs by 0.08 %
    assert si / FT == pytest.approx(bfl_english(W_S_psf, rho / slug_ft3, CL, h, T_W, U, G, sigma, g=32.2),
                                    rel=1e-3)


def test_balanced_field_kind_assembles_the_approximation():
    # Source: Raymer §17.8 (from memory): CL_climb at 1.2 V_s, G = gamma_climb - gamma_min one
    # engine out (gamma_min 0.024 for twins, after 14 CFR 25.121(b)), U = 0.01 CLmax,TO + 0.02,
    # jets T_av = 0.75 T_static (5 + BPR)/(4 + BPR) (Eq. 17.114); assembled here (check 7.8-b)
    ac = aircraft(bypass_ratio=5.0, engine_out_drag_increment=0.003)
    r = req("takeoff", ac, balanced_field=1800.0, obstacle=35 * FT, liftoff_speed_ratio=1.1)
    W_S, Y, rho = 5000.0, 0.3, float(isa(0.0).density)
    CL2 = 1.8 / 1.44
    D_W = (0.045 + 0.003 + K * CL2 ** 2) / CL2
    G = math.asin(Y / 2 - D_W) - 0.024
    T_av = 0.75 * 10 / 9 * Y
    ref = float(C.balanced_field_length(W_S, rho, CL2, 35 * FT, T_av, 0.01 * 1.8 + 0.02, G))
    assert float(C.balanced_field_of(W_S, Y, r, ac)) == pytest.approx(ref, rel=1e-12)


def test_propeller_average_thrust_in_si_equals_the_english_form():
    # Source: Raymer Eq. 17.115 (from memory): T_av = 5.75 bhp (sigma N_e D^2 / bhp)^(1/3), lbf,
    # hp, ft; here 2 x 1 000 hp, 12 ft propellers, 5 000 ft (sigma from the 1976 standard; check 7.8-c)
    ac = aircraft("turboprop", propeller_diameter=12 * FT, takeoff_mass=10000.0)
    r = req("takeoff", ac, balanced_field=1500.0, altitude=5000 * FT, liftoff_speed_ratio=1.1)
    air = isa(5000 * FT)
    P = 2000 * 745.69987                      # W
    W = 10000.0 * g0
    Y = P / W / float(C.lapse(r, ac, 0.0, air))   # thrust_lapse 1 in req(): Y = P/W
    ref_lbf = 5.75 * 2000 * (float(air.sigma) * 2 * 12 ** 2 / 2000) ** (1 / 3)
    got = float(C.average_takeoff_thrust(Y, r, ac, air)) * W / 4.4482216152605
    assert got == pytest.approx(ref_lbf, rel=1e-9)


# ---------------------------------------------------------------- landing

def test_landing_distance_pieces_and_the_field_factor():
    # Source: Raymer §17.9 (from memory): approach at 3 deg from 50 ft, flare at 1.23 V_s with
    # n = 1.2, free roll 3 s at 1.15 V_s, braking mu 0.4 (constant deceleration); field length =
    # landing distance / 0.6 (14 CFR 121.195(b)); docs/references.md checks 7.9-a, 7.9-b
    ac = aircraft()
    W_S, rho = 4000.0, float(isa(0.0).density)
    r = req("landing", ac, distance=1000.0, braking_friction=0.4, touchdown_speed_ratio=1.15, free_roll_time=3.0)
    Vs = math.sqrt(2 * W_S / (rho * 2.2))
    gam, h = math.radians(3.0), 50 * FT
    R = (1.23 * Vs) ** 2 / (0.2 * g0)
    h_f = R * (1 - math.cos(gam))
    hand = (h - h_f) / math.tan(gam) + R * math.sin(gam) + 3 * 1.15 * Vs + (1.15 * Vs) ** 2 / (2 * g0 * 0.4)
    assert float(C.landing_distance_of(W_S, r, ac)) == pytest.approx(hand, rel=1e-12)
    # the W/S limit is the inverse: a design at the limit lands in exactly the distance
    lim = float(C.landing(None, None, req("landing", ac, distance=hand, braking_friction=0.4,
                                          touchdown_speed_ratio=1.15, free_roll_time=3.0), ac).wing_loading)
    assert lim == pytest.approx(W_S, rel=1e-10)
    # field length: 0.6 of it may be used, so a landing distance of 5 000 ft needs 8 333 ft
    # Source: Horonjeff et al., Planning and Design of Airports, Example 2-1 (docs/references.md)
    L = 5000 * FT / 0.6
    fl = C.landing(None, None, req("landing", ac, field_length=L, braking_friction=0.4, touchdown_speed_ratio=1.15), ac)
    ds = C.landing(None, None, req("landing", ac, distance=5000 * FT, braking_friction=0.4,
                                   touchdown_speed_ratio=1.15), ac)
    assert float(fl.wing_loading) == pytest.approx(float(ds.wing_loading), rel=1e-12)
    assert L / FT == pytest.approx(8333.33, abs=0.01)


def test_approach_speed_limit():
    # Source: lift equation with V_app = 1.3 V_s,L (Raymer §17.9) and the definition of EAS
    # (rho V^2 = rho0 V_e^2): approach at 130 kn EAS at 5 000 ft, weight fraction 0.85 (check 7.10-a)
    ac = aircraft()
    r = M.requirement({"id": "a", "kind": "approach-speed", "eas": 130 * KN, "factor": 1.3,
                       "altitude": 5000 * FT, "weight_fraction": 0.85}, ac)
    hand = 0.5 * RHO0 * (130 * KN / 1.3) ** 2 * 2.2 / 0.85
    assert float(C.approach_speed(None, None, r, ac).wing_loading) == pytest.approx(hand, rel=1e-9)


# ---------------------------------------------------------------- climb segments, engines out

def test_climb_segment_table_is_the_regulation():
    # Source: 14 CFR 25.121(a)-(d) and 25.119 (docs/references.md §8.2, §8.3; check 8.6-a):
    # one engine out, 2/3/4 engines: first > 0 / 0.3 / 0.5 %, second 2.4 / 2.7 / 3.0 %, final
    # 1.2 / 1.5 / 1.7 %, approach 2.1 / 2.4 / 2.7 %; landing climb, all engines, 3.2 %
    table = {"first": (0.0, 0.003, 0.005), "second": (0.024, 0.027, 0.030), "final": (0.012, 0.015, 0.017),
             "approach": (0.021, 0.024, 0.027), "landing": (0.032, 0.032, 0.032)}
    for seg, values in table.items():
        for n, g in zip((2, 3, 4), values):
            d = C.segment_defaults(seg, n)
            assert d["gradient"] == g, (seg, n)
            assert d["engines_out"] == (0.0 if seg == "landing" else 1.0)
    assert C.segment_defaults("first", 2)["gear"] == "down" and C.segment_defaults("second", 2)["gear"] == "up"
    assert C.segment_defaults("landing", 3)["config"] == "landing" and C.segment_defaults("final", 2)["config"] == "clean"
    # from memory: 14 CFR 25.107(b)(1) V2 >= 1.13 V_SR; 25.107(g) V_FTO >= 1.18 V_SR; 25.125(b)(2)(i)
    # V_REF >= 1.23 V_SR0 (docs/references.md §9, §8.6)
    assert [C.segment_defaults(s, 2)["speed_ratio"] for s in ("second", "final", "landing")] == [1.13, 1.18, 1.23]
    assert C.CLIMB_SEGMENTS["second"]["paragraph"] == "14 CFR 25.121(b)"
    with pytest.raises(ValueError, match="2, 3 or 4 engines"):
        C.segment_defaults("second", 1)


def test_segment_requirement_fills_its_keys_and_prints_the_paragraph():
    # Source: 14 CFR 25.121(b), second segment of a three-engine aircraft: 2.7 %
    text = SEGMENT.format(engines=3, reqs="  - {id: seg2, kind: climb-gradient, segment: second}\n"
                                          "  - {id: seg2-own, kind: climb-gradient, segment: second, gradient: 3 %}")
    spec = load_text(text)
    tree = M.spec_tree(spec)
    assert tree["requirements"]["seg2"]["gradient"] == 0.027
    assert tree["requirements"]["seg2-own"]["gradient"] == 0.03          # overridden key by key
    assert tree["requirements"]["seg2"]["speed_ratio"] == 1.13
    res = solve(spec)
    detail = next(r.detail for r in res.requirements if r.id == "seg2")
    assert "14 CFR 25.121(b)" in detail and "2.70 % required" in detail, detail


def test_engines_out_on_a_ceiling():
    # Hand calculation (Mattingly Eq. 2.11; docs/references.md check 8.7-a): one of two engines out halves the thrust
    # available and adds the inoperative engine's drag; T_SL/W_TO = (N/(N-1)) (beta/alpha)
    # (q/(beta W/S)) (CD0 + dCD + k1 CL^2) + Ps/V
    ac = aircraft(engine_out_drag_increment=0.004)
    r = req("ceiling", ac, altitude=3000.0, engines_out=1.0, climb_rate=0.254)
    air = isa(3000.0)
    W_S, V = 3500.0, 120.0
    q = 0.5 * float(air.density) * V ** 2
    CL = W_S / q
    hand = 2.0 * (q / W_S * (0.025 + 0.004 + K * CL ** 2) + 0.254 / V)
    assert float(C.ceiling(W_S, V, r, ac).thrust) == pytest.approx(hand, rel=1e-12)


# ---------------------------------------------------------------- speed margins and buffet

def test_free_speeds_stay_above_the_min_speed_factor():
    # Source: common practice (free speeds at least 1.2 V_s, the usual minimum climb and
    # manoeuvre speed margin; docs/file-format.md says why): the best ceiling speed found never
    # lies below 1.2 V_s, and a lower factor can only lower the thrust needed (check 5.8-a)
    ac = aircraft()
    W = np.array([2000.0, 4000.0, 6000.0])
    air = isa(9000.0)
    Vs = np.sqrt(2 * W / (float(air.density) * 1.4))
    t12, _, V12 = C.required_curve(req("ceiling", ac, altitude=9000.0, min_speed_factor=1.2), ac, W)
    t10, _, _ = C.required_curve(req("ceiling", ac, altitude=9000.0, min_speed_factor=1.0), ac, W)
    assert np.all(V12 >= 1.2 * Vs * (1 - 1e-12))
    assert np.all(t10 <= t12 * (1 + 1e-12))


def test_buffet_margin_limits_cruise_wing_loading():
    # Hand calculation: CL x 1.3 <= CL_buffet at the cruise condition -> W/S <= q CL_b/(1.3 beta)
    # (docs/references.md check 5.8-b)
    ac = aircraft(cl_buffet=0.8, buffet_margin=1.3)
    r = req("cruise", ac, mach=0.78, altitude=11000.0, throttle=1.0, weight_fraction=0.95)
    air = isa(11000.0)
    q = 0.5 * float(air.density) * (0.78 * float(air.speed_of_sound)) ** 2
    assert float(C.cruise(5000.0, None, r, ac).wing_loading) == pytest.approx(q * 0.8 / (1.3 * 0.95), rel=1e-12)


def test_buffet_band_of_a_ceiling_closes_at_high_mach():
    # common practice, no source: with CL_buffet falling with Mach, the buffet-free speeds of a
    # heavy wing at altitude are a band (low- and high-speed buffet), checked point by point (check 5.8-c)
    from sizing.physics.aero import MachTable

    ac = aircraft(cl_buffet=MachTable((0.0, 0.7, 0.8, 0.85, 0.9), (1.0, 0.9, 0.78, 0.6, 0.3)), buffet_margin=1.3)
    r = req("ceiling", ac, altitude=13000.0)
    W = np.array([3500.0])
    lo, hi = C.free_speed_range(r, ac, W)
    air = isa(13000.0)
    assert hi[0] < 0.95 * float(air.speed_of_sound)     # the band closes before the speed bound
    for V, ok in [(lo[0] * 1.001, True), (hi[0] * 0.999, True), (lo[0] * 0.99, False), (hi[0] * 1.01, False)]:
        CL = 3500.0 / (0.5 * float(air.density) * V ** 2)
        assert (CL * 1.3 <= float(ac.cl_buffet(V / float(air.speed_of_sound)))) == ok


# ---------------------------------------------------------------- propellers: momentum theory

def test_momentum_theory_cap_on_propeller_thrust():
    # Source: docs/references.md (propellers): ideal static thrust (2 rho A P^2)^(1/3), 150 kW,
    # 1.9 m, sea level -> 5 386.6 N; at speed, the actuator-disk thrust from the closed-form
    # cubic equals a bisection on P = T (V + v), T = 2 rho A v (V + v) (checks 15.4-b, 15.5-a)
    A_disk = math.pi * 1.9 ** 2 / 4
    assert float(propeller_static_thrust(150e3, 1.225, A_disk)) == pytest.approx(5386.6, abs=0.05)
    ac = aircraft("piston", engines=1.0, propeller_diameter=1.9, takeoff_mass=1200.0, propeller_efficiency=0.99)
    W = 1200.0 * g0
    air = isa(0.0)
    for V in (5.0, 20.0, 40.0):
        Y = 150e3 / W
        T = float(C.thrust_available(Y, V, 1.0, ac, air=air, field=True)) * W
        # the two bounds are blended smoothly where they cross (at most 1 %, shim.smooth_max): here
        # they differ by 20 % or more, so the blend moves the thrust by less than 1e-3
        assert T == pytest.approx(float(actuator_disk_thrust(150e3, V, float(air.density), A_disk)), rel=1e-3)
        assert T <= 0.99 * 150e3 / V        # eta_p P / V is the other bound, inactive here
    # the cap reaches the static value as V -> 0
    T0 = float(C.thrust_available(150e3 / W, 1e-6, 1.0, ac, air=air, field=True)) * W
    assert T0 == pytest.approx(float(propeller_static_thrust(150e3, float(air.density), A_disk)), rel=1e-4)


def test_the_touring_single_takes_off_within_its_propeller():
    # common practice, no source (check 15.5-b): with a 1.9 m propeller, the thrust the takeoff
    # requirement counts on at V_LOF/sqrt(2) is the actuator disk's at that speed (below the ideal
    # static thrust of its power); the cruise efficiency's eta_p P/V lies well above it
    from pathlib import Path

    src = (Path(__file__).resolve().parents[1] / "requirements" / "touring-piston.yaml").read_text()
    assert "propeller_diameter" in src
    spec = load_text(src)
    res = solve(spec)
    d = res.design
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree, d.takeoff_mass)
    r = M.requirement(tree["requirements"]["short-field"], ac)
    air = C.condition(r)
    Vs = math.sqrt(2 * d.wing_loading / (float(air.density) * 1.8))
    V_avg = 1.1 * Vs / math.sqrt(2)
    alpha = float(C.lapse(r, ac, V_avg, air))
    T = float(C.thrust_available(d.power_to_weight, V_avg, alpha, ac, air=air, field=True)) * d.takeoff_mass * g0
    P = d.power * alpha
    A_disk = math.pi * ac.propeller_diameter ** 2 / 4
    at_speed = float(actuator_disk_thrust(P, V_avg, float(air.density), A_disk))
    assert T == pytest.approx(at_speed, rel=1e-3)       # the smooth blend of the two bounds
    assert T < float(propeller_static_thrust(P, float(air.density), A_disk))
    assert ac.propeller_efficiency * P / V_avg > 1.2 * at_speed


# ---------------------------------------------------------------- inputs: contradictions

SEGMENT = """
title: forms
aircraft:
  aerodynamics: {{cd0: 0.022, aspect_ratio: 9, cl_max: {{clean: 1.5, takeoff: 2.0, landing: 2.4}},
                 takeoff_drag_increment: 0.02}}
  propulsion: {{type: turbofan-high-bypass, engines: {engines}}}
  speed_limit: {{mach: 0.85}}
  weights: {{crew: 200 kg, payload: 2000 kg, fuel: {{fraction: 0.25}},
            empty: {{model: components, wing: 40 kg/m^2, propulsion: 0.02 kg/N, other: 0.35}}}}
requirements:
{reqs}
"""


@pytest.mark.parametrize("engines, line, field, words", [
    (2, "{id: f, kind: takeoff, ground_roll: 800 m, distance: 1200 m}", "requirements[0] (id f).distance",
     ["give one of ground_roll, distance or balanced_field", "not ground_roll and distance"]),
    (1, "{id: f, kind: takeoff, balanced_field: 1500 m}", "requirements[0] (id f).balanced_field",
     ["multi-engine", "1 engine"]),
    (2, "{id: c, kind: ceiling, altitude: 10000 ft, engines_out: 2}", "requirements[0] (id c).engines_out",
     ["leaves no engine running"]),
    (1, "{id: s, kind: climb-gradient, segment: second}", "requirements[0] (id s).segment",
     ["2, 3 or 4 engines"]),
    (2, "{id: l, kind: landing, distance: 900 m, factor: 0.6}", "requirements[0] (id l).factor",
     ["factor applies to field_length"]),
    (2, "{id: g, kind: climb-gradient, engines_out: 1}", "requirements[0] (id g).gradient",
     ["give the gradient, or a segment"]),
    (2, "{id: a, kind: approach-speed, cas: 120 kn, speed: 125 kn}", "requirements[0] (id a).cas",
     ["not speed and cas"]),
])
def test_contradictions_are_located(engines, line, field, words):
    # common practice, no source: a contradiction names its file, line and field
    with pytest.raises(InputError) as e:
        load_text(SEGMENT.format(engines=engines, reqs="  - " + line), "forms.yaml")
    assert e.value.field == field, e.value.describe()
    assert e.value.line == 11
    for w in words:
        assert w in e.value.message, e.value.message


def test_contradiction_exits_2_through_the_cli(tmp_path, capsys):
    # common practice, no source: bad input is exit code 2 with the located message, no traceback
    f = tmp_path / "single.yaml"
    f.write_text(SEGMENT.format(engines=1, reqs="  - {id: f, kind: takeoff, balanced_field: 1500 m}"))
    assert cli.main(["check", str(f)]) == 2
    err = capsys.readouterr().err
    assert err.startswith(f"error: {f}:11: requirements[0] (id f).balanced_field: ") and "Traceback" not in err


def test_aircraft_key_contradictions():
    # common practice, no source
    base = SEGMENT.format(engines=2, reqs="  - {id: s, kind: stall-speed, cas: 110 kn, config: landing}")
    with pytest.raises(InputError, match="applies to propeller aircraft") as e:
        load_text(base.replace("engines: 2}", "engines: 2, propeller_diameter: 3 m}"))
    assert e.value.field == "aircraft.propulsion.propeller_diameter"
    with pytest.raises(InputError, match="needs cl_buffet") as e:
        load_text(base.replace("takeoff_drag_increment: 0.02}", "takeoff_drag_increment: 0.02, buffet_margin: 1.3}"))
    assert e.value.field == "aircraft.aerodynamics.buffet_margin"


# ---------------------------------------------------------------- outputs in their own terms

def test_margins_read_in_the_requirement_documents_terms(solved):
    # common practice, no source: each new form prints its margin in its own terms, airspeeds
    # labelled, the climb segment's paragraph beside it
    jet = summary(solved["long-range-jet.yaml"][1])
    for words in ("balanced field", "over 35 ft", "kn CAS vs 125 kn CAS limit", "14 CFR 25.121(b)",
                  "14 CFR 25.121(d)", "field length", "landing distance / 0.6", "max landing fraction"):
        assert words in jet, words
    prop = summary(solved["regional-turboprop.yaml"][1])
    assert "the takeoff value" in prop and "momentum-theory cap at 3.90 m" in prop
    trainer = summary(solved["trainer-jet.yaml"][1])
    assert "kn TAS vs 100 kn TAS limit" in trainer


def test_field_curves_on_the_diagram_are_the_solvers(solved):
    # common practice, no source: the balanced-field curve drawn is the thrust whose distance
    # margin is zero, and it passes through the design point when active
    from sizing.charts.diagram_data import diagram_data

    spec, res = solved["long-range-jet.yaml"]
    data = diagram_data(spec, res, samples=41)
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree, res.design.takeoff_mass)
    curve = next(c for c in data.curves if c.id == "field")
    r = M.requirement(tree["requirements"]["field"], ac)
    i = 20
    assert np.isfinite(curve.thrust[i])
    assert float(C.balanced_field_of(data.W_S[i], curve.thrust[i], r, ac)) == pytest.approx(
        float(r.balanced_field), rel=1e-9)
    stop = next(c for c in data.curves if c.id == "stop")
    assert stop.thrust is None and np.isfinite(stop.boundary)


def test_engine_out_ceiling_without_a_hand_lapse(solved):
    # common practice, no source: the turboprop's one-engine-out ceiling is written with
    # engines_out, no hand-computed thrust lapse
    spec, res = solved["regional-turboprop.yaml"]
    r = spec.requirement("ceiling-oei")
    assert r.engines_out == 1 and r.thrust_lapse is None
    assert SimpleNamespace(**M.spec_tree(spec)["requirements"]["ceiling-oei"]).engines_out == 1.0

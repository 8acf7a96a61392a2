"""Constraint functions of every requirement kind against worked examples and hand calculations."""
import math
from types import SimpleNamespace

import casadi as ca
import numpy as np
import pytest

from sizing import constraints as C
from sizing.physics.aero import induced_drag_factor
from sizing.physics.atmosphere import isa
from sizing.problem import tree as M

R0 = 6356766.0
KT = 1852.0 / 3600.0
K = induced_drag_factor(8.0, 0.8)   # docs/references.md check 3.1-a: 0.0497359
RHO_SL = float(isa(0.0).density)    # 1976 sea-level density from the defining constants


def geopotential(z_ft):
    Z = z_ft * 0.3048
    return R0 * Z / (R0 + Z)


def aircraft(engine="turbofan-high-bypass", **aero):
    a = {"cd0": 0.025, "aspect_ratio": 8.0, "oswald_efficiency": 0.8,
         "cl_max": {"clean": 1.4, "takeoff": 1.8, "landing": 2.0}}
    a.update(aero)
    tree = {"aircraft": {"aerodynamics": a,
                         "propulsion": {"type": engine, "engines": 2.0, "throttle_ratio": 1.0,
                                        "afterburner": False, "propeller_efficiency": 0.8}}}
    return M.aircraft(tree)


def req(kind, **fields):
    d = {"id": "r", "kind": kind, "thrust_lapse": 1.0}
    d.update(fields)
    return M.requirement(d, aircraft())


# ---------------------------------------------------------------- Gudmundsson set (docs/references.md §6.8)

def test_gudmundsson_turn_and_cruise():
    # Source: Gudmundsson, General Aviation Aircraft Design (2014) Eqs. 3-1 and 3-5 forms,
    # docs/references.md check 6.8-a, check 6.8-b: CD0 0.025, A 8, e 0.8, W/S 1 500, 10 000 ft geometric
    # (rho 0.904773), V 60 m/s: turn n = 2 -> 0.21038, cruise -> 0.07295.
    ac = aircraft()
    h = geopotential(10000)
    assert float(isa(h).density) == pytest.approx(0.904773, rel=2e-6)
    turn = C.sustained_turn(1500.0, None, req("sustained-turn", load_factor=2.0, speed=60.0, altitude=h), ac)
    assert float(turn.thrust) == pytest.approx(0.21038, rel=1e-4)
    cru = C.cruise(1500.0, None, req("cruise", speed=60.0, altitude=h, throttle=1.0), ac)
    assert float(cru.thrust) == pytest.approx(0.07295, rel=1e-4)


def test_gudmundsson_climb():
    # Source: Gudmundsson Eq. 3-3 (docs/references.md check 6.8-c): sea level, V 40 m/s, V_V 5 m/s -> 0.21746
    b = C.climb(1500.0, None, req("climb", climb_rate=5.0, speed=40.0), aircraft())
    assert float(b.thrust) == pytest.approx(0.21746, rel=1e-4)


def test_gudmundsson_service_ceiling():
    # Source: Gudmundsson Eq. 3-6 (docs/references.md check 6.8-d): 18 000 ft geometric (rho 0.698507),
    # V_V 0.508 m/s, at V_y = sqrt((2/rho)(W/S) sqrt(k/(3 CD0))) -> 0.09002.
    ac = aircraft()
    h = geopotential(18000)
    r = req("ceiling", altitude=h)
    rho = float(isa(h).density)
    Vy = math.sqrt(2 / rho * 1500 * math.sqrt(K / (3 * 0.025)))
    assert float(C.ceiling(1500.0, Vy, r, ac).thrust) == pytest.approx(0.09002, rel=1e-4)
    # the free-speed curve is the minimum over speed, so it can only be lower (jet: best climb
    # speed above V_y), never higher
    best, _, V = C.required_curve(r, ac, np.array([1500.0]))
    assert best[0] <= 0.09002 * (1 + 1e-6)
    assert V[0] > Vy


def test_gudmundsson_takeoff_uav_brief():
    # Source: Sobester & Forrester (2015) UAV brief with Gudmundsson Eq. 3-4 (docs/references.md check 6.8-f):
    # V_LOF 15.9478 m/s, S_G 60.0456 m, CL_TO 0.97, CD_TO 0.0898, mu 0.17 -> 0.32739 / 0.34689 /
    # 0.35664 at W/S 100 / 150 / 200 (book code uses g = 9.81; we use 9.80665: tolerance 3e-4).
    for W_S, expected in [(100, 0.32739), (150, 0.34689), (200, 0.35664)]:
        got = C.takeoff_ground_roll_thrust(W_S, 1.225, 15.9478, 60.0456, 0.0898, 0.97, 0.17)
        assert float(got) == pytest.approx(expected, rel=3e-4)


def test_takeoff_kind_matches_ground_roll_equation():
    # Hand calculation: the kind builds V_LOF = 1.1 V_stall,TO and CD_TO from the polar,
    # then applies Gudmundsson Eq. 3-4 (Source: docs/references.md §6.4; check 7.1-a).
    ac = aircraft(takeoff_drag_increment=0.02)
    r = req("takeoff", ground_roll=600.0, rolling_friction=0.04, liftoff_speed_ratio=1.1,
            ground_lift_coefficient=0.5)
    W_S = 3000.0
    V_LOF = 1.1 * math.sqrt(2 * W_S / (RHO_SL * 1.8))
    CD = 0.025 + 0.02 + K * 0.25
    q = 0.5 * RHO_SL * V_LOF ** 2 / 2
    hand = V_LOF ** 2 / (2 * 9.80665 * 600) + q * CD / W_S + 0.04 * (1 - q * 0.5 / W_S)
    assert float(C.takeoff(W_S, None, r, ac).thrust) == pytest.approx(hand, rel=1e-12)


# ---------------------------------------------------------------- master equation (docs/references.md §5.4)

def test_master_equation_supercruise_and_turn():
    # Source: Mattingly Eq. 2.11, docs/references.md check 5.4-a and check 5.4-b (self-defined inputs, geometric 30 kft):
    # supercruise M1.5, q 991.727 psf, alpha 0.47943, K1 0.27, CD0 0.028, W/S 64 psf, beta 0.78
    # -> 0.92711; turn n = 5 at M0.9, q 357.022, alpha 0.50324, K1 0.18, CD0 0.016 -> 1.15261.
    assert float(C.master_equation(64.0, 991.727, 1.0, 0.78, 0.47943, 0.028, 0.27)) == pytest.approx(0.92711, rel=1e-4)
    assert float(C.master_equation(64.0, 357.022, 1.0, 0.78, 0.50324, 0.016, 0.18, n=5.0)) == pytest.approx(1.15261, rel=1e-4)


def test_sustained_turn_kind_uses_lapse_and_beta():
    # Hand calculation with the master equation (Mattingly Eq. 2.11): jet at 15 000 ft, M0.6,
    # n 4, beta 0.85, alpha from the high-bypass lapse (Eq. 2.53) computed here.
    from sizing.physics.propulsion import thrust_lapse
    ac = aircraft()
    h = 15000 * 0.3048
    d = {"id": "t", "kind": "sustained-turn", "load_factor": 4.0, "mach": 0.6, "altitude": h,
         "weight_fraction": 0.85}
    r = M.requirement(d, ac)
    air = isa(h)
    V = 0.6 * float(air.speed_of_sound)
    q = 0.5 * float(air.density) * V ** 2
    alpha = float(thrust_lapse("turbofan-high-bypass", h, 0.6))
    W_S = 3500.0
    CL = 4 * 0.85 * W_S / q
    hand = 0.85 / alpha * (q / (0.85 * W_S) * (0.025 + K * CL ** 2))
    b = C.sustained_turn(W_S, None, r, ac)
    assert float(b.thrust) == pytest.approx(hand, rel=1e-12)
    assert float(b.wing_loading) == pytest.approx(q * 1.4 / (4 * 0.85), rel=1e-12)


def test_excess_power_and_max_mach():
    # Hand calculation, Mattingly Eq. 2.11 with Ps: sea level, V 150 m/s, n 1, Ps 50 m/s
    ac = aircraft()
    W_S = 2500.0
    q = 0.5 * RHO_SL * 150 ** 2
    hand = q / W_S * (0.025 + K * (W_S / q) ** 2) + 50 / 150
    b = C.excess_power(W_S, None, req("excess-power", excess_power=50.0, load_factor=1.0, speed=150.0), ac)
    assert float(b.thrust) == pytest.approx(hand, rel=1e-12)
    mm = C.max_mach(W_S, None, req("max-mach", speed=150.0), ac)
    assert float(mm.thrust) == pytest.approx(hand - 50 / 150, rel=1e-12)


# ---------------------------------------------------------------- wing-loading limits

def test_stall_limit_cc4():
    # Source: 14 CFR 23.49(c) 61 kt + lift equation (docs/references.md check 3.4-a): CLmax 2.0 -> 1 206.35 N/m^2
    ac = aircraft()
    b = C.stall_speed(None, None, req("stall-speed", speed=61 * KT, config="landing"), ac)
    assert float(b.wing_loading) == pytest.approx(1206.35, rel=1e-4)
    # beta: the limit on takeoff wing loading rises as 1/beta
    d = {"id": "s", "kind": "stall-speed", "speed": 61 * KT, "config": "landing", "weight_fraction": 0.9}
    b2 = C.stall_speed(None, None, M.requirement(d, ac), ac)
    assert float(b2.wing_loading) == pytest.approx(1206.35 / 0.9, rel=1e-4)


def test_instantaneous_turn_limit():
    # Hand calculation, lift equation: W/S = q CLmax / n at 5 000 m, 140 m/s, n 3, CLmax 1.4
    air = isa(5000.0)
    q = 0.5 * float(air.density) * 140 ** 2
    b = C.instantaneous_turn(None, None, req("instantaneous-turn", load_factor=3.0, speed=140.0, altitude=5000.0),
                             aircraft())
    assert float(b.wing_loading) == pytest.approx(q * 1.4 / 3, rel=1e-12)


def test_landing_limit_hand_and_free_roll():
    # Hand calculation (constant braking deceleration, V_TD = 1.15 V_s; Mattingly §2.2 form):
    # S = t V + V^2/(2 g mu); W/S = rho CLmax V^2 / (2 k^2 beta)
    ac = aircraft()
    r = req("landing", ground_roll=800.0, braking_friction=0.35, touchdown_speed_ratio=1.15, free_roll_time=2.0)
    b = C.landing(None, None, r, ac)
    a = 1 / (2 * 9.80665 * 0.35)
    V = (-2 + math.sqrt(4 + 4 * a * 800)) / (2 * a)
    assert 2 * V + V ** 2 * a == pytest.approx(800.0)
    assert float(b.wing_loading) == pytest.approx(RHO_SL * 2.0 * V ** 2 / (2 * 1.15 ** 2), rel=1e-12)


# ---------------------------------------------------------------- climb gradient (docs/references.md §8)

@pytest.mark.parametrize("N, G, expected", [(2, 0.024, 0.24800), (3, 0.027, 0.19050), (4, 0.030, 0.17333)])
def test_engine_out_gradients(N, G, expected):
    # Source: 14 CFR 25.121(b) second-segment gradients with T/W = (N/(N-1))(G + 1/(L/D)),
    # L/D = 10 (docs/references.md check 8.5-b)
    assert C.engine_out_climb_thrust(G, 10.0, N) == pytest.approx(expected, abs=5e-6)


def test_climb_gradient_kind():
    # Hand calculation: CL = CLmax_TO / k^2 at V = k V_s, L/D from the polar, twin one engine out
    ac = aircraft(takeoff_drag_increment=0.02)
    r = req("climb-gradient", gradient=0.024, engines_out=1.0, speed_ratio=1.2)
    CL = 1.8 / 1.44
    LD = CL / (0.025 + 0.02 + K * CL ** 2)
    assert float(C.climb_gradient(3000.0, None, r, ac).thrust) == pytest.approx(2 * (0.024 + 1 / LD), rel=1e-12)


# ---------------------------------------------------------------- propeller conversion

def test_power_to_weight_conversion():
    # Source: docs/references.md check 15.4-a: T/W 0.1 at 150 kt with eta_p 0.8 -> P/W = 9.6458 W/N
    ac = aircraft("piston")
    air = isa(0.0)
    assert float(C.to_sea_level(0.1, 150 * KT, 1.0, ac)) == pytest.approx(9.6458, rel=1e-4)
    # and a cruise requirement at 150 kt turns its T/W into P/W the same way (alpha override 1)
    r = req("cruise", speed=150 * KT, throttle=1.0)
    t_jet = float(C.cruise(1500.0, None, r, aircraft()).thrust)
    p_prop = float(C.cruise(1500.0, None, r, ac).thrust)
    assert p_prop == pytest.approx(t_jet * 150 * KT / 0.8, rel=1e-12)
    assert air.density == pytest.approx(1.225)


# ---------------------------------------------------------------- one expression, two backends

ALL_KINDS = {
    "stall-speed": {"speed": 50.0},
    "stall-speed:cas": {"kind": "stall-speed", "cas": 50.0, "altitude": 2000.0},
    "approach-speed": {"eas": 60.0, "factor": 1.3},
    "ceiling:engine-out": {"kind": "ceiling", "altitude": 4000.0, "engines_out": 1.0, "min_speed_factor": 1.25},
    "takeoff:distance": {"kind": "takeoff", "distance": 1200.0, "obstacle": 15.24, "rotation_time": 3.0,
                         "rolling_friction": 0.04, "liftoff_speed_ratio": 1.1},
    "takeoff:balanced_field": {"kind": "takeoff", "balanced_field": 1500.0, "obstacle": 10.668,
                               "rotation_time": 3.0, "rolling_friction": 0.04, "liftoff_speed_ratio": 1.1},
    "landing:distance": {"kind": "landing", "distance": 1000.0, "braking_friction": 0.4, "free_roll_time": 3.0,
                         "touchdown_speed_ratio": 1.15},
    "landing:field_length": {"kind": "landing", "field_length": 1500.0, "braking_friction": 0.4,
                             "touchdown_speed_ratio": 1.15},
    "climb-gradient:second": {"kind": "climb-gradient", "segment": "second", "gradient": 0.024,
                              "engines_out": 1.0, "speed_ratio": 1.13, "gear": "up"},
    "sustained-turn": {"load_factor": 3.0, "mach": 0.5, "altitude": 4000.0},
    "max-mach": {"mach": 0.8, "altitude": 9000.0},
    "ceiling": {"altitude": 12000.0},
    "climb": {"climb_rate": 10.0},
    "excess-power": {"excess_power": 30.0, "load_factor": 2.0, "mach": 0.6, "altitude": 3000.0},
    "cruise": {"mach": 0.7, "altitude": 10000.0, "throttle": 0.9},
    "instantaneous-turn": {"load_factor": 5.0, "mach": 0.5},
    "takeoff": {"ground_roll": 900.0, "rolling_friction": 0.04, "liftoff_speed_ratio": 1.1, "temperature_offset": 15.0},
    "landing": {"ground_roll": 900.0, "braking_friction": 0.3, "touchdown_speed_ratio": 1.15, "free_roll_time": 0.0},
    "climb-gradient": {"gradient": 0.024, "engines_out": 1.0, "speed_ratio": 1.2},
}


@pytest.mark.parametrize("engine", ["turbofan-low-bypass", "turboprop"])
@pytest.mark.parametrize("label", sorted(ALL_KINDS))
def test_float_array_casadi_agree(label, engine):
    # common practice, no source: the diagram (numpy) and the optimizer (CasADi) see one function
    ac = aircraft(engine, cl_buffet=0.9, takeoff_drag_increment=0.02)
    ac.propeller_diameter = 2.5 if engine == "turboprop" else None
    ac.engine_out_drag_increment = 0.004
    ac.gear_drag_increment = 0.01
    ac.buffet_margin = 1.3
    ac.takeoff_mass = np.array([6000.0, 9000.0, 12000.0])
    kind = label.split(":")[0]
    d = {"id": "x", "kind": kind, **ALL_KINDS[label]}
    r = M.requirement(d, ac)
    W = np.array([800.0, 2000.0, 4500.0])
    kd = C.KINDS[kind]
    V = np.array([90.0, 120.0, 150.0]) if kd.has_free_speed(r) else None
    arr = kd.function(W, V, r, ac)
    ws, vs, mm, yy = ca.SX.sym("ws"), ca.SX.sym("v"), ca.SX.sym("m"), ca.SX.sym("y")
    ac_sym = SimpleNamespace(**{**vars(ac), "takeoff_mass": mm})
    sym = kd.function(ws, vs if V is not None else None, r, ac_sym)
    if arr.margin_of is not None:
        # a field length: its distance margin at a trial T/W (P/W) agrees on every backend, and
        # the numeric thrust is the margin's root
        Y = np.array([0.3, 0.5, 0.7]) * (40.0 if engine == "turboprop" else 1.0)
        f = ca.Function("f", [ws, mm, yy], [sym.margin_of(yy)])
        for i in range(3):
            ac_i = SimpleNamespace(**{**vars(ac), "takeoff_mass": float(ac.takeoff_mass[i])})
            one = kd.function(float(W[i]), None, r, ac_i)
            ai = np.asarray(arr.margin_of(Y))[i]
            assert float(one.margin_of(float(Y[i]))) == pytest.approx(ai, rel=1e-12)
            assert float(f(W[i], ac.takeoff_mass[i], Y[i])) == pytest.approx(ai, rel=1e-12, abs=1e-12)
            assert float(one.thrust) == pytest.approx(float(np.asarray(arr.thrust)[i]), rel=1e-12)
            if np.isfinite(one.thrust):
                assert float(one.margin_of(one.thrust)) == pytest.approx(0.0, abs=1e-9)
        assert sym.thrust is None
        return
    for part in ("thrust", "wing_loading"):
        a = getattr(arr, part)
        if a is None:
            assert getattr(sym, part) is None
            continue
        f = ca.Function("f", [ws, vs, mm], [getattr(sym, part)])
        for i in range(3):
            ac_i = SimpleNamespace(**{**vars(ac), "takeoff_mass": float(ac.takeoff_mass[i])})
            fl = getattr(kd.function(float(W[i]), None if V is None else float(V[i]), r, ac_i), part)
            ai = np.broadcast_to(a, W.shape)[i]
            assert float(fl) == pytest.approx(ai, rel=1e-12)
            assert float(f(W[i], 0.0 if V is None else V[i], ac.takeoff_mass[i])) == pytest.approx(ai, rel=1e-12)


def test_every_design_kind_has_a_function_with_source():
    # common practice, no source: docs/file-format.md §4 lists these kinds; each carries a published reference
    design_kinds = {"stall-speed", "sustained-turn", "max-mach", "ceiling", "climb", "excess-power", "cruise",
                    "instantaneous-turn", "takeoff", "landing", "climb-gradient", "approach-speed"}
    assert set(C.KINDS) == design_kinds
    for k in C.KINDS.values():
        assert k.reference and k.function.__doc__


def test_required_curve_accepts_a_weight_fraction_per_wing_loading():
    # common practice, no source: a beta array over W/S gives the same curve as point by point
    ac = aircraft()
    W = np.array([1500.0, 3000.0, 4500.0])
    betas = np.array([0.95, 0.9, 0.85])
    d = {"id": "c", "kind": "ceiling", "altitude": 11000.0}
    whole, _, _ = C.required_curve(M.requirement(d, ac, betas), ac, W)
    for i in range(3):
        one, _, _ = C.required_curve(M.requirement(d, ac, float(betas[i])), ac, W[i:i + 1])
        assert whole[i] == pytest.approx(one[0], rel=1e-9)

"""Drag polar checks against textbook closed forms and worked examples."""
import casadi as ca
import numpy as np
import pytest

from sizing.physics.aero import (
    DragPolar,
    MachTable,
    induced_drag_factor,
    max_lift_to_drag,
    minimum_drag_speed,
    oswald_efficiency_straight_wing,
    stall_speed,
)


def test_max_lift_to_drag_anderson_examples():
    # Source: Anderson, Introduction to Flight, Ch. 6 running examples (docs/references.md check 3.3-c):
    # piston A 7.3657, CD0 0.025, e 0.8 -> 13.606 (book 13.6); jet A 8.9336, CD0 0.02, e 0.81 -> 16.857.
    assert float(max_lift_to_drag(0.025, induced_drag_factor(7.3657, 0.8))) == pytest.approx(13.6059, rel=1e-4)
    assert float(max_lift_to_drag(0.02, induced_drag_factor(8.9336, 0.81))) == pytest.approx(16.8572, rel=1e-4)


def test_max_lift_to_drag_is_the_polar_maximum():
    # Source: Anderson, Aircraft Performance and Design, §5.4: (L/D)max = 1/(2 sqrt(CD0 k)) at
    # CL* = sqrt(CD0/k); checked here against a dense scan of the polar.
    polar = DragPolar(cd0=0.025, k1=induced_drag_factor(8, 0.8))
    CL = np.linspace(0.05, 2.0, 200001)
    LD = CL / polar.CD(CL, 0.3)
    assert LD.max() == pytest.approx(14.1796, rel=1e-5)    # docs/references.md check 3.3-a
    assert CL[np.argmax(LD)] == pytest.approx(np.sqrt(0.025 / induced_drag_factor(8, 0.8)), rel=1e-4)


def test_minimum_drag_speed():
    # Source: docs/references.md check 3.3-b: CD0 0.025, A 8, e 0.8, sea level, W/S 1 500 -> V_md 58.7727 m/s,
    # V_min-power = V_md / 3^(1/4) = 44.6576 m/s.
    k = induced_drag_factor(8, 0.8)
    V = float(minimum_drag_speed(1500.0, 1.225, 0.025, k))
    assert V == pytest.approx(58.7727, rel=1e-5)
    assert V / 3 ** 0.25 == pytest.approx(44.6576, rel=1e-5)


def test_stall_speed_61_knots():
    # Source: 14 CFR 23.49(c) 61 kt with the lift equation (docs/references.md check 3.4-a): sea level,
    # CLmax 2.0 -> W/S 1 206.35 N/m^2 ; the inverse gives 61.000 kt.
    V = float(stall_speed(1206.35, 1.225, 2.0))
    assert V / (1852 / 3600) == pytest.approx(61.0, abs=1e-3)


def test_oswald_estimate():
    # Source: Raymer Eq. 12.48, values computed in docs/references.md check 3.2-a
    for A, e in [(4, 0.934395), (6, 0.869121), (8, 0.810592), (10, 0.756617), (15, 0.634903)]:
        assert oswald_efficiency_straight_wing(A) == pytest.approx(e, abs=1e-6)


def test_mach_table_is_pchip_on_all_backends():
    # Source: scipy.interpolate.PchipInterpolator (general-purpose reference implementation of
    # Fritsch & Carlson 1980): our branch-free form equals it inside the table, is held flat
    # outside, and agrees on numpy and CasADi.
    from scipy.interpolate import PchipInterpolator
    xs, ys = (0.0, 0.8, 0.9, 0.95), (0.020, 0.021, 0.024, 0.030)
    t = MachTable(xs, ys)
    ref = PchipInterpolator(xs, ys)
    M = np.linspace(0, 0.95, 39)
    np.testing.assert_allclose(t(M), ref(M), rtol=1e-12)
    assert float(t(1.2)) == pytest.approx(0.030)
    # monotone table stays monotone
    assert np.all(np.diff(t(np.linspace(0, 0.95, 2001))) >= -1e-15)
    x = ca.SX.sym("M")
    f = ca.Function("t", [x], [t(x)])
    g = ca.Function("dt", [x], [ca.jacobian(t(x), x)])
    for v in M:
        assert float(f(v)) == pytest.approx(float(ref(v)), rel=1e-12)
    # continuously differentiable across a breakpoint
    assert float(g(0.8 - 1e-9)) == pytest.approx(float(g(0.8 + 1e-9)), rel=1e-5)


def test_polar_with_configuration_increment():
    # common practice, no source: CD = CD0 + dCD0(config) + k1 CL^2 + k2 CL
    polar = DragPolar(cd0=0.02, k1=0.05, k2=-0.01, cl_max={"clean": 1.2, "takeoff": 1.6},
                      drag_increment={"takeoff": 0.015})
    assert float(polar.CD(0.5, 0.2, "takeoff")) == pytest.approx(0.02 + 0.015 + 0.05 * 0.25 - 0.005)
    assert polar.CLmax("takeoff") == 1.6


def test_pchip_slopes_match_scipy_on_random_tables():
    # Source: scipy.interpolate.PchipInterpolator (reference implementation of Fritsch & Carlson
    # 1980), on increasing, decreasing and non-monotone tables of 2 to 7 points.
    from scipy.interpolate import PchipInterpolator

    from sizing.physics.shim import pchip_slopes
    rng = np.random.default_rng(3)
    for _ in range(200):
        n = int(rng.integers(2, 8))
        xs = np.cumsum(rng.uniform(0.05, 0.4, n))
        ys = rng.normal(0.02, 0.005, n)
        if rng.random() < 0.5:
            ys = np.sort(ys)
        np.testing.assert_allclose(pchip_slopes(xs, ys), PchipInterpolator(xs, ys).derivative()(xs),
                                   rtol=1e-10, atol=1e-14)

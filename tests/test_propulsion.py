"""Thrust and power lapse against Mattingly's correlations and published worked numbers."""
import casadi as ca
import numpy as np
import pytest

from sizing.physics.atmosphere import isa
from sizing.physics.propulsion import (
    inlet_conditions,
    lapse_high_bypass,
    lapse_low_bypass,
    lapse_turbojet,
    power_lapse_piston,
    power_lapse_turboprop,
    thrust_lapse,
    thrust_lapse_turboprop,
)

R0 = 6356766.0


def geometric(z_ft):
    """theta, delta at a GEOMETRIC altitude (Mattingly tabulates by geometric altitude)."""
    Z = z_ft * 0.3048
    air = isa(R0 * Z / (R0 + Z))
    return float(air.theta), float(air.delta)


def test_aaf_supercruise_military():
    # Source: Mattingly, Aircraft Engine Design 2nd ed., AAF example (docs/references.md check 4.7-b):
    # M1.5 at 30 kft, TR 1.07, military power -> 0.4792 (book), 0.47943 (exact recomputation).
    th, de = geometric(30000)
    t0, d0 = inlet_conditions(th, de, 1.5)
    a = float(lapse_low_bypass(t0, d0, 1.5, 1.07, afterburner=False))
    assert a == pytest.approx(0.47943, rel=1e-4)
    assert a == pytest.approx(0.4792, rel=1e-3)


def test_aaf_warmup_military():
    # Source: Mattingly AAF warm-up at 2 000 ft hot day, M0 = 0 (docs/references.md check 4.7-a): 0.5390.
    assert float(lapse_low_bypass(1.0796, 0.9298, 0.0, 1.07)) == pytest.approx(0.5390, abs=5e-5)


@pytest.mark.parametrize("engine, z_ft, M, TR, ab, expected", [
    # Source: docs/references.md check 4.7-i (Mattingly Eqs. 2.53-2.56, geometric altitude)
    ("hbp", 35000, 0.8, 1.0, False, 0.20205),
    ("hbp", 0, 0.25, 1.0, False, 0.76617),
    ("lbp", 30000, 0.9, 1.07, False, 0.30194),
    ("tj", 30000, 1.6, 1.0, True, 0.71169),
    ("tj", 20000, 0.8, 1.0, False, 0.48059),
    ("tp", 20000, 0.5, 1.0, False, 0.12905),
])
def test_reference_cases(engine, z_ft, M, TR, ab, expected):
    th, de = geometric(z_ft)
    t0, d0 = inlet_conditions(th, de, M)
    f = {"hbp": lambda: lapse_high_bypass(t0, d0, M, TR),
         "lbp": lambda: lapse_low_bypass(t0, d0, M, TR, ab),
         "tj": lambda: lapse_turbojet(t0, d0, M, TR, ab),
         "tp": lambda: thrust_lapse_turboprop(t0, d0, M, TR)}[engine]
    assert float(f()) == pytest.approx(expected, rel=1e-4)


# Hand calculations from the published equations (Mattingly Eqs. 2.52-2.55), both sides of the
# break theta0 = TR.  Source: Mattingly, Aircraft Engine Design, 2nd ed., §2.3.2.
def _hand(engine, t0, d0, M, TR, ab):
    hot = t0 > TR
    if engine == "turbofan-high-bypass":
        return d0 * (1 - 0.49 * np.sqrt(M) - (3 * (t0 - TR) / (1.5 + M) if hot else 0))
    if engine == "turbofan-low-bypass":
        if ab:
            return d0 * (1 - (3.5 * (t0 - TR) / t0 if hot else 0))
        return 0.6 * d0 * (1 - (3.8 * (t0 - TR) / t0 if hot else 0))
    if ab:
        return d0 * (1 - 0.3 * (t0 - 1) - 0.1 * np.sqrt(M) - (1.5 * (t0 - TR) / t0 if hot else 0))
    return 0.8 * d0 * (1 - 0.16 * np.sqrt(M) - (24 * (t0 - TR) / ((9 + M) * t0) if hot else 0))


@pytest.mark.parametrize("engine, ab", [("turbofan-high-bypass", False), ("turbofan-low-bypass", False),
                                        ("turbofan-low-bypass", True), ("turbojet", False), ("turbojet", True)])
@pytest.mark.parametrize("h, M, dT", [(0.0, 0.3, 0.0), (6000.0, 0.7, 0.0), (11000.0, 0.85, 0.0),
                                      (0.0, 0.6, 25.0), (3000.0, 0.8, 20.0)])
def test_hand_worked_points(engine, ab, h, M, dT):
    TR = 1.05
    air = isa(h, dT)
    t0 = float(air.theta) * (1 + 0.2 * M ** 2)
    d0 = float(air.delta) * (1 + 0.2 * M ** 2) ** 3.5
    got = float(thrust_lapse(engine, h, M, dT, TR, ab))
    assert got == pytest.approx(_hand(engine, t0, d0, M, TR, ab), rel=1e-12)


def test_both_branches_exercised():
    # common practice, no source: the hand points above include theta0 above and below TR
    th = [float(isa(h, dT).theta) * (1 + 0.2 * M ** 2) for h, M, dT in
          [(0.0, 0.3, 0.0), (6000.0, 0.7, 0.0), (0.0, 0.6, 25.0), (3000.0, 0.8, 20.0)]]
    assert min(th) < 1.05 < max(th)


@pytest.mark.parametrize("engine, ab", [("turbofan-high-bypass", False), ("turbofan-low-bypass", False),
                                        ("turbofan-low-bypass", True), ("turbojet", False), ("turbojet", True)])
def test_continuous_at_the_break(engine, ab):
    # common practice, no source: the correlations are continuous at theta0 = TR.
    TR = 1.07
    M_break = np.sqrt(5 * (TR - 1))  # docs/references.md §4.1: sea-level Mach at the break
    lo = float(thrust_lapse(engine, 0.0, M_break - 1e-7, 0.0, TR, ab))
    hi = float(thrust_lapse(engine, 0.0, M_break + 1e-7, 0.0, TR, ab))
    assert lo == pytest.approx(hi, abs=1e-5)


@pytest.mark.parametrize("engine", ["turbojet", "turbofan-low-bypass", "turbofan-high-bypass"])
def test_sea_level_static_is_one_or_rating(engine):
    # Source: docs/references.md check 4.7-d and check 4.7-h: static sea level -> 1.0 for all types (maximum rating);
    # the military ratings are 0.6 (low-bypass) and 0.8 (turbojet) of maximum (Eqs. 2.54b, 2.55b).
    assert float(thrust_lapse(engine, 0.0, 0.0, afterburner=True)) == pytest.approx(1.0)
    dry = {"turbojet": 0.8, "turbofan-low-bypass": 0.6, "turbofan-high-bypass": 1.0}[engine]
    assert float(thrust_lapse(engine, 0.0, 0.0)) == pytest.approx(dry)


@pytest.mark.parametrize("ft, expected", [(5000, 0.84335), (10000, 0.70384), (20000, 0.47093)])
def test_piston_gagg_ferrar(ft, expected):
    # Source: Gagg & Ferrar as used by Gudmundsson Ch. 7, values computed with geopotential
    # sigma in docs/references.md §4.5 (check 4.7-e).
    assert float(thrust_lapse("piston", ft * 0.3048, 0.3)) == pytest.approx(expected, abs=1e-5)


def test_turboprop_power_lapse():
    # Source: Anderson, Aircraft Performance and Design (1999), Eq. 3.36: P/P0 = (rho/rho0)^0.7.
    sigma = 0.533
    assert float(power_lapse_turboprop(sigma)) == pytest.approx(sigma ** 0.7, rel=1e-12)
    # Source: docs/references.md §2.6: sigma(20 000 ft) = 0.53281 (check 4.7-f)
    assert float(thrust_lapse("turboprop", 20000 * 0.3048, 0.4)) == pytest.approx(0.53281 ** 0.7, rel=2e-5)
    assert float(power_lapse_piston(1.0)) == 1.0


@pytest.mark.parametrize("engine", ["turbojet", "turbofan-low-bypass", "turbofan-high-bypass", "turboprop", "piston"])
def test_float_array_casadi_agree(engine):
    # common practice, no source: one expression, two backends (with Mach symbolic)
    M = np.array([0.0, 0.2, 0.4, 0.7, 0.9])
    h = 4000.0
    arr = thrust_lapse(engine, h, M, 10.0, 1.04, True)
    Ms = ca.SX.sym("M")
    f = ca.Function("a", [Ms], [thrust_lapse(engine, h, Ms, 10.0, 1.04, True)])
    for i, x in enumerate(M):
        assert float(thrust_lapse(engine, h, float(x), 10.0, 1.04, True)) == pytest.approx(arr[i], rel=1e-12)
        assert float(f(x)) == pytest.approx(arr[i], rel=1e-12, abs=1e-15)


def test_unknown_engine_lists_valid():
    with pytest.raises(ValueError, match="turbofan-high-bypass"):
        thrust_lapse("rocket", 0.0, 0.5)

"""Standard atmosphere against the 1976 standard and an independent library."""
import casadi as ca
import numpy as np
import pytest

from sizing.physics.atmosphere import isa

# Source: U.S. Standard Atmosphere 1976 (NOAA-S/T 76-1562), values by GEOPOTENTIAL altitude,
# docs/references.md §2.5, check 2.5-b (computed from the defining constants of Part 1; agree with ICAO Doc 7488).
# columns: H [m], T [K], p [Pa], rho [kg/m^3], a [m/s]
GEOPOTENTIAL_TABLE = [
    (0.0, 288.150, 101325.0, 1.225000, 340.294),
    (1000.0, 281.650, 89874.6, 1.111640, 336.434),
    (5000.0, 255.650, 54019.9, 0.736115, 320.529),
    (11000.0, 216.650, 22632.1, 0.363918, 295.070),
    (15000.0, 216.650, 12044.6, 0.193674, 295.070),
    (20000.0, 216.650, 5474.89, 0.0880348, 295.070),
    (25000.0, 221.650, 2511.02, 0.0394658, 298.455),
    (32000.0, 228.650, 868.019, 0.0132250, 303.131),
    (47000.0, 270.650, 110.906, 0.00142753, 329.799),
]


@pytest.mark.parametrize("H, T, p, rho, a", GEOPOTENTIAL_TABLE)
def test_table_by_geopotential_altitude(H, T, p, rho, a):
    air = isa(H)
    # tolerance: the printed digits (6 significant figures)
    assert float(air.temperature) == pytest.approx(T, abs=6e-4)
    assert float(air.pressure) == pytest.approx(p, rel=6e-6)
    assert float(air.density) == pytest.approx(rho, rel=6e-6)
    assert float(air.speed_of_sound) == pytest.approx(a, abs=6e-4)


# Source: docs/references.md §2.6, check 2.6-a, pressure altitude in feet (geopotential), computed from the 1976 standard.
FEET_TABLE = [  # h [ft], T [K], p [Pa], rho [kg/m^3]
    (5000, 278.244, 84307.3, 1.055546),
    (10000, 268.338, 69681.7, 0.904637),
    (20000, 248.526, 46563.3, 0.652694),
    (30000, 228.714, 30089.6, 0.458312),
    (35000, 218.808, 23842.3, 0.379597),
    (40000, 216.650, 18753.9, 0.301558),
]


@pytest.mark.parametrize("ft, T, p, rho", FEET_TABLE)
def test_table_in_feet(ft, T, p, rho):
    air = isa(ft * 0.3048)
    assert float(air.temperature) == pytest.approx(T, abs=6e-4)
    assert float(air.pressure) == pytest.approx(p, rel=6e-6)
    assert float(air.density) == pytest.approx(rho, rel=6e-6)


def test_against_independent_library():
    # Source: the general-purpose `ambiance` package (ICAO 1993 / 1976 standard, by geometric
    # altitude); convert our geopotential H to geometric Z = r0 H / (r0 - H), r0 = 6 356 766 m.
    ambiance = pytest.importorskip("ambiance")
    H = np.linspace(0.0, 47000.0, 48)
    r0 = 6356766.0
    Z = r0 * H / (r0 - H)
    ref = ambiance.Atmosphere(Z)
    air = isa(H)
    np.testing.assert_allclose(air.temperature, ref.temperature, rtol=1e-6)
    np.testing.assert_allclose(air.pressure, ref.pressure, rtol=1e-5)
    np.testing.assert_allclose(air.density, ref.density, rtol=1e-5)
    np.testing.assert_allclose(air.speed_of_sound, ref.speed_of_sound, rtol=1e-6)


def test_hot_day_at_constant_pressure():
    # common practice, no source: ISA+dT keeps the pressure of the pressure altitude and
    # raises the temperature; density from the gas law p / (R T), R = 287.05307 J/(kg K)
    # (docs/references.md §2.2).
    std, hot = isa(2000 * 0.3048), isa(2000 * 0.3048, 15.0)
    assert float(hot.pressure) == float(std.pressure)
    assert float(hot.temperature) == pytest.approx(float(std.temperature) + 15.0)
    assert float(hot.density) == pytest.approx(float(std.pressure) / (287.05307 * (float(std.temperature) + 15.0)),
                                               rel=1e-6)


def test_outside_range_names_value_and_range():
    with pytest.raises(ValueError, match=r"90000 m .*-5000 m to 84852 m"):
        isa(90000.0)
    with pytest.raises(ValueError):
        isa(float("nan"))


def test_float_array_and_casadi_agree():
    # common practice, no source: one expression, two backends
    H = np.array([0.0, 3000.0, 11000.0, 18000.0, 30000.0, 60000.0])
    arr = isa(H).density
    h = ca.SX.sym("h")
    f = ca.Function("rho", [h], [isa(h).density])
    for i, x in enumerate(H):
        assert float(isa(float(x)).density) == pytest.approx(arr[i], rel=1e-12)
        assert float(f(x)) == pytest.approx(arr[i], rel=1e-12)

"""Calibrated, equivalent and true airspeed against independent implementations and the
isentropic pitot relation; speed limits (VMO/MMO) and speeds given as CAS or EAS in requirements."""
import math

import casadi as ca
import numpy as np
import pytest

from sizing import constraints as C
from sizing.inputs.spec import load_text
from sizing.physics import airspeed as A
from sizing.physics.atmosphere import isa

KN = 1852.0 / 3600.0
FT = 0.3048
R0 = 6356766.0       # m, the 1976 standard's Earth radius for geopotential altitude


@pytest.mark.parametrize("cas_kn, alt_ft, dT", [(250, 10000, 0.0), (300, 35000, 0.0), (120, 5000, 0.0),
                                                (350, 25000, 0.0), (140, 8000, 15.0), (280, 41000, -10.0)])
def test_cas_to_tas_against_an_independent_implementation(cas_kn, alt_ft, dT):
    # Source: the general-purpose `aerocalc3` package (airspeed.cas2tas / tas2cas, its own
    # standard atmosphere and pitot relations), pressure altitude in ft, temperature in deg C.
    # Its constants differ from the 1976 values in the 7th digit: tolerance 1e-6 (docs/references.md
    # check 2.9-a).
    ac = pytest.importorskip("aerocalc3.airspeed")
    air = isa(alt_ft * FT, dT)
    t_c = float(air.temperature) - 273.15
    ref = ac.cas2tas(cas_kn, alt_ft, temp=t_c, speed_units="kt", alt_units="ft", temp_units="C")
    tas = float(A.cas_to_tas(cas_kn * KN, air)) / KN
    assert tas == pytest.approx(ref, rel=1e-6)
    back = ac.tas2cas(tas, alt_ft, temp=t_c, speed_units="kt", alt_units="ft", temp_units="C")
    assert float(A.tas_to_cas(tas * KN, air)) / KN == pytest.approx(back, rel=1e-6)
    assert back == pytest.approx(cas_kn, rel=1e-6)


def test_eas_against_an_independent_implementation():
    # Source: `aerocalc3` airspeed.eas2tas (EAS = TAS sqrt(sigma)), standard day (check 2.9-a)
    ac = pytest.importorskip("aerocalc3.airspeed")
    for eas_kn, alt_ft in [(250, 10000), (180, 20000), (300, 30000)]:
        ref = ac.eas2tas(eas_kn, alt_ft, speed_units="kt", alt_units="ft")
        assert float(A.eas_to_tas(eas_kn * KN, isa(alt_ft * FT))) / KN == pytest.approx(ref, rel=1e-6)


def test_cas_against_ambiance_and_the_isentropic_relations():
    # Source: the static pressure and speed of sound of the `ambiance` package (by geometric
    # altitude) with the isentropic pitot relation written out here (Anderson, Introduction to
    # Flight, §4.12): p_t/p = (1 + 0.2 M^2)^3.5, CAS from the same impact pressure at p0, a0
    # (docs/references.md check 2.9-b).
    ambiance = pytest.importorskip("ambiance")
    H = np.array([0.0, 1500.0, 6000.0, 11000.0, 14000.0])
    ref = ambiance.Atmosphere(R0 * H / (R0 - H))
    p0, a0 = 101325.0, 340.29399
    M = np.array([0.3, 0.45, 0.7, 0.8, 0.85])
    qc = ref.pressure * ((1 + 0.2 * M ** 2) ** 3.5 - 1)
    cas = a0 * np.sqrt(5 * ((qc / p0 + 1) ** (2 / 7) - 1))
    np.testing.assert_allclose(A.cas_to_tas(cas, isa(H)), M * ref.speed_of_sound, rtol=2e-6)


def test_sea_level_standard_day_identities():
    # Source: definitions (CAS equals TAS and EAS at sea level on a standard day; Anderson §4.12;
    # docs/references.md check 2.9-c)
    air = isa(0.0)
    V = np.array([30.0, 100.0, 250.0])
    np.testing.assert_allclose(A.cas_to_tas(V, air), V, rtol=1e-12)
    np.testing.assert_allclose(A.eas_to_tas(V, air), V, rtol=1e-12)
    # a hot day at sea-level pressure: same CAS, higher TAS by sqrt(T/T0) (EAS the same ratio
    # at low Mach, where compressibility is negligible)
    hot = isa(0.0, 15.0)
    assert float(A.cas_to_tas(30.0, hot)) == pytest.approx(30.0 * math.sqrt(303.15 / 288.15), rel=1e-4)


def test_above_mach_one_is_refused():
    # common practice, no source: the subsonic pitot relation stops at M 1 (a normal shock stands
    # ahead of the probe above it); numbers are refused, limits are capped by their users
    with pytest.raises(ValueError, match="Mach 1"):
        A.cas_to_tas(600 * KN, isa(40000 * FT))
    assert float(A.cas_to_tas(600 * KN, isa(40000 * FT), strict=False)) > float(isa(40000 * FT).speed_of_sound)


def test_one_expression_on_floats_arrays_and_symbols():
    # common practice, no source: the solver (CasADi) and the diagram (numpy) see one function
    h, v = ca.SX.sym("h"), ca.SX.sym("v")
    f = ca.Function("f", [h, v], [A.cas_to_tas(v, isa(h)), A.eas_to_tas(v, isa(h)), A.tas_to_cas(v, isa(h))])
    for alt, V in [(0.0, 50.0), (3000.0, 120.0), (9000.0, 150.0)]:
        out = [float(x) for x in f(alt, V)]
        assert out[0] == pytest.approx(float(A.cas_to_tas(V, isa(alt))), rel=1e-12)
        assert out[1] == pytest.approx(float(A.eas_to_tas(V, isa(alt))), rel=1e-12)
        assert out[2] == pytest.approx(float(A.tas_to_cas(V, isa(alt))), rel=1e-12)


def test_vmo_mmo_is_the_lower_of_the_two_at_each_altitude():
    # Source: 14 CFR 25.1505 (VMO/MMO: the maximum operating limit speed, in CAS or Mach);
    # crossover computed here: 340 kn CAS equals M 0.88 where the pitot relation says so (check 2.9-d)
    ac = type("ac", (), {"speed_limit_mach": 0.88, "speed_limit_cas": 340 * KN, "speed_limit_speed": None})()
    H = np.linspace(0.0, 14000.0, 141)
    air = isa(H)
    V = np.asarray(C.speed_limit(ac, air))
    vmo = np.asarray(A.cas_to_tas(340 * KN, air, strict=False))
    mmo = 0.88 * np.asarray(air.speed_of_sound)
    np.testing.assert_allclose(V, np.minimum(vmo, mmo), rtol=1e-12)
    low, high = V[0] / mmo[0], V[-1] / mmo[-1]
    assert low < 1.0 and high == pytest.approx(1.0)       # VMO below the crossover, MMO above
    cross = H[np.argmax(vmo >= mmo)]
    assert 7000.0 < cross < 10000.0


BASE = """
title: airspeed forms
aircraft:
  aerodynamics: {{cd0: 0.02, aspect_ratio: 8, cl_max: {{clean: 1.4, takeoff: 1.8, landing: 2.2}}}}
  propulsion: {{type: turbofan-high-bypass, engines: 2}}
  speed_limit: {{cas: 300 kn, mach: 0.82}}
  weights: {{crew: 200 kg, payload: 1000 kg, fuel: {{fraction: 0.2}},
            empty: {{model: components, wing: 40 kg/m^2, propulsion: 0.02 kg/N, other: 0.35}}}}
requirements:
{reqs}
"""


def test_requirement_speeds_as_cas_and_eas_are_the_same_flight():
    # Source: the pitot relation (Anderson §4.12): a cruise requirement at 280 kn CAS at 25 000 ft
    # is the same flight as at the TAS and EAS the relation gives; the three files size alike
    alt = 25000 * FT
    air = isa(alt)
    tas = float(A.cas_to_tas(280 * KN, air))
    eas = float(A.tas_to_eas(tas, air))
    from sizing.problem import solve

    masses = []
    for speed in ("cas: 280 kn", f"speed: {tas:.9f} m/s", f"eas: {eas:.9f} m/s"):
        spec = load_text(BASE.format(reqs=f"  - {{id: cruise, kind: cruise, {speed}, altitude: 25000 ft}}\n"
                                          f"  - {{id: stall, kind: stall-speed, cas: 120 kn, config: landing}}"))
        res = solve(spec)
        masses.append(res.design.takeoff_mass)
        detail = next(r.detail for r in res.requirements if r.id == "cruise")
        kind = speed.split(":")[0]
        assert {"cas": "kn CAS", "speed": "m/s TAS", "eas": "m/s EAS"}[kind] in detail, detail
    assert masses[1] == pytest.approx(masses[0], rel=1e-7) and masses[2] == pytest.approx(masses[0], rel=1e-7)


def test_a_speed_above_vmo_is_a_located_input_error():
    # common practice, no source: a requirement flown above the aircraft's own speed limit
    # contradicts it (VMO 300 kn CAS at 5 000 ft is about M 0.51)
    from sizing.common.errors import InputError

    with pytest.raises(InputError, match="above the speed limit") as e:
        load_text(BASE.format(reqs="  - {id: dash, kind: max-mach, mach: 0.7, altitude: 5000 ft}"), "x.yaml")
    assert e.value.field == "requirements[0] (id dash).mach" and e.value.line == 10
    with pytest.raises(InputError, match="Mach 1") as e:
        load_text(BASE.format(reqs="  - {id: s, kind: stall-speed, cas: 600 kn, altitude: 45000 ft}"), "x.yaml")
    assert e.value.field == "requirements[0] (id s).cas"

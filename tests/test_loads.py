"""Load-factor (V-n) chart: the published limit load factors, design-speed minima, derived gusts,
Pratt's gust formula and the lift-curve slope, and the chart of the sized examples.

Checked against: the regulation texts (14 CFR 23.333, 23.335, 23.337, 23.341 before 2017;
25.335, 25.337; docs/references.md §14), the regulation's own imperial gust formula with its
constant 498, the published limits of the Helmbold-DATCOM lift-curve slope (slender-wing and
thin-airfoil theory), and an independent recomputation with the `ambiance` ICAO atmosphere.
"""
import math

import ambiance
import casadi
import numpy as np
import pytest

from sizing.charts.loads import compute_vn
from sizing.charts.loads_plot import plot_vn, render
from sizing.common.caution import CAUTION, LOADS_CAUTION
from sizing.physics import loads as L

FT, KN, LB, LBF_FT2 = 0.3048, 1852.0 / 3600.0, 0.45359237, 47.880259   # exact definitions
R0 = 6356766.0               # Earth radius of the 1976 standard for H <-> Z
_VN = {}


def vn(solved, name, **kw):
    key = (name, tuple(sorted(kw.items())))
    if key not in _VN:
        spec, res = solved[name]
        _VN[key] = compute_vn(spec, res, **kw)
    return _VN[key]


# --------------------------------------------------------------------------
# The published forms
# --------------------------------------------------------------------------

@pytest.mark.parametrize("category, weight_lb, n", [
    ("normal", 4000.0, 3.8),            # Source: 14 CFR 23.337(a)(1) (docs/references.md check 14.6-a)
    ("normal", 6000.0, 3.6),            # Source: 23.337(a)(1), check 14.6-a
    ("normal", 10000.0, 3.3),           # Source: 23.337(a)(1), check 14.6-a
    ("normal", 12500.0, 3.16667),       # Source: 23.337(a)(1), check 14.6-a
    ("utility", 6000.0, 4.4),           # Source: 23.337(a)(2)
    ("acrobatic", 6000.0, 6.0),         # Source: 23.337(a)(3)
    ("transport", 19000.0, 2.92759),    # Source: 25.337(b), check 14.6-b
    ("transport", 100000.0, 2.5),       # Source: 25.337(b) floor, check 14.6-b
    ("transport", 3000.0, 3.8),         # Source: 25.337(b) "need not exceed 3.8"
])
def test_limit_load_factor(category, weight_lb, n):
    assert float(L.limit_load_factor(category, weight_lb * LB)) == pytest.approx(n, abs=5e-6)


def test_limit_load_factor_on_casadi_symbols():
    # common practice, no source: the form fed to the empty-mass model evaluates alike on a float and a symbol
    m = casadi.SX.sym("m")
    for cat in ("normal", "transport", "utility"):
        f = casadi.Function("f", [m], [L.limit_load_factor(cat, m)])
        for w in (3000.0, 9000.0, 30000.0):
            assert float(f(w)) == pytest.approx(float(L.limit_load_factor(cat, w)), rel=1e-12)


def test_negative_load_factors():
    # Source: 14 CFR 23.337(b) (0.4 and 0.5 of the positive), 23.333(b)(3) (linear from VC to 0 at VD for
    # normal, to -1 for utility and acrobatic), 25.337(c) (-1 to VC, linear to 0 at VD); docs/references.md
    # checks 14.6-a, 14.6-g
    assert L.negative_load_factor("normal", 3.8) == pytest.approx(-1.52)
    assert L.negative_load_factor("utility", 4.4) == pytest.approx(-1.76)
    assert L.negative_load_factor("acrobatic", 6.0) == pytest.approx(-3.0)
    assert L.negative_load_factor("transport", 2.5) == pytest.approx(-1.0)
    V = np.array([50.0, 100.0, 125.0, 150.0])
    assert L.negative_load_factor("normal", 3.8, V, 100.0, 150.0) == pytest.approx([-1.52, -1.52, -0.76, 0.0])
    assert L.negative_load_factor("utility", 4.4, V, 100.0, 150.0) == pytest.approx([-1.76, -1.76, -1.38, -1.0])
    assert L.negative_load_factor("transport", 2.5, V, 100.0, 150.0) == pytest.approx([-1.0, -1.0, -0.5, 0.0])


@pytest.mark.parametrize("category, psf, vc_kn", [
    ("normal", 16.0, 33.0 * 4.0),                         # Source: 23.335(a)(1)(i), W/S <= 20
    ("acrobatic", 16.0, 36.0 * 4.0),                      # Source: 23.335(a)(1)(ii)
    ("normal", 100.0, 28.6 * 10.0),                       # Source: 23.335(a)(2), factor 28.6 at W/S 100
    ("normal", 60.0, (33.0 - 4.4 * 0.5) * math.sqrt(60.0)),   # computed here: halfway, 30.8 sqrt(60)
])
def test_cruise_speed_minimum(category, psf, vc_kn):
    # docs/references.md check 14.6-d
    assert L.cruise_speed_minimum(psf * LBF_FT2, category) / KN == pytest.approx(vc_kn, rel=1e-9)


def test_dive_speed_minimum():
    # Source: 23.335(b)(1)-(3): VD >= 1.25 VC and >= 1.40 / 1.50 / 1.55 VCmin, factors linear to 1.35 at W/S 100;
    # 25.335(b): VC <= 0.8 VD (docs/references.md check 14.6-d)
    vc = 150.0 * KN
    for cat, f in (("normal", 1.40), ("utility", 1.50), ("acrobatic", 1.55)):
        assert L.dive_speed_minimum(vc, vc, 16 * LBF_FT2, cat) == pytest.approx(f * vc, rel=1e-12)
        assert L.dive_speed_minimum(vc, vc, 100 * LBF_FT2, cat) == pytest.approx(1.35 * vc, rel=1e-12)
    assert L.dive_speed_minimum(2.0 * vc, vc, 16 * LBF_FT2, "normal") == pytest.approx(2.5 * vc)   # 1.25 VC binds
    assert L.dive_speed_minimum(vc, None, 5000.0, "transport") == pytest.approx(1.25 * vc)


@pytest.mark.parametrize("speed, fps", [("cruise", (50, 50, 37.5, 25, 25)), ("dive", (25, 25, 18.75, 12.5, 12.5)),
                                        ("rough-air", (66, 66, 52, 38, 38))])
def test_derived_gust_velocities(speed, fps):
    # Source: 14 CFR 23.333(c)(1)(i)-(iii) (docs/references.md §14.4): constant to 20 000 ft, linear to the 50 000 ft value (held above,
    # the rule stops there)
    got = [L.derived_gust_velocity(h * FT, speed) / FT for h in (0, 20000, 35000, 50000, 60000)]
    assert got == pytest.approx(fps, abs=1e-9)


def test_gust_formula_against_the_regulation_text():
    # Source: 14 CFR 23.341(c): n = 1 + Kg Ude V a/(498 (W/S)), Kg = 0.88 mu/(5.3 + mu), mu = 2 (W/S)/(rho C a g),
    # imperial units (Ude ft/s, V kn EAS, W/S lb/ft^2, rho slug/ft^3, C ft, g ft/s^2). The SI form uses
    # rho0 exactly; 498 is rounded (2/(0.0023769 x 1.68781) = 498.5), so they agree to 0.15 %
    # (docs/references.md check 14.6-f).
    g_ft, slug_ft3 = 9.80665 / FT, 515.378818          # docs/references.md §16
    for psf, chord_ft, a, ude, v_kn, alt_ft in ((20.0, 5.0, 5.0, 50.0, 160.0, 0.0), (60.0, 8.0, 5.5, 50.0, 300.0, 10000.0),
                                                (110.0, 12.0, 4.8, 25.0, 420.0, 30000.0)):
        atm = ambiance.Atmosphere(R0 * alt_ft * FT / (R0 - alt_ft * FT))
        rho = float(atm.density[0])
        mu = 2 * psf / (rho / slug_ft3 * chord_ft * a * g_ft)
        Kg = 0.88 * mu / (5.3 + mu)
        dn_rule = Kg * ude * v_kn * a / (498.0 * psf)
        dn_si = float(L.gust_load_increment(psf * LBF_FT2, rho, chord_ft * FT, a, ude * FT, v_kn * KN))
        assert dn_si == pytest.approx(dn_rule, rel=1.5e-3)
        assert L.airplane_mass_ratio(psf * LBF_FT2, rho, chord_ft * FT, a) == pytest.approx(mu, rel=1e-6)


def test_gust_alleviation_limits():
    # Source: 23.341(c) form: Kg -> 0.88 for a heavy wing (mu -> inf), 0 for mu -> 0; Kg(5.3) = 0.44
    assert L.gust_alleviation_factor(1e12) == pytest.approx(0.88, rel=1e-9)
    assert L.gust_alleviation_factor(5.3) == pytest.approx(0.44)
    assert L.gust_alleviation_factor(1e-12) == pytest.approx(0.0, abs=1e-12)


def test_lift_curve_slope_limits():
    # Source: limits of the Helmbold-DATCOM form (Raymer Eq. 12.6): slender-wing theory a = pi A/2 for A -> 0
    # (R. T. Jones, NACA Report 835, 1946) and the section slope 2 pi eta/sqrt(1 - M^2) for A -> inf
    # (Prandtl-Glauert); docs/references.md check 14.6-e
    assert L.lift_curve_slope(1e-4) == pytest.approx(math.pi * 1e-4 / 2, rel=1e-6)
    assert L.lift_curve_slope(1e7, 0.5) == pytest.approx(2 * math.pi * 0.95 / math.sqrt(0.75), rel=1e-5)
    assert L.lift_curve_slope(8.0, 0.6) > L.lift_curve_slope(8.0, 0.0)       # compressibility raises it
    with pytest.raises(ValueError):
        L.lift_curve_slope(8.0, 1.2)


# --------------------------------------------------------------------------
# The chart of the sized examples
# --------------------------------------------------------------------------

def test_trainer_acrobatic_chart(solved):
    # Source: 23.337(a)(3) and (b): acrobatic +6.0 / -3.0; 23.335(c): VA = VS1 sqrt(n) (need not exceed VC);
    # design speeds as given in the file (350 / 440 kn EAS)
    spec, res = solved["trainer-jet.yaml"]
    v = vn(solved, "trainer-jet.yaml")
    d = res.design
    assert (v.category, v.n_positive, v.n_negative) == ("acrobatic", 6.0, -3.0)
    VS1 = math.sqrt(2 * d.wing_loading / (1.225 * 1.2))
    assert v.speeds["stall"] == pytest.approx(VS1, rel=1e-5)
    assert v.speeds["maneuvering"] == pytest.approx(min(VS1 * math.sqrt(6.0), 350 * KN), rel=1e-5)
    assert (v.speeds["cruise"], v.speeds["dive"]) == pytest.approx((350 * KN, 440 * KN))
    # the envelope corners: limit n from VA to VD, -3 at VC, -1 at VD (23.333(b)(3), utility and acrobatic)
    at = {k: np.interp(v.speeds[k], v.V, v.maneuver_hi) for k in ("maneuvering", "cruise", "dive")}
    assert all(val == pytest.approx(6.0, rel=1e-9) for val in at.values())
    assert np.interp(v.speeds["cruise"], v.V, v.maneuver_lo) == pytest.approx(-3.0)
    assert v.maneuver_lo[-1] == pytest.approx(-1.0)
    assert np.all(v.envelope_hi >= v.maneuver_hi - 1e-12) and np.all(v.envelope_lo <= v.maneuver_lo + 1e-12)


@pytest.mark.parametrize("name", ["touring-piston.yaml", "long-range-jet.yaml", "regional-turboprop.yaml",
                                  "trainer-jet.yaml"])
def test_gust_points_recomputed_independently(solved, name):
    # computed here from 23.341(c) with the ambiance ICAO atmosphere, the sized wing (c = sqrt(S/A)) and the
    # slope the chart reports; also the limit load factor (23.337 / 25.337) from the design mass
    spec, res = solved[name]
    v = vn(solved, name)
    d, A = res.design, spec.model.aircraft.aerodynamics.aspect_ratio
    rho = float(ambiance.Atmosphere(0.0).density[0])
    c = math.sqrt(d.wing_area / A)
    assert v.mean_chord == pytest.approx(c, rel=1e-12)
    mu = 2 * d.wing_loading / (rho * c * v.lift_slope * 9.80665)
    Kg = 0.88 * mu / (5.3 + mu)
    for key, ude_fps in (("cruise", 50.0), ("dive", 25.0), ("rough_air", 66.0)):
        if key not in v.gust:
            assert key == "rough_air" and v.category != "transport"
            continue
        V = v.gust[key]["speed"]
        dn = Kg * 1.225 * ude_fps * FT * V * v.lift_slope / (2 * d.wing_loading)
        assert v.gust[key]["positive"] == pytest.approx(1 + dn, rel=2e-5)
        assert v.gust[key]["negative"] == pytest.approx(1 - dn, rel=2e-5, abs=1e-6)
    W = d.takeoff_mass / LB
    if v.category in ("normal", "transport") and v.n_positive_source.startswith("14 CFR"):
        n = 2.1 + 24000 / (W + 10000)
        n = min(max(n, 2.5), 3.8) if v.category == "transport" else min(n, 3.8)
        assert v.n_positive == pytest.approx(n, rel=1e-12)


def test_piston_speeds_follow_the_minimum_and_the_vh_cap(solved):
    # Source: 23.335(a)(1)-(3): VCmin = k sqrt(W/S) with k linear from 33 at W/S 20 to 28.6 at 100, at most
    # 0.9 VH; (b)(2): VD >= 1.40 VCmin (normal, factor linear to 1.35 at W/S 100)
    spec, res = solved["touring-piston.yaml"]
    v = vn(solved, "touring-piston.yaml")
    psf = res.design.wing_loading / LBF_FT2
    k = 33.0 - 4.4 * (psf - 20.0) / 80.0
    vc_min = k * math.sqrt(psf) * KN
    assert v.category == "normal" and "not given" in v.category_source
    assert v.speeds["cruise"] <= vc_min * (1 + 1e-12)
    if v.speeds["cruise"] < vc_min:
        assert any("0.9 VH" in t for t in v.notes)
    f = 1.40 - 0.05 * (psf - 20.0) / 80.0
    assert v.speeds["dive"] == pytest.approx(max(1.25 * v.speeds["cruise"], f * v.speeds["cruise"]), rel=1e-9)


def test_equivalent_airspeeds_do_not_move_with_altitude(solved):
    # common practice, no source: VS1 and VA are equivalent airspeeds, the same at any altitude; true airspeed
    # grows as 1/sqrt(sigma)
    lo, hi = vn(solved, "touring-piston.yaml"), vn(solved, "touring-piston.yaml", altitude=3000.0)
    assert hi.speeds["stall"] == pytest.approx(lo.speeds["stall"], rel=1e-12)
    sigma = float(ambiance.Atmosphere(R0 * 3000.0 / (R0 - 3000.0)).density[0]) / 1.225
    assert hi.tas(hi.speeds["stall"]) == pytest.approx(hi.speeds["stall"] / math.sqrt(sigma), rel=1e-4)


def test_transport_mach_limit_at_altitude(solved):
    # Source: 25.335(a)(3) (VC may be limited to a Mach number where VD is Mach-limited) and 25.335(b)(2)
    # (margin 0.07 M); the jet's speed limit is M 0.88
    v = vn(solved, "long-range-jet.yaml", altitude=40000 * FT)
    atm = ambiance.Atmosphere(R0 * 40000 * FT / (R0 - 40000 * FT))
    eas_per_mach = float(atm.speed_of_sound[0]) * math.sqrt(float(atm.density[0]) / 1.225)
    assert v.speeds["cruise"] == pytest.approx(0.88 * eas_per_mach, rel=1e-4)
    assert v.speeds["dive"] == pytest.approx(0.95 * eas_per_mach, rel=1e-4)


def test_figure_and_frame(solved):
    v = vn(solved, "regional-turboprop.yaml")
    h = plot_vn(v)
    assert h["caution"] is not None and LOADS_CAUTION.split(";")[0] in h["caution"].get_text()
    assert CAUTION.split(":")[0] in h["caution"].get_text()
    with pytest.raises(TypeError, match="valid: gust, title, caution"):
        plot_vn(v, colour="red")
    assert render(v, "png")[:8] == b"\x89PNG\r\n\x1a\n"       # Source: PNG signature, ISO/IEC 15948
    f = v.to_frame()
    assert list(f.columns)[:2] == ["speed_eas_kn", "speed_eas_m_s"] and len(f) == len(v.V)
    d = v.as_dict()
    assert set(d["speeds_eas_m_s"]) >= {"stall", "maneuvering", "cruise", "dive"}
    assert set(d["gust"]) >= {"cruise", "dive"} and set(d["gust"]["cruise"]) >= {"positive", "negative"}
    assert d["loads_caution"] == LOADS_CAUTION and d["caution"] == CAUTION


def test_gust_worked_check():
    # Source: 14 CFR 23.341(c) with the inputs of docs/references.md check 14.6-c (W/S 20 lbf/ft^2, c 5 ft,
    # a 5 /rad, sea level rho 0.0023769 slug/ft^3, g 32.2, VC 150 kt, Ude 50 ft/s): mu 20.905, Kg 0.70202,
    # n 3.6431 in the rule's own units; the SI form (g0 exact, 2/rho0 in place of 498) gives 3.6407
    mu = 2 * 20.0 / (0.0023769 * 5.0 * 5.0 * 32.2)
    Kg = 0.88 * mu / (5.3 + mu)
    assert (round(mu, 3), round(Kg, 5), round(1 + Kg * 50 * 150 * 5 / (498 * 20), 4)) == (20.905, 0.70202, 3.6431)
    n_si = 1 + float(L.gust_load_increment(20 * LBF_FT2, 0.0023769 * 515.378818, 5 * FT, 5.0, 50 * FT, 150 * KN))
    assert n_si == pytest.approx(3.6431, rel=1e-3) and n_si == pytest.approx(3.6407, abs=1e-4)

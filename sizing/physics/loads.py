"""Flight loads in their published, prescriptive forms: limit manoeuvring load factors,
design-speed minima, the gust load factor with Pratt's alleviation factor, derived gust
velocities by altitude, and the wing lift-curve slope.

Structural design loads are defined by the applicable regulation and the authority;
these are the simplified published forms, for conceptual estimates only.

Sources, labels and check values: docs/references.md §14.

Pure SI (speeds are equivalent airspeeds [m/s], wing loading [N/m^2], mass [kg]);
:func:`limit_load_factor` evaluates on floats, arrays and CasADi symbols (it feeds the
empty-mass model when a file asks for it).

References
----------
.. [23] 14 CFR 23.333(b)-(c), 23.335, 23.337, 23.341 (text before Amendment 23-64, 2017;
   1-1-14 edition).
.. [25] 14 CFR 25.335(b), 25.337 (current text); the derived-gust velocities at VB, VC, VD
   of the transport rules before Amendment 25-86 (1996), as tabulated in Kundu,
   *Aircraft Design*, Cambridge University Press, 2010, Table 5.3.
.. [P] Pratt, K. G., "A Revised Formula for the Calculation of Gust Loads", NACA TN 2964,
   1953 (the alleviation factor Kg = 0.88 mu/(5.3 + mu) of 14 CFR 23.341(c)).
.. [R] Raymer, D. P., *Aircraft Design: A Conceptual Approach*, AIAA, Eq. 12.6 (the
   Helmbold-DATCOM lift-curve slope).
"""
from __future__ import annotations

import math

import numpy as np

from ..common.conversions import FT, KN, LB, LBF_FT2
from . import shim as m
from .atmosphere import RHO0, g0

CATEGORIES = ("normal", "utility", "acrobatic", "transport")
PART23_NORMAL_MAX_MASS = 12500.0 * LB      # kg: Part 23 normal category, 14 CFR 23.3(a) (pre-2017)
PART23_COMMUTER_MAX_MASS = 19000.0 * LB    # kg: commuter category, propeller multi-engine, 23.3(d)
AIRFOIL_EFFICIENCY = 0.95                  # eta = cl_alpha/(2 pi), Raymer's typical value for Eq. 12.6
_FIXED = {"utility": 4.4, "acrobatic": 6.0}
_NEGATIVE_RATIO = {"normal": 0.4, "utility": 0.4, "acrobatic": 0.5}


def check_category(category):
    if category not in CATEGORIES:
        raise ValueError(f"unknown category {category!r}; valid: {', '.join(CATEGORIES)}")
    return category


def limit_load_factor(category, m_TO):
    """Minimum positive limit manoeuvring load factor of a category [-].

    normal: n = 2.1 + 24 000/(W + 10 000), W the design maximum takeoff weight [lb],
    at most 3.8 (14 CFR 23.337(a)(1)); utility 4.4, acrobatic 6.0 (23.337(a)(2)-(3));
    transport: the same formula, at least 2.5 and at most 3.8 (14 CFR 25.337(b)).

    Parameters
    ----------
    category : "normal", "utility", "acrobatic" or "transport"
    m_TO : design maximum takeoff mass [kg] (float, array or CasADi symbol)

    Examples
    --------
    Source: 14 CFR 23.337(a)(1) and 25.337(b) (docs/references.md checks 14.6-a, 14.6-b): normal at
    6 000 lb -> 3.6, at 12 500 lb -> 3.16667; transport at 19 000 lb -> 2.92759, at
    100 000 lb -> 2.5 (floor).

    >>> [round(float(limit_load_factor(c, w * LB)), 5) for c, w in
    ...  (("normal", 6000), ("normal", 12500), ("transport", 19000), ("transport", 100000))]
    [3.6, 3.16667, 2.92759, 2.5]
    """
    check_category(category)
    if category in _FIXED:
        return _FIXED[category] + 0.0 * m_TO
    n = 2.1 + 24000.0 / (m_TO / LB + 10000.0)
    return m.clip(n, 2.5, 3.8) if category == "transport" else m.fmin(n, 3.8)


def negative_load_factor(category, n_positive, V=None, V_C=None, V_D=None):
    """Negative limit manoeuvring load factor [-] (negative number).

    Part 23: -0.4 n (normal, utility), -0.5 n (acrobatic) at VC (23.337(b)), varying linearly
    from VC to 0 at VD (normal) or -1 at VD (utility, acrobatic) (23.333(b)(3));
    transport: -1 up to VC, linearly to 0 at VD (25.337(c)). With V, V_C, V_D [m/s EAS]
    given, the value at V; otherwise the value at VC.

    Examples
    --------
    Source: 14 CFR 23.337(b), 23.333(b)(3), 25.337(c): normal 3.8 -> -1.52 at VC; halfway
    between VC 100 and VD 140 m/s: -0.76; acrobatic 6 -> -3 at VC, -2 halfway; transport -1.

    >>> negative_load_factor("normal", 3.8), negative_load_factor("normal", 3.8, 120.0, 100.0, 140.0)
    (-1.52, -0.76)
    >>> negative_load_factor("acrobatic", 6.0, 120.0, 100.0, 140.0), negative_load_factor("transport", 2.5)
    (-2.0, -1.0)
    """
    check_category(category)
    at_c = -1.0 if category == "transport" else -_NEGATIVE_RATIO[category] * n_positive
    if V is None:
        return round(at_c, 12)
    at_d = -1.0 if category in ("utility", "acrobatic") else 0.0
    t = np.clip((np.asarray(V, dtype=float) - V_C) / (V_D - V_C), 0.0, 1.0)
    out = at_c + (at_d - at_c) * t
    return round(float(out), 12) if np.ndim(out) == 0 else out


def _linear_factor(W_S_psf, at_20, at_100):
    """A multiplying factor held to W/S 20 lb/ft^2, then linear in W/S to its value at 100."""
    t = min(max((W_S_psf - 20.0) / 80.0, 0.0), 1.0)
    return at_20 + (at_100 - at_20) * t


def cruise_speed_minimum(W_S, category):
    """Part 23 minimum design cruising speed VC [m/s EAS] from the wing loading (None: transport).

    VC >= k sqrt(W/S) [kn, W/S in lb/ft^2 at the design maximum takeoff weight], k = 33
    (normal, utility) or 36 (acrobatic), decreased linearly with W/S from 20 to 28.6 at
    W/S 100 (14 CFR 23.335(a)(1)-(2)). Part 25 gives no such minimum (25.335(a)).

    Examples
    --------
    Hand calculation (23.335(a)): normal, W/S 16 lb/ft^2 -> 33 x 4 = 132 kn; acrobatic at
    W/S 60 lb/ft^2 -> k = 36 - 7.4 x 0.5 = 32.3, 32.3 sqrt(60) = 250.195 kn.

    >>> round(cruise_speed_minimum(16 * LBF_FT2, "normal") / KN, 3)
    132.0
    >>> round(cruise_speed_minimum(60 * LBF_FT2, "acrobatic") / KN, 3)
    250.195
    """
    check_category(category)
    if category == "transport":
        return None
    psf = W_S / LBF_FT2
    k = _linear_factor(psf, 36.0 if category == "acrobatic" else 33.0, 28.6)
    return k * math.sqrt(psf) * KN


def dive_speed_minimum(V_C, V_C_min, W_S, category):
    """Minimum design dive speed VD [m/s EAS].

    Part 23: VD >= 1.25 VC and VD >= f VCmin, f = 1.40 (normal), 1.50 (utility), 1.55
    (acrobatic), decreased linearly with W/S from 20 to 1.35 at W/S 100 lb/ft^2
    (14 CFR 23.335(b)(1)-(3)); transport: VC <= 0.8 VD, i.e. VD >= 1.25 VC (25.335(b)).

    Examples
    --------
    Hand calculation (23.335(b)): normal, W/S 16 lb/ft^2, VC = VCmin = 132 kn ->
    max(1.25 x 132, 1.40 x 132) = 184.8 kn; transport VC 300 kn -> 375 kn.

    >>> round(dive_speed_minimum(132 * KN, 132 * KN, 16 * LBF_FT2, "normal") / KN, 3)
    184.8
    >>> round(dive_speed_minimum(300 * KN, None, 5000.0, "transport") / KN, 3)
    375.0
    """
    check_category(category)
    if category == "transport" or V_C_min is None:
        return 1.25 * V_C
    f = _linear_factor(W_S / LBF_FT2, {"normal": 1.40, "utility": 1.50, "acrobatic": 1.55}[category], 1.35)
    return max(1.25 * V_C, f * V_C_min)


def gust_alleviation_factor(mu):
    """Pratt's gust alleviation factor Kg = 0.88 mu/(5.3 + mu) [-] (14 CFR 23.341(c)).

    Examples
    --------
    Hand calculation: mu = 20 -> 0.88 x 20/25.3 = 0.695652.

    >>> round(gust_alleviation_factor(20.0), 6)
    0.695652
    """
    return 0.88 * mu / (5.3 + mu)


def airplane_mass_ratio(W_S, rho, chord, lift_slope):
    """Airplane mass ratio mu = 2 (W/S)/(rho c a g) [-] (14 CFR 23.341(c)).

    W_S [N/m^2] at the load case's weight, rho [kg/m^3] at the altitude, chord: mean
    geometric chord [m], lift_slope [1/rad].

    Examples
    --------
    Hand calculation: W/S 2 000 N/m^2, rho 1.225, c 1.5 m, a 5 /rad, g 9.80665 ->
    4000/90.09860 = 44.396.

    >>> round(airplane_mass_ratio(2000.0, 1.225, 1.5, 5.0), 3)
    44.396
    """
    return 2.0 * W_S / (rho * chord * lift_slope * g0)


def gust_load_increment(W_S, rho, chord, lift_slope, U_de, V_eas):
    """Load-factor increment of a derived gust, Delta n = Kg rho0 U_de V a/(2 W/S) [-].

    The SI form of n = 1 +- Kg U_de V a/(498 W/S) of 14 CFR 23.341(c) (U_de [ft/s], V [kn EAS],
    W/S [lb/ft^2]; 498 ~ 2/(rho0 x 1.68781 ft/s per kn) with rho0 in slug/ft^3). U_de, V_eas
    [m/s] (equivalent), rho [kg/m^3] the density at the altitude (in mu only).

    Examples
    --------
    Hand calculation: the case of :func:`airplane_mass_ratio` (mu 44.396, Kg 0.786149),
    U_de 15.24 m/s (50 ft/s), V 100 m/s EAS -> 0.786149 x 1.225 x 15.24 x 100 x 5/4000 = 1.8346.

    >>> round(gust_load_increment(2000.0, 1.225, 1.5, 5.0, 15.24, 100.0), 4)
    1.8346
    """
    Kg = gust_alleviation_factor(airplane_mass_ratio(W_S, rho, chord, lift_slope))
    return Kg * RHO0 * U_de * V_eas * lift_slope / (2.0 * W_S)


# derived gust velocities [ft/s EAS]: (up to 20 000 ft, at 50 000 ft), linear between
_GUSTS = {"rough-air": (66.0, 38.0), "cruise": (50.0, 25.0), "dive": (25.0, 12.5)}


def derived_gust_velocity(altitude, speed):
    """Derived gust velocity U_de [m/s EAS] at a pressure altitude [m] for the speed "rough-air"
    (VB), "cruise" (VC) or "dive" (VD).

    66, 50, 25 ft/s from sea level to 20 000 ft, reduced linearly to 38, 25, 12.5 ft/s at
    50 000 ft (14 CFR 23.333(c)(1); transport rules before Amendment 25-86); held above.

    Examples
    --------
    Source: 14 CFR 23.333(c)(1)(i): 50 ft/s at VC up to 20 000 ft, 37.5 ft/s halfway to
    50 000 ft (35 000 ft), 25 ft/s at 50 000 ft.

    >>> [round(derived_gust_velocity(h * FT, "cruise") / FT, 6) for h in (0, 20000, 35000, 50000)]
    [50.0, 50.0, 37.5, 25.0]
    """
    lo, hi = _GUSTS[speed]
    t = np.clip((np.asarray(altitude, dtype=float) / FT - 20000.0) / 30000.0, 0.0, 1.0)
    out = (lo + (hi - lo) * t) * FT
    return float(out) if np.ndim(out) == 0 else out


def lift_curve_slope(aspect_ratio, mach=0.0, sweep=0.0, eta=AIRFOIL_EFFICIENCY):
    """Wing lift-curve slope by the Helmbold-DATCOM formula [1/rad] (Raymer Eq. 12.6).

    a = 2 pi A / (2 + sqrt(4 + (A beta/eta)^2 (1 + tan^2(sweep)/beta^2))), beta^2 = 1 - M^2,
    eta = cl_alpha/(2 pi) (0.95 typical); exposed-area and fuselage factors taken as 1.
    sweep [rad] of the maximum-thickness line; subsonic only.

    Examples
    --------
    Hand calculation: A 8, M 0, unswept -> 16 pi/(2 + sqrt(4 + 70.9141)) = 4.71742 /rad.

    >>> round(lift_curve_slope(8.0), 5)
    4.71742
    """
    if not (0.0 <= mach < 1.0):
        raise ValueError(f"the Helmbold-DATCOM lift-curve slope is subsonic; got Mach {mach:g}")
    b2 = 1.0 - mach ** 2
    A = aspect_ratio
    return 2.0 * math.pi * A / (2.0 + math.sqrt(4.0 + (A * A * b2 / eta ** 2) * (1.0 + math.tan(sweep) ** 2 / b2)))


def default_category(engine_type, engines, m_TO):
    """(category, reason): the category taken when a file gives none, from the propulsion and
    the takeoff mass: normal up to 12 500 lb (Part 23 normal), or up to 19 000 lb for
    propeller aircraft with two or more engines (the commuter category, same load-factor
    formula); transport above."""
    prop = engine_type in ("piston", "turboprop")
    if m_TO <= PART23_NORMAL_MAX_MASS:
        return "normal", (f"takeoff mass {m_TO:,.0f} kg is within the 5,670 kg (12,500 lb) of the "
                          f"Part 23 normal category")
    if prop and engines >= 2 and m_TO <= PART23_COMMUTER_MAX_MASS:
        return "normal", (f"propeller multi-engine at {m_TO:,.0f} kg, within the 8,618 kg (19,000 lb) "
                          f"of the Part 23 commuter category (normal-category load factors)")
    return "transport", (f"takeoff mass {m_TO:,.0f} kg is above the Part 23 limit "
                         f"({'8,618 kg for propeller multi-engines' if prop and engines >= 2 else '5,670 kg'})")

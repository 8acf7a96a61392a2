"""Installed full-throttle thrust lapse and power lapse per engine family.

alpha = T / T_SL (jets) or P / P_SL (propeller engines) as a function of the
flight condition. :func:`thrust_lapse` gives the correlations as published;
:func:`rated_lapse` (what the sizing model flies) divides them by their value at
sea-level static, standard day, so that T_SL is the thrust at the engine's own
top rating (dry without afterburner). The jet correlations are Mattingly's, written in the
dimensionless total (stagnation) conditions

    theta0 = (T/T_std) (1 + (gamma-1)/2 M^2)
    delta0 = (p/p_std) (1 + (gamma-1)/2 M^2)^(gamma/(gamma-1))

and the throttle ratio TR (theta0 at the engine's control break). The branch
at theta0 = TR uses ``if_else``, so the lapse is CasADi-safe with Mach a free
variable; both branches agree at the break.

References
----------
.. [1] Mattingly, J. D., Heiser, W. H., Pratt, D. T., *Aircraft Engine
   Design*, 2nd ed., AIAA Education Series, 2002, §2.3.2, Eqs. 2.52-2.56.
.. [2] Gagg, R. F., Ferrar, E. V., "Effect of altitude on engine
   performance", 1934 (as used by Gudmundsson, *General Aviation Aircraft
   Design*, 2014, Ch. 7).
.. [3] Anderson, J. D., *Aircraft Performance and Design*, McGraw-Hill,
   1999, Eq. 3.36 (turboprop power, P/P_0 = (rho/rho_0)^0.7).
"""
from __future__ import annotations

from . import shim as m
from .atmosphere import GAMMA, isa

ENGINE_TYPES = ("turbojet", "turbofan-low-bypass", "turbofan-high-bypass", "turboprop", "piston")
PROPELLER_TYPES = ("turboprop", "piston")


def inlet_conditions(theta, delta, M):
    """Dimensionless total temperature and pressure (Mattingly Eq. 2.52).

    Returns
    -------
    (theta0, delta0) [-]

    Examples
    --------
    Source: Mattingly AAF example (docs/references.md check 4.7-g): supercruise M1.5 at
    30 kft, theta 0.7940, delta 0.2975 -> theta0 1.1513, delta0 1.0921.

    >>> t0, d0 = inlet_conditions(0.7940, 0.2975, 1.5)
    >>> round(float(t0), 4), round(float(d0), 4)
    (1.1513, 1.0921)
    """
    ram = 1.0 + 0.5 * (GAMMA - 1.0) * M ** 2
    return theta * ram, delta * m.power(ram, GAMMA / (GAMMA - 1.0))


def lapse_high_bypass(theta0, delta0, M, TR):
    """High-bypass turbofan, maximum power (Mattingly Eq. 2.53), M < 0.9.

    alpha = delta0 (1 - 0.49 sqrt(M))                         theta0 <= TR
    alpha = delta0 (1 - 0.49 sqrt(M) - 3 (theta0 - TR)/(1.5 + M))  otherwise
    """
    base = 1.0 - 0.49 * m.sqrt(M)
    return delta0 * m.if_else(theta0 <= TR, base, base - 3.0 * (theta0 - TR) / (1.5 + M))


def lapse_low_bypass(theta0, delta0, M, TR, afterburner=False):
    """Low-bypass mixed-flow turbofan (Mattingly Eqs. 2.54a maximum, 2.54b military).

    maximum:  alpha = delta0 [1 - 3.5 (theta0 - TR)/theta0 if theta0 > TR]
    military: alpha = 0.6 delta0 [1 - 3.8 (theta0 - TR)/theta0 if theta0 > TR]

    Examples
    --------
    Source: Mattingly AAF warm-up (docs/references.md check 4.7-a): military power,
    theta0 1.0796, delta0 0.9298, M 0, TR 1.07 -> alpha = 0.5390.

    >>> round(float(lapse_low_bypass(1.0796, 0.9298, 0.0, 1.07)), 4)
    0.539
    """
    scale, c = (1.0, 3.5) if afterburner else (0.6, 3.8)
    return scale * delta0 * m.if_else(theta0 <= TR, 1.0 + 0.0 * theta0, 1.0 - c * (theta0 - TR) / theta0)


def lapse_turbojet(theta0, delta0, M, TR, afterburner=False):
    """Turbojet (Mattingly Eqs. 2.55a maximum, 2.55b military).

    maximum:  delta0 [1 - 0.3 (theta0 - 1) - 0.1 sqrt(M) - 1.5 (theta0 - TR)/theta0 if theta0 > TR]
    military: 0.8 delta0 [1 - 0.16 sqrt(M) - 24 (theta0 - TR)/((9 + M) theta0) if theta0 > TR]
    """
    if afterburner:
        base = 1.0 - 0.3 * (theta0 - 1.0) - 0.1 * m.sqrt(M)
        return delta0 * m.if_else(theta0 <= TR, base, base - 1.5 * (theta0 - TR) / theta0)
    base = 1.0 - 0.16 * m.sqrt(M)
    return 0.8 * delta0 * m.if_else(theta0 <= TR, base, base - 24.0 * (theta0 - TR) / ((9.0 + M) * theta0))


def thrust_lapse_turboprop(theta0, delta0, M, TR):
    """Turboprop installed *thrust* lapse (Mattingly Eq. 2.56), for reference.

    alpha = delta0                                      M <= 0.1
    alpha = delta0 [1 - 0.96 (M - 0.1)^(1/4)]           theta0 <= TR
    alpha = delta0 [1 - 0.96 (M - 0.1)^(1/4) - 3 (theta0 - TR)/(8.13 (M - 0.1))]

    Notes
    -----
    This is T/T_SL of engine plus propeller; the sizing model of propeller
    aircraft works in power (T = eta_p P / V) and uses
    :func:`power_lapse_turboprop` instead. The hot-day term is singular at
    M = 0.1, so it is applied only above M = 0.1.
    """
    dM = m.fmax(M - 0.1, 1e-9)
    base = 1.0 - 0.96 * m.power(dM, 0.25)
    hot = base - 3.0 * (theta0 - TR) / (8.13 * dM)
    return delta0 * m.if_else(M <= 0.1, 1.0 + 0.0 * M, m.if_else(theta0 <= TR, base, hot))


def power_lapse_piston(sigma):
    """Normally aspirated piston engine (Gagg and Ferrar).

    P/P_SL = sigma - (1 - sigma)/7.55

    Examples
    --------
    Source: Gagg and Ferrar as used by Gudmundsson Ch. 7 (docs/references.md §4.5, check 4.7-e), geopotential
    10 000 ft, sigma = 0.73848 -> 0.70384.

    >>> round(float(power_lapse_piston(0.73848)), 5)
    0.70384
    """
    return sigma - (1.0 - sigma) / 7.55


def power_lapse_turboprop(sigma):
    """Turboprop shaft power lapse, P/P_SL = sigma^0.7 (Anderson Eq. 3.36).

    Notes
    -----
    Anderson correlates a typical turboprop's power available with density
    ratio, exponent n = 0.7, and takes it as independent of Mach.
    """
    return m.power(sigma, 0.7)


def thrust_lapse(engine_type, altitude_m, mach, temperature_offset_K=0.0,
                 throttle_ratio=1.0, afterburner=False):
    """Full-throttle lapse of the installed engine at a flight condition.

    Parameters
    ----------
    engine_type : str
        One of ``turbojet``, ``turbofan-low-bypass``, ``turbofan-high-bypass``
        (thrust lapse T/T_SL) or ``turboprop``, ``piston`` (power lapse
        P/P_SL).
    altitude_m : float, array or symbol
        Pressure altitude [m].
    mach : float, array or symbol
        Flight Mach number [-].
    temperature_offset_K : float
        ISA temperature offset [K].
    throttle_ratio : float
        TR = theta0 at the control break [-] (jets only).
    afterburner : bool
        Maximum (afterburning) rating instead of military (turbojet and
        low-bypass turbofan only).

    Returns
    -------
    alpha [-]

    Examples
    --------
    Source: Mattingly Eqs. 2.53-2.55 (docs/references.md §4.3, check 4.7-d; the other lapse checks are by geometric
    altitude); hand calculation here by geopotential altitude: sea-level
    static is 1 for every jet family.

    >>> float(thrust_lapse("turbofan-high-bypass", 0.0, 0.0))
    1.0
    """
    air = isa(altitude_m, temperature_offset_K)
    if engine_type == "piston":
        return power_lapse_piston(air.sigma) + 0.0 * mach
    if engine_type == "turboprop":
        return power_lapse_turboprop(air.sigma) + 0.0 * mach
    theta0, delta0 = inlet_conditions(air.theta, air.delta, mach)
    if engine_type == "turbofan-high-bypass":
        return lapse_high_bypass(theta0, delta0, mach, throttle_ratio)
    if engine_type == "turbofan-low-bypass":
        return lapse_low_bypass(theta0, delta0, mach, throttle_ratio, afterburner)
    if engine_type == "turbojet":
        return lapse_turbojet(theta0, delta0, mach, throttle_ratio, afterburner)
    raise ValueError(f"unknown engine type {engine_type!r}; valid: {', '.join(ENGINE_TYPES)}")


def rated_lapse(engine_type, altitude_m, mach, temperature_offset_K=0.0,
                throttle_ratio=1.0, afterburner=False):
    """Full-throttle lapse referenced to the engine's own top rating: 1 at sea-level static, standard day.

    alpha = alpha_published(h, M, dT) / alpha_published(0, 0, 0), both from
    :func:`thrust_lapse` at the same rating. The sizing model flies every requirement with
    this lapse, so its T_SL (P_SL) is the installed sea-level static thrust (power), standard
    day, at the rating the engine flies at: dry (military) for a turbojet or low-bypass
    turbofan without afterburner, maximum (wet) with one, takeoff for a high-bypass turbofan,
    takeoff shaft power for a propeller engine. Mattingly's military correlations
    (Eqs. 2.54b, 2.55b) are published against the maximum (wet) sea-level static thrust
    (0.6 and 0.8 of it at sea-level static); dividing by that value refers them to the dry
    thrust. Every other family already gives 1 there (for TR >= 1). "Dry" is Mattingly's
    "military" rating: the highest rating without afterburning.

    Examples
    --------
    Source: Mattingly Eq. 2.54b: military low-bypass at sea-level static, TR 1.05 -> 0.6 published,
    1 referenced to the dry rating; the hot-day warm-up of check 4.7-a (0.5390 published) is
    0.5390 / 0.6 = 0.8984 of the dry thrust.

    >>> round(float(thrust_lapse("turbofan-low-bypass", 0.0, 0.0, 0.0, 1.05)), 6)
    0.6
    >>> float(rated_lapse("turbofan-low-bypass", 0.0, 0.0, 0.0, 1.05))
    1.0
    """
    ref = thrust_lapse(engine_type, 0.0, 0.0, 0.0, throttle_ratio, afterburner)
    return thrust_lapse(engine_type, altitude_m, mach, temperature_offset_K, throttle_ratio, afterburner) / ref


def dry_to_rated(engine_type, throttle_ratio=1.0, afterburner=False):
    """Dry (military) over rated sea-level static thrust, standard day [-].

    1 without afterburner (the rated thrust is the dry one); with afterburner the published
    military over maximum lapse at sea-level static: 0.6 for a low-bypass turbofan
    (Mattingly Eq. 2.54b over 2.54a) and 0.8 for a turbojet (Eq. 2.55b over 2.55a) when TR >= 1.

    >>> round(float(dry_to_rated("turbojet", 1.0, True)), 6)
    0.8
    """
    if not afterburner or engine_type not in ("turbojet", "turbofan-low-bypass"):
        return 1.0
    return (thrust_lapse(engine_type, 0.0, 0.0, 0.0, throttle_ratio, False)
            / thrust_lapse(engine_type, 0.0, 0.0, 0.0, throttle_ratio, True))


def rating_name(engine_type, afterburner=False) -> str:
    """The rating the sizing thrust (power) is quoted at, in words.

    >>> rating_name("turbofan-low-bypass")
    'dry rating'
    """
    if is_propeller(engine_type):
        return "takeoff rating"
    if engine_type == "turbofan-high-bypass":
        return "takeoff rating"
    return "maximum (wet) rating" if afterburner else "dry rating"


def reference_label(propeller, rating) -> str:
    """What the design's T_SL (P_SL) is, in words, for every output's label.

    >>> reference_label(False, "dry rating")
    'sea-level static thrust, dry rating, installed, standard day'
    """
    what = "sea-level static shaft power" if propeller else "sea-level static thrust"
    return f"{what}, {rating or 'top rating'}, installed, standard day"


def axis_label(propeller, rating) -> str:
    """Short name of the diagram's y quantity.

    >>> axis_label(False, "dry rating")
    'T_SL/W_TO, dry rating'
    """
    return f"{'P_SL/W_TO' if propeller else 'T_SL/W_TO'}, {rating or 'top rating'}"


def is_propeller(engine_type) -> bool:
    """True for engine families sized by power (turboprop, piston)."""
    return engine_type in PROPELLER_TYPES


# --------------------------------------------------------------------------
# Propellers: ideal momentum theory (actuator disk)
# --------------------------------------------------------------------------

def propeller_static_thrust(power, density, disk_area):
    """Ideal static thrust of an actuator disk, T = (2 rho A P^2)^(1/3) [N].

    Parameters
    ----------
    power : shaft power absorbed by the disk [W]
    density : air density [kg/m^3]
    disk_area : disk area [m^2] (pi D^2 / 4 per propeller, summed)

    Notes
    -----
    Rankine-Froude momentum theory: no profile, swirl or tip losses, so a
    real propeller gives less (its static figure of merit, typically 0.7 to
    0.85). It is the ceiling no propeller of that diameter can exceed.

    Examples
    --------
    Source: momentum theory (docs/references.md check 15.4-b): P = 150 kW,
    D = 1.9 m, sea level -> 5 386.6 N.

    >>> import math
    >>> round(float(propeller_static_thrust(150e3, 1.225, math.pi * 1.9 ** 2 / 4)), 1)
    5386.6

    References
    ----------
    McCormick, B. W., *Aerodynamics, Aeronautics and Flight Mechanics*, 2nd ed.,
    Wiley, 1995, Ch. 6 (momentum theory of propellers; from memory for the
    section number).
    """
    return m.power(2.0 * density * disk_area * power ** 2, 1.0 / 3.0)


def actuator_disk_power(thrust, speed, density, disk_area):
    """Ideal power for a thrust at a flight speed, P = (T/2) (V + sqrt(V^2 + 2 T/(rho A))) [W].

    From T = 2 rho A v (V + v) (induced velocity v at the disk) and P = T (V + v).
    At V = 0 it is the inverse of :func:`propeller_static_thrust`.

    Examples
    --------
    Hand calculation: the static case above, T = 5 386.6 N -> P = 150 kW.

    >>> import math
    >>> round(float(actuator_disk_power(5386.6, 0.0, 1.225, math.pi * 1.9 ** 2 / 4)) / 1e3, 2)
    150.0
    """
    return 0.5 * thrust * (speed + m.sqrt(speed ** 2 + 2.0 * thrust / (density * disk_area)))


def actuator_disk_thrust(power, speed, density, disk_area, iterations=60):
    """Ideal thrust of an actuator disk absorbing a power at a flight speed [N] (numpy).

    The root T of :func:`actuator_disk_power` (T, V) = P, found by bisection
    between 0 and min(static thrust, P/V) (the ideal efficiency T V/P cannot
    exceed 1).

    Examples
    --------
    Hand calculation: round trip at 40 m/s.

    >>> import math
    >>> A = math.pi * 1.9 ** 2 / 4
    >>> T = actuator_disk_thrust(150e3, 40.0, 1.225, A)
    >>> round(float(actuator_disk_power(T, 40.0, 1.225, A)) / 1e3, 6)
    150.0
    """
    import numpy as np

    P, V = np.asarray(power, dtype=float), np.asarray(speed, dtype=float)
    hi = np.asarray(propeller_static_thrust(P, density, disk_area), dtype=float)
    with np.errstate(divide="ignore"):
        hi = np.minimum(hi, np.where(V > 0, P / np.where(V > 0, V, 1.0), np.inf))
    lo = np.zeros_like(hi)
    for _ in range(iterations):
        mid = 0.5 * (lo + hi)
        low = actuator_disk_power(mid, V, density, disk_area) < P
        lo, hi = np.where(low, mid, lo), np.where(low, hi, mid)
    return 0.5 * (lo + hi)

"""Airspeeds: true (TAS), equivalent (EAS) and calibrated (CAS), and Mach number.

Requirements documents state speeds the way the cockpit shows them:
calibrated airspeed (what a perfect pitot-static system reads, the standard
sea-level day built into its scale), equivalent airspeed (the same dynamic
pressure at sea-level density) or Mach number. The physics of this package
works in true airspeed; these functions convert.

Calibrated airspeed goes through the impact pressure q_c = p_t - p of the
isentropic (Saint-Venant) pitot relation for subsonic flow, gamma = 1.4:

    q_c = p0 [(1 + 0.2 (V_c/a0)^2)^3.5 - 1]          (CAS -> impact pressure)
    M   = sqrt(5 [(q_c/p + 1)^(2/7) - 1])             (impact pressure -> Mach)
    V   = M a                                          (Mach -> TAS)

with p0, a0 the standard sea-level pressure and speed of sound and p, a the
static pressure and speed of sound of the flight condition. Equivalent
airspeed: V = V_e / sqrt(sigma), sigma = rho/rho0.

Above Mach 1 a normal shock stands ahead of the pitot probe and the impact
pressure follows Rayleigh's supersonic pitot formula instead; it is not
modelled here. Numeric conversions that would give a Mach number above 1
raise ``ValueError`` (``strict=True``); the speed-limit helpers use
``strict=False`` and are capped at Mach 1 by their callers. Every function
evaluates on floats, numpy arrays and CasADi symbols (no check on symbols).

References
----------
.. [1] Anderson, J. D., *Introduction to Flight*, McGraw-Hill, §4.12
   (measurement of airspeed: subsonic compressible flow, Eq. 4.79 form).
.. [2] U.S. Standard Atmosphere, 1976 (p0, rho0, a0; see
   :mod:`sizing.physics.atmosphere`).
"""
from __future__ import annotations

import numpy as np

from . import shim as m
from .atmosphere import A0, GAMMA, P0, RHO0

_EXP = GAMMA / (GAMMA - 1.0)        # 3.5
_HALF = 0.5 * (GAMMA - 1.0)         # 0.2


def _check_subsonic(M, strict):
    if strict and not m.is_symbolic(M):
        Mn = np.asarray(M, dtype=float)
        bad = ~(Mn <= 1.0)
        if np.any(bad & np.isfinite(Mn)):
            raise ValueError(f"this airspeed means Mach {float(Mn[bad].flat[0]):.3f} here; the subsonic "
                             f"pitot relation holds up to Mach 1 (above it a normal shock stands ahead "
                             f"of the probe, not modelled): give the speed as mach or as true airspeed")


def impact_pressure(mach, pressure):
    """Impact pressure q_c = p_t - p of subsonic isentropic flow [Pa].

    q_c = p [(1 + 0.2 M^2)^3.5 - 1]

    Parameters
    ----------
    mach : Mach number [-] (0 to 1)
    pressure : static pressure [Pa]

    Examples
    --------
    Hand calculation: M 0.5 at sea level, (1.05)^3.5 - 1 = 0.186212 ->
    q_c = 18 868.0 Pa (the incompressible q is 17 731.9 Pa).

    >>> round(float(impact_pressure(0.5, 101325.0)), 1)
    18868.0
    """
    return pressure * (m.power(1.0 + _HALF * mach ** 2, _EXP) - 1.0)


def mach_from_impact_pressure(qc, pressure):
    """Mach number from impact pressure and static pressure (subsonic) [-].

    M = sqrt(5 [(q_c/p + 1)^(2/7) - 1])
    """
    return m.sqrt((m.power(qc / pressure + 1.0, 1.0 / _EXP) - 1.0) / _HALF)


def cas_to_mach(cas, air, strict=True):
    """Mach number of a calibrated airspeed at a flight condition [-].

    Parameters
    ----------
    cas : calibrated airspeed [m/s]
    air : :class:`~sizing.physics.atmosphere.Atmosphere` of the condition
    strict : raise ``ValueError`` for numeric results above Mach 1

    Examples
    --------
    Hand calculation: at sea level on a standard day CAS = TAS, so
    100 m/s is Mach 100/a0 = 100/340.2941 = 0.293863.

    >>> from sizing.physics.atmosphere import isa
    >>> round(float(cas_to_mach(100.0, isa(0.0))), 6)
    0.293863
    """
    qc = impact_pressure(cas / A0, P0)
    M = mach_from_impact_pressure(qc, air.pressure)
    _check_subsonic(M, strict)
    return M


def cas_to_tas(cas, air, strict=True):
    """True airspeed of a calibrated airspeed at a flight condition [m/s].

    V = a sqrt(5 [((p0/p) ((1 + 0.2 (V_c/a0)^2)^3.5 - 1) + 1)^(2/7) - 1])

    Parameters
    ----------
    cas : calibrated airspeed [m/s]
    air : :class:`~sizing.physics.atmosphere.Atmosphere` (pressure altitude and
        temperature offset of the condition)
    strict : raise ``ValueError`` for numeric results above Mach 1

    Examples
    --------
    Hand calculation (computed here from the relation above, 1976 standard
    atmosphere): 250 kn CAS at 10 000 ft pressure altitude, standard day ->
    288.7 kn TAS (an independent implementation gives 288.70 kn; see
    tests/test_airspeed.py).

    >>> from sizing.physics.atmosphere import isa
    >>> kn = 1852.0 / 3600.0
    >>> round(float(cas_to_tas(250 * kn, isa(3048.0))) / kn, 1)
    288.7
    """
    return cas_to_mach(cas, air, strict) * air.speed_of_sound


def tas_to_cas(tas, air, strict=True):
    """Calibrated airspeed of a true airspeed at a flight condition [m/s].

    V_c = a0 sqrt(5 [((p/p0) ((1 + 0.2 M^2)^3.5 - 1) + 1)^(2/7) - 1]),  M = V/a

    Examples
    --------
    Hand calculation: the inverse of the :func:`cas_to_tas` example.

    >>> from sizing.physics.atmosphere import isa
    >>> air = isa(3048.0)
    >>> round(float(tas_to_cas(cas_to_tas(128.6, air), air)), 9)
    128.6
    """
    M = tas / air.speed_of_sound
    _check_subsonic(M, strict)
    qc = impact_pressure(M, air.pressure)
    return A0 * mach_from_impact_pressure(qc, P0)


def eas_to_tas(eas, air):
    """True airspeed of an equivalent airspeed, V = V_e / sqrt(sigma) [m/s].

    Examples
    --------
    Hand calculation: sigma = 0.738483 at 10 000 ft pressure altitude, so
    250 kn EAS is 250/sqrt(0.738483) = 290.92 kn TAS.

    >>> from sizing.physics.atmosphere import isa
    >>> round(float(eas_to_tas(250.0, isa(3048.0))), 2)
    290.92
    """
    return eas * m.sqrt(RHO0 / air.density)


def tas_to_eas(tas, air):
    """Equivalent airspeed of a true airspeed, V_e = V sqrt(sigma) [m/s]."""
    return tas * m.sqrt(air.density / RHO0)


KINDS = {"speed": "TAS", "cas": "CAS", "eas": "EAS"}
"""Field name of a speed in a requirement file -> the label outputs print beside it."""


def true_airspeed(kind, value, air, strict=True):
    """True airspeed [m/s] of a speed given as ``speed`` (TAS), ``cas``, ``eas`` or ``mach``."""
    if kind == "mach":
        return value * air.speed_of_sound
    if kind == "cas":
        return cas_to_tas(value, air, strict)
    if kind == "eas":
        return eas_to_tas(value, air)
    if kind == "speed":
        return value + 0.0 * air.speed_of_sound
    raise ValueError(f"unknown airspeed kind {kind!r}; valid: speed (true), cas, eas, mach")


def as_kind(kind, tas, air, strict=False):
    """A true airspeed [m/s] expressed as ``speed`` (TAS), ``cas``, ``eas`` or ``mach``."""
    if kind == "mach":
        return tas / air.speed_of_sound
    if kind == "cas":
        return tas_to_cas(tas, air, strict)
    if kind == "eas":
        return tas_to_eas(tas, air)
    return tas

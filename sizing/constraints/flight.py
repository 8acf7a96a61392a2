"""The flight condition and the master equation: what every thrust kind is built on.

:func:`master_equation` is Mattingly's Eq. 2.11; :func:`flight_thrust` turns
the thrust needed at a flight condition into the diagram's axis (sea-level
T_SL/W_TO for jets, P_SL/W_TO [W/N] for propeller aircraft through
T = eta_p P / V). Pure SI; floats, arrays and CasADi symbols alike.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA,
   2002, §2.2, Eq. 2.11 and its special cases (Eqs. 2.12-2.20).
.. [G] Gudmundsson, S., *General Aviation Aircraft Design: Applied Methods
   and Procedures*, Elsevier, 2014, §3.2, Eqs. 3-1 to 3-7.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..physics import airspeed
from ..physics import shim as m
from ..physics.atmosphere import g0, isa
from ..physics.propulsion import actuator_disk_power, is_propeller, rated_lapse

FT_PER_MIN = 0.3048 / 60.0
SERVICE_CEILING_CLIMB_RATE = 100.0 * FT_PER_MIN   # 0.508 m/s, docs/references.md §10


@dataclass(frozen=True)
class Bound:
    """What one requirement asks of the design at a wing loading.

    thrust : required T_SL/W_TO [-] (P_SL/W_TO [W/N] for propeller aircraft), or None
    wing_loading : upper limit on W_TO/S [N/m^2], or None
    margin_of : for kinds whose required thrust has no closed form (field lengths over an
        obstacle, balanced field): a function of the design's T_SL/W_TO (P_SL/W_TO) giving the
        fractional margin 1 - needed/allowed (>= 0 when met), on numbers and CasADi symbols
        alike; ``thrust`` then holds its numeric root (None on symbols). See :func:`by_margin`.
    """

    thrust: object = None
    wing_loading: object = None
    margin_of: object = None


def by_margin(margin_of, W_S, guess=1.0, top=1.0e4):
    """Bound of a requirement given by its margin, a function of the design's T_SL/W_TO (P_SL/W_TO).

    ``margin_of(Y)`` must rise with Y (more thrust, shorter distance). On numbers the
    required Y is its root, found by doubling from ``guess`` and bisection (60 halvings:
    machine precision); ``inf`` where no Y up to ``top`` meets it. On CasADi symbols only
    ``margin_of`` is returned and the optimizer uses it as the constraint row.
    """
    if m.is_symbolic(W_S):
        return Bound(margin_of=margin_of)
    shape = np.shape(np.asarray(margin_of(guess) + 0.0 * np.asarray(W_S, dtype=float)))
    with np.errstate(all="ignore"):
        hi = np.full(shape, float(guess))
        for _ in range(60):
            short = ~(np.asarray(margin_of(hi)) >= 0.0)
            if not np.any(short & (hi < top)):
                break
            hi = np.where(short & (hi < top), 2.0 * hi, hi)
        ok = np.asarray(margin_of(hi)) >= 0.0
        lo = np.zeros(shape)
        for _ in range(60):
            mid = 0.5 * (lo + hi)
            good = np.asarray(margin_of(mid)) >= 0.0
            lo, hi = np.where(good, lo, mid), np.where(good, mid, hi)
    Y = np.where(ok, hi, np.inf)
    return Bound(thrust=Y if Y.ndim else float(Y), margin_of=margin_of)



def master_equation(W_S, q, V, beta, alpha, CD0, k1, k2=0.0, n=1.0, Ps=0.0):
    """Sea-level thrust-to-weight from the master equation (Mattingly Eq. 2.11).

    T_SL/W_TO = (beta/alpha) [ (q/(beta W/S)) (k1 CL^2 + k2 CL + CD0) + Ps/V ],
    CL = n beta (W/S) / q.

    Parameters
    ----------
    W_S : wing loading W_TO/S [N/m^2]
    q : dynamic pressure [Pa]
    V : true airspeed [m/s]
    beta : weight fraction W/W_TO [-]
    alpha : thrust lapse T/T_SL [-]
    CD0, k1, k2 : polar coefficients [-]
    n : load factor [-]
    Ps : specific excess power [m/s]

    Examples
    --------
    Source: docs/references.md check 5.4-b (Mattingly Eq. 2.11, self-defined inputs):
    turn n = 5 at M0.9, geometric 30 kft, W/S 64 lbf/ft^2, beta 0.78,
    K1 0.18, CD0 0.016, q = 357.022 lbf/ft^2, alpha = delta0 = 0.50324
    -> T_SL/W_TO = 1.15261 (units cancel, so lbf/ft^2 may be used).

    >>> round(float(master_equation(64.0, 357.022, 1.0, 0.78, 0.50324, 0.016, 0.18, n=5.0)), 4)
    1.1526
    """
    CL = n * beta * W_S / q
    return (beta / alpha) * ((q / (beta * W_S)) * (k1 * CL ** 2 + k2 * CL + CD0) + Ps / V)


# --------------------------------------------------------------------------
# Flight condition helpers
# --------------------------------------------------------------------------

def condition(req):
    """Atmosphere of a requirement's altitude and temperature offset."""
    return isa(req.altitude, req.temperature_offset)


SPEED_KEYS = ("mach", "speed", "cas", "eas")


def speed_key(req):
    """Which of ``mach``, ``speed`` (true), ``cas``, ``eas`` a requirement gives (or None)."""
    return next((k for k in SPEED_KEYS if getattr(req, k, None) is not None), None)


def fixed_speed(req, air):
    """True airspeed [m/s] of a requirement given by ``mach``, ``speed`` (TAS), ``cas`` or ``eas``
    (:mod:`sizing.physics.airspeed`)."""
    key = speed_key(req)
    if key is None:
        return None
    # the file's values are checked subsonic on input; relaxations and studies may go further
    return airspeed.true_airspeed(key, getattr(req, key), air, strict=False)


def speed_limit(ac, air):
    """True airspeed [m/s] of the aircraft's speed limit at a condition, or None when none is given.

    The lowest of ``mach`` (MMO), ``cas`` (VMO, through the pitot relation, at most Mach 1 there)
    and ``speed`` (a true airspeed): VMO governs low, MMO high.
    """
    a = air.speed_of_sound
    tops = []
    if getattr(ac, "speed_limit_mach", None) is not None:
        tops.append(ac.speed_limit_mach * a)
    if getattr(ac, "speed_limit_cas", None) is not None:
        tops.append(m.fmin(airspeed.cas_to_tas(ac.speed_limit_cas, air, strict=False), a))
    if getattr(ac, "speed_limit_speed", None) is not None:
        tops.append(ac.speed_limit_speed + 0.0 * a)
    if not tops:
        return None
    V = tops[0]
    for t in tops[1:]:
        V = m.fmin(V, t)
    return V


def engines_running(req, ac):
    """Share of the installed engines that run, (N - N_out)/N [-], and the inoperative count."""
    out = getattr(req, "engines_out", None)
    out = 0.0 if out is None else out
    return (ac.engines - out) / ac.engines, out


def engine_out_drag(req, ac):
    """Zero-lift drag added by inoperative engines: N_out x engine_out_drag_increment [-]."""
    _, out = engines_running(req, ac)
    return out * getattr(ac, "engine_out_drag_increment", 0.0)


def lapse(req, ac, V, air, throttle=1.0):
    """Available fraction of the rated sea-level static thrust (jets) or power (props) at V.

    The one lapse of the model: :func:`sizing.physics.propulsion.rated_lapse`, 1 at sea-level
    static, standard day, at the engine's top rating (dry without afterburner), or the
    requirement's ``thrust_lapse`` when given (a fraction of that same thrust or power)."""
    alpha = getattr(req, "thrust_lapse", None)
    if alpha is None:
        M = V / air.speed_of_sound
        alpha = rated_lapse(ac.engine_type, req.altitude, M, req.temperature_offset,
                            ac.throttle_ratio, ac.afterburner)
    return alpha * throttle


def propeller_efficiency(ac, field=False):
    """eta_p of a flight condition: ``takeoff_propeller_efficiency`` in field kinds when given,
    else the cruise ``propeller_efficiency``."""
    eta_to = getattr(ac, "takeoff_propeller_efficiency", None)
    return eta_to if field and eta_to is not None else ac.propeller_efficiency


def disk_area(ac, running=1.0):
    """Total propeller disk area of the running engines, running N pi D^2/4 [m^2] (None: no diameter)."""
    D = getattr(ac, "propeller_diameter", None)
    if D is None:
        return None
    return running * ac.engines * math.pi * D ** 2 / 4.0


def to_sea_level(t, V, alpha, ac, running=1.0, air=None, field=False):
    """Turn the thrust needed at a condition (T/W_TO) into the diagram's axis.

    jets: T_SL/W_TO = t / (alpha r);  props: P_SL/W_TO = P/(alpha r W_TO) [W/N] with
    P = t W_TO V / eta_p, r the share of engines running. In field kinds (``field=True``)
    eta_p is the takeoff efficiency when given, and with a propeller diameter the power is at
    least the ideal actuator-disk power of the running propellers,
    P >= (T/2)(V + sqrt(V^2 + 2 T/(rho A))), T = t W_TO (momentum theory,
    :func:`sizing.physics.propulsion.actuator_disk_power`); this needs ``ac.takeoff_mass``. The
    two bounds are blended by :func:`~sizing.physics.shim.smooth_max` (at most 1 % above the
    larger where they cross), so the optimizer meets no corner.
    """
    if is_propeller(ac.engine_type):
        P = t * V / propeller_efficiency(ac, field)
        A = disk_area(ac, running) if field else None
        if A is not None:
            W = ac.takeoff_mass * g0
            P = m.smooth_max(P, actuator_disk_power(t * W, V, air.density, A) / W)
        return P / (alpha * running)
    return t / (alpha * running)


def thrust_available(Y, V, alpha, ac, running=1.0, air=None, field=False):
    """Thrust per takeoff weight T/W_TO [-] of a design with T_SL/W_TO (or P_SL/W_TO) = Y at V:
    the inverse of :func:`to_sea_level` (props: eta_p P/V, at most the actuator-disk thrust
    P/u with u = V + v the velocity through the disk, from the cubic u^3 - V u^2 = P/(2 rho A),
    solved in closed form)."""
    if not is_propeller(ac.engine_type):
        return Y * alpha * running
    P = Y * alpha * running                        # power per W_TO of the running engines [m/s]
    eta = propeller_efficiency(ac, field)
    A = disk_area(ac, running) if field else None
    if A is None:
        return eta * P / V
    W = ac.takeoff_mass * g0
    c = P * W / (2.0 * air.density * A)            # u^3 - V u^2 - c = 0, one real root u > V
    h = V ** 3 / 27.0 + 0.5 * c                    # Cardano: u = V/3 + cbrt(h + s) + cbrt(h - s)
    s = m.sqrt(c ** 2 / 4.0 + c * V ** 3 / 27.0)
    small = (V ** 6 / 729.0) / (h + s)             # h - s without cancellation
    u = V / 3.0 + m.power(h + s, 1.0 / 3.0) + m.power(small, 1.0 / 3.0)
    return P / m.smooth_max(V / eta, u)


def flight_thrust(W_S, V, req, ac, air, n=1.0, Ps=0.0, config="clean", throttle=1.0):
    """Required T_SL/W_TO (or P_SL/W_TO) to fly at V with load factor n and Ps.

    With ``req.engines_out`` > 0 the running engines alone supply it and the drag of the
    inoperative ones is added (:func:`engine_out_drag`).
    """
    q = 0.5 * air.density * V ** 2
    M = V / air.speed_of_sound
    polar = ac.polar
    running, _ = engines_running(req, ac)
    t = master_equation(W_S, q, V, req.beta, 1.0, polar.CD0(M, config) + engine_out_drag(req, ac),
                        polar.K1(M), polar.k2, n, Ps)
    return to_sea_level(t, V, lapse(req, ac, V, air, throttle), ac, running)


def lift_limit(V, req, ac, air, n=1.0, config="clean"):
    """W_TO/S at which CL = CLmax when pulling n at V: q CLmax / (n beta) [N/m^2]."""
    q = 0.5 * air.density * V ** 2
    return q * ac.polar.CLmax(config) / (n * req.beta)


def config_of(req, default="clean"):
    return getattr(req, "config", None) or default

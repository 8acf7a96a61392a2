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

from dataclasses import dataclass

from ..physics.atmosphere import isa
from ..physics.propulsion import is_propeller, thrust_lapse

FT_PER_MIN = 0.3048 / 60.0
SERVICE_CEILING_CLIMB_RATE = 100.0 * FT_PER_MIN   # 0.508 m/s, docs/references.md §10


@dataclass(frozen=True)
class Bound:
    """What one requirement asks of the design at a wing loading.

    thrust : required T_SL/W_TO [-] (P_SL/W_TO [W/N] for propeller aircraft), or None
    wing_loading : upper limit on W_TO/S [N/m^2], or None
    """

    thrust: object = None
    wing_loading: object = None



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


def fixed_speed(req, air):
    """True airspeed [m/s] of a requirement given by ``mach`` or ``speed``."""
    if getattr(req, "mach", None) is not None:
        return req.mach * air.speed_of_sound
    return req.speed


def lapse(req, ac, V, air, throttle=1.0):
    """Available fraction of sea-level thrust (jets) or power (props) at V."""
    alpha = getattr(req, "thrust_lapse", None)
    if alpha is None:
        M = V / air.speed_of_sound
        alpha = thrust_lapse(ac.engine_type, req.altitude, M, req.temperature_offset,
                             ac.throttle_ratio, ac.afterburner)
    return alpha * throttle


def to_sea_level(t, V, alpha, ac):
    """Turn the thrust needed at a condition (T/W_TO) into the diagram's axis.

    jets: T_SL/W_TO = t / alpha;  props: P_SL/W_TO = t V / (eta_p alpha) [W/N].
    """
    if is_propeller(ac.engine_type):
        return t * V / (ac.propeller_efficiency * alpha)
    return t / alpha


def flight_thrust(W_S, V, req, ac, air, n=1.0, Ps=0.0, config="clean", throttle=1.0):
    """Required T_SL/W_TO (or P_SL/W_TO) to fly at V with load factor n and Ps."""
    q = 0.5 * air.density * V ** 2
    M = V / air.speed_of_sound
    polar = ac.polar
    t = master_equation(W_S, q, V, req.beta, 1.0, polar.CD0(M, config), polar.K1(M),
                        polar.k2, n, Ps)
    return to_sea_level(t, V, lapse(req, ac, V, air, throttle), ac)


def lift_limit(V, req, ac, air, n=1.0, config="clean"):
    """W_TO/S at which CL = CLmax when pulling n at V: q CLmax / (n beta) [N/m^2]."""
    q = 0.5 * air.density * V ** 2
    return q * ac.polar.CLmax(config) / (n * req.beta)


def config_of(req, default="clean"):
    return getattr(req, "config", None) or default

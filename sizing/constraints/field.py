"""Field kinds: takeoff ground run and landing ground roll.

References
----------
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eq. 3-4 (takeoff ground run).
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, §2.2 (landing).
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, Ch. 17 (field performance).
"""
from __future__ import annotations

import numpy as np

from ..physics import shim as m
from ..physics.atmosphere import g0
from .flight import Bound, condition, config_of, lapse, to_sea_level


def takeoff_ground_roll_thrust(W_S, rho, V_LOF, S_G, CD_TO, CL_TO, mu):
    """Thrust-to-weight for a takeoff ground run (Gudmundsson Eq. 3-4).

    T/W = V_LOF^2/(2 g S_G) + q CD_TO/(W/S) + mu (1 - q CL_TO/(W/S)),
    q evaluated at V_LOF/sqrt(2).

    Parameters
    ----------
    W_S : wing loading at takeoff [N/m^2]
    rho : air density [kg/m^3]
    V_LOF : liftoff speed [m/s]
    S_G : ground run [m]
    CD_TO, CL_TO : drag and lift coefficients during the run [-]
    mu : rolling friction coefficient [-]

    Examples
    --------
    Source: docs/references.md check 6.8-e (Gudmundsson Eq. 3-4 form): sea level,
    V_LOF 30 m/s, S_G 300 m, CD_TO 0.04, CL_TO 0.6, mu 0.04, W/S 1 500
    N/m^2 -> T/W = 0.19590.

    >>> round(float(takeoff_ground_roll_thrust(1500.0, 1.225, 30.0, 300.0, 0.04, 0.6, 0.04)), 5)
    0.1959
    """
    q = 0.5 * rho * V_LOF ** 2 / 2.0
    return V_LOF ** 2 / (2.0 * g0 * S_G) + q * CD_TO / W_S + mu * (1.0 - q * CL_TO / W_S)


def landing_wing_loading(S_G, rho, CLmax, mu_brake, beta=1.0, k_TD=1.15, t_free=0.0):
    """Highest W_TO/S that stops within a landing ground roll [N/m^2].

    Ground roll with free-roll time t_FR at touchdown speed V_TD, then
    constant braking deceleration mu_B g (aerodynamic drag and reverse thrust
    neglected, conservative):  S_G = t_FR V_TD + V_TD^2 / (2 g mu_B), and
    V_TD = k_TD V_stall, so

        W_TO/S = rho CLmax V_TD^2 / (2 k_TD^2 beta).

    Notes
    -----
    k_TD = 1.15 and the constant-deceleration braking roll follow Mattingly
    §2.2.9 (landing, Eq. 2.22 family, from memory) and Raymer Ch. 17.

    Examples
    --------
    Hand calculation: S_G 500 m, sea level, CLmax 2.0, mu_B 0.3, beta 1,
    no free roll: V_TD^2 = 2 g mu S = 2941.995, W/S = 1.225*2*2941.995 /
    (2*1.3225) = 2725.10 N/m^2.

    >>> round(float(landing_wing_loading(500.0, 1.225, 2.0, 0.3)), 2)
    2725.1
    """
    a = 1.0 / (2.0 * g0 * mu_brake)
    # a V^2 + t V - S = 0 (t may be zero)
    V_TD = (-t_free + m.sqrt(t_free ** 2 + 4.0 * a * S_G)) / (2.0 * a)
    return rho * CLmax * V_TD ** 2 / (2.0 * k_TD ** 2 * beta)


def takeoff(W_S, V, req, ac):
    """Ground run with V_LOF = k V_stall,TO (Gudmundsson Eq. 3-4; props at V_LOF/sqrt(2)).

    The run is flown at weight fraction beta: the equation is written per
    unit of the takeoff weight beta W_TO and multiplied by beta/alpha, with
    alpha (and for props the thrust T = eta_p P/V) taken at V_LOF/sqrt(2).
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    W_S_run = req.beta * W_S
    V_LOF = req.liftoff_speed_ratio * m.sqrt(2.0 * W_S_run / (air.density * polar.CLmax(cfg)))
    V_avg = V_LOF / np.sqrt(2.0)
    M_avg = V_avg / air.speed_of_sound
    CL = req.ground_lift_coefficient
    CD = polar.CD(CL, M_avg, cfg)
    t = req.beta * takeoff_ground_roll_thrust(W_S_run, air.density, V_LOF, req.ground_roll,
                                              CD, CL, req.rolling_friction)
    alpha = lapse(req, ac, V_avg, air)
    return Bound(thrust=to_sea_level(t, V_avg, alpha, ac))


def landing(W_S, V, req, ac):
    """W_TO/S upper limit from the braking ground roll (see :func:`landing_wing_loading`)."""
    air = condition(req)
    cfg = config_of(req, "landing")
    return Bound(wing_loading=landing_wing_loading(
        req.ground_roll, air.density, ac.polar.CLmax(cfg), req.braking_friction,
        req.beta, req.touchdown_speed_ratio, req.free_roll_time))

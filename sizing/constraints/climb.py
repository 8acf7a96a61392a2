"""Climb kinds: service ceiling, rate of climb, climb gradient with engines out.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, Eq. 2.11.
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eqs. 3-3 and 3-6.
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, Ch. 5 (climb gradient, engines out).
.. [CFR] 14 CFR 25.121 (climb gradients with one engine inoperative).
"""
from __future__ import annotations

from ..physics import shim as m
from .flight import Bound, condition, config_of, fixed_speed, flight_thrust, lapse, lift_limit, to_sea_level


def engine_out_climb_thrust(gradient, lift_to_drag, engines, engines_out=1):
    """Thrust-to-weight to climb at a gradient with engines out (Raymer Ch. 5).

    T/W = (N/(N - N_out)) (G + 1/(L/D))

    Examples
    --------
    Source: docs/references.md check 8.5-b (14 CFR 25.121(b) second segment, twin,
    G = 2.4 %, L/D = 10) -> T/W = 0.248.

    >>> round(engine_out_climb_thrust(0.024, 10.0, 2), 6)
    0.248
    """
    return engines / (engines - engines_out) * (gradient + 1.0 / lift_to_drag)


def ceiling(W_S, V, req, ac):
    """Ps = climb rate (100 ft/min default) at the best speed V (free) (Mattingly Eq. 2.11; Gudmundsson Eq. 3-6)."""
    air = condition(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=config_of(req)))


def climb(W_S, V, req, ac):
    """Ps = climb rate at a given speed, or at the best speed (Gudmundsson Eq. 3-3)."""
    air = condition(req)
    cfg = config_of(req)
    if V is None:
        V = fixed_speed(req, air)
        return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=cfg),
                     wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=cfg))


def climb_gradient(W_S, V, req, ac):
    """Steady climb gradient with engines out at k V_stall (Raymer Ch. 5; 14 CFR 25.121).

    T_SL/W_TO = (N/(N - N_out)) (beta/alpha) (G + CD/CL), CL = CLmax/k^2.
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    CL = polar.CLmax(cfg) / req.speed_ratio ** 2
    V = req.speed_ratio * m.sqrt(2.0 * req.beta * W_S / (air.density * polar.CLmax(cfg)))
    M = V / air.speed_of_sound
    LD = CL / polar.CD(CL, M, cfg)
    t = req.beta * engine_out_climb_thrust(req.gradient, LD, ac.engines, req.engines_out)
    alpha = lapse(req, ac, V, air)
    return Bound(thrust=to_sea_level(t, V, alpha, ac))

"""Speed and stall kinds: stall speed, maximum Mach (level flight at full throttle), cruise.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, Eq. 2.11.
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eqs. 3-5 and 3-7.
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §5.3 (stall wing loading).
"""
from __future__ import annotations

from .flight import Bound, condition, config_of, fixed_speed, flight_thrust, lift_limit


def stall_speed(W_S, V, req, ac):
    """W_TO/S <= rho V_s^2 CLmax / (2 beta) (lift equation; Raymer §5.3, Gudmundsson Eq. 3-7)."""
    air = condition(req)
    Vs = fixed_speed(req, air)
    return Bound(wing_loading=lift_limit(Vs, req, ac, air, 1.0, config_of(req)))


def max_mach(W_S, V, req, ac):
    """Level flight at full throttle, Ps = 0 (Mattingly Eq. 2.11, cruise case)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))


def cruise(W_S, V, req, ac):
    """Level flight at partial throttle (Mattingly Eq. 2.11 cruise case; Gudmundsson Eq. 3-5)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg, throttle=req.throttle),
                 wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))

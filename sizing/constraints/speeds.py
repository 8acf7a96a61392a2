"""Speed and stall kinds: stall speed, approach speed, maximum Mach (level flight at full throttle),
cruise; and the buffet-onset limit of cruise and maximum-speed conditions.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, Eq. 2.11.
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eqs. 3-5 and 3-7.
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §5.3 (stall wing loading) and §17.9
   (approach speed 1.3 V_stall for civil aircraft).
.. [CFR] 14 CFR 25.125(b)(2)(i) (V_REF not less than 1.23 V_SR0).
"""
from __future__ import annotations

from ..physics import shim as m
from ..physics.aero import coefficient
from .flight import Bound, condition, config_of, fixed_speed, flight_thrust, lift_limit


def buffet_limit(V, req, ac, air):
    """W_TO/S at which CL x buffet margin reaches CL_buffet(M): q CL_buffet / (n_b beta) [N/m^2],
    or None when the aircraft gives no ``cl_buffet``."""
    if getattr(ac, "cl_buffet", None) is None:
        return None
    q = 0.5 * air.density * V ** 2
    return q * coefficient(ac.cl_buffet, V / air.speed_of_sound) / (ac.buffet_margin * req.beta)


def _with_buffet(limit, V, req, ac, air):
    b = buffet_limit(V, req, ac, air)
    return limit if b is None else m.fmin(limit, b)


def approach_speed(W_S, V, req, ac):
    """W_TO/S <= rho (V_app/k)^2 CLmax,L / (2 beta): approach at k V_stall of the landing
    configuration within the given speed (lift equation; k = 1.3, Raymer §17.9)."""
    air = condition(req)
    Vs = fixed_speed(req, air) / req.factor
    return Bound(wing_loading=lift_limit(Vs, req, ac, air, 1.0, config_of(req, "landing")))


def stall_speed(W_S, V, req, ac):
    """W_TO/S <= rho V_s^2 CLmax / (2 beta) (lift equation; Raymer §5.3, Gudmundsson Eq. 3-7)."""
    air = condition(req)
    Vs = fixed_speed(req, air)
    return Bound(wing_loading=lift_limit(Vs, req, ac, air, 1.0, config_of(req)))


def max_mach(W_S, V, req, ac):
    """Level flight at full throttle, Ps = 0 (Mattingly Eq. 2.11, cruise case); W/S within CLmax and buffet."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg),
                 wing_loading=_with_buffet(lift_limit(V, req, ac, air, 1.0, cfg), V, req, ac, air))


def cruise(W_S, V, req, ac):
    """Level flight at partial throttle (Mattingly Eq. 2.11 cruise case; Gudmundsson Eq. 3-5); W/S within CLmax
    and buffet (CL x ``buffet_margin`` <= ``cl_buffet``)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg, throttle=req.throttle),
                 wing_loading=_with_buffet(lift_limit(V, req, ac, air, 1.0, cfg), V, req, ac, air))

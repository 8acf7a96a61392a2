"""Turn and excess-power kinds: sustained turn, instantaneous turn, specific excess power.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, Eq. 2.11.
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eqs. 3-1 and 3-2.
"""
from __future__ import annotations

from .flight import Bound, condition, config_of, fixed_speed, flight_thrust, lift_limit


def sustained_turn(W_S, V, req, ac):
    """Master equation with n, Ps = 0 (Mattingly Eq. 2.11, constant-speed turn case)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, n=req.load_factor, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, req.load_factor, cfg))


def excess_power(W_S, V, req, ac):
    """Ps requirement at load factor n and a given speed (Mattingly Eq. 2.11; Gudmundsson Eq. 3-2)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, n=req.load_factor,
                                      Ps=req.excess_power, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, req.load_factor, cfg))


def instantaneous_turn(W_S, V, req, ac):
    """W_TO/S <= q CLmax / (n beta) (lift limit at the turn's speed; Raymer §5.3)."""
    air = condition(req)
    V = fixed_speed(req, air)
    return Bound(wing_loading=lift_limit(V, req, ac, air, req.load_factor, config_of(req)))

"""Climb kinds: service ceiling, rate of climb, climb gradient (engines out, certification segments).

Every climb kind accepts ``engines_out``: the running engines supply the thrust (power) and
the inoperative ones add ``aerodynamics.engine_out_drag_increment`` each (windmilling or
feathered propeller, rudder and aileron to trim).

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, Eq. 2.11.
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eqs. 3-3 and 3-6.
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, Ch. 5 (climb gradient, engines out).
.. [CFR] 14 CFR 25.111(c)(3), 25.119, 25.121 (takeoff path, landing climb, climb with one engine
   inoperative); 25.107(b), (g) and 25.125(b)(2)(i) for the speeds V2, V_FTO and V_REF.
"""
from __future__ import annotations

from ..physics import shim as m
from .flight import (
    Bound,
    condition,
    config_of,
    engine_out_drag,
    engines_running,
    fixed_speed,
    flight_thrust,
    lapse,
    lift_limit,
    to_sea_level,
)

# Transport-category climb segments (14 CFR Part 25): the minimum steady gradient by engine
# count (2, 3, 4), engines inoperative, configuration, landing gear, speed over the
# configuration's stall speed, and the paragraph. Speeds: V_LOF taken as the takeoff kinds'
# liftoff speed 1.1 V_SR; V2 at its minimum 1.13 V_SR (25.107(b)(1)); V_FTO at its minimum
# 1.18 V_SR (25.107(g)); approach at 1.4 V_SR, the most 25.121(d) allows; V_REF = 1.23 V_SR0
# (25.125(b)(2)(i)). Approach flaps are represented by the takeoff configuration; maximum
# continuous and go-around thrust by full (takeoff) thrust.
CLIMB_SEGMENTS = {
    "first": dict(paragraph="14 CFR 25.121(a)", what="first segment: one engine out, gear down, takeoff "
                  "flaps, at V_LOF", gradient={2: 0.0, 3: 0.003, 4: 0.005}, engines_out=1.0,
                  config="takeoff", gear="down", speed_ratio=1.1, field=True),
    "second": dict(paragraph="14 CFR 25.121(b)", what="second segment: one engine out, gear up, takeoff "
                   "flaps, at V2", gradient={2: 0.024, 3: 0.027, 4: 0.030}, engines_out=1.0,
                   config="takeoff", gear="up", speed_ratio=1.13, field=True),
    "final": dict(paragraph="14 CFR 25.121(c), 25.111(c)(3)", what="final takeoff: one engine out, "
                  "en-route configuration, at V_FTO", gradient={2: 0.012, 3: 0.015, 4: 0.017},
                  engines_out=1.0, config="clean", gear="up", speed_ratio=1.18, field=False),
    "approach": dict(paragraph="14 CFR 25.121(d)", what="approach climb: one engine out, gear up, "
                     "approach flaps, at 1.4 V_SR", gradient={2: 0.021, 3: 0.024, 4: 0.027},
                     engines_out=1.0, config="takeoff", gear="up", speed_ratio=1.4, field=False,
                     landing_weight=True),
    "landing": dict(paragraph="14 CFR 25.119", what="landing climb: all engines, landing configuration, "
                    "gear down, at V_REF", gradient={2: 0.032, 3: 0.032, 4: 0.032}, engines_out=0.0,
                    config="landing", gear="down", speed_ratio=1.23, field=False, landing_weight=True),
}
SEGMENT_KEYS = ("gradient", "engines_out", "config", "gear", "speed_ratio")


def segment_defaults(segment, engines):
    """The keys a climb ``segment`` fills for an aircraft with ``engines`` engines (a dict).

    Raises ValueError outside the table (the one-engine-out segments are written for 2, 3 and 4
    engines; the landing climb for any count).

    Examples
    --------
    Source: 14 CFR 25.121(b) (docs/references.md check 8.5-a): second segment, twin -> 2.4 %.

    >>> segment_defaults("second", 2)["gradient"]
    0.024
    """
    seg = CLIMB_SEGMENTS[segment]
    n = int(round(engines))
    if segment == "landing":
        n = min(max(n, 2), 4)
    if n not in seg["gradient"]:
        raise ValueError(f"the {segment} segment ({seg['paragraph']}) is written for 2, 3 or 4 engines, "
                         f"not {n}")
    return {"gradient": seg["gradient"][n], "engines_out": seg["engines_out"], "config": seg["config"],
            "gear": seg["gear"], "speed_ratio": seg["speed_ratio"]}


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
    """Ps = climb rate (100 ft/min default) at the best speed V (free) (Mattingly Eq. 2.11; Gudmundsson Eq. 3-6),
    with ``engines_out`` engines inoperative."""
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
    """Steady climb gradient with engines out at k V_stall (Raymer Ch. 5; 14 CFR 25.111, 25.119, 25.121).

    T_SL/W_TO = (N/(N - N_out)) (beta/alpha) (G + CD/CL), CL = CLmax/k^2, CD with the drag of
    the inoperative engines and, gear down, ``gear_drag_increment``. A ``segment`` fills the
    gradient, engines out, configuration, gear and k from :data:`CLIMB_SEGMENTS`; the first and
    second segments are flown with the takeoff propeller efficiency (field kinds).
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    CL = polar.CLmax(cfg) / req.speed_ratio ** 2
    V = req.speed_ratio * m.sqrt(2.0 * req.beta * W_S / (air.density * polar.CLmax(cfg)))
    M = V / air.speed_of_sound
    gear = getattr(ac, "gear_drag_increment", 0.0) if getattr(req, "gear", None) == "down" else 0.0
    CD = polar.CD(CL, M, cfg) + engine_out_drag(req, ac) + gear
    running, _ = engines_running(req, ac)
    t = req.beta * (req.gradient + CD / CL)
    alpha = lapse(req, ac, V, air)
    segment = getattr(req, "segment", None)
    field = segment is not None and CLIMB_SEGMENTS[segment]["field"]
    return Bound(thrust=to_sea_level(t, V, alpha, ac, running, air, field))

"""Constraints: one function per requirement kind, and the registry of kinds.

Lives here: ``flight`` (flight condition, master equation), one module per
family of kinds (``speeds``: stall, max Mach, cruise; ``turns``: sustained and
instantaneous turns, excess power; ``climb``: ceiling, climb, climb gradient;
``field``: takeoff and landing) and ``registry`` (``KINDS``, the curves).
May import: ``sizing.physics`` and ``sizing.common`` only.

Each kind function takes the design wing loading ``W_S`` = W_TO/S [N/m^2],
a flight speed ``V`` [m/s] (the free speed, for kinds that have one, else
``None``), the requirement ``req`` and the aircraft ``ac``, and returns a
:class:`Bound`: the required sea-level thrust-to-weight T_SL/W_TO [-] (for
propeller aircraft the required sea-level power-to-weight P_SL/W_TO [W/N]),
and/or an upper limit on W_TO/S [N/m^2].

The same function evaluates on numpy arrays (the constraint diagram) and on
CasADi symbols (the optimizer), so what the reviewer sees is what the
optimizer used. Requirement and aircraft values are SI and may themselves be
CasADi parameters.

Thrust kinds are built on the master equation (Mattingly Eq. 2.11):

    T_SL/W_TO = (beta/alpha) [ (q/(beta W/S)) (k1 (n beta W/S / q)^2
                + k2 (n beta W/S / q) + CD0) + Ps/V ]

with beta = W/W_TO, alpha the thrust lapse (referenced to the engine's top
rating, 1 at sea-level static standard day: ``flight.lapse``), q = rho V^2 / 2, Ps the
specific excess power [m/s]. For propeller aircraft the thrust needed at V
becomes sea-level power through T = eta_p P / V (Gudmundsson §3.2):

    P_SL/W_TO = (V / (eta_p alpha_P)) (T/W_TO needed at the condition).

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA,
   2002, §2.2, Eq. 2.11 and its special cases (Eqs. 2.12-2.20).
.. [G] Gudmundsson, S., *General Aviation Aircraft Design: Applied Methods
   and Procedures*, Elsevier, 2014, §3.2, Eqs. 3-1 to 3-7.
.. [R] Raymer, D. P., *Aircraft Design: A Conceptual Approach*, AIAA, Ch. 5
   (climb gradient with engines out, landing) and Ch. 17.
.. [CFR] 14 CFR 25.121 (climb gradients with one engine inoperative).
"""
from __future__ import annotations

from .climb import (
    CLIMB_SEGMENTS,
    SEGMENT_KEYS,
    ceiling,
    climb,
    climb_gradient,
    engine_out_climb_thrust,
    segment_defaults,
)
from .field import (
    average_takeoff_thrust,
    balanced_field_length,
    balanced_field_of,
    ground_roll_distance,
    landing,
    landing_air_distance,
    landing_distance_of,
    landing_distance_wing_loading,
    landing_wing_loading,
    takeoff,
    takeoff_distance_of,
    takeoff_ground_roll_thrust,
    transition_climb_distance,
)
from .flight import (
    FT_PER_MIN,
    SERVICE_CEILING_CLIMB_RATE,
    SPEED_KEYS,
    Bound,
    by_margin,
    condition,
    config_of,
    engines_running,
    fixed_speed,
    flight_thrust,
    lapse,
    lift_limit,
    master_equation,
    propeller_efficiency,
    speed_key,
    speed_limit,
    thrust_available,
    to_sea_level,
)
from .registry import (
    DEFAULT_MIN_SPEED_FACTOR,
    KINDS,
    Kind,
    buffet_speed_range,
    evaluate,
    free_speed_range,
    max_free_speed,
    min_free_speed,
    required_curve,
    speed_floors,
)
from .speeds import approach_speed, buffet_limit, cruise, max_mach, stall_speed
from .turns import excess_power, instantaneous_turn, sustained_turn

__all__ = ["CLIMB_SEGMENTS", "DEFAULT_MIN_SPEED_FACTOR", "FT_PER_MIN", "SEGMENT_KEYS", "SERVICE_CEILING_CLIMB_RATE",
           "SPEED_KEYS", "Bound", "KINDS", "Kind", "approach_speed", "average_takeoff_thrust",
           "balanced_field_length", "balanced_field_of", "buffet_limit", "buffet_speed_range", "by_margin", "ceiling", "climb",
           "climb_gradient", "condition", "config_of", "cruise", "engine_out_climb_thrust", "engines_running",
           "evaluate", "excess_power", "fixed_speed", "flight_thrust", "free_speed_range", "ground_roll_distance",
           "instantaneous_turn", "landing", "landing_air_distance", "landing_distance_of", "landing_distance_wing_loading",
           "landing_wing_loading", "lapse", "lift_limit", "master_equation", "max_free_speed", "max_mach",
           "min_free_speed", "propeller_efficiency", "required_curve", "segment_defaults", "speed_floors",
           "speed_key", "speed_limit", "stall_speed", "sustained_turn", "takeoff", "takeoff_distance_of",
           "takeoff_ground_roll_thrust", "thrust_available", "to_sea_level", "transition_climb_distance"]

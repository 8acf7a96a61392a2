"""Numbers a reviewer asks for beside the design point: span, thrust (power) per engine, the
empty mass by component, and the lift coefficient and L/D where the design cruises.

Computed from a feasible :class:`Result` with the file's own models (the drag polar of
``problem.tree.aircraft``, the empty-mass model of :mod:`sizing.weights.empty`, the mission's
weight fractions of :mod:`sizing.weights.mission`); nothing here is fitted or assumed.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

from .. import weights as Wt
from ..physics.airspeed import true_airspeed
from ..physics.atmosphere import isa
from ..physics.propulsion import reference_label
from ..weights.empty import required_load_factors, wing_load_factor_scale
from . import tree as M


@dataclass(frozen=True)
class CruisePoint:
    name: str                 # "outbound cruise (mission)" or "cruise-150 (requirement)"
    altitude: float           # [m]
    mach: float               # [-]
    speed: float              # true airspeed [m/s]
    weight_fraction: float    # W/W_TO at the point [-]
    CL: float                 # lift coefficient [-]
    CD: float                 # drag coefficient [-]

    @property
    def lift_to_drag(self) -> float:
        return self.CL / self.CD


@dataclass(frozen=True)
class DesignFacts:
    span: float                     # [m]
    aspect_ratio: float             # [-]
    engines: int
    thrust_per_engine: float | None  # sea-level static, top rating [N] (jets)
    power_per_engine: float | None   # sea-level static shaft power, takeoff rating [W] (propeller aircraft)
    empty_breakdown: tuple          # (component, mass [kg], how it is computed)
    cruise: tuple                   # CruisePoint each


def _cruise_point(name, r, ac, W_S, beta):
    air = isa(r.get("altitude", 0.0), r.get("temperature_offset", 0.0))
    key = next((k for k in ("mach", "speed", "cas", "eas") if r.get(k) is not None), None)
    if key is None:
        return None
    V = float(true_airspeed(key, r[key], air))
    q = 0.5 * float(air.density) * V ** 2
    Mach = V / float(air.speed_of_sound)
    CL = beta * W_S / q
    return CruisePoint(name, float(r.get("altitude", 0.0)), Mach, V, beta, CL, float(ac.polar.CD(CL, Mach)))


def design_facts(spec, result) -> DesignFacts | None:
    """The :class:`DesignFacts` of a feasible result (None when there is no design)."""
    if result is None or not result.feasible:
        return None
    d = result.design
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree, d.takeoff_mass)
    a = tree["aircraft"]
    AR = float(a["aerodynamics"].get("aspect_ratio", math.nan))
    n = int(round(a["propulsion"].get("engines", 1)))
    e = a["weights"]["empty"]
    if e["model"] == "components":
        scale = float(wing_load_factor_scale(e, a, d.takeoff_mass, required_load_factors(tree)))
        per = "kW" if result.propeller else "kN"
        engine = d.power if result.propeller else d.thrust
        parts = [("wing", scale * e["wing"] * d.wing_area,
                  f"{e['wing']:g} kg/m² x {d.wing_area:,.2f} m²" + (f" x load-factor scale {scale:.3f}"
                                                                       if abs(scale - 1) > 1e-12 else "")),
                 ("propulsion", e["propulsion"] * engine,
                  f"{e['propulsion'] * 1000:g} kg/{per} x {engine / 1000:,.1f} {per} "
                  f"({reference_label(result.propeller, d.rating)})"),
                 ("other (systems, fuselage, equipment)", e["other"] * d.takeoff_mass,
                  f"{e['other']:g} x takeoff mass")]
    else:
        parts = [("empty (the model gives the total only)", d.empty_mass,
                  "fixed fraction" if e["model"] == "fraction" else "statistical regression")]
    cruise = []
    if Wt.has_mission_fuel(tree):
        beta = 1.0
        for i, (seg, (label, f, _be)) in enumerate(zip(tree["mission"]["segments"],
                                                        Wt.mission_fractions(tree, ac, d.wing_loading))):
            if seg["kind"] == "cruise":
                pt = _cruise_point(f"{label} (mission, start)", seg, ac, d.wing_loading, float(beta))
                if pt is not None:
                    cruise.append(pt)
            beta = beta * float(f)
    for r in result.requirements:
        if r.kind == "cruise":
            pt = _cruise_point(f"{r.id} (requirement)", tree["requirements"][r.id], ac, d.wing_loading, r.beta)
            if pt is not None:
                cruise.append(pt)
    return DesignFacts(span=math.sqrt(AR * d.wing_area), aspect_ratio=AR, engines=n,
                       thrust_per_engine=None if result.propeller else d.thrust / n,
                       power_per_engine=d.power / n if result.propeller else None,
                       empty_breakdown=tuple(parts), cruise=tuple(cruise))

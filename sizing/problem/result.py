"""Result types of a sizing solve (frozen): the design, each requirement's outcome, the infeasibility.

Low in the layers so reports and charts need no solver. ``Result.diagram()``
imports :mod:`sizing.charts` lazily (a convenience method; listed in the
layering test).
"""
from __future__ import annotations

from dataclasses import dataclass, field

NONLINEAR_REL = 0.10      # a step's linear estimate off by more than this fraction: "non-linear"


@dataclass(frozen=True)
class Capability:
    """A requirement's margin in its own quantity: what the design can do (``value``) against
    what the file asks (``required``), both in the unit the file wrote (``unit``: ft, Mach, kn,
    g, m, ft/min, %; ``airspeed`` TAS, CAS or EAS for speeds).

    ``harder`` is +1 where a larger value is harder (a ceiling, a load factor) and -1 for limits
    (a stall speed limit, a field length allowed): the margin is value - required for the first
    and required - value for the second, positive when the requirement is met with room to spare.
    ``basis`` names the fractional margin beside it (``T/W``, ``P/W`` or ``W/S``).
    """

    value: float | None           # the design's capability [unit]; None where none was found
    required: float               # the requirement's value [unit]
    unit: str
    harder: int = +1
    field: str = ""               # the requirement's field the quantity is
    airspeed: str = ""            # TAS, CAS, EAS for speeds
    basis: str = "T/W"            # what the fractional margin is a margin of
    note: str = ""                # where the capability was taken (a given thrust lapse), a bound
    lapse_given: float | None = None   # thrust_lapse given for the requirement's condition

    @property
    def margin(self) -> float | None:
        """The margin in the requirement's quantity [unit], positive when met with room."""
        if self.value is None:
            return None
        return self.harder * (self.value - self.required)

    @property
    def percent(self) -> float | None:
        """The margin as a percentage of the requirement's value [%] (None at a zero value)."""
        m = self.margin
        if m is None or self.required == 0:
            return None
        return 100.0 * m / abs(self.required)


@dataclass(frozen=True)
class RequirementResult:
    id: str
    kind: str
    active: bool
    margin: float                 # fractional excess, 0 when active
    sensitivity: float | None     # d m_TO / d value [kg per user unit]
    sensitivity_unit: str
    value_text: str               # the requirement's value as written
    detail: str                   # the margin in the requirement's own terms
    speed: float | None = None    # free speed chosen by the optimizer [m/s]
    beta: float = 1.0
    beta_source: str = "default 1.0"
    capability: Capability | None = None   # the margin in the requirement's own quantity
    step_cost: StepCost | None = None   # a real step of the value, re-solved (sizing.problem.steps)


@dataclass(frozen=True)
class StepCost:
    """The takeoff-mass cost of one readable step of a requirement's value, re-solved."""

    step: float                   # signed, in the user's unit (the harder direction)
    unit: str                     # the user's unit of the value ("g", "kn", "ft", "Mach", ...)
    value: float                  # the value before the step [user unit]
    delta_mass: float | None      # re-solved change of m_TO [kg]; None when the step is infeasible
    linear_estimate: float | None  # slope x step [kg]
    feasible: bool = True         # a design exists after the step

    @property
    def nonlinear(self) -> bool:
        """The slope's linear estimate is off by more than 10 % of the re-solved change."""
        if self.delta_mass is None or self.linear_estimate is None:
            return False
        return abs(self.delta_mass - self.linear_estimate) > NONLINEAR_REL * abs(self.delta_mass)


@dataclass(frozen=True)
class Design:
    wing_loading: float          # W_TO/S [N/m^2]
    thrust_to_weight: float | None
    power_to_weight: float | None  # P_SL/W_TO [W/N]
    takeoff_mass: float          # [kg]
    wing_area: float             # [m^2]
    empty_mass: float            # [kg]
    fuel_mass: float             # [kg]
    thrust: float | None         # installed sea-level static thrust, standard day, top rating [N]
    power: float | None          # installed sea-level static shaft power, standard day, takeoff rating [W]
    crew_mass: float = 0.0
    payload_mass: float = 0.0
    engines: int = 1             # installed engines
    rating: str = ""             # the rating thrust (power) is quoted at: "dry (military) rating", ...
    dry_thrust: float | None = None  # dry sea-level static thrust [N] (afterburning jets only)

    @property
    def thrust_per_engine(self) -> float | None:
        """Sea-level static thrust per engine at the top rating [N] (jets)."""
        return None if self.thrust is None else self.thrust / self.engines

    @property
    def power_per_engine(self) -> float | None:
        """Sea-level static shaft power per engine at the takeoff rating [W] (propeller aircraft)."""
        return None if self.power is None else self.power / self.engines

    @property
    def dry_thrust_to_weight(self) -> float | None:
        """Dry T_SL/W_TO [-] (afterburning jets only)."""
        if self.dry_thrust is None or not self.thrust:
            return None
        return self.thrust_to_weight * self.dry_thrust / self.thrust


@dataclass(frozen=True)
class ClosureHealth:
    """How near the weight closure is to runaway (see :mod:`sizing.problem.health`)."""

    growth_factor: float          # d m_TO / d m_payload [kg per kg]
    runaway_margin: float         # 1 - d(m_empty + m_fuel)/d m_TO at the design point [-]
    warning: str = ""             # empty when the closure is healthy
    growth_source: str = ""       # how the growth factor was obtained


@dataclass(frozen=True)
class Infeasibility:
    conflicts: tuple
    relaxations: dict            # id -> {value, unit, text, field, from, shown, si, together}
    explanation: str = ""


@dataclass(frozen=True)
class Result:
    """Frozen outcome of one sizing solve."""

    title: str
    status: str                           # "optimal" | "infeasible"
    propeller: bool
    design: Design | None
    requirements: tuple = ()
    drivers: tuple = ()
    infeasibility: Infeasibility | None = None
    on_edge: tuple = ()                   # design-space edges the optimum touches
    fuel_breakdown: tuple = ()            # (segment name, weight fraction, fuel kg)
    other_costs: tuple = ()               # (what, kg per unit, unit): payload growth, mission legs
    objective: str = "takeoff-mass"
    stats: dict = field(default_factory=dict)
    spec: object = None
    mass_independent: bool = False        # the takeoff mass is the same at every feasible point
    closure: ClosureHealth | None = None  # growth factor and runaway margin (sizing.problem.health)

    @property
    def mass_notice(self) -> str:
        """What a reader must know when the takeoff mass does not depend on the design point
        ('' otherwise)."""
        if not self.mass_independent:
            return ""
        y = "P/W" if self.propeller else "T/W"
        return (f"takeoff mass does not depend on W/S or {y} here: the point shown is the smallest "
                "engine, then the smallest wing")

    @property
    def closure_warning(self) -> str:
        """The weight closure's warning, one line ('' when the closure is healthy or unknown)."""
        ch = self.closure
        if ch is None or not ch.warning:
            return ""
        return (f"WARNING: near weight runaway: payload growth factor {ch.growth_factor:,.1f} kg per kg, "
                f"runaway margin {ch.runaway_margin:.3f}")

    @property
    def notices(self) -> tuple:
        """What a reader must know before the numbers, one line each: the takeoff mass independent
        of the design point, a weight closure near runaway."""
        out = [f"NOTE: {self.mass_notice}"] if self.mass_notice else []
        return tuple(out + ([self.closure_warning] if self.closure_warning else []))

    @property
    def feasible(self) -> bool:
        return self.status == "optimal"

    def requirement(self, rid):
        for r in self.requirements:
            if r.id == rid:
                return r
        raise KeyError(rid)

    def to_frame(self):
        """Requirements as a pandas DataFrame (id, kind, active, margin, ...)."""
        import pandas as pd

        return pd.DataFrame([{
            "id": r.id, "kind": r.kind, "active": r.active, "margin": r.margin,
            "sensitivity": r.sensitivity, "sensitivity_unit": r.sensitivity_unit,
            "value": r.value_text, "detail": r.detail, "weight_fraction": r.beta,
        } for r in self.requirements])

    def diagram(self, ax=None, **kwargs):
        """Constraint diagram of this design (see :func:`sizing.charts.diagram.constraint_diagram`)."""
        from ..charts.diagram import constraint_diagram

        return constraint_diagram(self.spec, result=self, ax=ax, **kwargs)

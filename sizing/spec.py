"""Requirement files: YAML -> validated models (pydantic) -> SI tree.

The schema below *is* the file format of DESIGN §4. Dimensional values are
strings with a unit (parsed by :mod:`sizing.units`); dimensionless ones are
numbers (fractions may be written ``"6 %"``). Every error names the file,
the line and the field path, what was wrong and what would fit.

:func:`load` returns a :class:`Spec`: the validated model, the raw data (for
trade studies, which change a value and validate again) and :meth:`Spec.tree`,
the same content as nested dicts of SI floats with the YAML's own key
names, which the physics and the solver read.
"""
from __future__ import annotations

import difflib
import hashlib
from pathlib import Path
from typing import Annotated, Literal, Optional, Union

from pydantic import (BaseModel, BeforeValidator, ConfigDict, Field, ValidationError,
                      WithJsonSchema, field_validator, model_validator)

from . import units
from .atmosphere import H_MAX, H_MIN
from .errors import InputError
from .propulsion import ENGINE_TYPES, PROPELLER_TYPES

# --------------------------------------------------------------------------
# Field types
# --------------------------------------------------------------------------


def _q(dim: str):
    d = units.DIMENSIONS[dim]
    return Annotated[
        units.Quantity,
        BeforeValidator(lambda v, _d=dim: v if isinstance(v, units.Quantity) else units.parse(v, _d)),
        WithJsonSchema({"type": "string", "description": f"{d.name} with a unit, e.g. {d.examples}",
                        "pattern": r"^\s*[-+]?[0-9.]+([eE][-+]?[0-9]+)?\s*\S+"}),
    ]


Length = _q("length")
Speed = _q("speed")
Mass = _q("mass")
Time = _q("time")
TempDelta = _q("temperature_difference")
WingLoading = _q("wing_loading")
ArealMass = _q("areal_mass")
PowerToWeight = _q("power_to_weight")
Tsfc = _q("tsfc")


def _mass_per_engine(v):
    if isinstance(v, units.Quantity):
        return v
    try:
        return units.parse(v, "mass_per_thrust")
    except units.UnitError:
        try:
            return units.parse(v, "mass_per_power")
        except units.UnitError:
            raise units.UnitError(
                f"{v!r} is not a mass per sea-level thrust ('0.025 kg/N') nor per sea-level power "
                f"('0.9 kg/kW')") from None


EngineMass = Annotated[units.Quantity, BeforeValidator(_mass_per_engine),
                       WithJsonSchema({"type": "string", "description": "mass per sea-level thrust "
                                       "('0.025 kg/N') or, for propeller aircraft, per power ('0.9 kg/kW')"})]


def _fuel_consumption(v):
    if isinstance(v, units.Quantity):
        return v
    for dim in ("tsfc", "psfc"):
        try:
            return units.parse(v, dim)
        except units.UnitError:
            pass
    raise units.UnitError(f"{v!r} is not a fuel consumption: jets give thrust-specific ('0.9 1/h', "
                          f"'22 mg/(N*s)'), propeller aircraft power-specific ('0.45 lb/(hp*h)')")


FuelConsumption = Annotated[units.Quantity, BeforeValidator(_fuel_consumption),
                            WithJsonSchema({"type": "string", "description": "thrust-specific "
                                            "('0.9 1/h', '22 mg/(N*s)') or power-specific "
                                            "('0.45 lb/(hp*h)') fuel consumption"})]

Fraction = Annotated[float, BeforeValidator(units.parse_fraction),
                     WithJsonSchema({"anyOf": [{"type": "number"}, {"type": "string", "pattern": r"%\s*$"}]})]


def _number(v):
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        if isinstance(v, str):
            try:
                return float(v)
            except ValueError:
                pass
        raise ValueError(f"{v!r} is not a number (this value is dimensionless)")
    return float(v)


Number = Annotated[float, BeforeValidator(_number), WithJsonSchema({"type": "number"})]


class Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, arbitrary_types_allowed=True)


def _positive(name, v, hi=None):
    if v is None:
        return v
    val = v.si if isinstance(v, units.Quantity) else v
    if not val > 0:
        raise ValueError(f"{name} must be positive, got {getattr(v, 'text', v)}")
    if hi is not None and not val <= hi:
        raise ValueError(f"{name} {getattr(v, 'text', v)} is not plausible (at most {hi})")
    return v


# --------------------------------------------------------------------------
# Aircraft
# --------------------------------------------------------------------------


class _Table(Strict):
    mach: list[Number] = Field(min_length=2, description="strictly increasing Mach numbers from 0 up")

    @field_validator("mach")
    @classmethod
    def _increasing(cls, v):
        if any(not (b > a) for a, b in zip(v, v[1:])):
            raise ValueError(f"Mach table {v} is not strictly increasing")
        if v[0] < 0:
            raise ValueError("Mach numbers cannot be negative")
        return v

    def _check_len(self, values, name):
        if len(values) != len(self.mach):
            raise ValueError(f"{name} has {len(values)} entries but mach has {len(self.mach)}")


class CD0Table(_Table):
    cd0: list[Number]

    @model_validator(mode="after")
    def _len(self):
        self._check_len(self.cd0, "cd0")
        for c in self.cd0:
            _positive("cd0", c, 0.5)
        return self


class K1Table(_Table):
    k1: list[Number]

    @model_validator(mode="after")
    def _len(self):
        self._check_len(self.k1, "k1")
        for c in self.k1:
            _positive("k1", c, 2.0)
        return self


class CLMax(Strict):
    clean: Number = Field(description="clean-wing maximum lift coefficient")
    takeoff: Optional[Number] = Field(None, description="takeoff flaps (default: clean)")
    landing: Optional[Number] = Field(None, description="landing flaps (default: takeoff)")

    @field_validator("clean", "takeoff", "landing")
    @classmethod
    def _plausible(cls, v):
        if v is not None and not (0.2 <= v <= 4.5):
            raise ValueError(f"CLmax {v} is outside the plausible range 0.2 to 4.5")
        return v


class Aerodynamics(Strict):
    cd0: Union[Number, CD0Table] = Field(description="zero-lift drag coefficient, or a Mach table")
    aspect_ratio: Optional[Number] = None
    oswald_efficiency: Optional[Number] = Field(None, description="default: Raymer's straight-wing estimate from the aspect ratio")
    k1: Optional[Union[Number, K1Table]] = Field(None, description="induced-drag factor; default 1/(pi A e)")
    k2: Number = 0.0
    cl_max: CLMax
    takeoff_drag_increment: Number = 0.0
    landing_drag_increment: Number = 0.0

    @field_validator("cd0")
    @classmethod
    def _cd0(cls, v):
        return _positive("cd0", v, 0.5) if isinstance(v, float) else v

    @field_validator("aspect_ratio")
    @classmethod
    def _ar(cls, v):
        return _positive("aspect_ratio", v, 40.0)

    @field_validator("oswald_efficiency")
    @classmethod
    def _e(cls, v):
        if v is not None and not (0.2 <= v <= 1.0):
            raise ValueError(f"oswald_efficiency {v} is outside 0.2 to 1.0")
        return v

    @field_validator("takeoff_drag_increment", "landing_drag_increment")
    @classmethod
    def _inc(cls, v):
        if not (0.0 <= v <= 0.3):
            raise ValueError(f"drag increment {v} is outside 0 to 0.3")
        return v

    @model_validator(mode="after")
    def _k1_source(self):
        if self.k1 is None and self.aspect_ratio is None:
            raise ValueError("give k1, or aspect_ratio (with optional oswald_efficiency)")
        if isinstance(self.k1, float):
            _positive("k1", self.k1, 2.0)
        return self

    @property
    def mach_max(self) -> float:
        tops = [t.mach[-1] for t in (self.cd0, self.k1) if isinstance(t, _Table)]
        return min(tops) if tops else float("inf")


class Propulsion(Strict):
    type: Literal["turbojet", "turbofan-low-bypass", "turbofan-high-bypass", "turboprop", "piston"]
    engines: int = Field(1, ge=1, le=8)
    throttle_ratio: Number = 1.0
    afterburner: bool = False
    propeller_efficiency: Number = 0.8

    @field_validator("throttle_ratio")
    @classmethod
    def _tr(cls, v):
        if not (0.9 <= v <= 1.3):
            raise ValueError(f"throttle_ratio {v} is outside 0.9 to 1.3 (typical 1.0 to 1.08)")
        return v

    @field_validator("propeller_efficiency")
    @classmethod
    def _eta(cls, v):
        if not (0.2 <= v <= 0.95):
            raise ValueError(f"propeller_efficiency {v} is outside 0.2 to 0.95")
        return v


class SpeedLimit(Strict):
    mach: Optional[Number] = None
    speed: Optional[Speed] = None

    @model_validator(mode="after")
    def _one(self):
        if self.mach is None and self.speed is None:
            raise ValueError("give mach or speed")
        _positive("mach", self.mach, 5.0)
        _positive("speed", self.speed)
        return self


class EmptyComponents(Strict):
    model: Literal["components"]
    wing: ArealMass
    propulsion: EngineMass
    other: Fraction

    @model_validator(mode="after")
    def _ranges(self):
        _positive("wing", self.wing)
        _positive("propulsion", self.propulsion)
        if not (0.0 <= self.other < 1.0):
            raise ValueError(f"other {self.other} must be a fraction of takeoff mass in [0, 1)")
        return self


class EmptyFraction(Strict):
    model: Literal["fraction"]
    value: Fraction

    @field_validator("value")
    @classmethod
    def _v(cls, v):
        if not (0.0 < v < 1.0):
            raise ValueError(f"empty fraction {v} must lie between 0 and 1")
        return v


class EmptyStatistical(Strict):
    model: Literal["statistical"]
    preset: Optional[str] = Field(None, description="a named aircraft class of the published regression")
    a: Optional[Number] = Field(None, description="coefficient A (pound units) of We/W0 = A W0^C K_vs")
    c: Optional[Number] = None
    variable_sweep: bool = False
    b: Optional[Number] = Field(None, description="refined form: b of We/W0 = a + b W0^C1 A^C2 (T/W)^C3 (W/S)^C4 M^C5")
    exponents: Optional[list[Number]] = Field(None, description="refined form: C1..C5")
    max_mach: Optional[Number] = None

    @model_validator(mode="after")
    def _given(self):
        from .weights import STATISTICAL_PRESETS
        if self.preset is not None and self.preset not in STATISTICAL_PRESETS:
            near = difflib.get_close_matches(self.preset, list(STATISTICAL_PRESETS), 1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise ValueError(f"unknown preset {self.preset!r}{hint}; valid: {', '.join(STATISTICAL_PRESETS)}")
        if self.preset is None and (self.a is None or self.c is None):
            raise ValueError("give a preset, or the coefficients a and c")
        if self.exponents is not None and len(self.exponents) != 5:
            raise ValueError("exponents takes five numbers C1..C5")
        return self


Empty = Annotated[Union[EmptyComponents, EmptyFraction, EmptyStatistical], Field(discriminator="model")]


class Fuel(Strict):
    fraction: Optional[Fraction] = None

    @field_validator("fraction")
    @classmethod
    def _f(cls, v):
        if v is not None and not (0.0 <= v < 1.0):
            raise ValueError(f"fuel fraction {v} must lie in [0, 1)")
        return v


class Weights(Strict):
    crew: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    payload: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    empty: Empty
    fuel: Fuel = Field(default_factory=Fuel)

    @model_validator(mode="after")
    def _fixed(self):
        if self.crew.si < 0 or self.payload.si < 0:
            raise ValueError("crew and payload cannot be negative")
        if self.crew.si + self.payload.si <= 0:
            raise ValueError("crew plus payload must be positive: it is what the weight closure scales")
        return self


class Aircraft(Strict):
    aerodynamics: Aerodynamics
    propulsion: Propulsion
    speed_limit: Optional[SpeedLimit] = None
    weights: Weights


# --------------------------------------------------------------------------
# Mission
# --------------------------------------------------------------------------


class _Segment(Strict):
    name: Optional[str] = None


class FixedSegment(_Segment):
    kind: Literal["fixed"]
    fraction: Fraction

    @field_validator("fraction")
    @classmethod
    def _f(cls, v):
        if not (0.0 < v <= 1.0):
            raise ValueError(f"segment weight fraction {v} must lie in (0, 1]")
        return v


class CruiseSegment(_Segment):
    kind: Literal["cruise"]
    range: Length
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None


class LoiterSegment(_Segment):
    kind: Literal["loiter"]
    time: Time
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None


class CombatSegment(_Segment):
    kind: Literal["combat", "maneuver"]
    time: Time
    load_factor: Number = 1.0
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _speed(self):
        if self.mach is None and self.speed is None:
            raise ValueError("a combat segment needs mach or speed")
        return self


Segment = Annotated[Union[FixedSegment, CruiseSegment, LoiterSegment, CombatSegment], Field(discriminator="kind")]


class Mission(Strict):
    tsfc: Optional[FuelConsumption] = None
    reserve: Fraction = 0.0
    trapped: Fraction = 0.0
    segments: list[Segment] = Field(min_length=1)

    @model_validator(mode="after")
    def _names(self):
        names = [s.name for s in self.segments if s.name]
        dup = {n for n in names if names.count(n) > 1}
        if dup:
            raise ValueError(f"duplicate segment names: {', '.join(sorted(dup))}")
        for i, s in enumerate(self.segments):
            if s.kind != "fixed" and s.tsfc is None and self.tsfc is None:
                raise ValueError(f"segment {i} ({s.name or s.kind}) burns fuel but no tsfc is given "
                                 f"(mission.tsfc or the segment's own)")
            if s.kind in ("cruise", "loiter", "combat", "maneuver") and s.mach is not None and s.speed is not None:
                raise ValueError(f"segment {i}: give mach or speed, not both")
        if not (0.0 <= self.reserve <= 0.5):
            raise ValueError(f"reserve {self.reserve} is outside 0 to 50 %")
        if not (0.0 <= self.trapped <= 0.1):
            raise ValueError(f"trapped {self.trapped} is outside 0 to 10 %")
        return self


# --------------------------------------------------------------------------
# Requirements
# --------------------------------------------------------------------------


class After(Strict):
    after: str = Field(description="name of a mission segment: the weight at its end")


class _Req(Strict):
    id: str = Field(min_length=1)
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    weight_fraction: Optional[Union[Fraction, After]] = None
    thrust_lapse: Optional[Number] = None
    config: Optional[Literal["clean", "takeoff", "landing"]] = None
    note: Optional[str] = None

    _needs_speed = False      # fixed-speed kinds
    _speed_optional = False

    @model_validator(mode="after")
    def _common(self):
        h = self.altitude.si
        if not (H_MIN <= h <= H_MAX):
            raise ValueError(f"altitude {self.altitude.text} is outside the standard atmosphere "
                             f"model ({H_MIN:g} m to {H_MAX:g} m)")
        if not (-80.0 <= self.temperature_offset.si <= 60.0):
            raise ValueError(f"temperature_offset {self.temperature_offset.text} is outside -80 K to +60 K")
        wf = self.weight_fraction
        if isinstance(wf, float) and not (0.0 < wf <= 1.0):
            raise ValueError(f"weight_fraction {wf} must lie in (0, 1]")
        if self.thrust_lapse is not None and not (0.0 < self.thrust_lapse <= 3.0):
            raise ValueError(f"thrust_lapse {self.thrust_lapse} must lie in (0, 3]")
        mach, speed = getattr(self, "mach", None), getattr(self, "speed", None)
        if mach is not None and speed is not None:
            raise ValueError("give mach or speed, not both")
        if self._needs_speed and mach is None and speed is None:
            raise ValueError("needs mach or speed (true airspeed)")
        if mach is not None and not (0.0 < mach <= 5.0):
            raise ValueError(f"mach {mach} must lie in (0, 5]")
        if speed is not None and not speed.si > 0:
            raise ValueError(f"speed {speed.text} must be positive")
        n = getattr(self, "load_factor", None)
        if n is not None and not (0.0 < n <= 15.0):
            raise ValueError(f"load_factor {n} must lie in (0, 15]")
        return self


class StallSpeed(_Req):
    kind: Literal["stall-speed"]
    speed: Optional[Speed] = None
    mach: Optional[Number] = None
    _needs_speed = True


class SustainedTurn(_Req):
    kind: Literal["sustained-turn"]
    load_factor: Number
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class MaxMach(_Req):
    kind: Literal["max-mach"]
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class Ceiling(_Req):
    kind: Literal["ceiling"]
    climb_rate: Speed = Field(default_factory=lambda: units.parse("100 ft/min", "speed"))


class Climb(_Req):
    kind: Literal["climb"]
    climb_rate: Speed
    mach: Optional[Number] = None
    speed: Optional[Speed] = None


class ExcessPower(_Req):
    kind: Literal["excess-power"]
    excess_power: Speed
    load_factor: Number = 1.0
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class Cruise(_Req):
    kind: Literal["cruise"]
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    throttle: Fraction = 1.0
    _needs_speed = True

    @field_validator("throttle")
    @classmethod
    def _thr(cls, v):
        if not (0.0 < v <= 1.0):
            raise ValueError(f"throttle {v} must lie in (0, 1]")
        return v


class InstantaneousTurn(_Req):
    kind: Literal["instantaneous-turn"]
    load_factor: Number
    mach: Optional[Number] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class Takeoff(_Req):
    kind: Literal["takeoff"]
    ground_roll: Length
    rolling_friction: Number = 0.04
    liftoff_speed_ratio: Number = 1.1
    ground_lift_coefficient: Optional[Number] = Field(None, description="CL during the run; default mu/(2 k1)")

    @model_validator(mode="after")
    def _ranges(self):
        _positive("ground_roll", self.ground_roll)
        if not (0.0 <= self.rolling_friction <= 0.3):
            raise ValueError(f"rolling_friction {self.rolling_friction} is outside 0 to 0.3")
        if not (1.0 <= self.liftoff_speed_ratio <= 1.5):
            raise ValueError(f"liftoff_speed_ratio {self.liftoff_speed_ratio} is outside 1.0 to 1.5")
        return self


class Landing(_Req):
    kind: Literal["landing"]
    ground_roll: Length
    braking_friction: Number = 0.3
    touchdown_speed_ratio: Number = 1.15
    free_roll_time: Time = Field(default_factory=lambda: units.parse("0 s", "time"))

    @model_validator(mode="after")
    def _ranges(self):
        _positive("ground_roll", self.ground_roll)
        if not (0.05 <= self.braking_friction <= 1.0):
            raise ValueError(f"braking_friction {self.braking_friction} is outside 0.05 to 1.0")
        if not (1.0 <= self.touchdown_speed_ratio <= 1.5):
            raise ValueError(f"touchdown_speed_ratio {self.touchdown_speed_ratio} is outside 1.0 to 1.5")
        if self.free_roll_time.si < 0:
            raise ValueError("free_roll_time cannot be negative")
        return self


class ClimbGradient(_Req):
    kind: Literal["climb-gradient"]
    gradient: Fraction
    engines_out: int = Field(1, ge=0)
    speed_ratio: Number = 1.2

    @model_validator(mode="after")
    def _ranges(self):
        if not (-0.1 <= self.gradient <= 0.5):
            raise ValueError(f"gradient {self.gradient} is outside -10 % to 50 %")
        if not (1.0 <= self.speed_ratio <= 2.0):
            raise ValueError(f"speed_ratio {self.speed_ratio} is outside 1.0 to 2.0")
        return self


Requirement = Annotated[
    Union[StallSpeed, SustainedTurn, MaxMach, Ceiling, Climb, ExcessPower, Cruise,
          InstantaneousTurn, Takeoff, Landing, ClimbGradient],
    Field(discriminator="kind"),
]


class DesignSpace(Strict):
    wing_loading: Optional[tuple[WingLoading, WingLoading]] = None
    thrust_to_weight: Optional[tuple[Number, Number]] = None
    power_to_weight: Optional[tuple[PowerToWeight, PowerToWeight]] = None

    @model_validator(mode="after")
    def _order(self):
        for name in ("wing_loading", "thrust_to_weight", "power_to_weight"):
            r = getattr(self, name)
            if r is not None:
                lo, hi = (float(x) for x in r)
                if not (0 <= lo < hi):
                    raise ValueError(f"{name} range [{lo:g}, {hi:g}] must be increasing and non-negative")
        return self


class RequirementFile(Strict):
    title: str = "Untitled concept"
    aircraft: Aircraft
    mission: Optional[Mission] = None
    requirements: list[Requirement] = Field(min_length=1)
    design_space: Optional[DesignSpace] = None
    objective: Literal["takeoff-mass", "thrust", "wing-area", "fuel-mass"] = "takeoff-mass"

    @model_validator(mode="after")
    def _cross(self):
        ids = [r.id for r in self.requirements]
        dup = sorted({i for i in ids if ids.count(i) > 1})
        if dup:
            raise ValueError(f"duplicate requirement ids: {', '.join(dup)}")
        prop = self.aircraft.propulsion.type in PROPELLER_TYPES
        emp = self.aircraft.weights.empty
        if isinstance(emp, EmptyComponents):
            per_power = units.DIMENSIONS["mass_per_power"]
            is_power = abs(emp.propulsion.scale) > 0 and _is_dim(emp.propulsion, "mass_per_power")
            if prop and not is_power:
                raise ValueError("weights.empty.propulsion: a propeller aircraft gives mass per sea-level "
                                 f"power, e.g. {per_power.examples}")
            if not prop and is_power:
                raise ValueError("weights.empty.propulsion: a jet gives mass per sea-level thrust, e.g. '0.025 kg/N'")
        names = [s.name for s in self.mission.segments if s.name] if self.mission else []
        for r in self.requirements:
            if isinstance(r.weight_fraction, After) and r.weight_fraction.after not in names:
                near = difflib.get_close_matches(r.weight_fraction.after, names, 1)
                hint = f" (did you mean {near[0]!r}?)" if near else ""
                raise ValueError(f"requirement {r.id}: weight_fraction after {r.weight_fraction.after!r} "
                                 f"names no mission segment{hint}; segments: {', '.join(names) or 'none'}")
            if isinstance(r, ClimbGradient) and r.engines_out >= self.aircraft.propulsion.engines:
                raise ValueError(f"requirement {r.id}: engines_out {r.engines_out} leaves no engine "
                                 f"running (the aircraft has {self.aircraft.propulsion.engines})")
            mach = getattr(r, "mach", None)
            if mach is not None and mach > self.aircraft.aerodynamics.mach_max:
                raise ValueError(f"requirement {r.id}: mach {mach} lies above the drag polar's Mach table "
                                 f"(up to {self.aircraft.aerodynamics.mach_max})")
        fuel = self.aircraft.weights.fuel.fraction
        if fuel is None and self.mission is None:
            raise ValueError("give weights.fuel.fraction, or a mission to compute the fuel from")
        if fuel is not None and self.mission is not None:
            raise ValueError("give weights.fuel.fraction or a mission, not both")
        ds = self.design_space
        if ds is not None:
            if prop and ds.thrust_to_weight is not None:
                raise ValueError("design_space: a propeller aircraft is sized by power_to_weight (W/N), not thrust_to_weight")
            if not prop and ds.power_to_weight is not None:
                raise ValueError("design_space: a jet is sized by thrust_to_weight, not power_to_weight")
        return self


def _is_dim(q: units.Quantity, dim: str) -> bool:
    try:
        units.parse(q.text, dim)
        return True
    except units.UnitError:
        return False


# --------------------------------------------------------------------------
# Loading with line numbers
# --------------------------------------------------------------------------


def _yaml_with_lines(text: str, filename: str):
    import yaml

    try:
        loader = yaml.SafeLoader(text)
        try:
            node = loader.get_single_node()
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as e:
        mark = e.problem_mark or e.context_mark
        line = mark.line + 1 if mark else None
        raise InputError(f"YAML syntax: {e.problem or e}", filename, line) from None
    except yaml.YAMLError as e:
        raise InputError(f"YAML syntax: {e}", filename) from None
    if node is None:
        raise InputError("the file is empty; a requirement file is a mapping with aircraft and requirements",
                         filename, 1)
    lines: dict = {(): node.start_mark.line + 1}

    def walk(n, path):
        if isinstance(n, yaml.MappingNode):
            for k, v in n.value:
                key = k.value
                lines[path + (key,)] = k.start_mark.line + 1
                walk(v, path + (key,))
        elif isinstance(n, yaml.SequenceNode):
            for i, item in enumerate(n.value):
                lines[path + (i,)] = item.start_mark.line + 1
                walk(item, path + (i,))

    walk(node, ())
    try:
        data = yaml.SafeLoader(text).get_single_data()
    except yaml.YAMLError as e:
        raise InputError(f"YAML: {e}", filename) from None
    return data, lines


def _locate(loc, data, lines):
    """Map a pydantic error location to (line, readable field path)."""
    path: tuple = ()
    shown = []
    node = data
    for item in loc:
        nxt = None
        if isinstance(node, dict) and item in node:
            nxt = node[item]
        elif isinstance(node, list) and isinstance(item, int) and 0 <= item < len(node):
            nxt = node[item]
        else:
            continue
        path = path + (item,)
        if isinstance(item, int):
            label = f"[{item}]"
            if isinstance(nxt, dict) and "id" in nxt:
                label += f" (id {nxt['id']})"
            shown.append(label)
        else:
            shown.append(("." if shown else "") + str(item))
        node = nxt
    line = None
    for k in range(len(path), -1, -1):
        if path[:k] in lines:
            line = lines[path[:k]]
            break
    return line, "".join(shown) or "(top level)", path, node


def _model_for(path, data):
    """The pydantic model class that validates the mapping at ``path`` (best effort)."""
    model = RequirementFile
    node = data
    pending = None
    for item in path:
        if isinstance(item, int):
            node = node[item] if isinstance(node, list) and 0 <= item < len(node) else None
            if pending is not None:
                model = _pick_model(pending, node)
                pending = None
            continue
        field = model.model_fields.get(item) if model is not None else None
        if field is None:
            return None
        node = node.get(item) if isinstance(node, dict) else None
        if isinstance(node, list):
            pending = field.annotation
            continue
        model = _pick_model(field.annotation, node)
        if model is None:
            return None
    return model


def _pick_model(annotation, node):
    import typing

    args = typing.get_args(annotation)
    candidates = []
    stack = [annotation]
    while stack:
        a = stack.pop()
        if isinstance(a, type) and issubclass(a, BaseModel):
            candidates.append(a)
        else:
            stack.extend(typing.get_args(a))
    del args
    if not candidates:
        return None
    if isinstance(node, dict):
        for c in candidates:
            for disc in ("kind", "model"):
                f = c.model_fields.get(disc)
                if f is not None and node.get(disc) in typing.get_args(f.annotation):
                    return c
    return candidates[0]


def _messages(err: ValidationError, data, lines, filename):
    out = []
    for e in err.errors(include_url=False):
        loc = tuple(e.get("loc", ()))
        line, field, path, node = _locate(loc, data, lines)
        msg = e.get("msg", "invalid")
        if msg.startswith("Value error, "):
            msg = msg[len("Value error, "):]
        if e.get("type") == "extra_forbidden":
            key = loc[-1]
            parent = _model_for(path[:-1], data) if path and path[-1] == key else _model_for(path, data)
            valid = [k for k in (parent.model_fields if parent else {})]
            near = difflib.get_close_matches(str(key), valid, 1)
            msg = f"unknown key {key!r}" + (f" (did you mean {near[0]!r}?)" if near else "")
            if valid:
                msg += f"; valid keys here: {', '.join(valid)}"
        elif e.get("type") == "missing":
            msg = f"missing required field {loc[-1]!r}"
            field = (field + "." if field != "(top level)" else "") + str(loc[-1])
        elif e.get("type") == "union_tag_invalid":
            ctx = e.get("ctx", {})
            msg = (f"unknown {ctx.get('discriminator', 'kind').strip(chr(39))} {ctx.get('tag')!r}; "
                   f"valid: {ctx.get('expected_tags')}")
        elif e.get("type") == "model_type" and isinstance(node, (str, int, float, list)):
            msg = f"expected a mapping of keys, got {node!r}"
        out.append(InputError(msg, filename, line, field))
    return out


class Spec:
    """A validated requirement file: the model, its raw data and its SI tree."""

    def __init__(self, model: RequirementFile, data: dict, path: str = "<memory>", text: str = ""):
        self.model = model
        self.data = data
        self.path = path
        self.sha256 = hashlib.sha256(text.encode()).hexdigest() if text else ""

    @property
    def title(self) -> str:
        return self.model.title

    @property
    def requirements(self):
        return self.model.requirements

    @property
    def is_propeller(self) -> bool:
        return self.model.aircraft.propulsion.type in PROPELLER_TYPES

    def tree(self) -> dict:
        """Nested dicts of SI floats with the YAML's key names (defaults filled)."""
        return _si(self.model)

    def requirement(self, rid: str):
        for r in self.model.requirements:
            if r.id == rid:
                return r
        raise KeyError(rid)


def _si(obj):
    if isinstance(obj, units.Quantity):
        return obj.si
    if isinstance(obj, BaseModel):
        out = {}
        for name in type(obj).model_fields:
            v = getattr(obj, name)
            if v is None:
                continue
            out[name] = _si(v)
        return out
    if isinstance(obj, (list, tuple)):
        return [_si(v) for v in obj]
    if isinstance(obj, bool) or isinstance(obj, str):
        return obj
    if isinstance(obj, int):
        return float(obj)
    return obj


def validate(data, filename: str = "<memory>", lines: dict | None = None, text: str = "") -> Spec:
    """Validate already-parsed YAML data; raise the first located InputError."""
    lines = lines or {(): 1}
    if not isinstance(data, dict):
        raise InputError(f"a requirement file is a mapping with aircraft and requirements, "
                         f"got {type(data).__name__}", filename, 1)
    try:
        model = RequirementFile.model_validate(data)
    except ValidationError as e:
        errs = _messages(e, data, lines, filename)
        first = errs[0]
        if len(errs) > 1:
            first.message += f"  (and {len(errs) - 1} more problem{'s' if len(errs) > 2 else ''})"
            first.args = (first.describe(),)
        raise first from None
    return Spec(model, data, filename, text)


def load_text(text: str, filename: str = "<memory>") -> Spec:
    data, lines = _yaml_with_lines(text, filename)
    return validate(data, filename, lines, text)


def load(path) -> Spec:
    """Read and validate a requirement file; raises :class:`InputError`."""
    p = Path(path)
    try:
        raw = p.read_bytes()
    except OSError as e:
        raise InputError(f"cannot read the file: {e.strerror}", str(path)) from None
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError:
        raise InputError("not a text file (it is not UTF-8); a requirement file is YAML text", str(path)) from None
    if "\x00" in text:
        raise InputError("not a text file (it contains NUL bytes); a requirement file is YAML text", str(path))
    return load_text(text, str(path))


def json_schema() -> dict:
    """JSON Schema (draft 2020-12) of requirement files, from the same models."""
    schema = RequirementFile.model_json_schema()
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "sizing requirement file"
    return schema

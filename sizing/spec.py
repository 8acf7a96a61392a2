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
import math
from pathlib import Path
from typing import Annotated, Literal, Optional, Union

from pydantic import BaseModel, ConfigDict, Field, ValidationError, field_validator, model_validator

from . import units
from .atmosphere import H_MAX, H_MIN
from .errors import FieldError, InputError, located
from .propulsion import PROPELLER_TYPES
from .units import (ArealMass, EngineMass, Fraction, FuelConsumption, Identifier, Length,  # noqa: F401
                    LiftCoefficient, LoadFactor, MachNumber, Mass, Number, PowerToWeight, Speed,
                    TempDelta, Text, Time, Tsfc, WingLoading, read_yaml)
from .units import positive as _positive
from .units import within as _within

EMPTY = "the file is empty; a requirement file is a mapping with title, aircraft and requirements"


_yaml_with_lines = read_yaml      # (data, lines) of YAML text; the study module reads with it


class Strict(BaseModel):
    model_config = ConfigDict(extra="forbid", frozen=True, arbitrary_types_allowed=True)

    @model_validator(mode="before")
    @classmethod
    def _no_empty_values(cls, data):
        # "key:" with nothing after it is a slip, not a request for the default
        if isinstance(data, dict):
            for k, v in data.items():
                if v is None and k in cls.model_fields:
                    raise FieldError(k, "no value given; write a value, or remove the key to use the default")
        return data


# --------------------------------------------------------------------------
# Aircraft
# --------------------------------------------------------------------------
# Plausibility bounds below are wide envelopes around published typical
# values (Raymer Ch. 4-6, Mattingly §2); they catch typing slips such as
# CLmax 9 or a Mach table in knots, not unusual designs.
# (common practice, no source, for the exact limits)


class _Table(Strict):
    mach: list[Number] = Field(min_length=2, description="strictly increasing Mach numbers from 0 up")

    @field_validator("mach")
    @classmethod
    def _increasing(cls, v):
        bad = next((i for i, (a, b) in enumerate(zip(v, v[1:])) if not (b > a)), None)
        if bad is not None:
            raise ValueError(f"Mach table {v} is not strictly increasing (entry {bad + 1}: "
                             f"{v[bad + 1]:g} after {v[bad]:g})")
        if not v[0] >= 0:
            raise ValueError(f"Mach numbers cannot be negative (first entry {v[0]:g})")
        if not v[-1] <= 5.0:
            raise ValueError(f"Mach table runs to {v[-1]:g}; the models stop at Mach 5 "
                             f"(is it a speed in knots?)")
        return v

    def _check(self, values, name, hi):
        if len(values) != len(self.mach):
            raise FieldError(name, f"{name} has {len(values)} entries but mach has {len(self.mach)}; "
                                   f"give one {name} per Mach number")
        for i, c in enumerate(values):
            _positive(f"{name} entry {i + 1}", c, hi, field=(name, i))


class CD0Table(_Table):
    cd0: list[Number] = Field(description="zero-lift drag coefficient at each Mach number")

    @model_validator(mode="after")
    def _len(self):
        self._check(self.cd0, "cd0", 0.5)
        return self


class K1Table(_Table):
    k1: list[Number] = Field(description="induced-drag factor at each Mach number")

    @model_validator(mode="after")
    def _len(self):
        self._check(self.k1, "k1", 2.0)
        return self


class CLMax(Strict):
    clean: LiftCoefficient = Field(description="clean-wing maximum lift coefficient")
    takeoff: Optional[LiftCoefficient] = Field(None, description="takeoff flaps (default: clean)")
    landing: Optional[LiftCoefficient] = Field(None, description="landing flaps (default: takeoff)")

    @field_validator("clean", "takeoff", "landing")
    @classmethod
    def _plausible(cls, v):
        if v is not None and not (0.2 <= v <= 4.5):
            raise ValueError(f"CLmax {v:g} is outside the plausible range 0.2 to 4.5")
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
        return _within("oswald_efficiency", v, 0.2, 1.0)

    @field_validator("k2")
    @classmethod
    def _k2(cls, v):
        return _within("k2", v, -0.5, 0.5)

    @field_validator("takeoff_drag_increment", "landing_drag_increment")
    @classmethod
    def _inc(cls, v):
        return _within("drag increment", v, 0.0, 0.3)

    @model_validator(mode="after")
    def _k1_source(self):
        if self.k1 is None and self.aspect_ratio is None:
            raise FieldError("aspect_ratio", "give k1, or aspect_ratio (with optional oswald_efficiency)")
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
        return _within("throttle_ratio", v, 0.9, 1.3, "0.9 to 1.3 (typical 1.0 to 1.08)")

    @field_validator("propeller_efficiency")
    @classmethod
    def _eta(cls, v):
        return _within("propeller_efficiency", v, 0.2, 0.95)


class SpeedLimit(Strict):
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None

    @model_validator(mode="after")
    def _one(self):
        if self.mach is None and self.speed is None:
            raise ValueError("give mach or speed")
        _positive("mach", self.mach, 5.0)
        _positive("speed", self.speed, 1700.0)
        return self


class EmptyComponents(Strict):
    model: Literal["components"]
    wing: ArealMass
    propulsion: EngineMass
    other: Fraction

    @model_validator(mode="after")
    def _ranges(self):
        _positive("wing", self.wing, 1000.0)
        _positive("propulsion", self.propulsion)
        if not (0.0 <= self.other < 1.0):
            raise FieldError("other", f"other {self.other:g} must be a fraction of takeoff mass in [0, 1)")
        return self


class EmptyFraction(Strict):
    model: Literal["fraction"]
    value: Fraction

    @field_validator("value")
    @classmethod
    def _v(cls, v):
        if not (0.0 < v < 1.0):
            raise ValueError(f"empty fraction {v:g} must lie between 0 and 1")
        return v


class EmptyStatistical(Strict):
    model: Literal["statistical"]
    preset: Optional[str] = Field(None, description="a named aircraft class of the published regression")
    a: Optional[Number] = Field(None, description="coefficient A (pound units) of We/W0 = A W0^C K_vs")
    c: Optional[Number] = None
    variable_sweep: bool = False
    b: Optional[Number] = Field(None, description="refined form: b of We/W0 = a + b W0^C1 A^C2 (T/W)^C3 (W/S)^C4 M^C5")
    exponents: Optional[list[Number]] = Field(None, description="refined form: C1..C5")
    max_mach: Optional[MachNumber] = None

    @model_validator(mode="after")
    def _given(self):
        from .weights import STATISTICAL_PRESETS
        if self.preset is not None and self.preset not in STATISTICAL_PRESETS:
            near = difflib.get_close_matches(self.preset, list(STATISTICAL_PRESETS), 1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise FieldError("preset", f"unknown preset {self.preset!r}{hint}; valid: "
                                       f"{', '.join(STATISTICAL_PRESETS)}")
        if self.preset is None and (self.a is None or self.c is None):
            raise FieldError("a" if self.a is None else "c", "give a preset, or the coefficients a and c")
        if self.exponents is not None and len(self.exponents) != 5:
            raise FieldError("exponents", f"exponents takes five numbers C1..C5, got {len(self.exponents)}")
        _positive("max_mach", self.max_mach, 5.0)
        return self


Empty = Annotated[Union[EmptyComponents, EmptyFraction, EmptyStatistical], Field(discriminator="model")]


class Fuel(Strict):
    fraction: Optional[Fraction] = None

    @field_validator("fraction")
    @classmethod
    def _f(cls, v):
        if v is not None and not (0.0 <= v < 1.0):
            raise ValueError(f"fuel fraction {v:g} must lie in [0, 1)")
        return v


class Weights(Strict):
    crew: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    payload: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    empty: Empty
    fuel: Fuel = Field(default_factory=Fuel)

    @model_validator(mode="after")
    def _fixed(self):
        for name in ("crew", "payload"):
            if not getattr(self, name).si >= 0:
                raise FieldError(name, f"{name} cannot be negative, got {getattr(self, name).text}")
        if not self.crew.si + self.payload.si > 0:
            raise FieldError("payload", "crew plus payload must be positive: it is what the weight "
                                        "closure scales")
        return self


class Aircraft(Strict):
    aerodynamics: Aerodynamics
    propulsion: Propulsion
    speed_limit: Optional[SpeedLimit] = None
    weights: Weights


# --------------------------------------------------------------------------
# Mission
# --------------------------------------------------------------------------


def _flight_condition(obj, need_speed: bool):
    """Shared checks of a flight condition: altitude, offset, Mach or speed, load factor."""
    _within("altitude", obj.altitude, H_MIN, H_MAX,
            f"the standard atmosphere model ({H_MIN:g} m to {H_MAX:g} m)")
    _within("temperature_offset", obj.temperature_offset, -80.0, 60.0, "-80 K to +60 K")
    mach, speed = getattr(obj, "mach", None), getattr(obj, "speed", None)
    if mach is not None and speed is not None:
        raise FieldError("speed", "give mach or speed, not both")
    if need_speed and mach is None and speed is None:
        raise FieldError("mach", "needs mach or speed (true airspeed)")
    if mach is not None and not (0.0 < mach <= 5.0):
        raise FieldError("mach", f"mach {mach:g} must lie in (0, 5]")
    if speed is not None:
        _positive("speed", speed, 1700.0)
    n = getattr(obj, "load_factor", None)
    if n is not None and not (0.0 < n <= 15.0):
        raise FieldError("load_factor", f"load_factor {n:g} must lie in (0, 15]")


class _Segment(Strict):
    name: Optional[Text] = None


class FixedSegment(_Segment):
    kind: Literal["fixed"]
    fraction: Fraction

    @field_validator("fraction")
    @classmethod
    def _f(cls, v):
        if not (0.0 < v <= 1.0):
            raise ValueError(f"segment weight fraction {v:g} must lie in (0, 1]")
        return v



class _Flown(_Segment):
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _flown(self):
        _flight_condition(self, need_speed=self.kind in ("combat", "maneuver"))
        _positive("tsfc", self.tsfc)
        _positive("range", getattr(self, "range", None), 4.0e7)
        _positive("time", getattr(self, "time", None), 1.0e6)
        return self


class CruiseSegment(_Flown):
    kind: Literal["cruise"]
    range: Length


class LoiterSegment(_Flown):
    kind: Literal["loiter"]
    time: Time


class CombatSegment(_Flown):
    kind: Literal["combat", "maneuver"]
    time: Time
    load_factor: LoadFactor = 1.0


Segment = Annotated[Union[FixedSegment, CruiseSegment, LoiterSegment, CombatSegment], Field(discriminator="kind")]


class Mission(Strict):
    tsfc: Optional[FuelConsumption] = None
    reserve: Fraction = 0.0
    trapped: Fraction = 0.0
    segments: list[Segment] = Field(min_length=1)

    @model_validator(mode="after")
    def _names(self):
        seen = {}
        for i, s in enumerate(self.segments):
            if s.name and s.name in seen:
                raise FieldError(("segments", i, "name"), f"duplicate segment name {s.name!r} (also "
                                 f"segment {seen[s.name] + 1}); names must be unique")
            if s.name:
                seen[s.name] = i
            if s.kind != "fixed" and s.tsfc is None and self.tsfc is None:
                raise FieldError(("segments", i), f"segment {i + 1} ({s.name or s.kind}) burns fuel but "
                                 f"no tsfc is given (mission.tsfc or the segment's own)")
        _positive("tsfc", self.tsfc)
        _within("reserve", self.reserve, 0.0, 0.5, "0 to 50 %")
        _within("trapped", self.trapped, 0.0, 0.1, "0 to 10 %")
        return self


# --------------------------------------------------------------------------
# Requirements
# --------------------------------------------------------------------------


class After(Strict):
    after: Text = Field(description="name of a mission segment: the weight at its end")


class _Req(Strict):
    id: Identifier = Field(description="unique name of the requirement, used in every report")
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    weight_fraction: Optional[Union[Fraction, After]] = None
    thrust_lapse: Optional[Number] = None
    config: Optional[Literal["clean", "takeoff", "landing"]] = None
    note: Optional[Text] = None

    _needs_speed = False      # fixed-speed kinds
    _speed_optional = False

    @model_validator(mode="after")
    def _common(self):
        _flight_condition(self, self._needs_speed)
        wf = self.weight_fraction
        if isinstance(wf, float) and not (0.0 < wf <= 1.0):
            raise FieldError("weight_fraction", f"weight_fraction {wf:g} must lie in (0, 1]: it is W/W_TO "
                                                f"at this condition")
        if self.thrust_lapse is not None and not (0.0 < self.thrust_lapse <= 3.0):
            raise FieldError("thrust_lapse", f"thrust_lapse {self.thrust_lapse:g} must lie in (0, 3]")
        for name in ("climb_rate", "excess_power"):
            v = getattr(self, name, None)
            if v is not None and not (0.0 <= v.si <= 500.0):
                raise FieldError(name, f"{name} {v.text} must lie between 0 and 500 m/s")
        return self


class StallSpeed(_Req):
    kind: Literal["stall-speed"]
    speed: Optional[Speed] = None
    mach: Optional[MachNumber] = None
    _needs_speed = True


class SustainedTurn(_Req):
    kind: Literal["sustained-turn"]
    load_factor: LoadFactor
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class MaxMach(_Req):
    kind: Literal["max-mach"]
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class Ceiling(_Req):
    kind: Literal["ceiling"]
    climb_rate: Speed = Field(default_factory=lambda: units.parse("100 ft/min", "speed"))


class Climb(_Req):
    kind: Literal["climb"]
    climb_rate: Speed
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None


class ExcessPower(_Req):
    kind: Literal["excess-power"]
    excess_power: Speed
    load_factor: LoadFactor = 1.0
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    _needs_speed = True


class Cruise(_Req):
    kind: Literal["cruise"]
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    throttle: Fraction = 1.0
    _needs_speed = True

    @field_validator("throttle")
    @classmethod
    def _thr(cls, v):
        if not (0.0 < v <= 1.0):
            raise ValueError(f"throttle {v:g} must lie in (0, 1]")
        return v


class InstantaneousTurn(_Req):
    kind: Literal["instantaneous-turn"]
    load_factor: LoadFactor
    mach: Optional[MachNumber] = None
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
        _positive("ground_roll", self.ground_roll, 1.0e5)
        _within("rolling_friction", self.rolling_friction, 0.0, 0.3)
        _within("liftoff_speed_ratio", self.liftoff_speed_ratio, 1.0, 1.5)
        _within("ground_lift_coefficient", self.ground_lift_coefficient, 0.0, 4.5)
        return self


class Landing(_Req):
    kind: Literal["landing"]
    ground_roll: Length
    braking_friction: Number = 0.3
    touchdown_speed_ratio: Number = 1.15
    free_roll_time: Time = Field(default_factory=lambda: units.parse("0 s", "time"))

    @model_validator(mode="after")
    def _ranges(self):
        _positive("ground_roll", self.ground_roll, 1.0e5)
        _within("braking_friction", self.braking_friction, 0.05, 1.0)
        _within("touchdown_speed_ratio", self.touchdown_speed_ratio, 1.0, 1.5)
        _within("free_roll_time", self.free_roll_time, 0.0, 60.0, "0 to 60 s")
        return self


class ClimbGradient(_Req):
    kind: Literal["climb-gradient"]
    gradient: Fraction
    engines_out: int = Field(1, ge=0)
    speed_ratio: Number = 1.2

    @model_validator(mode="after")
    def _ranges(self):
        _within("gradient", self.gradient, -0.1, 0.5, "-10 % to 50 %")
        _within("speed_ratio", self.speed_ratio, 1.0, 2.0)
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
        for name, top in (("wing_loading", 1.0e5), ("thrust_to_weight", 20.0), ("power_to_weight", 2000.0)):
            r = getattr(self, name)
            if r is not None:
                lo, hi = (float(x) for x in r)
                if not (0 <= lo < hi):
                    raise FieldError(name, f"{name} range [{lo:g}, {hi:g}] (SI) must be increasing and "
                                           f"non-negative")
                if not hi <= top:
                    raise FieldError((name, 1), f"{name} upper bound {hi:g} (SI) is not plausible "
                                                f"(at most {top:g})")
        return self


class RequirementFile(Strict):
    title: Text = "Untitled concept"
    aircraft: Aircraft
    mission: Optional[Mission] = None
    requirements: list[Requirement] = Field(min_length=1)
    design_space: Optional[DesignSpace] = None
    objective: Literal["takeoff-mass", "thrust", "wing-area", "fuel-mass"] = "takeoff-mass"

    @model_validator(mode="after")
    def _cross(self):
        seen = {}
        for i, r in enumerate(self.requirements):
            if r.id in seen:
                raise FieldError(("requirements", i, "id"), f"duplicate requirement id {r.id!r} (also "
                                 f"requirement {seen[r.id] + 1}); every id must be unique")
            seen[r.id] = i
        prop = self.aircraft.propulsion.type in PROPELLER_TYPES
        kind = "a propeller aircraft" if prop else "a jet"
        emp = self.aircraft.weights.empty
        where = ("aircraft", "weights", "empty", "propulsion")
        if isinstance(emp, EmptyComponents):
            is_power = units.is_dimension(emp.propulsion, "mass_per_power")
            if prop and not is_power:
                raise FieldError(where, f"{kind} gives mass per sea-level power, e.g. "
                                        f"{units.DIMENSIONS['mass_per_power'].examples}, got {emp.propulsion.text}")
            if not prop and is_power:
                raise FieldError(where, f"{kind} gives mass per sea-level thrust, e.g. '0.025 kg/N', "
                                        f"got {emp.propulsion.text}")
        if self.mission is not None:
            want = "psfc" if prop else "tsfc"
            example = "'0.45 lb/(hp*h)'" if prop else "'0.9 1/h' or '22 mg/(N*s)'"
            places = [(("mission", "tsfc"), self.mission.tsfc)] + [
                (("mission", "segments", i, "tsfc"), getattr(s, "tsfc", None))
                for i, s in enumerate(self.mission.segments)]
            for path, q in places:
                if q is not None and not units.is_dimension(q, want):
                    raise FieldError(path, f"{kind} burns fuel per {'power' if prop else 'thrust'}: give "
                                           f"{'power' if prop else 'thrust'}-specific consumption such as "
                                           f"{example}, got {q.text}")
        names = [s.name for s in self.mission.segments if s.name] if self.mission else []
        engines = self.aircraft.propulsion.engines
        for i, r in enumerate(self.requirements):
            if isinstance(r.weight_fraction, After) and r.weight_fraction.after not in names:
                near = difflib.get_close_matches(r.weight_fraction.after, names, 1)
                hint = f" (did you mean {near[0]!r}?)" if near else ""
                raise FieldError(("requirements", i, "weight_fraction", "after"),
                                 f"{r.weight_fraction.after!r} names no mission segment{hint}; segments: "
                                 f"{', '.join(names) or 'none (there is no mission with named segments)'}")
            if isinstance(r, ClimbGradient) and r.engines_out >= engines:
                raise FieldError(("requirements", i, "engines_out"),
                                 f"engines_out {r.engines_out} leaves no engine running (the aircraft "
                                 f"has {engines})")
            if r.kind not in ("stall-speed", "instantaneous-turn"):     # these use CLmax only
                _within_table(self.aircraft.aerodynamics.mach_max, r, ("requirements", i))
        if self.mission is not None:
            for i, seg in enumerate(self.mission.segments):
                if seg.kind != "fixed":
                    _within_table(self.aircraft.aerodynamics.mach_max, seg, ("mission", "segments", i))
        fuel = self.aircraft.weights.fuel.fraction
        if fuel is None and self.mission is None:
            raise FieldError(("aircraft", "weights", "fuel"),
                             "give weights.fuel.fraction, or a mission to compute the fuel from")
        if fuel is not None and self.mission is not None:
            raise FieldError(("aircraft", "weights", "fuel", "fraction"),
                             "give weights.fuel.fraction or a mission, not both")
        ds = self.design_space
        if ds is not None:
            if prop and ds.thrust_to_weight is not None:
                raise FieldError(("design_space", "thrust_to_weight"), "a propeller aircraft is sized by "
                                 "power_to_weight (W/N), not thrust_to_weight")
            if not prop and ds.power_to_weight is not None:
                raise FieldError(("design_space", "power_to_weight"),
                                 "a jet is sized by thrust_to_weight, not power_to_weight")
        return self


def _within_table(mach_max, obj, where):
    """A flight condition's Mach number must lie inside the drag polar's Mach table."""
    if not math.isfinite(mach_max):
        return
    mach, speed = getattr(obj, "mach", None), getattr(obj, "speed", None)
    if mach is not None and mach > mach_max:
        raise FieldError(where + ("mach",), f"mach {mach:g} lies above the drag polar's Mach table (up to "
                                            f"{mach_max:g}); extend the table or lower the Mach")
    if speed is not None:
        from .atmosphere import isa

        M = speed.si / float(isa(obj.altitude.si, obj.temperature_offset.si).speed_of_sound)
        if M > mach_max:
            raise FieldError(where + ("speed",), f"speed {speed.text} is Mach {M:.3f} here, above the drag "
                                                 f"polar's Mach table (up to {mach_max:g}); extend the "
                                                 f"table or lower the speed")


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
    """Validate already-parsed YAML data; raise a located InputError.

    The error describes the first problem in file order and carries the
    others in ``InputError.others``.
    """
    lines = lines or {(): 1}
    if not isinstance(data, dict):
        raise InputError(f"a requirement file is a mapping with title, aircraft and requirements, "
                         f"got {units.describe(data)}", filename, 1)
    try:
        model = RequirementFile.model_validate(data)
    except ValidationError as e:
        errs = located(e, data, lines, filename, RequirementFile)
        if not errs:      # cannot happen with pydantic's errors, but never lose one
            raise InputError(f"invalid requirement file: {e}", filename) from None
        first = errs[0]
        raise InputError(first.message, first.file, first.line, first.field, errs[1:]) from None
    except RecursionError:
        raise InputError("a value refers to itself (cyclic alias) or is nested too deeply", filename) from None
    return Spec(model, data, filename, text)


def load_text(text: str, filename: str = "<memory>") -> Spec:
    data, lines = read_yaml(text, filename, EMPTY)
    return validate(data, filename, lines, text)


MAX_BYTES = 5_000_000     # a requirement file is a few kilobytes


def load(path) -> Spec:
    """Read and validate a requirement file; raises :class:`InputError`.

    The file is only read, never written.
    """
    p = Path(path)
    try:
        size = p.stat().st_size
        if size > MAX_BYTES:
            raise InputError(f"the file has {size:,} bytes; a requirement file is YAML text of a few "
                             f"kilobytes (is this the right file?)", str(path))
        raw = p.read_bytes()
    except OSError as e:
        raise InputError(f"cannot read the file: {e.strerror or e}", str(path)) from None
    if b"\x00" in raw:
        line = raw.count(b"\n", 0, raw.index(b"\x00")) + 1
        raise InputError("not a text file (it contains NUL bytes); a requirement file is YAML text",
                         str(path), line)
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as e:
        line = raw.count(b"\n", 0, e.start) + 1
        raise InputError(f"not UTF-8 text (byte {raw[e.start]:#04x} at offset {e.start}); a requirement "
                         f"file is YAML text, saved as UTF-8", str(path), line) from None
    if text.startswith("\ufeff"):      # a byte-order mark some editors write
        text = text[1:]
    return load_text(text, str(path))


def json_schema() -> dict:
    """JSON Schema (draft 2020-12) of requirement files, from the same models.

    It checks what JSON Schema can express: key names, value types, the
    kinds, models and engine types, the number-then-unit form of dimensional
    values and the ranges of CLmax, Mach numbers and load factors. Units,
    the other ranges and cross-field rules are checked by :func:`load` only.
    """
    schema = units.no_nulls(RequirementFile.model_json_schema())
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "sizing requirement file"
    schema["description"] = ("Performance requirements and aircraft data for requirement-driven "
                             "conceptual sizing (see DESIGN.md §4). Dimensional values are strings "
                             "with a unit, e.g. '35000 ft', '250 kn'.")
    return schema

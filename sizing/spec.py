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
import re
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


# a number, then a unit (which starts with a letter or a symbol, or is 1/...)
DIMENSIONAL = r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*([^\s\d.+-]|1\s*/).*$"


def _q(dim: str):
    d = units.DIMENSIONS[dim]
    text = {"type": "string", "description": f"{d.name} with a unit, e.g. {d.examples}", "pattern": DIMENSIONAL}
    if dim == "temperature_difference":      # a bare 0 needs no unit
        text = {"anyOf": [text, {"const": 0}], "description": text["description"]}
    return Annotated[
        units.Quantity,
        BeforeValidator(lambda v, _d=dim: v if isinstance(v, units.Quantity) else units.parse(v, _d)),
        WithJsonSchema(text),
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
                       WithJsonSchema({"type": "string", "pattern": DIMENSIONAL, "description": "mass per sea-level thrust "
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
                            WithJsonSchema({"type": "string", "pattern": DIMENSIONAL, "description": "thrust-specific "
                                            "('0.9 1/h', '22 mg/(N*s)') or power-specific "
                                            "('0.45 lb/(hp*h)') fuel consumption"})]

Fraction = Annotated[float, BeforeValidator(units.parse_fraction),
                     WithJsonSchema({"anyOf": [{"type": "number"},
                                               {"type": "string", "pattern": r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*%?\s*$"}],
                                     "description": "a number, or a percentage such as '6 %'"})]


_NUMERIC = r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*$"


def _number(v):
    if v is None:
        raise ValueError("no value given; write a number here, or remove the key to use the default")
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        if isinstance(v, str):
            try:
                out = float(v)
            except ValueError:
                out = None
            if out is not None and math.isfinite(out):
                return out
            if out is None and _looks_dimensional(v):
                raise ValueError(f"{v!r} has a unit, but this value is a plain number (dimensionless); "
                                 f"write it without the unit")
        raise ValueError(f"{v!r} is not a number (this value is dimensionless)")
    if not math.isfinite(v):
        raise ValueError(f"{v!r} is not a finite number")
    return float(v)


def _looks_dimensional(text: str) -> bool:
    parts = text.split(None, 1)
    if len(parts) != 2:
        return False
    try:
        float(parts[0])
    except ValueError:
        return False
    return True


Number = Annotated[float, BeforeValidator(_number),
                   WithJsonSchema({"anyOf": [{"type": "number"}, {"type": "string", "pattern": _NUMERIC}]})]


def _bounded(lo=None, hi=None, open_lo=False):
    """A Number whose JSON Schema carries its plausible range (the validators check it too)."""
    num: dict = {"type": "number"}
    if lo is not None:
        num["exclusiveMinimum" if open_lo else "minimum"] = lo
    if hi is not None:
        num["maximum"] = hi
    return Annotated[float, BeforeValidator(_number),
                     WithJsonSchema({"anyOf": [num, {"type": "string", "pattern": _NUMERIC}]})]


MachNumber = _bounded(0.0, 5.0, open_lo=True)
LoadFactor = _bounded(0.0, 15.0, open_lo=True)
LiftCoefficient = _bounded(0.2, 4.5)


def _text(v):
    """Free text (title, note, names): numbers and dates are read as their text."""
    if isinstance(v, str):
        return v
    if v is None:
        raise ValueError("no text given")
    if isinstance(v, (dict, list)):
        raise ValueError(f"expected text, got a {'mapping' if isinstance(v, dict) else 'list'}")
    return str(v)


Text = Annotated[str, BeforeValidator(_text), WithJsonSchema({"type": ["string", "number"]})]


def _identifier(v):
    if isinstance(v, str):
        if not v.strip():
            raise ValueError("id is empty; give each requirement a short unique name such as 'turn-4g'")
        return v
    raise ValueError(f"id {v!r} must be text: write a name such as 'turn-4g', or quote it (id: '{v}')")


Identifier = Annotated[str, BeforeValidator(_identifier), WithJsonSchema({"type": "string", "minLength": 1})]


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


class FieldError(ValueError):
    """A model-level check that blames one field (path relative to the model)."""

    def __init__(self, field, message: str):
        self.path = tuple(field) if isinstance(field, (tuple, list)) else (field,)
        super().__init__(message)


def _positive(name, v, hi=None, field=None):
    """Positive and (optionally) at most ``hi``; raises FieldError on ``field`` (default ``name``)."""
    if v is None:
        return v
    val = v.si if isinstance(v, units.Quantity) else v
    shown = getattr(v, "text", v)
    if not val > 0:
        raise FieldError(field or name, f"{name} must be positive, got {shown}")
    if hi is not None and not val <= hi:
        raise FieldError(field or name, f"{name} {shown} is not plausible (at most {hi:g})")
    return v


def _within(name, v, lo, hi, what="", field=None):
    """``lo <= v <= hi`` (NaN-safe), else a FieldError naming the range."""
    if v is None:
        return v
    val = v.si if isinstance(v, units.Quantity) else v
    if not (lo <= val <= hi):
        shown = getattr(v, "text", v)
        raise FieldError(field or name, f"{name} {shown} is outside {what or f'{lo:g} to {hi:g}'}")
    return v


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



class CruiseSegment(_Segment):
    kind: Literal["cruise"]
    range: Length
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _ranges(self):
        _positive("range", self.range, 4.0e7)
        _flight_condition(self, need_speed=False)
        _positive("tsfc", self.tsfc)
        return self


class LoiterSegment(_Segment):
    kind: Literal["loiter"]
    time: Time
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _ranges(self):
        _positive("time", self.time, 1.0e6)
        _flight_condition(self, need_speed=False)
        _positive("tsfc", self.tsfc)
        return self


class CombatSegment(_Segment):
    kind: Literal["combat", "maneuver"]
    time: Time
    load_factor: LoadFactor = 1.0
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _speed(self):
        _positive("time", self.time, 1.0e6)
        _flight_condition(self, need_speed=True)
        _positive("tsfc", self.tsfc)
        return self


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
            is_power = _is_dim(emp.propulsion, "mass_per_power")
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
                if q is not None and not _is_dim(q, want):
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


def _is_dim(q: units.Quantity, dim: str) -> bool:
    try:
        units.parse(q.text, dim)
        return True
    except units.UnitError:
        return False


# --------------------------------------------------------------------------
# Loading with line numbers
# --------------------------------------------------------------------------

MAX_NODES = 100_000      # more values than this (through aliases) is not a requirement file

_YAML_HINTS = (
    ("'\\t'", "indent with spaces, not tabs"),
    ("mapping values are not allowed", "a missing space after ':', a missing quote, or a wrong indent?"),
    ("could not find expected ':'", "a key without ':' or an unclosed quote?"),
    ("expected <block end>", "the indentation does not line up with the lines above"),
    ("found undefined alias", "an alias (*name) needs an anchor (&name) above it"),
)


def _yaml_with_lines(text: str, filename: str):
    """Parse YAML text into (data, lines): lines maps key paths to line numbers."""
    import yaml

    try:
        loader = yaml.SafeLoader(text)
        try:
            node = loader.get_single_node()
            if node is None:
                raise InputError("the file is empty; a requirement file is a mapping with title, aircraft "
                                 "and requirements", filename, 1)
            lines = _node_lines(node, filename)
            data = loader.construct_document(node)
        finally:
            loader.dispose()
    except yaml.MarkedYAMLError as e:
        mark = e.problem_mark or e.context_mark
        line = mark.line + 1 if mark else None
        problem = e.problem or str(e)
        hint = next((h for key, h in _YAML_HINTS if key in problem), "")
        col = f" (column {mark.column + 1})" if mark else ""
        cm = e.context_mark
        if e.context and cm is not None and mark is not None and cm.line != mark.line:
            problem += f"{col}, {e.context} that starts on line {cm.line + 1}"
        else:
            problem += col
        raise InputError(f"YAML syntax: {problem}" + (f"; {hint}" if hint else ""), filename, line) from None
    except yaml.reader.ReaderError as e:
        line = text.count("\n", 0, max(e.position, 0)) + 1
        ch = chr(e.character) if isinstance(e.character, int) else e.character
        raise InputError(f"not YAML text: the control character {ch!r} cannot appear in a YAML file "
                         f"(is it a binary file?)", filename, line) from None
    except yaml.YAMLError as e:
        raise InputError(f"YAML: {e}", filename) from None
    except RecursionError:
        raise InputError("the YAML is nested too deeply to be a requirement file", filename) from None
    return data, lines


def _node_lines(root, filename):
    """Line of every key path; rejects duplicate keys, cyclic and exploding aliases."""
    import yaml

    lines: dict = {(): root.start_mark.line + 1}
    stack = [(root, (), frozenset(), False)]
    count = 0
    while stack:
        n, path, ancestors, merged = stack.pop()
        count += 1
        if count > MAX_NODES:
            raise InputError(f"the file expands to more than {MAX_NODES:,} values (through aliases); "
                             f"a requirement file is much smaller", filename, n.start_mark.line + 1)
        if not isinstance(n, (yaml.MappingNode, yaml.SequenceNode)):
            continue
        if id(n) in ancestors:
            raise InputError("an alias refers to a value that contains it (a cycle)", filename,
                             n.start_mark.line + 1, _show_path(path))
        inner = ancestors | {id(n)}
        if isinstance(n, yaml.SequenceNode):
            for i, item in enumerate(n.value):
                lines.setdefault(path + (i,), item.start_mark.line + 1)
                stack.append((item, path + (i,), inner, merged))
            continue
        seen: dict = {}
        for k, v in n.value:
            if isinstance(k, yaml.ScalarNode) and k.tag == "tag:yaml.org,2002:merge":
                for m in (v.value if isinstance(v, yaml.SequenceNode) else [v]):
                    stack.append((m, path, inner, True))
                continue
            key = k.value if isinstance(k, yaml.ScalarNode) else repr(k.value)
            line = k.start_mark.line + 1
            if key in seen and not merged:
                raise InputError(f"duplicate key {key!r} (first on line {seen[key]}); YAML would keep only "
                                 f"the last one, so remove or rename one", filename, line,
                                 _show_path(path + (key,)))
            seen[key] = line
            if merged:
                lines.setdefault(path + (key,), line)
            else:
                lines[path + (key,)] = line
            stack.append((v, path + (key,), inner, merged))
    return lines


def _show_path(path) -> str:
    out = ""
    for item in path:
        out += f"[{item}]" if isinstance(item, int) else ("." if out else "") + str(item)
    return out or "(top level)"


def _child(node, item):
    """(True, child) when ``item`` is a key or index of ``node``, else (False, None)."""
    if isinstance(node, dict):
        try:
            if item in node:
                return True, node[item]
        except TypeError:
            return False, None
    elif isinstance(node, list) and isinstance(item, int) and not isinstance(item, bool) \
            and 0 <= item < len(node):
        return True, node[item]
    return False, None


def _locate(loc, data, lines, tail=()):
    """Map a pydantic error location to (line, readable field path, data path, node).

    Items of ``loc`` that are not keys of the data (pydantic's names of union
    members) are skipped; ``tail`` items (a FieldError's field, a missing
    key) are shown even where the data lack them.
    """
    path: tuple = ()
    shown = ""
    node = data
    for k, item in enumerate(tuple(loc) + tuple(tail)):
        is_tail = k >= len(loc)
        found, nxt = _child(node, item)
        if not found:
            if is_tail:
                shown += f"[{item}]" if isinstance(item, int) else ("." if shown else "") + str(item)
                node = None
            continue
        if isinstance(node, list):
            label = f"[{item}]"
            if isinstance(nxt, dict) and isinstance(nxt.get("id"), (str, int, float)):
                label += f" (id {nxt['id']})"
            shown += label
        else:
            shown += ("." if shown else "") + str(item)
        path = path + (item,)
        node = nxt
    line = None
    for k in range(len(path), -1, -1):
        if path[:k] in lines:
            line = lines[path[:k]]
            break
    return line, shown or "(top level)", path, node


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


def _candidates(annotation) -> list:
    import typing

    out, stack = [], [annotation]
    while stack:
        a = stack.pop()
        if isinstance(a, type) and issubclass(a, BaseModel):
            out.append(a)
        else:
            stack.extend(reversed(typing.get_args(a)))
    return out


def _pick_model(annotation, node):
    import typing

    candidates = _candidates(annotation)
    if not candidates:
        return None
    if isinstance(node, dict):
        for c in candidates:
            for disc in ("kind", "model"):
                f = c.model_fields.get(disc)
                if f is not None and node.get(disc) in typing.get_args(f.annotation):
                    return c
    return candidates[0]


def _tags_for(path, data, disc: str) -> list:
    """Valid discriminator values (kinds, models) of the union at ``path``."""
    import typing

    strs = [k for k, item in enumerate(path) if isinstance(item, str)]
    if not strs:
        return []
    k = strs[-1]
    parent = _model_for(path[:k], data)
    field = parent.model_fields.get(path[k]) if parent is not None else None
    if field is None:
        return []
    tags = []
    for c in _candidates(field.annotation):
        f = c.model_fields.get(disc)
        if f is not None:
            tags.extend(typing.get_args(f.annotation))
    return tags


def _model_names() -> set:
    return {n for n, o in globals().items() if isinstance(o, type) and issubclass(o, BaseModel)}


def _union_split(e, data):
    """(data path of a union, name of the member) for an error inside a plain union, else None."""
    loc = tuple(e.get("loc", ()))
    node, prefix = data, ()
    for i, item in enumerate(loc):
        found, nxt = _child(node, item)
        if found:
            node, prefix = nxt, prefix + (item,)
            continue
        if e.get("type") == "missing" and i == len(loc) - 1:
            return None
        return prefix, str(item)
    return None


def _data_path(loc, data) -> tuple:
    """The items of a pydantic location that are keys or indices of the data."""
    node, path = data, ()
    for item in loc:
        found, nxt = _child(node, item)
        if found:
            node, path = nxt, path + (item,)
    return path


def _node_at(data, path):
    node = data
    for item in path:
        found, node = _child(node, item)
        if not found:
            return None
    return node


def _pick_branches(errors, data):
    """For a value that failed every member of a union (``cd0: number | table``),
    keep only the errors of the member the user evidently meant."""
    names = _model_names()
    groups: dict = {}
    for i, e in enumerate(errors):
        split = _union_split(e, data)
        if split is not None:
            groups.setdefault(split[0], {}).setdefault(split[1], []).append(i)
    drop = set()
    for prefix, branches in groups.items():
        if len(branches) < 2:
            continue
        is_map = isinstance(_node_at(data, prefix), dict)

        def is_model(tag):
            return any(n in names for n in re.findall(r"[A-Za-z_][A-Za-z0-9_]*", tag))

        keep = [t for t in branches if is_model(t) == is_map] or list(branches)
        best = min(keep, key=lambda t: len(branches[t]))
        for t, idx in branches.items():
            if t != best:
                drop.update(idx)
    return [e for i, e in enumerate(errors) if i not in drop]


def _show(node) -> str:
    if node is None:
        return "nothing (an empty value)"
    if isinstance(node, dict):
        return "a mapping"
    if isinstance(node, list):
        return "a list"
    text = repr(node)
    return text if len(text) <= 60 else text[:57] + "..."


def _near(word, valid) -> str:
    near = difflib.get_close_matches(str(word), [str(v) for v in valid], 1)
    return f" (did you mean {near[0]!r}?)" if near else ""


def _message(e, data, path, node, field):
    """One readable message for one pydantic error; returns (message, field)."""
    t, ctx, loc = e.get("type"), e.get("ctx") or {}, tuple(e.get("loc", ()))
    msg = e.get("msg", "invalid")
    if msg.startswith("Value error, "):
        msg = msg[len("Value error, "):]
    if t == "extra_forbidden":
        key = loc[-1]
        parent = _model_for(path[:-1], data) if path and path[-1] == key else _model_for(path, data)
        valid = list(parent.model_fields) if parent else []
        msg = f"unknown key {key!r}" + _near(key, valid)
        if valid:
            msg += f"; valid keys here: {', '.join(valid)}"
    elif t == "missing":
        parent = _model_for(path, data)
        f = parent.model_fields.get(loc[-1]) if parent is not None else None
        what = f" ({f.description})" if f is not None and f.description else ""
        msg = f"missing required field {loc[-1]!r}{what}"
    elif t == "union_tag_invalid":
        disc = str(ctx.get("discriminator", "kind")).strip("'")
        tags = _tags_for(path, data, disc)
        msg = (f"unknown {disc} {ctx.get('tag')!r}" + _near(ctx.get("tag"), tags) +
               f"; valid: {', '.join(tags) or ctx.get('expected_tags')}")
    elif t == "union_tag_not_found":
        disc = str(ctx.get("discriminator", "kind")).strip("'")
        tags = _tags_for(path, data, disc)
        if isinstance(node, dict):
            msg = f"missing {disc!r}; valid: {', '.join(tags)}"
        else:
            msg = f"expected a mapping with {disc!r} ({', '.join(tags)}), got {_show(node)}"
    elif t == "literal_error":
        valid = re.findall(r"'([^']*)'", str(ctx.get("expected", "")))
        msg = f"{_show(node)} is not valid{_near(node, valid)}; valid: {', '.join(valid)}"
    elif t in ("model_type", "dict_type", "model_attributes_type"):
        msg = f"expected a mapping (indented 'key: value' lines), got {_show(node)}"
    elif t == "list_type":
        msg = f"expected a list (lines starting with '- '), got {_show(node)}"
    elif t == "tuple_type":
        msg = f"expected a pair [low, high], got {_show(node)}"
    elif t in ("too_short", "too_long"):
        n, lo, hi = ctx.get("actual_length"), ctx.get("min_length"), ctx.get("max_length")
        want = f"at least {lo}" if t == "too_short" else f"at most {hi}"
        msg = f"has {n} entr{'y' if n == 1 else 'ies'}; needs {want}"
    elif t in ("int_type", "int_parsing", "int_from_float"):
        msg = f"expected a whole number, got {_show(node)}"
    elif t in ("greater_than_equal", "greater_than"):
        msg = f"{_show(node)} is too small: the smallest allowed value is {ctx.get('ge', ctx.get('gt'))}"
    elif t in ("less_than_equal", "less_than"):
        msg = f"{_show(node)} is too large: the largest allowed value is {ctx.get('le', ctx.get('lt'))}"
    elif t in ("bool_type", "bool_parsing"):
        msg = f"expected true or false, got {_show(node)}"
    elif t == "string_type":
        msg = f"expected text, got {_show(node)}"
    elif t == "invalid_key":
        parent = _model_for(path[:-1], data)
        valid = f"; valid keys here: {', '.join(parent.model_fields)}" if parent is not None else ""
        msg = f"key {loc[-1]!r} is not a name{valid}"
    elif t == "recursion_loop":
        msg = "a value refers to itself (cyclic alias)"
    return msg, field


def _messages(err: ValidationError, data, lines, filename):
    """Located InputErrors for a pydantic ValidationError, in file order."""
    errors = _pick_branches(err.errors(include_url=False), data)
    out = []
    for e in errors:
        loc = tuple(e.get("loc", ()))
        exc = (e.get("ctx") or {}).get("error")
        tail = ()
        if isinstance(exc, FieldError) and isinstance(_node_at(data, _data_path(loc, data)), dict):
            tail = exc.path       # a model-level check blaming one of the model's fields
        missing = e.get("type") == "missing"
        if missing:
            loc, tail = loc[:-1], (e["loc"][-1],)
        line, field, path, node = _locate(loc, data, lines, tail)
        if missing:
            key = e["loc"][-1]
        else:
            key = path[-1] if path else None
        msg, field = _message(e, data, path, node, field)
        parent = path if missing else path[:-1]
        out.append((e, InputError(msg, filename, line, field), parent, key))
    # a misspelt key also shows up as a missing one: keep only the spelling hint
    suggested = set()
    for e, ie, parent, key in out:
        m = re.search(r"did you mean '([^']+)'", ie.message)
        if e.get("type") == "extra_forbidden" and m:
            suggested.add((parent, m.group(1)))
    kept = [ie for e, ie, parent, key in out
            if not (e.get("type") == "missing" and (parent, key) in suggested)]
    kept.sort(key=lambda ie: ie.line if ie.line is not None else 10 ** 9)
    return kept


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
                         f"got {_show(data)}", filename, 1)
    try:
        model = RequirementFile.model_validate(data)
    except ValidationError as e:
        errs = _messages(e, data, lines, filename)
        if not errs:      # cannot happen with pydantic's errors, but never lose one
            raise InputError(f"invalid requirement file: {e}", filename) from None
        first = errs[0]
        raise InputError(first.message, first.file, first.line, first.field, errs[1:]) from None
    except RecursionError:
        raise InputError("a value refers to itself (cyclic alias) or is nested too deeply", filename) from None
    return Spec(model, data, filename, text)


def load_text(text: str, filename: str = "<memory>") -> Spec:
    data, lines = _yaml_with_lines(text, filename)
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
    schema = _no_nulls(RequirementFile.model_json_schema())
    schema["$schema"] = "https://json-schema.org/draft/2020-12/schema"
    schema["title"] = "sizing requirement file"
    schema["description"] = ("Performance requirements and aircraft data for requirement-driven "
                             "conceptual sizing (see DESIGN.md §4). Dimensional values are strings "
                             "with a unit, e.g. '35000 ft', '250 kn'.")
    return schema


def _no_nulls(node):
    """Drop pydantic's ``{"type": "null"}`` alternatives and null defaults: an
    empty value is an error in a requirement file (leave the key out instead)."""
    if isinstance(node, dict):
        out = {}
        for k, v in node.items():
            if k == "default" and v is None:
                continue
            if k == "anyOf" and isinstance(v, list):
                v = [a for a in v if a != {"type": "null"}]
                if len(v) == 1 and isinstance(v[0], dict):
                    inner = _no_nulls(v[0])
                    out.update({kk: vv for kk, vv in inner.items() if kk not in out})
                    continue
            out[k] = _no_nulls(v)
        return out
    if isinstance(node, list):
        return [_no_nulls(v) for v in node]
    return node

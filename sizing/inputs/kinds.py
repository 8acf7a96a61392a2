"""Requirement models: one per requirement kind (the ``requirements`` list of a file)."""
from __future__ import annotations

from typing import Annotated, Literal, Optional, Union

from pydantic import Field, field_validator, model_validator

from ..common.errors import FieldError
from . import units
from .fields import (
    Angle,
    Count,
    Fraction,
    Identifier,
    Length,
    LoadFactor,
    MachNumber,
    Name,
    Number,
    Speed,
    Strict,
    TempDelta,
    Text,
    Time,
)
from .fields import positive as _positive
from .fields import within as _within
from .mission import flight_condition

_TAS = Field(None, description="true airspeed")
_CAS = Field(None, description="calibrated airspeed (standard pitot relation, subsonic)")
_EAS = Field(None, description="equivalent airspeed, TAS sqrt(sigma)")


def _one_of(model, keys, what):
    """Exactly one of ``keys`` given; a located FieldError otherwise."""
    given = [k for k in keys if getattr(model, k, None) is not None]
    if len(given) > 1:
        raise FieldError(given[1], f"give one of {', '.join(keys[:-1])} or {keys[-1]} ({what}), not "
                                   f"{' and '.join(given)}")
    if not given:
        raise FieldError(keys[0], f"give one of {', '.join(keys[:-1])} or {keys[-1]} ({what})")
    return given[0]


def _min_speed_factor(v):
    return _within("min_speed_factor", v, 1.0, 2.0, "1.0 to 2.0 (multiple of the stall speed)")


def _engines_out(v):
    if v is not None and v < 0:
        raise FieldError("engines_out", f"engines_out {v} cannot be negative")
    return v


class After(Strict):
    after: Name = Field(description="name of a mission segment: the weight at its end")


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
        flight_condition(self, self._needs_speed)
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
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    mach: Optional[MachNumber] = None
    _needs_speed = True


def _turning(obj):
    """A level turn needs a load factor above 1 (n = 1/cos(bank), Gudmundsson Eq. (3-1),
    docs/references.md §6.1): n <= 1 is wings-level flight, not a turn."""
    if not obj.load_factor > 1.0:
        raise FieldError("load_factor", f"a {obj.kind} needs load_factor above 1 (n = 1/cos(bank)), "
                                        f"got {obj.load_factor:g}; n = 1 is wings-level flight")
    return obj


class ApproachSpeed(_Req):
    kind: Literal["approach-speed"]
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    factor: Number = Field(1.3, description="approach speed over the landing-configuration stall speed")
    _needs_speed = True

    @model_validator(mode="after")
    def _ranges(self):
        _within("factor", self.factor, 1.0, 2.0, "1.0 to 2.0 (multiple of the stall speed)")
        return self


class SustainedTurn(_Req):
    kind: Literal["sustained-turn"]
    load_factor: LoadFactor
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    _needs_speed = True

    @model_validator(mode="after")
    def _turn(self):
        return _turning(self)


class MaxMach(_Req):
    kind: Literal["max-mach"]
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    _needs_speed = True


class Ceiling(_Req):
    kind: Literal["ceiling"]
    climb_rate: Speed = Field(default_factory=lambda: units.parse("100 ft/min", "speed"))
    engines_out: Count = Field(0, description="inoperative engines")
    min_speed_factor: Number = Field(1.2, description="free speed at least this multiple of the stall speed")

    @model_validator(mode="after")
    def _ranges(self):
        _engines_out(self.engines_out)
        _min_speed_factor(self.min_speed_factor)
        return self


class Climb(_Req):
    kind: Literal["climb"]
    climb_rate: Speed
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    engines_out: Count = Field(0, description="inoperative engines")
    min_speed_factor: Number = Field(1.2, description="free speed (no speed given) at least this multiple "
                                                      "of the stall speed")

    @model_validator(mode="after")
    def _ranges(self):
        _engines_out(self.engines_out)
        _min_speed_factor(self.min_speed_factor)
        return self


class ExcessPower(_Req):
    kind: Literal["excess-power"]
    excess_power: Speed
    load_factor: LoadFactor = 1.0
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    _needs_speed = True


class Cruise(_Req):
    kind: Literal["cruise"]
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
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
    speed: Optional[Speed] = _TAS
    cas: Optional[Speed] = _CAS
    eas: Optional[Speed] = _EAS
    _needs_speed = True

    @model_validator(mode="after")
    def _turn(self):
        return _turning(self)


TAKEOFF_FORMS = ("ground_roll", "distance", "balanced_field")
LANDING_FORMS = ("ground_roll", "distance", "field_length")


class Takeoff(_Req):
    kind: Literal["takeoff"]
    ground_roll: Optional[Length] = Field(None, description="ground run to liftoff")
    distance: Optional[Length] = Field(None, description="distance to clear the obstacle")
    balanced_field: Optional[Length] = Field(None, description="balanced field length (multi-engine)")
    obstacle: Optional[Length] = Field(None, description="obstacle height; default 50 ft (distance), "
                                                         "35 ft (balanced_field)")
    rotation_time: Time = Field(default_factory=lambda: units.parse("3 s", "time"))
    rolling_friction: Number = 0.04
    liftoff_speed_ratio: Number = 1.1
    ground_lift_coefficient: Optional[Number] = Field(None, description="CL during the run; default mu/(2 k1)")

    @model_validator(mode="after")
    def _ranges(self):
        form = _one_of(self, TAKEOFF_FORMS, "the takeoff requirement's form")
        _positive(form, getattr(self, form), 1.0e5)
        if self.obstacle is not None and form == "ground_roll":
            raise FieldError("obstacle", "obstacle applies to distance and balanced_field, not to a ground roll")
        _within("obstacle", self.obstacle, 0.0, 100.0, "0 to 100 m")
        _within("rotation_time", self.rotation_time, 0.0, 10.0, "0 to 10 s")
        _within("rolling_friction", self.rolling_friction, 0.0, 0.3)
        _within("liftoff_speed_ratio", self.liftoff_speed_ratio, 1.0, 1.5)
        _within("ground_lift_coefficient", self.ground_lift_coefficient, 0.0, 4.5)
        return self

    @property
    def form(self) -> str:
        return next(k for k in TAKEOFF_FORMS if getattr(self, k) is not None)


class Landing(_Req):
    kind: Literal["landing"]
    ground_roll: Optional[Length] = Field(None, description="ground roll from touchdown")
    distance: Optional[Length] = Field(None, description="landing distance from the obstacle")
    field_length: Optional[Length] = Field(None, description="field length: landing distance / factor")
    factor: Optional[Fraction] = Field(None, description="landing distance over field length; default 0.6")
    obstacle: Optional[Length] = Field(None, description="obstacle height; default 50 ft")
    approach_angle: Optional[Angle] = Field(None, description="approach flight-path angle; default 3 deg")
    braking_friction: Number = 0.3
    touchdown_speed_ratio: Number = 1.15
    free_roll_time: Time = Field(default_factory=lambda: units.parse("3 s", "time"))

    @model_validator(mode="after")
    def _ranges(self):
        form = _one_of(self, LANDING_FORMS, "the landing requirement's form")
        _positive(form, getattr(self, form), 1.0e5)
        if self.factor is not None and form != "field_length":
            raise FieldError("factor", "factor applies to field_length (landing distance = factor x field length)")
        for key in ("obstacle", "approach_angle"):
            if getattr(self, key) is not None and form == "ground_roll":
                raise FieldError(key, f"{key} applies to distance and field_length, not to a ground roll")
        _within("factor", self.factor, 0.3, 1.0, "0.3 to 1.0")
        _within("obstacle", self.obstacle, 0.0, 100.0, "0 to 100 m")
        if self.approach_angle is not None:
            _within("approach_angle", self.approach_angle, 0.017, 0.14, "1 to 8 deg")
        _within("braking_friction", self.braking_friction, 0.05, 1.0)
        _within("touchdown_speed_ratio", self.touchdown_speed_ratio, 1.0, 1.5)
        _within("free_roll_time", self.free_roll_time, 0.0, 60.0, "0 to 60 s")
        return self

    @property
    def form(self) -> str:
        return next(k for k in LANDING_FORMS if getattr(self, k) is not None)


class ClimbGradient(_Req):
    kind: Literal["climb-gradient"]
    segment: Optional[Literal["first", "second", "final", "approach", "landing"]] = Field(
        None, description="transport-category climb segment: fills the keys below from 14 CFR 25.111, 25.119, 25.121")
    gradient: Optional[Fraction] = None
    engines_out: Optional[Count] = Field(None, description="inoperative engines; default 1 (or the segment's)")
    speed_ratio: Optional[Number] = Field(None, description="speed over the configuration's stall speed; "
                                                            "default 1.2 (or the segment's)")
    gear: Optional[Literal["up", "down"]] = Field(None, description="landing gear; default up (or the segment's)")

    @model_validator(mode="after")
    def _ranges(self):
        if self.gradient is None and self.segment is None:
            raise FieldError("gradient", "give the gradient, or a segment (first, second, final, approach, "
                                         "landing) whose regulation sets it")
        _within("gradient", self.gradient, -0.1, 0.5, "-10 % to 50 %")
        _within("speed_ratio", self.speed_ratio, 1.0, 2.0)
        _engines_out(self.engines_out)
        return self


Requirement = Annotated[
    Union[StallSpeed, SustainedTurn, MaxMach, Ceiling, Climb, ExcessPower, Cruise,
          InstantaneousTurn, Takeoff, Landing, ClimbGradient, ApproachSpeed],
    Field(discriminator="kind"),
]

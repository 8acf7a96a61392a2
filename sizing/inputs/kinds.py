"""Requirement models: one per requirement kind (the ``requirements`` list of a file)."""
from __future__ import annotations

from typing import Annotated, Literal, Optional, Union

from pydantic import Field, field_validator, model_validator

from ..common.errors import FieldError
from . import units
from .fields import (
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
    speed: Optional[Speed] = None
    mach: Optional[MachNumber] = None
    _needs_speed = True


def _turning(obj):
    """A level turn needs a load factor above 1 (n = 1/cos(bank), Gudmundsson Eq. (3-1),
    docs/references.md §6.1): n <= 1 is wings-level flight, not a turn."""
    if not obj.load_factor > 1.0:
        raise FieldError("load_factor", f"a {obj.kind} needs load_factor above 1 (n = 1/cos(bank)), "
                                        f"got {obj.load_factor:g}; n = 1 is wings-level flight")
    return obj


class SustainedTurn(_Req):
    kind: Literal["sustained-turn"]
    load_factor: LoadFactor
    mach: Optional[MachNumber] = None
    speed: Optional[Speed] = None
    _needs_speed = True

    @model_validator(mode="after")
    def _turn(self):
        return _turning(self)


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

    @model_validator(mode="after")
    def _turn(self):
        return _turning(self)


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
    engines_out: Count = Field(1, ge=0)
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

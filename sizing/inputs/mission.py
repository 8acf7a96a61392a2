"""The ``mission`` section of a requirement file: segments, fuel consumption, reserve."""
from __future__ import annotations

from typing import Annotated, Literal, Optional, Union

from pydantic import Field, field_validator, model_validator

from ..common.errors import FieldError
from ..physics.atmosphere import H_MAX, H_MIN
from ..weights.mission import default_label
from . import units
from .fields import (
    Fraction,
    FuelConsumption,
    Length,
    LoadFactor,
    MachNumber,
    Name,
    Speed,
    Strict,
    TempDelta,
    Time,
)
from .fields import positive as _positive
from .fields import within as _within

SPEED_KEYS = ("mach", "speed", "cas", "eas")     # the ways a flight speed may be given


def flight_condition(obj, need_speed: bool):
    """Shared checks of a flight condition: altitude, offset, Mach or speed, load factor."""
    _within("altitude", obj.altitude, H_MIN, H_MAX,
            f"the standard atmosphere model ({H_MIN:g} m to {H_MAX:g} m)")
    _within("temperature_offset", obj.temperature_offset, -80.0, 60.0, "-80 K to +60 K")
    mach = getattr(obj, "mach", None)
    given = [k for k in SPEED_KEYS if getattr(obj, k, None) is not None]
    if len(given) > 1:
        raise FieldError(given[1], f"give one of mach, speed (true airspeed), cas (calibrated) or eas "
                                   f"(equivalent), not {' and '.join(given)}")
    if need_speed and not given:
        raise FieldError("mach", "needs mach, speed (true airspeed), cas (calibrated airspeed) or eas "
                                 "(equivalent airspeed)")
    if mach is not None and not (0.0 < mach <= 5.0):
        raise FieldError("mach", f"mach {mach:g} must lie in (0, 5]")
    for key in ("speed", "eas"):
        _positive(key, getattr(obj, key, None), 1700.0)
    _positive("cas", getattr(obj, "cas", None), 340.0)        # above a0 a CAS is supersonic at sea level
    cas = getattr(obj, "cas", None)
    if cas is not None and H_MIN <= obj.altitude.si <= H_MAX and -80.0 <= obj.temperature_offset.si <= 60.0:
        from ..physics.airspeed import cas_to_mach
        from ..physics.atmosphere import isa
        try:
            cas_to_mach(cas.si, isa(obj.altitude.si, obj.temperature_offset.si))
        except ValueError as e:
            raise FieldError("cas", f"cas {cas.text} at {obj.altitude.text}: {e}") from None
    n = getattr(obj, "load_factor", None)
    if n is not None and not (0.0 < n <= 15.0):
        raise FieldError("load_factor", f"load_factor {n:g} must lie in (0, 15]")


# plausible fuel consumption: jets burn 0.4 to 0.9 1/h dry, propeller engines 0.4 to
# 0.6 lb/(hp*h) (Raymer Tables 3.3 and 3.4, docs/references.md §12.7); the ceilings
# are typing-slip guards several times those values (common practice, no source)
TSFC_MAX = 5.0 / 3600.0          # 5 1/h [1/s]
PSFC_MAX = 1.0e-5                # about 6 lb/(hp*h) [1/m]


def fuel_rate(name, q):
    """A fuel consumption: positive and below the plausible ceiling of its kind."""
    _positive(name, q)
    if q is not None:
        top, text = (TSFC_MAX, "5 1/h") if units.is_dimension(q, "tsfc") else (PSFC_MAX, "6 lb/(hp*h)")
        if not q.si <= top:
            raise FieldError(name, f"{name} {q.text} is not plausible (at most {text})")
    return q


class _Segment(Strict):
    name: Optional[Name] = None


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
    speed: Optional[Speed] = Field(None, description="true airspeed")
    cas: Optional[Speed] = Field(None, description="calibrated airspeed")
    eas: Optional[Speed] = Field(None, description="equivalent airspeed")
    altitude: Length = Field(default_factory=lambda: units.parse("0 ft", "length"))
    temperature_offset: TempDelta = Field(default_factory=lambda: units.parse("0 K", "temperature_difference"))
    tsfc: Optional[FuelConsumption] = None

    @model_validator(mode="after")
    def _flown(self):
        flight_condition(self, need_speed=self.kind in ("combat", "maneuver"))
        fuel_rate("tsfc", self.tsfc)
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
        # reports label an unnamed segment "segment 3 (cruise)"; a user's name equal to
        # another segment's label would make two rows of the fuel table look alike
        labels = {default_label(s.kind, i): i for i, s in enumerate(self.segments) if not s.name}
        seen = {}
        for i, s in enumerate(self.segments):
            if s.name and s.name in seen:
                raise FieldError(("segments", i, "name"), f"duplicate segment name {s.name!r} (also "
                                 f"segment {seen[s.name] + 1}); names must be unique")
            if s.name and labels.get(s.name, i) != i:
                raise FieldError(("segments", i, "name"), f"the name {s.name!r} is how reports label the "
                                 f"unnamed segment {labels[s.name] + 1}; choose another name, or name "
                                 f"segment {labels[s.name] + 1} too")
            if s.name:
                seen[s.name] = i
            if s.kind != "fixed" and s.tsfc is None and self.tsfc is None:
                raise FieldError(("segments", i), f"segment {i + 1} ({s.name or s.kind}) burns fuel but "
                                 f"no tsfc is given (mission.tsfc or the segment's own)")
        fuel_rate("tsfc", self.tsfc)
        _within("reserve", self.reserve, 0.0, 0.5, "0 to 50 %")
        _within("trapped", self.trapped, 0.0, 0.1, "0 to 10 %")
        return self

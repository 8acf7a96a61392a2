"""Field types of the requirement-file models (pydantic): ``Length``, ``Speed``, ``Number``, ...

Each dimensional type parses ``"<number> <unit>"`` with :func:`.units.parse`
and carries a JSON Schema pattern; the plain-number types refuse units and
carry their plausible range. :func:`positive` and :func:`within` are the
NaN-safe range checks the models use.
"""
from __future__ import annotations

import math
import re
from typing import Annotated

from pydantic import BaseModel, BeforeValidator, ConfigDict, WithJsonSchema, model_validator

from ..common.errors import FieldError
from .units import DIMENSIONS, Quantity, UnitError, finite, parse, parse_fraction, short_repr

# a number, then a unit (which starts with a letter or a symbol, or is 1/...)
DIMENSIONAL = r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*([^\s\d.+-]|1\s*/).*$"


def _q(dim: str):
    d = DIMENSIONS[dim]
    text = {"type": "string", "description": f"{d.name} with a unit, e.g. {d.examples}", "pattern": DIMENSIONAL}
    if dim == "temperature_difference":      # a bare 0 needs no unit
        text = {"anyOf": [text, {"const": 0}], "description": text["description"]}
    return Annotated[
        Quantity,
        BeforeValidator(lambda v, _d=dim: v if isinstance(v, Quantity) else parse(v, _d)),
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
Angle = _q("angle")


def _mass_per_engine(v):
    if isinstance(v, Quantity):
        return v
    try:
        return parse(v, "mass_per_thrust")
    except UnitError:
        try:
            return parse(v, "mass_per_power")
        except UnitError:
            raise UnitError(
                f"{v!r} is not a mass per sea-level thrust ('0.025 kg/N') nor per sea-level power "
                f"('0.9 kg/kW')") from None


EngineMass = Annotated[Quantity, BeforeValidator(_mass_per_engine),
                       WithJsonSchema({"type": "string", "pattern": DIMENSIONAL, "description": "mass per sea-level thrust "
                                       "('0.025 kg/N') or, for propeller aircraft, per power ('0.9 kg/kW')"})]


def _fuel_consumption(v):
    if isinstance(v, Quantity):
        return v
    for dim in ("tsfc", "psfc"):
        try:
            return parse(v, dim)
        except UnitError:
            pass
    raise UnitError(f"{v!r} is not a fuel consumption: jets give thrust-specific ('0.9 1/h', "
                          f"'22 mg/(N*s)'), propeller aircraft power-specific ('0.45 lb/(hp*h)')")


FuelConsumption = Annotated[Quantity, BeforeValidator(_fuel_consumption),
                            WithJsonSchema({"type": "string", "pattern": DIMENSIONAL, "description": "thrust-specific "
                                            "('0.9 1/h', '22 mg/(N*s)') or power-specific "
                                            "('0.45 lb/(hp*h)') fuel consumption"})]

Fraction = Annotated[float, BeforeValidator(parse_fraction),
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
            if out is not None:
                raise ValueError(f"{short_repr(v)} is not a finite number")
            if _looks_dimensional(v):
                raise ValueError(f"{short_repr(v)} has a unit, but this value is a plain number (dimensionless); "
                                 f"write it without the unit")
        raise ValueError(f"{short_repr(v)} is not a number (this value is dimensionless)")
    out = finite(v)
    if not math.isfinite(out):
        raise ValueError(f"{short_repr(v)} is not a finite number")
    return out


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


# characters that would act on a terminal or a page instead of showing: control characters
# (escape sequences, bells, carriage returns), line and paragraph separators, bidirectional
# overrides that reorder what is shown
_HIDDEN = re.compile("[\x00-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def visible(v: str, what: str, allow: str = "") -> str:
    """``v`` unless it holds a character that acts instead of showing (``allow`` lists
    exceptions, e.g. newlines in a note); a ValueError naming it otherwise.

    >>> visible("turn-4g", "id")
    'turn-4g'
    """
    for m in _HIDDEN.finditer(v):
        if m.group() not in allow:
            raise ValueError(f"{what} {v!r} contains the control character {m.group()!r} (position "
                             f"{m.start() + 1}); write it on one line with visible characters only")
    return v


def _count(v):
    """A whole number; YAML's true and false are not counts (pydantic would read them as 1 and 0)."""
    if isinstance(v, bool):
        raise ValueError(f"expected a whole number, got {str(v).lower()} (a count is written as a number)")
    return v


Count = Annotated[int, BeforeValidator(_count)]


def _text(v, what="text", allow="\n\t"):
    """Free text (title, note, names): numbers and dates are read as their text."""
    if isinstance(v, str):
        return visible(v, what, allow)
    if v is None:
        raise ValueError("no text given")
    if isinstance(v, (dict, list)):
        raise ValueError(f"expected text, got a {'mapping' if isinstance(v, dict) else 'list'}")
    return str(v)


Text = Annotated[str, BeforeValidator(_text), WithJsonSchema({"type": ["string", "number"]})]
# one-line text (title, segment names): no control characters at all, newlines included
Name = Annotated[str, BeforeValidator(lambda v: _text(v, "the name", "")),
                 WithJsonSchema({"type": ["string", "number"]})]


def _identifier(v):
    if isinstance(v, str):
        if not v.strip():
            raise ValueError("id is empty; give each requirement a short unique name such as 'turn-4g'")
        return visible(v, "id")
    raise ValueError(f"id {v!r} must be text: write a name such as 'turn-4g', or quote it (id: '{v}')")


Identifier = Annotated[str, BeforeValidator(_identifier), WithJsonSchema({"type": "string", "minLength": 1})]


def positive(name, v, hi=None, field=None):
    """Positive and (optionally) at most ``hi``; raises FieldError on ``field`` (default ``name``)."""
    if v is None:
        return v
    val = v.si if isinstance(v, Quantity) else v
    shown = getattr(v, "text", v)
    if not val > 0:
        raise FieldError(field or name, f"{name} must be positive, got {shown}")
    if hi is not None and not val <= hi:
        raise FieldError(field or name, f"{name} {shown} is not plausible (at most {hi:g})")
    return v


def within(name, v, lo, hi, what="", field=None):
    """``lo <= v <= hi`` (NaN-safe), else a FieldError naming the range."""
    if v is None:
        return v
    val = v.si if isinstance(v, Quantity) else v
    if not (lo <= val <= hi):
        shown = getattr(v, "text", v)
        raise FieldError(field or name, f"{name} {shown} is outside {what or f'{lo:g} to {hi:g}'}")
    return v


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

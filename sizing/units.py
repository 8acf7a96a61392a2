"""Unit parsing at the edge: strings with a unit -> SI floats (pint).

Every dimensional value in a requirement file is a string such as
``"35000 ft"`` or ``"250 kn"``. :func:`parse` turns it into an SI float and
remembers the user's unit, so reports and sensitivities can speak the
user's language. A bare number where a dimension is expected is an error
that says which units fit.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from functools import lru_cache

G0 = 9.80665  # standard gravity [m/s^2], converts mass-based to weight-based units


@lru_cache(maxsize=1)
def registry():
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    ureg.define("kn = knot")
    ureg.define("KTAS = knot")
    return ureg


@dataclass(frozen=True)
class Dimension:
    """A kind of quantity a field takes: pint dimensionalities that fit, SI unit."""

    name: str
    si_unit: str
    examples: str
    accepts: tuple  # tuples of (dimensionality string, factor to SI after to_base_units)


DIMENSIONS = {
    "length": Dimension("length", "m", "'35000 ft', '1.2 km', '800 m'", (("[length]", 1.0),)),
    "speed": Dimension("speed", "m/s", "'250 kn', '120 m/s', '100 ft/min'", (("[length] / [time]", 1.0),)),
    "mass": Dimension("mass", "kg", "'200 kg', '450 lb'", (("[mass]", 1.0),)),
    "time": Dimension("time", "s", "'30 min', '2 h', '3 s'", (("[time]", 1.0),)),
    "temperature_difference": Dimension("temperature difference", "K", "'15 K', '-10 K'",
                                        (("[temperature]", 1.0),)),
    # wing loading: a pressure, or a mass per area (times g0)
    "wing_loading": Dimension("wing loading", "N/m^2", "'4000 Pa', '400 kg/m^2', '80 lbf/ft^2'",
                              (("[mass] / [length] / [time] ** 2", 1.0), ("[mass] / [length] ** 2", G0))),
    "areal_mass": Dimension("mass per wing area", "kg/m^2", "'45 kg/m^2', '9 lb/ft^2'",
                            (("[mass] / [length] ** 2", 1.0),)),
    "mass_per_thrust": Dimension("mass per sea-level thrust", "kg/N", "'0.025 kg/N'",
                                 (("[time] ** 2 / [length]", 1.0),)),
    "mass_per_power": Dimension("mass per sea-level power", "kg/W", "'0.9 kg/kW', '1.5 lb/hp'",
                                (("[time] ** 3 / [length] ** 2", 1.0),)),
    "power_to_weight": Dimension("power-to-weight", "W/N", "'0 W/N', '150 W/N', '0.1 hp/lbf'",
                                 (("[length] / [time]", 1.0),)),
    # thrust-specific fuel consumption, weight-based [1/s]; mass-based times g0
    "tsfc": Dimension("thrust-specific fuel consumption", "1/s", "'0.9 1/h', '22 mg/(N*s)'",
                      (("1 / [time]", 1.0), ("[time] / [length]", G0))),
    # power-specific fuel consumption, weight-based [N/J = 1/m]; mass-based times g0
    "psfc": Dimension("power-specific fuel consumption", "1/m", "'0.45 lb/(hp*h)', '80 ug/J'",
                      (("1 / [length]", 1.0), ("[time] ** 2 / [length] ** 2", G0))),
}


class UnitError(ValueError):
    """A value's unit is missing, unknown or of the wrong kind."""


@dataclass(frozen=True)
class Quantity:
    """A parsed value: SI magnitude, the user's text and unit."""

    si: float
    text: str
    unit: str          # the user's unit as written ("kn", "ft", ...)
    scale: float       # SI per one user unit

    def __float__(self) -> float:
        return self.si


def parse(value, dimension: str) -> Quantity:
    """Parse ``"<number> <unit>"`` into SI for a field of a given dimension.

    Examples
    --------
    Source: REFERENCES.md §9 exact conversions (1 ft = 0.3048 m).

    >>> parse("1000 ft", "length").si
    304.8
    >>> parse("95 kn", "speed").unit
    'kn'
    """
    dim = DIMENSIONS[dimension]
    if isinstance(value, bool) or isinstance(value, (int, float)):
        if dimension == "temperature_difference" and value == 0:
            return Quantity(0.0, str(value), "K", 1.0)
        raise UnitError(f"{value!r} has no unit; a {dim.name} needs one, e.g. {dim.examples}")
    if not isinstance(value, str):
        raise UnitError(f"expected a {dim.name} written as a string with a unit, e.g. {dim.examples}")
    text = value.strip()
    ureg = registry()
    try:
        q = ureg.Quantity(text)
    except Exception as e:  # pint raises several unrelated types
        raise UnitError(f"cannot read {value!r} as a {dim.name}: {e}; write it like {dim.examples}") from None
    if not hasattr(q, "units") or q.dimensionless:
        raise UnitError(f"{value!r} has no unit; a {dim.name} needs one, e.g. {dim.examples}")
    base = q.to_base_units()
    got = str(base.dimensionality)
    for dims, factor in dim.accepts:
        if base.dimensionality == ureg.get_dimensionality(dims):
            mag = float(base.magnitude) * factor
            if not math.isfinite(mag):
                raise UnitError(f"{value!r} is not a finite number")
            one = float(ureg.Quantity(1.0, q.units).to_base_units().magnitude) * factor
            return Quantity(mag, text, _unit_text(text), one)
    raise UnitError(f"{value!r} is a {got}, not a {dim.name}; write it like {dim.examples}")


def _unit_text(text: str) -> str:
    """The unit part of '<number> <unit>' as the user wrote it."""
    parts = text.split(None, 1)
    return parts[1].strip() if len(parts) == 2 else text


def parse_fraction(value) -> float:
    """A dimensionless fraction: a number, or a string with ``%``.

    >>> parse_fraction("6 %")
    0.06
    """
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a number")
    if isinstance(value, (int, float)):
        return float(value)
    if isinstance(value, str):
        text = value.strip()
        if text.endswith("%"):
            try:
                return float(text[:-1].strip()) / 100.0
            except ValueError:
                pass
        try:
            return float(text)
        except ValueError:
            pass
    raise UnitError(f"{value!r} is not a fraction; write a number such as 0.06 or a percentage such as '6 %'")

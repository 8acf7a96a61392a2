"""Strings with a unit: ``"35000 ft"`` -> an SI float that remembers the user's unit.

Every dimensional value in a requirement file is a string such as
``"35000 ft"`` or ``"250 kn"``. :func:`parse` turns it into an SI float and
remembers the user's unit, so reports and sensitivities can speak the
user's language. A bare number where a dimension is expected is an error
that says which units fit.
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from functools import lru_cache

from . import unit_table

G0 = 9.80665  # standard gravity [m/s^2], converts mass-based to weight-based units


@lru_cache(maxsize=1)
def registry():
    import pint

    # pint's own on-disk cache of its parsed definitions makes a cold start
    # ~0.3 s faster; any trouble with it (read-only home, a half-written file
    # from a parallel process) falls back to parsing the definitions
    try:
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True, cache_folder=":auto:")
        ureg.parse_units("ft/min")
    except Exception:  # noqa: BLE001 - the cache is an optimisation only
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    for name in ("kn", "KTAS"):     # knots of true airspeed, in case this pint lacks them
        if name not in ureg:
            ureg.define(f"{name} = knot")
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
    # angles are dimensionless to pint: only the angle units themselves are accepted
    "angle": Dimension("angle", "rad", "'3 deg', '0.05 rad'", ()),
}
ANGLE_UNITS = ("degree", "radian", "arcminute", "arcsecond", "milliradian")


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


_NUMBER = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")

# unit names a requirement file usually uses, for "did you mean" hints
COMMON_UNITS = ("m", "km", "ft", "nmi", "mi", "in", "cm", "kn", "kt", "m/s", "km/h", "ft/s", "ft/min",
                "mph", "kg", "lb", "t", "g", "mg", "s", "min", "h", "K", "delta_degC", "delta_degF",
                "N", "kN", "lbf", "Pa", "kPa", "W", "kW", "hp", "J", "kg/m^2", "lb/ft^2", "lbf/ft^2",
                "kg/N", "kg/kW", "lb/hp", "1/h", "1/s", "lb/(lbf*h)", "mg/(N*s)", "lb/(hp*h)", "W/N",
                "meter", "foot", "knot", "kilogram", "pound", "second", "minute", "hour", "kelvin",
                "newton", "pascal", "watt", "kilowatt", "horsepower")


def parse(value, dimension: str) -> Quantity:
    """Parse ``"<number> <unit>"`` into SI for a field of a given dimension.

    The number comes first and the unit after it (``"35000 ft"``,
    ``"0.9 1/h"``); a unit alone, a bare number, an unknown unit or a unit of
    another kind is a :class:`UnitError` whose message lists units that fit.
    For a temperature difference, ``degC`` and ``degF`` are read as
    differences (``"15 degC"`` is 15 K).

    Examples
    --------
    Source: docs/references.md §16 exact conversions (1 ft = 0.3048 m).

    >>> round(parse("1000 ft", "length").si, 9)
    304.8
    >>> parse("95 kn", "speed").unit
    'kn'
    """
    if isinstance(value, str):
        return _parse_text(value, dimension)    # pint is slow; the same text gives the same Quantity
    return _parse(value, dimension)


@lru_cache(maxsize=4096)
def _parse_text(value: str, dimension: str) -> Quantity:
    return _parse(value, dimension)


def _parse(value, dimension: str) -> Quantity:
    dim = DIMENSIONS[dimension]
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a {dim.name}; write a number with a unit, e.g. {dim.examples}")
    if isinstance(value, (int, float)):
        if dimension == "temperature_difference" and value == 0:
            return Quantity(0.0, str(value), "K", 1.0)
        raise UnitError(f"{value!r} has no unit; a {dim.name} needs one, e.g. {dim.examples}")
    if not isinstance(value, str):
        raise UnitError(f"expected a {dim.name} written as a number with a unit, e.g. {dim.examples}, "
                        f"got {describe(value)}")
    text = value.strip()
    match = _NUMBER.match(text)
    if match is None:
        raise UnitError(f"{value!r} does not start with a number; a {dim.name} is written as a number "
                        f"and a unit, e.g. {dim.examples}")
    number, unit_text = match.group(1), match.group(2)
    # integers of a plausible size stay integers, as pint itself would read them (exact
    # products); longer ones become floats, and one past the float range is refused
    digits = number.lstrip("+-")
    mag_user = int(number) if digits.isdigit() and len(digits) <= 15 else float(number)
    if not math.isfinite(mag_user):
        raise UnitError(f"{short_repr(value)} is not a finite number (too large for a {dim.name})")
    if not unit_text:
        raise UnitError(f"{value!r} has no unit; a {dim.name} needs one, e.g. {dim.examples}")
    if dimension == "angle" and unit_text in unit_table.ANGLES:      # written out from pint
        factor = unit_table.ANGLES[unit_text]
        return Quantity(float(mag_user * factor), text, unit_text, float(1.0 * factor))
    entry = unit_table.lookup(unit_text, difference=dimension == "temperature_difference")
    if entry is not None:     # a unit pint defines, written out (no pint import)
        if dimension == "angle":
            raise UnitError(f"{value!r} is not an angle; write it like {dim.examples}")
        return _from_table(value, text, unit_text, mag_user, entry, dim)
    ureg = registry()
    try:
        u = ureg.parse_units(unit_text)
    except Exception as e:  # noqa: BLE001 - pint raises several unrelated types
        names = [n for n in getattr(e, "unit_names", ()) or () if isinstance(n, str)]
        if names:
            near = difflib.get_close_matches(names[0], COMMON_UNITS, 1, 0.6)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise UnitError(f"unknown unit {names[0]!r} in {value!r}{hint}; a {dim.name} is written "
                            f"like {dim.examples}") from None
        raise UnitError(f"cannot read the unit {unit_text!r} of {value!r}; a {dim.name} is written "
                        f"like {dim.examples}") from None
    if dimension == "temperature_difference":
        u = _as_difference(ureg, u)
    try:
        q = ureg.Quantity(mag_user, u)
        base = q.to_base_units()
        one = float(ureg.Quantity(1.0, u).to_base_units().magnitude)
    except Exception as e:  # noqa: BLE001 - offset units in products and the like
        raise UnitError(f"cannot use the unit {unit_text!r} of {value!r} here ({e}); write it like "
                        f"{dim.examples}") from None
    if dimension == "angle":
        if str(u) not in ANGLE_UNITS:
            raise UnitError(f"{value!r} is not an angle; write it like {dim.examples}")
        return Quantity(float(q.to("radian").magnitude), text, unit_text,
                        float(ureg.Quantity(1.0, u).to("radian").magnitude))
    if base.dimensionless:
        raise UnitError(f"{value!r} has no physical unit; a {dim.name} needs one, e.g. {dim.examples}")
    for dims, factor in dim.accepts:
        if base.dimensionality == ureg.get_dimensionality(dims):
            mag = finite(base.magnitude) * factor
            if not math.isfinite(mag):
                raise UnitError(f"{short_repr(value)} is not a finite number (too large for a {dim.name})")
            return Quantity(mag, text, unit_text, one * factor)
    raise UnitError(f"{value!r} is {_dimension_words(base.dimensionality)}, not a {dim.name}; "
                    f"write it like {dim.examples}")


def _from_table(value, text, unit_text, mag_user, entry, dim) -> Quantity:
    """parse() for a unit of :mod:`.unit_table`: what pint gives, without pint."""
    factor, dims = entry
    if dims == "dimensionless":
        raise UnitError(f"{value!r} has no physical unit; a {dim.name} needs one, e.g. {dim.examples}")
    for spec, f in dim.accepts:
        if dims == unit_table.ACCEPTS[spec]:
            mag = finite(mag_user * factor) * f
            if not math.isfinite(mag):
                raise UnitError(f"{short_repr(value)} is not a finite number (too large for a {dim.name})")
            return Quantity(mag, text, unit_text, float(factor) * f)
    raise UnitError(f"{value!r} is {_dimension_words(dims)}, not a {dim.name}; write it like {dim.examples}")


def _as_difference(ureg, u):
    """degC/degF (offset units) -> their differences; other units unchanged."""
    mapping = {"degree_Celsius": "delta_degree_Celsius", "degree_Fahrenheit": "delta_degree_Fahrenheit"}
    name = str(u)
    if name in mapping:
        return ureg.parse_units(mapping[name])
    return u


_WORDS = {"[length]": "length", "[mass]": "mass", "[time]": "time", "[temperature]": "temperature",
          "[length] / [time]": "speed", "[mass] / [length] / [time] ** 2": "pressure",
          "[mass] * [length] / [time] ** 2": "force", "[mass] / [length] ** 2": "mass per area",
          "[length] ** 2": "area", "[length] ** 3": "volume", "[mass] * [length] ** 2 / [time] ** 3": "power",
          "1 / [time]": "frequency (1/time)", "[length] / [time] ** 2": "acceleration"}


_BASE_ORDER = ("[mass]", "[length]", "[time]", "[temperature]", "[current]", "[substance]", "[luminosity]")


def canonical_dimensions(dimensionality) -> str:
    """A dimensionality as one text whatever order pint built it in: the base dimensions in the
    order mass, length, time, temperature, ..., numerator then denominator (pint orders them as
    they were first met, which depends on what was parsed before).

    >>> canonical_dimensions("[length] * [mass] / [time] ** 2")
    '[mass] * [length] / [time] ** 2'
    >>> canonical_dimensions("1 / [time]"), canonical_dimensions("[length] ** 2")
    ('1 / [time]', '[length] ** 2')
    """
    if isinstance(dimensionality, str):
        exps, sign, last = {}, 1, None
        for tok in re.findall(r"\*\*\s*-?[\d.]+|\*|/|\[[a-z_]+\]", dimensionality):
            if tok == "/":
                sign = -1
            elif tok == "*":
                sign = 1
            elif tok.startswith("**"):
                p = float(tok[2:])
                exps[last] *= p
            else:
                exps[tok] = exps.get(tok, 0) + sign
                last = tok
    else:
        exps = {str(k): v for k, v in dict(dimensionality).items()}

    def order(d):
        return (_BASE_ORDER.index(d) if d in _BASE_ORDER else len(_BASE_ORDER), d)

    def term(d, e):
        e = abs(e)
        return d if e == 1 else f"{d} ** {int(e) if float(e).is_integer() else e}"

    num = [term(d, e) for d, e in sorted(exps.items(), key=lambda kv: order(kv[0])) if e > 0]
    den = [term(d, e) for d, e in sorted(exps.items(), key=lambda kv: order(kv[0])) if e < 0]
    if not num and not den:
        return "dimensionless"
    return " / ".join([" * ".join(num) or "1", *den])


def _dimension_words(dimensionality) -> str:
    text = canonical_dimensions(dimensionality)
    word = _WORDS.get(text)
    if word is None:
        return f"of dimension {text}"
    return f"{'an' if word[0] in 'aeiou' else 'a'} {word} ({text})"


def describe(value) -> str:
    """'a mapping', 'a list', 'nothing (an empty value)' or the value's type name."""
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if value is None:
        return "nothing (an empty value)"
    return type(value).__name__


def finite(value) -> float:
    """``float(value)``, or NaN for a number past the float range (a 400-digit integer).

    >>> finite(10 ** 400), finite(3)
    (nan, 3.0)
    """
    try:
        return float(value)
    except OverflowError:
        return math.nan


def short_repr(value) -> str:
    """repr of a value, shortened to 60 characters (a 400-digit number stays readable)."""
    text = repr(value)
    return text if len(text) <= 60 else f"{text[:30]}...{text[-20:]} ({len(text)} characters)"


def parse_fraction(value) -> float:
    """A dimensionless fraction: a number, or a string with ``%``.

    >>> parse_fraction("6 %")
    0.06
    """
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a fraction; write a number such as 0.06 or a percentage such as '6 %'")
    out = None
    if isinstance(value, (int, float)):
        out = finite(value)
    elif isinstance(value, str):
        text = value.strip()
        try:
            out = float(text[:-1].strip()) / 100.0 if text.endswith("%") else float(text)
        except ValueError:
            out = None
    if out is None:
        raise UnitError(f"{short_repr(value)} is not a fraction; write a number such as 0.06 or a percentage "
                        f"such as '6 %'")
    if not math.isfinite(out):
        raise UnitError(f"{short_repr(value)} is not a finite number")
    return out


def is_dimension(q: Quantity, dim: str) -> bool:
    """Whether a parsed quantity's text reads as the given dimension."""
    try:
        parse(q.text, dim)
        return True
    except UnitError:
        return False


def parse_list(text: str, dimension: str) -> list:
    """A comma-separated list of quantities [SI]; bare numbers take the unit of the next item that has
    one (``"0, 2000, 4000 ft"`` is three lengths in feet).

    >>> [round(v, 4) for v in parse_list("0, 5000 ft, 2 km", "length")]
    [0.0, 1524.0, 2000.0]
    """
    items = [t.strip() for t in str(text).split(",")]
    if not items or any(not t for t in items):
        raise UnitError(f"{text!r} is not a comma-separated list of values, e.g. '0, 2000, 4000 ft'")
    out, unit = [], None
    for item in reversed(items):
        m = _NUMBER.match(item)
        if m is not None and m.group(2):
            unit = m.group(2)
        elif m is not None and unit is not None:
            item = f"{item} {unit}"
        out.append(parse(item, dimension).si)
    return out[::-1]


_TEMPERATURE_UNITS = {"c": "degC", "°c": "degC", "degc": "degC", "celsius": "degC", "f": "degF", "°f": "degF",
                      "degf": "degF", "fahrenheit": "degF", "k": "K", "kelvin": "K"}


def parse_temperatures(text: str) -> list:
    """A comma-separated list of (absolute) air temperatures in C, F or K -> kelvin; bare numbers take
    the unit of the next item that has one.

    Examples
    --------
    Source: exact conversions (0 C = 273.15 K; T_F = 1.8 T_C + 32): 15 C -> 288.15 K, 95 F -> 308.15 K.

    >>> [round(v, 2) for v in parse_temperatures("15 C, 95 F, 0, 30 C")]
    [288.15, 308.15, 273.15, 303.15]
    """
    items = [t.strip() for t in str(text).split(",")]
    if not items or any(not t for t in items):
        raise UnitError(f"{text!r} is not a comma-separated list of temperatures, e.g. '0, 15, 30, 45 C'")
    out, unit = [], None
    for item in reversed(items):
        m = _NUMBER.match(item)
        if m is None:
            raise UnitError(f"{item!r} does not start with a number; write temperatures like '35 C' or '95 F'")
        if m.group(2):
            unit = _TEMPERATURE_UNITS.get(m.group(2).lower())
            if unit is None:
                raise UnitError(f"{item!r}: {m.group(2)!r} is not a temperature unit; use C, F or K")
        elif unit is None:
            raise UnitError(f"{item!r} has no unit; write temperatures like '0, 15, 30 C' or '95 F'")
        T = registry().Quantity(float(m.group(1)), unit).to("K").magnitude
        if not T > 0:
            raise UnitError(f"{item!r} is below absolute zero")
        out.append(float(T))
    return out[::-1]

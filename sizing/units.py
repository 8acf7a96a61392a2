"""The edge of the file format: YAML text, strings with a unit, field types.

Every dimensional value in a requirement file is a string such as
``"35000 ft"`` or ``"250 kn"``. :func:`parse` turns it into an SI float and
remembers the user's unit, so reports and sensitivities can speak the
user's language. A bare number where a dimension is expected is an error
that says which units fit. The pydantic field types built on it (``Length``,
``Speed``, ``Number``, ``Fraction``, ...) are what :mod:`sizing.spec`'s
models are made of; :func:`read_yaml` reads the text with the line of every
key, so every error can name its line.
"""
from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from functools import lru_cache
from typing import Annotated

from pydantic import BeforeValidator, WithJsonSchema

from .errors import FieldError, InputError

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
    Source: REFERENCES.md §9 exact conversions (1 ft = 0.3048 m).

    >>> round(parse("1000 ft", "length").si, 9)
    304.8
    >>> parse("95 kn", "speed").unit
    'kn'
    """
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
    # integers stay integers, as pint itself would read them (exact products)
    mag_user = int(number) if number.lstrip("+-").isdigit() else float(number)
    if not math.isfinite(mag_user):
        raise UnitError(f"{value!r} is not a finite number")
    if not unit_text:
        raise UnitError(f"{value!r} has no unit; a {dim.name} needs one, e.g. {dim.examples}")
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
    if base.dimensionless:
        raise UnitError(f"{value!r} has no physical unit; a {dim.name} needs one, e.g. {dim.examples}")
    for dims, factor in dim.accepts:
        if base.dimensionality == ureg.get_dimensionality(dims):
            mag = float(base.magnitude) * factor
            if not math.isfinite(mag):
                raise UnitError(f"{value!r} is not a finite number")
            return Quantity(mag, text, unit_text, one * factor)
    raise UnitError(f"{value!r} is {_dimension_words(base.dimensionality)}, not a {dim.name}; "
                    f"write it like {dim.examples}")


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


def _dimension_words(dimensionality) -> str:
    text = str(dimensionality)
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


def parse_fraction(value) -> float:
    """A dimensionless fraction: a number, or a string with ``%``.

    >>> parse_fraction("6 %")
    0.06
    """
    if isinstance(value, bool):
        raise UnitError(f"{value!r} is not a fraction; write a number such as 0.06 or a percentage such as '6 %'")
    out = None
    if isinstance(value, (int, float)):
        out = float(value)
    elif isinstance(value, str):
        text = value.strip()
        try:
            out = float(text[:-1].strip()) / 100.0 if text.endswith("%") else float(text)
        except ValueError:
            out = None
    if out is None:
        raise UnitError(f"{value!r} is not a fraction; write a number such as 0.06 or a percentage "
                        f"such as '6 %'")
    if not math.isfinite(out):
        raise UnitError(f"{value!r} is not a finite number")
    return out


# --------------------------------------------------------------------------
# Field types of the requirement-file models (pydantic)
# --------------------------------------------------------------------------


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


# --------------------------------------------------------------------------
# YAML text -> data and the line of every key
# --------------------------------------------------------------------------

MAX_NODES = 100_000      # more values than this (through aliases) is not a requirement file

_YAML_HINTS = (
    ("'\\t'", "indent with spaces, not tabs"),
    ("mapping values are not allowed", "a missing space after ':', a missing quote, or a wrong indent?"),
    ("could not find expected ':'", "a key without ':' or an unclosed quote?"),
    ("expected <block end>", "the indentation does not line up with the lines above"),
    ("found undefined alias", "an alias (*name) needs an anchor (&name) above it"),
)


def read_yaml(text: str, filename: str, empty: str = "the file is empty (it holds no YAML data)"):
    """Parse YAML text into (data, lines): lines maps key paths to line numbers.

    Rejects, as located :class:`~sizing.errors.InputError` s, syntax errors
    (with a hint for the usual slips), control characters, duplicate keys,
    aliases that contain themselves or expand past :data:`MAX_NODES`, and an
    empty document (message ``empty``).
    """
    import yaml

    try:
        loader = yaml.SafeLoader(text)
        try:
            node = loader.get_single_node()
            if node is None:
                raise InputError(empty, filename, 1)
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


def is_dimension(q: Quantity, dim: str) -> bool:
    """Whether a parsed quantity's text reads as the given dimension."""
    try:
        parse(q.text, dim)
        return True
    except UnitError:
        return False


def no_nulls(node):
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
                    inner = no_nulls(v[0])
                    out.update({kk: vv for kk, vv in inner.items() if kk not in out})
                    continue
            out[k] = no_nulls(v)
        return out
    if isinstance(node, list):
        return [no_nulls(v) for v in node]
    return node

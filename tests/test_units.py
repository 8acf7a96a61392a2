"""The unit table (sizing/inputs/unit_table.py) against pint, the library it was written from.

Reading a requirement file looks units up in a table generated from pint instead of
importing pint (which takes longer than the rest of a solve). Checks: every entry of the
table gives exactly what pint gives (the same SI value, scale and message, for every kind
of field and a range of magnitudes); every unit the example and study files and the docs
use is in the table; every unit the tests use reads the same either way; reading the
examples imports no pint.  # Source: pint (the reference library), its own definitions
"""
import subprocess
import sys
from pathlib import Path

import pytest

from sizing.inputs import unit_gen, unit_table
from sizing.inputs import units as U

ROOT = Path(__file__).resolve().parents[1]
MAGNITUDES = ["0", "1", "2", "3", "7", "15", "95", "250", "1500", "35000", "47000", "0.1", "0.45", "2.5",
              "0.0254", "1e-7", "123456.789", "-10", "16846", "0.9", "1.2", "4.05"]
USED = unit_gen.used_units(ROOT)


def parse_with_pint(text, dimension, monkeypatch):
    with monkeypatch.context() as mp:
        mp.setattr(unit_table, "lookup", lambda *a, **k: None)
        return outcome(text, dimension)


def outcome(text, dimension):
    try:
        return U.parse(text, dimension)
    except U.UnitError as e:
        return ("error", str(e))


@pytest.mark.parametrize("unit", sorted({**unit_table.UNITS, **unit_table.DIFFERENCES}))
def test_every_entry_is_what_pint_gives(unit, monkeypatch):
    for dimension in U.DIMENSIONS:
        for mag in MAGNITUDES:
            text = f"{mag} {unit}"
            assert outcome(text, dimension) == parse_with_pint(text, dimension, monkeypatch), (text, dimension)


def test_examples_and_docs_use_only_listed_units():
    # a solve of an example or of a file written from the docs never needs pint
    examples = {p.name for p in [*ROOT.glob("requirements/*.yaml"), *ROOT.glob("studies/*.yaml"),
                                 *ROOT.glob("*.md"), *ROOT.glob("docs/*.md")]}
    needed = {u for u, where in USED.items() if examples & set(where)}
    assert len(needed) >= 10
    missing = sorted(u for u in needed if unit_table.lookup(u) is None and unit_table.lookup(u, True) is None
                     and _pint_knows(u))
    assert not missing, f"run `python -m sizing.inputs.unit_gen` to add {missing}"


def _pint_knows(unit):
    try:
        U.registry().parse_units(unit)
        return True
    except Exception:  # noqa: BLE001 - not a unit: parse() explains it with pint's help
        return False


@pytest.mark.parametrize("unit", sorted(USED))
def test_units_the_tests_use_read_the_same_either_way(unit, monkeypatch):
    for dimension in U.DIMENSIONS:
        text = f"12.5 {unit}"
        assert outcome(text, dimension) == parse_with_pint(text, dimension, monkeypatch), (text, dimension)


def test_table_dimensions_are_pints():
    ureg = U.registry()
    for dim in U.DIMENSIONS.values():
        for spec, _factor in dim.accepts:
            assert unit_table.ACCEPTS[spec] == str(ureg.get_dimensionality(spec))


def test_reading_the_examples_imports_no_pint():
    code = ("import sys, glob\nfrom sizing.inputs.spec import load\n"
            "[load(p) for p in sorted(glob.glob('requirements/*.yaml'))]\n"
            "print('pint' in sys.modules)")
    r = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, timeout=120)
    assert r.returncode == 0 and r.stdout.strip() == "False", r.stderr


def test_an_unknown_unit_still_gets_pints_help():
    with pytest.raises(U.UnitError, match="unknown unit 'knts'.*did you mean"):
        U.parse("95 knts", "speed")


@pytest.mark.parametrize("text", ["1e300 parsecs", "1e308 kft", "1" + "0" * 20 + " km"])
def test_numbers_past_the_float_range_read_the_same_either_way(text, monkeypatch):
    # the message about a value too large for a float is the same with or without the table
    for dimension in ("length", "speed"):
        assert outcome(text, dimension) == parse_with_pint(text, dimension, monkeypatch)


def test_a_dimension_reads_the_same_whatever_order_pint_built_it_in():
    # pint lists base dimensions in the order it first met them (it depends on what was parsed
    # before, so on test order); the message must not (common practice, no source)
    from sizing.inputs.units import _dimension_words

    for a, b in (("[length] * [mass] / [time] ** 2", "[mass] * [length] / [time] ** 2"),
                 ("[length] ** 2 * [mass] / [time] ** 3", "[mass] * [length] ** 2 / [time] ** 3")):
        assert _dimension_words(a) == _dimension_words(b)
    assert _dimension_words("[length] * [mass] / [time] ** 2") == "a force ([mass] * [length] / [time] ** 2)"
    ureg = U.registry()
    assert _dimension_words(ureg.parse_units("lbf").dimensionality).startswith("a force")

"""Bad input: located messages, exit code 2, no traceback; fuzzed files never crash.

Every file in tests/broken/ is one class of bad input (docs/file-format.md §9) run through the
command line (in this process; tests/test_cli.py runs the console script on one). The
expectations below are the project's contract for those messages (docs/file-format.md §9:
file, line, field, what was wrong, what would fit),
not numbers from a published source.  # common practice, no source
"""
from __future__ import annotations

import contextlib
import copy
import hashlib
import io
import os
import random
import signal
import subprocess
import sys
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sizing import cli
from sizing.common.caution import CAUTION
from sizing.common.errors import InputError
from sizing.inputs.spec import load, load_text, validate

from .cliutil import run as run_in_process

ROOT = Path(__file__).resolve().parents[1]
BROKEN = ROOT / "tests" / "broken"
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
SIZING = str(Path(sys.executable).with_name("sizing"))

# file -> (line, field path or None, words the message must contain)
# common practice, no source: the message contract of docs/file-format.md §9
EXPECTED = {
    "yaml-syntax": (9, None, ["YAML syntax", "flow mapping that starts on line 8"]),
    "yaml-tab": (11, None, ["YAML syntax", "tab"]),
    "unknown-key": (6, "aircraft.aerodynamics.aspect_ration", ["unknown key", "did you mean 'aspect_ratio'"]),
    "unknown-key-requirement": (21, "requirements[1] (id turn-4g).load_facter",
                                ["unknown key", "did you mean 'load_factor'"]),
    "bare-number": (23, "requirements[1] (id turn-4g).altitude", ["no unit", "length", "ft"]),
    "wrong-dimension": (24, "requirements[2] (id field).ground_roll", ["mass", "not a length", "'800 m'"]),
    "unknown-unit": (18, "requirements[0] (id approach-stall).speed", ["unknown unit 'knts'", "kn"]),
    "negative-speed": (18, "requirements[0] (id approach-stall).speed", ["must be positive", "-95 kn"]),
    "clmax-implausible": (8, "aircraft.aerodynamics.cl_max.clean", ["CLmax 9", "0.2 to 4.5"]),
    "weight-fraction-above-one": (18, "requirements[0] (id approach-stall).weight_fraction", ["1.3", "(0, 1]"]),
    "fuel-fraction-above-one": (16, "aircraft.weights.fuel.fraction", ["1.22", "[0, 1)"]),
    "empty-fraction-above-one": (15, "aircraft.weights.empty.value", ["1.55", "between 0 and 1"]),
    "mach-negative": (22, "requirements[1] (id turn-4g).mach", ["-0.6", "(0, 5]"]),
    "duplicate-id": (24, "requirements[2] (id turn-4g).id", ["duplicate requirement id 'turn-4g'"]),
    "unknown-kind": (19, "requirements[1] (id turn-4g)", ["unknown kind 'sustained-trun'",
                                                         "did you mean 'sustained-turn'", "stall-speed"]),
    "altitude-outside-atmosphere": (23, "requirements[1] (id turn-4g).altitude",
                                    ["150 km", "standard atmosphere", "84852 m"]),
    "empty": (1, None, ["empty", "mapping"]),
    "not-a-mapping": (1, None, ["mapping", "got a list"]),
    "binary-garbage": (3, None, ["not a text file"]),
    "not-utf8": (2, None, ["not UTF-8"]),
    "cd0-with-unit": (5, "aircraft.aerodynamics.cd0", ["'0.020 kg' has a unit", "plain number"]),
    "cd0-table-not-increasing": (5, "aircraft.aerodynamics.cd0.mach", ["not strictly increasing"]),
    "mach-above-polar-table": (22, "requirements[1] (id turn-4g).mach", ["above the drag polar's Mach table"]),
    "duplicate-yaml-key": (7, "aircraft.aerodynamics.aspect_ratio", ["duplicate key 'aspect_ratio'", "line 6"]),
    "missing-field": (19, "requirements[1] (id turn-4g).load_factor", ["missing required field 'load_factor'"]),
    "missing-kind": (19, "requirements[1] (id turn-4g)", ["missing 'kind'", "sustained-turn"]),
    "unknown-engine-type": (10, "aircraft.propulsion.type", ["did you mean 'turbofan-low-bypass'", "turboprop"]),
    "requirements-not-a-list": (17, "requirements", ["expected a list"]),
    "not-a-number": (6, "aircraft.aerodynamics.aspect_ratio", ["not a finite number"]),
    "alias-cycle": (8, "aircraft.aerodynamics.cl_max.nested", ["cycle"]),
    "segment-unknown": (18, "requirements[0] (id approach-stall).weight_fraction.after",
                        ["'cruise' names no mission segment"]),
    "jet-engine-mass-per-power": (15, "aircraft.weights.empty.propulsion", ["mass per sea-level thrust", "kg/N"]),
    "null-value": (7, "aircraft.aerodynamics.oswald_efficiency", ["no value given"]),
}


def _run(args, timeout=60):
    return subprocess.run([SIZING, *args], capture_output=True, text=True, timeout=timeout,
                          env={**os.environ, "PYTHONWARNINGS": "ignore"})


@pytest.fixture(scope="module")
def broken_runs():
    """Every broken file through `sizing solve`, in this process (the console script itself
    is run on one of them in tests/test_cli.py)."""
    files = sorted(BROKEN.glob("*.yaml"))
    return {f.stem: run_in_process("solve", f) for f in files}


def test_every_broken_file_has_an_expectation():
    # common practice, no source: 15 or more classes, each one checked below
    names = {f.stem for f in BROKEN.glob("*.yaml")}
    assert len(names) >= 15
    assert names == set(EXPECTED)


@pytest.mark.parametrize("name", sorted(EXPECTED))
def test_broken_file_through_the_cli(broken_runs, name):
    # common practice, no source: exit 2, one located message, no traceback (docs/file-format.md §9)
    r = broken_runs[name]
    line, field, words = EXPECTED[name]
    assert r.returncode == 2, (r.returncode, r.stdout, r.stderr)
    assert "Traceback" not in r.stderr + r.stdout
    assert r.stdout == ""
    first = r.stderr.splitlines()[0]
    path = str(BROKEN / f"{name}.yaml")
    assert first.startswith(f"error: {path}:{line}: "), first
    if field is not None:
        assert first.startswith(f"error: {path}:{line}: {field}: "), first
    for w in words:
        assert w in r.stderr, (w, r.stderr)


def test_debug_shows_the_traceback():
    # common practice, no source: --debug re-raises (before or after the command), so the
    # interpreter prints the traceback
    for args in (["--debug", "check", str(BROKEN / "unknown-key.yaml")],
                 ["check", str(BROKEN / "unknown-key.yaml"), "--debug"]):
        with pytest.raises(InputError, match="aspect_ration"):
            cli.main(args)


def test_unreadable_paths():
    # common practice, no source: a missing file or a directory is bad input, exit 2
    for path in (BROKEN / "no-such-file.yaml", BROKEN):
        rc, out, err = _main(["solve", str(path)])
        assert rc == 2 and err.startswith(f"error: {path}: cannot read the file"), err


def test_every_problem_is_listed():
    # common practice, no source: three slips in one file -> the first located, all listed
    text = (BROKEN / "unknown-key.yaml").read_text().replace("clean: 1.3", "clean: 9").replace(
        "altitude: 15000 ft", "altitude: 15000")
    with pytest.raises(InputError) as e:
        load_text(text, "three.yaml")
    assert e.value.line == 6 and e.value.field == "aircraft.aerodynamics.aspect_ration"
    assert [o.line for o in e.value.others] == [8, 23]
    assert "and 2 more problems" in e.value.describe()


def test_units_that_fit_are_named():
    # Source: docs/file-format.md §2 "A bare number where a unit is needed is an error that names units that
    # which unit kinds fit"; 1 kn = 1852/3600 m/s, 1 ft = 0.3048 m (exact definitions)
    base = (BROKEN / "unknown-key.yaml").read_text().replace("aspect_ration", "aspect_ratio")
    spec = load_text(base.replace("speed: 95 kn", "speed: 95 knot").replace("15000 ft", "15 kft"), "ok.yaml")
    assert spec.requirement("approach-stall").speed.si == pytest.approx(95 * 1852 / 3600, rel=1e-12)
    assert spec.requirement("turn-4g").altitude.si == pytest.approx(15000 * 0.3048, rel=1e-12)
    # a temperature offset in degC is a difference, not an absolute temperature
    spec = load_text(base.replace("ground_roll: 800 m}", "ground_roll: 800 m, temperature_offset: 15 degC}"), "t")
    assert spec.requirement("field").temperature_offset.si == pytest.approx(15.0)
    with pytest.raises(InputError, match="does not start with a number"):
        load_text(base.replace("speed: 95 kn", "speed: kn"), "x.yaml")
    with pytest.raises(InputError, match=r"'250 kn', '120 m/s'"):
        load_text(base.replace("speed: 95 kn", "speed: 95"), "x.yaml")


# ------------------------------------------------------------------ in-process CLI

class _Hang(Exception):
    pass


def _alarm(_sig, _frame):
    raise _Hang()


def _main(argv, limit_s=30):
    """Run sizing.cli.main in-process; (exit code, stdout, stderr). A hang fails."""
    out, err = io.StringIO(), io.StringIO()
    old = signal.signal(signal.SIGALRM, _alarm)
    signal.alarm(limit_s)
    try:
        with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
            rc = cli.main(argv)
    except _Hang:
        pytest.fail(f"sizing {' '.join(argv)} did not finish in {limit_s} s")
    finally:
        signal.alarm(0)
        signal.signal(signal.SIGALRM, old)
    return rc, out.getvalue(), err.getvalue()


def _check_outcome(rc, out, err, path):
    # common practice, no source: exit 0, 2 or 3 with a message, never a traceback
    assert rc in (0, 2, 3), (rc, out, err)
    assert "Traceback" not in out + err
    if rc == 2:
        assert err.startswith(f"error: {path}"), err
        assert out == ""
    else:
        assert CAUTION in out
        assert ("NO FEASIBLE DESIGN" in out) == (rc == 3)


# ------------------------------------------------------------------ fuzzing

UNITS = ["ft", "m", "kn", "kg", "lb", "s", "min", "K", "degC", "Pa", "N", "kg/m^2", "1/h", "ft/min",
         "kg/N", "kg/kW", "W/N", "%", "furlong", "", "knts", "m/s^2"]
NUMBERS = [0, -1, 0.5, 2, 1e9, -1e-9, float("nan"), float("inf"), True, None, "x", [], {}]


def _paths(node, path=()):
    yield path
    if isinstance(node, dict):
        for k, v in node.items():
            yield from _paths(v, path + (k,))
    elif isinstance(node, list):
        for i, v in enumerate(node):
            yield from _paths(v, path + (i,))


def _parent(data, path):
    node = data
    for k in path[:-1]:
        node = node[k]
    return node


def _mutate(data, rnd):
    """One random edit of a parsed requirement file (in place)."""
    paths = [p for p in _paths(data) if p]
    path = rnd.choice(paths)
    parent, key = _parent(data, path), path[-1]
    value = parent[key]
    op = rnd.choice(["drop", "unit", "number", "type", "rename", "scale"])
    if op == "drop":
        del parent[key]
    elif op == "unit" and isinstance(value, str) and value[:1].isdigit():
        parent[key] = value.split()[0] + " " + rnd.choice(UNITS)
    elif op == "number" or op == "type":
        parent[key] = rnd.choice(NUMBERS)
    elif op == "rename" and isinstance(key, str):
        parent[key[:-1] + "x" if len(key) > 1 else "x"] = parent.pop(key)
    elif op == "scale" and isinstance(value, (int, float)) and not isinstance(value, bool):
        parent[key] = value * rnd.choice([-1, 0, 0.3, 3, 100])
    elif op == "scale" and isinstance(value, str) and value[:1].isdigit():
        num, _, unit = value.partition(" ")
        try:
            parent[key] = f"{float(num) * rnd.choice([-1, 0, 0.3, 3, 100]):g} {unit}"
        except ValueError:
            pass


def _corrupt(text, rnd):
    """Random damage to the YAML text itself."""
    op = rnd.choice(["cut", "insert", "delete", "indent", "quote"])
    if not text.strip():
        return text + rnd.choice(["", ":", "- [", "title: x\n"])
    i = rnd.randrange(len(text))
    if op == "cut":
        return text[:i]
    if op == "insert":
        return text[:i] + rnd.choice([":", "[", "{", "- ", "\t", "&a ", "*a", "'", "\x07", "%", "\n  x"]) + text[i:]
    if op == "delete":
        return text[:i] + text[i + rnd.randint(1, 8):]
    if op == "indent":
        lines = text.splitlines(True)
        j = rnd.randrange(len(lines))
        lines[j] = " " * rnd.randint(1, 5) + lines[j]
        return "".join(lines)
    return text.replace(":", ": '", 1)


_TEXTS = {p.name: p.read_text() for p in EXAMPLES}


@pytest.mark.slow
@settings(max_examples=150, deadline=None,
          suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
@given(name=st.sampled_from(sorted(_TEXTS)), seed=st.integers(0, 2 ** 32 - 1),
       edits=st.integers(1, 3), text_level=st.booleans())
def test_fuzzed_files_never_crash(tmp_path_factory, name, seed, edits, text_level):
    # common practice, no source: mutated example files end in exit 0, 2 or 3, never a
    # traceback or a hang (docs/file-format.md §9 exit codes)
    rnd = random.Random(seed)
    if text_level:
        text = _TEXTS[name]
        for _ in range(edits):
            text = _corrupt(text, rnd)
    else:
        data = yaml.safe_load(_TEXTS[name])
        for _ in range(edits):
            _mutate(data, rnd)
        text = yaml.safe_dump(data, sort_keys=False, allow_unicode=True)
    path = tmp_path_factory.mktemp("fuzz") / name
    path.write_text(text, encoding="utf-8")
    _check_outcome(*_main(["solve", str(path)]), str(path))


def test_fuzzed_files_through_the_console_script(tmp_path):
    # common practice, no source: a few mutated files through the real script as well
    rnd = random.Random(2024)
    files = []
    for k in range(2):
        src = EXAMPLES[k % len(EXAMPLES)]
        data = yaml.safe_load(src.read_text())
        for _ in range(2):
            _mutate(data, rnd)
        f = tmp_path / f"fuzz-{k}.yaml"
        f.write_text(yaml.safe_dump(data, sort_keys=False))
        files.append(f)
    with ThreadPoolExecutor(2) as pool:
        runs = list(pool.map(lambda f: _run(["solve", str(f)]), files))
    for f, r in zip(files, runs):
        _check_outcome(r.returncode, r.stdout, r.stderr, str(f))


def test_validate_rejects_modified_data_with_a_location():
    # common practice, no source: studies re-validate changed raw data (sizing.spec.validate)
    spec = load(EXAMPLES[0])
    data = copy.deepcopy(spec.data)
    data["requirements"][0]["altitude"] = "12 parsecs"
    with pytest.raises(InputError) as e:
        validate(data, "<study point>")
    assert e.value.file == "<study point>" and e.value.field.startswith("requirements[0]")
    assert "unknown unit 'parsecs'" in e.value.message or "parsecs" in e.value.message


# ------------------------------------------------------------------ inputs and outputs

def _digest(path):
    st_ = path.stat()
    return hashlib.sha256(path.read_bytes()).hexdigest(), st_.st_mtime_ns, st_.st_size


def test_inputs_are_never_modified(tmp_path):
    # common practice, no source: docs/file-format.md §9 "Input files are only read, never written" (hash before/after)
    files = [*EXAMPLES, BROKEN / "unknown-key.yaml", BROKEN / "binary-garbage.yaml"]
    before = {f: _digest(f) for f in files}
    for f in files:
        _main(["check", str(f)])
        _main(["solve", str(f)])
        _main(["solve", "--json", str(f)])
    assert {f: _digest(f) for f in files} == before


def test_schema_output_is_written_atomically(tmp_path):
    # common practice, no source: outputs via sizing.fileio.atomic_write, no temp files left
    target = tmp_path / "out" / "requirements.schema.json"
    rc, out, _ = _main(["schema", "-o", str(target)])
    assert rc == 0 and out.strip() == f"wrote {target}"
    rc, printed, _ = _main(["schema"])
    assert target.read_text() == printed
    assert sorted(p.name for p in target.parent.iterdir()) == ["requirements.schema.json"]

"""Hostile and careless input: segment names that collide with report labels, devices and
pipes given as files, other encodings, deep nesting, numbers past the float range, values
that parse but mean nothing. Every one is refused with a located message (exit 2) or read
correctly; none crashes, hangs or silently changes the answer.

The expectations are the project's input contract (file, line, field, what was wrong, what
would fit), not published numbers.  # common practice, no source
"""
from __future__ import annotations

import contextlib
import io
import math
import os
import signal
import socket
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sizing import cli
from sizing import weights as Wt
from sizing.common.errors import InputError
from sizing.inputs.spec import load, load_text
from sizing.problem import tree as M

ROOT = Path(__file__).resolve().parents[1]
LONG_RANGE = ROOT / "requirements" / "long-range-jet.yaml"
TRAINER = ROOT / "requirements" / "trainer-jet.yaml"


class _Hang(Exception):
    pass


def _main(argv, limit_s=20):
    """sizing.cli.main in-process; (exit code, stdout, stderr). A hang fails the test."""
    def alarm(_sig, _frame):
        raise _Hang()

    out, err = io.StringIO(), io.StringIO()
    old = signal.signal(signal.SIGALRM, alarm)
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


# ------------------------------------------------------------------ 1. segment names

def test_a_default_label_never_captures_a_users_after(tmp_path):
    # The long-range example with its first segment named like the (former) default name
    # of the unnamed cruise: `after: cruise-3` is the weight after the FIRST segment, the
    # written fraction 0.970 (Raymer Table 3.2 warm-up and takeoff, docs/references.md §12.4).
    text = LONG_RANGE.read_text()
    text = (text.replace("name: warm-up and takeoff", "name: cruise-3")
                .replace("kind: cruise, name: outbound cruise, ", "kind: cruise, ")
                .replace("kind: approach-speed, cas: 125 kn,", "kind: approach-speed, cas: 125 kn, "
                                                                    "weight_fraction: {after: cruise-3},"))
    f = tmp_path / "collide.yaml"
    f.write_text(text)
    rc, out, _err = _main(["solve", str(f)])
    assert rc == 0 and "weight fraction 0.970, after cruise-3]" in out
    fuel = out.split("Mission fuel by segment\n", 1)[1].split("\n\n", 1)[0].splitlines()
    assert fuel[0].split()[0] == "cruise-3" and fuel[2].startswith("  segment 3 (cruise) ")
    assert "range of segment 3 (cruise)" in out


BASE = """title: names
aircraft:
  aerodynamics: {{cd0: 0.02, aspect_ratio: 6, oswald_efficiency: 0.8, cl_max: {{clean: 1.3, landing: 2.0}}}}
  propulsion: {{type: turbofan-low-bypass}}
  weights: {{crew: 200 kg, payload: 300 kg, empty: {{model: fraction, value: 0.5}}}}
mission:
  segments:
{segments}
requirements:
  - {{id: stall, kind: stall-speed, speed: 100 kn, config: landing, weight_fraction: {{after: '{after}'}}}}
"""
FRACTIONS = (0.99, 0.97, 0.95, 0.93, 0.91)     # distinct, so a wrong segment shows
# names a careless user might pick: plain ones, and the labels (old and new style) that
# reports give unnamed segments
POOL = ["out", "back", "fixed-1", "fixed-2", "fixed-3", "fixed-4", "segment 1 (fixed)",
        "segment 2 (fixed)", "segment 3 (fixed)", "segment 4 (fixed)"]


@settings(max_examples=60, deadline=None, derandomize=True, suppress_health_check=[HealthCheck.too_slow])
@given(names=st.lists(st.one_of(st.none(), st.sampled_from(POOL)), min_size=2, max_size=5),
       pick=st.integers(0, 10))
def test_generated_name_collisions(names, pick):
    # Hand calculation: with fixed segments only, the weight after segment j over takeoff
    # weight is the product of the fractions written up to j (Raymer Ch. 3 mission
    # fractions, docs/references.md §12.4).
    named = [i for i, n in enumerate(names) if n is not None]
    if not named:
        names[0], named = "out", [0]
    target = named[pick % len(named)]
    segs = "\n".join(f"    - {{kind: fixed, fraction: {FRACTIONS[i]}"
                     + (f", name: '{n}'" if n is not None else "") + "}" for i, n in enumerate(names))
    text = BASE.format(segments=segs, after=names[target])
    labels = {f"segment {i + 1} (fixed)": i for i, n in enumerate(names) if n is None}
    dup = next((i for i, n in enumerate(names) if n is not None and n in names[:i]), None)
    clash = next((i for i, n in enumerate(names) if n is not None and labels.get(n, i) != i), None)
    bad = min(i for i in (dup, clash, len(names)) if i is not None)
    if bad < len(names):
        with pytest.raises(InputError) as e:
            load_text(text, "names.yaml")
        assert e.value.line == 8 + bad and e.value.field == f"mission.segments[{bad}].name", e.value.describe()
        assert ("duplicate segment name" if bad == dup else "label the unnamed segment") in e.value.message
        return
    spec = load_text(text, "names.yaml")
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree)
    ends = Wt.segment_end_fractions(tree, ac, 3000.0)
    assert set(ends) == {n for n in names if n is not None}            # only names the user wrote
    assert ends[names[target]] == pytest.approx(math.prod(FRACTIONS[:target + 1]), rel=1e-12)
    shown = [label for label, _f, _b in Wt.mission_fractions(tree, ac, 3000.0)]
    assert len(set(shown)) == len(shown)                                 # fuel-table rows distinct


# ------------------------------------------------------------------ 2. devices, pipes, encodings

@pytest.mark.parametrize("device,kind", [("/dev/zero", "character device"), ("/dev/urandom", "character device")])
def test_devices_are_refused_at_once(device, kind):
    if not os.path.exists(device):
        pytest.skip(f"no {device} here")
    for command in ("check", "solve"):
        rc, out, err = _main([command, device], limit_s=10)
        assert rc == 2 and out == "" and err.startswith(f"error: {device}: cannot read the file: it is a {kind}")


def test_named_pipe_without_writer_does_not_hang(tmp_path):
    fifo = tmp_path / "pipe.yaml"
    os.mkfifo(fifo)
    rc, _out, err = _main(["check", str(fifo)], limit_s=10)
    assert rc == 2 and "it is a named pipe, not a file" in err
    study = tmp_path / "study.yaml"
    os.mkfifo(study)
    rc, _out, err = _main(["study", str(study), "-o", str(tmp_path / "out")], limit_s=10)
    assert rc == 2 and "it is a named pipe" in err and "a study file" in err


def test_socket_and_oversized_file(tmp_path):
    sock_path = tmp_path / "s.yaml"
    s = socket.socket(socket.AF_UNIX)
    try:
        s.bind(str(sock_path))
        rc, _out, err = _main(["check", str(sock_path)])
        assert rc == 2 and "cannot read the file" in err
    finally:
        s.close()
    big = tmp_path / "big.yaml"
    big.write_text("title: x\n" + "#" * 5_000_001 + "\n")
    rc, _out, err = _main(["check", str(big)])
    assert rc == 2 and "more than 5,000,000 bytes" in err


@pytest.mark.parametrize("encoding", ["utf-16", "utf-32", "utf-16-be-bom", "utf-8-sig"])
def test_other_unicode_encodings_with_a_byte_order_mark(tmp_path, encoding):
    # Source: The Unicode Standard, byte-order marks FE FF / FF FE / 00 00 FE FF / EF BB BF
    # (docs/references.md §17.9; from memory for the section)
    text = TRAINER.read_text()
    raw = b"\xfe\xff" + text.encode("utf-16-be") if encoding == "utf-16-be-bom" else text.encode(encoding)
    f = tmp_path / "enc.yaml"
    f.write_bytes(raw)
    assert load(f).model == load(TRAINER).model


def test_utf16_without_mark_says_what_is_expected(tmp_path):
    f = tmp_path / "enc.yaml"
    f.write_bytes(TRAINER.read_text().encode("utf-16-le"))
    with pytest.raises(InputError, match="UTF-16/UTF-32 with a byte-order mark"):
        load(f)


@pytest.mark.parametrize("depth,line", [(100, 2), (400, 2)])
def test_deep_nesting_keeps_its_line(depth, line):
    text = "title: x\nnote: " + "[" * depth + "]" * depth + "\n"
    with pytest.raises(InputError) as e:
        load_text(text, "deep.yaml")
    assert e.value.line == line and "nests more than" in e.value.message


def test_deep_block_mapping_keeps_its_line():
    # deep enough that PyYAML's composer runs out of recursion: the line comes from the
    # event stream instead
    text = "title: x\naircraft:\n" + "".join("  " * (i + 1) + f"k{i}:\n" for i in range(700)) + "  " * 701 + "v: 1\n"
    with pytest.raises(InputError) as e:
        load_text(text, "deep.yaml")
    assert e.value.line is not None and 60 <= e.value.line <= 70


# ------------------------------------------------------------------ 2. huge numbers, NaN, infinity

HUGE = "1" + "0" * 400
NUMBER_FIELDS = [
    ("aspect_ratio: 5.2", f"aspect_ratio: {HUGE}", "aircraft.aerodynamics.aspect_ratio"),
    ("aspect_ratio: 5.2", "aspect_ratio: .inf", "aircraft.aerodynamics.aspect_ratio"),
    ("speed: 100 kn", f"speed: {HUGE} kn", "requirements[0] (id approach-stall).speed"),
    ("speed: 100 kn", "speed: 1e400 kn", "requirements[0] (id approach-stall).speed"),
    ("load_factor: 4.0", f"load_factor: {HUGE}", "requirements[1] (id turn-4g).load_factor"),
    ("load_factor: 4.0", "load_factor: .nan", "requirements[1] (id turn-4g).load_factor"),
    ("fraction: 0.24", f"fraction: {HUGE}", "aircraft.weights.fuel.fraction"),
    ("fraction: 0.24", f"fraction: '{HUGE} %'", "aircraft.weights.fuel.fraction"),
    ("fraction: 0.24", "fraction: -.inf", "aircraft.weights.fuel.fraction"),
    ("payload: 300 kg", "payload: 1e300 kg", "aircraft.weights.payload"),
    ("engines: 1", f"engines: {HUGE}", "aircraft.propulsion.engines"),
]


def _trainer_text():
    text = TRAINER.read_text()
    for want in ("aspect_ratio: 5.2", "speed: 100 kn", "load_factor: 4.0", "fraction: 0.24", "payload: 300 kg",
                 "engines: 1"):
        assert want in text, want
    return text


@pytest.mark.parametrize("old,new,field", NUMBER_FIELDS, ids=[f"{n[:24]}" for _o, n, _f in NUMBER_FIELDS])
def test_numbers_past_the_float_range_are_located(old, new, field):
    text = _trainer_text().replace(old, new, 1)
    with pytest.raises(InputError) as e:
        load_text(text, "huge.yaml")
    assert e.value.field == field, e.value.describe()
    assert e.value.line == text[:text.index(new)].count("\n") + 1
    assert len(e.value.message) < 400      # a 400-digit number is shortened, not echoed


def test_mach_table_entry_past_the_float_range():
    text = LONG_RANGE.read_text().replace("cd0: [0.0175,", f"cd0: [{HUGE},")
    with pytest.raises(InputError) as e:
        load_text(text, "huge.yaml")
    line = text[:text.index(HUGE)].count("\n") + 1
    assert e.value.field.startswith("aircraft.aerodynamics.cd0") and e.value.line == line


STUDY_VALUES = [
    ("sweep:\n  requirements.turn-4g.load_factor: [3.0, .nan, 4.0]\n", 3, "not a finite number"),
    (f"sweep:\n  requirements.turn-4g.load_factor:\n    - 3.0\n    - {HUGE}\n", 5, "not a finite number"),
    (f"sweep:\n  requirements.field.ground_roll: ['{HUGE} m', '700 m']\n", 3, "not a finite number"),
    ("sweep:\n  requirements.turn-4g.load_factor: {from: .inf, to: 5.0, steps: 3}\n", 3, "not a finite number"),
    ("sweep:\n  requirements.turn-4g.load_factor: {from: -1.7e308, to: 1.7e308, steps: 3}\n", 3,
     "more than a number can hold"),
    (f"sample:\n  count: 10\n  vary:\n    requirements.turn-4g.load_factor: {{uniform: [3.0, {HUGE}]}}\n", 5,
     "not a finite number"),
    ("sample:\n  count: 10\n  vary:\n    requirements.turn-4g.load_factor: {normal: {mean: 1e308, std: 1e308}}\n",
     5, "past what a number can hold"),
]


@pytest.mark.parametrize("body,line,words", STUDY_VALUES, ids=[w[:20] + str(i) for i, (_b, _l, w) in
                                                               enumerate(STUDY_VALUES)])
def test_study_values_past_the_float_range(tmp_path, body, line, words):
    f = tmp_path / "study.yaml"
    f.write_text(f"base: {TRAINER}\n{body}")
    rc, out, err = _main(["study", str(f), "-o", str(tmp_path / "out")])
    assert rc == 2 and out == "" and "Traceback" not in err, err
    assert err.startswith(f"error: {f}:{line}: ") and words in err, err
    assert not (tmp_path / "out").exists()


# ------------------------------------------------------------------ 2. parses, but means nothing

MEANINGLESS = [
    # engines is a count: YAML's true is not 1
    ("engines: 1", "engines: true", "aircraft.propulsion.engines",
     "whole number"),
    # ids and names print to terminals and pages: no escape sequences, no line breaks
    ("id: approach-stall", 'id: "stall\\e[31m"', "requirements[0] (id 'stall\\x1b[31m').id", "control character"),
    ("id: approach-stall", 'id: "stall\\nnext"', "requirements[0] (id 'stall\\nnext').id", "control character"),
    ("title: ", 'title: "A\\rB" #', "title", "control character"),
    # a level turn needs n > 1 (n = 1/cos(bank), Gudmundsson Eq. (3-1), docs/references.md §6.1)
    ("load_factor: 4.0", "load_factor: 0.2", "requirements[1] (id turn-4g).load_factor", "above 1"),
    ("load_factor: 4.0", "load_factor: 1.0", "requirements[1] (id turn-4g).load_factor", "above 1"),
    # flaps raise CLmax (typical flapped CLmax 1.4 to 3.0, docs/references.md §3.5)
    ("landing: 2.0", "landing: 1.1", "aircraft.aerodynamics.cl_max.landing", "below the clean CLmax"),
]


@pytest.mark.parametrize("old,new,field,words", MEANINGLESS, ids=[m[3][:12] + str(i) for i, m in
                                                                  enumerate(MEANINGLESS)])
def test_values_that_parse_but_mean_nothing_are_refused(old, new, field, words):
    text = TRAINER.read_text()
    assert old in text, old
    text = text.replace(old, new, 1)
    with pytest.raises(InputError) as e:
        load_text(text, "odd.yaml")
    assert e.value.field == field and words in e.value.message, e.value.describe()
    assert e.value.line is not None


def test_instantaneous_turn_needs_n_above_one_too():
    text = TRAINER.read_text()
    assert "kind: sustained-turn" in text
    text = text.replace("kind: sustained-turn", "kind: instantaneous-turn", 1).replace("load_factor: 4.0",
                                                                                        "load_factor: 0.9")
    with pytest.raises(InputError, match="instantaneous-turn needs load_factor above 1"):
        load_text(text, "odd.yaml")

"""The what-if engine of ``sizing explore`` (no browser): controls, ranges, warm re-solves, saving.

* Every control's range is the one the file format accepts: validating a file
  with the value just inside passes, just outside fails (the models of
  sizing/inputs are the reference; # common practice, no source).
* The quick numbers of a change equal a fresh solve of the changed file written
  to disk, and the brute-force grid of tests/bruteforce.py (an independent
  sizer sharing only the physics) agrees with them.
* Changes that arrive while a solve runs are coalesced: only the newest is solved.
* Saving keeps the file's comments and units, reads back as the changed file,
  and never overwrites the input or an existing file without confirmation.
"""
from __future__ import annotations

import contextlib
import io
import math
import socket
import threading
from concurrent.futures import ThreadPoolExecutor
from pathlib import Path

import pytest

from sizing import cli
from sizing.common.errors import InputError, SolverError
from sizing.explore.controls import RANGES, Range, controls_of, range_for, range_key
from sizing.explore.engine import Explorer, NeedsConfirmation, Numbers, Session
from sizing.inputs.reader import read_yaml
from sizing.inputs.rewrite import replace_values, set_value
from sizing.inputs.spec import load, load_text, validate
from sizing.problem import Problem, solve

from .test_solve import check_against_grid

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))

# A file that uses the keys the examples leave out, so every range of the table is checked
# (invented values for the test only).
EXTRA = """\
title: range check concept
aircraft:
  category: utility
  design_speeds: {cruise: 250 kn}
  aerodynamics: {cd0: 0.02, k1: 0.1, k2: -0.01, cl_max: {clean: 1.3, landing: 2.0}, cl_min: -1.0,
                 lift_curve_slope: 5.0}
  propulsion: {type: turbojet, engines: 2, throttle_ratio: 1.0}
  speed_limit: {speed: 500 kn}
  weights:
    crew: 100 kg
    payload: 400 kg
    empty: {model: fraction, value: 0.55}
mission:
  tsfc: 0.9 1/h
  trapped: 1 %
  segments:
    - {kind: fixed, name: start, fraction: 0.97}
    - {kind: combat, name: fight, time: 5 min, mach: 0.7, load_factor: 3, altitude: 10000 ft}
    - {kind: loiter, name: hold, time: 20 min, speed: 250 kn}
requirements:
  - {id: ps, kind: excess-power, excess_power: 50 m/s, load_factor: 2, mach: 0.6, altitude: 10000 ft,
     thrust_lapse: 0.8}
  - {id: snap, kind: instantaneous-turn, load_factor: 5, speed: 300 kn}
  - {id: go, kind: takeoff, ground_roll: 800 m, rolling_friction: 0.05, liftoff_speed_ratio: 1.2,
     ground_lift_coefficient: 0.4}
  - {id: stop, kind: landing, ground_roll: 800 m, touchdown_speed_ratio: 1.2, free_roll_time: 2 s}
  - {id: climb, kind: climb, climb_rate: 2000 ft/min, speed: 300 kn}
  - {id: oei, kind: climb-gradient, gradient: 2.4 %, engines_out: 1, speed_ratio: 1.3}
"""


@pytest.fixture(scope="module")
def explorers():
    return {p.name: Explorer(p) for p in EXAMPLES}


# the forms the examples leave out (requirement-document forms of issue 15)
EXTRA_FORMS = """\
title: forms range check concept
aircraft:
  aerodynamics: {cd0: 0.02, aspect_ratio: 9, cl_max: {clean: 1.4, takeoff: 1.9, landing: 2.3}, cl_buffet: 0.85,
                 buffet_margin: 1.3}
  propulsion: {type: turbofan-high-bypass, engines: 2}
  speed_limit: {cas: 250 kn}
  weights: {crew: 200 kg, payload: 1500 kg, fuel: {fraction: 0.25}, empty: {model: fraction, value: 0.55}}
requirements:
  - {id: app, kind: approach-speed, eas: 125 kn, factor: 1.3}
  - {id: ceil, kind: ceiling, altitude: 25000 ft, min_speed_factor: 1.25}
  - {id: fl, kind: landing, field_length: 2200 m, factor: 0.6, obstacle: 50 ft}
  - {id: to, kind: takeoff, distance: 1500 m, obstacle: 35 ft}
"""
EXTRA_STATISTICAL = EXTRA.replace("empty: {model: fraction, value: 0.55}",
                                  "empty: {model: statistical, a: 1.59, c: -0.10, max_mach: 0.9,\n"
                                  "            wing_load_factor: {reference: 4, exponent: 0.5, wing_share: 0.2}}"
                                  ).replace("design_speeds: {cruise: 250 kn}", "design_speeds: {dive: 300 kn}")


def _specs():
    return [load(p) for p in EXAMPLES] + [load_text(EXTRA, "extra.yaml"),
                                          load_text(EXTRA_STATISTICAL, "extra-statistical.yaml"),
                                          load_text(EXTRA_FORMS, "extra-forms.yaml")]


def _beside(rng, side, scale=1.0):
    """[user unit] just inside (side > 0) or just outside (side < 0) the lower end (|side| 1) or the
    upper end (|side| 2); a closed end itself when the unit is SI (a unit conversion rounds)."""
    lower = abs(side) == 1
    end, is_open = (rng.lo, rng.lo_open) if lower else (rng.hi, rng.hi_open)
    inward = (1.0 if lower else -1.0) * 1e-6 * max(abs(end), 1.0)
    if side > 0:
        return (end + inward if is_open or scale != 1.0 else end) / scale
    return (end if is_open else end - inward) / scale


def test_every_range_is_the_one_the_file_format_accepts():
    seen = {}
    for spec in _specs():
        for c in controls_of(spec, _paths(spec)):
            seen.setdefault(range_key(c.raw_path), []).append((spec, c))
    bounded = {k for k, r in RANGES.items() if math.isfinite(r.lo) or math.isfinite(r.hi)}
    assert bounded <= set(seen), f"ranges no file exercises: {sorted(bounded - set(seen))}"
    for key, uses in seen.items():
        rng = uses[0][1].range
        for side in (1, 2):
            if not math.isfinite(rng.lo if side == 1 else rng.hi):
                continue
            # just outside: refused at every control with the key, and by the file format
            for k, (spec, c) in enumerate(uses):
                bad = _beside(rng, -side, c.scale)
                if c.integer:                                   # engines: the next whole number out
                    bad = (rng.lo - 1) if side == 1 else (rng.hi + 1)
                assert c.refusal(bad) is not None, (key, bad)
                if k == 0:
                    with pytest.raises(InputError):
                        validate(set_value(spec.data, c.raw_path, c.raw(bad)), "x.yaml")
            # just inside: accepted by the file format in at least one file (a cross-field rule,
            # such as a Mach number inside the polar's table, may refuse it in another)
            ok = []
            for spec, c in uses:
                good = _beside(rng, side, c.scale)
                assert c.refusal(good) is None, (key, good)
                if ok:
                    continue
                data = set_value(spec.data, c.raw_path, c.raw(good))
                if key[0] == "cl_max":      # flapped CLmax may not be below clean (file format §7)
                    cl = data["aircraft"]["aerodynamics"]["cl_max"]
                    for other in ("clean", "takeoff", "landing"):
                        if other in cl and other != key[1] and "clean" in (key[1], other):
                            flap_side = other != "clean"
                            cl[other] = max(cl[other], good) if flap_side else min(cl[other], good)
                try:
                    validate(data, "x.yaml")
                    ok.append(c.key)
                except InputError:
                    pass
            assert ok, f"{key}: no file accepts {_beside(rng, side)} (SI)"


def _paths(spec):
    from sizing.problem import tree as M

    return [p for p, _ in M.flatten(M.spec_tree(spec))]


def test_controls_are_the_numbers_written_in_the_file():
    # every number written in the file (a plain number or a number with a unit), less the
    # Mach-table breakpoints and the design-space box, is one control (# common practice, no source)
    import re

    num = re.compile(r"^\s*[-+]?(\d+\.?\d*|\.\d+)([eE][-+]?\d+)?\s*\S*.*$")
    for path in EXAMPLES:
        data, _lines = read_yaml(path.read_text(), str(path))
        written = []

        def walk(node, at):
            if isinstance(node, dict):
                for k, v in node.items():
                    if k not in ("mach", "design_space", "id", "title", "note", "name", "kind", "type", "model",
                                 "config", "after", "objective") or (k == "mach" and not isinstance(v, list)):
                        walk(v, at + (k,))
            elif isinstance(node, list):
                for i, v in enumerate(node):
                    walk(v, at + (i,))
            elif isinstance(node, (int, float)) and not isinstance(node, bool) or (
                    isinstance(node, str) and num.match(node)):
                written.append(at)
        walk(data, ())
        spec = load(path)
        got = [c.raw_path for c in controls_of(spec, Problem(spec).paths)]
        assert sorted(map(str, got)) == sorted(map(str, written)), path.name


def test_control_values_units_and_refusals():
    spec = load(ROOT / "requirements" / "trainer-jet.yaml")
    cs = {c.key: c for c in controls_of(spec, Problem(spec).paths)}
    stall = cs["requirements.approach-stall.speed"]
    assert (stall.value, stall.unit, stall.group) == (100.0, "kn", "approach-stall")
    # Source: NIST SP 811 App. B, 1 kn = 1852/3600 m/s exactly (docs/references.md check 16-a)
    assert stall.scale == pytest.approx(1852.0 / 3600.0, rel=1e-12)
    assert stall.raw(95) == "95 kn" and stall.raw(92.5) == "92.5 kn"
    assert "outside the range" in cs["requirements.turn-4g.load_factor"].refusal(15.5)
    assert cs["requirements.turn-4g.load_factor"].refusal(0) is not None        # (0, 15]: 0 excluded
    assert cs["requirements.turn-4g.load_factor"].refusal(15) is None
    assert "whole number" in cs["aircraft.propulsion.engines"].refusal(1.5)
    assert cs["aircraft.aerodynamics.cd0.cd0.1"].rebuild                      # a Mach-table entry
    lo, hi, step = stall.window()
    assert lo < 100 < hi and step > 0 and stall.refusal(lo) is None and stall.refusal(hi) is None
    assert range_for(("aircraft", "weights", "fuel", "fraction")) == Range(0.0, 1.0, hi_open=True)


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_quick_numbers_equal_a_fresh_solve_of_the_saved_file(path, explorers, tmp_path):
    ex = explorers[path.name]
    # the first requirement's headline value, made 8 % harder
    from sizing.problem import tree as M
    from sizing.problem.capability import HARDER

    rid = ex.problem.req_ids[0]
    field = M.value_field(M.spec_tree(ex.spec)["requirements"][rid])
    c = ex.by_key[f"requirements.{rid}.{field}"]
    harder = HARDER[field]
    harder = harder[ex.spec.requirement(rid).kind] if isinstance(harder, dict) else harder
    values = dict(ex.initial)
    values[c.key] = round(c.value * (1 + 0.08 * harder), 3)
    step = ex.quick(values, ex.base_warm)
    assert step.verified
    target = ex.save(values, tmp_path / "changed.yaml")
    n = step.numbers
    if path.name != "trainer-jet.yaml":
        # a newly built problem of the file on disk, solved from its own W/S scan (no warm start)
        prob = Problem(load(target))
        x, _lg, _lx, _st, ok = prob.solve_raw(prob.parameters())
        assert ok
        assert n.takeoff_mass == pytest.approx(x[2] * prob.m_ref, rel=1e-6)
        assert n.wing_loading == pytest.approx(x[0] * prob.WS_scale, rel=1e-5)
        assert n.y == pytest.approx(x[1] * prob.Y_scale, rel=1e-5)
        return
    fresh = solve(load(target))                    # what `sizing solve` gives for the file on disk
    d = fresh.design
    assert n.takeoff_mass == pytest.approx(d.takeoff_mass, rel=1e-6)
    assert n.wing_loading == pytest.approx(d.wing_loading, rel=1e-5)
    assert n.y == pytest.approx(d.power_to_weight if fresh.propeller else d.thrust_to_weight, rel=1e-5)
    assert n.empty_mass == pytest.approx(d.empty_mass, rel=1e-6)
    assert n.fuel_mass == pytest.approx(d.fuel_mass, rel=1e-6)
    assert set(n.drivers) == set(fresh.drivers)
    full = ex.complete(step)                       # the packaged result: the same margins as the CLI's
    assert Numbers.of(full).takeoff_mass == pytest.approx(d.takeoff_mass, rel=1e-9)
    assert [r.detail for r in full.requirements] == [r.detail for r in fresh.requirements]


def test_quick_numbers_against_the_brute_force_grid(explorers):
    ex = explorers["trainer-jet.yaml"]
    values = dict(ex.initial)
    values["requirements.approach-stall.speed"] = 90.0
    step = ex.quick(values, ex.base_warm)
    res, grid = check_against_grid(step.spec)        # the independent grid search on the changed file
    assert step.numbers.takeoff_mass == pytest.approx(res.design.takeoff_mass, rel=1e-6)
    assert step.numbers.takeoff_mass <= grid["m"] * (1 + 1e-6)


def test_a_new_mach_table_builds_a_new_problem(explorers):
    ex = explorers["trainer-jet.yaml"]
    values = dict(ex.initial)
    values["aircraft.aerodynamics.cd0.cd0.1"] = 0.022
    step = ex.quick(values, ex.base_warm)
    assert step.problem is not ex.problem and step.verified
    fresh = solve(step.spec)
    assert step.numbers.takeoff_mass == pytest.approx(fresh.design.takeoff_mass, rel=1e-6)
    assert step.numbers.takeoff_mass > ex.base.design.takeoff_mass      # more drag, heavier


class _Pools:
    """The solve thread (kept busy until released, so requests pile up) and the follow-up thread."""

    def __init__(self, hold=False):
        self.solve, self.follow = ThreadPoolExecutor(max_workers=1), ThreadPoolExecutor(max_workers=1)
        self.gate = threading.Event()
        if hold:
            self.solve.submit(self.gate.wait)

    def session(self, ex, got):
        return Session(ex, lambda kind, payload: got.append((kind, payload)), executor=self.solve,
                       follow_up=self.follow)

    def finish(self):
        self.gate.set()
        self.solve.shutdown(wait=True)
        self.follow.shutdown(wait=True)


def test_changes_during_a_solve_are_coalesced(explorers):
    ex = explorers["touring-piston.yaml"]
    pools, got = _Pools(hold=True), []
    session = pools.session(ex, got)
    key = "requirements.stall-61kt.cas"
    for v in (60, 59, 58, 57, 56):
        values = dict(ex.initial, **{key: float(v)})
        session.request(values, key)
    pools.finish()
    kinds = [k for k, _ in got]
    assert kinds == ["numbers", "curves", "result"], kinds
    step = got[0][1]
    assert step.values[key] == 56.0                      # only the newest values were solved
    fresh = solve(validate(set_value(ex.spec.data, ("requirements", 0, "cas"), "56 kn"), "x.yaml"))
    assert step.numbers.takeoff_mass == pytest.approx(fresh.design.takeoff_mass, rel=1e-6)
    assert got[2][1][1].design.takeoff_mass == pytest.approx(fresh.design.takeoff_mass, rel=1e-6)


def test_a_new_change_does_not_wait_for_the_margins_of_the_last(explorers):
    ex = explorers["regional-turboprop.yaml"]        # its costs and margin texts take the longest
    pools, got = _Pools(), []
    session = pools.session(ex, got)
    key = "requirements.field.ground_roll"
    arrived = threading.Event()
    session.publish = lambda kind, payload: (got.append((kind, payload)), kind == "numbers" and arrived.set())
    session.request(dict(ex.initial, **{key: 880.0}), key)
    assert arrived.wait(30)
    session.request(dict(ex.initial, **{key: 860.0}), key)
    pools.finish()
    order = [(k, p.values[key] if k == "numbers" else p[0].values[key]) for k, p in got]
    assert order.index(("numbers", 860.0)) < order.index(("result", 860.0))
    assert ("result", 880.0) not in order[order.index(("numbers", 860.0)):]   # superseded: dropped
    assert order[-1] == ("result", 860.0)


def test_infeasible_values_keep_the_last_good_design_and_are_diagnosed(explorers):
    ex = explorers["touring-piston.yaml"]
    pools, got = _Pools(), []
    session = pools.session(ex, got)
    key = "requirements.stall-61kt.cas"
    session.request(dict(ex.initial, **{key: 35.0}), key)
    pools.finish()
    kinds = [k for k, _ in got]
    assert kinds[:2] == ["numbers", "result"], kinds
    assert got[0][1].numbers is None
    assert session.last_good.takeoff_mass == pytest.approx(ex.base.design.takeoff_mass)   # kept, shown stale
    res = got[1][1][1]
    assert res.status == "infeasible" and "stall-61kt" in res.infeasibility.conflicts
    # the relaxation it names, written into the file, makes the set feasible again
    # Source: the diagnosis' own contract (sizing/problem/diagnose.py): each relaxation alone restores feasibility
    rel = res.infeasibility.relaxations["stall-61kt"]
    assert not rel["together"]
    fixed = validate(set_value(ex.spec.data, ("requirements", 0, "cas"), f"{rel['shown']} kn"), "x.yaml")
    assert solve(fixed).feasible


def test_a_solver_failure_is_said_and_the_last_good_design_kept(explorers, monkeypatch):
    ex = explorers["touring-piston.yaml"]
    pools, got = _Pools(), []
    session = pools.session(ex, got)

    def fails(step, twin=False):
        raise SolverError("IPOPT stopped: Maximum_Iterations_Exceeded (test double)")

    monkeypatch.setattr(ex, "complete", fails)
    key = "requirements.stall-61kt.cas"
    session.request(dict(ex.initial, **{key: 35.0}), key)        # no verified design, and no diagnosis
    pools.finish()
    kinds = [k for k, _ in got]
    assert kinds[:2] == ["numbers", "failed"], kinds
    assert "Maximum_Iterations_Exceeded" in got[1][1][1]
    assert session.last_good.takeoff_mass == pytest.approx(ex.base.design.takeoff_mass)


def test_a_change_the_file_format_refuses_is_refused_at_its_control(explorers):
    ex = explorers["regional-turboprop.yaml"]
    pools, got = _Pools(), []
    session = pools.session(ex, got)
    key = "requirements.ceiling-oei.engines_out"
    assert ex.refusal(key, 2) is None                 # in range for the key alone...
    session.request(dict(ex.initial, **{key: 2.0}), key)
    pools.finish()
    assert [k for k, _ in got] == ["refused"]
    assert got[0][1][0] == key and "leaves no engine running" in got[0][1][1]   # ...but not with 2 engines
    assert session.accepted[key] == 1.0


def test_saving_keeps_comments_and_units_and_asks_before_overwriting(explorers, tmp_path):
    ex = explorers["trainer-jet.yaml"]
    values = dict(ex.initial, **{"requirements.approach-stall.speed": 95.0, "requirements.field.ground_roll": 650.0,
                                 "aircraft.aerodynamics.cd0.cd0.2": 0.025})
    text, in_place = ex.save_text(values)
    assert in_place
    original = (ROOT / "requirements" / "trainer-jet.yaml").read_text()
    for line in original.splitlines():
        if line.lstrip().startswith("#"):
            assert line in text                                  # every comment kept
    assert "speed: 95 kn" in text and "ground_roll: 650 m" in text
    assert "cd0: [0.019, 0.020, 0.025, 0.030]" in text         # one entry of the flow list changed
    assert "#   requirements.approach-stall.speed: 100 kn -> 95 kn" in text
    spec = load_text(text, "x.yaml")
    assert spec.requirement("approach-stall").speed.text == "95 kn"
    out = ex.save(values, tmp_path / "a.yaml")
    assert out.read_text() == text
    with pytest.raises(NeedsConfirmation, match="exists"):
        ex.save(values, out)
    with pytest.raises(NeedsConfirmation, match="input file"):
        ex.save(values, ex.path)
    assert (ROOT / "requirements" / "trainer-jet.yaml").read_text() == original
    ex.save(dict(ex.initial), out, overwrite=True)
    assert load(out).requirement("approach-stall").speed.text == "100 kn"
    assert ex.default_target().name == "trainer-jet-whatif.yaml"


def test_rewrite_keeps_quotes_and_falls_back_for_merged_keys():
    text = "# head\nbase: &b {speed: '100 kn'}\nsame: *b\nlist: [1, 2, 3]  # note\n"
    data, _ = read_yaml(text, "t.yaml")
    new, in_place = replace_values(text, data, [(("list", 1), 5)])
    assert in_place and new == text.replace("[1, 2, 3]", "[1, 5, 3]")
    new, in_place = replace_values(text, data, [(("base", "speed"), "90 kn")])
    assert in_place and "speed: '90 kn'" in new            # the user's quotes kept
    got, _ = read_yaml(new, "t.yaml")
    assert got["same"]["speed"] == "90 kn"                  # an alias is the same value: it follows
    text = "# head\nbase: &b {speed: '100 kn'}\nmerged: {<<: *b, alt: 1}\n"
    data, _ = read_yaml(text, "t.yaml")
    new, in_place = replace_values(text, data, [(("merged", "speed"), "80 kn")])
    # a merged key has no scalar of its own to change: the whole file is written, header kept
    assert not in_place and new.startswith("# head\n")
    got, _ = read_yaml(new, "t.yaml")
    assert got["merged"] == {"speed": "80 kn", "alt": 1} and got["base"] == {"speed": "100 kn"}


def _main(*argv):
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        rc = cli.main(list(argv))
    return rc, out.getvalue(), err.getvalue()


def test_cli_bad_file_and_taken_port_are_input_errors(tmp_path):
    bad = tmp_path / "bad.yaml"
    bad.write_text("title: x\naircraft: {}\nrequirements: []\n")
    rc, _out, err = _main("explore", str(bad), "--port", "0")
    assert rc == 2 and "bad.yaml" in err and "Traceback" not in err
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        s.listen()
        rc, _out, err = _main("explore", str(EXAMPLES[0]), "--port", str(s.getsockname()[1]))
    assert rc == 2 and "--port" in err and "cannot listen" in err
    rc, _out, err = _main("explore", str(EXAMPLES[0]), "--port", "70000")
    assert rc == 2 and "not a TCP port" in err

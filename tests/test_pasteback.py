"""Printed relaxations paste back: every suggestion the terminal prints for an infeasible set
is the key and the value as a requirement file writes them, parses as YAML and through the
file format, and applied (alone, or all together where the tool says so) gives a feasible
design.

Independent check: the suggestion is read from the printed text only and applied to the raw
YAML, then validated and solved from scratch.  # common practice, no source
"""
from __future__ import annotations

import contextlib
import copy
import io
import re

import pytest
import yaml

from sizing import cli
from sizing.inputs.spec import load_text, validate
from sizing.problem import solve

BASE = """title: paste-back {name}
aircraft:
  aerodynamics:
    cd0: 0.020
    aspect_ratio: 6.0
    oswald_efficiency: 0.80
    cl_max: {{clean: 1.3, takeoff: 1.6, landing: 2.0}}
  propulsion: {{type: turbofan-low-bypass, engines: 2}}
  weights:
    crew: 200 kg
    payload: 150 kg
    empty: {{model: fraction, value: 0.55}}
    fuel: {{fraction: 0.2}}
design_space: {{thrust_to_weight: [0, {tw}]}}
requirements:
{requirements}"""

SETS = {
    # each alone restores feasibility: a speed in knots, a Mach number
    "alone": (0.8, "  - {id: stall, kind: stall-speed, speed: 40 kn, config: landing}\n"
                   "  - {id: dash, kind: max-mach, mach: 0.9, altitude: 30000 ft}\n"),
    # only together: a load factor (printed as g before), an altitude in feet above 10 000
    # (printed with a thousands separator before), a gradient in percent
    "together": (0.6, "  - {id: stall, kind: stall-speed, speed: 70 kn, config: landing}\n"
                      "  - {id: turn, kind: sustained-turn, load_factor: 6.5, mach: 0.6, altitude: 15000 ft}\n"
                      "  - {id: high, kind: ceiling, altitude: 60000 ft}\n"
                      "  - {id: oei, kind: climb-gradient, gradient: 30 %, engines_out: 1, config: takeoff}\n"
                      "  - {id: field, kind: takeoff, ground_roll: 300 m}\n"),
}
LINE = re.compile(r"^    (\S+): (\w+): (.+?) -> (\w+): (.+?)(?: \(closes at ([\d,]+) kg[^)]*\))?$")


@pytest.mark.parametrize("name", sorted(SETS))
def test_every_printed_relaxation_pastes_back_and_solves(tmp_path, name):
    tw, reqs = SETS[name]
    text = BASE.format(name=name, tw=tw, requirements=reqs)
    f = tmp_path / f"{name}.yaml"
    f.write_text(text)
    out, err = io.StringIO(), io.StringIO()
    with contextlib.redirect_stdout(out), contextlib.redirect_stderr(err):
        rc = cli.main(["solve", str(f)])
    out = out.getvalue()
    assert rc == 3, err.getvalue()
    together = "these changes together restore feasibility" in out
    assert together == (name == "together"), out
    found = [LINE.match(ln).groups() for ln in out.splitlines() if LINE.match(ln)]
    assert len(found) >= 2, out
    data = yaml.safe_load(text)
    applied = copy.deepcopy(data)
    for rid, key, was, key2, value, closes in found:
        assert closes, out                                          # what the pasted set weighs
        assert key == key2 and "," not in value, value            # no thousands separator
        parsed = yaml.safe_load(f"{key}: {value}")                # the pasted line is YAML ...
        req = next(r for r in data["requirements"] if r["id"] == rid)
        assert str(req[key]) == was                                # 'now' is the file's own text
        one = copy.deepcopy(data)
        next(r for r in one["requirements"] if r["id"] == rid).update(parsed)
        load_text(yaml.safe_dump(one, sort_keys=False), "pasted.yaml")   # ... and a valid file
        if together:
            next(r for r in applied["requirements"] if r["id"] == rid).update(parsed)
        else:
            res = solve(validate(one, "pasted.yaml"))
            assert res.feasible, (rid, key, value)
            assert res.design.takeoff_mass == pytest.approx(float(closes.replace(",", "")), abs=0.5)
    if together:
        res = solve(validate(applied, "pasted.yaml"))
        assert res.feasible, found
        assert res.design.takeoff_mass == pytest.approx(float(found[0][5].replace(",", "")), abs=0.5)

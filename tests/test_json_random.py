"""Every result serializes: `sizing solve --json` and the library's to_json over generated
requirement files, feasible and infeasible (issue 13, item 1: a numpy bool or float in a
result once broke json.dumps)."""
import json
import math

import numpy as np
import pytest

from sizing.inputs.spec import load
from sizing.problem import Problem
from sizing.problem.tree import spec_tree, structure_key
from sizing.reports.serialize import _finite, to_json

from .cliutil import run as run_cli
from .randomsets import ROOT, generate

FILES = generate(200, seed=13)
# a set infeasible whatever the examples hold: the trainer asked for a sustained 9 g turn
INFEASIBLE = ("trainer-9g.yaml",
              (ROOT / "requirements" / "trainer-jet.yaml").read_text().replace("load_factor: 4.0", "load_factor: 9.0"))
QUICK = FILES[:12] + [INFEASIBLE]


def _check(js: dict, res):
    # common practice, no source: the JSON holds the result's own numbers, nothing dropped
    assert js["status"] == res.status and js["caution"]
    if res.feasible:
        assert js["design"]["takeoff_mass_kg"] == pytest.approx(res.design.takeoff_mass, rel=1e-12)
        assert [r["id"] for r in js["requirements"]] == [r.id for r in res.requirements]
        assert all(isinstance(r["active"], bool) for r in js["requirements"])
        assert js["closure"]["growth_factor"] > 0
    else:
        assert js["design"] is None and js["infeasibility"] is not None


def _solve_all(files, tmp_path):
    problems, seen = {}, {"optimal": 0, "infeasible": 0}
    for name, text in files:
        path = tmp_path / name
        path.write_text(text)
        spec = load(path)
        key = structure_key(spec_tree(spec))           # one built problem per structure, as a study does
        prob = problems.setdefault(key, Problem(spec))
        res = prob.solve(prob.parameters(spec), spec=spec)
        text = to_json(res)
        _check(json.loads(text), res)
        seen[res.status] += 1
    return seen


def test_finite_converts_numpy_values():
    # common practice, no source: what json.dumps cannot take, as Python values or null
    raw = {"a": np.bool_(True), "b": np.float64(1.5), "c": np.float64("nan"), "d": np.int64(3),
           "e": np.array([1.0, np.inf]), "f": (np.float32(2.0),), "g": -math.inf}
    with pytest.raises(TypeError):
        json.dumps(raw)
    assert json.loads(json.dumps(_finite(raw), allow_nan=False)) == {
        "a": True, "b": 1.5, "c": None, "d": 3, "e": [1.0, None], "f": [2.0], "g": None}


def test_generated_sets_serialize_quick(tmp_path):
    """A few generated files (feasible and infeasible) through the library and to_json."""
    seen = _solve_all(QUICK, tmp_path)
    assert seen["optimal"] > 0 and seen["infeasible"] > 0


@pytest.mark.slow
def test_200_generated_sets_serialize(tmp_path):
    """All 200 generated files: every result, feasible or not, is valid JSON with its numbers."""
    seen = _solve_all(FILES, tmp_path)
    assert seen["optimal"] + seen["infeasible"] == 200
    assert seen["infeasible"] >= 5 and seen["optimal"] >= 100       # both kinds well represented


def test_cli_json_on_generated_sets(tmp_path):
    """Generated files through `sizing solve FILE --json` (exit 0 feasible, 3 infeasible, as the
    README documents), stdout one JSON object."""
    picked = [FILES[0], INFEASIBLE]
    for name, text in picked:
        path = tmp_path / name
        path.write_text(text)
        p = run_cli("solve", path, "--json")
        assert p.returncode in (0, 3), p.stderr
        js = json.loads(p.stdout)
        assert js["status"] in ("optimal", "infeasible")
        assert (p.returncode == 0) == (js["status"] == "optimal")
        if name == INFEASIBLE[0]:
            assert js["status"] == "infeasible" and js["infeasibility"]["conflicts"]
        assert "Traceback" not in p.stderr

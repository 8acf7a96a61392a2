"""The on-disk cache (sizing.common.cache): a file read back from it, and a problem built from
it, give exactly what validating and building afresh give; damaged entries are ignored;
files with errors are never cached. The reference for every comparison is the uncached
path (the one the brute-force tests check against the independent grid).

# common practice, no source: these tests check no published value; every comparison is the
# cached path against the uncached one, bit for bit."""
from __future__ import annotations

import copy
import math

import numpy as np
import pytest

from sizing.common import cache
from sizing.common.errors import InputError
from sizing.inputs import snapshot
from sizing.inputs.spec import load
from sizing.problem import Problem, solve
from sizing.reports.summary import summary
from tests.cliutil import run
from tests.conftest import EXAMPLES, ROOT


@pytest.fixture
def on(tmp_path, monkeypatch):
    """The cache on, in a temporary folder."""
    monkeypatch.setenv("SIZING_CACHE", "1")
    monkeypatch.setenv("SIZING_CACHE_DIR", str(tmp_path / "cache"))
    return tmp_path / "cache"


def _same(model, node, path="model"):
    """Every field and property of a pydantic model equals the stand-in's."""
    fields = getattr(type(model), "model_fields", None)
    if fields is None:
        if isinstance(model, (list, tuple)):
            assert type(model) is type(node) and len(model) == len(node), path
            for i, (a, b) in enumerate(zip(model, node)):
                _same(a, b, f"{path}[{i}]")
        elif isinstance(model, float) and math.isnan(model):
            assert math.isnan(node), path
        else:
            assert model == node and type(model) is type(node), path
        return
    assert isinstance(node, snapshot.Node), path
    for name in list(fields) + snapshot.properties(type(model)):
        _same(getattr(model, name), getattr(node, name), f"{path}.{name}")


def _text(spec, res):
    return "\n".join(line for line in summary(res, "f.yaml").splitlines() if "solver:" not in line)


@pytest.mark.parametrize("path", EXAMPLES, ids=lambda p: p.name)
def test_cached_file_is_the_validated_file(on, path, solved):
    first = load(path, cache=True)           # validated, then stored
    again = load(path, cache=True)           # read back without pydantic
    fresh = load(path)
    assert type(fresh.model).__name__ == "RequirementFile" and isinstance(again.model, snapshot.Node)
    _same(fresh.model, again.model)
    assert again.tree() == fresh.tree() and again.data == fresh.data and again.sha256 == fresh.sha256
    assert again.tree() is not again.tree()  # a new copy each time (callers fill it in)
    assert copy.deepcopy(again.model) == again.model
    # the same design, drivers, margins and costs texts as the uncached solve
    res = solve(again)
    assert _text(again, res) == _text(*solved[path.name])
    assert first.cached and again.cached and not fresh.cached


def test_problem_from_cache_solves_the_same(on):
    path = ROOT / "requirements" / "trainer-jet.yaml"
    built = Problem(load(path, cache=True))
    hit = Problem(load(path, cache=True))
    plain = Problem(load(path))
    assert not built.built_from_cache and hit.built_from_cache and not plain.built_from_cache
    assert hit.rows == plain.rows and hit.structure == plain.structure
    # the graph given back evaluates as the built one, at a point off the optimum too
    x = plain.start_point(plain.p0) * 1.03
    for a, b in zip(hit.constraint_values(x, plain.p0), plain.constraint_values(x, plain.p0)):
        np.testing.assert_array_equal(a, b)
    xa, *_, ok_a = hit.solve_raw()
    xb, *_, ok_b = plain.solve_raw()
    assert ok_a and ok_b
    np.testing.assert_array_equal(xa, xb)
    # sensitivities come from the graph given back (d L / d p): as from the built one
    lam = np.linspace(0.1, 1.0, len(plain.rows))
    np.testing.assert_allclose(hit.lagrangian_gradient(xb, plain.p0, lam),
                               plain.lagrangian_gradient(xb, plain.p0, lam), rtol=1e-12, atol=1e-15)


def test_damaged_entries_are_ignored(on):
    path = ROOT / "requirements" / "touring-piston.yaml"
    Problem(load(path, cache=True))
    entries = sorted(on.iterdir())
    assert {e.name.split("-")[0] for e in entries} == {"spec", "problem"}
    for e in entries:                        # one byte changed in each, and one entry cut short
        blob = bytearray(e.read_bytes())
        blob[len(blob) // 2] ^= 0x01
        e.write_bytes(bytes(blob) if e.name.startswith("spec") else bytes(blob[: len(blob) // 3]))
    spec = load(path, cache=True)
    assert type(spec.model).__name__ == "RequirementFile"      # validated again
    assert not Problem(spec).built_from_cache                    # built again
    again = Problem(load(path, cache=True))                      # and the rewritten entries serve
    assert again.built_from_cache and isinstance(again.spec.model, snapshot.Node)


def test_a_file_with_an_error_is_never_cached(on, tmp_path):
    bad = tmp_path / "bad.yaml"
    text = (ROOT / "requirements" / "trainer-jet.yaml").read_text()
    bad.write_text(text.replace("aspect_ratio: 5.2", "aspect_ratio: -5.2", 1))   # a schema error, not YAML
    for _ in range(2):
        with pytest.raises(InputError) as e:
            load(bad, cache=True)
        assert e.value.line and "aspect_ratio" in str(e.value)
    assert not on.exists() or not list(on.glob("spec-*"))
    r = run("solve", bad)
    assert r.returncode == 2 and "Traceback" not in r.stderr


def test_off_writes_nothing(tmp_path, monkeypatch):
    monkeypatch.setenv("SIZING_CACHE", "off")
    monkeypatch.setenv("SIZING_CACHE_DIR", str(tmp_path / "cache"))
    spec = load(ROOT / "requirements" / "trainer-jet.yaml", cache=True)
    Problem(spec)
    assert not spec.cached and not (tmp_path / "cache").exists()


def test_key_follows_code_and_libraries(monkeypatch):
    a = cache.key("spec", b"same bytes")
    monkeypatch.setattr(cache, "fingerprint", lambda: "another build of the code")
    assert cache.key("spec", b"same bytes") != a


def test_cli_solve_with_the_cache(on, monkeypatch):
    path = ROOT / "requirements" / "regional-turboprop.yaml"
    texts = [run("solve", path), run("solve", path)]            # stored, then read back
    on_json = run("solve", path, "--json")
    monkeypatch.setenv("SIZING_CACHE", "0")
    base = run("solve", path, "--json")
    keep = lambda s: [line for line in s.splitlines() if "solver:" not in line and "time" not in line]  # noqa: E731
    assert all(t.returncode == 0 for t in texts)
    assert keep(texts[0].stdout) == keep(texts[1].stdout)
    assert keep(base.stdout) == keep(on_json.stdout)
    assert len(list(on.glob("spec-*"))) == 1 and len(list(on.glob("problem-*"))) == 1

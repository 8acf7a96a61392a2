"""Architecture rules of STYLE.md §11, enforced: who may import what.

# common practice, no source (an import-linter style layers contract written as a test)
"""
import ast
import subprocess
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "sizing"
PHYSICS = {"atmosphere", "aero", "propulsion", "constraints", "weights", "_math"}
PLOTTING = {"plots", "review", "envelope", "study", "study_plots"}
EDGE = {"spec", "units"}
LAYER = {  # lower number = lower layer; a module may import only its layer or below
    "_math": 0, "errors": 0, "fileio": 0, "units": 0,
    "atmosphere": 1, "aero": 1, "propulsion": 1,
    "constraints": 2, "weights": 2,
    "model": 3, "terms": 3, "spec": 3,
    "solve": 4, "diagnose": 4,
    "report": 5, "plots": 5, "envelope": 5, "review": 6, "study": 6, "study_plots": 5,
    "cli": 7, "__main__": 8, "__init__": 8,
}


def imports(path):
    tree = ast.parse(path.read_text())
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out |= {a.name.split(".")[0] for a in node.names}
        elif isinstance(node, ast.ImportFrom):
            if node.level and node.module:
                out.add("sizing." + node.module.split(".")[0])
            elif node.level:
                out |= {"sizing." + a.name for a in node.names}
            elif node.module:
                out.add(node.module.split(".")[0])
    return out


MODULES = sorted(p for p in PKG.glob("*.py"))


@pytest.mark.parametrize("path", MODULES, ids=[p.stem for p in MODULES])
def test_third_party_imports_stay_in_their_layer(path):
    name = path.stem
    got = imports(path)
    if name != "_math" and name in PHYSICS:
        assert "casadi" not in got, "physics reaches CasADi only through the _math shim"
    if name not in PLOTTING:
        assert "matplotlib" not in got
    if name not in EDGE:
        assert "yaml" not in got and "pint" not in got


@pytest.mark.parametrize("path", MODULES, ids=[p.stem for p in MODULES])
def test_dependencies_point_downwards(path):
    # the result object's convenience method Result.diagram() imports plots lazily (API of issue 5)
    allowed_up = {("model", "plots")}
    name = path.stem
    if name not in LAYER:
        pytest.fail(f"new module {name}: give it a layer in tests/test_layers.py")
    for mod in imports(path):
        if mod.startswith("sizing."):
            dep = mod.split(".", 1)[1]
            if dep in LAYER and (name, dep) not in allowed_up:
                assert LAYER[dep] <= LAYER[name], f"{name} imports {dep} from a higher layer"


@pytest.mark.parametrize("path", MODULES, ids=[p.stem for p in MODULES])
def test_modules_stay_small(path):
    assert len(path.read_text().splitlines()) <= 800


def test_solve_does_not_import_plotting_or_tables(tmp_path):
    code = ("import sys; from sizing.cli import main; import io, contextlib\n"
            "f = io.StringIO()\n"
            "with contextlib.redirect_stdout(f): rc = main(['solve', 'requirements/touring-piston.yaml'])\n"
            "print(rc, 'matplotlib' in sys.modules, 'pandas' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=PKG.parent, check=True).stdout.split()
    assert out == ["0", "False", "False"]

"""Architecture rules, enforced: who may import what, and what stays private.

The package is built in layers, one folder each; a module may import only from
its own folder and the folders below it. Lazy imports for convenience methods
(``Result.diagram()``, ``Envelope.plot()``) are the listed exceptions.
No module reads or imports another module's underscore names, no import
circle exists between modules, third-party libraries stay in their layers.

# common practice, no source (an import-linter style layers contract written as a test)
"""
import ast
import subprocess
import sys
from pathlib import Path

import pytest

PKG = Path(__file__).resolve().parents[1] / "sizing"

# lower number = lower layer; a folder may import only its own layer or below
LAYER = {"common": 0, "physics": 1, "constraints": 2, "weights": 2, "inputs": 3, "problem": 4,
         "charts": 5, "reports": 6, "studies": 7, "explore": 8, "cli": 9, "__main__": 10, "__init__": 10}
# lazy, upward imports inside convenience methods: (importing module, imported module)
ALLOWED_UP = {("sizing.problem.result", "sizing.charts.diagram")}
# lazy imports that close a circle between two modules of one folder
ALLOWED_CYCLE = {("sizing.charts.envelope", "sizing.charts.envelope_plot"),
                 ("sizing.charts.loads", "sizing.charts.loads_plot"),
                 ("sizing.charts.turn", "sizing.charts.turn_plot"),
                 ("sizing.charts.hot_high", "sizing.charts.hot_high_plot"),
                 ("sizing.charts.payload_range", "sizing.charts.payload_range_plot"),
                 ("sizing.problem.nlp", "sizing.problem.diagnose")}
MATPLOTLIB_OK = {"charts", "reports", "studies", "explore"}
YAML_PINT_OK = {"inputs"}

MODULES = sorted(p for p in PKG.rglob("*.py"))


def module_name(path: Path) -> str:
    rel = path.relative_to(PKG.parent).with_suffix("")
    parts = list(rel.parts)
    if parts[-1] == "__init__":
        parts = parts[:-1]
    return ".".join(parts)


def layer_of(mod: str) -> str:
    """The folder (layer) of a module name: sizing.physics.aero -> physics; sizing.cli -> cli."""
    parts = mod.split(".")
    if len(parts) == 1:
        return "__init__"
    return parts[1]


def resolve(path: Path, node) -> list:
    """Absolute module names an import statement brings in (sizing.* only resolved)."""
    here = module_name(path)
    pkg = here if path.name == "__init__.py" else here.rsplit(".", 1)[0]
    if isinstance(node, ast.Import):
        return [a.name for a in node.names]
    if node.level:
        base = pkg.split(".")
        base = base[:len(base) - node.level + 1]
        mod = ".".join(base + ([node.module] if node.module else []))
    else:
        mod = node.module or ""
    out = []
    for a in node.names:       # "from . import shim" imports a module; "from .x import f" a name of x
        cand = f"{mod}.{a.name}"
        out.append(cand if (PKG.parent / (cand.replace(".", "/") + ".py")).exists()
                   or (PKG.parent / cand.replace(".", "/")).is_dir() else mod)
    return out


def imports(path: Path) -> set:
    tree = ast.parse(path.read_text())
    out = set()
    for node in ast.walk(tree):
        if isinstance(node, (ast.Import, ast.ImportFrom)):
            out |= set(resolve(path, node))
    return out


def top_level_imports(path: Path) -> set:
    """Imports executed when the module is imported (not inside functions)."""
    tree = ast.parse(path.read_text())
    out = set()

    def visit(body):
        for node in body:
            if isinstance(node, (ast.Import, ast.ImportFrom)):
                out.update(resolve(path, node))
            elif isinstance(node, (ast.If, ast.Try, ast.With)):
                for field in ("body", "orelse", "finalbody", "handlers"):
                    for sub in getattr(node, field, []) or []:
                        visit(getattr(sub, "body", [sub]) if isinstance(sub, ast.ExceptHandler) else [sub])
            elif isinstance(node, ast.ClassDef):
                visit(node.body)
    visit(tree.body)
    return out


IDS = [module_name(p) for p in MODULES]


@pytest.mark.parametrize("path", MODULES, ids=IDS)
def test_third_party_imports_stay_in_their_layer(path):
    mod = module_name(path)
    layer = layer_of(mod)
    got = {m.split(".")[0] for m in imports(path)}
    if layer == "physics" and mod != "sizing.physics.shim":
        assert "casadi" not in got, "physics reaches CasADi only through the shim"
    if layer in ("constraints", "weights"):
        assert "casadi" not in got, "constraints and weights reach CasADi only through the shim"
    if layer not in MATPLOTLIB_OK:
        assert "matplotlib" not in got
    if layer not in YAML_PINT_OK:
        assert "yaml" not in got and "pint" not in got


@pytest.mark.parametrize("path", MODULES, ids=IDS)
def test_dependencies_point_downwards(path):
    mod = module_name(path)
    layer = layer_of(mod)
    assert layer in LAYER, f"new folder or top-level module {layer}: give it a layer in tests/test_layers.py"
    for dep in imports(path):
        if not dep.startswith("sizing.") or dep == "sizing":
            continue
        dep_layer = layer_of(dep)
        if (mod, dep) in ALLOWED_UP:
            continue
        assert LAYER[dep_layer] <= LAYER[layer], f"{mod} imports {dep} from a higher layer"


def test_no_import_cycles():
    """No circle of imports between modules (the listed lazy convenience imports aside)."""
    graph = {}
    for path in MODULES:
        mod = module_name(path)
        graph[mod] = {d for d in imports(path) if d.startswith("sizing.") and d != mod
                      and (mod, d) not in ALLOWED_UP and (mod, d) not in ALLOWED_CYCLE}
    # a package imports its own modules to re-export them: package -> module edges are fine,
    # module -> its own package __init__ is the circle to catch
    state, stack = {}, []

    def visit(n):
        state[n] = 1
        stack.append(n)
        for d in graph.get(n, ()):
            if state.get(d) == 1:
                cycle = stack[stack.index(d):] + [d]
                pytest.fail("import cycle: " + " -> ".join(cycle))
            if d in graph and state.get(d) is None:
                visit(d)
        stack.pop()
        state[n] = 2

    for n in graph:
        if state.get(n) is None:
            visit(n)


def test_listed_exceptions_exist():
    """Each listed lazy import is really there (the list does not rot)."""
    for a, b in ALLOWED_UP | ALLOWED_CYCLE:
        path = PKG.parent / (a.replace(".", "/") + ".py")
        assert b in imports(path), (a, b)
        assert b not in top_level_imports(path), f"{a} imports {b} at module level; only lazily is allowed"


def _private_access(path: Path):
    """(line, text) of every use of another module's underscore name."""
    tree = ast.parse(path.read_text())
    bad = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            for a in node.names:
                if a.name.startswith("_") and not a.name.startswith("__"):
                    bad.append((node.lineno, f"imports {a.name}"))
            if node.module and any(p.startswith("_") and not p.startswith("__") for p in node.module.split(".")):
                bad.append((node.lineno, f"imports from {node.module}"))
        elif isinstance(node, ast.Attribute):
            name = node.attr
            if name.startswith("_") and not name.startswith("__"):
                owner = node.value
                if not (isinstance(owner, ast.Name) and owner.id in ("self", "cls")):
                    bad.append((node.lineno, f"reads .{name}"))
    return bad


@pytest.mark.parametrize("path", MODULES, ids=IDS)
def test_no_cross_module_private_access(path):
    # object.__setattr__-style and self._x access are a module's own business; anything else
    # with a leading underscore belongs to another module (or a third-party library's internals)
    assert _private_access(path) == []


def test_private_access_check_can_fail(tmp_path):
    p = tmp_path / "m.py"
    p.write_text("from .x import _hidden\nimport y\nprob._x\nself._fine\n")
    assert [t for _, t in _private_access(p)] == ["imports _hidden", "reads ._x"]


@pytest.mark.parametrize("path", MODULES, ids=IDS)
def test_modules_stay_small(path):
    assert len(path.read_text().splitlines()) <= 800


def test_every_folder_says_what_lives_there():
    for init in PKG.glob("*/__init__.py"):
        doc = ast.get_docstring(ast.parse(init.read_text())) or ""
        assert "Lives here" in doc and "May import" in doc, init


def test_solve_does_not_import_plotting_tables_or_scipy(tmp_path):
    # scipy.optimize alone adds about 0.3 s to a cold command (measured with -X importtime)
    code = ("import sys; from sizing.cli import main; import io, contextlib\n"
            "f = io.StringIO()\n"
            "with contextlib.redirect_stdout(f): rc = main(['solve', 'requirements/touring-piston.yaml'])\n"
            "print(rc, 'matplotlib' in sys.modules, 'pandas' in sys.modules, 'scipy.optimize' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         cwd=PKG.parent, check=True).stdout.split()
    assert out == ["0", "False", "False", "False"]


def test_version_agrees_with_the_package_metadata():
    # common practice, no source: one version number, written twice
    import re

    from sizing import __version__

    text = (PKG.parent / "pyproject.toml").read_text()
    assert re.search(r'^version = "([^"]+)"', text, flags=re.M).group(1) == __version__

"""Shared fixtures: the example files, solved once per test session."""
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))


@pytest.fixture(scope="session")
def solved():
    """{file name: (spec, result)} for every example requirement file."""
    from sizing.solve import solve
    from sizing.spec import load

    out = {}
    for path in EXAMPLES:
        spec = load(path)
        out[path.name] = (spec, solve(spec))
    return out

"""Shared fixtures: the example files, solved once per test session."""
import os
from pathlib import Path

import pytest
from hypothesis import settings

# CI explores the same hypothesis examples on every run (reproducible verdicts); local runs
# keep drawing new ones.
settings.register_profile("ci", derandomize=True, database=None, print_blob=True)
if os.environ.get("CI"):
    settings.load_profile("ci")

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))


@pytest.fixture(scope="session")
def solved():
    """{file name: (spec, result)} for every example requirement file."""
    from sizing.problem import solve
    from sizing.inputs.spec import load

    out = {}
    for path in EXAMPLES:
        spec = load(path)
        out[path.name] = (spec, solve(spec))
    return out

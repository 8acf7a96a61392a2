"""Shared fixtures: the example files, solved once per test session."""
import os
from pathlib import Path

import pytest
from hypothesis import settings

# Every run draws the same hypothesis examples, for everyone, CI or not: a suite that passed
# passes again, and a failure is the same failure on every machine. `make fuzz` explores
# new examples instead (profile "fuzz", a printed seed replays them: `make fuzz SEED=...`).
settings.register_profile("repeatable", derandomize=True, database=None, print_blob=True, deadline=None)
settings.register_profile("fuzz", derandomize=False, database=None, print_blob=True, deadline=None)
settings.load_profile(os.environ.get("SIZING_HYPOTHESIS_PROFILE", "repeatable"))

# The on-disk cache of validated files and built problems (sizing.common.cache) is off in
# tests (also in the console scripts they start), unless a run asks for it; tests/test_cache.py
# turns it on in a temporary folder.
os.environ.setdefault("SIZING_CACHE", "0")


def pytest_configure(config):
    config.addinivalue_line("markers", "slow: a long group (brute-force grids, random sets); `make test` "
                                       "runs it, `make quick` leaves it out")

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))


@pytest.fixture(scope="session")
def solved():
    """{file name: (spec, result)} for every example requirement file."""
    from sizing.inputs.spec import load
    from sizing.problem import solve

    out = {}
    for path in EXAMPLES:
        spec = load(path)
        out[path.name] = (spec, solve(spec))
    return out

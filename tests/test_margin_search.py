"""The margin search ("ceiling 49,246 ft vs 42,000 ft required") against the sequential walk
and bisection it replaced, kept in tests/margin_reference.py: on the example files and on
random requirement sets, every requirement's capability is the same number. The staged
search evaluates, a few array calls at a time, every probe the bisection could visit and
follows the bisection's own path, so the two agree to rounding.  # common practice, no source
"""
import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings

from sizing.inputs.spec import validate
from sizing.problem import build, solve
from sizing.problem.capability import capability

from . import margin_reference as REF
from .test_solve import requirement_sets


def compare(spec, res):
    prob = build(spec)
    tree = prob.tree_of(prob.parameters(spec))
    d = res.design
    Y = d.power_to_weight if res.propeller else d.thrust_to_weight
    found = 0
    for rr in res.requirements:
        r = tree["requirements"][rr.id]
        fast = capability(r, tree, d.wing_loading, Y, rr.beta, takeoff_mass=d.takeoff_mass)
        slow = REF.capability(r, tree, d.wing_loading, Y, rr.beta, takeoff_mass=d.takeoff_mass)
        assert (fast is None) == (slow is None), (rr.id, fast, slow)
        if fast is not None:
            assert fast == pytest.approx(slow, rel=1e-12, abs=1e-12), (rr.id, fast, slow)
            found += 1
    return found


def test_examples_agree_with_the_sequential_search(solved):
    assert sum(compare(spec, res) for spec, res in solved.values()) >= 15


@pytest.mark.slow
@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(requirement_sets())
def test_random_sets_agree_with_the_sequential_search(data):
    spec = validate(data, "<random>")
    res = solve(spec)
    if res.status == "optimal":
        compare(spec, res)


def test_search_returns_a_plain_number(solved):
    spec, res = solved["trainer-jet.yaml"]
    prob = build(spec)
    tree = prob.tree_of(prob.parameters(spec))
    v = capability(tree["requirements"]["ceiling"], tree, res.design.wing_loading,
                   res.design.thrust_to_weight, 0.9)
    assert type(v) is float and np.isfinite(v)

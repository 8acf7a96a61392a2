"""The study's quick step (Newton on the neighbour's active set, sizing/problem/continuation.py)
against IPOPT solving each point from scratch.  # common practice, no source: the step solves
the first-order conditions of an active set (Nocedal and Wright, Numerical Optimization, 2nd
ed., Theorem 12.1; docs/references.md §17.12, check 17.12-a), so where it is taken it must
land on the optimizer's own answer.
"""
from pathlib import Path

import numpy as np
import pytest

from sizing.inputs.spec import load
from sizing.problem import Problem
from sizing.problem.continuation import Continuation

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(scope="module")
def trainer():
    spec = load(ROOT / "requirements" / "trainer-jet.yaml")
    prob = Problem(spec)
    return prob, prob.parameters(spec), Continuation(prob)


def _drivers(prob, lam_g):
    return {prob.rows[i][0] for i in np.flatnonzero(np.abs(lam_g) > 1e-8) if prob.rows[i][0]}


def test_steps_land_on_the_optimum_from_scratch_across_a_change_of_drivers(trainer):
    prob, p0, cont = trainer
    j = prob.paths.index(("requirements", "turn-4g", "load_factor"))
    k = prob.paths.index(("requirements", "field", "ground_roll"))
    x, lg, lx, _st, ok = prob.solve_raw(p0)
    assert ok
    taken, drivers = 0, []
    # the turn gets harder while the field gets longer: the field requirement stops driving
    for n, roll in zip(np.linspace(3.0, 5.0, 16), np.linspace(600.0, 1200.0, 16)):
        p = p0.copy()
        p[j], p[k] = n, roll
        ref = prob.solve_raw(p)
        assert ref[4]
        step = cont.step(x, lg, lx, p)
        if step is not None:
            taken += 1
            # W/S, T/W and takeoff mass as IPOPT's (which stops within its tolerance: where a
            # requirement is barely active, up to 1e-7 short of its bound), never heavier
            for a, b in zip(step[0][:3], ref[0][:3]):
                assert a == pytest.approx(b, rel=1e-6)
            assert step[0][2] <= ref[0][2] * (1 + 1e-10)
            assert prob.verify(step[0], p)
            x, lg, lx = step[:3]
        else:
            x, lg, lx = ref[:3]
        drivers.append(_drivers(prob, lg))
    assert taken >= 12
    assert drivers[0] != drivers[-1]          # the active set did change on the way


def test_no_step_to_a_point_without_a_design(trainer):
    prob, p0, cont = trainer
    x, lg, lx, _st, ok = prob.solve_raw(p0)
    p = p0.copy()
    p[prob.paths.index(("requirements", "turn-4g", "load_factor"))] = 12.0      # no design pulls 12 g here
    assert not prob.solve_raw(p)[4]
    step = cont.step(x, lg, lx, p)
    assert step is None or not prob.verify(step[0], p)

"""Problem: the sizing problem built from a requirement file, solved and explained.

Lives here: ``tree`` (the SI tree, its parameters, the physics views),
``nlp`` (the built CasADi/IPOPT problem and its public interface), ``start``
(the starting-point scan), ``package`` (active set, margins, sensitivities
-> ``Result``), ``steps`` (what a real step of each requirement costs, re-solved),
``health`` (growth factor and runaway margin of the weight closure), ``capability``
(each requirement in its own terms), ``corner`` (the point shown when the takeoff mass
does not depend on it),
``diagnose`` (infeasible sets: conflicts and relaxations), ``continuation``
(a study's Newton step from a solved neighbour) and ``result`` (the frozen
result types).
May import: ``sizing.inputs``, ``sizing.constraints``, ``sizing.weights``,
``sizing.physics``, ``sizing.common`` (and ``sizing.charts`` lazily, for
``Result.diagram()``).
"""
from __future__ import annotations

from .nlp import ACTIVE_TOL, VERIFY_TOL, Problem
from .result import Design, Infeasibility, RequirementResult, Result

_CACHE: dict = {}


def build(spec) -> Problem:
    """A :class:`Problem` for the spec, reused when the same structure was built last."""
    from .tree import spec_tree, structure_key

    key = structure_key(spec_tree(spec))
    prob = _CACHE.get(key)
    if prob is None:
        prob = Problem(spec)
        _CACHE.clear()
        _CACHE[key] = prob
    return prob


def solve(spec, sensitivities=True) -> Result:
    """Solve a requirement file (a :class:`sizing.inputs.spec.Spec`) -> :class:`Result`."""
    prob = build(spec)
    return prob.solve(prob.parameters(spec), sensitivities=sensitivities, spec=spec)


__all__ = ["ACTIVE_TOL", "VERIFY_TOL", "Design", "Infeasibility", "Problem", "RequirementResult", "Result",
           "build", "solve"]

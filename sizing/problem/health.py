"""Closure health: how strongly takeoff mass answers to payload, and how far it is from runaway.

The weight closure m_TO = (m_crew + m_payload) / (1 - f_empty - f_fuel) diverges when the
empty and fuel fractions together reach 1. Two numbers say how near a design is:

* **growth factor** d m_TO / d m_payload [kg per kg]: what one more kilogram of payload (or of
  any fixed mass) costs in takeoff mass, with the design point re-optimised. For the
  takeoff-mass objective it is the optimizer's sensitivity to payload; otherwise it is the
  inverse of the runaway margin (the design point held).
* **runaway margin** = 1 - d(m_empty + m_fuel) / d m_TO at the design point (W/S, T/W or P/W and
  the free speeds held): the share of an extra kilogram of takeoff mass left to carry payload.
  The closure diverges when it reaches 0, that is when the empty-mass or fuel fraction grows by
  this much. For fixed fractions it is 1 - f_empty - f_fuel; for a mass-dependent model
  (regression f_empty = A m_TO^C, components) it is the marginal fraction, e.g. 1 - (1 + C)
  f_empty - f_fuel for the regression. Its inverse is the growth factor with the design held.

A warning is raised when the growth factor exceeds :data:`GROWTH_WARN` kg per kg or the runaway
margin is below :data:`RUNAWAY_WARN` (within 10 % of runaway).
"""
from __future__ import annotations

import numpy as np

from .. import weights as Wt
from . import tree as M
from .result import ClosureHealth

GROWTH_WARN = 10.0        # kg of takeoff mass per kg of payload
RUNAWAY_WARN = 0.10       # runaway margin below this: within 10 % of runaway
_REL_STEP = 1e-5          # central difference of the empty and fuel masses in m_TO


def empty_and_fuel_mass(prob, tree, W_S, Y, m_TO) -> float:
    """m_empty + m_fuel [kg] at takeoff mass m_TO [kg], the design point (W/S [N/m^2], Y) held."""
    ac = M.aircraft(tree, m_TO)
    with np.errstate(all="ignore"):
        f_fuel = Wt.fuel_fraction(tree, ac, W_S)
        f_empty = Wt.empty_fraction_of(tree, m_TO, W_S, Y, prob.propeller)
    return float(np.asarray(f_fuel + f_empty)) * m_TO


def runaway_margin(prob, tree, W_S, Y, m_TO) -> float:
    """1 - d(m_empty + m_fuel)/d m_TO at the design point [-] (central difference)."""
    h = _REL_STEP * m_TO
    d = (empty_and_fuel_mass(prob, tree, W_S, Y, m_TO + h) - empty_and_fuel_mass(prob, tree, W_S, Y, m_TO - h))
    return 1.0 - d / (2.0 * h)


def closure_health(prob, tree, W_S, Y, m_TO, other_costs=()) -> ClosureHealth:
    """Growth factor, runaway margin and the warning (empty when neither threshold is crossed)."""
    margin = runaway_margin(prob, tree, W_S, Y, m_TO)
    growth = next((per for what, per, _unit in other_costs if what == "payload (growth factor)"), None)
    source = "optimizer sensitivity to payload"
    if growth is None:
        growth = 1.0 / margin if margin > 0 else float("inf")
        source = "1 / runaway margin (design point held)"
    warn = []
    if growth > GROWTH_WARN:
        warn.append(f"growth factor {growth:,.1f} kg per kg exceeds {GROWTH_WARN:g}: every kg added to "
                    f"payload or empty mass adds {growth:,.1f} kg of takeoff mass")
    if margin < RUNAWAY_WARN:
        warn.append(f"runaway margin {margin:.3f} is below {RUNAWAY_WARN:g}: the closure diverges if the "
                    f"empty-mass or fuel fraction grows by {max(margin, 0.0):.3f}")
    text = ("WARNING: near weight runaway: " + "; ".join(warn) + ". Small errors in the weight estimate "
            "become large errors in takeoff mass.") if warn else ""
    return ClosureHealth(growth_factor=float(growth), runaway_margin=float(margin), warning=text,
                         growth_source=source)

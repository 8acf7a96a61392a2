"""The ``sizing solve --json`` object: every number labelled by its key, SI units in the key names."""
from __future__ import annotations

import json
import math

import numpy as np

from ..common.caution import CAUTION
from ..physics.propulsion import reference_label


def as_dict(result) -> dict:
    """The result as one JSON-ready dict (keys documented in docs/file-format.md, output section)."""
    out = {"title": result.title, "status": result.status, "design": None, "drivers": list(result.drivers),
           "requirements": [], "infeasibility": None, "caution": CAUTION,
           "mass_independent": bool(getattr(result, "mass_independent", False)),
           "mass_notice": getattr(result, "mass_notice", "") or None}
    d = result.design
    if d is not None:
        des = {"wing_loading_Pa": d.wing_loading}
        if result.propeller:
            des["power_to_weight_W_per_N"] = d.power_to_weight
        else:
            des["thrust_to_weight"] = d.thrust_to_weight
        des.update({"takeoff_mass_kg": d.takeoff_mass, "wing_area_m2": d.wing_area,
                    "empty_mass_kg": d.empty_mass, "fuel_mass_kg": d.fuel_mass})
        if result.propeller:
            des["power_W"] = d.power
            des["power_per_engine_W"] = d.power_per_engine
        else:
            des["thrust_N"] = d.thrust
            des["thrust_per_engine_N"] = d.thrust_per_engine
            if d.dry_thrust is not None:
                des["dry_thrust_N"] = d.dry_thrust
                des["dry_thrust_to_weight"] = d.dry_thrust_to_weight
        des["engines"] = d.engines
        des["rating"] = d.rating
        des["power_W_is" if result.propeller else "thrust_N_is"] = reference_label(result.propeller, d.rating)
        if d.dry_thrust is not None:
            des["dry_thrust_N_is"] = reference_label(False, "dry rating")
        out["design"] = des
        out["requirements"] = [{
            "id": r.id, "kind": r.kind, "active": r.active, "margin": r.margin,
            "sensitivity": {"value": r.sensitivity, "unit": r.sensitivity_unit},
            "capability": capability_dict(r),
            "cost_of_step": cost_of_step(r),
        } for r in result.requirements]
    if d is None:
        # infeasible: every requirement listed, none active, no margin or cost (there is no design)
        reqs = result.requirements or getattr(result.spec, "requirements", ()) or ()
        out["drivers"] = []
        out["requirements"] = [{"id": r.id, "kind": r.kind, "active": False, "margin": None,
                                "sensitivity": None, "capability": None, "cost_of_step": None} for r in reqs]
    from ..problem.crosscheck import cross_check

    check = cross_check(result)          # only where the file declares aircraft.class: no class, no guess
    out["class_check"] = check.as_dict() if check is not None else None
    ch = getattr(result, "closure", None)
    out["closure"] = None if ch is None else {
        "growth_factor": ch.growth_factor, "growth_factor_unit": "kg per kg", "growth_factor_source": ch.growth_source,
        "runaway_margin": ch.runaway_margin, "warning": ch.warning or None}
    if result.infeasibility is not None:
        inf = result.infeasibility
        rel = inf.relaxations
        out["infeasibility"] = {"conflicts": list(inf.conflicts),
                                "relaxations": {k: v["value"] for k, v in rel.items()},
                                "relaxation_units": {k: v["unit"] for k, v in rel.items()},
                                "relaxation_text": {k: v.get("text", "") for k, v in rel.items()},
                                "relaxation_takeoff_mass_kg": {k: v.get("takeoff_mass_kg") for k, v in rel.items()},
                                "relaxation_runaway_margin": {k: v.get("runaway_margin") for k, v in rel.items()},
                                "together": any(v.get("together", False) for v in rel.values()),
                                "explanation": inf.explanation}
    return out


def capability_dict(r):
    """A requirement's margin in its own quantity: ``value`` (what the design can do) and
    ``required`` in the unit the file wrote (``unit``; ``airspeed`` TAS, CAS or EAS for speeds),
    ``margin`` in that unit (value - required, or required - value for a limit) and as ``percent``
    of the requirement, ``basis`` of the fractional ``margin`` beside it, ``note``; None without one."""
    c = getattr(r, "capability", None)
    if c is None:
        return None
    out = {"value": c.value, "required": c.required, "unit": c.unit, "margin": c.margin,
           "percent": c.percent, "basis": c.basis, "note": c.note}
    if r.active:
        out["margin"], out["percent"] = 0.0, 0.0
    if c.airspeed:
        out["airspeed"] = c.airspeed
    if c.lapse_given is not None:
        out["thrust_lapse_given"] = c.lapse_given
    return out


def cost_of_step(r):
    """A requirement's re-solved step as JSON (None when the result has none): ``step`` signed in
    ``unit`` (the harder direction), ``delta_mass_kg`` re-solved (None when the step leaves no
    feasible design, then ``feasible`` is false), ``linear_estimate_kg`` slope x step."""
    sc = getattr(r, "step_cost", None)
    if sc is None:
        return None
    return {"step": sc.step, "unit": sc.unit, "delta_mass_kg": sc.delta_mass,
            "linear_estimate_kg": sc.linear_estimate, "feasible": sc.feasible, "nonlinear": sc.nonlinear}


def _finite(o):
    """A JSON-ready copy: numpy scalars and arrays as Python numbers and lists, NaN and inf as
    None (JSON has neither), tuples as lists."""
    if isinstance(o, np.ndarray):
        return [_finite(v) for v in o.tolist()]
    if isinstance(o, np.generic):
        o = o.item()                 # np.bool_ -> bool, np.float64 -> float, np.int64 -> int
    if isinstance(o, bool):
        return o
    if isinstance(o, float):
        return o if math.isfinite(o) else None
    if isinstance(o, dict):
        return {k: _finite(v) for k, v in o.items()}
    if isinstance(o, (list, tuple)):
        return [_finite(v) for v in o]
    return o


def to_json(result) -> str:
    return json.dumps(_finite(as_dict(result)), indent=2, allow_nan=False)

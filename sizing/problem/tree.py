"""The SI tree of a requirement file, its parameters, and the physics views built from it.

The SI tree (see :meth:`sizing.inputs.spec.Spec.tree`) keeps the YAML's key names,
with requirements keyed by id. Its numeric leaves are the *parameters* of
the sizing problem: :func:`flatten` lists them by path, :func:`substitute`
rebuilds the tree with other values (CasADi symbols for the solver, new
numbers for a trade study). Strings, booleans, Mach tables (breakpoints
and values: their monotone interpolant is built from numbers) and the
design-space box are structure, not parameters.
"""
from __future__ import annotations

import math
from types import SimpleNamespace

from ..constraints import KINDS, SERVICE_CEILING_CLIMB_RATE
from ..physics.aero import DragPolar, MachTable, oswald_efficiency_straight_wing

STRUCTURAL_KEYS = {"design_space", "title", "objective"}   # top-level keys that are not parameters


def spec_tree(spec) -> dict:
    """SI tree of a Spec with requirements keyed by id."""
    tree = spec.tree()
    tree["requirements"] = {r["id"]: r for r in tree["requirements"]}
    return tree


def is_table(d) -> bool:
    return isinstance(d, dict) and "mach" in d and isinstance(d["mach"], list)


def flatten(tree, path=()):
    """List of (path, value) for every numeric parameter leaf of the tree."""
    out = []
    if isinstance(tree, dict):
        for k, v in tree.items():
            if not path and k in STRUCTURAL_KEYS:
                continue
            if is_table(v):
                continue   # Mach tables are structure (their interpolant is built from numbers)
            out.extend(flatten(v, path + (k,)))
    elif isinstance(tree, list):
        for i, v in enumerate(tree):
            out.extend(flatten(v, path + (i,)))
    elif isinstance(tree, float):
        out.append((path, tree))
    return out


def substitute(tree, values: dict, path=()):
    """Copy of the tree with leaves at the given paths replaced."""
    if path in values:
        return values[path]
    if isinstance(tree, dict):
        return {k: substitute(v, values, path + (k,)) for k, v in tree.items()}
    if isinstance(tree, list):
        return [substitute(v, values, path + (i,)) for i, v in enumerate(tree)]
    return tree


def structure_key(tree) -> str:
    """A string that is equal for trees that differ only in parameter values."""
    paths = {p for p, _ in flatten(tree)}

    def strip(t, path=()):
        if path in paths:
            return "#"
        if isinstance(t, dict):
            return {k: strip(v, path + (k,)) for k, v in t.items()}
        if isinstance(t, list):
            return [strip(v, path + (i,)) for i, v in enumerate(t)]
        return t

    return repr(strip(tree))


def _coef(c):
    if isinstance(c, dict):
        name = "cd0" if "cd0" in c else "k1"
        return MachTable(tuple(c["mach"]), tuple(c[name]))
    return c


def induced_factor(aero: dict):
    """k1 from the tree: given directly, or 1/(pi A e) (e estimated if absent)."""
    if "k1" in aero:
        return _coef(aero["k1"])
    A = aero["aspect_ratio"]
    e = aero.get("oswald_efficiency")
    if e is None:
        e = oswald_efficiency_straight_wing(A)
    return 1.0 / (math.pi * A * e)


def aircraft(tree: dict) -> SimpleNamespace:
    """Physics view of the aircraft: polar, engine data and speed limit."""
    a = tree["aircraft"]
    aero, prop = a["aerodynamics"], a["propulsion"]
    clm = aero["cl_max"]
    cl_takeoff = clm.get("takeoff", clm["clean"])
    cl_max = {"clean": clm["clean"], "takeoff": cl_takeoff, "landing": clm.get("landing", cl_takeoff)}
    polar = DragPolar(
        cd0=_coef(aero["cd0"]), k1=induced_factor(aero), k2=aero.get("k2", 0.0), cl_max=cl_max,
        drag_increment={"takeoff": aero.get("takeoff_drag_increment", 0.0),
                        "landing": aero.get("landing_drag_increment", 0.0)},
    )
    lim = a.get("speed_limit") or {}
    return SimpleNamespace(
        polar=polar,
        engine_type=prop["type"],
        engines=prop.get("engines", 1.0),
        throttle_ratio=prop.get("throttle_ratio", 1.0),
        afterburner=prop.get("afterburner", False),
        propeller_efficiency=prop.get("propeller_efficiency", 0.8),
        speed_limit_mach=lim.get("mach"),
        speed_limit_speed=lim.get("speed"),
    )


def requirement(r: dict, ac, beta=None) -> SimpleNamespace:
    """Physics view of one requirement with kind defaults filled and beta set.

    beta: the weight fraction to use (a number or symbol); None takes the
    file's number, or 1.0 when the file gives none (``after:`` fractions are
    supplied by the caller from the mission).
    """
    d = dict(r)
    d.setdefault("altitude", 0.0)
    d.setdefault("temperature_offset", 0.0)
    for key in ("mach", "speed", "thrust_lapse", "config"):
        d.setdefault(key, None)
    if d["kind"] == "ceiling":
        d.setdefault("climb_rate", SERVICE_CEILING_CLIMB_RATE)
    if d["kind"] == "takeoff" and d.get("ground_lift_coefficient") is None:
        # CL for least ground-roll drag plus friction, mu / (2 k1) (from memory:
        # Raymer Ch. 17 and Anderson, Aircraft Performance and Design, §6.7)
        d["ground_lift_coefficient"] = d.get("rolling_friction", 0.04) / (2.0 * ac.polar.K1(0.0))
    if beta is None:
        wf = r.get("weight_fraction")
        beta = wf if not isinstance(wf, dict) and wf is not None else 1.0
    d["beta"] = beta
    return SimpleNamespace(**d)


def value_field(r: dict) -> str:
    """The field of a requirement whose value its sensitivity is taken against."""
    name = KINDS[r["kind"]].value_field
    if name in ("speed", "mach"):       # whichever of the two the file gives
        return "mach" if "mach" in r else "speed"
    return name

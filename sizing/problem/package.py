"""Packaging a solution: the design point, active set, margins, sensitivities and costs.

Active: fractional margin below :data:`ACTIVE_TOL`.
Margins: T/W_design/T/W_req - 1 or W/S_limit/W/S_design - 1; a free-speed
requirement also counts its stall bound. Sensitivities: for the mass
objective d m_TO / d value = d L / d p (the Lagrangian with IPOPT's
multipliers), in the user's units; other objectives use central differences
of re-solves.
"""
from __future__ import annotations

import math

import numpy as np

from .. import constraints as C
from .. import weights as Wt
from ..physics.atmosphere import g0
from ..physics.propulsion import dry_to_rated, rating_name
from . import tree as M
from .capability import capability_of, margin_at, sensitivity_unit
from .health import closure_health
from .result import Design, RequirementResult, Result
from .steps import denoised, step_costs

ACTIVE_TOL = 1e-5     # a requirement within this fractional margin is active


def package(prob, x, lam_g, p, stats, sensitivities=True, spec=None):
    """A verified solution -> :class:`Result`: design point, active set, margins in their own
    terms, sensitivities in the user's units, fuel by segment, edges of the search region."""
    spec = spec or prob.spec
    # the takeoff mass the same at every feasible point: show the smallest engine, then the
    # smallest wing, exactly (the tie-break's optimum lies a little off it)
    fixed_mass = prob.objective == "takeoff-mass" and prob.mass_independent(p)
    if fixed_mass:
        xc = prob.corner(p, float(x[2] * prob.m_ref))
        if xc is not None and prob.verify(xc, p):
            x = xc
    tree = prob.tree_of(p)
    W_S, Y, m_TO = float(x[0] * prob.WS_scale), float(x[1] * prob.Y_scale), float(x[2] * prob.m_ref)
    ac = M.aircraft(tree, m_TO)
    V = {rid: float(x[3 + i] * prob.V_scale) for i, rid in enumerate(prob.free)}
    with np.errstate(all="ignore"):
        rows, vals, f_fuel, f_empty, betas = prob.expressions(tree, W_S, Y, m_TO, V)
    f_fuel, f_empty = float(np.asarray(f_fuel)), float(np.asarray(f_empty))
    if sensitivities:
        dm = sensitivities_of(prob, x, lam_g, p)
        other = other_costs(prob, x, lam_g, p, tree)
    else:
        dm, other = {}, ()
    rows_out = []          # RequirementResult fields by requirement, completed with the steps below
    room = {}              # margins in their own quantity: steps within them cost nothing
    out = []
    drivers = []
    for rid in prob.req_ids:
        r = tree["requirements"][rid]
        req = M.requirement(r, ac, float(np.asarray(betas[rid])))
        b = C.KINDS[r["kind"]].function(W_S, V.get(rid), req, ac)
        margins = []
        if b.thrust is not None:
            margins.append(Y / float(np.asarray(b.thrust)) - 1.0)
        if b.wing_loading is not None:
            margins.append(float(np.asarray(b.wing_loading)) / W_S - 1.0)
        m_ws = margins[-1] if b.wing_loading is not None else None
        # a free speed's floors (min speed factor, buffet) bound the speed, not the design: the
        # requirement drives when its thrust row does (at its best speed the floors are met)
        margin = min(margins) if margins else math.inf
        active = margin <= ACTIVE_TOL
        if rid in V and not active:
            # the solver's free speed of a requirement with slack is any feasible speed: the
            # margin is the design's at its best speed (as the margin text is)
            margin = margin_at(r, tree, W_S, Y, float(np.asarray(req.beta)), m_TO)
        if active:
            drivers.append(rid)
            margin = 0.0
        # what the fractional margin is a margin of: the wing loading where that row is the tighter
        m_t = margins[0] if b.thrust is not None else None
        basis = "P/W" if prob.propeller else "T/W"
        if m_ws is not None and (m_t is None or m_ws < m_t):
            basis = "W/S"
        cap, detail = capability_of(r, tree, spec, W_S, Y, betas[rid], m_TO, basis=basis)
        spec_req = spec.requirement(rid)
        field = M.value_field(r)
        unit_text, scale = sensitivity_unit(spec, rid, field)
        sens = dm.get(rid)
        if sens is not None and fixed_mass:
            sens = 0.0          # the mass does not move with any requirement while the set is feasible
        if sens is not None:
            sens = sens * scale
        if not active and cap is not None and cap.margin is not None:
            room[rid] = (cap.margin, cap.unit)
        wf = r.get("weight_fraction")
        src = f"after {wf['after']}" if isinstance(wf, dict) else ("given" if wf is not None else "default 1.0")
        if wf is None and M.at_landing_weight(r) and ac.max_landing_fraction is not None:
            src = "max landing fraction"
        rows_out.append(dict(
            id=rid, kind=r["kind"], active=active, margin=max(margin, 0.0),
            sensitivity=sens, sensitivity_unit=unit_text,
            value_text=value_text(spec_req, field),
            detail=detail,
            speed=V.get(rid), beta=float(np.asarray(req.beta)), beta_source=src, capability=cap))
    # re-solved steps (not in study runs); a step within a requirement's margin costs nothing
    steps = step_costs(prob, x, lam_g, p, spec, dm, room) if sensitivities else {}
    for row in rows_out:
        sc = steps.get(row["id"])
        if row["sensitivity"] is not None:
            row["sensitivity"] = denoised(row["sensitivity"], sc)
        out.append(RequirementResult(**row, step_cost=sc))
    if mission_drives(prob, x, p, rows, vals):
        drivers.append("mission fuel")
    g = m_TO * g0
    design = Design(
        wing_loading=W_S, thrust_to_weight=None if prob.propeller else Y,
        power_to_weight=Y if prob.propeller else None, takeoff_mass=m_TO,
        wing_area=g / W_S, empty_mass=f_empty * m_TO, fuel_mass=f_fuel * m_TO,
        thrust=None if prob.propeller else Y * g, power=Y * g if prob.propeller else None,
        crew_mass=tree["aircraft"]["weights"].get("crew", 0.0),
        payload_mass=tree["aircraft"]["weights"].get("payload", 0.0),
        **rating_fields(ac, None if prob.propeller else Y * g))
    edges = []
    for name, val, (lo, hi) in (
            ("wing_loading", W_S, prob.WS_bounds),
            ("power_to_weight" if prob.propeller else "thrust_to_weight", Y, prob.Y_bounds)):
        span = hi - lo
        if abs(val - lo) <= 1e-6 * span and lo > 0:
            edges.append(f"{name} lower bound")
        if abs(val - hi) <= 1e-6 * span:
            edges.append(f"{name} upper bound")
    fuel_rows = ()
    if Wt.has_mission_fuel(tree):
        segs = Wt.mission_fractions(tree, ac, W_S)
        fuel_rows = tuple((name, float(np.asarray(f)), float((np.asarray(b0) - np.asarray(be)) * m_TO))
                          for (name, f, be), b0 in zip(segs, [1.0] + [s[2] for s in segs[:-1]]))
    return Result(title=spec.title, status="optimal", propeller=prob.propeller, design=design,
                    requirements=tuple(out), drivers=tuple(drivers), on_edge=tuple(edges),
                    fuel_breakdown=fuel_rows, other_costs=other, objective=prob.objective,
                    stats=dict(stats),
                    spec=spec, mass_independent=fixed_mass,
                    closure=closure_health(prob, tree, W_S, Y, m_TO, other))

def rating_fields(ac, thrust):
    """Design fields of the engine rating: engine count, the rating's name and, with an
    afterburner, the dry sea-level static thrust [N]."""
    n = int(round(float(np.asarray(ac.engines))))
    ab = bool(getattr(ac, "afterburner", False))
    dry = None
    if thrust is not None and ab:
        r = float(np.asarray(dry_to_rated(ac.engine_type, float(np.asarray(ac.throttle_ratio)), ab)))
        dry = thrust * r if r < 1.0 else None
    return {"engines": n, "rating": rating_name(ac.engine_type, ab), "dry_thrust": dry}


def mission_drives(prob, x, p, rows, vals) -> bool:
    """Mission fuel sets the wing loading when fewer than two requirement
    rows are active (no vertex of the diagram pins W/S), the optimum is
    inside the W/S range and the fuel fraction changes with W/S."""
    if not Wt.has_mission_fuel(prob.tree0):
        return False
    W_S = x[0] * prob.WS_scale
    lo, hi = prob.WS_bounds
    if W_S <= lo * (1 + 1e-6) or W_S >= hi * (1 - 1e-6):
        return False
    active = sum(1 for (rid, what), v in zip(rows, vals)
                 if what in ("thrust", "wing_loading") and float(np.asarray(v)) <= ACTIVE_TOL)
    if active >= 2:
        return False
    tree = prob.tree_of(p)
    ac = M.aircraft(tree)
    f = [float(np.asarray(Wt.fuel_fraction(tree, ac, W_S * s))) for s in (1 - 1e-3, 1 + 1e-3)]
    return abs(f[1] - f[0]) > 1e-7

def other_costs(prob, x, lam_g, p, tree):
    """Takeoff-mass cost of payload (the growth factor) and of each mission leg."""
    if prob.objective != "takeoff-mass":
        return ()
    dL = prob.lagrangian_gradient(x, p, lam_g) * prob.m_ref
    idx = {path: i for i, path in enumerate(prob.paths)}
    out = []
    j = idx.get(("aircraft", "weights", "payload"))
    if j is not None:
        out.append(("payload (growth factor)", float(dL[j]), "kg per kg"))
    for i, seg in enumerate((tree.get("mission") or {}).get("segments", [])):
        name = Wt.segment_label(seg, i)
        if seg["kind"] == "cruise":
            j = idx.get(("mission", "segments", i, "range"))
            if j is not None:
                out.append((f"range of {name}", float(dL[j]) * 1000.0, "kg per km"))
        elif seg["kind"] in ("loiter", "combat", "maneuver"):
            j = idx.get(("mission", "segments", i, "time"))
            if j is not None:
                out.append((f"time of {name}", float(dL[j]) * 60.0, "kg per min"))
    return tuple(out)

def sensitivities_of(prob, x, lam_g, p):
    """d m_TO / d value [kg per SI unit] for each requirement's headline value."""
    idx = {path: i for i, path in enumerate(prob.paths)}
    out = {}
    if prob.objective == "takeoff-mass":
        dL = prob.lagrangian_gradient(x, p, lam_g) * prob.m_ref
        for rid in prob.req_ids:
            field = M.value_field(prob.tree0["requirements"][rid])
            j = idx.get(("requirements", rid, field))
            if j is not None:
                out[rid] = float(dL[j])
        return out
    # other objectives: central differences of re-solves
    for rid in prob.req_ids:
        field = M.value_field(prob.tree0["requirements"][rid])
        j = idx.get(("requirements", rid, field))
        if j is None:
            continue
        h = 1e-4 * max(abs(p[j]), 1e-3)
        vals = []
        for s in (+1, -1):
            pp = p.copy()
            pp[j] += s * h
            r = prob.solve_raw(pp, x0=x)
            vals.append(r[0][2] * prob.m_ref if r[4] else np.nan)
        out[rid] = float((vals[0] - vals[1]) / (2 * h))
    return out


def value_text(spec_req, field):
    v = getattr(spec_req, field, None)
    if v is None:
        return ""
    return getattr(v, "text", None) or f"{v:g}"


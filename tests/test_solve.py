"""The optimizer against an independent brute-force grid on the same physics.

Checks: every example file and 120 random requirement sets (hypothesis; `make fuzz` draws
new ones): the solver's takeoff mass within 0.1 % of the grid's best, never lighter than it
by more than the grid's resolution (that would mean a violated requirement), the same
drivers; sensitivities against finite differences of re-solves.  # common practice, no source
"""
import copy
from pathlib import Path

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from sizing.common.errors import InputError
from sizing.inputs.spec import load, load_text, validate
from sizing.physics.airspeed import cas_to_mach
from sizing.physics.atmosphere import isa
from sizing.problem import ACTIVE_TOL, Problem, build, solve
from sizing.problem import tree as M
from sizing.problem.capability import user_unit

from . import bruteforce as BF

EXAMPLES = sorted(Path(__file__).resolve().parents[1].joinpath("requirements").glob("*.yaml"))


def check_against_grid(spec):
    res = solve(spec)
    prob = build(spec)
    tree = M.spec_tree(spec)
    grid = BF.best(tree, prob.WS_bounds, prob.Y_bounds, prob.propeller)
    if grid is None and res.status == "optimal":
        # the feasible set may be narrower than the coarse grid's step (a weight closure near
        # runaway beside a steep curve): the same grid, zoomed to +/- 3 % about the solver's
        # wing loading, must then find it
        W = res.design.wing_loading
        grid = BF.best(tree, (max(W / 1.03, prob.WS_bounds[0]), min(W * 1.03, prob.WS_bounds[1])),
                       prob.Y_bounds, prob.propeller)
    if grid is None:
        assert res.status == "infeasible"
        return res, None
    assert res.status == "optimal"
    m_s, m_g = res.design.takeoff_mass, grid["m"]
    # the grid's points are feasible designs: the optimum can only be lighter, by at most
    # the grid's resolution; and it must be within 0.1 % of the grid's best
    assert m_s <= m_g * (1 + 1e-6) + 1e-6
    assert m_s >= m_g * (1 - 1e-3)
    # same drivers: what is clearly active at the grid's best point is a driver, and every
    # driver is at least nearly active there (a curve passing within 0.2 % of the grid's
    # best point may or may not be active at the exact optimum) or active within the
    # solver's own tolerance at the solver's point, both by the brute force's curves
    Y = grid["Y"]
    rel_step = grid["step"] / grid["W"]
    loose = {k for k, v in grid["need"].items() if v >= Y * (1 - 2e-3)}
    loose |= {k for k, v in grid["lims"].items() if grid["W"] >= v * (1 - 5 * rel_step)}
    loose |= closing_windows(tree, grid["W"], 5 * rel_step, grid["m"])
    tight = {k for k, v in grid["need"].items() if v >= Y * (1 - 1e-6)}
    tight |= {k for k, v in grid["lims"].items() if grid["W"] >= v * (1 - rel_step)}
    d = res.design
    at_solver = active_at(tree, d.wing_loading, d.power_to_weight if res.propeller else d.thrust_to_weight,
                          2 * ACTIVE_TOL, d.takeoff_mass)
    solver_drivers = {d for d in res.drivers if d != "mission fuel"}
    assert tight <= solver_drivers <= loose | at_solver, (solver_drivers, tight, loose, at_solver, m_s, m_g)
    return res, grid


def closing_windows(tree, W, rtol, takeoff_mass=None):
    """Free-speed requirements whose speed window (stall to the speed limit) closes within
    rtol above W: an upper limit on W/S the curves show only as a jump to infinity."""
    need, _ = BF.curves(tree, np.array([W, W * (1 + rtol)]), takeoff_mass=takeoff_mass)
    return {k for k, v in need.items() if np.isfinite(v[0]) and not np.isfinite(v[1])}


def active_at(tree, W, Y, rtol, takeoff_mass=None):
    """Requirements active within rtol at (W, Y) by the brute force's curves: the required
    Y within rtol of Y, a W/S limit within rtol of W, or a speed window closing within rtol."""
    need, lims = BF.curves(tree, np.array([W]), takeoff_mass=takeoff_mass)
    out = {k for k, v in need.items() if v[0] >= Y * (1 - rtol)}
    out |= {k for k, v in lims.items() if W >= v[0] * (1 - rtol)}
    return out | closing_windows(tree, W, rtol, takeoff_mass)


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_examples_against_brute_force(path):
    check_against_grid(load(path))


def test_answer_is_verified_in_numpy():
    # common practice, no source: re-evaluate each requirement at the reported design
    for path in EXAMPLES:
        spec = load(path)
        res = solve(spec)
        tree = M.spec_tree(spec)
        W = np.array([res.design.wing_loading])
        need, lims = BF.curves(tree, W, n_speed=2000, takeoff_mass=res.design.takeoff_mass)
        Y = res.design.power_to_weight if res.propeller else res.design.thrust_to_weight
        for rid, v in need.items():
            assert Y >= v[0] * (1 - 1e-5), rid
        for rid, v in lims.items():
            assert W[0] <= v[0] * (1 + 1e-6), rid
        for r in res.requirements:
            assert r.margin >= 0


# ------------------------------------------------------------------ random sets

BASE = {
    "title": "random set",
    "aircraft": {
        "aerodynamics": {"cd0": 0.022, "aspect_ratio": 7.0, "oswald_efficiency": 0.8,
                         "cl_max": {"clean": 1.4, "takeoff": 1.8, "landing": 2.2},
                         "takeoff_drag_increment": 0.015},
        "propulsion": {"type": "turbofan-high-bypass", "engines": 2},
        "speed_limit": {"mach": 0.85},
        "weights": {"crew": "180 kg", "payload": "800 kg",
                    "empty": {"model": "components", "wing": "35 kg/m^2", "propulsion": "0.02 kg/N",
                              "other": 0.38},
                    "fuel": {"fraction": 0.2}},
    },
    "requirements": [],
}


KN = 1852.0 / 3600.0


@st.composite
def requirement_sets(draw):
    d = copy.deepcopy(BASE)
    ac = d["aircraft"]
    engine = draw(st.sampled_from(["turbofan-high-bypass", "turbofan-low-bypass", "turbojet", "turboprop", "piston"]))
    prop = engine in ("turboprop", "piston")
    ac["propulsion"]["type"] = engine
    ac["aerodynamics"]["cd0"] = draw(st.floats(0.016, 0.035))
    ac["aerodynamics"]["aspect_ratio"] = draw(st.floats(5.0, 12.0))
    ac["aerodynamics"]["cl_max"]["clean"] = draw(st.floats(1.1, 1.6))
    ac["weights"]["empty"]["other"] = draw(st.floats(0.25, 0.42))
    ac["weights"]["fuel"]["fraction"] = draw(st.floats(0.08, 0.25))
    limit_mach = 0.85
    if prop:
        ac["weights"]["empty"]["propulsion"] = f"{draw(st.floats(0.3, 1.2)):.3f} kg/kW"
        limit_mach = round(draw(st.floats(0.35, 0.6)), 3)
        ac["speed_limit"] = {"mach": limit_mach}
        if draw(st.booleans()):
            ac["propulsion"]["propeller_diameter"] = f"{draw(st.floats(1.8, 4.0)):.2f} m"
        if draw(st.booleans()):
            ac["propulsion"]["takeoff_propeller_efficiency"] = round(draw(st.floats(0.55, 0.8)), 3)
    vmo = None
    if not prop and draw(st.booleans()):       # VMO and MMO together
        vmo = draw(st.floats(280, 360))
        ac["speed_limit"]["cas"] = f"{vmo:.0f} kn"
    if draw(st.booleans()):
        ac["aerodynamics"]["engine_out_drag_increment"] = round(draw(st.floats(0.0, 0.01)), 4)
    if draw(st.booleans()):
        ac["aerodynamics"]["gear_drag_increment"] = round(draw(st.floats(0.0, 0.02)), 4)
    if not prop and draw(st.booleans()):
        ac["aerodynamics"]["cl_buffet"] = round(draw(st.floats(0.7, 1.1)), 3)
    if draw(st.booleans()):
        ac["weights"]["max_landing_fraction"] = round(draw(st.floats(0.8, 1.0)), 3)
    reqs = []
    pool = ["stall-speed", "ceiling", "climb", "cruise", "takeoff", "landing", "sustained-turn",
            "climb-gradient", "instantaneous-turn", "excess-power", "max-mach", "approach-speed",
            "takeoff-distance", "balanced-field", "landing-distance", "field-length", "climb-segment"]
    kinds = draw(st.lists(st.sampled_from(pool), min_size=2, max_size=6, unique=True))
    top_mach = min(0.55, limit_mach) if prop else 0.8

    def mach_at(lo, alt_ft):
        """A Mach number from lo up to the top, below VMO at the altitude when one is given."""
        top = top_mach
        if vmo is not None:
            top = min(top, 0.98 * float(cas_to_mach(vmo * KN, isa(alt_ft * 0.3048))))
        return round(draw(st.floats(min(lo, 0.9 * top), top)), 3)

    for i, label in enumerate(kinds):
        rid = f"{label}-{i}"
        k = {"takeoff-distance": "takeoff", "balanced-field": "takeoff", "landing-distance": "landing",
             "field-length": "landing", "climb-segment": "climb-gradient"}.get(label, label)
        if label == "stall-speed":
            r = {draw(st.sampled_from(["speed", "cas", "eas"])): f"{draw(st.floats(55, 130)):.2f} kn",
                 "config": "landing"}
        elif label == "approach-speed":
            r = {draw(st.sampled_from(["speed", "cas", "eas"])): f"{draw(st.floats(75, 160)):.2f} kn",
                 "factor": round(draw(st.floats(1.2, 1.4)), 3)}
        elif label == "ceiling":
            r = {"altitude": f"{draw(st.floats(8000, 40000 if not prop else 25000)):.0f} ft"}
            if draw(st.booleans()):
                r.update(engines_out=1, altitude=f"{draw(st.floats(2000, 15000)):.0f} ft", climb_rate="50 ft/min")
        elif label == "climb":
            r = {"climb_rate": f"{draw(st.floats(300, 3000)):.0f} ft/min"}
            if draw(st.booleans()):
                top = min(250.0, 0.95 * limit_mach * 340.294 / KN, 0.95 * (vmo or 1e9))
                r[draw(st.sampled_from(["speed", "cas"]))] = f"{draw(st.floats(90, top)):.1f} kn"
        elif label == "cruise":
            alt = draw(st.floats(0, 30000))
            r = {"mach": mach_at(0.2, alt), "altitude": f"{alt:.0f} ft", "throttle": round(draw(st.floats(0.6, 1.0)), 3)}
        elif label == "takeoff":
            r = {"ground_roll": f"{draw(st.floats(300, 1500)):.0f} m", "altitude": f"{draw(st.floats(0, 5000)):.0f} ft"}
        elif label == "takeoff-distance":
            r = {"distance": f"{draw(st.floats(500, 2500)):.0f} m", "altitude": f"{draw(st.floats(0, 5000)):.0f} ft"}
        elif label == "balanced-field":
            r = {"balanced_field": f"{draw(st.floats(900, 2500)):.0f} m",
                 "temperature_offset": f"{draw(st.floats(0, 20)):.0f} K"}
            if prop and "propeller_diameter" not in ac["propulsion"]:
                ac["propulsion"]["propeller_diameter"] = f"{draw(st.floats(1.8, 4.0)):.2f} m"
        elif label == "landing":
            r = {"ground_roll": f"{draw(st.floats(300, 1500)):.0f} m"}
        elif label == "landing-distance":
            r = {"distance": f"{draw(st.floats(500, 2000)):.0f} m"}
        elif label == "field-length":
            r = {"field_length": f"{draw(st.floats(800, 3000)):.0f} m"}
        elif label == "sustained-turn":
            alt = draw(st.floats(0, 20000))
            r = {"load_factor": round(draw(st.floats(1.5, 3.0)), 2), "mach": mach_at(0.3, alt), "altitude": f"{alt:.0f} ft"}
        elif label == "climb-gradient":
            r = {"gradient": f"{draw(st.floats(1.0, 4.0)):.2f} %", "engines_out": 1}
        elif label == "climb-segment":
            r = {"segment": draw(st.sampled_from(["first", "second", "final", "approach", "landing"]))}
        elif label == "instantaneous-turn":
            r = {"load_factor": round(draw(st.floats(2.0, 5.0)), 2), "mach": mach_at(0.3, 0.0)}
        elif label == "excess-power":
            alt = draw(st.floats(0, 20000))
            r = {"excess_power": f"{draw(st.floats(100, 2000)):.0f} ft/min", "load_factor": 1.0,
                 "mach": mach_at(0.3, alt), "altitude": f"{alt:.0f} ft"}
        else:
            alt = draw(st.floats(0, 30000))
            r = {"mach": mach_at(0.3, alt), "altitude": f"{alt:.0f} ft"}
        if draw(st.booleans()) and k != "takeoff":
            r["weight_fraction"] = round(draw(st.floats(0.8, 1.0)), 3)
        reqs.append({"id": rid, "kind": k, **r})
    d["requirements"] = reqs
    return d


@pytest.mark.slow
@settings(max_examples=120, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(requirement_sets())
def test_random_sets_against_brute_force(data):
    spec = validate(data, "<random>")
    check_against_grid(spec)


# A set the random search once drew (regression case): the piston twin limited to M 0.375
# with a ceiling whose free speed (from the stall floor to the limit) the optimizer could leave
# on a bound while the requirement had slack; the driver check then failed. As drawn it also
# asked for Ps at M 0.5, above the speed limit, which the file format now refuses; the check
# runs on the same set with that requirement at M 0.37.
WINDOW_CLOSING = """
title: speed window at the optimum
aircraft:
  aerodynamics: {cd0: 0.03125, aspect_ratio: 5.0, oswald_efficiency: 0.8,
                 cl_max: {clean: 1.25, takeoff: 1.8, landing: 2.2}, takeoff_drag_increment: 0.015}
  propulsion: {type: piston, engines: 2}
  speed_limit: {mach: 0.375}
  weights: {crew: 180 kg, payload: 800 kg, fuel: {fraction: 0.25},
            empty: {model: components, wing: 35 kg/m^2, propulsion: 1.000 kg/kW, other: 0.25}}
requirements:
  - {id: excess-power-0, kind: excess-power, excess_power: 100 ft/min, load_factor: 1.0, mach: 0.5,
     altitude: 16438 ft}
  - {id: ceiling-1, kind: ceiling, altitude: 16846 ft}
"""


def test_the_drawn_set_is_refused_where_it_asks_past_the_speed_limit():
    with pytest.raises(InputError, match="above the speed limit"):
        load_text(WINDOW_CLOSING, "window-closing.yaml")


def test_the_drawn_set_within_the_speed_limit_agrees_with_the_brute_force():
    # common practice, no source: mass and drivers as the brute force has them, the ceiling
    # among the drivers, each driver active at the solver's point by the brute force's curves
    res, grid = check_against_grid(load_text(WINDOW_CLOSING.replace("mach: 0.5,", "mach: 0.37,"), "w.yaml"))
    assert set(res.drivers) == {"excess-power-0", "ceiling-1"}
    d = res.design
    assert {"excess-power-0", "ceiling-1"} <= active_at(M.spec_tree(res.spec), d.wing_loading, d.power_to_weight,
                                                         2 * ACTIVE_TOL, d.takeoff_mass)


# ------------------------------------------------------------------ sensitivities

@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_sensitivities_match_finite_differences(path):
    # common practice, no source: d m_TO / d value from multipliers equals central
    # differences of re-solves of the same built problem (1 % tolerance)
    spec = load(path)
    prob = Problem(spec)
    p0 = prob.parameters(spec)
    res = prob.solve(p0)
    idx = {pp: i for i, pp in enumerate(prob.paths)}
    for r in res.requirements:
        field = M.value_field(prob.tree0["requirements"][r.id])
        j = idx[("requirements", r.id, field)]
        h = 1e-4 * abs(p0[j])
        ms = []
        for s in (+1, -1):
            p = p0.copy()
            p[j] += s * h
            ms.append(prob.solve(p, sensitivities=False).design.takeoff_mass)
        fd = (ms[0] - ms[1]) / (2 * h)
        unit_scale = r.sensitivity / fd if fd != 0 else None
        si = r.sensitivity / (unit_scale if unit_scale else 1)
        # compare in SI: the result's sensitivity is per user unit
        scale = user_unit(spec, r.id, field)[1]    # the user's unit (a segment's gradient: %)
        si = r.sensitivity / scale
        assert si == pytest.approx(fd, rel=1e-2, abs=1e-6 * res.design.takeoff_mass), r.id


def test_parameters_resolve_without_rebuilding():
    # common practice, no source: a changed value re-solves the same built problem, and a
    # harder requirement can never make the design lighter
    spec = load(next(p for p in EXAMPLES if p.stem == "regional-turboprop"))
    prob = build(spec)
    r1 = solve(spec)
    data = copy.deepcopy(spec.data)
    changed = 0
    for r in data["requirements"]:
        if r["id"] in r1.drivers and r["kind"] == "cruise":
            r["speed"] = f"{spec.requirement(r['id']).speed.si / (1852 / 3600) + 10:.0f} kn"
            changed += 1
    assert changed == 1
    spec2 = validate(data, "<changed>")
    assert build(spec2) is prob
    r2 = solve(spec2)
    assert r2.design.takeoff_mass > r1.design.takeoff_mass

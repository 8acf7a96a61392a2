"""Margins in each requirement's own quantity (ft, kn, ft/min, m), the direction of a limit's
margin, a thrust lapse given for one condition, requirements the aircraft cannot fly (located
exit-2 errors), and the corner shown when the takeoff mass does not depend on the design point.

Every capability is checked against an independent computation: the 1976 standard atmosphere from
the ``ambiance`` package, the master equation and Mattingly's lapse written out here in numpy,
root finding and minimisation from scipy.
"""
from __future__ import annotations

import json
import math

import numpy as np
import pytest
import yaml
from ambiance import Atmosphere
from scipy.optimize import brentq, minimize_scalar

from sizing.inputs.spec import validate
from sizing.problem import solve

from .cliutil import run

FT, KN, FPM = 0.3048, 1852.0 / 3600.0, 0.3048 / 60.0
R0 = 6356766.0      # Source: U.S. Standard Atmosphere 1976, effective Earth radius for geopotential

BASE = """
title: Test jet for margins
aircraft:
  aerodynamics:
    cd0: 0.02
    aspect_ratio: 6
    oswald_efficiency: 0.8
    cl_max: {clean: 1.3, landing: 2.0}
  propulsion: {type: turbofan-low-bypass, engines: 1, throttle_ratio: 1.0, afterburner: true}
  speed_limit: {mach: 0.9}
  weights:
    crew: 100 kg
    payload: 200 kg
    empty: {model: fraction, value: 0.6}
    fuel: {fraction: 0.2}
requirements:
  - {id: stall, kind: stall-speed, speed: 110 kn, config: landing}
  - {id: climb, kind: climb, climb_rate: 6000 ft/min, mach: 0.5, altitude: 0 ft}
  - {id: ceiling, kind: ceiling, altitude: 40000 ft}
"""
CD0, AR, E = 0.02, 6.0, 0.8
K1 = 1.0 / (math.pi * E * AR)        # Source: Raymer 2018 Eq. 12.48 (induced drag factor)


def data(**changes):
    d = yaml.safe_load(BASE)
    for path, value in changes.items():
        node = d
        keys = path.split(".")
        for k in keys[:-1]:
            node = node[int(k)] if k.isdigit() else node[k]
        last = keys[-1]
        if value is None:
            node.pop(last)
        else:
            node[int(last) if last.isdigit() else last] = value
    return d


def atmosphere(H):
    """(T, p, rho, a) of the 1976 standard atmosphere at geopotential altitude H [m], from ambiance
    (which takes geometric height)."""
    atm = Atmosphere(R0 * H / (R0 - H))
    return (float(atm.temperature[0]), float(atm.pressure[0]), float(atm.density[0]),
            float(atm.speed_of_sound[0]))


T_SL, P_SL, RHO_SL, A_SL = atmosphere(0.0)


def tw_required(W_S, H, V, Ps, beta=1.0, alpha=None, air=None):
    """T_SL/W_TO for steady level flight with specific excess power Ps at n = 1 (V may be an array).
    Source: Mattingly 2002, Eq. 2.11 (master equation), k2 = 0."""
    T, p, rho, a = air or atmosphere(H)
    q = 0.5 * rho * V ** 2
    if alpha is None:
        M = V / a
        theta0 = T / T_SL * (1 + 0.2 * M ** 2)
        delta0 = p / P_SL * (1 + 0.2 * M ** 2) ** 3.5
        # Source: Mattingly 2002, Eq. 2.54a (low-bypass mixed-flow turbofan, maximum), TR = 1
        alpha = delta0 * np.where(theta0 <= 1.0, 1.0, 1.0 - 3.5 * (theta0 - 1.0) / theta0)
    return beta / alpha * (q * CD0 / (beta * W_S) + K1 * beta * W_S / q + Ps / V)


def speed_window(W_S, H, k=1.2, CLmax=1.3, mach_limit=0.9, air=None):
    _, _, rho, a = air or atmosphere(H)
    return k * math.sqrt(2 * W_S / (rho * CLmax)), mach_limit * a


def ceiling_tw(W_S, H, Ps=100 * FPM, air=None):
    """Least T/W of a ceiling over its free speed (1.2 x stall up to the speed limit)."""
    air = air or atmosphere(H)
    lo, hi = speed_window(W_S, H, air=air)
    V = np.linspace(lo, hi, 2001)
    tw = tw_required(W_S, H, V, Ps, air=air)
    i = int(np.argmin(tw))
    a, b = V[max(i - 1, 0)], V[min(i + 1, V.size - 1)]
    r = minimize_scalar(lambda v: float(tw_required(W_S, H, v, Ps, air=air)), bounds=(a, b), method="bounded",
                        options={"xatol": 1e-9})
    return min(float(r.fun), float(tw[i]))


def climb_tw(W_S):
    """The climb requirement: 6,000 ft/min at M 0.5, sea level."""
    return tw_required(W_S, 0.0, 0.5 * A_SL, 6000 * FPM)


@pytest.fixture(scope="module")
def jet():
    return solve(validate(data(), "<margins>"))


def test_ceiling_altitude_is_the_root_of_the_master_equation(jet):
    d, c = jet.design, jet.requirement("ceiling").capability
    # the altitude where the least T/W the ceiling needs equals the design's
    H = brentq(lambda h: ceiling_tw(d.wing_loading, h) - d.thrust_to_weight, 10000.0, 14500.0, xtol=1e-6)
    assert c.unit == "ft" and c.required == 40000.0
    assert c.value == pytest.approx(H / FT, rel=2e-5)
    assert c.margin == pytest.approx(H / FT - 40000.0, rel=1e-3)
    assert c.percent == pytest.approx(100 * (H / FT - 40000.0) / 40000.0, rel=1e-3)
    assert c.basis == "T/W"


def test_stall_speed_limit_counts_down_from_the_limit(solved):
    # the trainer's approach-stall has room: margin = limit - stall speed, positive
    spec, res = solved["trainer-jet.yaml"]
    d, r = res.design, res.requirement("approach-stall")
    rho = atmosphere(0.0)[2]
    # Source: lift equation, beta W = q S CLmax: V_s = sqrt(2 beta (W/S) / (rho CLmax)); beta 0.8, CLmax 2.0
    Vs = math.sqrt(2 * 0.8 * d.wing_loading / (rho * 2.0))
    c = r.capability
    assert not r.active
    assert c.unit == "kn" and c.airspeed == "TAS" and c.harder == -1
    assert c.value == pytest.approx(Vs / KN, rel=1e-5)
    assert c.margin == pytest.approx(100.0 - Vs / KN, rel=1e-4) and c.margin > 0
    assert c.percent == pytest.approx(100.0 - Vs / KN, rel=1e-4)       # of a 100 kn limit
    # the W/S margin of the same requirement: (V_limit / V_stall)^2 - 1
    assert r.margin == pytest.approx((100.0 * KN / Vs) ** 2 - 1.0, rel=1e-5)
    assert c.basis == "W/S"


def test_limits_and_targets_have_the_margin_in_the_met_direction(solved):
    # common practice, no source: a requirement met with room has a positive margin, whether a
    # larger value is harder (ceiling, turn) or a smaller one (stall limit, ground roll allowed)
    spec, res = solved["trainer-jet.yaml"]
    for r in res.requirements:
        c = r.capability
        assert c is not None and c.value is not None, r.id
        if r.active:
            assert c.value == pytest.approx(c.required, rel=1e-5), r.id
        else:
            assert c.margin > 0 and r.margin > 0, r.id
            assert math.copysign(1, c.value - c.required) == c.harder, r.id
    stop = res.requirement("stop").capability
    assert stop.harder == -1 and stop.margin == pytest.approx(stop.required - stop.value)


def test_terminal_and_json_lead_with_the_quantity(solved, tmp_path):
    spec, res = solved["trainer-jet.yaml"]
    out = run("solve", spec.path)
    line = next(s for s in out.stdout.splitlines() if s.strip().startswith("ceiling "))
    c = res.requirement("ceiling").capability
    lead = f"{c.margin:+,.0f} ft ({c.percent:+.1f} % of 42,000 ft)"
    assert line.split(None, 1)[1].startswith(lead)
    assert f"T/W margin +{res.requirement('ceiling').margin * 100:,.1f} %" in line
    js = json.loads(run("solve", spec.path, "--json").stdout)
    q = {r["id"]: r for r in js["requirements"]}
    assert q["ceiling"]["capability"]["unit"] == "ft"
    assert q["ceiling"]["capability"]["value"] == pytest.approx(c.value)
    assert q["ceiling"]["margin"] == pytest.approx(res.requirement("ceiling").margin)
    assert q["turn-4g"]["capability"]["margin"] == 0.0


def test_a_given_lapse_holds_at_its_own_condition_only():
    d = data()
    d["requirements"][2] = {"id": "ceiling", "kind": "ceiling", "altitude": "45000 ft", "thrust_lapse": 0.22}
    res = solve(validate(d, "<lapse>"))
    r, des = res.requirement("ceiling"), res.design
    c = r.capability
    assert c.field == "climb_rate" and c.unit == "ft/min" and c.lapse_given == 0.22
    assert "thrust lapse 0.22 given" in r.detail and "45000 ft" in r.detail
    # climb rate available at 45,000 ft with alpha = 0.22: the largest Ps over the free speed
    # Source: Mattingly 2002, Eq. 2.11 solved for Ps: Ps = V [alpha T/W - q CD0/(W/S) - k1 (W/S)/q]
    H = 45000 * FT
    _, _, rho, a = atmosphere(H)
    lo, hi = speed_window(des.wing_loading, H)

    def Ps(V):
        q = 0.5 * rho * V ** 2
        return V * (0.22 * des.thrust_to_weight - q * CD0 / des.wing_loading - K1 * des.wing_loading / q)

    best = max(Ps(v) for v in np.linspace(lo, hi, 20001))
    assert c.value == pytest.approx(best / FPM, rel=1e-4)
    assert c.required == pytest.approx(100.0)
    # the altitude is not carried to where a constant 0.22 would put it
    assert "ceiling" not in r.detail.split("(")[0] or "climb rate" in r.detail


def _bad(tmp_path, d, name):
    path = tmp_path / f"{name}.yaml"
    path.write_text(yaml.safe_dump(d, sort_keys=False))
    return run("solve", path)


def test_mach_above_the_speed_limit_is_a_located_error(tmp_path):
    d = data()
    d["requirements"].append({"id": "dash", "kind": "max-mach", "mach": 0.95, "altitude": "25000 ft"})
    out = _bad(tmp_path, d, "dash")
    assert out.returncode == 2
    assert "requirements[3] (id dash).mach" in out.stderr
    assert "M 0.950" in out.stderr and "M 0.900" in out.stderr and "mach 0.9 (MMO)" in out.stderr


def test_cas_above_vmo_names_the_governing_limit(tmp_path):
    d = data(**{"aircraft.speed_limit": {"mach": 0.9, "cas": "350 kn"}})
    d["requirements"].append({"id": "fast", "kind": "cruise", "cas": "370 kn", "altitude": "10000 ft"})
    out = _bad(tmp_path, d, "vmo")
    assert out.returncode == 2
    assert "requirements[3] (id fast).cas" in out.stderr
    assert "cas 370 kn" in out.stderr and "cas 350 kn (VMO)" in out.stderr


def test_mach_above_the_polar_table_is_a_located_error(tmp_path):
    d = data(**{"aircraft.aerodynamics.cd0": {"mach": [0.0, 0.8], "cd0": [0.02, 0.022]},
                "aircraft.speed_limit": {"mach": 0.95}})
    d["requirements"].append({"id": "dash", "kind": "max-mach", "mach": 0.85, "altitude": "25000 ft"})
    out = _bad(tmp_path, d, "table")
    assert out.returncode == 2
    assert "requirements[3] (id dash).mach" in out.stderr and "0.85" in out.stderr and "0.8" in out.stderr


def test_mission_segment_above_the_speed_limit_is_a_located_error(tmp_path):
    d = data(**{"aircraft.weights.fuel": None})
    d["aircraft"]["weights"]["fuel"] = {}
    d["mission"] = {"tsfc": "0.8 1/h", "segments": [
        {"kind": "cruise", "name": "out", "range": "500 km", "mach": 0.93, "altitude": "30000 ft"}]}
    out = _bad(tmp_path, d, "segment")
    assert out.returncode == 2
    assert "mission.segments[0].mach" in out.stderr and "M 0.930" in out.stderr and "M 0.900" in out.stderr


def test_a_free_speed_on_its_stall_bound_is_named(solved):
    # the turboprop's ceilings are flown slowest: their best speed is 1.2 x stall
    # (common practice, no source: a power-limited aircraft climbs best near its minimum power speed)
    spec, res = solved["regional-turboprop.yaml"]
    r = res.requirement("ceiling")
    assert "on its stall bound, 1.2 x the stall speed" in r.detail


# --------------------------------------------------------------- mass independent of the point
def test_the_corner_with_a_wing_loading_limit(jet):
    # stall limit: W/S = q_stall CLmax (lift equation); T/W there from the climb (master equation)
    d = jet.design
    WS_lim = 0.5 * RHO_SL * (110 * KN) ** 2 * 2.0
    assert jet.mass_independent
    # tolerance: the two atmosphere implementations agree to about 1e-6 (ambiance and ours)
    assert d.wing_loading == pytest.approx(WS_lim, rel=1e-5)
    need = max(climb_tw(WS_lim), ceiling_tw(WS_lim, 40000 * FT))
    assert d.thrust_to_weight == pytest.approx(need, rel=1e-5)
    assert set(jet.drivers) == {"stall", "climb"}
    for rid in ("stall", "climb"):
        r = jet.requirement(rid)
        assert r.active and r.margin == 0.0 and r.sensitivity == 0.0
    # the mass: crew + payload over 1 - empty - fuel fractions (weight closure)
    assert d.takeoff_mass == pytest.approx(300.0 / (1 - 0.6 - 0.2), rel=1e-9)
    # the diagram (a plain Figure, no pyplot) says so in its footer and names no constant-mass lines
    from sizing.charts.diagram import constraint_diagram

    fig = constraint_diagram(jet.spec, result=jet).figure
    texts = " ".join(t.get_text() for t in fig.texts)
    assert "takeoff mass the same at every point" in texts and "constant takeoff mass" not in texts
    assert "does not depend on W/S" in texts


def test_the_corner_agrees_with_an_independent_grid_search(jet):
    d = jet.design
    W = np.geomspace(100.0, 15000.0, 4001)
    WS_lim = 0.5 * RHO_SL * (110 * KN) ** 2 * 2.0
    W = W[W <= WS_lim]
    air = atmosphere(40000 * FT)
    env = np.array([max(climb_tw(w), ceiling_tw(w, 40000 * FT, air=air)) for w in W[::8]])
    Y_min = env.min()
    W_best = W[::8][np.flatnonzero(env <= Y_min * (1 + 1e-9))[-1]]
    # grid resolution: 8 steps of a 4001-point geometric grid over 150x, about 1 %
    assert d.wing_loading == pytest.approx(W_best, rel=0.011)
    assert d.thrust_to_weight == pytest.approx(Y_min, rel=1e-3)
    assert d.thrust_to_weight <= Y_min * (1 + 1e-9)        # no grid point needs less thrust


def test_the_corner_at_the_least_thrust_of_one_curve():
    # no stall limit in reach: the climb's T/W is least at W/S = q sqrt(CD0/k1)
    # Source: Anderson 1999, §5.4 (minimum thrust required at CL = sqrt(CD0/k1)); Ps/V adds a constant
    d = data(**{"requirements.0.speed": "200 kn"})
    d["requirements"].pop(2)
    res = solve(validate(d, "<single>"))
    q = 0.5 * RHO_SL * (0.5 * A_SL) ** 2
    WS = q * math.sqrt(CD0 / K1)
    assert res.mass_independent
    assert res.design.wing_loading == pytest.approx(WS, rel=1e-5)
    assert res.design.thrust_to_weight == pytest.approx(climb_tw(WS), rel=1e-5)
    assert res.drivers == ("climb",) and res.requirement("climb").margin == 0.0


def test_the_notice_is_in_every_output(jet, tmp_path):
    notice = "takeoff mass does not depend on W/S or T/W here: the point shown is the smallest engine, " \
             "then the smallest wing"
    path = tmp_path / "jet.yaml"
    path.write_text(BASE)
    assert notice in run("solve", path).stdout
    js = json.loads(run("solve", path, "--json").stdout)
    assert js["mass_independent"] is True and js["mass_notice"] == notice
    assert set(js["drivers"]) == {"stall", "climb"}
    from sizing.reports.review import document, to_markdown
    assert notice in to_markdown(document(jet.spec, jet, diagram=False, envelope=False, flight=False))


def test_a_mass_that_moves_with_the_point_has_no_notice(solved):
    spec, res = solved["trainer-jet.yaml"]
    assert not res.mass_independent and res.mass_notice == ""


def test_the_what_if_page_shows_the_notice_and_the_quantity_first(jet, solved):
    # common practice, no source: the page's margin list reads as the terminal's
    from types import SimpleNamespace

    from sizing.explore.page import Page

    view = SimpleNamespace(panel=SimpleNamespace(text=""))
    Page._show_result(view, jet)
    assert "id='mass-notice'" in view.panel.text and jet.mass_notice in view.panel.text
    spec, res = solved["trainer-jet.yaml"]
    Page._show_result(view, res)
    c = res.requirement("ceiling").capability
    assert f"{c.margin:+,.0f} ft ({c.percent:+.1f} % of 42,000 ft)" in view.panel.text
    assert "T/W margin +" in view.panel.text and "mass-notice" not in view.panel.text

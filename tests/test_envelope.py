"""Envelope check of the sized design (sizing.envelope).

Checked against: the solve itself (every active requirement on its envelope
boundary at its own conditions, every inactive one strictly inside), the
constraint functions (Ps inverts flight_thrust to 1e-9), hand-worked values of
the master equation (Mattingly Eq. 2.11, docs/references.md §5.1 and §5.4), and an
independent root-find (scipy brentq) on a Ps written here from the published
formulas with the general-purpose `ambiance` ICAO atmosphere.
"""
import copy
import math
from pathlib import Path
from types import SimpleNamespace

import ambiance
import numpy as np
import pytest
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq, minimize_scalar

from sizing import constraints as C
from sizing.charts.envelope import compute_envelope
from sizing.charts.envelope_plot import plot_envelope, render
from sizing.charts.performance import Conditions, Flight, specific_excess_power, sustained_load_factor
from sizing.common.caution import CAUTION
from sizing.common.errors import InputError
from sizing.inputs.spec import load, validate
from sizing.physics.aero import DragPolar
from sizing.physics.atmosphere import isa
from sizing.problem import solve
from sizing.problem import tree as M
from sizing.reports.review import envelope_section

from .cliutil import run as run_cli

ROOT = Path(__file__).resolve().parents[1]
EXAMPLES = sorted((ROOT / "requirements").glob("*.yaml"))
FT = 0.3048
LBF_FT2 = 47.880259          # Pa per lbf/ft^2, docs/references.md §16 (exact definition)
R0 = 6356766.0               # Earth radius of the 1976 standard for H <-> Z, docs/references.md §2.2
_CACHE = {}


def solved(path):
    """(spec, result, envelope at weight fraction 1) per example, computed once."""
    key = str(path)
    if key not in _CACHE:
        spec = load(path)
        res = solve(spec)
        _CACHE[key] = (spec, res, compute_envelope(spec, res) if res.feasible else None)
    return _CACHE[key]


def variant(which):
    """The trainer made to be driven by a high-altitude dash ("dash") or by an excess-power
    point ("ps"): our own scenarios, so that max-mach and excess-power drivers are checked
    too (the shipped examples have none)."""
    if which not in _CACHE:
        data = copy.deepcopy(load(ROOT / "requirements/trainer-jet.yaml").data)
        if which == "dash":
            for r in data["requirements"]:
                if r["id"] == "dash":
                    r["altitude"], r["mach"] = "50000 ft", 0.85
        else:
            data["requirements"].append({"id": "ps-check", "kind": "excess-power", "excess_power": "60 m/s",
                                         "load_factor": 1.0, "mach": 0.7, "altitude": "5000 ft"})
        spec = validate(data, f"trainer-{which}.yaml")
        res = solve(spec)
        _CACHE[which] = (spec, res, compute_envelope(spec, res))
    return _CACHE[which]


def design(res):
    d = res.design
    return d.wing_loading, (d.power_to_weight if res.propeller else d.thrust_to_weight)


# --------------------------------------------------------------------------
# Same physics as the constraints
# --------------------------------------------------------------------------

@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_ps_inverts_flight_thrust(path):
    # common practice, no source: Ps from the envelope put back into the constraint function
    # must return exactly the design's T/W (P/W), anywhere, at any conditions
    spec, res, env = solved(path)
    if not res.feasible:
        pytest.skip("infeasible example")
    ac = M.aircraft(M.spec_tree(spec))
    W_S, Y = design(res)
    rng = np.random.default_rng(7)
    conds = [Conditions(), Conditions(beta=0.8, temperature_offset=12.0),
             Conditions(beta=0.9, thrust_lapse=0.4), Conditions(throttle=0.85, config="takeoff")]
    for cond in conds:
        for h, Mn, n in zip(rng.uniform(0, 12000, 6), rng.uniform(0.12, env.mach_top, 6), rng.uniform(1, 4, 6)):
            Ps = float(specific_excess_power(W_S, Y, ac, h, Mn, n, cond))
            air = isa(h, cond.temperature_offset)
            req = SimpleNamespace(beta=cond.beta, altitude=h, temperature_offset=cond.temperature_offset,
                                  thrust_lapse=cond.thrust_lapse)
            back = C.flight_thrust(W_S, Mn * air.speed_of_sound, req, ac, air, n=n, Ps=Ps, config=cond.config,
                                   throttle=cond.throttle)
            assert float(back) == pytest.approx(Y, rel=1e-9)
            # the sustained load factor is the n at which Ps vanishes
            n0 = float(sustained_load_factor(W_S, Y, ac, h, Mn, cond, Ps=Ps))
            assert n0 == pytest.approx(n, rel=1e-9)


# --------------------------------------------------------------------------
# Consistency with the solve: drivers on their boundary, the rest inside
# --------------------------------------------------------------------------

def _check_points(spec, res, env):
    ac = M.aircraft(M.spec_tree(spec))
    W_S, Y = design(res)
    tree = M.spec_tree(spec)["requirements"]
    checked = []
    for pt in env.points:
        rr = res.requirement(pt.id)
        r = tree[pt.id]
        assert pt.met, pt.id                     # a feasible solve meets everything
        assert pt.active == rr.active
        if pt.value is None:                     # ground runs, engine-out gradient: not envelope quantities
            continue
        rel = pt.better * (pt.value - pt.required) / abs(pt.required)
        if rr.active:
            # tolerance: the solver's active-set tolerance (1e-5 in T/W) seen through each quantity
            assert abs(rel) < 1e-4, (pt.id, pt.value, pt.required)
            assert pt.on_boundary
        else:
            assert rel > 1e-4, (pt.id, pt.value, pt.required)
            assert not pt.on_boundary
        # the boundary itself, evaluated at the requirement's own conditions
        cond = pt.boundary.cond if pt.boundary is not None else None
        fl = Flight(W_S, Y, ac, cond, env.mach_top) if cond is not None else None
        h = r.get("altitude", 0.0)
        if pt.kind == "sustained-turn":
            Ps = float(fl.ps(h, pt.mach, r["load_factor"]))
            assert (abs(Ps) < 1e-3) if rr.active else (Ps > 1e-3)
        elif pt.kind == "max-mach":
            Ps = float(fl.ps(h, pt.mach, 1.0))           # on the 1 g Ps = 0 line at its altitude
            assert (abs(Ps) < 1e-3) if rr.active else (Ps > 1e-3)
        elif pt.kind == "excess-power":
            Ps = float(fl.ps(h, pt.mach, r["load_factor"]))
            assert Ps - r["excess_power"] == pytest.approx(0.0, abs=1e-3) if rr.active else Ps > r["excess_power"]
        elif pt.kind == "ceiling":
            c = fl.ceiling(r["climb_rate"], floor=min(0.0, h))
            assert (abs(c[0] - h) < 1.0) if rr.active else (c[0] > h + 1.0)
        checked.append((pt.kind, rr.active))
    return checked


@pytest.mark.parametrize("path", EXAMPLES, ids=[p.stem for p in EXAMPLES])
def test_requirements_sit_on_or_inside_their_boundaries(path):
    spec, res, env = solved(path)
    if not res.feasible:
        pytest.skip("infeasible example")
    _check_points(spec, res, env)


@pytest.mark.parametrize("which, kind", [("dash", "max-mach"), ("ps", "excess-power")])
def test_active_max_mach_and_excess_power_on_their_boundaries(which, kind):
    spec, res, env = variant(which)
    checked = _check_points(spec, res, env)
    assert (kind, True) in checked, res.drivers     # precondition of the scenario: a driver here


def test_examples_cover_ceiling_turn_and_stall_drivers():
    # precondition: the suite exercises active ceiling, sustained-turn and stall-speed requirements
    kinds = set()
    for p in EXAMPLES:
        spec, res, env = solved(p)
        if res.feasible:
            kinds |= {r.kind for r in res.requirements if r.active}
    assert {"ceiling", "sustained-turn", "stall-speed"} <= kinds


# --------------------------------------------------------------------------
# Hand-worked values of the master equation
# --------------------------------------------------------------------------

def _ac(cd0, k1, engine="turbojet", TR=1.0, eta=0.8):
    return SimpleNamespace(polar=DragPolar(cd0=cd0, k1=k1), engine_type=engine, throttle_ratio=TR,
                           afterburner=False, propeller_efficiency=eta, speed_limit_mach=None,
                           speed_limit_speed=None)


# geometric 30 000 ft = geopotential 9 130.866 m (H = r0 Z/(r0 + Z), docs/references.md §2.4)
H_30KFT = R0 * 9144.0 / (R0 + 9144.0)


def test_ps_turn_case_of_the_master_equation():
    # Source: docs/references.md check 5.4-b and check 5.4-c (Mattingly Eq. 2.11, self-defined inputs): n = 5 turn at M0.9,
    # geometric 30 kft, W/S 64 lbf/ft^2, beta 0.78, K1 0.18, CD0 0.016, alpha = delta0 = 0.50324
    # -> T_SL/W_TO = 1.15261 with Ps = 0. Hence at T_SL/W_TO = Y the excess power is
    # Ps = V alpha (Y - 1.15261)/beta, with V = 0.9 a, a = sqrt(1.4 x 287.05307 x 0.79403 x 288.15)
    # = 303.2305 m/s (theta 0.79403, docs/references.md §2.7, geometric feet): V = 272.9075 m/s.
    # Hand calculation: Y = 1.25 -> Ps = 272.9075 x 0.50324 x 0.09739 / 0.78 = 17.1479 m/s.
    ac = _ac(0.016, 0.18)
    cond = Conditions(beta=0.78, thrust_lapse=0.50324)
    W_S = 64.0 * LBF_FT2
    Ps0 = float(specific_excess_power(W_S, 1.15261, ac, H_30KFT, 0.9, 5.0, cond))
    Ps = float(specific_excess_power(W_S, 1.25, ac, H_30KFT, 0.9, 5.0, cond))
    # tolerance: 1.15261 is printed to 6 digits (+-5e-6 in T/W -> +-0.9 mm/s in Ps)
    assert Ps0 == pytest.approx(0.0, abs=2e-3)
    assert Ps == pytest.approx(17.1479, abs=2e-3)
    n = float(sustained_load_factor(W_S, 1.15261, ac, H_30KFT, 0.9, cond))
    assert n == pytest.approx(5.0, abs=5e-4)


def test_ps_with_the_model_thrust_lapse():
    # Source: docs/references.md check 4.7-i (Mattingly Eq. 2.54b): low-bypass turbofan,
    # military, M0.9, geometric 30 kft, TR 1.07 -> alpha = 0.30194 of the maximum sea-level static
    # thrust; military at sea-level static is 0.6 of it (Eq. 2.54b), so of the dry thrust the model
    # sizes with alpha = 0.30194/0.6 = 0.503233. Polar and weights of check 5.4-b:
    # q = 357.022 lbf/ft^2 = 17 094.31 Pa, W/S = 3 064.337 Pa, beta 0.78, n = 1, T_SL/W_TO (dry) = 1.
    # Hand calculation: CL = 0.78 x 3064.337/17094.31 = 0.139823; CD = 0.016 + 0.18 CL^2 = 0.0195191;
    # D/W_TO = q CD/(W/S) = 0.108887; Ps = 272.9075 (0.503233 - 0.108887)/0.78 = 137.974 m/s.
    ac = _ac(0.016, 0.18, engine="turbofan-low-bypass", TR=1.07)
    Ps = float(specific_excess_power(64.0 * LBF_FT2, 1.0, ac, H_30KFT, 0.9, 1.0, Conditions(beta=0.78)))
    # tolerance: alpha printed to 5 digits (+-5e-6/0.6 -> +-2.9 mm/s)
    assert Ps == pytest.approx(137.974, abs=3e-3)


def test_ps_of_a_propeller_aircraft():
    # Source: docs/references.md §15.1 and check 15.4-a (T = eta_p P / V; Gudmundsson §3.2): T/W = 0.1 at 150 kt TAS with
    # eta_p 0.8 <-> P/W = 9.6458 W/N. Polar of docs/references.md §3.3 (check 3.1-a): CD0 0.025, A 8, e 0.8 (K 0.0497359),
    # W/S 1 500 N/m^2, sea level, piston lapse 1 at sea level (Gagg-Ferrar, sigma = 1).
    # Hand calculation: V = 77.1667 m/s (M 0.226765), q = 3 647.25 Pa, CL = 0.411269,
    # CD = 0.0334124, D/W = 0.0812423, Ps = 77.1667 (0.1 - 0.0812423) = 1.44747 m/s.
    ac = _ac(0.025, 0.0497359, engine="piston", eta=0.8)
    Ps = float(specific_excess_power(1500.0, 9.6458, ac, 0.0, 77.1667 / 340.294, 1.0, Conditions()))
    # tolerance: P/W printed to 5 digits (+-5e-5 W/N -> +-0.4 mm/s)
    assert Ps == pytest.approx(1.44747, abs=1e-3)


# --------------------------------------------------------------------------
# Independent root-find: ceiling and top speed of the trainer
# --------------------------------------------------------------------------

def _independent_ps(W_S, T_W, beta=1.0):
    """Ps(h geopotential [m], M) of the trainer from the published formulas, written here.

    Atmosphere: ambiance (ICAO 1993, geometric altitude input; Z = r0 H/(r0 - H)).
    Lapse: Mattingly Eq. 2.52 and 2.54b (low-bypass, military), TR 1.05, divided by its
    sea-level static value 0.6: the design's T/W is the dry rating's.
    Polar: the file's CD0 table through scipy's PCHIP (the monotone cubic the polar
    documents), k1 = 1/(pi A e), A 5.2, e 0.8.
    """
    cd0 = PchipInterpolator([0.0, 0.8, 0.9, 0.95], [0.019, 0.020, 0.024, 0.030])

    def ps(h, Mn):
        atm = ambiance.Atmosphere(R0 * h / (R0 - h))
        T, p, rho, a = (float(np.ravel(x)[0]) for x in (atm.temperature, atm.pressure, atm.density,
                                                        atm.speed_of_sound))
        ram = 1.0 + 0.2 * Mn ** 2
        theta0, delta0 = T / 288.15 * ram, p / 101325.0 * ram ** 3.5
        alpha = 0.6 * delta0 * (1.0 if theta0 <= 1.05 else 1.0 - 3.8 * (theta0 - 1.05) / theta0) / 0.6
        V = Mn * a
        q = 0.5 * rho * V ** 2
        CL = beta * W_S / q
        CD = float(cd0(min(Mn, 0.95))) + CL ** 2 / (math.pi * 5.2 * 0.8)
        return V * (alpha * T_W - q * CD / W_S) / beta

    def stall_mach(h):
        atm = ambiance.Atmosphere(R0 * h / (R0 - h))
        return math.sqrt(2.0 * beta * W_S / (float(atm.density[0]) * 1.2)) / float(atm.speed_of_sound[0])

    return ps, stall_mach


def test_trainer_ceilings_and_top_speed_against_brentq():
    spec, res, env = solved(ROOT / "requirements/trainer-jet.yaml")
    ps, stall_mach = _independent_ps(*design(res))

    def best(h):        # max over Mach between stall and the speed limit M 0.92 (the file's)
        r = minimize_scalar(lambda Mn: -ps(h, Mn), bounds=(stall_mach(h), 0.92), method="bounded",
                            options={"xatol": 1e-9})
        return -r.fun

    h_abs = brentq(best, 8000.0, 20000.0, xtol=1e-4)
    h_svc = brentq(lambda h: best(h) - 100.0 * FT / 60.0, 8000.0, 20000.0, xtol=1e-4)
    # tolerance: the two atmospheres agree to ~4e-6 (docs/references.md §2.7, check 2.7-b); 1 m of altitude
    assert env.absolute_ceiling[0] == pytest.approx(h_abs, abs=1.0)
    assert env.service_ceiling[0] == pytest.approx(h_svc, abs=1.0)
    assert env.service_ceiling[0] < env.absolute_ceiling[0]
    # top speed at sea level, thrust-limited below the speed limit in this design
    m_top = brentq(lambda Mn: ps(0.0, Mn), 0.6, 0.95, xtol=1e-10)
    row = next(r for r in env.rows if r["quantity"] == "max Mach at sea level")
    assert row["limited_by"] == "thrust"
    assert row["value"] == pytest.approx(m_top, abs=1e-5)
    # and the 1 g boundary passes through it
    k = np.argmin(np.abs(env.level.altitude))
    assert env.level.hi[k] == pytest.approx(m_top, abs=1e-5)


def test_lighter_aircraft_flies_higher():
    # common practice, no source: the ceiling rises as weight falls (Ps grows as beta shrinks)
    spec, res, env = solved(ROOT / "requirements/trainer-jet.yaml")
    light = compute_envelope(spec, res, weight_fraction=0.7)
    assert light.absolute_ceiling[0] > env.absolute_ceiling[0] + 300.0
    with pytest.raises(InputError):
        compute_envelope(spec, res, weight_fraction=0.0)


# --------------------------------------------------------------------------
# Table, plot, report section, CLI
# --------------------------------------------------------------------------

def test_table_has_the_required_rows():
    # common practice, no source: the rows the envelope check promises
    spec, res, env = solved(ROOT / "requirements/trainer-jet.yaml")
    df = env.to_frame()
    names = list(df["quantity"])
    assert "absolute ceiling (Ps = 0)" in names and "service ceiling (Ps = 100 ft/min)" in names
    assert "max Mach at sea level" in names
    for h in {r.get("altitude", 0.0) for r in M.spec_tree(spec)["requirements"].values()} - {0.0}:
        assert f"max Mach at {h / FT:,.0f} ft" in names
    assert "turn-4g: max sustained load factor" in names
    vspec, vres, venv = variant("ps")
    assert "ps-check: Ps at 1 g" in list(venv.to_frame()["quantity"])
    assert "absolute ceiling" in env.table_text()


def test_plot_returns_handles_rejects_unknown_keywords_and_leaves_no_figure_open():
    import matplotlib.pyplot as plt
    from matplotlib.figure import Figure

    spec, res, env = solved(ROOT / "requirements/touring-piston.yaml")
    before = plt.get_fignums()
    h = plot_envelope(env)
    assert set(h["points"]) == {r.id for r in res.requirements}
    assert h["level"] is not None and CAUTION in h["caution"].get_text().replace("\n", " ")
    with pytest.raises(TypeError, match="valid: contours"):
        plot_envelope(env, colour="red")
    ax = Figure().add_subplot()
    h2 = env.plot(ax=ax, details=False, contours=False)
    assert h2["ax"] is ax and "contours" not in h2
    png = render(env, "png")
    assert png[:8] == b"\x89PNG\r\n\x1a\n"
    assert plt.get_fignums() == before


def test_report_section():
    spec, res, env = solved(ROOT / "requirements/regional-turboprop.yaml")
    md, png = envelope_section(spec, res)
    assert md.startswith("## Envelope check") and CAUTION in md and "ceiling-oei" in md
    assert png[:4] == b"\x89PNG"


def test_cli_envelope(tmp_path):
    out, csv = tmp_path / "env.svg", tmp_path / "env.csv"
    p = run_cli("envelope", "requirements/touring-piston.yaml", "-o", out, "--data", csv,
                "--weight-fraction", "0.9", cwd=ROOT)
    assert p.returncode == 0, p.stderr
    assert "service ceiling" in p.stdout and CAUTION in p.stdout and f"wrote {out}" in p.stdout
    assert "weight fraction 0.900" in p.stdout
    assert out.read_text().lstrip().startswith("<?xml")
    import pandas as pd

    df = pd.read_csv(csv, comment="#")
    assert "stall-61kt" in set(df["requirement"].dropna())


@pytest.mark.parametrize("args, words", [(["-o", "env.txt"], "not a figure format"),
                                         (["--weight-fraction", "0"], "weight fraction")])
def test_cli_envelope_bad_input(tmp_path, args, words):
    p = run_cli("envelope", ROOT / "requirements/touring-piston.yaml", *args, cwd=tmp_path)
    assert p.returncode == 2
    assert words in p.stderr and "Traceback" not in p.stderr

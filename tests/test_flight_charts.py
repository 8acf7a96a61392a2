"""Turn chart, coffin corner and zoom, hot-and-high (WAT) limits and payload-range of the sized examples.

Checked against: the level-turn relations omega = g sqrt(n^2 - 1)/V and R = V^2/(g sqrt(n^2 - 1))
(Anderson, Aircraft Performance and Design, §6.17), independent root finds and maximisations with
scipy on the published formulas (Mattingly Eq. 2.11 for Ps; the lift equation for the stall;
Gudmundsson Eq. 3-4 through the project's takeoff constraint; the Breguet range and endurance
equations, Raymer Ch. 3) and the `ambiance` ICAO atmosphere, the solve itself (a requirement on its
boundary at the design point), and energy height h + V^2/(2 g) by hand.
"""
import math
from types import SimpleNamespace

import ambiance
import numpy as np
import pytest
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq, minimize_scalar

from sizing import constraints as C
from sizing.charts import hot_high as WAT
from sizing.charts.coffin import coffin_corner, energy_height, low_speed_mach
from sizing.charts.envelope import compute_envelope
from sizing.charts.hot_high_plot import plot_wat
from sizing.charts.payload_range import compute_payload_range
from sizing.charts.payload_range_plot import plot_payload_range
from sizing.charts.performance import Conditions, Flight, domain_mach, sustained_load_factor
from sizing.charts.turn import compute_turn, turn_radius, turn_rate
from sizing.charts.turn_plot import plot_turn
from sizing.common.caution import CAUTION
from sizing.common.errors import InputError
from sizing.physics.aero import MachTable
from sizing.problem import tree as M

FT, KN, G0 = 0.3048, 1852.0 / 3600.0, 9.80665       # exact definitions (docs/references.md §16)
R0 = 6356766.0
_CACHE = {}


def cached(key, f):
    if key not in _CACHE:
        _CACHE[key] = f()
    return _CACHE[key]


def atm(h):
    """ambiance (ICAO, geometric input) at geopotential h [m]."""
    return ambiance.Atmosphere(R0 * h / (R0 - h))


def design(res):
    d = res.design
    return d.wing_loading, (d.power_to_weight if res.propeller else d.thrust_to_weight)


# --------------------------------------------------------------------------
# Turn chart
# --------------------------------------------------------------------------

def test_turn_relations():
    # Source: Anderson, Aircraft Performance and Design, §6.17: omega = g sqrt(n^2 - 1)/V, R = V^2/(g sqrt(n^2 - 1));
    # hand calculation: n 2 at 100 m/s -> 0.169856 rad/s, 588.73 m; n 1 -> no turn (docs/references.md check 5.5-a)
    assert float(turn_rate(2.0, 100.0)) == pytest.approx(G0 * math.sqrt(3) / 100, rel=1e-12)
    assert float(turn_radius(2.0, 100.0)) == pytest.approx(588.73, abs=0.005)
    assert float(turn_rate(1.0, 100.0)) == 0.0 and math.isnan(float(turn_rate(0.9, 100.0)))


def test_trainer_turn_chart(solved):
    spec, res = solved["trainer-jet.yaml"]
    chart = cached("turn", lambda: compute_turn(spec, res))
    ac = M.aircraft(M.spec_tree(spec))
    W_S, Y = design(res)
    assert [lv.altitude for lv in chart.levels] == pytest.approx([0.0, 15000 * FT])   # sea level and turn-4g's
    fl = Flight(W_S, Y, ac, Conditions(), domain_mach(ac))
    for lv in chart.levels:
        a, rho = float(atm(lv.altitude).speed_of_sound[0]), float(atm(lv.altitude).density[0])
        # the corner speed: CLmax meets the limit load factor, V* = sqrt(2 n (W/S)/(rho CLmax)) (lift equation)
        V_c = math.sqrt(2 * chart.n_limit * W_S / (rho * 1.2))
        assert lv.corner[1] == pytest.approx(V_c, rel=2e-5)
        assert lv.best_instantaneous[0] == pytest.approx(G0 * math.sqrt(chart.n_limit ** 2 - 1) / V_c, rel=1e-4)
        # sustained rate: n from an independent root find of Ps(n) = 0 (brentq on the Ps of Mattingly Eq. 2.11)
        for j in (20, 80, 140):
            Mn = lv.mach[j]
            n_ps = brentq(lambda n: float(fl.ps(lv.altitude, Mn, n)), 0.2, 30.0)
            n_lift = 0.5 * rho * (Mn * a) ** 2 * 1.2 / W_S
            n = min(n_ps, n_lift, chart.n_limit)
            want = G0 * math.sqrt(n * n - 1) / lv.speed[j] if n >= 1 else math.nan
            got = lv.sustained[j]
            assert (math.isnan(want) and not got > 0) or got == pytest.approx(want, rel=2e-4)
        # the best sustained rate against scipy's bounded minimiser over Mach
        def neg(Mn):
            n = min(float(sustained_load_factor(W_S, Y, ac, lv.altitude, Mn)),
                    0.5 * rho * (Mn * a) ** 2 * 1.2 / W_S, chart.n_limit)
            return -G0 * math.sqrt(n * n - 1) / (Mn * a) if n > 1 else 0.0
        best = minimize_scalar(neg, bounds=(lv.mach[0], lv.mach[-1]), method="bounded", options={"xatol": 1e-7})
        assert lv.best_sustained[0] == pytest.approx(-best.fun, rel=1e-5)
    # the requirement point: turn-4g, 4 g at M 0.6, 15 000 ft
    pt = chart.levels[1].points[0]
    assert pt[0] == "turn-4g" and pt[2] == pytest.approx(G0 * math.sqrt(15) / (0.6 * float(atm(15000 * FT).speed_of_sound[0])),
                                                         rel=1e-4)
    h = plot_turn(chart)
    assert sorted(h["sustained"]) == pytest.approx([0.0, 15000 * FT]) and CAUTION.split(":")[0] in h["caution"].get_text()
    with pytest.raises(TypeError):
        plot_turn(chart, grid=True)
    f = chart.to_frame()
    assert {"mach", "speed_tas_kn", "sustained_turn_rate_deg_s", "instantaneous_turn_radius_m"} <= set(f.columns)
    s = chart.as_dict()["altitudes"][0]
    assert {"corner_speed_m_s", "max_sustained_turn_rate_deg_s", "max_instantaneous_turn_rate_deg_s"} <= set(s)


# --------------------------------------------------------------------------
# Coffin corner and zoom
# --------------------------------------------------------------------------

def test_energy_height():
    # Source: energy height he = h + V^2/(2 g) (Rutowski 1954); hand calculation: 10 km at 250 m/s -> 13 186.61 m
    # (docs/references.md check 5.6-a)
    assert float(energy_height(10000.0, 250.0)) == pytest.approx(10000 + 250 ** 2 / (2 * G0), rel=1e-12)


def _low_edge_mach(spec, W_S, a):
    """1 g low-speed edge [Mach] at ambiance state a: the stall (lift equation), or where the file
    gives cl_buffet, buffet onset: 0.7 p M^2 CL_b(M) = W/S, CL_b by scipy's PCHIP of the file's
    table (independent of the package's interpolant), the lowest root by brentq."""

    ac = M.aircraft(M.spec_tree(spec))
    aero = spec.data["aircraft"]["aerodynamics"]
    if "cl_buffet" not in aero:
        return math.sqrt(2 * W_S / (float(a.density[0]) * ac.polar.CLmax("clean"))) / float(a.speed_of_sound[0])
    tab = aero["cl_buffet"]
    clb = (PchipInterpolator(tab["mach"], tab["cl_buffet"], extrapolate=False) if isinstance(tab, dict)
           else (lambda x: tab))
    top = tab["mach"][-1] if isinstance(tab, dict) else 1.0

    def f(Mx):
        c = float(clb(min(Mx, top)))
        return 0.7 * float(a.pressure[0]) * Mx ** 2 * c - W_S
    grid = np.linspace(0.02, top, 400)
    k = next((i for i, Mx in enumerate(grid) if f(Mx) >= 0), None)
    return 2.0 * top if k is None else brentq(f, grid[k - 1], grid[k])     # none: no buffet-free speed


@pytest.mark.parametrize("name", ["long-range-jet.yaml", "touring-piston.yaml"])
def test_coffin_corner_and_zoom(solved, name):
    spec, res = solved[name]
    env = cached(("env", name), lambda: compute_envelope(spec, res))
    ac = M.aircraft(M.spec_tree(spec))
    W_S, _ = design(res)
    cc = env.coffin
    # where they meet: the 1 g stall (or buffet-onset) Mach (ambiance) equals the Mach limit; brentq over altitude
    def gap(h):
        a = atm(h)
        air = type("A", (), {"speed_of_sound": float(a.speed_of_sound[0]), "pressure": float(a.pressure[0])})
        V_lim = float(C.max_free_speed(ac, air))
        return _low_edge_mach(spec, W_S, a) * float(a.speed_of_sound[0]) - V_lim
    h_meet = brentq(gap, 0.0, 30000.0)
    assert cc.meet[0] == pytest.approx(h_meet, abs=30.0)            # 30 m: ambiance vs 1976 standard, grid root
    # the band narrows with height in both (low edge up, Mach limit level or down): narrowest at the absolute
    # ceiling, its width the Mach limit less the low edge there (ambiance)
    hn, w, wv, lo, hi = cc.narrowest
    assert hn == pytest.approx(env.absolute_ceiling[0], abs=1.0)
    a = atm(hn)
    M_s = _low_edge_mach(spec, W_S, a)
    assert lo == pytest.approx(M_s, rel=1e-4) and w == pytest.approx(hi - M_s, rel=1e-3)
    assert wv == pytest.approx(w * float(a.speed_of_sound[0]), rel=1e-4)
    # zoom: the largest h + V^2/2g along the fast edge of the 1 g region (within the Mach limit), by hand
    lv = env.level
    M_fast = np.minimum(lv.hi, np.asarray(Flight(W_S, 1.0, ac).mach_limit(lv.altitude)) + 0 * lv.altitude)
    a = np.array([float(atm(h).speed_of_sound[0]) for h in lv.altitude])
    he = list(lv.altitude + (M_fast * a) ** 2 / (2 * G0))
    if lv.top is not None:                    # the very top of the 1 g region, where the boundary closes
        he.append(lv.top[0] + (lv.top[1] * float(atm(lv.top[0]).speed_of_sound[0])) ** 2 / (2 * G0))
    assert env.zoom.energy_height == pytest.approx(np.nanmax(he), rel=2e-4)
    assert env.zoom.energy_height > env.absolute_ceiling[0]
    names = [r["quantity"] for r in env.rows]
    assert any(n.startswith("coffin corner") for n in names) and "narrowest speed band" in names
    js = env.as_dict()
    assert js["coffin_corner"]["meet"]["altitude_m"] == cc.meet[0] and js["zoom_ceiling_upper_bound"]
    assert js["absolute_ceiling"] and js["top_speeds"] and js["caution"] == CAUTION


def test_buffet_lift_coefficient_replaces_the_stall(solved):
    # common practice, no source: a buffet CL equal to CLmax gives the stall edge; a Mach table of buffet CL is met
    # exactly at the edge it reports (1 g CL = beta (W/S)/(0.7 p M^2) = CL_buffet(M))
    spec, res = solved["long-range-jet.yaml"]
    ac = M.aircraft(M.spec_tree(spec))
    W_S, Y = design(res)
    fl = Flight(W_S, Y, ac, Conditions(), domain_mach(ac))
    h = np.array([0.0, 8000.0, 13000.0])
    assert low_speed_mach(fl, h, 1.5) == pytest.approx(np.asarray(fl.mach_lift(h)), rel=1e-6)
    table = MachTable((0.0, 0.6, 0.8, 0.9), (1.2, 1.1, 0.8, 0.6))
    lo = low_speed_mach(fl, h, table)
    ref = PchipInterpolator([0.0, 0.6, 0.8, 0.9], [1.2, 1.1, 0.8, 0.6])
    for hh, m in zip(h, lo):
        p = float(atm(hh).pressure[0])
        assert W_S / (0.7 * p * m * m) == pytest.approx(float(ref(m)), rel=1e-3)
    cc = coffin_corner(fl, h, 14000.0, table)
    assert cc.low_kind.startswith("buffet") and cc.meet is not None and cc.meet[0] < 30000.0


# --------------------------------------------------------------------------
# Hot-and-high limits
# --------------------------------------------------------------------------

def test_isa_offset_of_an_outside_air_temperature():
    # Source: U.S. Standard Atmosphere 1976, T = 288.15 - 0.0065 H: at 1 524 m, 278.244 K; 35 C is ISA+29.906 K
    # (docs/references.md check 7.6-a)
    assert WAT.isa_offset(1524.0, 273.15 + 35.0) == pytest.approx(29.906, abs=1e-3)


def test_wat_at_the_design_condition_is_the_design_mass(solved):
    # the trainer's active takeoff requirement (700 m at 2 000 ft, ISA+15): the WAT limit there is the sized
    # takeoff mass itself (the solve puts it on its boundary; tolerance the solver's active-set tolerance);
    # docs/references.md check 7.6-b
    spec, res = solved["trainer-jet.yaml"]
    h = 2000 * FT
    oat = float(ambiance.Atmosphere(R0 * h / (R0 - h)).temperature[0]) + 15.0
    chart = WAT.compute_wat(spec, res, [h], [oat])
    c = chart.cells[0]
    assert c.limited_by == "field"
    assert c.isa_offset == pytest.approx(15.0, abs=2e-3)      # ambiance vs the 1976 standard
    assert c.mass == pytest.approx(res.design.takeoff_mass, rel=2e-4)


def test_wat_against_an_independent_root_of_the_takeoff_constraint(solved):
    # re-solve of the constraint: the takeoff function (the example's balanced field, docs/references.md
    # §7.8, with its propeller's momentum-theory cap at the trial mass) at the airfield, written as
    # T_SL/(m g) = required(m g/S), rooted with brentq here on its own
    spec, res = solved["regional-turboprop.yaml"]
    tree = M.spec_tree(spec)
    ac, d = M.aircraft(tree), res.design
    h, oat = 6000 * FT, 273.15 + 30.0
    chart = WAT.compute_wat(spec, res, [h], [oat])
    c = chart.cells[0]
    dT = oat - float(atm(h).temperature[0])
    for rid in ("field", "second-segment"):
        req = M.requirement(dict(tree["requirements"][rid], altitude=h, temperature_offset=dT), ac,
                            res.requirement(rid).beta)
        f = C.KINDS[req.kind].function

        def margin(m):
            ac_m = SimpleNamespace(**{**vars(ac), "takeoff_mass": m})
            return d.power / (m * G0) - float(f(m * G0 / d.wing_area, None, req, ac_m).thrust)
        m_root = brentq(margin, 0.3 * d.takeoff_mass, 2.0 * d.takeoff_mass)
        assert c.by_requirement[rid] == pytest.approx(m_root, rel=1e-4)
    assert c.mass == min(c.by_requirement.values())
    assert c.limited_by == min(c.by_requirement, key=c.by_requirement.get)


def test_wat_table_falls_with_height_and_heat(solved):
    # common practice, no source: less dense air, less mass
    spec, res = solved["touring-piston.yaml"]
    chart = cached("wat-piston", lambda: WAT.compute_wat(spec, res))
    m = np.array([c.mass for c in chart.cells]).reshape(len(chart.elevations), len(chart.temperatures))
    assert np.all(np.diff(m, axis=0) < 0) and np.all(np.diff(m, axis=1) < 0)
    for c in chart.cells:
        p = chart.payload_available(c)
        assert 0.0 <= p <= chart.payload
        assert p == pytest.approx(min(chart.payload, max(0.0, chart.payload + c.mass - chart.design_mass)))
    f = chart.to_frame()
    assert {"elevation_ft", "oat_c", "isa_offset_k", "max_takeoff_mass_kg", "limited_by"} <= set(f.columns)
    js = chart.as_dict()
    assert len(js["table"]) == len(chart.cells) and js["hot_and_high"]["elevation_m"] == max(chart.elevations)
    assert CAUTION.split(":")[0] in plot_wat(chart)["caution"].get_text()


# --------------------------------------------------------------------------
# Payload-range
# --------------------------------------------------------------------------

def _breguet_mission_fuel(m0, R, spec, res):
    """The long-range jet's mission by hand: fixed fractions, Breguet cruise (jet) and loiter with L/D at each
    segment's start weight (Raymer Ch. 3; docs/references.md §12.1-12.2, check 12.9-b), 6 % reserve and trapped
    fuel; CD0 by scipy PCHIP on
    the file's table, k1 = 1/(pi A e), ambiance for the air."""
    S, g = res.design.wing_area, G0
    cd0 = PchipInterpolator([0.0, 0.75, 0.85, 0.9], [0.0175, 0.0180, 0.0200, 0.0240])
    k1 = 1 / (math.pi * 9.0 * 0.80)
    beta = 0.970 * 0.985
    a = atm(41000 * FT)
    V = 0.80 * float(a.speed_of_sound[0])
    q = 0.5 * float(a.density[0]) * V ** 2
    CL = beta * m0 * g / S / q
    LD = CL / (float(cd0(0.80)) + k1 * CL ** 2)
    beta *= math.exp(-R * (0.58 / 3600) / (V * LD))
    a = atm(15000 * FT)                           # loiter at best endurance: CL = sqrt(CD0/k1), jets (CD0 at M 0.3)
    LD = math.sqrt(float(cd0(0.3)) / k1) / (2 * float(cd0(0.3)))
    beta *= math.exp(-1800 * (0.48 / 3600) / LD) * 0.995
    return 1.06 * (1 - beta) * m0


def test_payload_range_corners_against_breguet_by_hand(solved):
    spec, res = solved["long-range-jet.yaml"]
    pr = cached("pr", lambda: compute_payload_range(spec, res))
    d = res.design
    # the design point flies the file's 10 000 km (the solve's own mission, reproduced; check 12.9-a)
    assert pr.corner("design").range == pytest.approx(10_000_000.0, rel=1e-6)
    assert pr.corner("design").takeoff_mass == pytest.approx(d.takeoff_mass, rel=1e-9)
    for name in ("max-payload", "max-fuel", "ferry"):
        c = pr.corner(name)
        R = brentq(lambda R: _breguet_mission_fuel(c.takeoff_mass, R, spec, res) - c.fuel, 0.0, 4e7)
        assert c.range == pytest.approx(R, rel=2e-4), name          # ambiance vs the 1976 standard
    # the corners of the file's capacities: 2 600 kg payload, 13 500 kg fuel
    cap = spec.model.aircraft.weights.max_fuel.si         # the file's fuel capacity
    assert pr.corner("max-payload").payload == 2600.0 and pr.corner("ferry").fuel == cap
    assert pr.corner("max-fuel").payload == pytest.approx(d.takeoff_mass - d.empty_mass - d.crew_mass - cap)
    r = [pr.corner(n).range for n in ("max-payload", "design", "max-fuel", "ferry")]
    assert r == sorted(r)
    h = plot_payload_range(pr)
    assert set(h["corners"]) == {"max-payload", "design", "max-fuel", "ferry"}
    assert list(pr.to_frame().columns)[:4] == ["corner", "what", "range_km", "range_nmi"]


def test_no_payload_range_without_a_mission(solved):
    spec, res = solved["touring-piston.yaml"]
    with pytest.raises(InputError, match="fixed fraction .* no cruise range to trade"):
        compute_payload_range(spec, res)

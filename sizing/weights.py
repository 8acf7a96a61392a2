"""Empty-mass models, mission fuel fractions and the weight closure.

Closure (Raymer Ch. 3):  m_TO = (m_crew + m_payload) / (1 - m_fuel/m_TO - m_empty/m_TO),
solved inside the optimizer as m_TO (1 - f_fuel - f_empty) = m_crew + m_payload.

Empty-mass models
-----------------
``components``: m_empty = other m_TO + wing S + propulsion T_SL (or P_SL);
``fraction``: m_empty/m_TO fixed;
``statistical``: Raymer's regressions (Table 3.1 power law, Table 6.1
refined form), fitted in pounds: W0 is converted at the edge.

Mission fuel
------------
Segment weight fractions W_i/W_(i-1): ``fixed`` (historical, Raymer Table
3.2), ``cruise`` (Breguet range), ``loiter`` (Breguet endurance), ``combat``
/ ``maneuver`` (fuel burnt at the thrust of a load factor for a time,
Mattingly Eq. 3.16). Fuel fraction
m_fuel/m_TO = (1 + reserve + trapped) (1 - prod W_i/W_(i-1)),
the reserve and trapped fuel being fractions of mission fuel (Raymer Ch. 3
writes 1.06 for "6 % reserve and trapped fuel").

Fuel consumption enters weight-based: TSFC in 1/s (N of fuel per N of
thrust per s), power-specific c in 1/m (N of fuel per J). Mass-based input
(mg/(N s), lb/(hp h)) is multiplied by g0 at the unit edge.

All functions evaluate on floats, arrays and CasADi symbols.
"""
from __future__ import annotations

from . import _math as m
from .atmosphere import g0, isa

LB = 0.45359237           # kg per pound mass
LBF_FT2 = 47.880259       # Pa per lbf/ft^2
HP = 745.69987            # W per horsepower
N_PER_LBF = 4.4482216152605

# Raymer, Aircraft Design: A Conceptual Approach, Table 3.1 (We/W0 = A W0^C K_vs,
# W0 in lb) and Table 6.1 (jets, refined: a, b, C1..C5). Source: REFERENCES.md §4.1-4.2.
STATISTICAL_PRESETS = {
    "sailplane-unpowered": {"a": 0.86, "c": -0.05},
    "sailplane-powered": {"a": 0.91, "c": -0.05},
    "homebuilt-metal-wood": {"a": 1.19, "c": -0.09},
    "homebuilt-composite": {"a": 1.15, "c": -0.09},
    "general-aviation-single": {"a": 2.36, "c": -0.18},
    "general-aviation-twin": {"a": 1.51, "c": -0.10},
    "agricultural": {"a": 0.74, "c": -0.03},
    "twin-turboprop": {"a": 0.96, "c": -0.05},
    "flying-boat": {"a": 1.09, "c": -0.05},
    "jet-trainer": {"a": 1.59, "c": -0.10},
    "jet-fighter": {"a": 2.34, "c": -0.13},
    "military-cargo-bomber": {"a": 0.93, "c": -0.07},
    "jet-transport": {"a": 1.02, "c": -0.06},
    # Table 6.1 refined jet forms
    "jet-trainer-refined": {"a": 0.0, "b": 4.28, "exponents": [-0.10, 0.10, 0.20, -0.24, 0.11]},
    "jet-fighter-refined": {"a": -0.02, "b": 2.16, "exponents": [-0.10, 0.20, 0.04, -0.10, 0.08]},
    "military-cargo-bomber-refined": {"a": 0.07, "b": 1.71, "exponents": [-0.10, 0.10, 0.06, -0.10, 0.05]},
    "jet-transport-refined": {"a": 0.32, "b": 0.66, "exponents": [-0.13, 0.30, 0.06, -0.05, 0.05]},
}


def empty_fraction_power_law(W0_lb, A, C, K_vs=1.0):
    """We/W0 = A W0^C K_vs with W0 in lb (Raymer Table 3.1).

    Examples
    --------
    Source: REFERENCES.md CC9, Raymer Table 3.1 general aviation single
    engine (A 2.36, C -0.18) at W0 = 3 000 lb -> 0.55851.

    >>> round(float(empty_fraction_power_law(3000.0, 2.36, -0.18)), 5)
    0.55851
    """
    return A * m.power(W0_lb, C) * K_vs


def empty_fraction_refined(W0_lb, A, T_W, W_S_psf, M_max, a, b, C, K_vs=1.0):
    """We/W0 = [a + b W0^C1 A^C2 (T/W)^C3 (W/S)^C4 Mmax^C5] K_vs (Raymer Table 6.1).

    W0 in lb, W/S in lbf/ft^2.

    Examples
    --------
    Source: REFERENCES.md CC9, Raymer Table 6.1 jet transport: W0 150 000 lb,
    A 9, T/W 0.3, W/S 120, M 0.85 -> 0.51682.

    >>> round(float(empty_fraction_refined(150000.0, 9, 0.3, 120, 0.85, 0.32, 0.66,
    ...                                    [-0.13, 0.30, 0.06, -0.05, 0.05])), 5)
    0.51682
    """
    C1, C2, C3, C4, C5 = C
    return (a + b * m.power(W0_lb, C1) * A ** C2 * m.power(T_W, C3) * m.power(W_S_psf, C4)
            * M_max ** C5) * K_vs


def empty_fraction(weights: dict, aircraft: dict, m_TO, W_S, Y, propeller: bool):
    """m_empty/m_TO of the file's empty-mass model [-].

    Y is T_SL/W_TO for jets, P_SL/W_TO [W/N] for propeller aircraft.
    """
    e = weights["empty"]
    model = e["model"]
    if model == "fraction":
        return e["value"] + 0.0 * m_TO
    if model == "components":
        # wing S / m_TO = wing g / (W/S);  engine T_SL / m_TO = propulsion g Y
        return e["other"] + e["wing"] * g0 / W_S + e["propulsion"] * g0 * Y
    # statistical
    coef = dict(STATISTICAL_PRESETS.get(e.get("preset"), {}))
    for key in ("a", "c", "b", "exponents"):
        if key in e:
            coef[key] = e[key]
    K_vs = 1.04 if e.get("variable_sweep") else 1.0
    W0_lb = m_TO / LB
    if "exponents" in coef and "b" in coef:
        aero = aircraft["aerodynamics"]
        A = aero.get("aspect_ratio", 8.0)
        if propeller:
            # Raymer Table 6.1 propeller rows use hp/W0 [hp/lb] for T/W, V_max [kt] for Mmax
            T_W = Y * N_PER_LBF / HP
            M_max = e.get("max_mach", 0.3) * 340.294 / (1852.0 / 3600.0)
        else:
            T_W = Y
            M_max = e.get("max_mach", 0.8)
        return empty_fraction_refined(W0_lb, A, T_W, W_S / LBF_FT2, M_max,
                                      coef["a"], coef["b"], coef["exponents"], K_vs)
    return empty_fraction_power_law(W0_lb, coef["a"], coef["c"], K_vs)


# --------------------------------------------------------------------------
# Mission
# --------------------------------------------------------------------------

def breguet_cruise_fraction(range_m, V, lift_to_drag, c, propeller=False, eta_p=0.8):
    """Cruise weight fraction W1/W0 from the Breguet range equation.

    jets:  W1/W0 = exp(-R c_T / (V L/D)),  c_T [1/s] weight-based TSFC;
    props: W1/W0 = exp(-R c_P / (eta_p L/D)), c_P [1/m] weight-based PSFC.

    Examples
    --------
    Source: REFERENCES.md §7.4 (Raymer Ch. 3 ASW example): 1 500 nmi at
    596.9 ft/s, C = 0.5 1/h, L/D = 0.866 x 16 -> 0.858086.

    >>> R = 1500 * 1852.0; V = 596.9 * 0.3048
    >>> abs(float(breguet_cruise_fraction(R, V, 0.866 * 16, 0.5 / 3600)) - 0.858086) < 1e-5
    True
    """
    if propeller:
        return m.exp(-range_m * c / (eta_p * lift_to_drag))
    return m.exp(-range_m * c / (V * lift_to_drag))


def breguet_loiter_fraction(time_s, lift_to_drag, c, V=None, propeller=False, eta_p=0.8):
    """Loiter weight fraction from the Breguet endurance equation.

    jets: W1/W0 = exp(-E c_T / (L/D)); props: exp(-E c_P V / (eta_p L/D)).

    Examples
    --------
    Source: REFERENCES.md §7.4 (Raymer ASW example): 3 h loiter, C = 0.4 1/h,
    L/D = 16 -> 0.927743.

    >>> round(float(breguet_loiter_fraction(3 * 3600.0, 16.0, 0.4 / 3600)), 6)
    0.927743
    """
    if propeller:
        return m.exp(-time_s * c * V / (eta_p * lift_to_drag))
    return m.exp(-time_s * c / lift_to_drag)


def fuel_fraction_from_segments(product, reserve=0.0, trapped=0.0):
    """m_fuel/m_TO = (1 + reserve + trapped) (1 - prod W_i/W_(i-1)) (Raymer Ch. 3).

    Examples
    --------
    Source: REFERENCES.md §4.3 (Raymer: 1.06 for 6 % reserve and trapped fuel),
    hand calculation: product 0.8 -> 1.06 x 0.2 = 0.212.

    >>> round(fuel_fraction_from_segments(0.8, 0.06), 6)
    0.212
    """
    return (1.0 + reserve + trapped) * (1.0 - product)


def _segment_speed(seg, air):
    if seg.get("mach") is not None:
        return seg["mach"] * air.speed_of_sound
    return seg.get("speed")


def mission_fractions(tree: dict, ac, W_S):
    """Weight fraction of every mission segment at wing loading W_S.

    Returns a list of (name, W_i/W_(i-1), beta_end) with beta_end the weight
    at the end of the segment over takeoff weight. Each segment's L/D comes
    from the drag polar at its start weight fraction, W_S and condition.
    """
    mis = tree["mission"]
    prop = ac.engine_type in ("turboprop", "piston")
    eta = ac.propeller_efficiency
    polar = ac.polar
    beta = 1.0
    out = []
    for i, seg in enumerate(mis["segments"]):
        name = seg.get("name") or f"{seg['kind']}-{i + 1}"
        kind = seg["kind"]
        if kind == "fixed":
            f = seg["fraction"]
        else:
            c = seg.get("tsfc", mis.get("tsfc"))
            air = isa(seg.get("altitude", 0.0), seg.get("temperature_offset", 0.0))
            V = _segment_speed(seg, air)
            W_seg = beta * W_S
            if V is None:
                # best-endurance (loiter) or best-range (cruise) lift coefficient of a
                # symmetric parabolic polar: jets sqrt(CD0/k1) for loiter and
                # sqrt(CD0/(3 k1)) for cruise; props sqrt(3 CD0/k1) and sqrt(CD0/k1)
                # (Anderson, Aircraft Performance and Design, §5.13-5.14)
                CD0, k1 = polar.CD0(0.3), polar.K1(0.3)
                factor = {("loiter", False): 1.0, ("cruise", False): 1.0 / 3.0,
                          ("loiter", True): 3.0, ("cruise", True): 1.0}[(kind, prop)]
                CL = m.sqrt(factor * CD0 / k1)
                V = m.sqrt(2.0 * W_seg / (air.density * CL))
            q = 0.5 * air.density * V ** 2
            M = V / air.speed_of_sound
            n = seg.get("load_factor", 1.0)
            CL = n * W_seg / q
            CD = polar.CD(CL, M)
            LD = CL / CD * (1.0 / n)     # drag over weight = n CD/CL ... W/D
            if kind == "cruise":
                f = breguet_cruise_fraction(seg["range"], V, LD, c, prop, eta)
            elif kind == "loiter":
                f = breguet_loiter_fraction(seg["time"], LD, c, V, prop, eta)
            else:   # combat / maneuver: Mattingly Eq. 3.16 at the thrust for D at n
                f = breguet_loiter_fraction(seg["time"], LD, c, V, prop, eta)
        beta = beta * f
        out.append((name, f, beta))
    return out


def has_mission_fuel(tree: dict) -> bool:
    """True when the fuel comes from mission segments (no fixed fraction given)."""
    return bool(tree.get("mission")) and "fraction" not in tree["aircraft"]["weights"].get("fuel", {})


def segment_end_fractions(tree: dict, ac, W_S, segments=None) -> dict:
    """{segment name: W_end/W_TO} at W_S, for ``weight_fraction: {after: ...}``.

    Empty when the fuel is a fixed fraction. ``segments`` reuses an already
    computed :func:`mission_fractions` list.
    """
    if not has_mission_fuel(tree):
        return {}
    segments = mission_fractions(tree, ac, W_S) if segments is None else segments
    return {name: be for name, _f, be in segments}


def fuel_fraction(tree: dict, ac, W_S, segments=None):
    """m_fuel/m_TO: the fixed fraction, or from the mission segments.

    ``segments`` reuses an already computed :func:`mission_fractions` list.
    """
    fuel = tree["aircraft"]["weights"].get("fuel", {})
    if "fraction" in fuel:
        return fuel["fraction"] + 0.0 * W_S
    mis = tree["mission"]
    segs = mission_fractions(tree, ac, W_S) if segments is None else segments
    return fuel_fraction_from_segments(segs[-1][2], mis.get("reserve", 0.0), mis.get("trapped", 0.0))


def closure_mass(fixed_mass, fuel_frac, empty_frac):
    """m_TO = (m_crew + m_payload) / (1 - fuel fraction - empty fraction) [kg].

    Examples
    --------
    Source: REFERENCES.md CC10 (Raymer Ch. 3 ASW example, fixed point):
    10 800 lb fixed, Wf/W0 0.387, We/W0 = 0.93 W0^-0.07 -> W0 = 59 305 lb
    (solved in the tests by iteration); here one step with We/W0 0.43089.

    >>> round(closure_mass(10800.0, 0.387, 0.43089))
    59305
    """
    return fixed_mass / (1.0 - fuel_frac - empty_frac)



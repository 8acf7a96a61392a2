"""Empty-mass models: components, a fixed fraction, Raymer's statistical regressions.

``components``: m_empty = other m_TO + wing S + propulsion T_SL (or P_SL);
``fraction``: m_empty/m_TO fixed;
``statistical``: Raymer's regressions (Table 3.1 power law, Table 6.1
refined form), fitted in pounds: W0 is converted at the edge.
Optionally (``wing_load_factor``) the wing mass follows the design's limit load
factor: the components wing term, or a ``wing_share`` of the statistical empty
mass, times (n/n_ref)^x, n the larger of the category's limit load factor
(14 CFR 23.337 / 25.337, :mod:`sizing.physics.loads`) and every load factor the
requirements and mission segments ask for. Raymer's statistical wing-mass
equations carry the ultimate load factor N_z with exponents 0.49 (general
aviation), 0.5 (fighter/attack) and 0.557 (cargo/transport) (Raymer §15.3,
Eqs. 15.1, 15.25, 15.46; from memory).
All functions evaluate on floats, arrays and CasADi symbols.
"""
from __future__ import annotations

from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF
from ..physics import shim as m
from ..physics.atmosphere import g0
from ..physics.loads import limit_load_factor

# Raymer, Aircraft Design: A Conceptual Approach, Table 3.1 (We/W0 = A W0^C K_vs,
# W0 in lb) and Table 6.1 (jets, refined: a, b, C1..C5). Source: docs/references.md §11.1-11.3.
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
    Source: Raymer Table 3.1 (docs/references.md check 11.5-a), general aviation single
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
    Source: Raymer Table 6.1 (docs/references.md check 11.5-b), jet transport: W0 150 000 lb,
    A 9, T/W 0.3, W/S 120, M 0.85 -> 0.51682.

    >>> round(float(empty_fraction_refined(150000.0, 9, 0.3, 120, 0.85, 0.32, 0.66,
    ...                                    [-0.13, 0.30, 0.06, -0.05, 0.05])), 5)
    0.51682
    """
    C1, C2, C3, C4, C5 = C
    return (a + b * m.power(W0_lb, C1) * A ** C2 * m.power(T_W, C3) * m.power(W_S_psf, C4)
            * M_max ** C5) * K_vs


def required_load_factors(tree: dict) -> list:
    """Every load factor a requirement or a mission segment of the SI tree asks for [-]."""
    reqs = tree.get("requirements", ())
    reqs = reqs.values() if isinstance(reqs, dict) else reqs
    segs = (tree.get("mission") or {}).get("segments", ())
    return [r["load_factor"] for r in list(reqs) + list(segs) if "load_factor" in r]


def design_load_factor(category, m_TO, load_factors=()):
    """The design's limit load factor: the category's (at m_TO [kg]) or a higher one asked for [-].

    Examples
    --------
    Source: 14 CFR 23.337(a)(1) (docs/references.md check 14.6-a): normal at 6 000 lb -> 3.6; a
    4.0 g requirement raises it to 4.0.

    >>> round(float(design_load_factor("normal", 6000 * LB)), 6), float(design_load_factor("normal", 6000 * LB, [2.0, 4.0]))
    (3.6, 4.0)
    """
    n = limit_load_factor(category, m_TO)
    for extra in load_factors:
        n = m.fmax(n, extra)
    return n


def wing_load_factor_scale(empty: dict, aircraft: dict, m_TO, load_factors=()):
    """(n/n_ref)^x of ``wing_load_factor`` (1 when the file does not ask for it) [-]."""
    wl = empty.get("wing_load_factor")
    if not wl:
        return 1.0
    n = design_load_factor(aircraft["category"], m_TO, load_factors)
    return m.power(n / wl["reference"], wl.get("exponent", 0.5))


def empty_fraction_of(tree: dict, m_TO, W_S, Y, propeller: bool):
    """:func:`empty_fraction` of an SI tree (its load factors included)."""
    return empty_fraction(tree["aircraft"]["weights"], tree["aircraft"], m_TO, W_S, Y, propeller,
                          required_load_factors(tree))


def empty_fraction(weights: dict, aircraft: dict, m_TO, W_S, Y, propeller: bool, load_factors=()):
    """m_empty/m_TO of the file's empty-mass model [-].

    Y is T_SL/W_TO for jets, P_SL/W_TO [W/N] for propeller aircraft; load_factors: those the
    requirements ask for (see :func:`required_load_factors`), for ``wing_load_factor``.
    """
    e = weights["empty"]
    model = e["model"]
    if model == "fraction":
        return e["value"] + 0.0 * m_TO
    scale = wing_load_factor_scale(e, aircraft, m_TO, load_factors)
    if model == "components":
        # wing S / m_TO = wing g / (W/S);  engine T_SL / m_TO = propulsion g Y
        return e["other"] + scale * e["wing"] * g0 / W_S + e["propulsion"] * g0 * Y
    share = (1.0 + e["wing_load_factor"]["wing_share"] * (scale - 1.0)) if e.get("wing_load_factor") else 1.0
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
        return share * empty_fraction_refined(W0_lb, A, T_W, W_S / LBF_FT2, M_max,
                                              coef["a"], coef["b"], coef["exponents"], K_vs)
    return share * empty_fraction_power_law(W0_lb, coef["a"], coef["c"], K_vs)

"""Field kinds: takeoff (ground run, distance over an obstacle, balanced field) and landing
(ground roll, distance from an obstacle, field length).

Each form is one published method written once for floats, arrays and CasADi symbols.
Ground runs and landing forms are closed-form bounds; the takeoff distance over an obstacle
and the balanced field length have no closed form for the required thrust, so they give the
distance as a function of the design's T_SL/W_TO (P_SL/W_TO) and
:func:`~sizing.constraints.flight.by_margin` solves for it on numbers (the optimizer uses
the distance margin itself as its constraint).

References
----------
.. [G] Gudmundsson, *General Aviation Aircraft Design*, Elsevier, 2014, Eq. 3-4 (takeoff ground run).
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002, §2.2 (landing).
.. [R] Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, 4th-6th eds., Ch. 17: §17.8
   takeoff (ground roll Eqs. 17.101-17.104, rotation, transition and climb over the obstacle,
   Eqs. 17.105-17.111), the balanced field length (Torenbeek's approximation, Eqs.
   17.112-17.115) and §17.9 landing (approach, flare, free roll, braking). Equation numbers
   from memory.
.. [T] Torenbeek, E., *Synthesis of Subsonic Airplane Design*, Delft University Press, 1982,
   §5.4 and App. K (balanced field length approximation).
.. [CFR] 14 CFR 121.195(b) (landing within 60 % of the effective runway length).
"""
from __future__ import annotations

from types import SimpleNamespace

import numpy as np

from ..physics import shim as m
from ..physics.atmosphere import RHO0, g0
from .flight import (
    Bound,
    by_margin,
    condition,
    config_of,
    engine_out_drag,
    engines_running,
    lapse,
    thrust_available,
    to_sea_level,
)

FT = 0.3048
TRANSITION_SPEED_RATIO = 1.15    # V_TR / V_stall,TO: average of liftoff 1.1 and climb 1.2 (Raymer §17.8)
TRANSITION_LOAD_FACTOR = 1.2     # n during the transition arc (Raymer §17.8)
FLARE_SPEED_RATIO = 1.23         # V_flare / V_stall,L, civil (Raymer §17.9)
CLIMB_SPEED_RATIO = 1.2          # climb speed / V_stall,TO in the balanced field length (Raymer Eq. 17.113)
BFL_CONSTANT = 655.0 * FT        # the 655 ft term of Eq. 17.113 [m]


# --------------------------------------------------------------------------
# Published equations (pure functions)
# --------------------------------------------------------------------------

def takeoff_ground_roll_thrust(W_S, rho, V_LOF, S_G, CD_TO, CL_TO, mu):
    """Thrust-to-weight for a takeoff ground run (Gudmundsson Eq. 3-4).

    T/W = V_LOF^2/(2 g S_G) + q CD_TO/(W/S) + mu (1 - q CL_TO/(W/S)),
    q evaluated at V_LOF/sqrt(2).

    Parameters
    ----------
    W_S : wing loading at takeoff [N/m^2]
    rho : air density [kg/m^3]
    V_LOF : liftoff speed [m/s]
    S_G : ground run [m]
    CD_TO, CL_TO : drag and lift coefficients during the run [-]
    mu : rolling friction coefficient [-]

    Examples
    --------
    Source: docs/references.md check 6.8-e (Gudmundsson Eq. 3-4 form): sea level,
    V_LOF 30 m/s, S_G 300 m, CD_TO 0.04, CL_TO 0.6, mu 0.04, W/S 1 500
    N/m^2 -> T/W = 0.19590.

    >>> round(float(takeoff_ground_roll_thrust(1500.0, 1.225, 30.0, 300.0, 0.04, 0.6, 0.04)), 5)
    0.1959
    """
    q = 0.5 * rho * V_LOF ** 2 / 2.0
    return V_LOF ** 2 / (2.0 * g0 * S_G) + q * CD_TO / W_S + mu * (1.0 - q * CL_TO / W_S)


def ground_roll_distance(V_LOF, K_T, K_A):
    """Ground roll from rest to V_LOF with net force g (K_T + K_A V^2) per unit mass [m].

    S_G = ln((K_T + K_A V_LOF^2)/K_T) / (2 g K_A)       (Raymer Eq. 17.102)
    K_T = T/W - mu,  K_A = rho/(2 W/S) (mu CL - CD0 - k CL^2)   (Eqs. 17.103, 17.104)

    Written as (V^2/(2 g K_T)) ln(1 + x)/x with x = K_A V^2/K_T, a series near x = 0 (no
    aerodynamic force: V^2/(2 g K_T)). Where the run never reaches V_LOF (K_T <= 0, or
    K_T + K_A V^2 <= 0) the distance is made very large but finite and keeps rising as
    thrust falls, so the optimizer sees a smooth wall.

    Parameters
    ----------
    V_LOF : liftoff speed [m/s]; K_T : thrust minus friction over weight [-];
    K_A : aerodynamic term [1/(m^2/s^2)], usually negative.

    Examples
    --------
    Hand calculation: no aerodynamic force, K_T 0.25, V 60 m/s ->
    60^2/(2 g 0.25) = 734.20 m.

    >>> round(float(ground_roll_distance(60.0, 0.25, 0.0)), 2)
    734.2
    """
    KT = m.fmax(K_T, 1e-6)
    x = m.fmax(K_A * V_LOF ** 2 / KT, -1.0 + 1e-9)
    tiny = m.fmax(x, -x) < 1e-6
    x_safe = m.if_else(tiny, 1.0 + 0.0 * x, x)
    phi = m.if_else(tiny, 1.0 - x / 2.0 + x ** 2 / 3.0, m.log(1.0 + x_safe) / x_safe)
    return V_LOF ** 2 / (2.0 * g0 * KT) * phi


def transition_climb_distance(sin_gamma, R, h_obstacle):
    """Air distance from liftoff to the obstacle: transition arc, then a straight climb [m].

    Transition on a circular arc of radius R = V_TR^2/(g (n - 1)) to the climb angle gamma,
    ending at height h_TR = R (1 - cos gamma) (Raymer Eqs. 17.106-17.109); then a straight climb
    S_C = (h_obs - h_TR)/tan gamma (Eq. 17.111). Together

        S = R sin gamma + (h_obs - h_TR)/tan gamma = h_obs/tan gamma + R tan(gamma/2)

    while h_TR < h_obs; when the arc reaches the obstacle first, S = sqrt(R^2 - (R - h_obs)^2)
    (Eq. 17.110). The two agree (value and slope) at h_TR = h_obs.

    Parameters
    ----------
    sin_gamma : sine of the climb angle, (T - D)/W [-]; R : transition radius [m];
    h_obstacle : obstacle height [m]

    Examples
    --------
    Hand calculation: gamma 5 deg, R 2 000 m, 15.24 m obstacle: h_TR = 7.610 m;
    S = 15.24/tan 5 deg + 2 000 tan 2.5 deg = 174.19 + 87.33 = 261.52 m.

    >>> import math
    >>> round(float(transition_climb_distance(math.sin(math.radians(5)), 2000.0, 15.24)), 2)
    261.52
    """
    s = m.clip(sin_gamma, 1e-6, 0.99)
    c = m.sqrt(1.0 - s ** 2)
    climb = h_obstacle * c / s + R * s / (1.0 + c)
    arc = m.sqrt(m.fmax(2.0 * R * h_obstacle - h_obstacle ** 2, 0.0))
    return m.if_else(R * (1.0 - c) < h_obstacle, climb, arc)


def balanced_field_length(W_S, rho, CL_climb, h_obstacle, T_av_W, U, G):
    """Balanced field length, Torenbeek's approximation as given by Raymer (Eq. 17.113), SI [m].

    BFL = (0.863/(1 + 2.3 G)) (W/S/(rho g CL_climb) + h_obs) (1/(T_av/W - U) + 2.7)
          + 655 ft / sqrt(sigma)

    Raymer prints it in English units (W/S lbf/ft^2, rho slug/ft^3, g 32.2 ft/s^2, h_obs and
    BFL in ft). W/S/(rho g CL) is a length in any consistent units and the other factors are
    dimensionless, so in SI only the 655 ft constant changes (199.644 m); tests compare with
    the English-unit form.

    Parameters
    ----------
    W_S : wing loading at takeoff [N/m^2]; rho : airport density [kg/m^3]
    CL_climb : CL at the climb speed 1.2 V_stall [-]; h_obstacle : screen height [m]
    T_av_W : average takeoff thrust over weight, all engines [-]
    U : 0.01 CLmax,TO + 0.02 for takeoff flaps [-]
    G : gamma_climb - gamma_min, one engine out at the climb speed [rad]

    Examples
    --------
    Hand calculation (SI): W/S 5 000 N/m^2, sea level, CL 1.5, 35 ft, T/W 0.3, U 0.04,
    G 0.02: 0.863/1.046 x (277.474 + 10.668) x (3.8462 + 2.7) + 199.644 = 1 755.87 m.

    >>> round(float(balanced_field_length(5000.0, 1.225, 1.5, 35 * 0.3048, 0.3, 0.04, 0.02)), 2)
    1755.87
    """
    sigma = rho / RHO0
    excess = m.fmax(T_av_W - U, 1e-6)
    return (0.863 / m.fmax(1.0 + 2.3 * G, 1e-3) * (W_S / (rho * g0 * CL_climb) + h_obstacle)
            * (1.0 / excess + 2.7) + BFL_CONSTANT / m.sqrt(sigma))


def landing_wing_loading(S_G, rho, CLmax, mu_brake, beta=1.0, k_TD=1.15, t_free=0.0):
    """Highest W_TO/S that stops within a landing ground roll [N/m^2].

    Ground roll with free-roll time t_FR at touchdown speed V_TD, then
    constant braking deceleration mu_B g (aerodynamic drag and reverse thrust
    neglected, conservative):  S_G = t_FR V_TD + V_TD^2 / (2 g mu_B), and
    V_TD = k_TD V_stall, so

        W_TO/S = rho CLmax V_TD^2 / (2 k_TD^2 beta).

    Notes
    -----
    k_TD = 1.15 and the constant-deceleration braking roll follow Mattingly
    §2.2.9 (landing, Eq. 2.22 family, from memory) and Raymer Ch. 17.

    Examples
    --------
    Hand calculation: S_G 500 m, sea level, CLmax 2.0, mu_B 0.3, beta 1,
    no free roll: V_TD^2 = 2 g mu S = 2941.995, W/S = 1.225*2*2941.995 /
    (2*1.3225) = 2725.10 N/m^2.

    >>> round(float(landing_wing_loading(500.0, 1.225, 2.0, 0.3)), 2)
    2725.1
    """
    a = 1.0 / (2.0 * g0 * mu_brake)
    # a V^2 + t V - S = 0 (t may be zero)
    V_TD = (-t_free + m.sqrt(t_free ** 2 + 4.0 * a * S_G)) / (2.0 * a)
    return rho * CLmax * V_TD ** 2 / (2.0 * k_TD ** 2 * beta)


def landing_air_distance(V_stall, h_obstacle, gamma, k_flare=FLARE_SPEED_RATIO):
    """Approach and flare from the obstacle to touchdown [m] (Raymer §17.9).

    Flare on an arc of radius R = V_F^2/(0.2 g) (n = 1.2, V_F = 1.23 V_stall) starting at
    h_F = R (1 - cos gamma); approach S_A = (h_obs - h_F)/tan gamma, flare S_F = R sin gamma:

        S_A + S_F = h_obs/tan gamma + R tan(gamma/2)     (h_F < h_obs).

    When the flare would start above the obstacle, the arc from the obstacle,
    sqrt(2 R h_obs - h_obs^2), is shorter than R sin gamma; the larger of the two forms is
    taken (exact in the usual case, conservative otherwise).

    Examples
    --------
    Hand calculation: V_stall 60 m/s, 50 ft, 3 deg: V_F 73.8 m/s, R 2 777.2 m, h_F 3.81 m;
    15.24/tan 3 deg + 2 777.2 tan 1.5 deg = 290.79 + 72.72 = 363.51 m.

    >>> import math
    >>> round(float(landing_air_distance(60.0, 15.24, math.radians(3.0))), 2)
    363.51
    """
    R = (k_flare * V_stall) ** 2 / (0.2 * g0)
    return m.fmax(h_obstacle / m.tan(gamma) + R * m.tan(gamma / 2.0), R * m.sin(gamma))


def landing_distance_wing_loading(S, rho, CLmax, mu_brake, beta, k_TD, t_free, h_obstacle, gamma,
                                  k_flare=FLARE_SPEED_RATIO):
    """Highest W_TO/S that lands from the obstacle within a distance S [N/m^2].

    S = S_A + S_F + t_FR V_TD + V_TD^2/(2 g mu_B) with V_TD = k_TD V_s (Raymer §17.9; braking
    at constant deceleration as :func:`landing_wing_loading`). Each of the two forms of
    :func:`landing_air_distance` makes S a quadratic a V_s^2 + b V_s + c in the stall speed:

        a = k_F^2 tan(gamma/2)/(0.2 g) + k_TD^2/(2 g mu_B),  c = h_obs/tan gamma   (flare below)
        a = k_F^2 sin gamma/(0.2 g)   + k_TD^2/(2 g mu_B),  c = 0                 (bound)

    b = t_FR k_TD; the limit is the smaller positive root, W_TO/S = rho CLmax V_s^2/(2 beta).

    Examples
    --------
    Hand calculation: S 1 000 m, sea level, CLmax 2.4, mu_B 0.4, beta 1, k_TD 1.15, 3 s,
    50 ft, 3 deg: a = 0.020199 + 0.168572 = 0.188771, b = 3.45, c = 290.797 ->
    V_s = 52.833 m/s (the bound form gives 61.42 m/s), W/S = 1.225 x 2.4 x 52.833^2 / 2 = 4 103.3 N/m^2.

    >>> import math
    >>> round(float(landing_distance_wing_loading(1000.0, 1.225, 2.4, 0.4, 1.0, 1.15, 3.0, 15.24,
    ...                                         math.radians(3.0))), 1)
    4103.3
    """
    brake = k_TD ** 2 / (2.0 * g0 * mu_brake)
    b = t_free * k_TD
    tan_g, tan_h, sin_g = m.tan(gamma), m.tan(gamma / 2.0), m.sin(gamma)

    def root(a, c):
        return (-b + m.sqrt(b ** 2 + 4.0 * a * m.fmax(S - c, 0.0))) / (2.0 * a)

    flare = k_flare ** 2 / (0.2 * g0)
    Vs = m.fmin(root(flare * tan_h + brake, h_obstacle / tan_g), root(flare * sin_g + brake, 0.0))
    return rho * CLmax * Vs ** 2 / (2.0 * beta)


def landing_distance_of(W_S, req, ac):
    """Landing distance from the obstacle of a design at W_TO/S [m] (Raymer §17.9): approach and
    flare (:func:`landing_air_distance`), free roll t_FR V_TD and braking V_TD^2/(2 g mu_B) with
    V_TD = k_TD V_stall,L. The inverse of :func:`landing_distance_wing_loading`."""
    air = condition(req)
    Vs = m.sqrt(2.0 * req.beta * W_S / (air.density * ac.polar.CLmax(config_of(req, "landing"))))
    V_TD = req.touchdown_speed_ratio * Vs
    return (landing_air_distance(Vs, req.obstacle, req.approach_angle) + req.free_roll_time * V_TD
            + V_TD ** 2 / (2.0 * g0 * req.braking_friction))


# --------------------------------------------------------------------------
# Kinds
# --------------------------------------------------------------------------

def _gear(ac):
    return getattr(ac, "gear_drag_increment", 0.0)


def _liftoff(W_S, req, ac, air, cfg):
    """(beta W_S, V_stall,TO, V_LOF) of a takeoff."""
    W_S_run = req.beta * W_S
    Vs = m.sqrt(2.0 * W_S_run / (air.density * ac.polar.CLmax(cfg)))
    return W_S_run, Vs, req.liftoff_speed_ratio * Vs


def takeoff(W_S, V, req, ac):
    """Takeoff in one of three forms: ``ground_roll`` (Gudmundsson Eq. 3-4), ``distance`` over an
    obstacle (Raymer §17.8) or ``balanced_field`` (Torenbeek via Raymer Eq. 17.113)."""
    if getattr(req, "distance", None) is not None:
        return takeoff_distance(W_S, req, ac)
    if getattr(req, "balanced_field", None) is not None:
        return balanced_field(W_S, req, ac)
    return takeoff_ground_roll(W_S, req, ac)


def takeoff_ground_roll(W_S, req, ac):
    """Ground run with V_LOF = k V_stall,TO (Gudmundsson Eq. 3-4; props at V_LOF/sqrt(2)).

    The run is flown at weight fraction beta: the equation is written per
    unit of the takeoff weight beta W_TO and multiplied by beta/alpha, with
    alpha (and for props the thrust T = eta_p P/V, capped by momentum theory when a propeller
    diameter is given) taken at V_LOF/sqrt(2).
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    W_S_run, _, V_LOF = _liftoff(W_S, req, ac, air, cfg)
    V_avg = V_LOF / np.sqrt(2.0)
    M_avg = V_avg / air.speed_of_sound
    CL = req.ground_lift_coefficient
    CD = polar.CD(CL, M_avg, cfg) + _gear(ac)
    t = req.beta * takeoff_ground_roll_thrust(W_S_run, air.density, V_LOF, req.ground_roll,
                                              CD, CL, req.rolling_friction)
    alpha = lapse(req, ac, V_avg, air)
    return Bound(thrust=to_sea_level(t, V_avg, alpha, ac, air=air, field=True))


def takeoff_distance_of(W_S, Y, req, ac):
    """Takeoff distance over the obstacle of a design (W_TO/S, T_SL/W_TO or P_SL/W_TO) [m].

    S_TO = S_G + S_R + S_TR + S_C (Raymer §17.8): ground roll to V_LOF = k V_stall,TO with the
    thrust at V_LOF/sqrt(2) (:func:`ground_roll_distance`), rotation t_R V_LOF, transition at
    V_TR = 1.15 V_stall,TO on an arc of n = 1.2 to the climb angle sin gamma = (T - D)/W at V_TR,
    and climb to the obstacle (:func:`transition_climb_distance`). Gear down throughout
    (``gear_drag_increment``).
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    W_S_run, Vs, V_LOF = _liftoff(W_S, req, ac, air, cfg)
    V_avg = V_LOF / np.sqrt(2.0)
    a = air.speed_of_sound
    CL = req.ground_lift_coefficient
    CD = polar.CD(CL, V_avg / a, cfg) + _gear(ac)
    T_W = thrust_available(Y, V_avg, lapse(req, ac, V_avg, air), ac, air=air, field=True) / req.beta
    K_T = T_W - req.rolling_friction
    K_A = air.density / (2.0 * W_S_run) * (req.rolling_friction * CL - CD)
    S_G = ground_roll_distance(V_LOF, K_T, K_A)
    V_TR = TRANSITION_SPEED_RATIO * Vs
    CL_TR = polar.CLmax(cfg) / TRANSITION_SPEED_RATIO ** 2
    D_W = (polar.CD(CL_TR, V_TR / a, cfg) + _gear(ac)) / CL_TR
    sin_g = thrust_available(Y, V_TR, lapse(req, ac, V_TR, air), ac, air=air, field=True) / req.beta - D_W
    R = V_TR ** 2 / (g0 * (TRANSITION_LOAD_FACTOR - 1.0))
    return S_G + req.rotation_time * V_LOF + transition_climb_distance(sin_g, R, req.obstacle)


def takeoff_distance(W_S, req, ac):
    """Takeoff distance over an obstacle within ``distance`` (see :func:`takeoff_distance_of`)."""
    return by_margin(lambda Y: 1.0 - takeoff_distance_of(W_S, Y, req, ac) / req.distance, W_S,
                     guess=_guess(ac))


def minimum_climb_gradient(engines):
    """gamma_min of the balanced field length: 0.024, 0.027, 0.030 for 2, 3, 4 engines (Raymer,
    after the 14 CFR 25.121(b) second-segment minima), held flat outside."""
    return m.piecewise_linear(engines, [2.0, 3.0, 4.0], [0.024, 0.027, 0.030])


def average_takeoff_thrust(Y, req, ac, air):
    """Average all-engine takeoff thrust over weight T_av/W for the balanced field length [-].

    jets: T_av = 0.75 T_static (5 + lambda)/(4 + lambda), lambda the bypass ratio (Raymer
    Eq. 17.114); props: T_av = 5.75 P (sigma N D^2/P)^(1/3) in lbf, hp and ft (Eq. 17.115),
    in SI T_av = 5.75 (lbf/hp^(2/3)/ft^(2/3)) P^(2/3) (sigma N D^2)^(1/3).
    """
    alpha = lapse(req, ac, 0.0 * air.speed_of_sound, air)
    if ac.propeller_diameter is None and ac.engine_type in ("turboprop", "piston"):
        raise ValueError("the balanced field length of a propeller aircraft needs propulsion.propeller_diameter")
    if ac.engine_type in ("turboprop", "piston"):
        W = ac.takeoff_mass * g0
        P = Y * alpha * W                                  # [W]
        K = 4.4482216152605 * 5.75 / (745.69987 ** (2.0 / 3.0) * FT ** (2.0 / 3.0))
        T = K * m.power(P, 2.0 / 3.0) * m.power(air.density / RHO0 * ac.engines * ac.propeller_diameter ** 2,
                                                  1.0 / 3.0)
        return T / (req.beta * W)
    lam = ac.bypass_ratio
    return 0.75 * (5.0 + lam) / (4.0 + lam) * alpha * Y / req.beta


def balanced_field_of(W_S, Y, req, ac):
    """Balanced field length of a design [m] (Torenbeek via Raymer, :func:`balanced_field_length`).

    CL_climb = CLmax,TO/1.2^2; G = gamma_climb - gamma_min with sin gamma_climb = (T_OEI - D)/W at
    1.2 V_stall,TO, one engine out (its drag added), gear up; U = 0.01 CLmax,TO + 0.02.
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    W_S_run, Vs, _ = _liftoff(W_S, req, ac, air, cfg)
    CLmax = polar.CLmax(cfg)
    V2 = CLIMB_SPEED_RATIO * Vs
    CL2 = CLmax / CLIMB_SPEED_RATIO ** 2
    one_out = SimpleNamespace(engines_out=1.0)
    running, _ = engines_running(one_out, ac)
    D_W = (polar.CD(CL2, V2 / air.speed_of_sound, cfg) + engine_out_drag(one_out, ac)) / CL2
    T_W = thrust_available(Y, V2, lapse(req, ac, V2, air), ac, running, air, field=True) / req.beta
    G = m.asin(m.clip(T_W - D_W, -0.99, 0.99)) - minimum_climb_gradient(ac.engines)
    U = 0.01 * CLmax + 0.02
    return balanced_field_length(W_S_run, air.density, CL2, req.obstacle,
                                 average_takeoff_thrust(Y, req, ac, air), U, G)


def balanced_field(W_S, req, ac):
    """Balanced field length within ``balanced_field`` (see :func:`balanced_field_of`)."""
    return by_margin(lambda Y: 1.0 - balanced_field_of(W_S, Y, req, ac) / req.balanced_field, W_S,
                     guess=_guess(ac))


def _guess(ac):
    return 10.0 if ac.engine_type in ("turboprop", "piston") else 0.2


def landing(W_S, V, req, ac):
    """Landing in one of three forms, each a W_TO/S limit: ``ground_roll`` (free roll and braking,
    :func:`landing_wing_loading`), ``distance`` from the obstacle or ``field_length`` = distance/factor
    (14 CFR 121.195(b): 0.6), both :func:`landing_distance_wing_loading`."""
    air = condition(req)
    cfg = config_of(req, "landing")
    CLmax = ac.polar.CLmax(cfg)
    if getattr(req, "ground_roll", None) is not None:
        return Bound(wing_loading=landing_wing_loading(
            req.ground_roll, air.density, CLmax, req.braking_friction,
            req.beta, req.touchdown_speed_ratio, req.free_roll_time))
    S = req.distance if getattr(req, "distance", None) is not None else req.field_length * req.factor
    return Bound(wing_loading=landing_distance_wing_loading(
        S, air.density, CLmax, req.braking_friction, req.beta, req.touchdown_speed_ratio,
        req.free_roll_time, req.obstacle, req.approach_angle))

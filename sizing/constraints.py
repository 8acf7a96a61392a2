"""One constraint function per requirement kind.

Each kind function takes the design wing loading ``W_S`` = W_TO/S [N/m^2],
a flight speed ``V`` [m/s] (the free speed, for kinds that have one, else
``None``), the requirement ``req`` and the aircraft ``ac``, and returns a
:class:`Bound`: the required sea-level thrust-to-weight T_SL/W_TO [-] (for
propeller aircraft the required sea-level power-to-weight P_SL/W_TO [W/N]),
and/or an upper limit on W_TO/S [N/m^2].

The same function evaluates on numpy arrays (the constraint diagram) and on
CasADi symbols (the optimizer), so what the reviewer sees is what the
optimizer used. Requirement and aircraft values are SI and may themselves be
CasADi parameters.

Thrust kinds are built on the master equation (Mattingly Eq. 2.11):

    T_SL/W_TO = (beta/alpha) [ (q/(beta W/S)) (k1 (n beta W/S / q)^2
                + k2 (n beta W/S / q) + CD0) + Ps/V ]

with beta = W/W_TO, alpha the thrust lapse, q = rho V^2 / 2, Ps the
specific excess power [m/s]. For propeller aircraft the thrust needed at V
becomes sea-level power through T = eta_p P / V (Gudmundsson §3.2):

    P_SL/W_TO = (V / (eta_p alpha_P)) (T/W_TO needed at the condition).

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA,
   2002, §2.2, Eq. 2.11 and its special cases (Eqs. 2.12-2.20).
.. [G] Gudmundsson, S., *General Aviation Aircraft Design: Applied Methods
   and Procedures*, Elsevier, 2014, §3.2, Eqs. 3-1 to 3-7.
.. [R] Raymer, D. P., *Aircraft Design: A Conceptual Approach*, AIAA, Ch. 5
   (climb gradient with engines out, landing) and Ch. 17.
.. [CFR] 14 CFR 25.121 (climb gradients with one engine inoperative).
"""
from __future__ import annotations

from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

from . import _math as m
from .atmosphere import g0, isa
from .propulsion import is_propeller, thrust_lapse

FT_PER_MIN = 0.3048 / 60.0
SERVICE_CEILING_CLIMB_RATE = 100.0 * FT_PER_MIN   # 0.508 m/s, REFERENCES.md §2.5


@dataclass(frozen=True)
class Bound:
    """What one requirement asks of the design at a wing loading.

    thrust : required T_SL/W_TO [-] (P_SL/W_TO [W/N] for propeller aircraft), or None
    wing_loading : upper limit on W_TO/S [N/m^2], or None
    """

    thrust: object = None
    wing_loading: object = None


# --------------------------------------------------------------------------
# Published building blocks (pure SI; tested against worked examples)
# --------------------------------------------------------------------------

def master_equation(W_S, q, V, beta, alpha, CD0, k1, k2=0.0, n=1.0, Ps=0.0):
    """Sea-level thrust-to-weight from the master equation (Mattingly Eq. 2.11).

    T_SL/W_TO = (beta/alpha) [ (q/(beta W/S)) (k1 CL^2 + k2 CL + CD0) + Ps/V ],
    CL = n beta (W/S) / q.

    Parameters
    ----------
    W_S : wing loading W_TO/S [N/m^2]
    q : dynamic pressure [Pa]
    V : true airspeed [m/s]
    beta : weight fraction W/W_TO [-]
    alpha : thrust lapse T/T_SL [-]
    CD0, k1, k2 : polar coefficients [-]
    n : load factor [-]
    Ps : specific excess power [m/s]

    Examples
    --------
    Source: REFERENCES.md CC7 (Mattingly Eq. 2.11, self-defined inputs):
    turn n = 5 at M0.9, geometric 30 kft, W/S 64 lbf/ft^2, beta 0.78,
    K1 0.18, CD0 0.016, q = 357.022 lbf/ft^2, alpha = delta0 = 0.50324
    -> T_SL/W_TO = 1.15261 (units cancel, so lbf/ft^2 may be used).

    >>> round(float(master_equation(64.0, 357.022, 1.0, 0.78, 0.50324, 0.016, 0.18, n=5.0)), 4)
    1.1526
    """
    CL = n * beta * W_S / q
    return (beta / alpha) * ((q / (beta * W_S)) * (k1 * CL ** 2 + k2 * CL + CD0) + Ps / V)


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
    Source: REFERENCES.md CC8 (Gudmundsson Eq. 3-4 form): sea level,
    V_LOF 30 m/s, S_G 300 m, CD_TO 0.04, CL_TO 0.6, mu 0.04, W/S 1 500
    N/m^2 -> T/W = 0.19590.

    >>> round(float(takeoff_ground_roll_thrust(1500.0, 1.225, 30.0, 300.0, 0.04, 0.6, 0.04)), 5)
    0.1959
    """
    q = 0.5 * rho * V_LOF ** 2 / 2.0
    return V_LOF ** 2 / (2.0 * g0 * S_G) + q * CD_TO / W_S + mu * (1.0 - q * CL_TO / W_S)


def engine_out_climb_thrust(gradient, lift_to_drag, engines, engines_out=1):
    """Thrust-to-weight to climb at a gradient with engines out (Raymer Ch. 5).

    T/W = (N/(N - N_out)) (G + 1/(L/D))

    Examples
    --------
    Source: REFERENCES.md CC3 (14 CFR 25.121(b) second segment, twin,
    G = 2.4 %, L/D = 10) -> T/W = 0.248.

    >>> round(engine_out_climb_thrust(0.024, 10.0, 2), 6)
    0.248
    """
    return engines / (engines - engines_out) * (gradient + 1.0 / lift_to_drag)


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


# --------------------------------------------------------------------------
# Flight condition helpers
# --------------------------------------------------------------------------

def condition(req):
    """Atmosphere of a requirement's altitude and temperature offset."""
    return isa(req.altitude, req.temperature_offset)


def fixed_speed(req, air):
    """True airspeed [m/s] of a requirement given by ``mach`` or ``speed``."""
    if getattr(req, "mach", None) is not None:
        return req.mach * air.speed_of_sound
    return req.speed


def lapse(req, ac, V, air, throttle=1.0):
    """Available fraction of sea-level thrust (jets) or power (props) at V."""
    alpha = getattr(req, "thrust_lapse", None)
    if alpha is None:
        M = V / air.speed_of_sound
        alpha = thrust_lapse(ac.engine_type, req.altitude, M, req.temperature_offset,
                             ac.throttle_ratio, ac.afterburner)
    return alpha * throttle


def to_sea_level(t, V, alpha, ac):
    """Turn the thrust needed at a condition (T/W_TO) into the diagram's axis.

    jets: T_SL/W_TO = t / alpha;  props: P_SL/W_TO = t V / (eta_p alpha) [W/N].
    """
    if is_propeller(ac.engine_type):
        return t * V / (ac.propeller_efficiency * alpha)
    return t / alpha


def flight_thrust(W_S, V, req, ac, air, n=1.0, Ps=0.0, config="clean", throttle=1.0):
    """Required T_SL/W_TO (or P_SL/W_TO) to fly at V with load factor n and Ps."""
    q = 0.5 * air.density * V ** 2
    M = V / air.speed_of_sound
    polar = ac.polar
    t = master_equation(W_S, q, V, req.beta, 1.0, polar.CD0(M, config), polar.K1(M),
                        polar.k2, n, Ps)
    return to_sea_level(t, V, lapse(req, ac, V, air, throttle), ac)


def lift_limit(V, req, ac, air, n=1.0, config="clean"):
    """W_TO/S at which CL = CLmax when pulling n at V: q CLmax / (n beta) [N/m^2]."""
    q = 0.5 * air.density * V ** 2
    return q * ac.polar.CLmax(config) / (n * req.beta)


def config_of(req, default="clean"):
    return getattr(req, "config", None) or default


# --------------------------------------------------------------------------
# Requirement kinds
# --------------------------------------------------------------------------

def stall_speed(W_S, V, req, ac):
    """W_TO/S <= rho V_s^2 CLmax / (2 beta) (lift equation; Raymer §5.3, Gudmundsson Eq. 3-7)."""
    air = condition(req)
    Vs = fixed_speed(req, air)
    return Bound(wing_loading=lift_limit(Vs, req, ac, air, 1.0, config_of(req)))


def sustained_turn(W_S, V, req, ac):
    """Master equation with n, Ps = 0 (Mattingly Eq. 2.11, constant-speed turn case)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, n=req.load_factor, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, req.load_factor, cfg))


def max_mach(W_S, V, req, ac):
    """Level flight at full throttle, Ps = 0 (Mattingly Eq. 2.11, cruise case)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))


def ceiling(W_S, V, req, ac):
    """Ps = climb rate (100 ft/min default) at the best speed V (free) (Mattingly Eq. 2.11; Gudmundsson Eq. 3-6)."""
    air = condition(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=config_of(req)))


def climb(W_S, V, req, ac):
    """Ps = climb rate at a given speed, or at the best speed (Gudmundsson Eq. 3-3)."""
    air = condition(req)
    cfg = config_of(req)
    if V is None:
        V = fixed_speed(req, air)
        return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=cfg),
                     wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, Ps=req.climb_rate, config=cfg))


def excess_power(W_S, V, req, ac):
    """Ps requirement at load factor n and a given speed (Mattingly Eq. 2.11; Gudmundsson Eq. 3-2)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, n=req.load_factor,
                                      Ps=req.excess_power, config=cfg),
                 wing_loading=lift_limit(V, req, ac, air, req.load_factor, cfg))


def cruise(W_S, V, req, ac):
    """Level flight at partial throttle (Mattingly Eq. 2.11 cruise case; Gudmundsson Eq. 3-5)."""
    air = condition(req)
    V = fixed_speed(req, air)
    cfg = config_of(req)
    return Bound(thrust=flight_thrust(W_S, V, req, ac, air, config=cfg, throttle=req.throttle),
                 wing_loading=lift_limit(V, req, ac, air, 1.0, cfg))


def instantaneous_turn(W_S, V, req, ac):
    """W_TO/S <= q CLmax / (n beta) (lift limit at the turn's speed; Raymer §5.3)."""
    air = condition(req)
    V = fixed_speed(req, air)
    return Bound(wing_loading=lift_limit(V, req, ac, air, req.load_factor, config_of(req)))


def takeoff(W_S, V, req, ac):
    """Ground run with V_LOF = k V_stall,TO (Gudmundsson Eq. 3-4; props at V_LOF/sqrt(2)).

    The run is flown at weight fraction beta: the equation is written per
    unit of the takeoff weight beta W_TO and multiplied by beta/alpha, with
    alpha (and for props the thrust T = eta_p P/V) taken at V_LOF/sqrt(2).
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    W_S_run = req.beta * W_S
    V_LOF = req.liftoff_speed_ratio * m.sqrt(2.0 * W_S_run / (air.density * polar.CLmax(cfg)))
    V_avg = V_LOF / np.sqrt(2.0)
    M_avg = V_avg / air.speed_of_sound
    CL = req.ground_lift_coefficient
    CD = polar.CD(CL, M_avg, cfg)
    t = req.beta * takeoff_ground_roll_thrust(W_S_run, air.density, V_LOF, req.ground_roll,
                                              CD, CL, req.rolling_friction)
    alpha = lapse(req, ac, V_avg, air)
    return Bound(thrust=to_sea_level(t, V_avg, alpha, ac))


def landing(W_S, V, req, ac):
    """W_TO/S upper limit from the braking ground roll (see :func:`landing_wing_loading`)."""
    air = condition(req)
    cfg = config_of(req, "landing")
    return Bound(wing_loading=landing_wing_loading(
        req.ground_roll, air.density, ac.polar.CLmax(cfg), req.braking_friction,
        req.beta, req.touchdown_speed_ratio, req.free_roll_time))


def climb_gradient(W_S, V, req, ac):
    """Steady climb gradient with engines out at k V_stall (Raymer Ch. 5; 14 CFR 25.121).

    T_SL/W_TO = (N/(N - N_out)) (beta/alpha) (G + CD/CL), CL = CLmax/k^2.
    """
    air = condition(req)
    cfg = config_of(req, "takeoff")
    polar = ac.polar
    CL = polar.CLmax(cfg) / req.speed_ratio ** 2
    V = req.speed_ratio * m.sqrt(2.0 * req.beta * W_S / (air.density * polar.CLmax(cfg)))
    M = V / air.speed_of_sound
    LD = CL / polar.CD(CL, M, cfg)
    t = req.beta * engine_out_climb_thrust(req.gradient, LD, ac.engines, req.engines_out)
    alpha = lapse(req, ac, V, air)
    return Bound(thrust=to_sea_level(t, V, alpha, ac))


@dataclass(frozen=True)
class Kind:
    """A requirement kind: its function, free-speed rule and headline value."""

    function: object
    free_speed: str        # "never" | "always" | "if-no-speed"
    value_field: str       # the field whose sensitivity is reported
    load_factor_field: str = ""   # field holding n for the free-speed stall bound
    reference: str = ""

    def has_free_speed(self, req) -> bool:
        if self.free_speed == "always":
            return True
        if self.free_speed == "if-no-speed":
            return getattr(req, "speed", None) is None and getattr(req, "mach", None) is None
        return False


KINDS = {
    "stall-speed": Kind(stall_speed, "never", "speed", reference="lift equation; Raymer §5.3"),
    "sustained-turn": Kind(sustained_turn, "never", "load_factor", reference="Mattingly Eq. 2.11"),
    "max-mach": Kind(max_mach, "never", "mach", reference="Mattingly Eq. 2.11"),
    "ceiling": Kind(ceiling, "always", "altitude", reference="Mattingly Eq. 2.11; Gudmundsson Eq. 3-6"),
    "climb": Kind(climb, "if-no-speed", "climb_rate", reference="Gudmundsson Eq. 3-3"),
    "excess-power": Kind(excess_power, "never", "excess_power", reference="Mattingly Eq. 2.11"),
    "cruise": Kind(cruise, "never", "speed", reference="Mattingly Eq. 2.11; Gudmundsson Eq. 3-5"),
    "instantaneous-turn": Kind(instantaneous_turn, "never", "load_factor", reference="lift equation"),
    "takeoff": Kind(takeoff, "never", "ground_roll", reference="Gudmundsson Eq. 3-4"),
    "landing": Kind(landing, "never", "ground_roll", reference="Mattingly §2.2.9; Raymer Ch. 17"),
    "climb-gradient": Kind(climb_gradient, "never", "gradient", reference="Raymer Ch. 5; 14 CFR 25.121"),
}


def evaluate(req, ac, W_S, V=None) -> Bound:
    """Evaluate a requirement's constraint at W_S (and its free speed V)."""
    return KINDS[req.kind].function(W_S, V, req, ac)


def free_speed_range(req, ac, W_S):
    """Lowest and highest free speed [m/s] at W_S: stall (CLmax of the
    requirement's configuration) and the speed limit / polar Mach table."""
    air = condition(req)
    n = 1.0
    V_lo = m.sqrt(2.0 * n * req.beta * W_S / (air.density * ac.polar.CLmax(config_of(req))))
    V_hi = max_free_speed(ac, air)
    return V_lo, V_hi


def max_free_speed(ac, air):
    """Upper bound on a free speed at a condition [m/s]."""
    a = air.speed_of_sound
    tops = []
    if ac.speed_limit_mach is not None:
        tops.append(ac.speed_limit_mach * a)
    if ac.speed_limit_speed is not None:
        tops.append(ac.speed_limit_speed + 0.0 * a)
    if np.isfinite(ac.polar.mach_max):
        tops.append(ac.polar.mach_max * a)
    if not tops:
        tops.append(0.95 * a)     # no limit given: stay subsonic-ish by default
    V = tops[0]
    for t in tops[1:]:
        V = m.fmin(V, t)
    return V


def required_curve(req, ac, W_S, samples=240, refine=40):
    """Numpy curve of a requirement over an array of wing loadings.

    Returns (thrust, wing_loading_limit, best_speed): required T_SL/W_TO (or
    P_SL/W_TO) per W_S, minimised over the free speed where the kind has one
    (dense scan from stall to the speed limit, then golden-section
    refinement); ``inf`` where no speed works; None where the kind sets no
    such bound. ``req.beta`` may be a number or an array over ``W_S``.
    """
    W_S = np.atleast_1d(np.asarray(W_S, dtype=float))
    kind = KINDS[req.kind]
    if not kind.has_free_speed(req):
        b = evaluate(req, ac, W_S)
        thrust = None if b.thrust is None else np.broadcast_to(np.asarray(b.thrust, float), W_S.shape).copy()
        wsl = None if b.wing_loading is None else np.broadcast_to(np.asarray(b.wing_loading, float), W_S.shape).copy()
        return thrust, wsl, None
    V_lo, V_hi = free_speed_range(req, ac, W_S)
    V_lo = np.broadcast_to(np.asarray(V_lo, float), W_S.shape)
    V_hi = np.broadcast_to(np.asarray(V_hi, float), W_S.shape)
    ok = V_hi >= V_lo
    u = np.linspace(0.0, 1.0, samples)
    V = V_lo[:, None] + u[None, :] * np.maximum(V_hi - V_lo, 0.0)[:, None]

    beta = np.asarray(req.beta, dtype=float)
    req2 = req
    if beta.ndim and beta.size > 1:       # a weight fraction per wing loading (mission `after:`)
        req2 = SimpleNamespace(**{**vars(req), "beta": beta.reshape(-1)[:, None]})

    def f(Vx):
        if Vx.ndim == 2:
            return np.asarray(evaluate(req2, ac, W_S[:, None], Vx).thrust, float)
        return np.asarray(evaluate(req, ac, W_S, Vx).thrust, float)

    T = f(V)
    T = np.where(np.isfinite(T) & (T > 0), T, np.inf)
    j = np.argmin(T, axis=1)
    rows = np.arange(W_S.size)
    a = V[rows, np.maximum(j - 1, 0)]
    b = V[rows, np.minimum(j + 1, samples - 1)]
    phi = (np.sqrt(5.0) - 1.0) / 2.0
    for _ in range(refine):
        c = b - phi * (b - a)
        d = a + phi * (b - a)
        fc, fd = f(c), f(d)
        left = fc < fd
        b = np.where(left, d, b)
        a = np.where(left, a, c)
    V_best = 0.5 * (a + b)
    T_best = np.minimum(f(V_best), T[rows, j])
    V_best = np.where(f(V_best) <= T[rows, j], V_best, V[rows, j])
    T_best = np.where(ok, T_best, np.inf)
    return T_best, None, V_best

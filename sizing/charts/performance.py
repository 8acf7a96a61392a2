"""A sized design flown on paper: specific excess power, sustained load factor, speed ranges
and ceilings over altitude and Mach (numpy, SI).

For a design (W_TO/S, T_SL/W_TO or P_SL/W_TO, the drag polar with its Mach
tables, the thrust or power lapse) the specific excess power at W = beta W_TO

    Ps = V (T - D)/W = (V/beta) (T/W_TO - q CD(CL, M)/(W_TO/S)),  CL = n beta (W_TO/S)/q

(Mattingly Eq. 2.11, Ps term); T/W_TO = alpha Y (jets) or eta_p alpha Y/V
(propellers), alpha from :func:`sizing.constraints.lapse`, the polar the
constraints use: Ps here is the Ps at which
:func:`sizing.constraints.flight_thrust` returns the design's Y.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002,
   §2.2, Eq. 2.11 (Ps = dh/dt + (V/g0) dV/dt = V (T - D - R)/W).
.. [A] Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §5.4
   (absolute and service ceilings) and §5.10 (specific excess power).
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

from .. import constraints as C
from ..physics.atmosphere import H_MAX, isa
from ..physics.propulsion import is_propeller

# -- Physics (numpy, SI) -------------------------------------------------------------------------

@dataclass(frozen=True)
class Conditions:
    """How a condition is flown: weight fraction beta [-], ISA offset [K], thrust (power) lapse
    given by hand (None: the propulsion model), configuration, throttle [-]."""

    beta: float = 1.0
    temperature_offset: float = 0.0
    thrust_lapse: float | None = None
    config: str = "clean"
    throttle: float = 1.0
    engines_out: float = 0.0           # inoperative engines: thrust of the others, their drag added
    min_speed_factor: float = 1.0      # speeds at least this multiple of the stall speed
    buffet: bool = False               # speeds where CL x buffet margin <= CL_buffet only


def _state(Y, ac, altitude, mach, cond):
    """(V [m/s], q [Pa], T/W_TO [-]) at full (or the given) throttle."""
    h, Mn = np.asarray(altitude, dtype=float), np.asarray(mach, dtype=float)
    air = isa(h, cond.temperature_offset)
    V = Mn * air.speed_of_sound
    req = SimpleNamespace(altitude=h, temperature_offset=cond.temperature_offset, thrust_lapse=cond.thrust_lapse)
    alpha = C.lapse(req, ac, V, air, cond.throttle)
    N = getattr(ac, "engines", 1.0)
    running = (N - cond.engines_out) / N
    T_W = (ac.propeller_efficiency * alpha * Y / V if is_propeller(ac.engine_type) else alpha * Y) * running
    return V, 0.5 * air.density * V ** 2, T_W


def specific_excess_power(W_S, Y, ac, altitude, mach, n=1.0, cond=Conditions()):
    """Specific excess power Ps = V (T - D) / W of a design [m/s].

    Ps = (V/beta) (T/W_TO - q CD(CL, M)/(W_TO/S)),  CL = n beta (W_TO/S)/q; valid inside the
    polar's Mach tables and up to CLmax (the envelope keeps to both).

    Parameters
    ----------
    W_S : wing loading W_TO/S [N/m^2]; Y : T_SL/W_TO [-] or, for propeller aircraft, P_SL/W_TO [W/N]
    ac : aircraft view (:func:`sizing.model.aircraft`); cond : :class:`Conditions`
    altitude : pressure altitude [m]; mach [-]; n : load factor [-] (arrays broadcast)

    Examples
    --------
    Hand calculation (Mattingly Eq. 2.11 solved for Ps): W/S 3000 N/m^2,
    T_SL/W_TO 0.6, alpha given 0.5, sea level (rho 1.225, a 340.294 m/s),
    M 0.5 -> V 170.147 m/s, q 17 731.9 Pa, CL 0.169186; CD0 0.02, k1 0.1 ->
    CD 0.0228624, D/W 0.135131; Ps = 170.147 (0.3 - 0.135131) = 28.052 m/s.

    >>> from sizing.physics.aero import DragPolar
    >>> ac = SimpleNamespace(polar=DragPolar(cd0=0.02, k1=0.1), engine_type="turbojet",
    ...                      throttle_ratio=1.0, afterburner=False, propeller_efficiency=0.8)
    >>> round(float(specific_excess_power(3000.0, 0.6, ac, 0.0, 0.5, cond=Conditions(thrust_lapse=0.5))), 3)
    28.052
    """
    V, q, T_W = _state(Y, ac, altitude, mach, cond)
    CL = n * cond.beta * W_S / q
    CD = ac.polar.CD(CL, np.asarray(mach, dtype=float), cond.config) + _engine_out_drag(ac, cond)
    return V * (T_W - q * CD / W_S) / cond.beta


def _engine_out_drag(ac, cond):
    return cond.engines_out * getattr(ac, "engine_out_drag_increment", 0.0)


def sustained_load_factor(W_S, Y, ac, altitude, mach, cond=Conditions(), Ps=0.0):
    """Thrust-limited load factor at which the design still has Ps [-] (NaN: none).

    k1 CL^2 + k2 CL + CD0 = (T/W_TO - beta Ps/V)(W_TO/S)/q, positive root;
    n = CL q/(beta W_TO/S). The lift limit is in :meth:`Flight.load_factor`.

    Examples
    --------
    Hand calculation, the case of :func:`specific_excess_power` at Ps = 0:
    CD0 + k1 CL^2 = 0.3 x 3000/17 731.9 = 0.050756 -> CL 0.554581 -> n 3.2779.

    >>> from sizing.physics.aero import DragPolar
    >>> ac = SimpleNamespace(polar=DragPolar(cd0=0.02, k1=0.1), engine_type="turbojet",
    ...                      throttle_ratio=1.0, afterburner=False, propeller_efficiency=0.8)
    >>> round(float(sustained_load_factor(3000.0, 0.6, ac, 0.0, 0.5, Conditions(thrust_lapse=0.5))), 4)
    3.2779
    """
    Mn = np.asarray(mach, dtype=float)
    V, q, T_W = _state(Y, ac, altitude, Mn, cond)
    c = (T_W - cond.beta * Ps / V) * W_S / q - ac.polar.CD0(Mn, cond.config) - _engine_out_drag(ac, cond)
    k1, k2 = ac.polar.K1(Mn), ac.polar.k2
    disc = k2 ** 2 + 4.0 * k1 * c
    CL = (-k2 + np.sqrt(np.where(disc >= 0, disc, np.nan))) / (2.0 * k1)
    return CL * q / (cond.beta * W_S)


# -- Vectorised root finding and maximisation ----------------------------------------------------

def take(X, j):
    return np.take_along_axis(X, j[..., None], axis=-1)[..., 0]


def edge(pred, a, b, rising, points=33, passes=6):
    """Refine brackets [a, b] (arrays) to where a boolean predicate changes: rising, False at a and
    True at b (the lowest True x); else the highest True x. Each pass shrinks them (points-1)-fold."""
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    t = np.linspace(0.0, 1.0, points)
    for _ in range(passes):
        X = a[..., None] + (b - a)[..., None] * t
        ok = np.asarray(pred(X), dtype=bool)
        if rising:
            j = np.where(ok.any(axis=-1), np.argmax(ok, axis=-1), points - 1)
            a, b = take(X, np.maximum(j - 1, 0)), take(X, j)
        else:
            j = np.where(ok.any(axis=-1), points - 1 - np.argmax(ok[..., ::-1], axis=-1), 0)
            a, b = take(X, j), take(X, np.minimum(j + 1, points - 1))
    return b if rising else a


def maximise(f, lo, hi, samples=121, iterations=36):
    """(max of f over [lo, hi], x at it) elementwise: scan, then golden section; NaN if hi <= lo."""
    lo, hi = np.asarray(lo, dtype=float), np.asarray(hi, dtype=float)
    X = lo[..., None] + np.maximum(hi - lo, 0.0)[..., None] * np.linspace(0.0, 1.0, samples)
    F = f(X)
    F = np.where(np.isfinite(F), F, -np.inf)
    j = np.argmax(F, axis=-1)
    a, b = take(X, np.maximum(j - 1, 0)), take(X, np.minimum(j + 1, samples - 1))
    phi = (math.sqrt(5.0) - 1.0) / 2.0
    for _ in range(iterations):
        c, d = b - phi * (b - a), a + phi * (b - a)
        left = f(c[..., None])[..., 0] > f(d[..., None])[..., 0]
        a, b = np.where(left, a, c), np.where(left, d, b)
    x = 0.5 * (a + b)
    fx = f(x[..., None])[..., 0]
    better = fx >= take(F, j)
    x, fx = np.where(better, x, take(X, j)), np.where(better, fx, take(F, j))
    empty = ~(hi > lo)
    return np.where(empty, np.nan, fx), np.where(empty, np.nan, x)


# -- One design flown at one set of conditions ---------------------------------------------------

class Flight:
    """A design (W_TO/S, Y) flown at :class:`Conditions`: Ps, speed ranges, ceilings."""

    def __init__(self, W_S, Y, ac, cond=Conditions(), mach_top=None):
        self.W_S, self.Y, self.ac, self.cond = float(W_S), float(Y), ac, cond
        self.mach_top = mach_top if mach_top is not None else domain_mach(ac)

    def ps(self, h, Mn, n=1.0):
        """Ps [m/s] at altitude h [m], Mach Mn, load factor n."""
        with np.errstate(invalid="ignore", divide="ignore"):
            return specific_excess_power(self.W_S, self.Y, self.ac, h, Mn, n, self.cond)

    def mach_lift(self, h, n=1.0):
        """Lowest Mach with CL <= CLmax (config) when pulling n (times the conditions' min_speed_factor)."""
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        rho_CL = air.density * self.ac.polar.CLmax(self.cond.config)
        return self.cond.min_speed_factor * np.sqrt(2.0 * n * self.cond.beta * self.W_S / rho_CL) / air.speed_of_sound

    def buffet_free(self, h, Mn, n=1.0):
        """True where CL x buffet margin <= CL_buffet(M) (always True unless the conditions ask)."""
        if not self.cond.buffet or getattr(self.ac, "cl_buffet", None) is None:
            return np.ones(np.broadcast_shapes(np.shape(h), np.shape(Mn)), dtype=bool)
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        Mn = np.asarray(Mn, dtype=float)
        q = 0.5 * air.density * (Mn * air.speed_of_sound) ** 2
        CLb = self.ac.cl_buffet(Mn) if callable(self.ac.cl_buffet) else self.ac.cl_buffet + 0.0 * Mn
        return n * self.cond.beta * self.W_S / q * self.ac.buffet_margin <= CLb

    def mach_limit(self, h):
        """Highest Mach of a free speed (speed limit, polar table): the solver's bound."""
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        return C.max_free_speed(self.ac, air) / air.speed_of_sound + 0.0 * air.density

    def best(self, h, n=1.0, top="limit"):
        """(max Ps over Mach, Mach at it) from the lift limit to ``top``:
        "limit" (the solver's free-speed bound) or "domain" (the grid's top)."""
        h = np.asarray(h, dtype=float)
        hi = self.mach_limit(h) if top == "limit" else np.full_like(h, self.mach_top)

        def f(X):
            ps = self.ps(h[..., None], X, n)
            return np.where(self.buffet_free(h[..., None], X, n), ps, -np.inf) if self.cond.buffet else ps

        return maximise(f, self.mach_lift(h, n), hi)

    def ceiling(self, target=0.0, n=1.0, top="limit", floor=0.0):
        """Highest altitude where max over Mach of Ps(n) >= target: (h [m], Mach), or None."""
        def ok(H):
            return self.best(H, n, top)[0] >= target

        grid = np.concatenate([np.linspace(floor, 40000.0, 81)[:-1], np.linspace(40000.0, H_MAX - 1.0, 41)])
        good = ok(grid)
        if not good[0] or good[-1]:
            return None if not good[0] else (float(grid[-1]), float(self.best(np.array(grid[-1]), n, top)[1]))
        j = len(good) - 1 - int(np.argmax(good[::-1]))
        h = float(edge(ok, np.array(grid[j]), np.array(grid[j + 1]), rising=False))
        return h, float(self.best(np.array(h), n, top)[1])

    def speed_range(self, h, n=1.0, target=0.0, samples=161):
        """(lo, hi, lo_is_lift, hi_is_domain) Mach over h where Ps(n) >= target and CL <= CLmax, up to
        the grid top; NaN where no Mach works; the outermost roots (Ps may dip in between)."""
        h = np.atleast_1d(np.asarray(h, dtype=float))
        lo0, hi0 = self.mach_lift(h, n), np.full_like(h, self.mach_top)
        X = lo0[:, None] + np.maximum(hi0 - lo0, 0.0)[:, None] * np.linspace(0.0, 1.0, samples)
        ok = self.ps(h[:, None], X, n) >= target
        some = ok.any(axis=1) & (hi0 > lo0)
        j1, j2 = np.argmax(ok, axis=1), samples - 1 - np.argmax(ok[:, ::-1], axis=1)
        lo_is_lift, hi_is_domain = some & (j1 == 0), some & (j2 == samples - 1)

        def good(Xs):
            return self.ps(h[:, None], Xs, n) >= target

        lo = edge(good, take(X, np.maximum(j1 - 1, 0)), take(X, j1), rising=True)
        hi = edge(good, take(X, j2), take(X, np.minimum(j2 + 1, samples - 1)), rising=False)
        lo = np.where(some, np.where(lo_is_lift, lo0, lo), np.nan)
        hi = np.where(some, np.where(hi_is_domain, hi0, hi), np.nan)
        return lo, hi, lo_is_lift, hi_is_domain

    def max_mach(self, h):
        """(flyable max level Mach, thrust-limited max Mach, what limits it, text) at h [m]."""
        _, hi, _, at_top = self.speed_range(np.array([h], dtype=float))
        top, fly = float(hi[0]), min(float(hi[0]), float(self.mach_limit(h)))
        by = "speed limit" if fly < top else ("end of the drag table" if at_top[0] else "thrust")
        more = "" if by == "thrust" else f"; thrust allows M {top:.3f}{'+' if at_top[0] else ''}"
        return fly, top, by, f"M {fly:.3f} ({by}{more})"

    def load_factor(self, h, Mn):
        """(thrust-limited sustained n, lift-limited n) at altitude h [m] and Mach Mn."""
        with np.errstate(invalid="ignore"):
            n_t = sustained_load_factor(self.W_S, self.Y, self.ac, h, Mn, self.cond)
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        q = 0.5 * air.density * (np.asarray(Mn, dtype=float) * air.speed_of_sound) ** 2
        return n_t, q * self.ac.polar.CLmax(self.cond.config) / (self.cond.beta * self.W_S)

    def boundary(self, h, n=1.0, target=0.0, label=""):
        """The :class:`Boundary` of {Ps(n) >= target, CL <= CLmax} over altitudes h."""
        lo, hi, lo_l, hi_d = self.speed_range(h, n, target)
        top, ok = None, np.nonzero(np.isfinite(lo))[0]
        if len(ok) and ok[-1] < len(h) - 1:
            def some(H):
                return self.best(H, n, "domain")[0] >= target
            ht = float(edge(some, np.array(h[ok[-1]]), np.array(h[ok[-1] + 1]), rising=False))
            top = (ht, float(self.best(np.array(ht), n, "domain")[1]))
        return Boundary(label, float(n), float(target), self.cond, h, lo, hi, lo_l, hi_d, top)


def domain_mach(ac) -> float:
    """Top Mach of the envelope: the polar's table end (no extrapolation of drag data);
    for a constant polar (no drag rise) 1.15 x the highest speed-limit Mach over
    0-20 km (M 0.95 is the solver's default bound), at most M 1."""
    if math.isfinite(ac.polar.mach_max):
        return float(ac.polar.mach_max)
    air = isa(np.linspace(0.0, 20000.0, 21))
    return float(min(1.0, 1.15 * float(np.max(C.max_free_speed(ac, air) / air.speed_of_sound))))


# -- Result objects ------------------------------------------------------------------------------

@dataclass(frozen=True)
class Boundary:
    """Edges lo, hi [Mach] of {Ps(n) >= target, CL <= CLmax} over altitude [m] (NaN: empty); lo_is_lift,
    hi_is_domain flag edges set by CLmax or the grid top; top = (altitude, Mach) where it closes, or None."""

    label: str
    n: float
    target: float
    cond: Conditions
    altitude: np.ndarray
    lo: np.ndarray
    hi: np.ndarray
    lo_is_lift: np.ndarray
    hi_is_domain: np.ndarray
    top: tuple | None

    def line(self, drop_lift=False, drop_domain=True):
        """(mach, altitude) up the low edge, over the top and down the high edge;
        CLmax and grid-top parts optionally left out (NaN gaps)."""
        ok, t = np.isfinite(self.hi), [] if self.top is None else [self.top]
        lo = np.where(drop_lift & self.lo_is_lift, np.nan, self.lo)[ok]
        hi, h = np.where(drop_domain & self.hi_is_domain, np.nan, self.hi)[ok], self.altitude[ok]
        return np.concatenate([lo, [p[1] for p in t], hi[::-1]]), np.concatenate([h, [p[0] for p in t], h[::-1]])

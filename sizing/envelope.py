"""Envelope check of the sized design: where in altitude and Mach it can fly.

For the solved design (W_TO/S, T_SL/W_TO or P_SL/W_TO, the drag polar with its
Mach tables, the thrust or power lapse) the specific excess power at W = beta W_TO

    Ps = V (T - D)/W = (V/beta) (T/W_TO - q CD(CL, M)/(W_TO/S)),  CL = n beta (W_TO/S)/q

(Mattingly Eq. 2.11, Ps term) is evaluated over altitude and Mach at 1 g and
higher load factors; T/W_TO = alpha Y (jets) or eta_p alpha Y/V (propellers),
alpha from :func:`sizing.constraints.lapse`, the polar the constraints use: Ps
here is the Ps at which :func:`sizing.constraints.flight_thrust` returns the
design's Y (tested to 1e-9). From it: the 1 g level-flight region (Ps = 0 and
the CLmax clean stall line), sustained load-factor boundaries (Ps = 0 at n g),
Ps contours, absolute (Ps = 0) and service (100 ft/min) ceilings, top speeds,
and every requirement at its own conditions (weight fraction, temperature,
lapse, configuration, throttle) with its margin.

:func:`compute_envelope` (numpy) -> :class:`Envelope` (arrays, table,
``.to_frame()``) -> :func:`plot_envelope` (matplotlib imported lazily, Agg, no
pyplot state); :func:`run_envelope` for the CLI, :func:`report_section` for the
review report.

References
----------
.. [M] Mattingly, Heiser, Pratt, *Aircraft Engine Design*, 2nd ed., AIAA, 2002,
   §2.2, Eq. 2.11 (Ps = dh/dt + (V/g0) dV/dt = V (T - D - R)/W).
.. [A] Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §5.4
   (absolute and service ceilings) and §5.10 (specific excess power).
"""
from __future__ import annotations

import io
import math
import textwrap
from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

from . import constraints as C
from . import model as M
from .atmosphere import H_MAX, isa
from .errors import InputError
from .fileio import atomic_write
from .propulsion import is_propeller
from .report import CAUTION

FT = 0.3048
KN = 1852.0 / 3600.0
FPM = FT / 60.0
SERVICE_CLIMB_RATE = C.SERVICE_CEILING_CLIMB_RATE      # 100 ft/min = 0.508 m/s
ON_BOUNDARY_TOL = 1e-4     # relative: a capability this close to its requirement sits on its boundary
_SUFFIXES = (".png", ".svg", ".pdf")
_DEFAULT_CONFIG = {"takeoff": "takeoff", "climb-gradient": "takeoff", "landing": "landing"}
_OWN_BOUNDARY = ("sustained-turn", "excess-power", "max-mach", "cruise", "ceiling", "climb")


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


def _state(Y, ac, altitude, mach, cond):
    """(V [m/s], q [Pa], T/W_TO [-]) at full (or the given) throttle."""
    h, Mn = np.asarray(altitude, dtype=float), np.asarray(mach, dtype=float)
    air = isa(h, cond.temperature_offset)
    V = Mn * air.speed_of_sound
    req = SimpleNamespace(altitude=h, temperature_offset=cond.temperature_offset, thrust_lapse=cond.thrust_lapse)
    alpha = C.lapse(req, ac, V, air, cond.throttle)
    T_W = ac.propeller_efficiency * alpha * Y / V if is_propeller(ac.engine_type) else alpha * Y
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

    >>> from sizing.aero import DragPolar
    >>> ac = SimpleNamespace(polar=DragPolar(cd0=0.02, k1=0.1), engine_type="turbojet",
    ...                      throttle_ratio=1.0, afterburner=False, propeller_efficiency=0.8)
    >>> round(float(specific_excess_power(3000.0, 0.6, ac, 0.0, 0.5, cond=Conditions(thrust_lapse=0.5))), 3)
    28.052
    """
    V, q, T_W = _state(Y, ac, altitude, mach, cond)
    CL = n * cond.beta * W_S / q
    return V * (T_W - q * ac.polar.CD(CL, np.asarray(mach, dtype=float), cond.config) / W_S) / cond.beta


def sustained_load_factor(W_S, Y, ac, altitude, mach, cond=Conditions(), Ps=0.0):
    """Thrust-limited load factor at which the design still has Ps [-] (NaN: none).

    k1 CL^2 + k2 CL + CD0 = (T/W_TO - beta Ps/V)(W_TO/S)/q, positive root;
    n = CL q/(beta W_TO/S). The lift limit is in :meth:`Flight.load_factor`.

    Examples
    --------
    Hand calculation, the case of :func:`specific_excess_power` at Ps = 0:
    CD0 + k1 CL^2 = 0.3 x 3000/17 731.9 = 0.050756 -> CL 0.554581 -> n 3.2779.

    >>> from sizing.aero import DragPolar
    >>> ac = SimpleNamespace(polar=DragPolar(cd0=0.02, k1=0.1), engine_type="turbojet",
    ...                      throttle_ratio=1.0, afterburner=False, propeller_efficiency=0.8)
    >>> round(float(sustained_load_factor(3000.0, 0.6, ac, 0.0, 0.5, Conditions(thrust_lapse=0.5))), 4)
    3.2779
    """
    Mn = np.asarray(mach, dtype=float)
    V, q, T_W = _state(Y, ac, altitude, Mn, cond)
    c = (T_W - cond.beta * Ps / V) * W_S / q - ac.polar.CD0(Mn, cond.config)
    k1, k2 = ac.polar.K1(Mn), ac.polar.k2
    disc = k2 ** 2 + 4.0 * k1 * c
    CL = (-k2 + np.sqrt(np.where(disc >= 0, disc, np.nan))) / (2.0 * k1)
    return CL * q / (cond.beta * W_S)


# -- Vectorised root finding and maximisation ----------------------------------------------------

def _take(X, j):
    return np.take_along_axis(X, j[..., None], axis=-1)[..., 0]


def _edge(pred, a, b, rising, points=33, passes=6):
    """Refine brackets [a, b] (arrays) to where a boolean predicate changes: rising, False at a and
    True at b (the lowest True x); else the highest True x. Each pass shrinks them (points-1)-fold."""
    a, b = np.array(a, dtype=float), np.array(b, dtype=float)
    t = np.linspace(0.0, 1.0, points)
    for _ in range(passes):
        X = a[..., None] + (b - a)[..., None] * t
        ok = np.asarray(pred(X), dtype=bool)
        if rising:
            j = np.where(ok.any(axis=-1), np.argmax(ok, axis=-1), points - 1)
            a, b = _take(X, np.maximum(j - 1, 0)), _take(X, j)
        else:
            j = np.where(ok.any(axis=-1), points - 1 - np.argmax(ok[..., ::-1], axis=-1), 0)
            a, b = _take(X, j), _take(X, np.minimum(j + 1, points - 1))
    return b if rising else a


def _maximise(f, lo, hi, samples=121, iterations=36):
    """(max of f over [lo, hi], x at it) elementwise: scan, then golden section; NaN if hi <= lo."""
    lo, hi = np.asarray(lo, dtype=float), np.asarray(hi, dtype=float)
    X = lo[..., None] + np.maximum(hi - lo, 0.0)[..., None] * np.linspace(0.0, 1.0, samples)
    F = f(X)
    F = np.where(np.isfinite(F), F, -np.inf)
    j = np.argmax(F, axis=-1)
    a, b = _take(X, np.maximum(j - 1, 0)), _take(X, np.minimum(j + 1, samples - 1))
    phi = (math.sqrt(5.0) - 1.0) / 2.0
    for _ in range(iterations):
        c, d = b - phi * (b - a), a + phi * (b - a)
        left = f(c[..., None])[..., 0] > f(d[..., None])[..., 0]
        a, b = np.where(left, a, c), np.where(left, d, b)
    x = 0.5 * (a + b)
    fx = f(x[..., None])[..., 0]
    better = fx >= _take(F, j)
    x, fx = np.where(better, x, _take(X, j)), np.where(better, fx, _take(F, j))
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
        """Lowest Mach with CL <= CLmax (config) when pulling n."""
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        rho_CL = air.density * self.ac.polar.CLmax(self.cond.config)
        return np.sqrt(2.0 * n * self.cond.beta * self.W_S / rho_CL) / air.speed_of_sound

    def mach_limit(self, h):
        """Highest Mach of a free speed (speed limit, polar table): the solver's bound."""
        air = isa(np.asarray(h, dtype=float), self.cond.temperature_offset)
        return C.max_free_speed(self.ac, air) / air.speed_of_sound + 0.0 * air.density

    def best(self, h, n=1.0, top="limit"):
        """(max Ps over Mach, Mach at it) from the lift limit to ``top``:
        "limit" (the solver's free-speed bound) or "domain" (the grid's top)."""
        h = np.asarray(h, dtype=float)
        hi = self.mach_limit(h) if top == "limit" else np.full_like(h, self.mach_top)
        return _maximise(lambda X: self.ps(h[..., None], X, n), self.mach_lift(h, n), hi)

    def ceiling(self, target=0.0, n=1.0, top="limit", floor=0.0):
        """Highest altitude where max over Mach of Ps(n) >= target: (h [m], Mach), or None."""
        def ok(H):
            return self.best(H, n, top)[0] >= target

        grid = np.concatenate([np.linspace(floor, 40000.0, 81)[:-1], np.linspace(40000.0, H_MAX - 1.0, 41)])
        good = ok(grid)
        if not good[0] or good[-1]:
            return None if not good[0] else (float(grid[-1]), float(self.best(np.array(grid[-1]), n, top)[1]))
        j = len(good) - 1 - int(np.argmax(good[::-1]))
        h = float(_edge(ok, np.array(grid[j]), np.array(grid[j + 1]), rising=False))
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

        lo = _edge(good, _take(X, np.maximum(j1 - 1, 0)), _take(X, j1), rising=True)
        hi = _edge(good, _take(X, j2), _take(X, np.minimum(j2 + 1, samples - 1)), rising=False)
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
            ht = float(_edge(some, np.array(h[ok[-1]]), np.array(h[ok[-1] + 1]), rising=False))
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


@dataclass(frozen=True)
class RequirementPoint:
    """A requirement at its own flight condition: where it is flown, met or not, the solve's margin text,
    the envelope's own value of its quantity (SI; ``better`` +1: larger is better, -1: stall speed)."""

    id: str
    kind: str
    mach: float
    altitude: float
    met: bool
    active: bool
    on_boundary: bool
    detail: str
    conditions: str
    value: float | None = None
    required: float | None = None
    better: int = +1
    boundary: Boundary | None = None


_ROW_KEYS = ("quantity", "requirement", "altitude_m", "altitude_ft", "mach", "weight_fraction",
             "value", "required", "unit", "limited_by", "text")


@dataclass(frozen=True)
class Envelope:
    """Computed altitude-Mach envelope of a sized design (SI arrays; no drawing).

    altitude [m] x mach [-] grid with ps [m/s] at 1 g (NaN outside the 1 g
    region); level and turns are :class:`Boundary`; stall and speed_limit are
    (mach, altitude) lines; ceilings (altitude, Mach) or None; rows the table.
    """

    title: str
    propeller: bool
    weight_fraction: float
    wing_loading: float
    power_or_thrust: float
    mach_top: float
    altitude: np.ndarray
    mach: np.ndarray
    ps: np.ndarray
    level: Boundary
    turns: tuple
    stall: tuple
    speed_limit: tuple | None
    table_limit: float | None
    absolute_ceiling: tuple | None
    service_ceiling: tuple | None
    points: tuple
    rows: tuple
    notes: tuple = ()

    def to_frame(self):
        """The envelope table as a pandas DataFrame, one row per quantity."""
        import pandas as pd

        return pd.DataFrame(list(self.rows), columns=list(_ROW_KEYS))

    def table_text(self) -> str:
        """The table as fixed-width text for the terminal."""
        w = max([len(r["quantity"]) for r in self.rows] + [10])
        lines = [f"Envelope check: {self.title}",
                 f"  weight fraction {self.weight_fraction:.3f}, standard day, clean, full throttle "
                 f"(requirement rows at their own conditions)"]
        lines += [f"  {r['quantity']:<{w}}  {r['text']}" for r in self.rows]
        return "\n".join(lines + [f"  note: {t}" for t in self.notes])

    def plot(self, ax=None, **kwargs):
        """Draw the envelope (see :func:`plot_envelope`)."""
        return plot_envelope(self, ax=ax, **kwargs)


def _row(quantity, text, requirement="", altitude=None, mach=None, beta=None, value=None, required=None,
         unit="", limited_by=""):
    f = (lambda v: None if v is None or not np.isfinite(v) else float(v))      # noqa: E731
    return dict(zip(_ROW_KEYS, (quantity, requirement, f(altitude), None if f(altitude) is None else altitude / FT,
                                f(mach), f(beta), f(value), f(required), unit, limited_by, text)))


def _ft(h):
    return f"{h / FT:,.0f} ft ({h:,.0f} m)"


def _status(p):
    return "NOT MET" if not p.met else ("on its boundary" if p.on_boundary else "met")


# -- Compute -------------------------------------------------------------------------------------

def _nice_step(span, count=6):
    raw = span / max(count, 1)
    mag = 10 ** math.floor(math.log10(raw)) if raw > 0 else 1.0
    return next((s * mag for s in (1, 2, 2.5, 5) if s * mag >= raw), 10 * mag)


def _conditions(r, res_r):
    return Conditions(float(res_r.beta), float(r.get("temperature_offset", 0.0)), r.get("thrust_lapse"),
                      r.get("config") or _DEFAULT_CONFIG.get(r["kind"], "clean"), float(r.get("throttle", 1.0)))


def _conditions_text(c, r, propeller):
    parts = [f"weight fraction {c.beta:.3f}", c.temperature_offset and f"ISA{c.temperature_offset:+g} K",
             c.thrust_lapse is not None and f"{'power' if propeller else 'thrust'} lapse {c.thrust_lapse:g} given",
             c.config != "clean" and c.config, c.throttle != 1.0 and f"throttle {c.throttle:g}",
             r["kind"] in ("ceiling", "climb") and f"climb rate {r.get('climb_rate', 0.0) / FPM:,.0f} ft/min",
             r["kind"] == "excess-power" and f"Ps {r.get('excess_power', 0.0):.3g} m/s at {r.get('load_factor', 1):g} g"]
    return ", ".join(p for p in parts if p)


def _point_speed(r, req, ac, W_S, res_r, air):
    """True airspeed [m/s] at which a requirement is flown (or lifts off, touches down)."""
    if r.get("mach") is not None or r.get("speed") is not None:
        return float(C.fixed_speed(req, air))
    if res_r.speed is not None:
        return float(res_r.speed)
    Vs = math.sqrt(2.0 * req.beta * W_S / (float(air.density) * ac.polar.CLmax(_conditions(r, res_r).config)))
    return Vs * {"takeoff": r.get("liftoff_speed_ratio", 1.1), "landing": r.get("touchdown_speed_ratio", 1.15),
                 "climb-gradient": r.get("speed_ratio", 1.2)}.get(r["kind"], 1.0)


def _evaluate(r, res_r, ac, W_S, Y, mach_top):
    """A requirement at its own conditions: (point fields, table row, own-boundary spec)."""
    kind, rid = r["kind"], r["id"]
    cond = _conditions(r, res_r)
    req = M.requirement(r, ac, cond.beta)
    air = C.condition(req)
    h = float(r.get("altitude", 0.0))
    V = _point_speed(r, req, ac, W_S, res_r, air)
    Mn = V / float(air.speed_of_sound)
    fl = Flight(W_S, Y, ac, cond, mach_top)
    value = required = row = None
    quantity, target, n_b, better, by, over = "", 0.0, float(r.get("load_factor", 1.0)), +1, "", {}
    at = f"at M {Mn:.3f}, {_ft(h)}"
    if kind in ("sustained-turn", "instantaneous-turn"):
        n_t, n_l = (float(v) for v in fl.load_factor(h, Mn))
        turn = kind == "sustained-turn"
        value, required, unit, by = (min(n_t, n_l) if turn else n_l), n_b, "g", "thrust" if turn and n_t <= n_l else "CLmax"
        quantity = "max sustained load factor" if turn else "CLmax load factor"
        text = f"{value:.2f} g {at} ({by} limit); {required:.2f} g required"
    elif kind == "excess-power":
        value, required, unit = float(fl.ps(h, Mn, n_b)), r["excess_power"], "m/s"
        target, quantity = required, f"Ps at {n_b:g} g"
        text = f"{value:.2f} m/s ({value / FT:,.0f} ft/s) {at}; {required:.2f} m/s required"
    elif kind in ("max-mach", "cruise"):
        fly, value, by, text = fl.max_mach(h)
        required, unit, over = Mn, "Mach", {"mach": fly, "value": fly}
        quantity = "max level Mach" + ("" if cond.throttle == 1 else f" at throttle {cond.throttle:g}")
        text = f"{text} at {_ft(h)}; M {Mn:.3f} required"
    elif kind == "ceiling":
        target, required, unit = r["climb_rate"], h, "m"
        c = fl.ceiling(target, floor=min(0.0, h))
        value, quantity = (None if c is None else c[0]), f"ceiling at {target / FPM:,.0f} ft/min"
        over = {"altitude": c and c[0], "mach": c and c[1]}
        Mn = float(fl.best(np.array(h))[1]) if res_r.speed is None else Mn
        text = "climb rate not reached at any altitude" if c is None else f"{_ft(c[0])} at M {c[1]:.3f}; {_ft(h)} required"
    elif kind == "climb":
        target = required = r["climb_rate"]
        if r.get("mach") is None and r.get("speed") is None and res_r.speed is None:
            value, Mn = (float(v) for v in fl.best(np.array(h)))
        else:
            value = float(fl.ps(h, Mn))
        quantity, unit = "rate of climb", "m/s"
        text = f"{value / FPM:,.0f} ft/min at M {Mn:.3f}, {_ft(h)} ({cond.config}); {target / FPM:,.0f} ft/min required"
    elif kind == "stall-speed":
        value = math.sqrt(2.0 * cond.beta * W_S / (float(air.density) * ac.polar.CLmax(cond.config)))
        required, quantity, better, unit, by = V, "stall speed", -1, "m/s", "CLmax"
        over = {"mach": value / float(air.speed_of_sound)}
        text = f"{value / KN:.1f} kn TAS ({cond.config}); {V / KN:.1f} kn limit"
    if quantity:
        row = _row(f"{rid}: {quantity}", text, rid, over.get("altitude", h), over.get("mach", Mn), cond.beta,
                   over.get("value", value), required, unit, by)
    tol = ON_BOUNDARY_TOL * max(abs(required or 0.0), 1e-9)
    known = value is not None and required is not None
    pt = dict(id=rid, kind=kind, mach=float(Mn), altitude=h, active=bool(res_r.active),
              met=bool(res_r.margin >= 0.0 and (not known or better * (value - required) >= -tol)),
              on_boundary=bool(res_r.active or (known and abs(value - required) <= tol)),
              detail=res_r.detail, value=value, required=required, better=better,
              conditions=_conditions_text(cond, r, is_propeller(ac.engine_type)))
    return pt, row, (fl, n_b, target) if kind in _OWN_BOUNDARY else None


def compute_envelope(spec, res, weight_fraction=None, altitudes=90, machs=150):
    """Altitude-Mach envelope of a solved design (see the module docstring) -> :class:`Envelope`.

    res : a feasible :class:`sizing.model.Result` of ``spec``; weight_fraction : beta of the
    drawn envelope, in (0, 2], default 1 (takeoff weight); altitudes, machs : the Ps contour
    grid (boundaries, ceilings and top speeds come from root finding, not from the grid).
    """
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the envelope needs a feasible design; this requirement set has none")
    B = 1.0 if weight_fraction is None else float(weight_fraction)
    if not (0.0 < B <= 2.0):
        raise InputError(f"weight fraction {weight_fraction!r} must be a number in (0, 2], the weight as "
                         f"a fraction of takeoff weight (e.g. 0.8)", field="--weight-fraction")
    tree = M.spec_tree(spec)
    ac, reqs, d = M.aircraft(tree), tree["requirements"], res.design
    W_S, Y = float(d.wing_loading), float(d.power_to_weight if res.propeller else d.thrust_to_weight)
    top = domain_mach(ac)
    fl = Flight(W_S, Y, ac, Conditions(beta=B), top)
    results, notes = {r.id: r for r in res.requirements}, []
    abs_c, svc_c = fl.ceiling(0.0), fl.ceiling(SERVICE_CLIMB_RATE)
    evaluated = [_evaluate(r, results[rid], ac, W_S, Y, top) for rid, r in reqs.items()]
    # altitudes: from the lowest requirement to past the ceilings and the highest requirement
    alts = [float(r.get("altitude", 0.0)) for r in reqs.values()]
    h_lo = min([0.0] + alts)
    h_need = max(alts + [3000.0, abs_c[0] if abs_c else 0.0]
                 + [p["value"] for p, _, _ in evaluated if p["kind"] == "ceiling" and p["value"] is not None])
    step = _nice_step(1.08 * (h_need - h_lo) / FT, 8) * FT
    h_hi = min(h_lo + step * math.ceil(1.08 * (h_need - h_lo) / step), H_MAX - 1.0)
    h_b = np.linspace(h_lo, h_hi, 97)
    level = fl.boundary(h_b, 1.0, 0.0, "1 g, Ps = 0")
    n_req = [float(r["load_factor"]) for r in reqs.values() if "load_factor" in r]
    turns = []
    for n in sorted(set(range(2, int(math.ceil(max(n_req + [2.0]) - 1e-9)) + 1)) | {n for n in n_req if n > 1}):
        b = fl.boundary(h_b, float(n), 0.0, f"{n:g} g")
        if np.isfinite(b.lo).any():
            turns.append(b)
        else:
            notes.append(f"{n:g} g is not sustainable anywhere at weight fraction {B:.3f}")
    H, Mg = np.meshgrid(np.linspace(h_lo, h_hi, altitudes), np.linspace(0.0, top, machs + 1)[1:], indexing="ij")
    ps = fl.ps(H, Mg)
    ps = np.where((Mg >= fl.mach_lift(H)) & (ps >= 0.0), ps, np.nan)
    air = isa(h_b)
    lims = [np.full_like(h_b, ac.speed_limit_mach)] if ac.speed_limit_mach is not None else []
    lims += [ac.speed_limit_speed / air.speed_of_sound] if ac.speed_limit_speed is not None else []
    table = float(ac.polar.mach_max) if math.isfinite(ac.polar.mach_max) else None
    if table is None:
        lims = lims or [C.max_free_speed(ac, air) / air.speed_of_sound]
        notes.append(f"the drag polar has no Mach table (no drag rise modelled); the grid stops at M {top:.2f}"
                     + ("" if ac.speed_limit_mach or ac.speed_limit_speed else
                        "; no speed_limit given: free speeds stop at M 0.95 (the solver's default)"))
    rows = [_row(name, f"{_ft(c[0])} at M {c[1]:.3f}", "", c[0], c[1], B, c[0], None, "m") if c
            else _row(name, "not reached at any altitude", beta=B)
            for name, c in (("absolute ceiling (Ps = 0)", abs_c), ("service ceiling (Ps = 100 ft/min)", svc_c))]
    by_alt = {0.0: []}
    for rid, r in reqs.items():
        by_alt.setdefault(float(r.get("altitude", 0.0)), []).append(rid)
    for h in sorted(by_alt):
        ids = ", ".join(by_alt[h])
        fly, tm, by, text = fl.max_mach(h)
        rows.append(_row("max Mach at sea level" if h == 0.0 else f"max Mach at {h / FT:,.0f} ft",
                         "no level flight" if not np.isfinite(tm) else text + (f"  [{ids}]" if ids else ""),
                         ids, h, fly, B, fly, None, "Mach", by if np.isfinite(tm) else ""))
    with np.errstate(invalid="ignore"):      # the corner of the envelope at the lowest altitude
        nbest, mbest = (float(v) for v in _maximise(lambda X: np.minimum(*fl.load_factor(h_lo + 0.0 * X, X)),
                                                    np.array(fl.mach_lift(h_lo)), np.array(top)))
    if np.isfinite(nbest):
        rows.append(_row(f"max sustained load factor at {h_lo / FT:,.0f} ft", f"{nbest:.2f} g at M {mbest:.3f}",
                         "", h_lo, mbest, B, nbest, None, "g"))
    points = []
    for pt, row, own in evaluated:
        rows += [row] if row is not None else []
        b = None if own is None else own[0].boundary(h_b, own[1], own[2], f"{pt['id']} (own conditions)")
        points.append(RequirementPoint(boundary=b, **pt))
    return Envelope(title=res.title, propeller=res.propeller, weight_fraction=B, wing_loading=W_S,
                    power_or_thrust=Y, mach_top=top, altitude=H[:, 0], mach=Mg[0], ps=ps, level=level,
                    turns=tuple(turns), stall=(fl.mach_lift(h_b), h_b), speed_limit=(np.minimum.reduce(lims), h_b)
                    if lims else None, table_limit=table, absolute_ceiling=abs_c, service_ceiling=svc_c,
                    points=tuple(points), rows=tuple(rows), notes=tuple(notes))


# -- Plot (matplotlib imported here only; Agg canvas, no pyplot state) ---------------------------

_PLOT_OPTIONS = ("contours", "own_boundaries", "details", "title", "caution")
_COLOURS = ("#1f5fa8", "#c2571a", "#2e8b57", "#8e44ad", "#b8860b", "#c0392b", "#16a0a0", "#7f5539")
_BLUES = ("#6a9bc6", "#3f74a8", "#285a8c", "#173f6b", "#0b2447")


def _place_labels(ax, items, obstacles):
    """Annotate (x, y, text, colour, own-marker bbox) items at the first offset whose label
    stays inside the axes and clear of the obstacles (display Bboxes); else the first offset."""
    renderer, taken = ax.figure.canvas.get_renderer(), list(obstacles)
    frame, out = ax.get_window_extent(renderer), []
    offsets = [(dx, dy) for dy in (4, -4, 14, -14, 24, 34) for dx in (6, -6)] + [(6, 4)]
    for x, y, text, col, own in items:
        clear = [t for t in taken if t is not own]
        for k, (dx, dy) in enumerate(offsets):
            ann = ax.annotate(text, (x, y), xytext=(dx, dy), textcoords="offset points", fontsize=7.5,
                              ha="left" if dx > 0 else "right", va="bottom" if dy > 0 else "top", color=col,
                              zorder=8, annotation_clip=False,
                              bbox={"boxstyle": "round,pad=0.15", "fc": "white", "ec": "none", "alpha": 0.8})
            bb = ann.get_window_extent(renderer).padded(2)
            if k == len(offsets) - 1 or (frame.contains(bb.x0, bb.y0) and frame.contains(bb.x1, bb.y1)
                                         and not any(bb.overlaps(t) for t in clear)):
                break
            ann.remove()
        taken.append(bb)
        out.append(ann)
    return out


def _differs(pt, env):
    """True when a requirement's own boundary is not one the envelope already draws."""
    b = pt.boundary
    c = b.cond if b is not None else None
    return b is not None and not (abs(c.beta - env.weight_fraction) < 1e-12 and c.temperature_offset == 0.0
                                  and b.target == 0.0 and c.thrust_lapse is None and c.config == "clean"
                                  and c.throttle == 1.0 and (b.n == 1.0 or b.n in {t.n for t in env.turns}))


def plot_envelope(env: Envelope, ax=None, **kwargs):
    """Draw an :class:`Envelope`: boundaries, Ps contours, limits, requirement marks.

    Keywords: contours (Ps contours, default True); own_boundaries (each
    requirement's boundary at its own conditions, dotted in its colour, where it
    differs from the drawn ones; True); details (the requirements and margins
    below the plot; True); title (str); caution (the caution line; True).
    ax: matplotlib Axes, or None for a new Agg figure.

    Returns a dict of handles: figure, ax, region, level, stall, turns {n: Line2D}, contours,
    speed_limit, table_limit, ceilings, points {id: Line2D}, own {id: Line2D}, labels, legends, caution.
    """
    if set(kwargs) - set(_PLOT_OPTIONS):
        raise TypeError(f"plot_envelope() got unknown keyword(s) {', '.join(sorted(set(kwargs) - set(_PLOT_OPTIONS)))}"
                        f"; valid: {', '.join(_PLOT_OPTIONS)}")
    opt = {"contours": True, "own_boundaries": True, "details": True, "title": None, "caution": True, **kwargs}
    from matplotlib.lines import Line2D
    from matplotlib.ticker import FuncFormatter

    if ax is None:
        from matplotlib.backends.backend_agg import FigureCanvasAgg
        from matplotlib.figure import Figure
        height = 6.4 + (0.2 * (len(env.points) + 2) if opt["details"] else 0.0)
        ax = FigureCanvasAgg(Figure(figsize=(10.0, height))).figure.add_axes((0.08, 1 - 5.6 / height, 0.84, 5 / height))
    fig, kft, top = ax.figure, 1.0 / FT, env.mach_top     # altitude drawn in ft
    h = {"figure": fig, "ax": ax, "turns": {}, "points": {}, "own": {}, "ceilings": {}, "legends": []}
    style, n_items, texts = [], [], []
    ax.set_xlim(0.0, top * 1.03)
    ax.set_ylim(env.altitude[0] * kft, env.altitude[-1] * kft)
    x, y = env.level.line(drop_domain=False)
    h["region"] = ax.fill(x[np.isfinite(x)], y[np.isfinite(x)] * kft, fc="#e6f0f9", ec="none", zorder=0)[0]
    if opt["contours"] and np.isfinite(env.ps).any():
        step = _nice_step(float(np.nanmax(env.ps)), 8)
        if len(levels := np.arange(step, float(np.nanmax(env.ps)), step)):
            cs = h["contours"] = ax.contour(env.mach, env.altitude * kft, env.ps, levels=levels,
                                            colors="#8494a3", linewidths=0.6, zorder=1)
            ax.clabel(cs, fmt=lambda v: f"{v:g}", fontsize=6.5, inline=True)
            style.append((Line2D([], [], color="#8494a3", lw=0.6), f"Ps at 1 g, every {step:g} m/s"))
    for i, b in enumerate(env.turns):
        col = _BLUES[min(i, len(_BLUES) - 1)]
        x, y = b.line()
        (h["turns"][b.n],) = ax.plot(x, y * kft, color=col, lw=1.2, zorder=3)
        k = int(np.nonzero(np.isfinite(b.hi))[0][-1])
        xy = (b.top[1], b.top[0]) if b.top is not None else (b.hi[k], b.altitude[k])
        n_items.append((xy[0], xy[1] * kft, f"{b.n:g} g", col, None))
    if env.turns:
        style.append((Line2D([], [], color=_BLUES[1], lw=1.2), "sustained n g (Ps = 0 at n g, CLmax)"))
    b = env.level
    x, y = b.line(drop_lift=True)
    (h["level"],) = ax.plot(x, y * kft, color="black", lw=2.0, zorder=4)
    style.append((h["level"], "1 g level flight (Ps = 0)"))
    ok = np.isfinite(b.lo) & b.lo_is_lift
    if ok.any():      # the stall line where it bounds the 1 g region, joined to the Ps = 0 line
        k = int(np.nonzero(ok)[0][-1])
        nxt = (b.lo[k + 1], b.altitude[k + 1]) if k + 1 < len(b.lo) and np.isfinite(b.lo[k + 1]) else \
            ((b.top[1], b.top[0]) if b.top else (np.nan, np.nan))
        (h["stall"],) = ax.plot(np.append(b.lo[ok], nxt[0]), np.append(b.altitude[ok], nxt[1]) * kft,
                                color="#a23b3b", lw=1.6, ls=(0, (5, 2)), zorder=4)
        style.append((h["stall"], "1 g stall (CLmax clean)"))
    if env.speed_limit is not None:
        lm, lh = env.speed_limit
        (h["speed_limit"],) = ax.plot(lm, lh * kft, color="#555555", lw=1.2, ls="-.", zorder=4)
        ax.fill_betweenx(lh * kft, lm, np.maximum(lm, top), fc="none", ec="#c4c4c4", hatch="///", lw=0.0,
                         zorder=0.5)
        style.append((h["speed_limit"], "speed limit (hatched beyond)"))
    if env.table_limit is not None:
        h["table_limit"] = ax.axvline(env.table_limit, color="#777777", lw=0.8, zorder=4)
        style.append((h["table_limit"], f"end of the polar's Mach table (M {env.table_limit:g})"))
    for key, c, va, dy in (("absolute", env.absolute_ceiling, "bottom", 1), ("service", env.service_ceiling, "top", -1)):
        if c is not None:
            (h["ceilings"][key],) = ax.plot([c[1] - 0.05 * top, c[1] + 0.05 * top], [c[0] * kft] * 2,
                                            color="black", lw=0.9, ls="--", zorder=5)
            texts.append(ax.annotate(f"{key} ceiling {c[0] / FT:,.0f} ft", (c[1] - 0.05 * top, c[0] * kft),
                                     xytext=(-3, dy), textcoords="offset points", fontsize=7.5, va=va,
                                     ha="right", zorder=6, bbox={"fc": "white", "ec": "none", "alpha": 0.75,
                                                                 "boxstyle": "round,pad=0.1"}))
    entries, items = [], []
    for i, pt in enumerate(env.points):
        col = _COLOURS[i % len(_COLOURS)]
        mk, face, size = ("X", "#d62728", 10) if not pt.met else ("D" if pt.on_boundary else "o", col, 8)
        (ln,) = ax.plot([pt.mach], [pt.altitude * kft], marker=mk, ms=size, mfc=face, mec="black", mew=0.8,
                        ls="none", zorder=7, clip_on=False)
        h["points"][pt.id] = ln
        items.append((pt.mach, pt.altitude * kft, pt.id, col))
        if opt["own_boundaries"] and _differs(pt, env):
            x, y = pt.boundary.line(drop_lift=True)
            (h["own"][pt.id],) = ax.plot(x, y * kft, color=col, lw=1.0, ls=(0, (1, 1.5)), zorder=3)
        entries.append((ln, f"{pt.id} ({pt.kind}): {_status(pt)}; {pt.detail}  [{pt.conditions}]"))
    ax.set_xlabel("Mach number")
    ax.set_ylabel("pressure altitude [ft]")
    ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:,.0f}"))
    ax.secondary_yaxis("right", functions=(lambda f: f * FT / 1000.0, lambda k: k * 1000.0 / FT)
                       ).set_ylabel("pressure altitude [km]")
    ax.grid(True, color="#dddddd", lw=0.5, zorder=-1)
    y_text = f"P/W {env.power_or_thrust:.2f} W/N" if env.propeller else f"T/W {env.power_or_thrust:.3f}"
    ax.set_title(opt["title"] or f"{env.title}: flight envelope at weight fraction {env.weight_fraction:.2f}\n"
                 f"W/S {env.wing_loading:,.0f} N/m$^2$, {y_text}; standard day, clean, full throttle", fontsize=10)
    if h["own"]:
        style.append((Line2D([], [], color="#444444", lw=1.0, ls=(0, (1, 1.5))),
                      "a requirement's boundary at its own conditions"))
    leg = ax.legend(*zip(*style), loc="upper left", fontsize=7.5, framealpha=0.92)
    h["legends"].append(leg)
    if not hasattr(fig.canvas, "get_renderer"):      # a bare Figure(): give it an Agg canvas
        from matplotlib.backends.backend_agg import FigureCanvasAgg

        FigureCanvasAgg(fig)
    renderer = fig.canvas.get_renderer()
    marks = [ln.get_window_extent(renderer).padded(2) for ln in h["points"].values()]
    for t in texts:       # a ceiling label under the legend moves to the right end of its tick
        if t.get_window_extent(renderer).overlaps(leg.get_window_extent(renderer)):
            t.xy, t.xyann, _ = (t.xy[0] + 0.1 * top, t.xy[1]), (3, t.xyann[1]), t.set_ha("left")
    obstacles = [t.get_window_extent(renderer) for t in texts + [leg]] + marks
    h["labels"] = _place_labels(ax, n_items + [it + (mk,) for it, mk in zip(items, marks)], obstacles)
    anchor, xy = ax, (-0.07, -0.1)
    if opt["details"] and entries:
        ax.add_artist(leg)
        anchor = ax.legend(*zip(*entries), loc="upper left", bbox_to_anchor=xy, fontsize=7.5, frameon=False,
                           borderaxespad=0.0, title_fontsize=8, alignment="left",
                           title="requirements at their own conditions (diamond: on its boundary; X: not met)")
        h["legends"].append(anchor)
        xy = (0.0, 0.0)
    if opt["caution"]:
        text = "\n".join(textwrap.wrap(" ".join(f"Note: {t}." for t in env.notes), 150) + textwrap.wrap(CAUTION, 150))
        h["caution"] = ax.annotate(text, xy=xy, xycoords=anchor,
                                   xytext=(0, -6), textcoords="offset points", ha="left", va="top",
                                   fontsize=7, color="#333333", annotation_clip=False)
    return h


def render(env: Envelope, fmt="png", dpi=150, **kwargs) -> bytes:
    """The envelope figure as PNG, SVG or PDF bytes (the figure is cleared afterwards)."""
    fig, buf = plot_envelope(env, **kwargs)["figure"], io.BytesIO()
    try:
        fig.savefig(buf, format=fmt, dpi=dpi, bbox_inches="tight", pad_inches=0.15)
    finally:
        fig.clear()
    return buf.getvalue()


def _check_output(path):
    suffix = ("." + str(path).rsplit(".", 1)[-1].lower()) if "." in str(path).rsplit("/", 1)[-1] else ""
    if suffix not in _SUFFIXES:
        raise InputError(f"{str(path)!r}: {suffix or 'no suffix'} is not a figure format; use "
                         f"{', '.join(_SUFFIXES)}", field="-o/--output")
    return suffix[1:]


def write_envelope(env: Envelope, output, data=None) -> list:
    """Write the figure (PNG/SVG/PDF by suffix) and optionally the table as CSV
    (first line a ``#`` comment with the title and the caution); the paths written."""
    written = [atomic_write(output, render(env, _check_output(output)), "wb")]
    if data:
        head = f"# {env.title}: envelope at weight fraction {env.weight_fraction:g}. {CAUTION}\n"
        written.append(atomic_write(data, head + env.to_frame().to_csv(index=False, lineterminator="\n"), "w"))
    return [str(p) for p in written]


def run_envelope(spec, res, output, data=None, weight_fraction=None) -> int:
    """CLI entry: compute, print the table and marks, write the files, print the caution."""
    _check_output(output)
    if res is None or not res.feasible:
        print("NO FEASIBLE DESIGN: there is no sized design to check the envelope of.\n" + CAUTION)
        return 3
    env = compute_envelope(spec, res, weight_fraction)
    print(env.table_text() + "\n\nRequirements at their own conditions")
    print("\n".join(f"  {p.id:<18} {_status(p):<16} {p.detail}   [{p.conditions}]" for p in env.points) + "\n")
    print("\n".join(f"wrote {w}" for w in write_envelope(env, output, data)) + "\n" + CAUTION)
    return 0


def report_section(spec, res):
    """(markdown_text, png_bytes) of the review report's envelope section. The text has no
    image link (the report places the PNG); for an infeasible result it says so, with no PNG."""
    if res is None or not res.feasible:
        return "## Envelope check\n\nNo feasible design, so no envelope to check.\n", b""
    env = compute_envelope(spec, res)
    lines = ["## Envelope check", "", f"Altitude-Mach envelope of the sized design at weight fraction "
             f"{env.weight_fraction:g} (standard day, clean, full throttle): level flight where the specific "
             "excess power Ps = V (T - D)/W is at least 0 at 1 g, above the CLmax stall line; sustained "
             "load-factor boundaries where Ps = 0 at n g. Requirement rows use each requirement's own weight "
             "fraction, temperature, lapse, configuration and throttle.", "", "| quantity | value |", "|---|---|"]
    lines += [f"| {r['quantity']} | {r['text'].replace('|', '/')} |" for r in env.rows]
    lines += ["", "| requirement | status | margin | own conditions |", "|---|---|---|---|"]
    lines += [f"| {p.id} | {_status(p)} | {p.detail} | {p.conditions} |" for p in env.points]
    return "\n".join(lines + [f"\nNote: {t}" for t in env.notes] + ["", CAUTION, ""]), render(env, "png")

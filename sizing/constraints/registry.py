"""The registry of requirement kinds, and the curves the diagram and the starting scan draw.

:data:`KINDS` maps each kind name to its constraint function (in
:mod:`.speeds`, :mod:`.turns`, :mod:`.climb`, :mod:`.field`), its
free-speed rule and its headline value field. :func:`required_curve`
samples a requirement over an array of wing loadings, minimising over the
free speed where the kind has one.
"""
from __future__ import annotations

from dataclasses import dataclass
from types import SimpleNamespace

import numpy as np

from ..physics import shim as m
from ..physics.aero import coefficient
from .climb import ceiling, climb, climb_gradient
from .field import landing, takeoff
from .flight import Bound, condition, config_of, speed_limit
from .speeds import approach_speed, cruise, max_mach, stall_speed
from .turns import excess_power, instantaneous_turn, sustained_turn


@dataclass(frozen=True)
class Kind:
    """A requirement kind: its function, free-speed rule and headline value."""

    function: object
    free_speed: str        # "never" | "always" | "if-no-speed"
    value_field: str       # the field whose sensitivity is reported
    load_factor_field: str = ""   # field holding n for the free-speed stall bound
    reference: str = ""
    buffet: bool = False          # a free speed also stays above buffet onset (cl_buffet x margin)

    def has_free_speed(self, req) -> bool:
        if self.free_speed == "always":
            return True
        if self.free_speed == "if-no-speed":
            return all(getattr(req, k, None) is None for k in ("speed", "mach", "cas", "eas"))
        return False


KINDS = {
    "stall-speed": Kind(stall_speed, "never", "speed", reference="lift equation; Raymer §5.3"),
    "sustained-turn": Kind(sustained_turn, "never", "load_factor", reference="Mattingly Eq. 2.11"),
    "max-mach": Kind(max_mach, "never", "mach", reference="Mattingly Eq. 2.11"),
    "ceiling": Kind(ceiling, "always", "altitude", reference="Mattingly Eq. 2.11; Gudmundsson Eq. 3-6",
                    buffet=True),
    "climb": Kind(climb, "if-no-speed", "climb_rate", reference="Gudmundsson Eq. 3-3"),
    "excess-power": Kind(excess_power, "never", "excess_power", reference="Mattingly Eq. 2.11"),
    "cruise": Kind(cruise, "never", "speed", reference="Mattingly Eq. 2.11; Gudmundsson Eq. 3-5"),
    "instantaneous-turn": Kind(instantaneous_turn, "never", "load_factor", reference="lift equation"),
    "takeoff": Kind(takeoff, "never", "ground_roll",
                    reference="Gudmundsson Eq. 3-4; Raymer §17.8 (distance, balanced field, Torenbeek)"),
    "landing": Kind(landing, "never", "ground_roll",
                    reference="Mattingly §2.2.9; Raymer §17.9; 14 CFR 121.195(b)"),
    "climb-gradient": Kind(climb_gradient, "never", "gradient",
                           reference="Raymer Ch. 5; 14 CFR 25.111, 25.119, 25.121"),
    "approach-speed": Kind(approach_speed, "never", "speed", reference="lift equation; Raymer §17.9"),
}


def evaluate(req, ac, W_S, V=None) -> Bound:
    """Evaluate a requirement's constraint at W_S (and its free speed V)."""
    return KINDS[req.kind].function(W_S, V, req, ac)


def free_speed_range(req, ac, W_S):
    """Lowest and highest free speed [m/s] at W_S (numbers): ``min_speed_factor`` x the stall
    speed up to :func:`max_free_speed`, narrowed to the buffet-free band where the kind has one
    (:func:`buffet_speed_range`). Empty (low > high) where no speed is left."""
    air = condition(req)
    V_lo, V_hi = min_free_speed(req, ac, W_S), max_free_speed(ac, air)
    if KINDS[req.kind].buffet and getattr(ac, "cl_buffet", None) is not None:
        V_lo, V_hi = buffet_speed_range(req, ac, W_S, V_lo, V_hi)
    return V_lo, V_hi


DEFAULT_MIN_SPEED_FACTOR = 1.2


def speed_floors(req, ac, W_S, V):
    """The lower bounds of a free speed V as (name, have, need) triples, met when have >= need:

    * ``stall``: q CLmax(config) >= k^2 beta W/S, i.e. V >= k V_stall with k the requirement's
      ``min_speed_factor`` (default 1.2);
    * ``buffet`` (ceiling, when ``cl_buffet`` is given): q CL_buffet(M) >= n_b beta W/S, i.e.
      CL x buffet margin <= CL_buffet (with CL_buffet falling with Mach this bounds the speed
      from above too: the high-speed buffet boundary).

    On numbers and symbols alike: the optimizer's rows are have - need, the margins have/need - 1.
    """
    air = condition(req)
    q = 0.5 * air.density * V ** 2
    k = getattr(req, "min_speed_factor", None)
    k = DEFAULT_MIN_SPEED_FACTOR if k is None else k
    out = [("stall", q * ac.polar.CLmax(config_of(req)), k ** 2 * req.beta * W_S)]
    if KINDS[req.kind].buffet and getattr(ac, "cl_buffet", None) is not None:
        out.append(("buffet", q * coefficient(ac.cl_buffet, V / air.speed_of_sound),
                    ac.buffet_margin * req.beta * W_S))
    return out


def min_free_speed(req, ac, W_S):
    """``min_speed_factor`` x the stall speed of the requirement's configuration [m/s] (numbers)."""
    air = condition(req)
    k = getattr(req, "min_speed_factor", None)
    k = DEFAULT_MIN_SPEED_FACTOR if k is None else k
    return k * np.sqrt(2.0 * req.beta * np.asarray(W_S, dtype=float)
                       / (np.asarray(air.density, dtype=float) * ac.polar.CLmax(config_of(req))))


def buffet_speed_range(req, ac, W_S, V_lo, V_hi, samples=64, iterations=40):
    """The part of [V_lo, V_hi] where CL x buffet margin <= CL_buffet(M) [m/s] (numbers).

    q CL_buffet(M) rises with speed at low Mach and falls where CL_buffet drops steeply (the
    high-speed buffet boundary), so the band is found on a grid and its edges refined by
    bisection; (inf, -inf) where no speed is buffet-free.
    """
    air = condition(req)
    rho, a = np.asarray(air.density, dtype=float), np.asarray(air.speed_of_sound, dtype=float)
    need = np.asarray(ac.buffet_margin * np.asarray(req.beta) * np.asarray(W_S, dtype=float), dtype=float)
    shape = np.broadcast_shapes(need.shape, np.shape(V_lo), np.shape(V_hi), rho.shape)
    need = np.broadcast_to(need, shape).reshape(-1)
    lo0 = np.broadcast_to(np.asarray(V_lo, dtype=float), shape).reshape(-1)
    hi0 = np.broadcast_to(np.asarray(V_hi, dtype=float), shape).reshape(-1)
    # one atmosphere per row where the altitude is given per row (a margin search's probes)
    rho, a = (np.broadcast_to(v, shape).reshape(-1)[:, None] for v in (rho, a))

    def ok(V):
        return 0.5 * rho * V ** 2 * np.asarray(coefficient(ac.cl_buffet, V / a)) >= need[:, None]

    u = np.linspace(0.0, 1.0, samples)
    V = lo0[:, None] + u * np.maximum(hi0 - lo0, 0.0)[:, None]
    good = ok(V)
    some = good.any(axis=1) & (hi0 >= lo0)
    rows = np.arange(V.shape[0])
    j1 = np.argmax(good, axis=1)
    j2 = samples - 1 - np.argmax(good[:, ::-1], axis=1)

    def edge(a_, b_, rising):
        for _ in range(iterations):
            mid = 0.5 * (a_ + b_)
            g = ok(mid[:, None])[:, 0]
            if rising:
                a_, b_ = np.where(g, a_, mid), np.where(g, mid, b_)
            else:
                a_, b_ = np.where(g, mid, a_), np.where(g, b_, mid)
        return b_ if rising else a_

    lo = np.where(j1 > 0, edge(V[rows, np.maximum(j1 - 1, 0)], V[rows, j1], True), lo0)
    hi = np.where(j2 < samples - 1, edge(V[rows, j2], V[rows, np.minimum(j2 + 1, samples - 1)], False), hi0)
    lo, hi = np.where(some, lo, np.inf), np.where(some, hi, -np.inf)
    return lo.reshape(shape), hi.reshape(shape)


def max_free_speed(ac, air):
    """Upper bound on a free speed at a condition [m/s]: the speed limit (the lowest of VMO,
    MMO and a true-airspeed limit, :func:`~sizing.constraints.flight.speed_limit`) and the
    polar's Mach table; M 0.95 when neither is given."""
    a = air.speed_of_sound
    tops = []
    lim = speed_limit(ac, air)
    if lim is not None:
        tops.append(lim)
    if np.isfinite(ac.polar.mach_max):
        tops.append(ac.polar.mach_max * a)
    if not tops:
        tops.append(0.95 * a)     # no limit given: stay subsonic-ish by default
    V = tops[0]
    for t in tops[1:]:
        V = m.fmin(V, t)
    return V


def required_curve(req, ac, W_S, samples=240, refine=40, rtol=None, level=None):
    """Numpy curve of a requirement over an array of wing loadings.

    Returns (thrust, wing_loading_limit, best_speed): required T_SL/W_TO (or
    P_SL/W_TO) per W_S, minimised over the free speed where the kind has one;
    ``inf`` where no speed works; None where the kind sets no such bound.
    ``req.beta`` (and any other field of ``req``) may be a number or an array
    over ``W_S``.

    The free speed is found by nested scans, each one array evaluation for
    every wing loading at once: ``samples`` speeds from stall to the speed
    limit, then ``refine`` speeds between the neighbours of the best one,
    again until the thrust at the bracket's ends is within ``rtol`` (default
    :data:`THRUST_RTOL`) of the best (or the bracket is below :data:`SPEED_RTOL`
    of the speed). A minimum on an edge of the window (stall, speed limit) or
    at a kink of the lapse stays in the bracket, as every scan includes its
    ends; a smooth minimum takes four scans, a kink a few more.

    ``level`` (a thrust, or one per wing loading) asks only which side of it the
    minimum lies: a point stops being refined once its best thrust is below the
    level, or once even the bracket's slopes extended past its ends (a lower
    bound where the curve is convex there) stay above it; its value is then the
    best found so far, on the right side of the level.
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
    # fields given per wing loading (a weight fraction per point of a mission, a value per
    # probe of a margin search) become columns for the (wing loading x speed) evaluation
    cols = {k: v.reshape(-1) for k, v in vars(req).items() if isinstance(v, np.ndarray) and v.ndim and v.size > 1}

    def f(V, live):
        req2 = req
        if cols:
            req2 = SimpleNamespace(**{**vars(req), **{k: v[live][:, None] for k, v in cols.items()}})
        T = np.asarray(evaluate(req2, ac, W_S[live][:, None], V).thrust, float)
        return np.where(np.isfinite(T) & (T > 0), T, np.inf)

    rtol = THRUST_RTOL if rtol is None else rtol
    lev = None if level is None else np.broadcast_to(np.asarray(level, float), W_S.shape)
    T_best = np.full(W_S.shape, np.inf)
    V_best = np.array(V_lo, dtype=float)
    live = np.arange(W_S.size)
    a, b = V_lo, np.maximum(V_hi, V_lo)
    u = np.linspace(0.0, 1.0, samples)
    for _ in range(12):
        with np.errstate(invalid="ignore"):              # an empty window (no speed left): inf
            V = a[:, None] + u[None, :] * (b - a)[:, None]
        V[:, -1] = b                                     # the window's end exactly
        T = f(V, live)
        rows = np.arange(live.size)
        j = np.argmin(T, axis=1)
        jl, jr = np.maximum(j - 1, 0), np.minimum(j + 1, u.size - 1)
        better = T[rows, j] < T_best[live]               # never worse than an earlier scan
        T_best[live] = np.where(better, T[rows, j], T_best[live])
        V_best[live] = np.where(better, V[rows, j], V_best[live])
        a, b = V[rows, jl], V[rows, jr]
        Tb = T_best[live]
        with np.errstate(invalid="ignore"):
            spread = np.maximum(T[rows, jl], T[rows, jr]) - Tb
            done = (spread <= rtol * Tb) | ~np.isfinite(Tb) | (b - a <= SPEED_RTOL * np.abs(V_best[live]))
            if lev is not None:
                done |= (Tb < lev[live] * (1 - 1e-12)) | (Tb - spread > lev[live] * (1 + 1e-12))
        if np.all(done):
            break
        keep = ~done
        live, a, b = live[keep], a[keep], b[keep]
        u = np.linspace(0.0, 1.0, max(int(refine), 3))
    T_best = np.where(ok, T_best, np.inf)
    return T_best, None, V_best


THRUST_RTOL = 1e-13   # free-speed scans stop when the bracket's ends are this close in thrust
SPEED_RTOL = 1e-9     # ... or the bracket this narrow (a fraction of the speed)

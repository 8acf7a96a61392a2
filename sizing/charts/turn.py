"""Turn performance of the sized design: turn rate against Mach at one or more altitudes.

For a level turn at load factor n and true airspeed V (Anderson, *Aircraft Performance and
Design*, §6.17):

    turn rate  omega = g sqrt(n^2 - 1)/V,   radius  R = V^2/(g sqrt(n^2 - 1)).

Boundaries: sustained (Ps = 0, the thrust-limited load factor of
:func:`sizing.charts.performance.sustained_load_factor`, within CLmax and the limit load
factor) and instantaneous (CLmax, then the limit load factor of the V-n chart:
:mod:`sizing.charts.loads`). The corner speed is where the CLmax line meets the limit load
factor, V* = sqrt(2 n_lim (W/S)/(rho CLmax)): the highest instantaneous turn rate. Ps contours
(Mattingly Eq. 2.11, Ps term) over the turn-rate plane; lines of constant load factor and
radius. Mach runs from the 1 g stall to the Mach limit (speed limit or polar table end).

:func:`compute_turn` (numpy) -> :class:`TurnChart` -> :func:`sizing.charts.turn_plot.plot_turn`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from ..common.caution import CAUTION, LOADS_CAUTION
from ..common.conversions import FT, KN
from ..common.errors import InputError
from ..physics.atmosphere import H_MAX, g0, isa
from ..problem import tree as M
from .loads import compute_vn
from .performance import Conditions, Flight, domain_mach, maximise
from .style import styles_of

DEG = 180.0 / math.pi


def turn_rate(n, V):
    """Level-turn rate omega = g sqrt(n^2 - 1)/V [rad/s] (NaN below n = 1).

    Examples
    --------
    Hand calculation: n 2, V 100 m/s -> 9.80665 x 1.7320508/100 = 0.169856 rad/s (9.7320 deg/s).

    >>> round(float(turn_rate(2.0, 100.0)), 6), round(float(turn_rate(2.0, 100.0)) * DEG, 4)
    (0.169856, 9.732)
    """
    n = np.asarray(n, dtype=float)
    with np.errstate(invalid="ignore"):
        return g0 * np.sqrt(np.where(n >= 1.0, n * n - 1.0, np.nan)) / V


def turn_radius(n, V):
    """Level-turn radius R = V^2/(g sqrt(n^2 - 1)) [m].

    Examples
    --------
    Hand calculation: n 2, V 100 m/s -> 10 000/(9.80665 x 1.7320508) = 588.73 m.

    >>> round(float(turn_radius(2.0, 100.0)), 2)
    588.73
    """
    return V / turn_rate(n, V)


@dataclass(frozen=True)
class TurnAltitude:
    """Turn performance at one altitude [m]: arrays over mach [-] (speed [m/s TAS]); rates [rad/s]."""

    altitude: float
    mach: np.ndarray
    speed: np.ndarray
    n_sustained: np.ndarray
    n_instantaneous: np.ndarray
    sustained: np.ndarray
    instantaneous: np.ndarray
    limited_by: tuple               # per Mach: what bounds the sustained turn ("thrust", "CLmax", "limit n")
    corner: tuple | None            # (mach, speed [m/s TAS], rate [rad/s]) or None outside the Mach range
    best_sustained: tuple           # (rate [rad/s], mach, load factor)
    best_instantaneous: tuple       # (rate [rad/s], mach, load factor)
    rate_grid: np.ndarray           # [rad/s], with ps over (rate, mach)
    ps: np.ndarray                  # [m/s], NaN beyond the instantaneous boundary
    n_lines: dict                   # n -> rate over mach [rad/s]
    radius_lines: dict              # R [m] -> rate over mach [rad/s]
    points: tuple = ()              # (id, mach, rate [rad/s], n, text) of the turn requirements here

    def summary(self) -> dict:
        c, s, i = self.corner, self.best_sustained, self.best_instantaneous
        return {"altitude_m": self.altitude, "altitude_ft": self.altitude / FT,
                "corner_speed_m_s": None if c is None else c[1], "corner_mach": None if c is None else c[0],
                "max_sustained_turn_rate_deg_s": s[0] * DEG, "max_sustained_turn_mach": s[1],
                "max_sustained_turn_load_factor": s[2],
                "max_instantaneous_turn_rate_deg_s": i[0] * DEG, "max_instantaneous_turn_mach": i[1],
                "max_instantaneous_turn_load_factor": i[2]}


@dataclass(frozen=True)
class TurnChart:
    title: str
    weight_fraction: float
    n_limit: float
    n_limit_source: str
    cl_max: float
    levels: tuple          # the altitudes, :class:`TurnAltitude` each
    notes: tuple = ()
    styles: dict = field(default_factory=dict)   # id -> style.IdStyle (the same in every figure)

    def to_frame(self):
        """One row per altitude and Mach; units in the column names."""
        import pandas as pd

        rows = []
        for lv in self.levels:
            for j, Mn in enumerate(lv.mach):
                V = lv.speed[j]
                rows.append({"altitude_m": lv.altitude, "altitude_ft": lv.altitude / FT, "mach": Mn,
                             "speed_tas_m_s": V, "speed_tas_kn": V / KN,
                             "sustained_load_factor": lv.n_sustained[j],
                             "sustained_turn_rate_deg_s": lv.sustained[j] * DEG,
                             "sustained_turn_radius_m": V / lv.sustained[j] if lv.sustained[j] > 0 else math.nan,
                             "sustained_limited_by": lv.limited_by[j],
                             "instantaneous_load_factor": lv.n_instantaneous[j],
                             "instantaneous_turn_rate_deg_s": lv.instantaneous[j] * DEG,
                             "instantaneous_turn_radius_m": V / lv.instantaneous[j] if lv.instantaneous[j] > 0
                             else math.nan})
        return pd.DataFrame(rows)

    def as_dict(self) -> dict:
        return {"title": self.title, "weight_fraction": self.weight_fraction, "n_limit": self.n_limit,
                "n_limit_source": self.n_limit_source, "cl_max": self.cl_max,
                "altitudes": [lv.summary() for lv in self.levels], "notes": list(self.notes),
                "loads_caution": LOADS_CAUTION, "caution": CAUTION}

    def table_text(self) -> str:
        out = [f"Turn performance: {self.title}",
               f"  weight fraction {self.weight_fraction:.3f}, standard day, clean, full throttle; limit load factor "
               f"{self.n_limit:.2f} ({self.n_limit_source}); CLmax clean {self.cl_max:g}"]
        for lv in self.levels:
            s = lv.summary()
            out.append(f"  at {lv.altitude / FT:,.0f} ft ({lv.altitude:,.0f} m):")
            c = lv.corner
            out.append("    corner speed                      " + (
                "outside the Mach range (the limit load factor is not reached below the Mach limit)" if c is None
                else f"M {c[0]:.3f}, {c[1] / KN:,.0f} kn TAS ({c[1]:,.1f} m/s)"))
            out.append(f"    best instantaneous turn rate      {s['max_instantaneous_turn_rate_deg_s']:.2f} deg/s at "
                       f"M {s['max_instantaneous_turn_mach']:.3f} ({s['max_instantaneous_turn_load_factor']:.2f} g)")
            out.append("    best sustained turn rate          " + (
                "none (no level turn above 1 g is sustainable)" if not np.isfinite(s["max_sustained_turn_rate_deg_s"])
                else f"{s['max_sustained_turn_rate_deg_s']:.2f} deg/s at M {s['max_sustained_turn_mach']:.3f} "
                     f"({s['max_sustained_turn_load_factor']:.2f} g)"))
            out += [f"    {p[0]}: {p[4]}" for p in lv.points]
        return "\n".join(out + [f"  note: {t}" for t in self.notes] + ["", LOADS_CAUTION])

    def plot(self, **kwargs):
        """Draw the chart (see :func:`sizing.charts.turn_plot.plot_turn`)."""
        from .turn_plot import plot_turn  # lazy: a convenience method (listed in the layering test)

        return plot_turn(self, **kwargs)


def default_altitudes(tree) -> list:
    """Sea level and the altitudes of the file's turn and excess-power requirements, or with none,
    of its first cruise or maximum-Mach requirement (at most three)."""
    reqs = tree["requirements"].values()
    turns = sorted({float(r.get("altitude", 0.0)) for r in reqs
                    if r["kind"] in ("sustained-turn", "instantaneous-turn", "excess-power")})
    cruise = [float(r.get("altitude", 0.0)) for r in reqs if r["kind"] in ("cruise", "max-mach")][:1]
    alts = [0.0] + (turns or cruise)
    out = []
    for h in alts:
        if all(abs(h - o) > 1.0 for o in out):
            out.append(h)
    return out[:3]


def _level(fl, h, n_lim, ac, B, W_S, machs, rates, reqs, betas):
    air = isa(h)
    a, rho = float(air.speed_of_sound), float(air.density)
    lo, hi = float(fl.mach_lift(h)), float(min(fl.mach_limit(h), fl.mach_top))
    if not hi > lo:
        return None
    Mn = np.linspace(lo, hi, machs)
    V = Mn * a
    n_t, n_l = fl.load_factor(h, Mn)
    n_i = np.minimum(n_l, n_lim)
    n_s = np.minimum(np.where(np.isfinite(n_t), n_t, 0.0), n_i)
    by = tuple("thrust" if t <= min(lft, n_lim) else ("CLmax" if lft < n_lim else "limit n")
               for t, lft in zip(np.where(np.isfinite(n_t), n_t, 0.0), n_l))
    w_s, w_i = turn_rate(n_s, V), turn_rate(n_i, V)
    clmax = ac.polar.CLmax("clean")
    V_c = math.sqrt(2.0 * n_lim * B * W_S / (rho * clmax))
    corner = (V_c / a, V_c, float(turn_rate(n_lim, V_c))) if lo <= V_c / a <= hi else None

    def sustained(X):
        nt, nl = fl.load_factor(h + 0.0 * X, X)
        n = np.minimum(np.where(np.isfinite(nt), nt, 0.0), np.minimum(nl, n_lim))
        return turn_rate(n, X * a)

    def instantaneous(X):
        return turn_rate(np.minimum(fl.load_factor(h + 0.0 * X, X)[1], n_lim), X * a)

    best = []
    for f in (sustained, instantaneous):
        r, x = (float(v) for v in maximise(f, np.array(lo), np.array(hi)))
        nt, nl = (float(v) for v in fl.load_factor(h, x))
        n = min(nl, n_lim) if f is instantaneous else min(nt if math.isfinite(nt) else 0.0, nl, n_lim)
        best.append((r, x, n) if math.isfinite(r) and r > 0 else (math.nan, math.nan, math.nan))
    top = max(float(np.nanmax(w_i)), 1e-6) * 1.08
    W = np.linspace(0.0, top, rates)
    MM, WW = np.meshgrid(Mn, W)
    n_grid = np.sqrt(1.0 + (WW * MM * a / g0) ** 2)
    ps = fl.ps(h, MM, n_grid)
    ps = np.where(n_grid <= np.minimum(fl.load_factor(h, MM)[1], n_lim) * (1 + 1e-9), ps, np.nan)
    n_lines = {n: turn_rate(n, V) for n in (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0) if n <= n_lim + 1e-9}
    radius_lines = {R: V / R for R in (250.0, 500.0, 1000.0, 2000.0, 5000.0, 10000.0)}
    points = []
    for rid, r in reqs.items():
        if r["kind"] in ("sustained-turn", "instantaneous-turn") and abs(r.get("altitude", 0.0) - h) <= 1.0:
            Vr = r["mach"] * a if r.get("mach") is not None else r.get("speed")
            if Vr is None:
                continue
            w = float(turn_rate(r["load_factor"], Vr))
            points.append((rid, Vr / a, w, r["load_factor"],
                           f"{r['kind']} {r['load_factor']:g} g at M {Vr / a:.3f} = {w * DEG:.2f} deg/s, "
                           f"radius {Vr / w:,.0f} m; at its own weight fraction {betas.get(rid, 1.0):.2f}"))
    return TurnAltitude(altitude=h, mach=Mn, speed=V, n_sustained=np.where(n_s >= 1.0, n_s, np.nan),
                        n_instantaneous=n_i, sustained=w_s, instantaneous=w_i, limited_by=by, corner=corner,
                        best_sustained=best[0], best_instantaneous=best[1], rate_grid=W, ps=ps, n_lines=n_lines,
                        radius_lines=radius_lines, points=tuple(points))


def compute_turn(spec, res, altitudes=None, weight_fraction=None, machs=161, rates=90) -> TurnChart:
    """Turn chart of a solved design at pressure altitudes [m] (default :func:`default_altitudes`)."""
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the turn chart needs a feasible design; this requirement set has none")
    B = 1.0 if weight_fraction is None else float(weight_fraction)
    if not (0.0 < B <= 2.0):
        raise InputError(f"weight fraction {weight_fraction!r} must be a number in (0, 2]", field="--weight-fraction")
    tree = M.spec_tree(spec)
    ac, d = M.aircraft(tree), res.design
    hs = default_altitudes(tree) if altitudes is None else [float(h) for h in altitudes]
    if not hs or len(hs) > 4:
        raise InputError(f"give one to four altitudes, got {len(hs)}", field="--altitude")
    for h in hs:
        if not (-500.0 <= h <= H_MAX - 1.0):
            raise InputError(f"altitude {h:g} m is outside the standard atmosphere model (-500 m to {H_MAX:g} m)",
                             field="--altitude")
    W_S, Y = float(d.wing_loading), float(d.power_to_weight if res.propeller else d.thrust_to_weight)
    vn = compute_vn(spec, res)          # the limit load factor and where it comes from
    fl = Flight(W_S, Y, ac, Conditions(beta=B), domain_mach(ac))
    levels, notes = [], []
    for h in hs:
        lv = _level(fl, h, vn.n_positive, ac, B, W_S, machs, rates, tree["requirements"],
                    {r.id: r.beta for r in res.requirements})
        if lv is None:
            notes.append(f"at {h / FT:,.0f} ft the 1 g stall Mach is above the Mach limit: no turn to show")
        else:
            levels.append(lv)
    if not levels:
        raise InputError("no altitude given leaves a speed range to turn in; choose lower altitudes", field="--altitude")
    return TurnChart(title=res.title, weight_fraction=B, n_limit=vn.n_positive,
                     n_limit_source=f"{vn.category} category: {vn.n_positive_source}", cl_max=vn.cl_max,
                     levels=tuple(levels), notes=tuple(notes),
                     styles=styles_of(spec))

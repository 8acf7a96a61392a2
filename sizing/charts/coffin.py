"""Coffin corner and zoom of the sized design (numpy, SI): where the 1 g stall (or buffet) Mach and
the Mach limit close in at altitude, and the highest energy height of the 1 g envelope.

Low-speed edge at 1 g: the CLmax clean stall, M_s = sqrt(2 beta (W/S)/(rho CLmax))/a, or, when a
buffet-onset lift coefficient is given (a number or a function of Mach), the Mach at which the
1 g lift coefficient beta (W/S)/(0.7 p M^2) equals it (q = 0.7 p M^2 with gamma = 1.4). High-speed
edge: the Mach limit the solver uses for free speeds (the file's speed limit, else the end of the
polar's Mach table, else M 0.95). Both are Mach numbers at a pressure altitude, so the band
narrows with height; where the two meet is the coffin corner.

Energy height he = h + V^2/(2 g0) (Rutowski's energy method: Rutowski, E. S., "Energy Approach
to the General Aircraft Performance Problem", J. Aeronautical Sciences 21(3), 1954; Anderson,
*Aircraft Performance and Design*, McGraw-Hill, 1999, §5.10 (from memory for the section)). The
zoom ceiling estimate is the largest energy height on the 1 g level-flight envelope (at each
altitude its fastest flyable speed, within the Mach limit): an upper bound, with no drag losses
and the aircraft arriving at zero speed.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..common.conversions import FT, KN
from ..physics.aero import MachTable
from ..physics.atmosphere import GAMMA, g0, isa
from .performance import edge, take

SEARCH_TOP = 30000.0      # [m]: the coffin corner is sought up to this pressure altitude


def energy_height(altitude, V):
    """Energy height he = h + V^2/(2 g0) [m] (h [m], V [m/s] true airspeed).

    Examples
    --------
    Hand calculation: 10 000 m at 250 m/s -> 10 000 + 62 500/19.6133 = 13 186.61 m.

    >>> round(float(energy_height(10000.0, 250.0)), 2)
    13186.61
    """
    return np.asarray(altitude, dtype=float) + np.asarray(V, dtype=float) ** 2 / (2.0 * g0)


def buffet_lift(tree):
    """The buffet-onset lift coefficient of the SI tree (``aerodynamics.cl_buffet``: a number or a
    Mach table), as a number or a :class:`MachTable`; None when the file gives none."""
    c = tree["aircraft"]["aerodynamics"].get("cl_buffet")
    if isinstance(c, dict):
        return MachTable(tuple(c["mach"]), tuple(c.get("cl_buffet", c.get("cl", ()))))
    return c


def low_speed_mach(fl, h, cl_limit=None):
    """1 g low-speed edge [Mach] at altitudes h [m]: stall (CLmax clean), or buffet onset at cl_limit."""
    h = np.atleast_1d(np.asarray(h, dtype=float))
    if cl_limit is None:
        return np.asarray(fl.mach_lift(h), dtype=float)
    p = np.asarray(isa(h, fl.cond.temperature_offset).pressure, dtype=float)
    need = fl.cond.beta * fl.W_S / (0.5 * GAMMA * p)          # = CL M^2 at 1 g

    def above(Mx):          # True where the buffet CL exceeds the 1 g lift coefficient (flyable)
        cl = cl_limit(Mx) if callable(cl_limit) else cl_limit + 0.0 * Mx
        return cl * Mx ** 2 >= need[..., None] if np.ndim(Mx) > np.ndim(need) else cl * Mx ** 2 >= need

    X = np.linspace(0.02, max(float(fl.mach_top), 0.05), 161) + 0.0 * h[:, None]     # scan: CL_b M^2 may fall again
    ok = above(X)
    j = np.argmax(ok, axis=1)
    M = edge(above, take(X, np.maximum(j - 1, 0)), take(X, j), rising=True, points=33, passes=5)
    return np.where(ok.any(axis=1), np.where(j == 0, X[:, 0], M), np.nan)


@dataclass(frozen=True)
class CoffinCorner:
    """Low (stall or buffet) and high (Mach limit) 1 g edges over altitude [m] and where they meet."""

    low_kind: str                    # "stall (CLmax clean)" or "buffet onset (cl_buffet)"
    altitude: np.ndarray
    low: np.ndarray                  # [Mach]
    high: np.ndarray                 # [Mach]
    meet: tuple | None               # (altitude [m], Mach) where low reaches high, None below SEARCH_TOP
    narrowest: tuple | None          # (altitude [m], width [Mach], width [m/s TAS], low, high) up to top_altitude
    top_altitude: float              # [m]: the narrowest band is sought up to here (the absolute ceiling)

    @property
    def gap(self):
        return self.high - self.low

    def rows(self):
        """[(quantity, text, altitude, mach, value, unit)] for the envelope table."""
        out, low = [], self.low_kind.split(" (")[0]
        name = f"coffin corner (1 g {low} meets the Mach limit)"
        if self.meet is None:
            out.append((name, f"not below {SEARCH_TOP / FT:,.0f} ft", None, None, None, "m"))
        else:
            h, m = self.meet
            above = h > self.top_altitude + 1.0
            out.append((name, f"{h / FT:,.0f} ft ({h:,.0f} m) at M {m:.3f}" +
                        (" (above the absolute ceiling: thrust runs out first)" if above else ""), h, m, h, "m"))
        if self.narrowest is not None:
            h, w, wv, lo, hi = self.narrowest
            out.append(("narrowest speed band", f"M {w:.3f} wide ({wv / KN:,.0f} kn TAS) at {h / FT:,.0f} ft, "
                        f"M {lo:.3f} ({low}) to M {hi:.3f} (Mach limit); sought up to the absolute ceiling",
                        h, lo, w, "Mach"))
        return out


def coffin_corner(fl, altitudes, top_altitude, cl_limit=None) -> CoffinCorner:
    """The coffin corner of a :class:`sizing.charts.performance.Flight`: edges over altitudes [m] (extended
    up to where they meet), the narrowest band sought up to top_altitude [m] (the absolute ceiling)."""
    h = np.asarray(altitudes, dtype=float)
    kind = "stall (CLmax clean)" if cl_limit is None else "buffet onset (cl_buffet)"

    def closed(H):
        lo = low_speed_mach(fl, H, cl_limit).reshape(np.shape(H))
        return ~(lo < np.asarray(fl.mach_limit(H), dtype=float) + 0.0 * H)

    grid = np.linspace(0.0, SEARCH_TOP, 121)
    shut = closed(grid)
    meet = None
    if shut.any():
        j = int(np.argmax(shut))
        if j == 0:
            meet = (0.0, float(fl.mach_limit(0.0)))
        else:
            hm = float(edge(closed, np.array(grid[j - 1]), np.array(grid[j]), rising=True))
            meet = (hm, float(fl.mach_limit(hm)))
    if meet is not None and meet[0] > h[-1]:        # the edges drawn up to where they meet
        h = np.linspace(h[0], meet[0], len(h))
    low, high = low_speed_mach(fl, h, cl_limit), np.asarray(fl.mach_limit(h), dtype=float) + 0.0 * h
    top = min(float(top_altitude), SEARCH_TOP)
    hs = np.linspace(max(0.0, float(h[0])), top, 201)
    lo_s, hi_s = low_speed_mach(fl, hs, cl_limit), np.asarray(fl.mach_limit(hs), dtype=float) + 0.0 * hs
    w = hi_s - lo_s
    narrowest = None
    if np.isfinite(w).any():
        k = int(np.nanargmin(w))
        a = float(isa(hs[k], fl.cond.temperature_offset).speed_of_sound)
        narrowest = (float(hs[k]), float(w[k]), float(w[k]) * a, float(lo_s[k]), float(hi_s[k]))
    return CoffinCorner(kind, h, low, high, meet, narrowest, top)


@dataclass(frozen=True)
class Zoom:
    """The zoom ceiling estimate: the largest energy height [m] of the 1 g level-flight envelope, from
    (altitude [m], Mach) where it is reached."""

    energy_height: float
    altitude: float
    mach: float

    def rows(self):
        return [("zoom ceiling (upper bound)", f"{self.energy_height / FT:,.0f} ft ({self.energy_height:,.0f} m): "
                 f"the largest energy height of the 1 g envelope, from M {self.mach:.3f} at {self.altitude / FT:,.0f} ft; "
                 f"no drag losses, zero speed at the top", self.altitude, self.mach, self.energy_height, "m")]


def zoom_ceiling(level, mach_limit) -> Zoom | None:
    """Largest he on the fast edge of a 1 g level-flight :class:`Boundary`, the Mach capped by
    ``mach_limit`` (an array over the boundary's altitudes)."""
    hs = level.altitude
    M = np.minimum(level.hi, mach_limit)
    ok = np.isfinite(M)
    if not ok.any():
        return None
    a = np.asarray(isa(hs, level.cond.temperature_offset).speed_of_sound, dtype=float)
    he = np.where(ok, energy_height(hs, np.where(ok, M, 0.0) * a), -math.inf)
    if level.top is not None:            # the very top of the envelope
        ht, mt = level.top
        he_t = float(energy_height(ht, min(mt, float(np.interp(ht, hs, mach_limit))) *
                                   float(isa(ht, level.cond.temperature_offset).speed_of_sound)))
        if he_t > float(np.max(he)):
            return Zoom(he_t, ht, mt)
    k = int(np.argmax(he))
    return Zoom(float(he[k]), float(hs[k]), float(M[k]))

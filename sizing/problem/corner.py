"""When the takeoff mass does not depend on the design point: the corner shown instead.

With a fixed empty fraction and a fixed fuel fraction (or an empty-mass regression in the takeoff
mass alone, or a mission of fixed segment fractions only) the weight closure gives one takeoff
mass for every feasible (W/S, T/W): lightest is no choice at all. The point shown is then the
smallest engine, then the smallest wing: the least T/W (P/W) over the feasible wing loadings, then
the largest wing loading at that T/W. It is computed from the constraint curves (the same
functions as the solver and the diagram), each requirement's free speed at its best.
"""
from __future__ import annotations

import math
import warnings

import numpy as np

from .. import weights as Wt
from . import tree as M
from .start import needs

GRID = 400            # wing loadings of the first scan (geometric over the search region)
CURVE_RTOL = 1e-12    # thrust accuracy of the curves at the corner (free speeds refined this far)
PLATEAU_RTOL = 1e-9   # "at that T/W": within this fraction of the least T/W


def mass_independent(prob, p) -> bool:
    """Whether the closed takeoff mass does not depend on W/S or T/W (P/W) for parameters ``p``:
    the empty and fuel fractions are the same at design points spread over the search region
    (exactly: to 1e-12), at the takeoff mass of three sizes."""
    tree = prob.tree_of(p)
    lo, hi = prob.WS_bounds
    W = np.geomspace(max(lo, 1.0), hi, 5)
    Y = np.linspace(0.05, 0.5, 5) * prob.Y_bounds[1]
    WW, YY = (a.ravel() for a in np.meshgrid(W, Y))
    fixed = prob.fixed_mass(tree)
    with np.errstate(all="ignore"):
        for m in (2.0 * fixed, 5.0 * fixed, 20.0 * fixed):
            ac = M.aircraft(tree, m)
            try:
                fe = np.broadcast_to(np.asarray(Wt.empty_fraction_of(tree, m, WW, YY, prob.propeller), float),
                                     WW.shape)
                ff = np.broadcast_to(np.asarray(Wt.fuel_fraction(tree, ac, WW), float), WW.shape)
            except (ValueError, TypeError):
                return False
            if not (np.all(np.isfinite(fe)) and np.all(np.isfinite(ff))):
                return False
            if np.ptp(fe) > 1e-12 or np.ptp(ff) > 1e-12:
                return False
    return True


def _curves(prob, tree, ac, W, rtol):
    """(Y needed, W/S limit, free speeds) of every requirement over the wing loadings W."""
    Y_need, ws_lim, speeds = needs(prob, tree, ac, W, Wt.segment_end_fractions(tree, ac, W), rtol=rtol)
    return np.maximum(Y_need, prob.Y_bounds[0]), ws_lim, speeds


def corner(prob, p, m_TO):
    """The scaled decision vector of the smallest engine, then the smallest wing, at takeoff mass
    ``m_TO`` [kg]: Y* = min over the feasible W/S of the largest T/W (P/W) any requirement needs,
    then the largest feasible W/S whose need is within :data:`PLATEAU_RTOL` of Y*, and T/W set to
    the need there (so the requirements that bound it are met with equality). None where the
    scan finds no feasible wing loading."""
    tree = prob.tree_of(p)
    ac = M.aircraft(tree, m_TO)
    lo, hi = prob.WS_bounds
    W = np.geomspace(max(lo, 1e-3), hi, GRID)

    def need(Ws):
        Ws = np.atleast_1d(np.asarray(Ws, dtype=float))
        Y, lim, sp = _curves(prob, tree, ac, Ws, CURVE_RTOL)
        ok = (Ws <= lim) & np.isfinite(Y) & (Y <= prob.Y_bounds[1])
        return np.where(ok, Y, np.inf), lim, sp

    Y, lim, _ = need(W)
    if not np.any(np.isfinite(Y)):
        return None
    i = int(np.argmin(Y))
    # the least need, refined between the grid's neighbours (a smooth minimum or a kink)
    a, b = W[max(i - 1, 0)], W[min(i + 1, W.size - 1)]
    Y_star = float(Y[i])
    if b > a:
        from scipy.optimize import minimize_scalar  # here: scipy costs a cold command 0.3 s

        with np.errstate(all="ignore"), warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)     # an infeasible probe's inf
            res = minimize_scalar(lambda w: float(need(w)[0][0]), bounds=(a, b), method="bounded",
                                  options={"xatol": 1e-10 * b})
        if res.success and float(res.fun) < Y_star:
            Y_star = float(res.fun)
    level = Y_star * (1.0 + PLATEAU_RTOL)
    # the largest wing loading needing no more than the least: the last grid point at the level,
    # then a bisection towards the next one (where the need rises or the W/S limit is passed)
    ok = np.flatnonzero(Y <= level)
    j = int(ok[-1]) if ok.size else i
    W_c = float(W[j]) if ok.size else float(res.x if b > a else W[i])
    if j + 1 < W.size and ok.size:
        a, b = W[j], W[j + 1]
        for _ in range(200):
            c = 0.5 * (a + b)
            if float(need(c)[0][0]) <= level:
                a = c
            else:
                b = c
            if b - a <= 1e-13 * b:
                break
        W_c = float(a)
        # a W/S limit within the bracket: the corner sits exactly on it
        lim_b = float(need(b)[1][0])
        if math.isfinite(lim_b) and a <= lim_b <= b and float(need(lim_b)[0][0]) <= level:
            W_c = lim_b
    Y_c, _lim, sp = need(W_c)
    Y_c = float(Y_c[0])
    if not math.isfinite(Y_c):
        return None
    x = [W_c / prob.WS_scale, Y_c / prob.Y_scale, m_TO / prob.m_ref]
    for rid in prob.free:
        v = float(np.asarray(sp.get(rid, [math.nan]))[0])
        if not math.isfinite(v):
            return None
        x.append(v / prob.V_scale)
    return np.array(x, dtype=float)

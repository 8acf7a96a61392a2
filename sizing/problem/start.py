"""The starting point of a solve: the best point of a coarse numpy scan over wing loading.

The spreadsheet way: the required T/W (P/W) of every requirement over a
geometric grid of W/S (free speeds minimised by :func:`sizing.constraints.required_curve`),
the W/S limits, and the weight closed by fixed-point iteration at each grid point.
"""
from __future__ import annotations

import numpy as np

from .. import constraints as C
from .. import weights as Wt
from . import tree as M


def scan(prob, p, n=48):
    """(x0, found): the lightest closed design of an n-point W/S scan as a scaled decision
    vector clipped to the bounds, and whether any scanned point met every requirement and
    closed (else x0 is the point needing the least thrust)."""
    tree = prob.tree_of(p)
    W = np.geomspace(prob.WS_bounds[0], prob.WS_bounds[1], n)
    fixed = prob.fixed_mass(tree)
    guess = 3.0 * fixed
    # a propeller of given diameter makes the curves depend on the mass: scan twice, the
    # second time at the first scan's closed masses
    for _ in range(2 if M.needs_takeoff_mass(tree) else 1):
        Y_need, ok, speeds, mass, closes = _scan_once(prob, tree, W, guess)
        guess = np.where(np.isfinite(mass), mass, 3.0 * fixed)
    score = np.where(ok & closes & np.isfinite(mass), mass * (1 + 1e-6 * Y_need), np.inf)
    found = bool(np.any(np.isfinite(score)))
    if not np.any(np.isfinite(score)):
        i = int(np.argmin(np.where(np.isfinite(Y_need), Y_need, np.inf)))
    else:
        i = int(np.argmin(score))
    x0 = [W[i] / prob.WS_scale,
          min(max(Y_need[i] if np.isfinite(Y_need[i]) else 0.5 * prob.Y_bounds[1], prob.Y_bounds[0]), prob.Y_bounds[1]) / prob.Y_scale,
          (mass[i] if np.isfinite(mass[i]) else 3.0 * fixed) / prob.m_ref]
    for rid in prob.free:
        v = speeds.get(rid, np.full_like(W, 100.0))[i]
        x0.append((v if np.isfinite(v) else 100.0) / prob.V_scale)
    return np.clip(np.array(x0, dtype=float), prob.lbx, prob.ubx), found


def _scan_once(prob, tree, W, takeoff_mass):
    """(Y needed, W/S limits met, best free speeds, closed mass, closes) over the W/S grid."""
    ac = M.aircraft(tree, takeoff_mass)
    ok = np.ones_like(W, dtype=bool)
    try:
        seg_end = Wt.segment_end_fractions(tree, ac, W)
    except Exception:  # noqa: BLE001 - a guess only
        seg_end = {}
    Y_need, ws_lim, speeds = needs(prob, tree, ac, W, seg_end, rtol=1e-6, samples=60)   # a start only
    ok &= W <= ws_lim
    Y_need = np.maximum(Y_need, prob.Y_bounds[0])
    ok &= Y_need <= prob.Y_bounds[1]
    with np.errstate(all="ignore"):
        f_fuel = Wt.fuel_fraction(tree, ac, W)
        fixed = prob.fixed_mass(tree)
        mass = np.full_like(W, 3.0 * fixed)
        closes = np.ones_like(W, dtype=bool)
        for _ in range(30):
            f_e = Wt.empty_fraction_of(tree, mass, W, Y_need, prob.propeller)
            closes = 1 - f_fuel - f_e > 0.01
            new = np.where(closes, fixed / (1 - f_fuel - f_e), np.inf)
            new = np.clip(new, fixed, 1000 * fixed)       # a finite start for the next step
            if np.array_equal(new, mass):                 # a fixed point: more steps change nothing
                break
            mass = new
        closes &= mass < 1000 * fixed                      # inside the search region
    return Y_need, ok, speeds, mass, closes


def needs(prob, tree, ac, W, seg_end, rtol, samples=None):
    """(Y needed, W/S limit, best free speeds by id) of every requirement over the wing loadings
    W [N/m^2]: the largest T/W (P/W) any requirement needs (inf where none meets it), the
    smallest W/S limit, each free speed at its best (:func:`sizing.constraints.required_curve`).
    ``seg_end``: the mission's weight fractions after each segment (``after:`` weights; 1.0
    where a segment is missing)."""
    Y_need = np.zeros_like(W)
    ws_lim = np.full_like(W, np.inf)
    speeds = {}
    kw = {"rtol": rtol} if samples is None else {"rtol": rtol, "samples": samples}
    for rid in prob.req_ids:
        r = tree["requirements"][rid]
        wf = r.get("weight_fraction")
        beta = seg_end.get(wf["after"], 1.0) if isinstance(wf, dict) else None
        req = M.requirement(r, ac, beta)
        with np.errstate(all="ignore"):
            thrust, lim, Vb = C.required_curve(req, ac, W, **kw)
        if thrust is not None:
            Y_need = np.maximum(Y_need, np.where(np.isfinite(thrust), thrust, np.inf))
        if lim is not None:
            ws_lim = np.minimum(ws_lim, lim)
        if Vb is not None:
            speeds[rid] = Vb
    return Y_need, ws_lim, speeds

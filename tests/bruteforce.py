"""An independent brute-force sizer written for the tests (the spreadsheet way).

Plain numpy: a fine grid of wing loadings, T/W (or P/W) taken as the maximum of
the required curves, free speeds by a dense scan from stall to the speed limit,
the weight closure evaluated pointwise by fixed-point iteration. It shares the
physics (constraint functions, weight models) with the solver, not the
optimization.  # common practice, no source
"""
import numpy as np

from sizing import constraints as C
from sizing import weights as Wt
from sizing.problem import tree as M


def _betas(tree, ac, W):
    seg = {}
    if "mission" in tree and "fraction" not in tree["aircraft"]["weights"].get("fuel", {}):
        for name, _f, be in Wt.mission_fractions(tree, ac, W):
            seg[name] = np.asarray(be) + 0 * W
    return seg


def curves(tree, W, n_speed=120, rescans=2, takeoff_mass=None):
    """Required Y per requirement (inf where infeasible) and W/S limits, on grid W.

    Free speeds are scanned densely from min_speed_factor x the stall speed to the speed limit,
    speeds past buffet onset (CL x margin > CL_buffet(M)) dropped point by point: ``n_speed``
    speeds, then ``rescans`` dense rescans of as many speeds between the neighbours of the best
    one (each narrows the speed to 2/n_speed of the last: with the defaults to 1e-6 of the
    window, so the thrust is within about 1e-12 of its minimum).
    """
    ac = M.aircraft(tree, takeoff_mass)
    seg = _betas(tree, ac, W)
    need, lims = {}, {}
    for rid, r in tree["requirements"].items():
        wf = r.get("weight_fraction")
        beta = seg[wf["after"]] if isinstance(wf, dict) else None
        req = M.requirement(r, ac, beta)
        kind = C.KINDS[r["kind"]]
        if kind.has_free_speed(req):
            air = C.condition(req)
            CLmax = ac.polar.CLmax(C.config_of(req))
            k = r.get("min_speed_factor", 1.2)
            V_lo = k * np.sqrt(2 * req.beta * W / (air.density * CLmax))
            V_hi = float(C.max_free_speed(ac, air)) + 0 * V_lo
            if r["kind"] == "ceiling" and ac.cl_buffet is not None:
                V_lo, V_hi = _buffet_band(ac, air, np.asarray(req.beta) * W, V_lo, V_hi)
            reqb = M.requirement(r, ac, beta[:, None] if beta is not None else None)
            lo, hi = V_lo, np.maximum(V_hi, V_lo)
            u = np.linspace(0, 1, n_speed)
            rows = np.arange(W.size)
            for _ in range(1 + rescans):
                with np.errstate(all="ignore"):           # no speed left: an empty window
                    V = lo[:, None] + u[None, :] * (hi - lo)[:, None]
                    T = np.asarray(kind.function(W[:, None], V, reqb, ac).thrust, float)
                T = np.where(np.isfinite(T) & (T > 0), T, np.inf)
                j = T.argmin(axis=1)
                best = T[rows, j]
                lo, hi = V[rows, np.maximum(j - 1, 0)], V[rows, np.minimum(j + 1, n_speed - 1)]
            need[rid] = np.where(V_hi >= V_lo, best, np.inf)
        else:
            with np.errstate(all="ignore"):
                b = kind.function(W, None, req, ac)
            if b.thrust is not None:
                need[rid] = np.broadcast_to(np.asarray(b.thrust, float), W.shape)
            if b.wing_loading is not None:
                lims[rid] = np.broadcast_to(np.asarray(b.wing_loading, float), W.shape)
    return need, lims


def _buffet_band(ac, air, betaW, V_lo, V_hi, n=400):
    """Speeds (per W/S) where CL x margin <= CL_buffet(M): a dense grid, then the two edges by
    bisection on the condition itself (written here, apart from the solver's)."""
    def fine(V):
        CL = betaW[:, None] / (0.5 * air.density * V ** 2)
        CLb = ac.cl_buffet(V / air.speed_of_sound) if callable(ac.cl_buffet) else ac.cl_buffet + 0 * V
        return CL * ac.buffet_margin <= CLb

    V = V_lo[:, None] + np.linspace(0, 1, n)[None, :] * np.maximum(V_hi - V_lo, 0)[:, None]
    ok = fine(V)
    some = ok.any(axis=1)
    rows = np.arange(len(V_lo))
    j1 = np.argmax(ok, axis=1)
    j2 = n - 1 - np.argmax(ok[:, ::-1], axis=1)
    a, b = V[rows, np.maximum(j1 - 1, 0)], V[rows, j1]
    a = np.where(j1 > 0, a, b)
    c, d = V[rows, j2], V[rows, np.minimum(j2 + 1, n - 1)]
    d = np.where(j2 < n - 1, d, c)
    for _ in range(60):
        m1, m2 = 0.5 * (a + b), 0.5 * (c + d)
        g1, g2 = fine(m1[:, None])[:, 0], fine(m2[:, None])[:, 0]
        a, b = np.where(g1, a, m1), np.where(g1, m1, b)
        c, d = np.where(g2, m2, c), np.where(g2, d, m2)
    return np.where(some, b, np.inf), np.where(some, c, -np.inf)


def closure(tree, W, Y, propeller):
    ac = M.aircraft(tree)
    w = tree["aircraft"]["weights"]
    fixed = w.get("crew", 0.0) + w.get("payload", 0.0)
    with np.errstate(all="ignore"):
        f_fuel = np.asarray(Wt.fuel_fraction(tree, ac, W)) + 0 * W
        m = np.full_like(W, 3 * fixed)
        for _ in range(200):
            f_e = np.asarray(Wt.empty_fraction_of(tree, m, W, Y, propeller)) + 0 * W
            den = 1 - f_fuel - f_e
            m_new = np.where(den > 0.01, fixed / den, np.inf)
            if np.allclose(m_new, m, rtol=1e-13, equal_nan=True):
                break
            m = np.where(np.isfinite(m_new), m_new, 3 * fixed)
        return np.where(den > 0.01, m_new, np.inf)


def best(tree, W_bounds, Y_bounds, propeller, n=400, n_zoom=200, rtol=2e-7):
    """Lightest grid point: a geometric grid of ``n`` wing loadings over the box, then grids of
    ``n_zoom`` points over +/- 2 steps around the best one until the step is below ``rtol`` of
    the wing loading (4 grids with the defaults: 1.3e-2, 2.5e-4, 5e-6, 1e-7)."""
    def scan_at(W, mass):
        need, lims = curves(tree, W, takeoff_mass=mass)
        Y = np.zeros_like(W)
        for v in need.values():
            Y = np.maximum(Y, v)
        Y = np.maximum(Y, Y_bounds[0])
        ok = (Y <= Y_bounds[1]) & np.isfinite(Y)
        for v in lims.values():
            ok &= W <= v
        m = closure(tree, W, np.where(ok, Y, 0.0), propeller)
        m = np.where(ok, m, np.inf)
        return m, Y, need, lims

    def scan(W, start=None):
        """A propeller of given diameter makes the curves depend on the mass: fixed-point
        iteration of mass -> curves -> closure at every grid point (from ``start``, a zoomed
        grid from the best mass of the grid before)."""
        if not M.needs_takeoff_mass(tree):
            return scan_at(W, None)
        w = tree["aircraft"]["weights"]
        mass = np.full_like(W, 3.0 * (w.get("crew", 0.0) + w.get("payload", 0.0)) if start is None else start)
        for _ in range(60):
            m, Y, need, lims = scan_at(W, mass)
            new = np.where(np.isfinite(m), m, mass)
            if np.allclose(new, mass, rtol=1e-11):
                break
            mass = new
        return m, Y, need, lims

    W = np.geomspace(W_bounds[0], W_bounds[1], n)
    m, Y, need, lims = scan(W)
    if not np.any(np.isfinite(m)):
        return None
    while True:
        i = int(np.argmin(m))
        lo, hi = W[max(i - 2, 0)], W[min(i + 2, W.size - 1)]
        W = np.union1d(np.linspace(lo, hi, n_zoom), W[i])     # never worse than the last grid
        m, Y, need, lims = scan(W, m[i])
        step = (hi - lo) / (n_zoom - 1)
        if step <= rtol * lo:
            break
    j = int(np.argmin(m))
    return {"W": W[j], "Y": Y[j], "m": m[j], "step": step,
            "need": {k: v[j] for k, v in need.items()}, "lims": {k: v[j] for k, v in lims.items()}}

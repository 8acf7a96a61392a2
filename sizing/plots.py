"""Constraint diagram: every requirement over wing loading, the design point
and lines of constant takeoff mass (the only module here that draws).

Compute, then data, then plot. :func:`diagram_data` samples each requirement
with :func:`sizing.constraints.required_curve`, the function the optimizer's
constraints are built from, and the weight closure with
:mod:`sizing.weights`; :func:`constraint_diagram` draws those numbers and
computes no physics; :func:`write_diagram` writes PNG, SVG or PDF (and the
curves as CSV) atomically. Axes: W_TO/S [N/m^2] against T_SL/W_TO [-] or, for
propeller aircraft, P_SL/W_TO [W/N]; ``units="us"``: lb/ft^2, lb/lb or hp/lb.
Figures are plain :class:`matplotlib.figure.Figure` objects (no pyplot, no
display, nothing left open); matplotlib is imported only when drawing.
"""
from __future__ import annotations

import io
import math
import textwrap
from collections import namedtuple
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from . import constraints as C
from . import model as M
from . import weights as Wt
from .atmosphere import g0

# --------------------------------------------------------------------------
# Look (defined once; this project's own choice)
# --------------------------------------------------------------------------
# Six line colours picked for this project: each has at least 3:1 contrast
# on white (WCAG 2.1 non-text contrast) and every pair stays at least
# Delta E 20 (CIE76) apart under simulated protanopia, deuteranopia and
# tritanopia (checked in tests/test_plots.py). Curves are labelled on the
# plot and carry a marker too, so no reading depends on colour alone.
PALETTE = ("#225599", "#bb2233", "#1f95a8", "#968a14", "#7a2fc7", "#83385a")
MARKERS = ("o", "s", "^", "D", "v", "P", "X")
LINESTYLES = ("-", (0, (7, 2.5)), (0, (1.5, 1.5)))   # after every six requirements
FEASIBLE_FILL = "#e4eef6"
NO_CLOSURE_FILL = "#efefef"     # where the weight closure has no solution
MASS_COLOUR = "#6b6b6b"
DESIGN_COLOUR = "#111111"
FIGSIZE = (11.0, 7.4)        # [in]; 16:10-ish, readable on a projected slide
DPI = 150
FONT = {"title": 15, "subtitle": 10.5, "axis": 12, "tick": 10.5, "label": 10.5,
        "mass": 9, "design": 10, "footer": 7.5, "banner": 20}

LBF_FT2, N_PER_LBF, HP, LB = Wt.LBF_FT2, Wt.N_PER_LBF, Wt.HP, Wt.LB   # Pa, N, W, kg per US unit


# display units per SI unit of wing loading, T/W (or P/W) and mass, with their names
_Units = namedtuple("_Units", "x x_unit y y_unit mass mass_unit")


def _units(name: str, propeller: bool) -> _Units:
    if name == "si":
        return _Units(1.0, "N/m²", 1.0, "W/N" if propeller else "–", 1.0, "kg")
    if name == "us":
        y = N_PER_LBF / HP if propeller else 1.0
        return _Units(1.0 / LBF_FT2, "lb/ft²", y, "hp/lb" if propeller else "lb/lb", 1.0 / LB, "lb")
    raise ValueError(f"units must be 'si' or 'us', got {name!r}")


# --------------------------------------------------------------------------
# Data: sampled curves and the mass grid (no drawing)
# --------------------------------------------------------------------------

@dataclass(frozen=True)
class Curve:
    """One requirement sampled over the diagram's wing loadings.

    thrust : required T_SL/W_TO [-] (P_SL/W_TO [W/N] for propeller aircraft)
        at each wing loading, ``inf`` where no flight speed meets it; None if
        the kind sets no thrust bound.
    limit : upper limit on W_TO/S [N/m^2] at each wing loading, or None.
    boundary : the wing loading where W_TO/S equals the limit (the vertical
        line drawn) [N/m^2], ``nan`` if there is none in the sampled range.
    """

    id: str
    kind: str
    index: int
    active: bool
    thrust: np.ndarray | None
    limit: np.ndarray | None
    boundary: float | None


@dataclass(frozen=True)
class DiagramData:
    """Everything the diagram shows, in SI."""

    title: str
    propeller: bool
    W_S: np.ndarray                   # sampled wing loadings [N/m^2]
    curves: tuple                     # of Curve, in file order
    x_range: tuple                    # [N/m^2]
    y_range: tuple                    # [-] or [W/N]
    design: tuple | None              # (W/S [N/m^2], T/W or P/W, m_TO [kg]) or None
    mass_W_S: np.ndarray              # mass grid axes
    mass_Y: np.ndarray
    mass: np.ndarray                  # closed takeoff mass [kg], nan where it does not close
    closure_rest: np.ndarray          # 1 - f_fuel - f_empty on the same grid (<= 0: no closure)
    drivers: tuple = ()
    on_edge: tuple = ()
    infeasibility: object = None
    source: str = ""
    sha256: str = ""

    def envelope(self):
        """(required Y at each W/S over all thrust curves, lowest W/S boundary)."""
        Y = np.zeros_like(self.W_S)
        for c in self.curves:
            if c.thrust is not None:
                Y = np.maximum(Y, np.where(np.isnan(c.thrust), np.inf, c.thrust))
        b = [c.boundary for c in self.curves if c.boundary is not None and np.isfinite(c.boundary)]
        return Y, (min(b) if b else np.inf)


def _segment_betas(tree, ac, W_S):
    with np.errstate(all="ignore"):
        return {name: np.asarray(be, float) + 0.0 * W_S
                for name, be in Wt.segment_end_fractions(tree, ac, W_S).items()}


def _sample(r, ac, W_S, seg):
    """(thrust, limit) of one requirement at W_S, betas as the solver uses them.

    ``seg`` maps mission segment names to the weight fraction at their end
    (arrays over W_S); an empty mapping uses 1.0 for ``after:`` fractions
    (good enough to choose axis ranges, never drawn).
    """
    wf = r.get("weight_fraction")
    beta = seg.get(wf["after"]) if isinstance(wf, dict) else None
    with np.errstate(all="ignore"):
        t, lim, _ = C.required_curve(M.requirement(r, ac, beta), ac, W_S)
    return t, lim


def sample_requirements(spec, W_S, exact=True) -> dict:
    """{id: (required T/W or P/W array or None, W/S limit array or None)} at W_S [N/m^2].

    exact=False takes 1.0 for weight fractions given ``after:`` a mission
    segment (a quick look for axis ranges).
    """
    W_S = np.atleast_1d(np.asarray(W_S, dtype=float))
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree)
    seg = _segment_betas(tree, ac, W_S) if exact else {}
    return {rid: _sample(r, ac, W_S, seg) for rid, r in tree["requirements"].items()}


def _boundary(W_S, lim):
    """First wing loading where W_S reaches the limit (linear interpolation)."""
    if lim is None:
        return None
    if np.allclose(lim, lim[0], rtol=1e-12, atol=0.0):
        return float(lim[0])
    g = np.asarray(lim, float) - W_S
    bad = np.where(~(g > 0))[0]
    if bad.size == 0:
        return math.nan
    i = int(bad[0])
    if i == 0 or not np.isfinite(g[i]):
        return float(W_S[i])
    return float(W_S[i - 1] + (W_S[i] - W_S[i - 1]) * g[i - 1] / (g[i - 1] - g[i]))


def closure_mass_grid(spec, W_S, Y, iterations=80, residual=False):
    """Closed takeoff mass [kg] on a grid of wing loading x T/W (or P/W).

    Fixed-point iteration of m = (m_crew + m_payload)/(1 - f_fuel(W/S) -
    f_empty(m, W/S, Y)) with the file's own weight models (as
    ``Problem.initial_guess`` does); ``nan`` where the closure has no
    solution or does not converge. Returns an array of shape (len(Y), len(W_S));
    with ``residual=True`` also 1 - f_fuel - f_empty at the last iterate, a
    continuous field whose zero is the edge of the closable region.
    """
    tree = M.spec_tree(spec)
    ac = M.aircraft(tree)
    w = tree["aircraft"]["weights"]
    fixed = w.get("crew", 0.0) + w.get("payload", 0.0)
    WW, YY = np.meshgrid(np.asarray(W_S, float), np.asarray(Y, float))
    with np.errstate(all="ignore"):
        f_fuel = np.asarray(Wt.fuel_fraction(tree, ac, WW), float) + 0.0 * WW
        mass = np.full_like(WW, 3.0 * fixed)
        prev = mass
        for _ in range(iterations):
            f_e = np.asarray(Wt.empty_fraction(w, tree["aircraft"], mass, WW, YY, spec.is_propeller), float)
            rest = 1.0 - f_fuel - f_e
            prev, mass = mass, np.where(rest > 1e-3, fixed / rest, np.nan)
            mass = np.clip(mass, fixed, 1e4 * fixed)
        ok = np.isfinite(mass) & (np.abs(mass - prev) <= 1e-7 * mass) & (mass < 1e4 * fixed)
    mass = np.where(ok, mass, np.nan)
    return (mass, np.where(ok, rest, np.minimum(rest, 0.0))) if residual else mass


def _nice(x):
    """The round number (1, 2, 2.5 or 5 x 10^k) at or above x > 0."""
    if not x > 0:
        return 1.0
    e = 10.0 ** math.floor(math.log10(x))
    return next(k * e for k in (1.0, 2.0, 2.5, 5.0, 10.0) if k * e >= x * (1 - 1e-12))


def _nice_ceil(x):
    """x rounded up to a multiple of a round step near x/8."""
    step = _nice(x / 8.0)
    return math.ceil(x / step - 1e-9) * step


def _ranges(spec, result, u):
    """(x range [N/m^2], y range) around the design point, design_space first."""
    ds = spec.model.design_space
    box_x = tuple(float(v) for v in ds.wing_loading) if ds and ds.wing_loading else None
    yb = (ds.power_to_weight if spec.is_propeller else ds.thrust_to_weight) if ds else None
    box_y = tuple(float(v) for v in yb) if yb else None
    coarse = np.geomspace(max((box_x or (100.0,))[0], 1.0), (box_x or (0, 15000.0))[1], 120)
    env, bounds, minima = np.zeros_like(coarse), [], []
    for t, lim in sample_requirements(spec, coarse, exact=False).values():
        if t is not None:
            env = np.maximum(env, np.where(np.isfinite(t), t, np.inf))
        b = _boundary(coarse, lim)
        if b is not None and np.isfinite(b):
            bounds.append(b)
    if result is not None and result.feasible:
        d = result.design
        W0, Y0 = d.wing_loading, d.power_to_weight if result.propeller else d.thrust_to_weight
    else:
        W0 = min(bounds) if bounds else float(coarse[np.argmin(env)])
        Y0 = float(np.interp(W0, coarse, np.where(np.isfinite(env), env, np.nan)))
        if not np.isfinite(Y0):
            Y0 = 0.5 * (box_y[1] if box_y else (100.0 if spec.is_propeller else 2.0))
    x_hi = max([2.0 * W0] + [1.12 * b for b in bounds if b <= 3.0 * W0])    # show nearby limits
    x_hi = _nice_ceil(x_hi * u.x) / u.x
    x_range = box_x or (0.0, x_hi)
    look = np.linspace(max(x_range[0], x_range[1] / 60), x_range[1], 40)
    for t, lim in sample_requirements(spec, look, exact=False).values():
        if t is not None and np.any(np.isfinite(t)):
            minima.append(float(np.nanmin(np.where(np.isfinite(t), t, np.nan))))
    y_hi = max(1.9 * Y0, 1.2 * max(minima, default=0.0), 1e-6)
    y_hi = _nice_ceil(y_hi * u.y) / u.y
    return x_range, box_y or (0.0, y_hi)


def diagram_data(spec, result=None, *, units="si", samples=None, grid=(150, 120)) -> DiagramData:
    """Sample every requirement and the weight closure for the diagram.

    Parameters
    ----------
    spec : :class:`sizing.spec.Spec`
    result : :class:`sizing.model.Result`, or None to solve the spec first
    units : "si" or "us" (only the automatic axis rounding depends on it)
    samples : number of wing loadings sampled for the curves (default 301)
    grid : (wing loadings, T/W values) of the constant-mass grid
    """
    u = _units(units, spec.is_propeller)
    if result is None:
        from .solve import solve

        result = solve(spec)
    x_range, y_range = _ranges(spec, result, u)
    x0 = x_range[0] if x_range[0] > 0 else x_range[1] / 200.0
    if samples is None:
        samples = 301
    W_S = np.linspace(x0, x_range[1], int(samples))
    sampled = sample_requirements(spec, W_S)
    active = {r.id for r in result.requirements if r.active}
    curves = [Curve(rid, spec.requirement(rid).kind, i, rid in active, t, lim, _boundary(W_S, lim))
              for i, (rid, (t, lim)) in enumerate(sampled.items())]
    mW = np.linspace(x0, x_range[1], grid[0])
    mY = np.linspace(y_range[0], y_range[1], grid[1])
    mass, rest = closure_mass_grid(spec, mW, mY, residual=True)
    design = None
    if result.feasible:
        d = result.design
        design = (d.wing_loading, d.power_to_weight if result.propeller else d.thrust_to_weight, d.takeoff_mass)
    return DiagramData(title=spec.title, propeller=spec.is_propeller, W_S=W_S, curves=tuple(curves),
                       x_range=tuple(x_range), y_range=tuple(y_range), design=design,
                       mass_W_S=mW, mass_Y=mY, mass=mass, closure_rest=rest,
                       drivers=tuple(result.drivers), on_edge=tuple(result.on_edge),
                       infeasibility=result.infeasibility, source=Path(str(spec.path)).name,
                       sha256=spec.sha256)


def curves_csv(data: DiagramData) -> str:
    """The sampled curves as CSV text (SI: wing_loading_Pa, one column per requirement).

    A thrust requirement's column holds the required T_SL/W_TO (P_SL/W_TO
    [W/N] for propeller aircraft); a wing-loading limit's column holds the
    limit [Pa]; a requirement with both has a second column
    ``<id>:wing_loading_limit_Pa``. ``inf``: no flight speed meets it.
    """
    import csv

    cols, names = [data.W_S], ["wing_loading_Pa"]
    for c in data.curves:
        if c.thrust is not None:
            cols.append(c.thrust)
            names.append(c.id)
        if c.limit is not None:
            cols.append(c.limit)
            names.append(c.id if c.thrust is None else f"{c.id}:wing_loading_limit_Pa")
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(names)
    for row in zip(*cols):
        w.writerow([repr(float(v)) for v in row])
    return buf.getvalue()


# --------------------------------------------------------------------------
# Drawing
# --------------------------------------------------------------------------

@dataclass
class DiagramHandles:
    """What :func:`constraint_diagram` drew (matplotlib artists)."""

    figure: object
    ax: object
    curves: dict = field(default_factory=dict)       # id -> Line2D of the thrust curve
    limits: dict = field(default_factory=dict)       # id -> Line2D of the W/S limit line
    labels: dict = field(default_factory=dict)       # id (or "id:limit") -> Text
    design_point: object = None                      # Line2D marker, None when infeasible
    design_label: object = None
    mass_lines: list = field(default_factory=list)   # (mass [display unit], Line2D)
    feasible: object = None                          # the filled region
    no_closure: object = None                        # where the weight does not close
    data: DiagramData | None = None

    def _repr_png_(self):       # notebooks show the figure
        return figure_bytes(self.figure, "png", dpi=100)


class _Placer:
    """Greedy label placement in display pixels: avoid other labels and curves."""

    def __init__(self, ax):
        self.ax = ax
        self.fig = ax.figure
        bb = ax.get_window_extent()
        self.box = (bb.x0, bb.y0, bb.x1, bb.y1)
        self.taken = []          # rectangles (x0, y0, x1, y1)
        self.lines = {}          # key -> (N, 2) densified display points

    def size(self, text, fontsize, weight="normal", pad=3.0):
        from matplotlib.font_manager import FontProperties
        from matplotlib.textpath import TextToPath

        k = self.fig.dpi / 72.0
        w = h = 0.0
        for line in text.split("\n"):
            lw, lh, _ = TextToPath().get_text_width_height_descent(
                line, FontProperties(size=fontsize, weight=weight), ismath=False)
            w, h = max(w, lw), h + lh * 1.25
        return w * k + 2 * pad * k, h * k + 2 * pad * k

    def add_line(self, key, x, y):
        p = self.ax.transData.transform(np.column_stack([x, y]))
        p = p[np.all(np.isfinite(p), axis=1)]
        if len(p) > 1:
            seg = np.linalg.norm(np.diff(p, axis=0), axis=1)
            n = np.maximum((seg / 3.0).astype(int), 1)
            parts = [p[i] + np.linspace(0, 1, n[i], endpoint=False)[:, None] * (p[i + 1] - p[i])
                     for i in range(len(seg)) if np.isfinite(seg[i]) and seg[i] < 1e5]
            p = np.vstack(parts + [p[-1:]]) if parts else p
        self.lines[key] = p

    def cost(self, rect, own=None, mass_weight=0.25, margin=4.0):
        x0, y0, x1, y1 = rect
        bx0, by0, bx1, by1 = self.box
        if x0 < bx0 + 2 or y0 < by0 + 2 or x1 > bx1 - 2 or y1 > by1 - 2:
            return math.inf
        c = 0.0
        for t in self.taken:
            ox, oy = min(x1, t[2]) - max(x0, t[0]), min(y1, t[3]) - max(y0, t[1])
            c += (1000.0 + ox * oy) if ox > 0 and oy > 0 else 0.0
        x0, y0, x1, y1 = x0 - margin, y0 - margin, x1 + margin, y1 + margin
        for key, p in self.lines.items():
            if key == own or (isinstance(key, tuple) and key[0] == "hatch" and key[1] == own):
                continue
            inside = (p[:, 0] >= x0) & (p[:, 0] <= x1) & (p[:, 1] >= y0) & (p[:, 1] <= y1)
            n = np.count_nonzero(inside)
            if n:
                w = 1.0 if not isinstance(key, tuple) else (mass_weight if key[0] == "mass" else 0.4)
                c += w * (120.0 + 15.0 * n ** 0.5)
        return c

    def take(self, rect):
        self.taken.append(rect)

    def along(self, key, w, h, prefer=0.5, spread=0.25, side=False, gap=4.0):
        """Best place for a w x h box on (``side=False``) or beside the line `key`.

        Beside: above the line, or on its feasible side horizontally (left of
        a rising curve or a vertical limit, right of a falling one). Returns
        (centre x, centre y, rect, cost) in pixels, or None if nowhere fits.
        """
        p = self.lines.get(key)
        if p is None or len(p) == 0:
            return None
        bx0, by0, bx1, by1 = self.box
        inside = np.where((p[:, 0] > bx0) & (p[:, 0] < bx1) & (p[:, 1] > by0) & (p[:, 1] < by1))[0]
        if inside.size == 0:
            return None
        cand = inside[np.linspace(0, inside.size - 1, min(inside.size, 90)).astype(int)]
        best, best_c = None, math.inf
        for j, i in enumerate(cand):
            cx, cy = p[i]
            if side:
                d = p[min(i + 3, len(p) - 1)] - p[max(i - 3, 0)]
                rising = d[1] * d[0] >= 0 or abs(d[0]) < 1e-9
                sx = -1.0 if rising else 1.0
                rects = [(cx - w / 2, cy + gap, cx + w / 2, cy + gap + h),
                         (cx + sx * (gap + w / 2) - w / 2, cy - h / 2, cx + sx * (gap + w / 2) + w / 2, cy + h / 2)]
            else:
                rects = [(cx - w / 2, cy - h / 2, cx + w / 2, cy + h / 2)]
            pos = j / max(len(cand) - 1, 1)
            for rect in rects:
                c = self.cost(rect, own=key, mass_weight=1.0 if isinstance(key, tuple) else 0.25)
                c += 40.0 * ((pos - prefer) / spread) ** 2
                if side:
                    x0, y0, x1, y1 = rect
                    mine = (p[:, 0] >= x0) & (p[:, 0] <= x1) & (p[:, 1] >= y0) & (p[:, 1] <= y1)
                    c += 60.0 * np.count_nonzero(mine) ** 0.5
                if c < best_c:
                    best, best_c = ((rect[0] + rect[2]) / 2, (rect[1] + rect[3]) / 2, rect, c), c
        return best

    def free_spot(self, w, h, points, pad=6.0):
        """Least crowded w x h box centred on one of the candidate pixel points."""
        best, best_c = None, math.inf
        for cx, cy in points:
            rect = (cx - w / 2 - pad, cy - h / 2 - pad, cx + w / 2 + pad, cy + h / 2 + pad)
            c = self.cost(rect)
            if c < best_c:
                best, best_c = (cx, cy, rect), c
        return best if best_c < 100.0 else None


def _put(ax, placer, spot, text, **style):
    """Write text centred on a placer spot (pixels) and reserve its box."""
    x, y = ax.transData.inverted().transform(spot[:2])
    placer.take(spot[2])
    return ax.text(x, y, text, ha="center", va="center", zorder=style.pop("zorder", 5), **style)


def _thin(poly):
    if hasattr(poly, "set_hatch_linewidth"):      # matplotlib >= 3.10; else the rc default
        poly.set_hatch_linewidth(0.8)


def _style(i):
    return PALETTE[i % len(PALETTE)], MARKERS[i % len(MARKERS)], LINESTYLES[(i // len(PALETTE)) % len(LINESTYLES)]


def _fmt(v, digits=3):
    if not np.isfinite(v):
        return "n/a"
    return f"{v:,.0f}" if abs(v) >= 1000 else (f"{v:.{digits}g}" if abs(v) >= 1 else f"{v:.{digits}f}")


def _mass_levels(mass, m_ref):
    finite = mass[np.isfinite(mass)]
    if finite.size == 0:
        return []
    if not (m_ref and np.isfinite(m_ref)):
        m_ref = float(np.percentile(finite, 20))
    lo, hi = max(float(finite.min()), 0.6 * m_ref), min(float(finite.max()), 1.6 * m_ref)
    step = _nice(0.12 * m_ref)
    return [v for v in np.arange(math.ceil(lo / step) * step, hi, step)
            if abs(v - m_ref) > 0.25 * step][:12]


def constraint_diagram(spec, result=None, ax=None, *, units="si", title=True, footer=True,
                       mass_lines=True, hatch=True, samples=None, figsize=FIGSIZE):
    """Draw the constraint diagram of a requirement file.

    Parameters
    ----------
    spec : :class:`sizing.spec.Spec`
    result : :class:`sizing.model.Result`, or None to solve the spec first
    ax : matplotlib Axes to draw in, or None for a new Figure (no pyplot)
    units : "si" (N/m^2; T/W or W/N) or "us" (lb/ft^2; lb/lb or hp/lb)
    title : draw the file's title and the drivers above the axes
    footer : add the caution, input file name and sha256 at the figure foot
    mass_lines : draw lines of constant closed takeoff mass
    hatch : hatch the infeasible side of every requirement
    samples : wing loadings sampled per curve (None: see :func:`diagram_data`)
    figsize : size of a new figure [in]

    Returns
    -------
    DiagramHandles : figure, axes, curve and limit lines by requirement id,
    labels, design-point marker, mass lines, feasible-region fill, the data.
    """
    from matplotlib.figure import Figure

    data = diagram_data(spec, result, units=units, samples=samples)
    u = _units(units, data.propeller)
    own = ax is None
    if own:
        fig = Figure(figsize=figsize, dpi=DPI)
        right = 0.86 if spec.is_propeller and units == "si" else 0.89
        ax = fig.add_axes((0.085, 0.175, right - 0.085, 0.655 if title else 0.76))
    fig = ax.figure
    h = DiagramHandles(figure=fig, ax=ax, data=data)
    X = data.W_S * u.x
    (xl, xh), (yl, yh) = (v * u.x for v in data.x_range), (v * u.y for v in data.y_range)
    ax.set(xlim=(xl, xh), ylim=(yl, yh))
    ax.tick_params(labelsize=FONT["tick"])
    ax.set_xlabel(f"wing loading  W/S  [{u.x_unit}]", fontsize=FONT["axis"])
    what = "power-to-weight  P/W" if data.propeller else "thrust-to-weight  T/W"
    ax.set_ylabel(f"sea-level {what}  [{u.y_unit}]", fontsize=FONT["axis"])
    ax.grid(True, color="#d9d9d9", linewidth=0.6, zorder=0)
    ax.set_axisbelow(True)
    if units == "si":      # the same axes in kg/m^2 and kW/kg, for those who think in mass
        ax.secondary_xaxis("top", functions=(lambda x: x / g0, lambda x: x * g0)).tick_params(
            labelsize=FONT["tick"] - 1, colors="#555555")
        ax.text(1.008, 1.012, "kg/m²", transform=ax.transAxes, fontsize=FONT["tick"] - 1,
                color="#555555", ha="left", va="bottom")
        if data.propeller:
            right = ax.secondary_yaxis("right", functions=(lambda y: y * g0 / 1000.0, lambda y: y * 1000.0 / g0))
            right.set_ylabel("[kW/kg]", fontsize=FONT["tick"], color="#555555")
            right.tick_params(labelsize=FONT["tick"] - 1, colors="#555555")
    y_span, x_span = yh - yl, xh - xl
    clip_hi = yh + 2.0 * y_span

    # feasible region (lightly filled)
    env, lim = data.envelope()
    envd = np.minimum(env * u.y, clip_hi)
    where = (data.W_S <= lim) & np.isfinite(env) & (envd < yh)
    if np.any(where):
        h.feasible = ax.fill_between(X, np.maximum(envd, yl), yh, where=where, color=FEASIBLE_FILL,
                                     linewidth=0, zorder=0.5, interpolate=True)

    # lines of constant takeoff mass
    if mass_lines:
        _draw_mass_lines(ax, data, u, h)

    # requirement curves, hatching on the infeasible side
    placer = _Placer(ax)
    lw = {True: 2.8, False: 1.6}
    for c in data.curves:
        colour, marker, ls = _style(c.index)
        hatch_kw = dict(facecolor="none", edgecolor=colour, linewidth=0.0, alpha=0.55, zorder=2)
        if c.thrust is not None:
            Yd = np.where(np.isfinite(c.thrust), c.thrust * u.y, np.nan)
            Yd = np.where(Yd < clip_hi, Yd, np.nan)
            h.curves[c.id], = ax.plot(X, Yd, color=colour, lw=lw[c.active], ls=ls, marker=marker,
                                      markersize=5.5, markevery=(0.06 + 0.035 * (c.index % 5), 0.22),
                                      markerfacecolor="white", markeredgewidth=1.3, zorder=3 + c.active)
            placer.add_line(c.id, X, Yd)
            band = 0.028 * y_span
            placer.add_line(("hatch", c.id), X, Yd - 0.6 * band)
            if hatch:
                _thin(ax.fill_between(X, Yd - band, Yd, hatch="////", **hatch_kw))
        if c.boundary is not None and xl <= c.boundary * u.x <= xh:
            b = c.boundary * u.x
            alone = c.thrust is None        # a pure W/S limit; else the lift limit of a thrust kind
            h.limits[c.id] = ax.axvline(b, color=colour, lw=lw[c.active] if alone else 1.3,
                                        ls="-" if alone else (0, (5, 2.5)), zorder=3 + c.active)
            placer.add_line(c.id if alone else f"{c.id}:limit", np.full(50, b), np.linspace(yl, yh, 50))
            if hatch:
                _thin(ax.fill_betweenx([yl, yh], b, b + 0.016 * x_span, hatch="\\\\\\\\", **hatch_kw))
    for k, (m, line) in enumerate(h.mass_lines):
        placer.add_line(("mass", m, k), line.get_xdata(), line.get_ydata())

    # design point (placed first so labels keep clear of it)
    if data.design is not None:
        _draw_design(ax, data, u, h, placer)
    else:
        _draw_no_design(ax, data, placer)

    _label_curves(ax, data, h, placer)
    if mass_lines:
        h.no_closure = _draw_no_closure(ax, data, u, placer)
    if h.feasible is not None:
        WW, YY = np.meshgrid(data.mass_W_S, data.mass_Y)
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(data.mass) & (YY >= np.interp(WW, data.W_S, env)) & (WW <= lim)
        _label_region(ax, placer, data, u, ok, "feasible", fontsize=FONT["label"], color="#4a6b85",
                      style="italic")
    if mass_lines:
        _label_mass_lines(ax, h, placer, u)
    if title:
        _draw_title(ax, fig, data, own)
    if footer:
        _draw_footer(fig, data)
    return h


def _draw_mass_lines(ax, data, u, h):
    import contourpy

    mass = data.mass * u.mass
    m_ref = data.design[2] * u.mass if data.design else None
    gen = contourpy.contour_generator(data.mass_W_S * u.x, data.mass_Y * u.y, mass)
    levels = [(v, MASS_COLOUR, 0.9) for v in _mass_levels(mass, m_ref)] + ([(m_ref, DESIGN_COLOUR, 1.2)] if m_ref else [])
    for level, colour, lw in levels:
        for seg in gen.lines(level):
            line, = ax.plot(seg[:, 0], seg[:, 1], color=colour, lw=lw, ls=(0, (4, 3)), zorder=1 + (lw > 1))
            h.mass_lines.append((float(level), line))


def _draw_no_closure(ax, data, u, placer):
    """Grey out where no takeoff mass closes the weights (boundary interpolated)."""
    bad = ~np.isfinite(data.mass)
    if not np.any(bad):
        return None
    rest = np.where(np.isfinite(data.closure_rest), data.closure_rest, -1.0)
    cs = ax.contourf(data.mass_W_S * u.x, data.mass_Y * u.y, rest, levels=[-1e9, 1e-3],
                     colors=[NO_CLOSURE_FILL], zorder=0.6)
    _label_region(ax, placer, data, u, bad, "weight does not close", fontsize=FONT["mass"], color=MASS_COLOUR)
    return cs


def _label_region(ax, placer, data, u, ok, text, **style):
    """Name a region (a mask on the mass grid) in its least crowded spot."""
    WW, YY = (g[::6, ::6] for g in np.meshgrid(data.mass_W_S, data.mass_Y))
    ok = ok[::6, ::6]
    pts = ax.transData.transform(np.column_stack([WW[ok] * u.x, YY[ok] * u.y]))
    spot = placer.free_spot(*placer.size(text, style["fontsize"]), pts)
    if spot is not None:
        _put(ax, placer, spot, text, **style)


def _label_mass_lines(ax, h, placer, u):
    """One inline label per mass level, on the least crowded of its line pieces."""
    for m in dict.fromkeys(m for m, _ in h.mass_lines):
        text = f"{_fmt(m)} {u.mass_unit}"
        spots = [placer.along(("mass", m, k), *placer.size(text, FONT["mass"]), prefer=0.9, spread=0.35)
                 for k, (mk, _) in enumerate(h.mass_lines) if mk == m]
        spots = [sp for sp in spots if sp is not None and sp[3] < 1000.0]
        if spots:
            is_design = h.data.design is not None and abs(m - h.data.design[2] * u.mass) < 1e-6 * m
            _put(ax, placer, min(spots, key=lambda sp: sp[3]), text, fontsize=FONT["mass"], style="italic",
                 color=DESIGN_COLOUR if is_design else MASS_COLOUR,
                 bbox=dict(boxstyle="round,pad=0.15", fc="white", ec="none", alpha=0.9))


def _label_curves(ax, data, h, placer):
    """Each id beside its curve or limit line (drivers first, in bold and boxed)."""
    missing = []
    for c in sorted(data.curves, key=lambda c: (not c.active, c.index)):
        colour, weight = _style(c.index)[0], "bold" if c.active else "normal"
        items = [(c.id, c.id, 0)] if c.thrust is not None else []
        if c.id in h.limits:
            items.append((c.id, c.id, 90) if c.thrust is None else (f"{c.id}:limit", f"{c.id} CLmax", 90))
        for key, text, rot in items:
            w, hh = placer.size(text, FONT["label"], weight)
            spot = placer.along(key, *((hh, w) if rot else (w, hh)), prefer=0.82 if rot else 0.5,
                                spread=0.3 if rot else 0.35, side=True)
            if spot is None:
                missing += [c.id] if len(items) == 1 or key.endswith(":limit") and c.id not in h.labels else []
                continue
            h.labels[key] = _put(ax, placer, spot, text, fontsize=FONT["label"], color=colour, zorder=6,
                                 fontweight=weight, rotation=rot, rotation_mode="anchor",
                                 bbox=dict(boxstyle="round,pad=0.2", fc="white", lw=0.8, alpha=0.92,
                                           ec=colour if c.active else "none"))
    if missing:     # still named on the plot, never silently dropped
        h.labels["outside"] = ax.text(0.01, 0.99, "outside the plotted range: " + ", ".join(dict.fromkeys(missing)),
                                      transform=ax.transAxes, ha="left", va="top", fontsize=FONT["mass"],
                                      color="#444444", zorder=6)


def _draw_design(ax, data, u, h, placer):
    W, Y, m = data.design
    x, y = W * u.x, Y * u.y
    h.design_point, = ax.plot([x], [y], marker="o", markersize=13, markerfacecolor="white",
                              markeredgecolor=DESIGN_COLOUR, markeredgewidth=2.4, zorder=8, ls="none")
    ax.plot([x], [y], marker="o", markersize=4.5, color=DESIGN_COLOUR, zorder=9, ls="none")
    ylab = "P/W" if data.propeller else "T/W"
    yval = (f"{Y * u.y:.4f} {u.y_unit}" if u.y != 1.0 else f"{Y:.1f} {u.y_unit}") if data.propeller else f"{Y:.3f}"
    lines = ["design point", f"W/S  {_fmt(x)} {u.x_unit}", f"{ylab}  {yval}", f"m_TO  {_fmt(m * u.mass)} {u.mass_unit}"]
    if data.on_edge:
        lines.append("on the search-region edge")
    text = "\n".join(lines)
    w, hh = placer.size(text, FONT["design"], "bold", pad=6)
    px, py = ax.transData.transform((x, y))
    cands = []       # around the point, nearer and above preferred
    for dist in (70, 110, 160):
        for a in np.radians(np.arange(0, 360, 30)):
            cx, cy = px + (dist + w / 2) * math.cos(a), py + (dist + hh / 2) * math.sin(a)
            rect = (cx - w / 2, cy - hh / 2, cx + w / 2, cy + hh / 2)
            cands.append((placer.cost(rect) + 0.3 * dist + 20.0 * (math.sin(a) < 0), cx, cy, rect))
    _c, cx, cy, rect = min(cands, key=lambda t: t[0])
    tx, ty = ax.transData.inverted().transform((cx, cy))
    h.design_label = ax.annotate(
        text, xy=(x, y), xytext=(tx, ty), textcoords="data", ha="center", va="center",
        fontsize=FONT["design"], zorder=10, linespacing=1.3,
        bbox=dict(boxstyle="round,pad=0.45", fc="white", ec=DESIGN_COLOUR, lw=1.2),
        arrowprops=dict(arrowstyle="-", color=DESIGN_COLOUR, lw=1.2, shrinkA=0, shrinkB=7))
    placer.take(rect)
    placer.take((px - 14, py - 14, px + 14, py + 14))


def _draw_no_design(ax, data, placer):
    lines = ["no feasible design"]
    inf = data.infeasibility
    if inf is not None and inf.conflicts:
        lines.append("conflicting: " + ", ".join(inf.conflicts))
        for rid in inf.conflicts[:4]:
            rel = inf.relaxations.get(rid, {})
            lines.append(f"relax {rid}: {rel.get('field', 'value')} -> {rel.get('text', '?')}")
    elif inf is not None and inf.explanation:
        lines += textwrap.wrap(inf.explanation, 60)
    for y, text, size, ec in ((0.93, lines[0], FONT["banner"], PALETTE[1]),
                              (0.83, "\n".join(lines[1:]), FONT["design"], "#999999")):
        if text:
            ax.text(0.5, y, text, transform=ax.transAxes, ha="center", va="top", zorder=10, fontsize=size,
                    fontweight="bold" if ec == PALETTE[1] else "normal", color=ec if ec == PALETTE[1] else "black",
                    bbox=dict(boxstyle="round,pad=0.4", fc="white", ec=ec, lw=1.2))
    bx0, by0, bx1, by1 = placer.box
    placer.take((bx0 + 0.2 * (bx1 - bx0), by0 + 0.62 * (by1 - by0), bx1 - 0.2 * (bx1 - bx0), by1))


def _draw_title(ax, fig, data, own):
    drivers = ", ".join(data.drivers) if data.drivers else "none"
    sub = ("constraint diagram · no feasible design" if data.design is None else
           f"constraint diagram · drivers: {drivers} · hatched: infeasible side · "
           f"dashed grey: constant takeoff mass")
    if own:
        fig.text(0.085, 0.955, data.title, fontsize=FONT["title"], fontweight="bold", va="top")
        fig.text(0.085, 0.915, sub, fontsize=FONT["subtitle"], color="#444444", va="top")
    else:
        ax.set_title(f"{data.title}\n{sub}", fontsize=FONT["subtitle"])


def _draw_footer(fig, data):
    from . import __version__
    from .report import CAUTION

    src = f"input: {data.source or 'in memory'}   sha256 {data.sha256[:12] or 'n/a'}   sizing {__version__}"
    caution = "\n".join(textwrap.wrap(CAUTION, 150))
    fig.text(0.085, 0.012, f"{caution}\n{src}", fontsize=FONT["footer"], color="#333333", va="bottom",
             linespacing=1.35)


# --------------------------------------------------------------------------
# Files
# --------------------------------------------------------------------------

FORMATS = {".png": "png", ".svg": "svg", ".pdf": "pdf"}


def figure_bytes(fig, fmt="png", dpi=DPI) -> bytes:
    """Render a figure to PNG/SVG/PDF bytes (SVG/PDF keep text as text, no timestamps)."""
    import matplotlib

    meta = {"png": {"Software": None}, "svg": {"Date": None}, "pdf": {"CreationDate": None}}[fmt]
    buf = io.BytesIO()
    with matplotlib.rc_context({"svg.fonttype": "none", "pdf.fonttype": 42, "svg.hashsalt": "sizing"}):
        fig.savefig(buf, format=fmt, dpi=dpi, metadata=meta)
    return buf.getvalue()


def write_diagram(spec, res, output, data=None, units="si", *, dpi=DPI) -> list:
    """Write the constraint diagram (format from the suffix) and optionally the curves CSV.

    Returns the list of written paths.
    """
    from .errors import InputError
    from .fileio import atomic_write

    out = Path(output)
    fmt = FORMATS.get(out.suffix.lower())
    if fmt is None:
        raise InputError(f"cannot tell the format from {out.suffix or 'no suffix'!r}; "
                         f"use one of {', '.join(FORMATS)}", str(output), field="--output")
    h = constraint_diagram(spec, result=res, units=units)
    atomic_write(out, figure_bytes(h.figure, fmt, dpi), "wb")
    if data:
        atomic_write(Path(data), curves_csv(h.data), "w")
    return [str(out)] + ([str(data)] if data else [])

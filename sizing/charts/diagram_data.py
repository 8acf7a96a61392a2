"""The constraint diagram's data: every requirement sampled over wing loading, the weight
closure on a grid, the axis ranges (no drawing here).

:func:`diagram_data` samples each requirement with
:func:`sizing.constraints.required_curve`, the function the optimizer's
constraints are built from, and the weight closure with :mod:`sizing.weights`.
"""
from __future__ import annotations

import io
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import constraints as C
from .. import weights as Wt
from ..common.conversions import FT, KN
from ..physics.propulsion import rating_name
from ..problem import tree as M
from .style import styles_of
from .style import units_for as _units

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
    limit_name: str = "CLmax"         # what sets the W/S limit of a thrust kind: CLmax or buffet
    thrust_active: bool = False       # the thrust curve passes through the design point
    limit_active: bool = False        # the W/S limit sits at the design's wing loading
    condition: str = ""               # "15,000 ft, M 0.60, W/W_TO 0.85": how the requirement is flown


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
    styles: dict = field(default_factory=dict)        # id -> style.IdStyle (one per id in every figure)
    references: tuple = ()            # (label, W/S [N/m^2], T/W or P/W [W/N]) the file lists
    view: str = "auto"                # "auto": zoomed on what matters; "full": every curve's minimum
    rating: str = ""                  # the rating T_SL (P_SL) is quoted at ("dry (military) rating", ...)
    notices: tuple = ()               # what a reader must know before the numbers (closure warning, ...)

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


def sample_requirements(spec, W_S, exact=True, takeoff_mass=None) -> dict:
    """{id: (required T/W or P/W array or None, W/S limit array or None)} at W_S [N/m^2].

    exact=False takes 1.0 for weight fractions given ``after:`` a mission
    segment (a quick look for axis ranges). takeoff_mass [kg] is needed where a propeller
    diameter caps the takeoff thrust (the curves then belong to that mass; default
    :func:`takeoff_mass_for`).
    """
    W_S = np.atleast_1d(np.asarray(W_S, dtype=float))
    tree = M.spec_tree(spec)
    if takeoff_mass is None and M.needs_takeoff_mass(tree):
        takeoff_mass = takeoff_mass_for(spec)
    ac = M.aircraft(tree, takeoff_mass)
    seg = _segment_betas(tree, ac, W_S) if exact else {}
    return {rid: _sample(r, ac, W_S, seg) for rid, r in tree["requirements"].items()}


def takeoff_mass_for(spec, result=None) -> float:
    """Takeoff mass [kg] the curves are drawn at: the design's, else the best point of the solver's
    starting scan (only needed where a propeller diameter makes the curves depend on the size)."""
    if result is not None and result.feasible:
        return float(result.design.takeoff_mass)
    from ..problem import build

    prob = build(spec)
    return float(prob.start_point(prob.p0)[2] * prob.m_ref)


def _limit_name(tree, rid, mass):
    """'buffet' where buffet onset, not CLmax, sets a cruise or max-speed requirement's W/S limit."""
    ac = M.aircraft(tree, mass)
    r = tree["requirements"][rid]
    if r["kind"] not in ("cruise", "max-mach") or ac.cl_buffet is None:
        return "CLmax"
    req = M.requirement(r, ac)
    air = C.condition(req)
    V = C.fixed_speed(req, air)
    lift = float(np.asarray(C.lift_limit(V, req, ac, air, 1.0, C.config_of(req))))
    return "buffet" if float(np.asarray(C.buffet_limit(V, req, ac, air))) < lift else "CLmax"


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
            f_e = np.asarray(Wt.empty_fraction_of(tree, mass, WW, YY, spec.is_propeller), float)
            rest = 1.0 - f_fuel - f_e
            prev, mass = mass, np.where(rest > 1e-3, fixed / rest, np.nan)
            mass = np.clip(mass, fixed, 1e4 * fixed)
        ok = np.isfinite(mass) & (np.abs(mass - prev) <= 1e-7 * mass) & (mass < 1e4 * fixed)
    mass = np.where(ok, mass, np.nan)
    return (mass, np.where(ok, rest, np.minimum(rest, 0.0))) if residual else mass


def nice(x):
    """The round number (1, 2, 2.5 or 5 x 10^k) at or above x > 0."""
    if not x > 0:
        return 1.0
    e = 10.0 ** math.floor(math.log10(x))
    return next(k * e for k in (1.0, 2.0, 2.5, 5.0, 10.0) if k * e >= x * (1 - 1e-12))


def _nice_ceil(x):
    """x rounded up to a multiple of a round step near x/8."""
    step = nice(x / 8.0)
    return math.ceil(x / step - 1e-9) * step


def _ranges(spec, result, u, takeoff_mass=None, full=False):
    """(x range [N/m^2], y range) around the design point, design_space first.

    Zoomed (``full=False``): wing loading up to about 1.8 x the design's, taking in the
    W/S limits near it, T/W (P/W) up to about 1.7 x the design's, so the design point,
    the active curves and the feasible region near them fill the axes. ``full=True``:
    every W/S limit and every curve's minimum in view.
    """
    ds = spec.model.design_space
    box_x = tuple(float(v) for v in ds.wing_loading) if ds and ds.wing_loading else None
    yb = (ds.power_to_weight if spec.is_propeller else ds.thrust_to_weight) if ds else None
    box_y = tuple(float(v) for v in yb) if yb else None
    coarse = np.geomspace(max((box_x or (100.0,))[0], 1.0), (box_x or (0, 15000.0))[1], 120)
    env, bounds, minima = np.zeros_like(coarse), [], []
    curves = sample_requirements(spec, coarse, exact=False, takeoff_mass=takeoff_mass).values()
    for t, lim in curves:
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
    if full:
        at_min = [float(coarse[np.nanargmin(np.where(np.isfinite(t), t, np.nan))]) for t, _ in curves
                  if t is not None and np.isfinite(t).any()]
        x_hi = max([2.0 * W0] + [1.12 * b for b in bounds] + [1.25 * x for x in at_min])
    else:
        x_hi = max([1.8 * W0] + [1.1 * b for b in bounds if b <= 2.0 * W0])    # the nearby limits
    x_hi = _nice_ceil(x_hi * u.x) / u.x
    x_range = box_x or (0.0, x_hi)
    look = np.linspace(max(x_range[0], x_range[1] / 60), x_range[1], 40)
    for t, lim in sample_requirements(spec, look, exact=False, takeoff_mass=takeoff_mass).values():
        if t is not None and np.any(np.isfinite(t)):
            minima.append(float(np.nanmin(np.where(np.isfinite(t), t, np.nan))))
    y_hi = max(1.9 * Y0 if full else 1.6 * Y0, (1.2 if full else 1.05) * max(minima, default=0.0), 1e-6)
    y_hi = _nice_ceil(y_hi * u.y) / u.y
    return x_range, box_y or (0.0, y_hi)


def condition_text(r: dict, beta=None) -> str:
    """How a requirement is flown, for a curve label: altitude, Mach or airspeed, load factor,
    temperature, configuration, engines out, weight fraction (r: the SI tree's requirement)."""
    alt = float(r.get("altitude", 0.0) or 0.0)
    parts = ["sea level" if alt == 0.0 else f"{alt / FT:,.0f} ft"]
    if r.get("mach") is not None:
        parts.append(f"M {float(r['mach']):.2f}")
    for key, name in (("speed", "TAS"), ("cas", "CAS"), ("eas", "EAS")):
        if r.get(key) is not None and not isinstance(r.get(key), dict):
            parts.append(f"{float(r[key]) / KN:,.0f} kn {name}")
    if r.get("load_factor") is not None:
        parts.append(f"{float(r['load_factor']):g} g")
    if r.get("temperature_offset"):
        parts.append(f"ISA{float(r['temperature_offset']):+g} K")
    if r.get("config") not in (None, "clean"):
        parts.append(str(r["config"]))
    if r.get("engines_out"):
        parts.append(f"{float(r['engines_out']):g} engine{'s' if float(r['engines_out']) > 1 else ''} out")
    if beta is not None:
        parts.append(f"W/W_TO {float(beta):.2f}")
    return ", ".join(parts)


def _active_parts(spec, result, takeoff_mass, tol=1e-3):
    """{id: (thrust curve active, W/S limit active)} at the design point: which part of an active
    requirement the design sits on (re-evaluated at the design's wing loading)."""
    if result is None or not result.feasible:
        return {}
    d = result.design
    W0, Y0 = d.wing_loading, d.power_to_weight if result.propeller else d.thrust_to_weight
    at = sample_requirements(spec, np.array([W0]), takeoff_mass=takeoff_mass)
    out = {}
    for r in result.requirements:
        if not r.active:
            continue
        t, lim = at[r.id]
        mt = abs(float(t[0]) / Y0 - 1.0) if t is not None and np.isfinite(t[0]) else math.inf
        ml = abs(W0 / float(lim[0]) - 1.0) if lim is not None and np.isfinite(lim[0]) else math.inf
        on_t, on_l = mt < tol, ml < tol
        if not (on_t or on_l):          # met with equality by a row the diagram does not draw alone
            on_t, on_l = mt <= ml, ml < mt
        out[r.id] = (on_t, on_l)
    return out


def diagram_data(spec, result=None, *, units="si", samples=None, grid=(150, 120), view="auto") -> DiagramData:
    """Sample every requirement and the weight closure for the diagram.

    Parameters
    ----------
    spec : :class:`sizing.spec.Spec`
    result : :class:`sizing.model.Result`, or None to solve the spec first
    units : "si" or "us" (only the automatic axis rounding depends on it)
    samples : number of wing loadings sampled for the curves (default 301)
    grid : (wing loadings, T/W values) of the constant-mass grid
    view : "auto" (axes zoomed on the design point and the curves that matter) or "full"
        (every W/S limit and every curve's minimum; ``--range full``)
    """
    if view not in ("auto", "full"):
        raise ValueError(f"view must be 'auto' or 'full', got {view!r}")
    u = _units(units, spec.is_propeller)
    if result is None:
        from ..problem import solve

        result = solve(spec)
    mass = takeoff_mass_for(spec, result) if M.needs_takeoff_mass(M.spec_tree(spec)) else None
    x_range, y_range = _ranges(spec, result, u, mass, full=view == "full")
    x0 = x_range[0] if x_range[0] > 0 else x_range[1] / 200.0
    if samples is None:
        samples = 301
    W_S = np.linspace(x0, x_range[1], int(samples))
    sampled = sample_requirements(spec, W_S, takeoff_mass=mass)
    active = {r.id for r in result.requirements if r.active}
    parts = _active_parts(spec, result, mass)
    betas = {r.id: r.beta for r in result.requirements}
    tree = M.spec_tree(spec)
    curves = [Curve(rid, spec.requirement(rid).kind, i, rid in active, t, lim, _boundary(W_S, lim),
                    _limit_name(tree, rid, mass), *parts.get(rid, (False, False)),
                    condition_text(tree["requirements"][rid], betas.get(rid)))
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
                       sha256=spec.sha256, styles=styles_of(spec), references=reference_points(spec),
                       view=view, rating=rating_of(spec),
                       notices=tuple(getattr(result, "notices", ()) or ()))



def rating_of(spec) -> str:
    """The rating the file's T_SL (P_SL) is quoted at (:func:`sizing.physics.propulsion.rating_name`)."""
    prop = spec.model.aircraft.propulsion
    return rating_name(prop.type, bool(getattr(prop, "afterburner", False)))


def reference_points(spec) -> tuple:
    """(label, W/S [N/m^2], T/W or P/W [W/N]) of the reference designs the file lists (``references``)."""
    out = []
    for ref in getattr(spec.model, "references", None) or ():
        y = ref.power_to_weight if spec.is_propeller else ref.thrust_to_weight
        out.append((ref.label, float(ref.wing_loading), float(y)))
    return tuple(out)


def curves_csv(data: DiagramData) -> str:
    """The sampled curves as CSV text, SI, every column named with its quantity and unit.

    First lines: ``#`` comments (title, how to read the columns, the caution). Columns:
    ``wing_loading_Pa``; for each requirement with a thrust bound ``<id>:thrust_to_weight``
    (the required T_SL/W_TO [-]) or, for propeller aircraft, ``<id>:power_to_weight_W_per_N``
    (P_SL/W_TO [W/N]); for each with a wing-loading limit ``<id>:wing_loading_limit_Pa``.
    An empty cell: no flight speed meets the requirement at that wing loading (no number
    exists). Read with ``pandas.read_csv(path, comment="#")``.
    """
    import csv

    from ..common.caution import CAUTION

    y_name = "power_to_weight_W_per_N" if data.propeller else "thrust_to_weight"
    cols, names = [data.W_S], ["wing_loading_Pa"]
    for c in data.curves:
        if c.thrust is not None:
            cols.append(c.thrust)
            names.append(f"{c.id}:{y_name}")
        if c.limit is not None:
            cols.append(c.limit)
            names.append(f"{c.id}:wing_loading_limit_Pa")
    buf = io.StringIO()
    buf.write(f"# {data.title}: constraint curves sampled over the wing loading W_TO/S [Pa]\n"
              f"# <id>:{y_name}: {'P_SL/W_TO [W/N]' if data.propeller else 'T_SL/W_TO [-]'} the requirement "
              "needs at that wing loading; <id>:wing_loading_limit_Pa: the highest W_TO/S it allows [Pa]; "
              "empty: no flight speed meets it there\n"
              f"# {CAUTION}\n")
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(names)
    for row in zip(*cols):
        w.writerow([repr(float(v)) if np.isfinite(v) else "" for v in row])
    return buf.getvalue()

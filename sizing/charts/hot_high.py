"""Hot-and-high limits of the sized design: the weight-altitude-temperature (WAT) chart.

The wing area S and the installed sea-level thrust T_SL (or power P_SL) are those of the
sized design. At a takeoff mass m the design has W/S = m g/S and T_SL/W = T_SL/(m g); each of
the file's airfield requirements (takeoff ground run, landing ground roll, climb gradients,
climb rates in the takeoff or landing configuration), moved to the airfield's pressure
altitude (its elevation, standard pressure) and its outside air temperature (an ISA offset
OAT - T_ISA(h)), is met while

    T_SL/(m g) >= (T_SL/W_TO)_required(m g/S)   and   m g/S <= (W_TO/S)_limit

with the same constraint functions the optimizer uses (:func:`sizing.constraints.required_curve`);
each requirement keeps its own weight fraction, ground run, gradient and configuration. The
largest m meeting all of them (a root of the limiting requirement's margin, found by
``scipy.optimize.brentq`` between grid masses) is the WAT limit; the requirement whose root
it is limits it. With the design's fuel kept, the payload available is the design payload
plus the WAT limit minus the design takeoff mass (never more than the design payload: the
design takeoff mass is the structural maximum).

:func:`compute_wat` (numpy, scipy) -> :class:`WatChart` -> :func:`sizing.charts.hot_high_plot.plot_wat`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from types import SimpleNamespace

import numpy as np
from scipy.optimize import brentq

from .. import constraints as C
from ..common.caution import CAUTION
from ..common.conversions import FT
from ..common.errors import InputError
from ..physics.atmosphere import g0, isa
from ..problem import tree as M
from .style import styles_of

ZERO_C = 273.15
DEFAULT_ELEVATIONS = tuple(h * FT for h in (0.0, 2000.0, 4000.0, 6000.0, 8000.0, 10000.0))
DEFAULT_TEMPERATURES = tuple(ZERO_C + t for t in (0.0, 15.0, 30.0, 45.0))
MASS_RANGE = (0.3, 2.0)          # searched takeoff masses, as multiples of the design takeoff mass


def is_airfield(r) -> bool:
    """Requirements that hold at an airfield: takeoff, landing, climb gradients, and climbs flown in
    the takeoff or landing configuration."""
    return r["kind"] in ("takeoff", "landing", "climb-gradient") or \
        (r["kind"] == "climb" and r.get("config") in ("takeoff", "landing"))


def isa_offset(elevation, oat):
    """ISA offset [K] of an outside air temperature [K] at a pressure altitude [m].

    Examples
    --------
    Source: U.S. Standard Atmosphere 1976, lapse 6.5 K/km: at 1 524 m (5 000 ft) the standard
    temperature is 278.244 K (5.094 C); an OAT of 35 C is ISA+29.906 K.

    >>> round(isa_offset(1524.0, ZERO_C + 35.0), 3)
    29.906
    """
    return float(oat - isa(elevation).temperature)


@dataclass(frozen=True)
class WatCell:
    elevation: float           # [m]
    oat: float                 # [K]
    isa_offset: float          # [K]
    mass: float                # largest takeoff mass meeting every airfield requirement [kg] (inf: above the range)
    limited_by: str            # id of the limiting requirement ("" when none limits inside the range)
    by_requirement: dict       # id -> its own largest mass [kg]


@dataclass(frozen=True)
class WatChart:
    title: str
    design_mass: float
    payload: float
    fuel: float
    requirements: tuple        # ids of the airfield requirements used
    elevations: tuple          # [m]
    temperatures: tuple        # [K]
    cells: tuple               # WatCell per (elevation, temperature), elevation-major
    curves: tuple = ()         # per elevation: (OAT [K] array, mass [kg] array, limiting ids) on a finer grid
    notes: tuple = ()
    styles: dict = field(default_factory=dict)   # id -> style.IdStyle (the same in every figure)

    def cell(self, i, j) -> WatCell:
        return self.cells[i * len(self.temperatures) + j]

    def payload_available(self, c: WatCell) -> float:
        """Payload [kg] with the design fuel: design payload + (WAT mass - design mass), in [0, payload]."""
        return float(min(self.payload, max(0.0, self.payload + c.mass - self.design_mass)))

    def hot_and_high(self) -> WatCell:
        """The cell of the highest elevation and the hottest temperature."""
        return self.cell(len(self.elevations) - 1, len(self.temperatures) - 1)

    def rows(self):
        out = []
        for c in self.cells:
            out.append({"elevation_m": c.elevation, "elevation_ft": c.elevation / FT, "oat_c": c.oat - ZERO_C,
                        "oat_f": (c.oat - ZERO_C) * 1.8 + 32.0, "isa_offset_k": c.isa_offset,
                        "max_takeoff_mass_kg": c.mass, "limited_by": c.limited_by or "none in the searched range",
                        "mass_vs_design_kg": c.mass - self.design_mass,
                        "payload_available_kg": self.payload_available(c),
                        "payload_lost_kg": self.payload - self.payload_available(c)})
        return out

    def to_frame(self):
        """One row per elevation and temperature; units in the column names."""
        import pandas as pd

        return pd.DataFrame(self.rows())

    def as_dict(self) -> dict:
        hh = self.hot_and_high()
        return {"title": self.title, "design_takeoff_mass_kg": self.design_mass, "design_payload_kg": self.payload,
                "design_fuel_kg": self.fuel, "requirements": list(self.requirements), "table": self.rows(),
                "hot_and_high": {"elevation_m": hh.elevation, "oat_c": hh.oat - ZERO_C,
                                 "max_takeoff_mass_kg": hh.mass, "limited_by": hh.limited_by,
                                 "payload_available_kg": self.payload_available(hh)},
                "notes": list(self.notes), "caution": CAUTION}

    def table_text(self) -> str:
        temps = [t - ZERO_C for t in self.temperatures]
        head = [f"Hot-and-high limits (WAT): {self.title}",
                f"  largest takeoff mass meeting every airfield requirement ({', '.join(self.requirements)}) for the "
                f"sized wing and engine; design takeoff mass {self.design_mass:,.0f} kg, payload {self.payload:,.0f} kg",
                "  elevation at standard pressure; OAT outside air temperature; [limiting requirement]",
                "  " + f"{'elevation':>16}" + "".join(f"{f'OAT {t:g} C':>26}" for t in temps)]
        for i, h in enumerate(self.elevations):
            row = [f"{self.cell(i, j).mass:>9,.0f} kg [{self.cell(i, j).limited_by or '-'}]"
                   if math.isfinite(self.cell(i, j).mass) else "     above the range" for j in range(len(temps))]
            head.append("  " + f"{h / FT:>11,.0f} ft" + "".join(f"{r:>26}" for r in row))
        hh = self.hot_and_high()
        head.append(f"  hot and high ({hh.elevation / FT:,.0f} ft, {hh.oat - ZERO_C:g} C, ISA{hh.isa_offset:+.1f} K): "
                    f"payload {self.payload_available(hh):,.0f} kg of {self.payload:,.0f} kg with the design fuel "
                    f"{self.fuel:,.0f} kg")
        return "\n".join(head + [f"  note: {t}" for t in self.notes])

    def plot(self, ax=None, **kwargs):
        """Draw the chart (see :func:`sizing.charts.hot_high_plot.plot_wat`)."""
        from .hot_high_plot import plot_wat  # lazy: a convenience method (listed in the layering test)

        return plot_wat(self, ax=ax, **kwargs)


def requirement_at(r, ac, beta, elevation, offset):
    """The physics view of requirement ``r`` moved to an airfield (pressure altitude, ISA offset)."""
    return M.requirement(dict(r, altitude=elevation, temperature_offset=offset), ac, beta)


def margin(req, ac, S, T_SL, m):
    """Fractional margin of a requirement at takeoff mass(es) m [kg] with wing area S [m^2] and installed
    T_SL [N] (P_SL [W] for propeller aircraft): >= 0 when met (min over its thrust and wing-loading bounds)."""
    m = np.atleast_1d(np.asarray(m, dtype=float))
    W_S, Y = m * g0 / S, T_SL / (m * g0)
    ac = SimpleNamespace(**{**vars(ac), "takeoff_mass": m})     # a propeller diameter's cap depends on it
    thrust, wsl, _ = C.required_curve(req, ac, W_S)
    out = np.full(m.shape, np.inf)
    if thrust is not None:
        out = np.minimum(out, np.where(np.isfinite(thrust) & (thrust > 0), Y / thrust - 1.0, -1.0))
    if wsl is not None:
        out = np.minimum(out, wsl / W_S - 1.0)
    return out


def largest_mass(req, ac, S, T_SL, m_ref, grid=121):
    """Largest takeoff mass [kg] in MASS_RANGE x m_ref with margin >= 0 (NaN: none; inf: all)."""
    ms = np.geomspace(MASS_RANGE[0] * m_ref, MASS_RANGE[1] * m_ref, grid)
    g = margin(req, ac, S, T_SL, ms)
    ok = g >= 0.0
    if ok.all():
        return math.inf
    if not ok[0]:
        return math.nan
    j = int(np.argmin(ok)) - 1        # last feasible grid mass before the first infeasible one
    return float(brentq(lambda x: float(margin(req, ac, S, T_SL, x)[0]), ms[j], ms[j + 1], xtol=1e-6, rtol=1e-12))


def compute_wat(spec, res, elevations=None, temperatures=None, curve_points=10) -> WatChart:
    """WAT chart of a solved design: elevations [m] x outside air temperatures [K] (the table),
    and each elevation's curve over ``curve_points`` temperatures across their range (the figure)."""
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the WAT chart needs a feasible design; this requirement set has none")
    tree = M.spec_tree(spec)
    ac, d = M.aircraft(tree), res.design
    reqs = {rid: r for rid, r in tree["requirements"].items() if is_airfield(r)}
    if not reqs:
        raise InputError("the file has no airfield requirement (takeoff, landing, climb-gradient, or climb in the "
                         "takeoff or landing configuration): nothing limits the takeoff mass at an airfield, so there "
                         "is no WAT chart", spec.path, field="requirements")
    hs = tuple(DEFAULT_ELEVATIONS if elevations is None else (float(h) for h in elevations))
    ts = tuple(DEFAULT_TEMPERATURES if temperatures is None else (float(t) for t in temperatures))
    for h in hs:
        if not (-500.0 <= h <= 6000.0):
            raise InputError(f"elevation {h / FT:,.0f} ft ({h:,.0f} m) is outside -1,640 ft to 19,685 ft "
                             f"(-500 m to 6 000 m)", field="--elevations")
    S = float(d.wing_area)
    T_SL = float(d.power if res.propeller else d.thrust)
    betas = {r.id: r.beta for r in res.requirements}
    notes = []
    for rid, r in reqs.items():
        if r.get("thrust_lapse") is not None:
            notes.append(f"{rid} gives its {'power' if res.propeller else 'thrust'} lapse by hand "
                         f"({r['thrust_lapse']:g}); it is kept at every elevation and temperature")
        if isinstance(spec.data, dict) and any(isinstance(x, dict) and x.get("id") == rid and
                                               isinstance(x.get("weight_fraction"), dict)
                                               for x in spec.data.get("requirements", [])):
            notes.append(f"{rid} keeps the weight fraction {betas[rid]:.3f} of the design (its mission segment "
                         f"at the design wing loading)")
    def cell(h, t):
        dT = isa_offset(h, t)
        if not (-80.0 <= dT <= 60.0):
            raise InputError(f"OAT {t - ZERO_C:g} C at {h / FT:,.0f} ft is ISA{dT:+.1f} K; the model takes "
                             f"offsets from -80 K to +60 K", field="--temperatures")
        per = {rid: largest_mass(requirement_at(r, ac, betas[rid], h, dT), ac, S, T_SL, d.takeoff_mass)
               for rid, r in reqs.items()}
        finite = {k: v for k, v in per.items() if not math.isinf(v)}
        if any(math.isnan(v) for v in per.values()):
            return WatCell(h, t, dT, 0.0, next(k for k, v in per.items() if math.isnan(v)), per)
        if finite:
            rid = min(finite, key=finite.get)
            return WatCell(h, t, dT, finite[rid], rid, per)
        return WatCell(h, t, dT, math.inf, "", per)

    cells = [cell(h, t) for h in hs for t in ts]
    curves = []
    fine = sorted(set(ts) | set(np.linspace(min(ts), max(ts), curve_points).tolist())) if len(ts) > 1 else list(ts)
    for i, h in enumerate(hs):
        known = {t: cells[i * len(ts) + j] for j, t in enumerate(ts)}
        line = [known.get(t) or cell(h, t) for t in fine]
        curves.append((np.array(fine), np.array([c.mass for c in line]), tuple(c.limited_by for c in line)))
    if any(c.mass == 0.0 for c in cells):
        notes.append(f"0 kg: not met even at {MASS_RANGE[0]:g} x the design takeoff mass")
    if any(math.isinf(c.mass) for c in cells):
        notes.append(f"above the range: every requirement met up to {MASS_RANGE[1]:g} x the design takeoff mass")
    return WatChart(title=res.title, design_mass=float(d.takeoff_mass), payload=float(d.payload_mass),
                    fuel=float(d.fuel_mass), requirements=tuple(reqs), elevations=hs, temperatures=ts,
                    cells=tuple(cells), curves=tuple(curves), notes=tuple(dict.fromkeys(notes)),
                    styles=styles_of(spec))

"""Payload-range diagram of the sized design, from its mission.

The empty mass, crew and wing of the sized design are fixed; the mission's segments are flown
as in the sizing (:func:`sizing.weights.mission_fractions`: fixed fractions, Breguet range and
endurance on the same drag polar and fuel consumption, L/D at each segment's start weight),
and the range of its cruise segment (the longest) is varied until the mission burns the fuel
on board (reserve and trapped fuel kept as the mission's fractions of mission fuel):

    m_fuel = (1 + reserve + trapped) (1 - prod W_i/W_(i-1)) m_0,   W_cruise = exp(-R c/(V L/D))

(jets; propellers exp(-R c/(eta_p L/D))), Raymer Ch. 3 and Eq. 3.5; solved for R with
``scipy.optimize.brentq``. Corners: range at maximum payload (``weights.max_payload``, default
the design payload, with the fuel that fills the design takeoff mass), the design point, range
at full fuel (``weights.max_fuel``, default the design fuel, at the design takeoff mass) and
the ferry range (full fuel, no payload).

:func:`compute_payload_range` -> :class:`PayloadRange` -> :func:`sizing.charts.payload_range_plot.plot_payload_range`.
"""
from __future__ import annotations

import copy
import math
from dataclasses import dataclass

import numpy as np
from scipy.optimize import brentq

from .. import weights as Wt
from ..common.caution import CAUTION
from ..common.conversions import NMI
from ..common.errors import InputError
from ..physics.atmosphere import g0
from ..problem import tree as M

CORNERS = ("max-payload", "design", "max-fuel", "ferry")
CORNER_NAMES = {"max-payload": "range at maximum payload", "design": "design point",
                "max-fuel": "range at full fuel", "ferry": "ferry range (full fuel, no payload)"}


@dataclass(frozen=True)
class Corner:
    name: str
    range: float          # [m] (NaN: the fuel does not cover the other segments)
    payload: float        # [kg]
    fuel: float           # [kg]
    takeoff_mass: float   # [kg]


@dataclass(frozen=True)
class PayloadRange:
    title: str
    segment: str                  # the cruise segment whose range is varied
    design_range: float           # that segment's range in the file [m]
    empty: float
    crew: float
    design_mass: float
    max_payload: float
    max_fuel: float
    corners: tuple                # Corner per CORNERS
    curve: tuple                  # (range [m] array, payload [kg] array): the diagram's boundary
    notes: tuple = ()

    def corner(self, name) -> Corner:
        return next(c for c in self.corners if c.name == name)

    def rows(self):
        return [{"corner": c.name, "what": CORNER_NAMES[c.name], "range_km": c.range / 1000.0,
                 "range_nmi": c.range / NMI, "payload_kg": c.payload, "fuel_kg": c.fuel,
                 "takeoff_mass_kg": c.takeoff_mass} for c in self.corners]

    def to_frame(self):
        """The corners, one row each; units in the column names."""
        import pandas as pd

        return pd.DataFrame(self.rows())

    def as_dict(self) -> dict:
        return {"title": self.title, "cruise_segment": self.segment, "segment_range_in_file_m": self.design_range,
                "empty_mass_kg": self.empty, "crew_mass_kg": self.crew, "design_takeoff_mass_kg": self.design_mass,
                "max_payload_kg": self.max_payload, "max_fuel_kg": self.max_fuel,
                "corners": {c.name: {k: v for k, v in r.items() if k != "corner"} for c, r in
                            zip(self.corners, self.rows())},
                "notes": list(self.notes), "caution": CAUTION}

    def table_text(self) -> str:
        out = [f"Payload-range: {self.title}",
               f"  cruise segment '{self.segment}' varied ({self.design_range / 1000:,.0f} km in the file); empty "
               f"{self.empty:,.0f} kg, crew {self.crew:,.0f} kg; maximum payload {self.max_payload:,.0f} kg, fuel "
               f"capacity {self.max_fuel:,.0f} kg; design takeoff mass {self.design_mass:,.0f} kg",
               f"  {'corner':<38}{'range':>22}{'payload':>12}{'fuel':>12}{'takeoff':>12}"]
        for c in self.corners:
            rng = "fuel too small" if not math.isfinite(c.range) else f"{c.range / 1000:,.0f} km ({c.range / NMI:,.0f} nmi)"
            out.append(f"  {CORNER_NAMES[c.name]:<38}{rng:>22}{c.payload:>9,.0f} kg{c.fuel:>9,.0f} kg"
                       f"{c.takeoff_mass:>9,.0f} kg")
        return "\n".join(out + [f"  note: {t}" for t in self.notes])

    def plot(self, ax=None, **kwargs):
        """Draw the diagram (see :func:`sizing.charts.payload_range_plot.plot_payload_range`)."""
        from .payload_range_plot import plot_payload_range  # lazy: a convenience method (layering test)

        return plot_payload_range(self, ax=ax, **kwargs)


def mission_fuel(tree, ac, S, m0, index, R):
    """Fuel [kg] the mission burns plus its reserve and trapped fuel, for takeoff mass m0 [kg] and the
    cruise segment ``index`` flown over R [m] (the rest as in the file)."""
    t = copy.deepcopy(tree)
    t["mission"]["segments"][index]["range"] = R
    segs = Wt.mission_fractions(t, ac, m0 * g0 / S)
    mis = t["mission"]
    return float(Wt.fuel_fraction_from_segments(segs[-1][2], mis.get("reserve", 0.0), mis.get("trapped", 0.0))) * m0


def range_for(tree, ac, S, m0, fuel, index, guess):
    """Cruise range [m] at which the mission burns ``fuel`` [kg] from takeoff mass m0 [kg] (NaN when even
    R = 0 needs more)."""
    def f(R):
        return mission_fuel(tree, ac, S, m0, index, R) - fuel

    if f(0.0) > 0.0:
        return math.nan
    hi = max(guess, 1.0e5)
    while f(hi) < 0.0:
        hi *= 2.0
        if hi > 1.0e9:
            return math.inf
    return float(brentq(f, 0.0, hi, xtol=1e-3, rtol=1e-12))


def cruise_segment(spec, tree=None):
    """(index, segment) of the mission's longest cruise segment; a plain InputError when the file has no
    mission-sized fuel or no cruise segment (checked before any solve)."""
    tree = M.spec_tree(spec) if tree is None else tree
    w = tree["aircraft"]["weights"]
    if not Wt.has_mission_fuel(tree):
        why = (f"it sizes the fuel as a fixed fraction (aircraft.weights.fuel.fraction {w['fuel']['fraction']:g})"
               if "fraction" in w.get("fuel", {}) else "it has no mission")
        raise InputError(f"no payload-range diagram: {why}, so there is no cruise range to trade against payload; "
                         f"give a mission with a cruise segment (and no fixed fuel fraction)", spec.path,
                         field="mission")
    cruise = [(i, s) for i, s in enumerate(tree["mission"]["segments"]) if s["kind"] == "cruise"]
    if not cruise:
        raise InputError("no payload-range diagram: the mission has no cruise segment whose range could vary",
                         spec.path, field="mission.segments")
    return max(cruise, key=lambda t: t[1]["range"])


def compute_payload_range(spec, res, samples=24) -> PayloadRange:
    """Payload-range diagram of a solved design with a mission (see the module docstring)."""
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the payload-range diagram needs a feasible design; this requirement set has none")
    tree = M.spec_tree(spec)
    w = tree["aircraft"]["weights"]
    index, seg = cruise_segment(spec, tree)
    name = seg.get("name") or f"cruise-{index + 1}"
    ac, d = M.aircraft(tree), res.design
    S, m_TO, empty, crew = float(d.wing_area), float(d.takeoff_mass), float(d.empty_mass), float(d.crew_mass)
    pay_max = float(w.get("max_payload", d.payload_mass))
    fuel_max = float(w.get("max_fuel", d.fuel_mass))
    notes = []
    if fuel_max < d.fuel_mass * (1 - 1e-9):
        notes.append(f"the design mission needs {d.fuel_mass:,.0f} kg of fuel, more than the capacity "
                     f"max_fuel {fuel_max:,.0f} kg: the design point lies outside the diagram")
    room = m_TO - empty - crew                       # payload + fuel at the design takeoff mass

    def corner(key, payload, fuel):
        m0 = empty + crew + payload + fuel
        return Corner(key, range_for(tree, ac, S, m0, fuel, index, seg["range"]), payload, fuel, m0)

    fuel_a = min(fuel_max, room - pay_max)
    if fuel_a < 0.0:
        raise InputError(f"max_payload {pay_max:,.0f} kg does not fit: empty {empty:,.0f} kg + crew {crew:,.0f} kg "
                         f"+ max_payload exceeds the design takeoff mass {m_TO:,.0f} kg", spec.path,
                         field="aircraft.weights.max_payload")
    pay_c = min(pay_max, max(0.0, room - fuel_max))
    fuel_c = min(fuel_max, room)
    if room < fuel_max:
        notes.append(f"the fuel capacity {fuel_max:,.0f} kg does not fit at the design takeoff mass with the empty "
                     f"mass and crew; full fuel is {room:,.0f} kg")
    corners = (corner("max-payload", pay_max, fuel_a), corner("design", float(d.payload_mass), float(d.fuel_mass)),
               corner("max-fuel", pay_c, fuel_c), corner("ferry", 0.0, fuel_c))
    # the boundary: maximum payload up to A, the design takeoff mass from A to C, full fuel from C to D
    ab = [corner("max-payload", p, room - p) for p in np.linspace(pay_max, pay_c, samples)] if pay_c < pay_max else []
    cd = [corner("ferry", p, fuel_c) for p in np.linspace(pay_c, 0.0, samples)]
    pts = [(0.0, pay_max)] + [(c.range, c.payload) for c in ab + cd]
    R, P = (np.array(v) for v in zip(*pts))
    return PayloadRange(title=res.title, segment=name, design_range=float(seg["range"]), empty=empty, crew=crew,
                        design_mass=m_TO, max_payload=pay_max, max_fuel=fuel_max, corners=corners, curve=(R, P),
                        notes=tuple(notes))

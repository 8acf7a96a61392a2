"""Historical values of aircraft classes: empty-mass fraction, wing loading, thrust- or power-to-weight.

A requirement file may declare ``aircraft.class``; the class cross-check
(:mod:`sizing.problem.crosscheck`) then prints the design's empty fraction, W/S and
T/W (P/W) beside these typical values and flags an outlier. No class, no check.

Sources (docs/references.md §11.7), all from memory of Raymer, *Aircraft Design: A
Conceptual Approach* (AIAA, 6th ed. 2018; the table numbers are stable since the 4th):

* empty fraction W_e/W_0 = A W_0^C (W_0 in lb): Table 3.1 (the same coefficients as
  :data:`sizing.weights.empty.STATISTICAL_PRESETS`);
* typical takeoff wing loading [lb/ft^2]: Table 5.5;
* typical installed T/W at takeoff (jets): Table 5.1; hp/W_0 [hp/lb] (propeller aircraft):
  Table 5.2.

The tables give one typical value per class. The bands around them (``lo``, ``hi``) and
the +/-10 % band about the Table 3.1 trend are our own reading of the scatter of the
historical data (no source): a design outside a band is not wrong, but a reviewer
will ask why. The business jet has no row in those tables: its values are ours, from
memory of published business-jet data, and say so.

T/W of the tables is the installed sea-level static thrust at the rating the engines
fly at takeoff: maximum (afterburning) for an afterburning fighter, dry (military) for
engines without afterburner.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..common.conversions import HP, LB, LBF_FT2, N_PER_LBF


@dataclass(frozen=True)
class Band:
    typical: float
    lo: float
    hi: float


@dataclass(frozen=True)
class AircraftClass:
    name: str                      # the key written in aircraft.class
    title: str                     # readable name
    propeller: bool
    empty: tuple                   # ("trend", A, C) of Table 3.1, or ("band", typical, lo, hi)
    wing_loading_psf: Band         # [lb/ft^2]
    thrust_or_power: Band          # T/W [-] (jets) or P/W [hp/lb] (propeller aircraft)
    source: str


EMPTY_TREND_BAND = 0.10            # +/- fraction about the Table 3.1 trend (ours, no source)

_R = "Raymer Tables 3.1, 5.{t}, 5.5 (from memory)"
CLASSES = {c.name: c for c in (
    AircraftClass("homebuilt", "homebuilt (metal/wood)", True, ("trend", 1.19, -0.09),
                  Band(11.0, 6.0, 18.0), Band(0.08, 0.05, 0.12), _R.format(t=2)),
    AircraftClass("general-aviation-single", "single-engine general aviation", True, ("trend", 2.36, -0.18),
                  Band(17.0, 11.0, 25.0), Band(0.07, 0.05, 0.10), _R.format(t=2)),
    AircraftClass("general-aviation-twin", "twin-engine general aviation", True, ("trend", 1.51, -0.10),
                  Band(26.0, 18.0, 38.0), Band(0.17, 0.12, 0.22), _R.format(t=2)),
    AircraftClass("twin-turboprop", "twin turboprop", True, ("trend", 0.96, -0.05),
                  Band(40.0, 28.0, 60.0), Band(0.20, 0.14, 0.26), _R.format(t=2)),
    AircraftClass("jet-trainer", "jet trainer", False, ("trend", 1.59, -0.10),
                  Band(50.0, 35.0, 75.0), Band(0.40, 0.30, 0.55), _R.format(t=1)),
    AircraftClass("jet-fighter", "jet fighter", False, ("trend", 2.34, -0.13),
                  Band(70.0, 50.0, 100.0), Band(0.60, 0.50, 1.20), _R.format(t=1)),
    AircraftClass("military-cargo-bomber", "military cargo or bomber", False, ("trend", 0.93, -0.07),
                  Band(120.0, 80.0, 150.0), Band(0.25, 0.20, 0.35), _R.format(t=1)),
    AircraftClass("jet-transport", "jet transport", False, ("trend", 1.02, -0.06),
                  Band(120.0, 90.0, 150.0), Band(0.25, 0.22, 0.38), _R.format(t=1)),
    AircraftClass("business-jet", "business jet", False, ("band", 0.55, 0.49, 0.62),
                  Band(70.0, 50.0, 95.0), Band(0.35, 0.28, 0.45),
                  "ours: no row in Raymer's tables; from memory of published business-jet data"),
)}
NAMES = tuple(CLASSES)


def typical_empty_fraction(cls: AircraftClass, m_TO):
    """(typical, lo, hi) empty fraction of a class at takeoff mass m_TO [kg].

    Examples
    --------
    Source: Raymer Table 3.1 (docs/references.md check 11.7-a): single-engine general
    aviation at W0 = 3 000 lb -> 0.55851, the band +/-10 % about it.

    >>> t, lo, hi = typical_empty_fraction(CLASSES["general-aviation-single"], 3000 * LB)
    >>> round(t, 5), round(lo, 5), round(hi, 5)
    (0.55851, 0.50266, 0.61436)
    """
    if cls.empty[0] == "band":
        return cls.empty[1], cls.empty[2], cls.empty[3]
    _, A, C = cls.empty
    t = A * (m_TO / LB) ** C
    return t, t * (1.0 - EMPTY_TREND_BAND), t * (1.0 + EMPTY_TREND_BAND)


def wing_loading_si(psf: float) -> float:
    """[lb/ft^2] -> [N/m^2]."""
    return psf * LBF_FT2


def power_to_weight_si(hp_per_lb: float) -> float:
    """[hp/lb] -> [W/N]."""
    return hp_per_lb * HP / N_PER_LBF

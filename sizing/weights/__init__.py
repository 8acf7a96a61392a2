"""Weights: empty-mass models, mission fuel and the weight closure.

Lives here: ``empty`` (components, fixed fraction, Raymer's statistical
regressions), ``mission`` (segment weight fractions by the Breguet range and
endurance equations, the fuel fraction) and ``closure`` (the takeoff mass
that closes the weights). Functions evaluate on floats, arrays and CasADi
symbols.
May import: ``sizing.physics`` and ``sizing.common`` only.
"""
from .closure import closure_mass
from .empty import (
    STATISTICAL_PRESETS,
    design_load_factor,
    empty_fraction,
    empty_fraction_of,
    empty_fraction_power_law,
    empty_fraction_refined,
    required_load_factors,
)
from .mission import (
                      breguet_cruise_fraction,
                      breguet_loiter_fraction,
                      default_label,
                      fuel_fraction,
                      fuel_fraction_from_segments,
                      has_mission_fuel,
                      mission_fractions,
                      segment_end_fractions,
                      segment_label,
)

__all__ = ["STATISTICAL_PRESETS", "breguet_cruise_fraction", "breguet_loiter_fraction", "closure_mass",
           "default_label", "design_load_factor", "empty_fraction", "empty_fraction_of", "empty_fraction_power_law",
           "empty_fraction_refined", "fuel_fraction", "fuel_fraction_from_segments", "has_mission_fuel",
           "mission_fractions", "required_load_factors", "segment_end_fractions", "segment_label"]

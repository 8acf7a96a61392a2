"""The requirement file as a whole: :class:`RequirementFile` and the rules across sections.

The models of this package *are* the file format (``docs/file-format.md``
documents every key; a test keeps the two in step). Dimensional values are
strings with a unit (parsed by :mod:`.units`); dimensionless ones are
numbers (fractions may be written ``"6 %"``).
"""
from __future__ import annotations

import difflib
import math
from typing import Literal, Optional

from pydantic import Field, model_validator

from ..common.errors import FieldError
from ..physics.propulsion import PROPELLER_TYPES
from . import units
from .aircraft import Aircraft, EmptyComponents
from .fields import Name, Number, PowerToWeight, Strict, WingLoading
from .kinds import After, ClimbGradient, Requirement
from .mission import Mission


class DesignSpace(Strict):
    wing_loading: Optional[tuple[WingLoading, WingLoading]] = None
    thrust_to_weight: Optional[tuple[Number, Number]] = None
    power_to_weight: Optional[tuple[PowerToWeight, PowerToWeight]] = None

    @model_validator(mode="after")
    def _order(self):
        for name, top in (("wing_loading", 1.0e5), ("thrust_to_weight", 20.0), ("power_to_weight", 2000.0)):
            r = getattr(self, name)
            if r is not None:
                lo, hi = (float(x) for x in r)
                if not (0 <= lo < hi):
                    raise FieldError(name, f"{name} range [{lo:g}, {hi:g}] (SI) must be increasing and "
                                           f"non-negative")
                if not hi <= top:
                    raise FieldError((name, 1), f"{name} upper bound {hi:g} (SI) is not plausible "
                                                f"(at most {top:g})")
        return self


class RequirementFile(Strict):
    title: Name = "Untitled concept"
    aircraft: Aircraft
    mission: Optional[Mission] = None
    requirements: list[Requirement] = Field(min_length=1)
    design_space: Optional[DesignSpace] = None
    objective: Literal["takeoff-mass", "thrust", "wing-area", "fuel-mass"] = "takeoff-mass"

    @model_validator(mode="after")
    def _cross(self):
        seen = {}
        for i, r in enumerate(self.requirements):
            if r.id in seen:
                raise FieldError(("requirements", i, "id"), f"duplicate requirement id {r.id!r} (also "
                                 f"requirement {seen[r.id] + 1}); every id must be unique")
            seen[r.id] = i
        prop = self.aircraft.propulsion.type in PROPELLER_TYPES
        kind = "a propeller aircraft" if prop else "a jet"
        emp = self.aircraft.weights.empty
        where = ("aircraft", "weights", "empty", "propulsion")
        if isinstance(emp, EmptyComponents):
            is_power = units.is_dimension(emp.propulsion, "mass_per_power")
            if prop and not is_power:
                raise FieldError(where, f"{kind} gives mass per sea-level power, e.g. "
                                        f"{units.DIMENSIONS['mass_per_power'].examples}, got {emp.propulsion.text}")
            if not prop and is_power:
                raise FieldError(where, f"{kind} gives mass per sea-level thrust, e.g. '0.025 kg/N', "
                                        f"got {emp.propulsion.text}")
        if self.mission is not None:
            want = "psfc" if prop else "tsfc"
            example = "'0.45 lb/(hp*h)'" if prop else "'0.9 1/h' or '22 mg/(N*s)'"
            places = [(("mission", "tsfc"), self.mission.tsfc)] + [
                (("mission", "segments", i, "tsfc"), getattr(s, "tsfc", None))
                for i, s in enumerate(self.mission.segments)]
            for path, q in places:
                if q is not None and not units.is_dimension(q, want):
                    raise FieldError(path, f"{kind} burns fuel per {'power' if prop else 'thrust'}: give "
                                           f"{'power' if prop else 'thrust'}-specific consumption such as "
                                           f"{example}, got {q.text}")
        names = [s.name for s in self.mission.segments if s.name] if self.mission else []
        engines = self.aircraft.propulsion.engines
        for i, r in enumerate(self.requirements):
            if isinstance(r.weight_fraction, After) and r.weight_fraction.after not in names:
                near = difflib.get_close_matches(r.weight_fraction.after, names, 1)
                hint = f" (did you mean {near[0]!r}?)" if near else ""
                raise FieldError(("requirements", i, "weight_fraction", "after"),
                                 f"{r.weight_fraction.after!r} names no mission segment{hint}; segments: "
                                 f"{', '.join(names) or 'none (there is no mission with named segments)'}")
            if isinstance(r, ClimbGradient) and r.engines_out >= engines:
                raise FieldError(("requirements", i, "engines_out"),
                                 f"engines_out {r.engines_out} leaves no engine running (the aircraft "
                                 f"has {engines})")
            if r.kind not in ("stall-speed", "instantaneous-turn"):     # these use CLmax only
                _within_table(self.aircraft.aerodynamics.mach_max, r, ("requirements", i))
        if self.mission is not None:
            for i, seg in enumerate(self.mission.segments):
                if seg.kind != "fixed":
                    _within_table(self.aircraft.aerodynamics.mach_max, seg, ("mission", "segments", i))
        fuel = self.aircraft.weights.fuel.fraction
        if fuel is None and self.mission is None:
            raise FieldError(("aircraft", "weights", "fuel"),
                             "give weights.fuel.fraction, or a mission to compute the fuel from")
        if fuel is not None and self.mission is not None:
            raise FieldError(("aircraft", "weights", "fuel", "fraction"),
                             "give weights.fuel.fraction or a mission, not both")
        ds = self.design_space
        if ds is not None:
            if prop and ds.thrust_to_weight is not None:
                raise FieldError(("design_space", "thrust_to_weight"), "a propeller aircraft is sized by "
                                 "power_to_weight (W/N), not thrust_to_weight")
            if not prop and ds.power_to_weight is not None:
                raise FieldError(("design_space", "power_to_weight"),
                                 "a jet is sized by thrust_to_weight, not power_to_weight")
        return self


def _within_table(mach_max, obj, where):
    """A flight condition's Mach number must lie inside the drag polar's Mach table."""
    if not math.isfinite(mach_max):
        return
    mach, speed = getattr(obj, "mach", None), getattr(obj, "speed", None)
    if mach is not None and mach > mach_max:
        raise FieldError(where + ("mach",), f"mach {mach:g} lies above the drag polar's Mach table (up to "
                                            f"{mach_max:g}); extend the table or lower the Mach")
    if speed is not None:
        from ..physics.atmosphere import isa

        M = speed.si / float(isa(obj.altitude.si, obj.temperature_offset.si).speed_of_sound)
        if M > mach_max:
            raise FieldError(where + ("speed",), f"speed {speed.text} is Mach {M:.3f} here, above the drag "
                                                 f"polar's Mach table (up to {mach_max:g}); extend the "
                                                 f"table or lower the speed")

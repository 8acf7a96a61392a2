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
from .kinds import After, ClimbGradient, Requirement, Takeoff
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


class Reference(Strict):
    """A reference design drawn on the constraint diagram (the user's own earlier concept, say)."""

    label: Name
    wing_loading: WingLoading
    thrust_to_weight: Optional[Number] = None
    power_to_weight: Optional[PowerToWeight] = None

    @model_validator(mode="after")
    def _one(self):
        if (self.thrust_to_weight is None) == (self.power_to_weight is None):
            raise FieldError("label", f"reference {self.label!r}: give thrust_to_weight (a jet) or "
                                      "power_to_weight (a propeller aircraft), one of them")
        if self.thrust_to_weight is not None and not 0.0 < self.thrust_to_weight <= 20.0:
            raise FieldError("thrust_to_weight", f"thrust_to_weight {self.thrust_to_weight:g} is not plausible "
                                                 "(0 to 20)")
        if not 0.0 < float(self.wing_loading) <= 1.0e5:
            raise FieldError("wing_loading", f"wing_loading {self.wing_loading.text} is not plausible")
        if self.power_to_weight is not None and not 0.0 < float(self.power_to_weight) <= 2000.0:
            raise FieldError("power_to_weight", f"power_to_weight {self.power_to_weight.text} is not plausible")
        return self


class RequirementFile(Strict):
    title: Name = "Untitled concept"
    aircraft: Aircraft
    mission: Optional[Mission] = None
    requirements: list[Requirement] = Field(min_length=1)
    design_space: Optional[DesignSpace] = None
    objective: Literal["takeoff-mass", "thrust", "wing-area", "fuel-mass"] = "takeoff-mass"
    references: Optional[list[Reference]] = None

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
        for i, r in enumerate(self.requirements):
            if isinstance(r.weight_fraction, After) and r.weight_fraction.after not in names:
                near = difflib.get_close_matches(r.weight_fraction.after, names, 1)
                hint = f" (did you mean {near[0]!r}?)" if near else ""
                raise FieldError(("requirements", i, "weight_fraction", "after"),
                                 f"{r.weight_fraction.after!r} names no mission segment{hint}; segments: "
                                 f"{', '.join(names) or 'none (there is no mission with named segments)'}")
            _engines_and_forms(r, ("requirements", i), self.aircraft, prop)
            _within_speed_limit(r, ("requirements", i), self.aircraft.speed_limit)
            if r.kind not in ("stall-speed", "instantaneous-turn"):     # these use CLmax only
                _within_table(self.aircraft.aerodynamics.mach_max, r, ("requirements", i))
        if self.mission is not None:
            for i, seg in enumerate(self.mission.segments):
                if seg.kind != "fixed":
                    _within_speed_limit(seg, ("mission", "segments", i), self.aircraft.speed_limit, "segment")
                    _within_table(self.aircraft.aerodynamics.mach_max, seg, ("mission", "segments", i))
        fuel = self.aircraft.weights.fuel.fraction
        if fuel is None and self.mission is None:
            raise FieldError(("aircraft", "weights", "fuel"),
                             "give weights.fuel.fraction, or a mission to compute the fuel from")
        if fuel is not None and self.mission is not None:
            raise FieldError(("aircraft", "weights", "fuel", "fraction"),
                             "give weights.fuel.fraction or a mission, not both")
        for i, ref in enumerate(self.references or ()):
            if prop and ref.thrust_to_weight is not None:
                raise FieldError(("references", i, "thrust_to_weight"), "a propeller aircraft's diagram is in "
                                 "power_to_weight (W/N, hp/lb): give the reference's power_to_weight")
            if not prop and ref.power_to_weight is not None:
                raise FieldError(("references", i, "power_to_weight"), "a jet's diagram is in thrust_to_weight: "
                                 "give the reference's thrust_to_weight")
        cls = self.aircraft.aircraft_class
        if cls is not None:
            from ..weights.classes import CLASSES

            if CLASSES[cls].propeller != prop:
                raise FieldError(("aircraft", "class"), f"class {cls!r} holds "
                                 f"{'propeller aircraft' if CLASSES[cls].propeller else 'jets'}, and this file "
                                 f"describes {kind}; choose a class of "
                                 f"{'propeller aircraft' if prop else 'jets'}: " +
                                 ", ".join(n for n, c in CLASSES.items() if c.propeller == prop))
        ds = self.design_space
        if ds is not None:
            if prop and ds.thrust_to_weight is not None:
                raise FieldError(("design_space", "thrust_to_weight"), "a propeller aircraft is sized by "
                                 "power_to_weight (W/N), not thrust_to_weight")
            if not prop and ds.power_to_weight is not None:
                raise FieldError(("design_space", "power_to_weight"),
                                 "a jet is sized by thrust_to_weight, not power_to_weight")
        return self


def _engines_and_forms(r, where, aircraft, prop):
    """Engine counts that a requirement's form needs: engines out, climb segments, balanced field."""
    from ..constraints.climb import CLIMB_SEGMENTS, segment_defaults

    engines = aircraft.propulsion.engines
    out = getattr(r, "engines_out", None)
    if out is not None and out >= engines:
        raise FieldError(where + ("engines_out",), f"engines_out {out} leaves no engine running (the aircraft "
                                                   f"has {engines})")
    if isinstance(r, ClimbGradient) and r.segment is not None:
        try:
            segment_defaults(r.segment, engines)
        except ValueError as e:
            raise FieldError(where + ("segment",), f"{e}; this aircraft has {engines}: give gradient, "
                                                   f"engines_out and speed_ratio instead") from None
        if out is None and CLIMB_SEGMENTS[r.segment]["engines_out"] >= engines:
            raise FieldError(where + ("segment",), f"the {r.segment} segment has one engine out, which leaves "
                                                   f"no engine running (the aircraft has {engines})")
    if isinstance(r, ClimbGradient) and r.segment is None and out is None and engines < 2:
        raise FieldError(where + ("engines_out",), "a climb gradient has one engine out by default, which "
                                                   "leaves no engine running on this single-engine aircraft: "
                                                   "write engines_out: 0")
    if isinstance(r, Takeoff) and r.balanced_field is not None:
        if engines < 2:
            raise FieldError(where + ("balanced_field",), "a balanced field length balances an engine failure "
                                                          "against the rejected takeoff: it applies to multi-engine "
                                                          f"aircraft (this one has {engines} engine); give distance "
                                                          "or ground_roll")
        if prop and aircraft.propulsion.propeller_diameter is None:
            raise FieldError(where + ("balanced_field",), "the balanced field length of a propeller aircraft "
                                                          "needs aircraft.propulsion.propeller_diameter (its "
                                                          "average takeoff thrust comes from the disk area)")


_FLOWN_AT_SPEED = ("sustained-turn", "max-mach", "climb", "excess-power", "cruise", "instantaneous-turn")


def _within_speed_limit(r, where, limit, what="requirement"):
    """A requirement (or a mission segment) flown at a given speed must not ask for more than the
    speed limit there: the error names the speed, the limit that governs there as the file wrote
    it (MMO, VMO or a true airspeed), and both as Mach numbers at the condition."""
    if limit is None or (what == "requirement" and r.kind not in _FLOWN_AT_SPEED):
        return
    from types import SimpleNamespace

    from ..constraints.flight import fixed_speed, speed_key, speed_limit
    from ..physics.atmosphere import isa

    key = speed_key(r)
    if key is None:
        return
    air = isa(r.altitude.si, r.temperature_offset.si)
    raw = {k: (None if getattr(r, k, None) is None else float(getattr(r, k))) for k in ("mach", "speed",
                                                                                        "cas", "eas")}
    V = float(fixed_speed(SimpleNamespace(**raw), air))
    tops = []
    for name, mach, cas, tas, label in (
            ("mach", limit.mach, None, None, f"mach {limit.mach:g} (MMO)" if limit.mach is not None else ""),
            ("cas", None, limit.cas, None, f"cas {getattr(limit.cas, 'text', '')} (VMO)"),
            ("speed", None, None, limit.speed, f"speed {getattr(limit.speed, 'text', '')} (true airspeed)")):
        if getattr(limit, name) is None:
            continue
        ac = SimpleNamespace(speed_limit_mach=mach, speed_limit_cas=None if cas is None else cas.si,
                             speed_limit_speed=None if tas is None else tas.si)
        tops.append((float(speed_limit(ac, air)), label))
    top, label = min(tops)
    if V > top * (1.0 + 1e-9):
        a = float(air.speed_of_sound)
        raise FieldError(where + (key,), f"{key} {getattr(getattr(r, key), 'text', getattr(r, key))} is "
                                         f"M {V / a:.3f} at {r.altitude.text}, above the speed limit there "
                                         f"(M {top / a:.3f}, from aircraft.speed_limit {label}); the aircraft "
                                         f"cannot fly this {what}: lower it, or raise aircraft.speed_limit")


def _within_table(mach_max, obj, where):
    """A flight condition's Mach number must lie inside the drag polar's Mach table."""
    if not math.isfinite(mach_max):
        return
    mach = getattr(obj, "mach", None)
    if mach is not None and mach > mach_max:
        raise FieldError(where + ("mach",), f"mach {mach:g} lies above the drag polar's Mach table (up to "
                                            f"{mach_max:g}); extend the table or lower the Mach")
    for key in ("speed", "cas", "eas"):
        q = getattr(obj, key, None)
        if q is None:
            continue
        from ..physics.airspeed import true_airspeed
        from ..physics.atmosphere import isa

        air = isa(obj.altitude.si, obj.temperature_offset.si)
        M = float(true_airspeed(key, q.si, air, strict=False)) / float(air.speed_of_sound)
        if M > mach_max:
            raise FieldError(where + (key,), f"{key} {q.text} is Mach {M:.3f} here, above the drag "
                                             f"polar's Mach table (up to {mach_max:g}); extend the "
                                             f"table or lower the speed")

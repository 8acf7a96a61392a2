"""The ``aircraft`` section of a requirement file: drag polar, propulsion, speed limit, weights.

Plausibility bounds are wide envelopes around published typical values
(Raymer Ch. 4-6, Mattingly §2); they catch typing slips such as CLmax 9 or a
Mach table in knots, not unusual designs (common practice, no source, for the
exact limits).
"""
from __future__ import annotations

import difflib
from typing import Annotated, Literal, Optional, Union

from pydantic import Field, field_validator, model_validator

from ..common.errors import FieldError
from ..weights.classes import NAMES as CLASS_NAMES
from . import units
from .fields import (
    ArealMass,
    Count,
    EngineMass,
    Fraction,
    Length,
    LiftCoefficient,
    LoadFactor,
    MachNumber,
    Mass,
    Number,
    Speed,
    Strict,
)
from .fields import positive as _positive
from .fields import within as _within

MAX_FIXED_MASS = 1.0e6     # crew or payload [kg]: above any aircraft built (common practice, no source)


class _Table(Strict):
    mach: list[Number] = Field(min_length=2, description="strictly increasing Mach numbers from 0 up")

    @field_validator("mach")
    @classmethod
    def _increasing(cls, v):
        bad = next((i for i, (a, b) in enumerate(zip(v, v[1:])) if not (b > a)), None)
        if bad is not None:
            raise ValueError(f"Mach table {v} is not strictly increasing (entry {bad + 1}: "
                             f"{v[bad + 1]:g} after {v[bad]:g})")
        if not v[0] >= 0:
            raise ValueError(f"Mach numbers cannot be negative (first entry {v[0]:g})")
        if not v[-1] <= 5.0:
            raise ValueError(f"Mach table runs to {v[-1]:g}; the models stop at Mach 5 "
                             f"(is it a speed in knots?)")
        return v

    def _check(self, values, name, hi):
        if len(values) != len(self.mach):
            raise FieldError(name, f"{name} has {len(values)} entries but mach has {len(self.mach)}; "
                                   f"give one {name} per Mach number")
        for i, c in enumerate(values):
            _positive(f"{name} entry {i + 1}", c, hi, field=(name, i))


class CD0Table(_Table):
    cd0: list[Number] = Field(description="zero-lift drag coefficient at each Mach number")

    @model_validator(mode="after")
    def _len(self):
        self._check(self.cd0, "cd0", 0.5)
        return self


class K1Table(_Table):
    k1: list[Number] = Field(description="induced-drag factor at each Mach number")

    @model_validator(mode="after")
    def _len(self):
        self._check(self.k1, "k1", 2.0)
        return self


class CLBuffetTable(_Table):
    cl_buffet: list[Number] = Field(description="buffet-onset lift coefficient at each Mach number")

    @model_validator(mode="after")
    def _len(self):
        self._check(self.cl_buffet, "cl_buffet", 3.0)
        return self


class CLMax(Strict):
    clean: LiftCoefficient = Field(description="clean-wing maximum lift coefficient")
    takeoff: Optional[LiftCoefficient] = Field(None, description="takeoff flaps (default: clean)")
    landing: Optional[LiftCoefficient] = Field(None, description="landing flaps (default: takeoff)")

    @field_validator("clean", "takeoff", "landing")
    @classmethod
    def _plausible(cls, v):
        if v is not None and not (0.2 <= v <= 4.5):
            raise ValueError(f"CLmax {v:g} is outside the plausible range 0.2 to 4.5")
        return v

    @model_validator(mode="after")
    def _flaps_raise(self):
        # high-lift devices raise the maximum lift coefficient (typical flapped CLmax 1.4 to
        # 3.0, docs/references.md §3.5): a flapped CLmax below the clean one is a slip
        for name in ("takeoff", "landing"):
            v = getattr(self, name)
            if v is not None and v < self.clean:
                raise FieldError(name, f"{name} CLmax {v:g} is below the clean CLmax {self.clean:g}; "
                                       f"flaps raise CLmax (swap the values?)")
        return self


class Aerodynamics(Strict):
    cd0: Union[Number, CD0Table] = Field(description="zero-lift drag coefficient, or a Mach table")
    aspect_ratio: Optional[Number] = None
    oswald_efficiency: Optional[Number] = Field(None, description="default: Raymer's straight-wing estimate from the aspect ratio")
    k1: Optional[Union[Number, K1Table]] = Field(None, description="induced-drag factor; default 1/(pi A e)")
    k2: Number = 0.0
    cl_max: CLMax
    takeoff_drag_increment: Number = 0.0
    landing_drag_increment: Number = 0.0
    cl_min: Optional[Number] = Field(None, description="negative maximum lift coefficient, clean (V-n chart); "
                                                       "default -0.8 x cl_max.clean")
    lift_curve_slope: Optional[Number] = Field(None, description="wing lift-curve slope per radian (gust loads); "
                                                                 "default the Helmbold-DATCOM formula")

    @field_validator("cl_min")
    @classmethod
    def _cl_min(cls, v):
        if v is not None and not (-3.0 <= v <= -0.1):
            raise ValueError(f"cl_min {v:g} must be a negative lift coefficient between -3 and -0.1 "
                             f"(the clean wing's negative CLmax)")
        return v

    @field_validator("lift_curve_slope")
    @classmethod
    def _slope(cls, v):
        if v is not None and not (1.0 <= v <= 7.0):
            raise ValueError(f"lift_curve_slope {v:g} per radian is outside 1 to 7 (2 pi = 6.28 is the "
                             f"thin-airfoil value; a value per degree such as 0.08 is 4.58 per radian)")
        return v
    gear_drag_increment: Number = Field(0.0, description="zero-lift drag of the extended landing gear, added "
                                                         "where the gear is down (takeoff, first-segment and "
                                                         "landing climbs)")
    engine_out_drag_increment: Number = Field(0.0, description="zero-lift drag of each inoperative engine "
                                                               "(windmilling or feathered propeller, trim)")
    cl_buffet: Optional[Union[Number, CLBuffetTable]] = Field(None, description="buffet-onset lift "
                                                              "coefficient, or a Mach table")
    buffet_margin: Optional[Number] = Field(None, description="load factor to buffet onset [g]; default "
                                                              "1.3 where cl_buffet is given")

    @field_validator("cd0")
    @classmethod
    def _cd0(cls, v):
        return _positive("cd0", v, 0.5) if isinstance(v, float) else v

    @field_validator("aspect_ratio")
    @classmethod
    def _ar(cls, v):
        return _positive("aspect_ratio", v, 40.0)

    @field_validator("oswald_efficiency")
    @classmethod
    def _e(cls, v):
        return _within("oswald_efficiency", v, 0.2, 1.0)

    @field_validator("k2")
    @classmethod
    def _k2(cls, v):
        return _within("k2", v, -0.5, 0.5)

    @field_validator("takeoff_drag_increment", "landing_drag_increment", "gear_drag_increment",
                     "engine_out_drag_increment")
    @classmethod
    def _inc(cls, v):
        return _within("drag increment", v, 0.0, 0.3)

    @model_validator(mode="after")
    def _buffet(self):
        if isinstance(self.cl_buffet, float):
            _positive("cl_buffet", self.cl_buffet, 3.0)
        if self.buffet_margin is not None:
            if self.cl_buffet is None:
                raise FieldError("buffet_margin", "buffet_margin needs cl_buffet (the buffet-onset lift "
                                                  "coefficient it is measured against)")
            _within("buffet_margin", self.buffet_margin, 1.0, 2.5, "1.0 to 2.5 g")
        return self

    @model_validator(mode="after")
    def _k1_source(self):
        if self.k1 is None and self.aspect_ratio is None:
            raise FieldError("aspect_ratio", "give k1, or aspect_ratio (with optional oswald_efficiency)")
        if isinstance(self.k1, float):
            _positive("k1", self.k1, 2.0)
        return self

    @property
    def mach_max(self) -> float:
        tops = [t.mach[-1] for t in (self.cd0, self.k1) if isinstance(t, _Table)]  # drag tables only
        return min(tops) if tops else float("inf")


class Propulsion(Strict):
    type: Literal["turbojet", "turbofan-low-bypass", "turbofan-high-bypass", "turboprop", "piston"]
    engines: Count = Field(1, ge=1, le=8)
    throttle_ratio: Number = 1.0
    afterburner: bool = Field(False, description="fly at the maximum (wet) rating: T_SL is then the maximum "
                              "sea-level static thrust, else the dry one (turbojet, low-bypass turbofan)")
    propeller_efficiency: Number = 0.8
    takeoff_propeller_efficiency: Optional[Number] = Field(None, description="propeller efficiency in the "
                                                           "field kinds; default the cruise value")
    propeller_diameter: Optional[Length] = Field(None, description="diameter of each propeller: caps takeoff "
                                                 "thrust by ideal momentum theory")
    bypass_ratio: Optional[Number] = Field(None, description="jets: bypass ratio for the balanced field "
                                           "length's average thrust; default 0 / 1 / 5 by type")

    @model_validator(mode="after")
    def _kind(self):
        prop = self.type in ("turboprop", "piston")
        for key in ("takeoff_propeller_efficiency", "propeller_diameter"):
            if getattr(self, key) is not None and not prop:
                raise FieldError(key, f"{key} applies to propeller aircraft (turboprop, piston), not a {self.type}")
        if self.bypass_ratio is not None and prop:
            raise FieldError("bypass_ratio", f"bypass_ratio applies to jets, not a {self.type}")
        _within("takeoff_propeller_efficiency", self.takeoff_propeller_efficiency, 0.2, 0.95)
        _within("propeller_diameter", self.propeller_diameter, 0.3, 8.0, "0.3 to 8 m")
        _within("bypass_ratio", self.bypass_ratio, 0.0, 20.0)
        return self

    @field_validator("throttle_ratio")
    @classmethod
    def _tr(cls, v):
        return _within("throttle_ratio", v, 0.9, 1.3, "0.9 to 1.3 (typical 1.0 to 1.08)")

    @field_validator("propeller_efficiency")
    @classmethod
    def _eta(cls, v):
        return _within("propeller_efficiency", v, 0.2, 0.95)


class SpeedLimit(Strict):
    mach: Optional[MachNumber] = Field(None, description="MMO")
    cas: Optional[Speed] = Field(None, description="VMO, a calibrated airspeed")
    speed: Optional[Speed] = Field(None, description="a true airspeed limit")

    @model_validator(mode="after")
    def _one(self):
        if self.mach is None and self.speed is None and self.cas is None:
            raise ValueError("give mach (MMO), cas (VMO) or speed (a true airspeed); mach and cas together "
                             "limit to whichever is lower at each altitude")
        _positive("mach", self.mach, 5.0)
        _positive("speed", self.speed, 1700.0)
        _positive("cas", self.cas, 340.0)
        return self


class WingLoadFactor(Strict):
    reference: LoadFactor = Field(description="limit load factor at which the wing mass is given")
    exponent: Number = Field(0.5, description="exponent of the load-factor ratio (Raymer's wing-mass "
                                              "equations: 0.49 general aviation, 0.5 fighter, 0.557 transport)")
    wing_share: Optional[Fraction] = Field(None, description="statistical model only: share of the empty "
                                                             "mass in the wing at the reference load factor")

    @model_validator(mode="after")
    def _ranges(self):
        _within("reference", self.reference, 1.5, 12.0, "1.5 to 12 (a limit load factor)")
        _within("exponent", self.exponent, 0.0, 1.5)
        if self.wing_share is not None and not (0.0 < self.wing_share < 1.0):
            raise FieldError("wing_share", f"wing_share {self.wing_share:g} must lie between 0 and 1")
        return self


class EmptyComponents(Strict):
    model: Literal["components"]
    wing: ArealMass
    propulsion: EngineMass = Field(description="installed propulsion mass per newton of sea-level static thrust "
                                   "at the engine's top rating (per watt of shaft power at takeoff rating)")
    other: Fraction
    wing_load_factor: Optional[WingLoadFactor] = None

    @model_validator(mode="after")
    def _ranges(self):
        if self.wing_load_factor is not None and self.wing_load_factor.wing_share is not None:
            raise FieldError(("wing_load_factor", "wing_share"), "wing_share is for the statistical model; "
                             "the components model scales its wing term (wing) directly")
        _positive("wing", self.wing, 1000.0)
        # installed engine mass is of order 0.02 kg/N (jets) or 1 kg/kW (piston engines); the
        # ceilings, well above, guard against typing slips (common practice, no source)
        top, text = ((0.01, "10 kg/kW") if units.is_dimension(self.propulsion, "mass_per_power")
                     else (0.5, "0.5 kg/N"))
        _positive("propulsion", self.propulsion)
        if not self.propulsion.si <= top:
            raise FieldError("propulsion", f"propulsion {self.propulsion.text} is not plausible (at most {text})")
        if not (0.0 <= self.other < 1.0):
            raise FieldError("other", f"other {self.other:g} must be a fraction of takeoff mass in [0, 1)")
        return self


class EmptyFraction(Strict):
    model: Literal["fraction"]
    value: Fraction

    @field_validator("value")
    @classmethod
    def _v(cls, v):
        if not (0.0 < v < 1.0):
            raise ValueError(f"empty fraction {v:g} must lie between 0 and 1")
        return v


class EmptyStatistical(Strict):
    model: Literal["statistical"]
    preset: Optional[str] = Field(None, description="a named aircraft class of the published regression")
    a: Optional[Number] = Field(None, description="coefficient A (pound units) of We/W0 = A W0^C K_vs")
    c: Optional[Number] = None
    variable_sweep: bool = False
    b: Optional[Number] = Field(None, description="refined form: b of We/W0 = a + b W0^C1 A^C2 (T/W)^C3 (W/S)^C4 M^C5")
    exponents: Optional[list[Number]] = Field(None, description="refined form: C1..C5")
    max_mach: Optional[MachNumber] = None
    wing_load_factor: Optional[WingLoadFactor] = None

    @model_validator(mode="after")
    def _given(self):
        if self.wing_load_factor is not None and self.wing_load_factor.wing_share is None:
            raise FieldError(("wing_load_factor", "wing_share"), "the statistical model has no wing term: "
                             "give wing_share, the share of the empty mass in the wing (e.g. 0.15)")
        from ..weights.empty import STATISTICAL_PRESETS
        if self.preset is not None and self.preset not in STATISTICAL_PRESETS:
            near = difflib.get_close_matches(self.preset, list(STATISTICAL_PRESETS), 1)
            hint = f" (did you mean {near[0]!r}?)" if near else ""
            raise FieldError("preset", f"unknown preset {self.preset!r}{hint}; valid: "
                                       f"{', '.join(STATISTICAL_PRESETS)}")
        if self.preset is None and (self.a is None or self.c is None):
            raise FieldError("a" if self.a is None else "c", "give a preset, or the coefficients a and c")
        if self.exponents is not None and len(self.exponents) != 5:
            raise FieldError("exponents", f"exponents takes five numbers C1..C5, got {len(self.exponents)}")
        _positive("max_mach", self.max_mach, 5.0)
        return self


Empty = Annotated[Union[EmptyComponents, EmptyFraction, EmptyStatistical], Field(discriminator="model")]


class Fuel(Strict):
    fraction: Optional[Fraction] = None

    @field_validator("fraction")
    @classmethod
    def _f(cls, v):
        if v is not None and not (0.0 <= v < 1.0):
            raise ValueError(f"fuel fraction {v:g} must lie in [0, 1)")
        return v


class Weights(Strict):
    crew: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    payload: Mass = Field(default_factory=lambda: units.parse("0 kg", "mass"))
    empty: Empty
    fuel: Fuel = Field(default_factory=Fuel)
    max_fuel: Optional[Mass] = Field(None, description="usable fuel capacity (payload-range); default the design fuel")
    max_payload: Optional[Mass] = Field(None, description="maximum payload (payload-range); default the design payload")
    max_landing_fraction: Optional[Fraction] = Field(None, description="maximum landing weight over takeoff "
                                                     "weight: default weight fraction of landing and "
                                                     "approach requirements")

    @model_validator(mode="after")
    def _fixed(self):
        if self.max_landing_fraction is not None and not (0.3 <= self.max_landing_fraction <= 1.0):
            raise FieldError("max_landing_fraction", f"max_landing_fraction {self.max_landing_fraction:g} "
                                                     f"must lie in [0.3, 1]: it is W_landing/W_TO")
        for name in ("crew", "payload"):
            if not getattr(self, name).si >= 0:
                raise FieldError(name, f"{name} cannot be negative, got {getattr(self, name).text}")
            if not getattr(self, name).si <= MAX_FIXED_MASS:
                raise FieldError(name, f"{name} {getattr(self, name).text} is not plausible (at most "
                                       f"{MAX_FIXED_MASS:,.0f} kg)")
        _positive("max_fuel", self.max_fuel, 1.0e6)
        if self.max_payload is not None and not self.max_payload.si >= self.payload.si:
            raise FieldError("max_payload", f"max_payload {self.max_payload.text} is below the design payload "
                                            f"{self.payload.text}; the design must carry its own payload")
        if self.max_payload is not None and not self.max_payload.si <= MAX_FIXED_MASS:
            raise FieldError("max_payload", f"max_payload {self.max_payload.text} is not plausible (at most "
                                            f"{MAX_FIXED_MASS:,.0f} kg)")
        if not self.crew.si + self.payload.si > 0:
            raise FieldError("payload", "crew plus payload must be positive: it is what the weight "
                                        "closure scales")
        return self


class DesignSpeeds(Strict):
    cruise: Optional[Speed] = Field(None, description="design cruising speed VC, equivalent airspeed")
    dive: Optional[Speed] = Field(None, description="design dive speed VD, equivalent airspeed")

    @model_validator(mode="after")
    def _order(self):
        _positive("cruise", self.cruise, 400.0)
        _positive("dive", self.dive, 500.0)
        if self.cruise is not None and self.dive is not None and not self.dive.si > self.cruise.si:
            raise FieldError("dive", f"dive {self.dive.text} must be above cruise {self.cruise.text} "
                                     f"(the rules ask VD >= 1.25 VC: 14 CFR 23.335(b), 25.335(b))")
        return self


class Aircraft(Strict):
    aircraft_class: Optional[Literal[CLASS_NAMES]] = Field(
        None, alias="class", description="class of the historical tables the design is cross-checked "
                                         "against (sizing.weights.classes); none: no cross-check")
    category: Optional[Literal["normal", "utility", "acrobatic", "transport"]] = Field(
        None, description="load-factor category (14 CFR 23.337 / 25.337); default from the takeoff mass")
    design_speeds: Optional[DesignSpeeds] = None
    aerodynamics: Aerodynamics
    propulsion: Propulsion
    speed_limit: Optional[SpeedLimit] = None
    weights: Weights

    @model_validator(mode="after")
    def _load_factor_needs_category(self):
        if getattr(self.weights.empty, "wing_load_factor", None) is not None and self.category is None:
            raise FieldError(("weights", "empty", "wing_load_factor"), "wing_load_factor scales the wing mass "
                             "with the design's limit load factor, which comes from aircraft.category: "
                             "give category (normal, utility, acrobatic or transport)")
        return self

"""The class cross-check: the design's empty fraction, W/S and T/W (P/W) beside the typical
values of the class its file declares (``aircraft.class``; tables in
:mod:`sizing.weights.classes`). No class declared: no check, no guess.
"""
from __future__ import annotations

from dataclasses import dataclass

from ..common.conversions import HP, LBF_FT2, N_PER_LBF
from ..physics.propulsion import rating_name
from ..weights.classes import CLASSES, typical_empty_fraction


@dataclass(frozen=True)
class ClassRow:
    quantity: str          # "empty fraction", "wing loading W/S", ...
    key: str               # JSON key stem
    unit: str              # the unit of design, typical, lo, hi
    design: float
    typical: float
    lo: float
    hi: float

    @property
    def inside(self) -> bool:
        return self.lo <= self.design <= self.hi

    @property
    def verdict(self) -> str:
        if self.inside:
            return "within the class range"
        side = "above" if self.design > self.hi else "below"
        edge = self.hi if self.design > self.hi else self.lo
        return f"OUTLIER: {abs(self.design / edge - 1.0) * 100:.0f} % {side} the class range"


@dataclass(frozen=True)
class ClassCheck:
    name: str
    title: str
    source: str
    rows: tuple
    note: str = ""

    @property
    def outliers(self) -> tuple:
        return tuple(r for r in self.rows if not r.inside)

    def lines(self) -> list:
        """The check as text lines for the terminal summary and the report."""
        out = [f"Class cross-check: {self.title} ({self.source})"]
        for r in self.rows:
            out.append(f"  {r.quantity:<30} {_num(r.design):>8} {r.unit:<7} typical {_num(r.typical):>7}, "
                       f"range {_num(r.lo)}-{_num(r.hi)}   {r.verdict}")
        if self.note:
            out.append(f"  note: {self.note}")
        out.append("  " + (f"{len(self.outliers)} of {len(self.rows)} outside the class range: check the "
                           "inputs or say why this design differs" if self.outliers else
                           "every value within the class range"))
        return out

    def as_dict(self) -> dict:
        return {"class": self.name, "title": self.title, "source": self.source, "note": self.note,
                "outliers": [r.key for r in self.outliers],
                "rows": [{"quantity": r.quantity, "key": r.key, "unit": r.unit, "design": r.design,
                          "typical": r.typical, "low": r.lo, "high": r.hi, "inside": r.inside}
                         for r in self.rows]}


def _num(v):
    return f"{v:,.0f}" if abs(v) >= 100 else (f"{v:.3g}" if abs(v) >= 1 else f"{v:.3f}")


def class_of(spec):
    """The declared class name of a requirement file, or None."""
    if spec is None:
        return None
    return getattr(spec.model.aircraft, "aircraft_class", None)


def cross_check(result, spec=None):
    """The :class:`ClassCheck` of a feasible result whose file declares ``aircraft.class``, else None.

    The design's T/W is compared at the rating the engines fly at takeoff (the tables'
    convention), which is the rating the tool quotes its sea-level static thrust at: dry
    (military) without afterburner, maximum with one, takeoff for a high-bypass turbofan
    (:func:`sizing.physics.propulsion.rated_lapse`).
    """
    spec = spec if spec is not None else result.spec
    name = class_of(spec)
    if name is None or result is None or not result.feasible:
        return None
    cls = CLASSES[name]
    d = result.design
    t, lo, hi = typical_empty_fraction(cls, d.takeoff_mass)
    rows = [ClassRow("empty fraction m_empty/m_TO", "empty_fraction", "-", d.empty_mass / d.takeoff_mass, t, lo, hi)]
    w = cls.wing_loading_psf
    rows.append(ClassRow("wing loading W/S", "wing_loading_psf", "lb/ft²", d.wing_loading / LBF_FT2,
                         w.typical, w.lo, w.hi))
    b = cls.thrust_or_power
    note = ""
    if result.propeller:
        rows.append(ClassRow("power-to-weight P/W (sea level)", "power_to_weight_hp_per_lb", "hp/lb",
                             d.power_to_weight * N_PER_LBF / HP, b.typical, b.lo, b.hi))
    else:
        prop = spec.model.aircraft.propulsion
        rating = rating_name(prop.type, bool(getattr(prop, "afterburner", False)))
        rows.append(ClassRow(f"T/W at the {rating}", "thrust_to_weight", "-",
                             d.thrust_to_weight, b.typical, b.lo, b.hi))
    if cls.propeller != result.propeller:
        note = (note + "; " if note else "") + (f"a {cls.title} class for a "
                                                f"{'propeller aircraft' if result.propeller else 'jet'}")
    return ClassCheck(name, cls.title, cls.source, tuple(rows), note)

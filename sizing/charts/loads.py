"""Load-factor (V-n) chart of the sized design: the manoeuvring envelope, the gust lines and the
combined envelope, over equivalent airspeed.

Structural design loads are defined by the applicable regulation and the authority; this
chart applies the published, simplified (prescriptive) forms for conceptual estimates only
(:data:`sizing.common.caution.LOADS_CAUTION`).

- Limit load factors by category: 14 CFR 23.337 (pre-2017) for normal, utility and
  acrobatic, 25.337 for transport (:mod:`sizing.physics.loads`), raised to any higher load
  factor a requirement or mission segment asks for (the rules set minima).
- Design speeds (EAS): VS1 from CLmax clean at the chart's weight; VA = VS1 sqrt(n)
  (23.335(c), 25.335(c)); VC from ``aircraft.design_speeds.cruise``, else the 23.335(a)
  minimum from W/S (at most 0.9 VH at sea level) or the fastest cruise requirement if
  faster; for transport, which has no such minimum, the fastest cruise requirement (else
  the maximum level speed at the chart's altitude, 25.335(a)(2)); VD from
  ``design_speeds.dive``, else the published minimum (23.335(b), 25.335(b)).
- Gust lines n = 1 +- Kg rho0 U_de V a/(2 W/S) (23.341(c)) with Pratt's alleviation factor,
  the derived gust velocities of the chart's altitude at VC and VD (and at VB, transport),
  mean geometric chord sqrt(S/A) of the sized wing, lift-curve slope from
  ``aerodynamics.lift_curve_slope`` or the Helmbold-DATCOM formula at the Mach of VC.

:func:`compute_vn` (numpy) -> :class:`VnDiagram` (``.to_frame()``, ``.as_dict()``,
``.table_text()``) -> :func:`sizing.charts.loads_plot.plot_vn`.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..common.caution import CAUTION, LOADS_CAUTION
from ..common.conversions import FT, KN, LB, LBF_FT2
from ..common.errors import InputError
from ..physics import loads as L
from ..physics.atmosphere import A0, RHO0, isa
from ..problem import tree as M
from .performance import Conditions, Flight, domain_mach

CL_MIN_RATIO = -0.8   # default negative CLmax as a share of the positive (from memory: cambered sections
#                       reach roughly 60-90 % of their positive CLmax at negative incidence)
SPEED_NAMES = {"stall": "VS1 stall, 1 g, CLmax clean", "maneuvering": "VA design manoeuvring speed",
               "rough_air": "VB design speed for maximum gust intensity", "cruise": "VC design cruising speed",
               "dive": "VD design dive speed", "negative_stall": "negative stall, -1 g, cl_min"}


@dataclass(frozen=True)
class VnDiagram:
    """Computed V-n chart (SI; speeds are equivalent airspeeds [m/s]; no drawing).

    speeds: {name: EAS [m/s] or None} for stall, maneuvering, rough_air (transport), cruise,
    dive, negative_stall; sources: {name: how it was chosen}; gust: {"rough_air"|"cruise"|
    "dive": {"speed", "velocity", "increment", "positive", "negative"}} (velocity [m/s EAS]),
    empty when no mean chord is known; V [m/s EAS] with the curves over it: manoeuvring envelope
    (CLmax, limit load factors), gust envelope (straight lines from n = 1 at V = 0 through the
    gust points, no CLmax bound) and the combined envelope (the larger of the two, within CLmax).
    """

    title: str
    category: str
    category_source: str
    altitude: float
    weight_fraction: float
    mass: float
    wing_loading: float
    n_positive: float
    n_positive_source: str
    n_negative: float
    cl_max: float
    cl_min: float
    cl_min_source: str
    speeds: dict
    sources: dict
    mean_chord: float | None
    lift_slope: float | None
    lift_slope_source: str
    mass_ratio: float | None
    alleviation: float | None
    gust: dict
    V: np.ndarray
    maneuver_hi: np.ndarray
    maneuver_lo: np.ndarray
    gust_hi: np.ndarray | None
    gust_lo: np.ndarray | None
    envelope_hi: np.ndarray
    envelope_lo: np.ndarray
    notes: tuple = ()

    @property
    def sigma(self) -> float:
        return float(isa(self.altitude).density) / RHO0

    def tas(self, V_eas):
        """True airspeed [m/s] at the chart's altitude of an equivalent airspeed [m/s]."""
        return V_eas / math.sqrt(self.sigma)

    def peak(self, positive=True):
        """(load factor, EAS [m/s]) of the highest (lowest) point of the combined envelope."""
        y = self.envelope_hi if positive else -self.envelope_lo
        j = int(np.argmax(y >= np.nanmax(y) - 1e-9))      # the first speed that reaches it
        return float(y[j] if positive else -y[j]), float(self.V[j])

    def rows(self):
        """The table: (quantity, value text, source or remark)."""
        def spd(v):
            return "n/a" if v is None else f"{v / KN:,.1f} kn EAS ({v:,.1f} m/s; {self.tas(v) / KN:,.1f} kn TAS)"
        out = [("category", self.category, self.category_source),
               ("limit load factor, positive", f"{self.n_positive:.3f} g", self.n_positive_source),
               ("limit load factor, negative (at VC)", f"{self.n_negative:.3f} g",
                "25.337(c): -1 to VC, 0 at VD" if self.category == "transport" else
                f"23.337(b): {abs(self.n_negative / self.n_positive):.1f} x positive; to "
                f"{'-1' if self.category in ('utility', 'acrobatic') else '0'} at VD (23.333(b)(3))")]
        out += [(SPEED_NAMES[k], spd(self.speeds.get(k)), self.sources.get(k, ""))
                for k in ("stall", "maneuvering", "rough_air", "cruise", "dive", "negative_stall")
                if self.speeds.get(k) is not None]
        for k, g in self.gust.items():
            name = {"rough_air": "VB", "cruise": "VC", "dive": "VD"}[k]
            out.append((f"gust at {name}: U_de {g['velocity'] / FT:.1f} ft/s EAS",
                        f"n = {g['positive']:.3f} / {g['negative']:.3f} (1 +- {g['increment']:.3f})",
                        f"at {g['speed'] / KN:,.1f} kn EAS"))
        if self.gust:
            out += [("mean geometric chord", f"{self.mean_chord:.3f} m", "sqrt(S/A) of the sized wing"),
                    ("lift-curve slope", f"{self.lift_slope:.3f} per rad", self.lift_slope_source),
                    ("mass ratio mu, alleviation Kg", f"{self.mass_ratio:.2f}, {self.alleviation:.4f}",
                     "mu = 2 (W/S)/(rho c a g), Kg = 0.88 mu/(5.3 + mu)")]
        for positive in (True, False):
            n, v = self.peak(positive)
            out.append((f"combined envelope, {'highest' if positive else 'lowest'} load factor", f"{n:.3f} g",
                        f"at {v / KN:,.1f} kn EAS"))
        return out

    def table_text(self) -> str:
        w = max(len(r[0]) for r in self.rows())
        head = [f"Load-factor (V-n) chart: {self.title}",
                f"  weight fraction {self.weight_fraction:.3f} ({self.mass:,.0f} kg, W/S {self.wing_loading:,.0f} N/m^2), "
                f"{self.altitude / FT:,.0f} ft ({self.altitude:,.0f} m), standard day; speeds are equivalent airspeeds"]
        body = [f"  {q:<{w}}  {v}" + (f"   [{s}]" if s else "") for q, v, s in self.rows()]
        return "\n".join(head + body + [f"  note: {t}" for t in self.notes] + ["", LOADS_CAUTION])

    def to_frame(self):
        """The envelope curves over speed, one row per speed; units in the column names."""
        import pandas as pd

        cols = {"speed_eas_kn": self.V / KN, "speed_eas_m_s": self.V, "speed_tas_kn": self.tas(self.V) / KN,
                "n_maneuver_positive": self.maneuver_hi, "n_maneuver_negative": self.maneuver_lo}
        if self.gust_hi is not None:
            cols.update({"n_gust_positive": self.gust_hi, "n_gust_negative": self.gust_lo})
        cols.update({"n_envelope_positive": self.envelope_hi, "n_envelope_negative": self.envelope_lo})
        return pd.DataFrame(cols)

    def as_dict(self) -> dict:
        """The JSON object of ``sizing vn --json`` (SI, units in the key names)."""
        return {"title": self.title, "category": self.category, "category_source": self.category_source,
                "altitude_m": self.altitude, "weight_fraction": self.weight_fraction, "mass_kg": self.mass,
                "wing_loading_Pa": self.wing_loading,
                "n_limit_positive": self.n_positive, "n_limit_positive_source": self.n_positive_source,
                "n_limit_negative": self.n_negative, "cl_max": self.cl_max, "cl_min": self.cl_min,
                "speeds_eas_m_s": {k: v for k, v in self.speeds.items()},
                "speed_sources": dict(self.sources),
                "gust": {k: {"positive": g["positive"], "negative": g["negative"], "increment": g["increment"],
                             "speed_eas_m_s": g["speed"], "gust_velocity_eas_m_s": g["velocity"]}
                         for k, g in self.gust.items()},
                "mean_chord_m": self.mean_chord, "lift_curve_slope_per_rad": self.lift_slope,
                "lift_curve_slope_source": self.lift_slope_source, "mass_ratio": self.mass_ratio,
                "gust_alleviation_factor": self.alleviation,
                "envelope_max": dict(zip(("n", "speed_eas_m_s"), self.peak(True))),
                "envelope_min": dict(zip(("n", "speed_eas_m_s"), self.peak(False))),
                "notes": list(self.notes), "loads_caution": LOADS_CAUTION, "caution": CAUTION}

    def plot(self, ax=None, **kwargs):
        """Draw the chart (see :func:`sizing.charts.loads_plot.plot_vn`)."""
        from .loads_plot import plot_vn  # lazy: a convenience method (listed in the layering test)

        return plot_vn(self, ax=ax, **kwargs)


def equivalent_airspeed(V_true, altitude, temperature_offset=0.0):
    """EAS = TAS sqrt(rho/rho0) [m/s]."""
    return V_true * math.sqrt(float(isa(altitude, temperature_offset).density) / RHO0)


def fastest_cruise(tree):
    """(label, EAS [m/s]) of the fastest cruise requirement or mission cruise segment that gives
    its speed, or None."""
    found = []
    for rid, r in tree["requirements"].items():
        if r["kind"] == "cruise":
            air = isa(r.get("altitude", 0.0), r.get("temperature_offset", 0.0))
            V = r["mach"] * float(air.speed_of_sound) if r.get("mach") is not None else r.get("speed")
            if V is not None:
                found.append((f"requirement {rid}", equivalent_airspeed(V, r.get("altitude", 0.0),
                                                                      r.get("temperature_offset", 0.0))))
    for i, s in enumerate((tree.get("mission") or {}).get("segments", ())):
        if s["kind"] == "cruise" and (s.get("mach") is not None or s.get("speed") is not None):
            air = isa(s.get("altitude", 0.0), s.get("temperature_offset", 0.0))
            V = s["mach"] * float(air.speed_of_sound) if s.get("mach") is not None else s["speed"]
            found.append((f"mission segment {s.get('name') or i + 1}",
                          equivalent_airspeed(V, s.get("altitude", 0.0), s.get("temperature_offset", 0.0))))
    return max(found, key=lambda t: t[1]) if found else None


def _limit_load_factor(tree, category, m_TO):
    n_cat = float(L.limit_load_factor(category, m_TO))
    rule = "25.337(b)" if category == "transport" else "23.337(a)"
    asked = [(rid, r["load_factor"]) for rid, r in tree["requirements"].items() if "load_factor" in r]
    asked += [(f"mission segment {s.get('name') or i + 1}", s["load_factor"])
              for i, s in enumerate((tree.get("mission") or {}).get("segments", ())) if "load_factor" in s]
    top = max(asked, key=lambda t: t[1]) if asked else None
    if top is not None and top[1] > n_cat:
        return top[1], (f"{top[0]} asks {top[1]:g} g, above the {n_cat:.3f} minimum of 14 CFR {rule} "
                        f"(the rules set minima)")
    formula = {"normal": "2.1 + 24 000/(W + 10 000), at most 3.8", "transport": "2.1 + 24 000/(W + 10 000), 2.5 to 3.8"}
    return n_cat, f"14 CFR {rule}" + (f": {formula[category]}, W = {m_TO / LB:,.0f} lb"
                                      if category in formula else "")


def _design_speeds(spec, tree, ac, res, category, W_S, Y, altitude, notes):
    """(VC, VD, sources) [m/s EAS] of the sized design."""
    a = tree["aircraft"]
    given = a.get("design_speeds", {})
    src = {}
    VC_min = L.cruise_speed_minimum(W_S, category)
    fl = Flight(W_S, Y, ac, Conditions(), domain_mach(ac))
    top = fl.max_mach(0.0)[1]
    VH = top * A0 if np.isfinite(top) else math.nan
    if VC_min is not None and np.isfinite(VH) and 0.9 * VH < VC_min:
        notes.append(f"the 23.335(a)(1) minimum VC {VC_min / KN:,.1f} kn is capped at 0.9 VH = {0.9 * VH / KN:,.1f} kn "
                     f"(VH, the maximum level speed at sea level, {VH / KN:,.1f} kn; 23.335(a)(3))")
        VC_min = 0.9 * VH
    cruise = fastest_cruise(tree)
    if "cruise" in given:
        VC = given["cruise"]
        src["cruise"] = "aircraft.design_speeds.cruise"
        if VC_min is not None and VC < VC_min * (1 - 1e-9):
            notes.append(f"design_speeds.cruise {VC / KN:,.1f} kn is below the published minimum "
                         f"{VC_min / KN:,.1f} kn (14 CFR 23.335(a))")
    elif VC_min is not None:
        VC = VC_min
        src["cruise"] = f"published minimum k sqrt(W/S) at W/S {W_S / LBF_FT2:,.1f} lb/ft^2 (14 CFR 23.335(a))"
        if cruise is not None and cruise[1] > VC:
            VC, src["cruise"] = cruise[1], f"{cruise[0]} (faster than the 23.335(a) minimum {VC_min / KN:,.1f} kn)"
    elif cruise is not None:
        VC, src["cruise"] = cruise[1], f"{cruise[0]} (Part 25 gives no minimum from W/S; give design_speeds.cruise)"
    else:
        air = isa(altitude)
        top_h = fl.max_mach(altitude)[1]
        VC = equivalent_airspeed(top_h * float(air.speed_of_sound), altitude)
        src["cruise"] = "maximum level speed at the chart's altitude (25.335(a)(2) cap; no cruise requirement)"
    VD_min = L.dive_speed_minimum(VC, VC_min, W_S, category)
    rule = "25.335(b): VC <= 0.8 VD" if category == "transport" else "23.335(b): 1.25 VC and the VCmin factor"
    if "dive" in given:
        VD = given["dive"]
        src["dive"] = "aircraft.design_speeds.dive"
        if VD <= VC:
            raise InputError(f"design_speeds.dive {VD / KN:,.1f} kn is not above VC {VC / KN:,.1f} kn "
                             f"({src['cruise']})", spec.path, field="aircraft.design_speeds.dive")
        if VD < VD_min * (1 - 1e-9):
            notes.append(f"design_speeds.dive {VD / KN:,.1f} kn is below the published minimum {VD_min / KN:,.1f} kn "
                         f"({rule})")
    else:
        VD, src["dive"] = VD_min, f"published minimum ({rule})"
    air = isa(altitude)
    eas_of_mach = math.sqrt(float(air.density) / RHO0) * float(air.speed_of_sound)      # EAS [m/s] per Mach
    M_lim = ac.speed_limit_mach
    if M_lim is not None and VC > M_lim * eas_of_mach:
        margin = 0.07 if category == "transport" else 0.05
        VC, VD = M_lim * eas_of_mach, min(VD, (M_lim + margin) * eas_of_mach)
        src["cruise"] = (f"Mach-limited at this altitude: M {M_lim:g} (the speed limit; 23.335(a)(4), 25.335(a)(3))"
                         f"; {src['cruise']} above it")
        src["dive"] = f"M {M_lim + margin:.2f}: the Mach margin {margin:g} above MC (23.335(b)(4), 25.335(b)(2))"
    fly = fl.max_mach(altitude)[0]
    if np.isfinite(fly) and fly * eas_of_mach > VD * (1 + 1e-6):
        notes.append(f"the sized design flies level at up to {fly * eas_of_mach / KN:,.0f} kn EAS (M {fly:.3f}) here, "
                     f"above VD {VD / KN:,.1f} kn: it needs an operating speed limit (VMO) below VD, or a higher VD")
    return VC, VD, src


def _piecewise(V, points):
    xs, ys = zip(*points)
    return np.interp(V, xs, ys)


def compute_vn(spec, res, altitude=0.0, weight_fraction=None, samples=241) -> VnDiagram:
    """V-n chart of a solved design at a pressure altitude [m] and weight fraction (default 1)."""
    if res is None or not res.feasible or res.design is None:
        raise ValueError("the V-n chart needs a feasible design; this requirement set has none")
    B = 1.0 if weight_fraction is None else float(weight_fraction)
    if not (0.0 < B <= 2.0):
        raise InputError(f"weight fraction {weight_fraction!r} must be a number in (0, 2]", field="--weight-fraction")
    if not (-500.0 <= altitude <= 25000.0):
        raise InputError(f"altitude {altitude:g} m is outside -500 m to 25 000 m", field="--altitude")
    tree = M.spec_tree(spec)
    ac, a, d = M.aircraft(tree), tree["aircraft"], res.design
    aero, notes = a["aerodynamics"], []
    W_S, m_TO, S = float(d.wing_loading), float(d.takeoff_mass), float(d.wing_area)
    Y = float(d.power_to_weight if res.propeller else d.thrust_to_weight)
    if a.get("category"):
        category, cat_src = a["category"], "aircraft.category"
    else:
        category, why = L.default_category(ac.engine_type, ac.engines, m_TO)
        cat_src = f"not given (aircraft.category): taken as {category}, {why}"
    n_pos, n_src = _limit_load_factor(tree, category, m_TO)
    n_neg = float(L.negative_load_factor(category, n_pos))
    W_S_c, air = B * W_S, isa(altitude)
    rho = float(air.density)
    cl_max = float(ac.polar.CLmax("clean"))
    cl_min = aero.get("cl_min", CL_MIN_RATIO * cl_max)
    cl_min_src = "aerodynamics.cl_min" if "cl_min" in aero else \
        f"not given: {CL_MIN_RATIO:g} x CLmax clean (from memory, a typical cambered-wing value)"
    VS1 = math.sqrt(2.0 * W_S_c / (RHO0 * cl_max))
    VSn = math.sqrt(2.0 * W_S_c / (RHO0 * abs(cl_min)))
    VC, VD, src = _design_speeds(spec, tree, ac, res, category, W_S, Y, altitude, notes)
    VA = VS1 * math.sqrt(n_pos)
    src["stall"] = f"CLmax clean {cl_max:g} at W/S {W_S_c:,.0f} N/m^2 (the rules use CNmax; CN ~ CL here)"
    src["maneuvering"] = f"VS1 sqrt(n) ({'25.335(c)' if category == 'transport' else '23.335(c)'})"
    if category != "transport" and VA > VC:
        VA, src["maneuvering"] = VC, "VS1 sqrt(n) above VC: need not exceed VC (23.335(c)(2))"
    elif VA > VC:
        notes.append(f"VA {VA / KN:,.1f} kn is above VC {VC / KN:,.1f} kn")
    src["negative_stall"] = f"cl_min {cl_min:g}"
    speeds = {"stall": VS1, "maneuvering": VA, "rough_air": None, "cruise": VC, "dive": VD, "negative_stall": VSn}
    # gusts
    gust, chord, slope, slope_src, mu, Kg = {}, None, None, "", None, None
    A = aero.get("aspect_ratio")
    if A is None:
        notes.append("no gust lines: the mean chord needs aerodynamics.aspect_ratio (the file gives k1)")
    else:
        chord = math.sqrt(S / A)
        M_C = VC / math.sqrt(rho / RHO0) / float(air.speed_of_sound)
        if "lift_curve_slope" in aero:
            slope, slope_src = aero["lift_curve_slope"], "aerodynamics.lift_curve_slope"
        else:
            M_use = min(M_C, 0.9)
            slope = L.lift_curve_slope(A, M_use)
            slope_src = (f"Helmbold-DATCOM (Raymer Eq. 12.6), A {A:g}, unswept, eta 0.95, at M {M_use:.3f}"
                         + (" (VC's Mach capped at 0.90: the formula is subsonic)" if M_C > 0.9 else " (VC)"))
        mu = float(L.airplane_mass_ratio(W_S_c, rho, chord, slope))
        Kg = float(L.gust_alleviation_factor(mu))
        per_V = {k: float(L.gust_load_increment(W_S_c, rho, chord, slope, L.derived_gust_velocity(altitude, k), 1.0))
                 for k in ("rough-air", "cruise", "dive")}
        if category == "transport":
            K = per_V["rough-air"]
            V_cross = 0.5 * (K * VS1 ** 2 + math.sqrt(K ** 2 * VS1 ** 4 + 4.0 * VS1 ** 2))
            VB = min(V_cross, VS1 * math.sqrt(1.0 + per_V["cruise"] * VC), VC)
            speeds["rough_air"] = VB
            src["rough_air"] = ("the lesser of the CLmax line meeting the rough-air gust line and VS1 sqrt(n_g at VC), "
                                "at most VC (transport rules before Amdt 25-86; from memory)")
        for key, name in (("rough_air", "rough-air"), ("cruise", "cruise"), ("dive", "dive")):
            V = speeds[key]
            if V is not None:
                dn = per_V[name] * V
                gust[key] = {"speed": V, "velocity": L.derived_gust_velocity(altitude, name), "increment": dn,
                             "positive": 1.0 + dn, "negative": 1.0 - dn}
    # curves over speed
    corners = [v for v in speeds.values() if v is not None and v <= VD]
    Vg = np.unique(np.concatenate([np.linspace(0.0, VD, samples), corners, [VSn * math.sqrt(abs(n_neg))]]))
    Vg = Vg[Vg <= VD]
    stall_hi, stall_lo = (Vg / VS1) ** 2, -(Vg / VSn) ** 2
    m_hi = np.minimum(stall_hi, n_pos)
    m_lo = np.maximum(stall_lo, L.negative_load_factor(category, n_pos, Vg, VC, VD))
    g_hi = g_lo = None
    e_hi, e_lo = m_hi, m_lo
    if gust:
        pts = [(0.0, 0.0)] + [(g["speed"], g["increment"]) for g in gust.values()]
        inc = _piecewise(Vg, sorted(pts))
        g_hi, g_lo = 1.0 + inc, 1.0 - inc          # the gust envelope; CLmax bounds the combined one
        e_hi, e_lo = np.maximum(m_hi, np.minimum(g_hi, stall_hi)), np.minimum(m_lo, np.maximum(g_lo, stall_lo))
    return VnDiagram(title=res.title, category=category, category_source=cat_src, altitude=float(altitude),
                     weight_fraction=B, mass=B * m_TO, wing_loading=W_S_c, n_positive=float(n_pos),
                     n_positive_source=n_src, n_negative=n_neg, cl_max=cl_max, cl_min=float(cl_min),
                     cl_min_source=cl_min_src, speeds=speeds, sources=src, mean_chord=chord, lift_slope=slope,
                     lift_slope_source=slope_src, mass_ratio=mu, alleviation=Kg, gust=gust, V=Vg, maneuver_hi=m_hi,
                     maneuver_lo=m_lo, gust_hi=g_hi, gust_lo=g_lo, envelope_hi=e_hi, envelope_lo=e_lo,
                     notes=tuple(notes))

"""Mission fuel: segment weight fractions (Breguet range and endurance, fixed fractions) and the fuel fraction.

Segment weight fractions W_i/W_(i-1): ``fixed`` (historical, Raymer Table
3.2), ``cruise`` (Breguet range), ``loiter`` (Breguet endurance), ``combat``
/ ``maneuver`` (fuel burnt at the thrust of a load factor for a time,
Mattingly Eq. 3.16). Fuel fraction
m_fuel/m_TO = (1 + reserve + trapped) (1 - prod W_i/W_(i-1)),
the reserve and trapped fuel being fractions of mission fuel (Raymer Ch. 3
writes 1.06 for "6 % reserve and trapped fuel").

Fuel consumption enters weight-based: TSFC in 1/s (N of fuel per N of
thrust per s), power-specific c in 1/m (N of fuel per J). Mass-based input
(mg/(N s), lb/(hp h)) is multiplied by g0 at the unit edge.
All functions evaluate on floats, arrays and CasADi symbols.
"""
from __future__ import annotations

from ..physics import shim as m
from ..physics.airspeed import true_airspeed
from ..physics.atmosphere import isa


def breguet_cruise_fraction(range_m, V, lift_to_drag, c, propeller=False, eta_p=0.8):
    """Cruise weight fraction W1/W0 from the Breguet range equation.

    jets:  W1/W0 = exp(-R c_T / (V L/D)),  c_T [1/s] weight-based TSFC;
    props: W1/W0 = exp(-R c_P / (eta_p L/D)), c_P [1/m] weight-based PSFC.

    Examples
    --------
    Source: Raymer Ch. 3 ASW example (docs/references.md check 12.8-e): 1 500 nmi at
    596.9 ft/s, C = 0.5 1/h, L/D = 0.866 x 16 -> 0.858083.

    >>> R = 1500 * 1852.0; V = 596.9 * 0.3048
    >>> abs(float(breguet_cruise_fraction(R, V, 0.866 * 16, 0.5 / 3600)) - 0.858083) < 1e-6
    True
    """
    if propeller:
        return m.exp(-range_m * c / (eta_p * lift_to_drag))
    return m.exp(-range_m * c / (V * lift_to_drag))


def breguet_loiter_fraction(time_s, lift_to_drag, c, V=None, propeller=False, eta_p=0.8):
    """Loiter weight fraction from the Breguet endurance equation.

    jets: W1/W0 = exp(-E c_T / (L/D)); props: exp(-E c_P V / (eta_p L/D)).

    Examples
    --------
    Source: Raymer ASW example (docs/references.md check 12.8-e): 3 h loiter, C = 0.4 1/h,
    L/D = 16 -> 0.927743.

    >>> round(float(breguet_loiter_fraction(3 * 3600.0, 16.0, 0.4 / 3600)), 6)
    0.927743
    """
    if propeller:
        return m.exp(-time_s * c * V / (eta_p * lift_to_drag))
    return m.exp(-time_s * c / lift_to_drag)


def fuel_fraction_from_segments(product, reserve=0.0, trapped=0.0):
    """m_fuel/m_TO = (1 + reserve + trapped) (1 - prod W_i/W_(i-1)) (Raymer Ch. 3).

    Examples
    --------
    Source: Raymer Ch. 3, 1.06 for 6 % reserve and trapped fuel (docs/references.md §12.6, check 12.6-a),
    hand calculation: product 0.8 -> 1.06 x 0.2 = 0.212.

    >>> round(fuel_fraction_from_segments(0.8, 0.06), 6)
    0.212
    """
    return (1.0 + reserve + trapped) * (1.0 - product)


def _segment_speed(seg, air):
    """True airspeed [m/s] of a segment given by mach, speed (TAS), cas or eas."""
    for key in ("mach", "speed", "cas", "eas"):
        if seg.get(key) is not None:
            return true_airspeed(key, seg[key], air)
    return None


def segment_label(seg: dict, i: int) -> str:
    """The name a report shows for segment ``i`` (0-based): the user's name, or
    ``"segment 3 (cruise)"`` for an unnamed one.

    A label of an unnamed segment is for display only: ``weight_fraction:
    {after: ...}`` resolves against the names the user wrote
    (:func:`segment_end_fractions`), and the file format refuses a user name
    equal to another segment's label, so labels never collide.

    >>> segment_label({"kind": "cruise"}, 2), segment_label({"kind": "cruise", "name": "out"}, 2)
    ('segment 3 (cruise)', 'out')
    """
    return seg.get("name") or default_label(seg["kind"], i)


def default_label(kind: str, i: int) -> str:
    """The label of an unnamed segment ``i`` (0-based) of a kind."""
    return f"segment {i + 1} ({kind})"


def mission_fractions(tree: dict, ac, W_S):
    """Weight fraction of every mission segment at wing loading W_S.

    Returns a list of (label, W_i/W_(i-1), beta_end) with beta_end the weight
    at the end of the segment over takeoff weight and label from
    :func:`segment_label`. Each segment's L/D comes
    from the drag polar at its start weight fraction, W_S and condition.
    """
    mis = tree["mission"]
    prop = ac.engine_type in ("turboprop", "piston")
    eta = ac.propeller_efficiency
    polar = ac.polar
    beta = 1.0
    out = []
    for i, seg in enumerate(mis["segments"]):
        name = segment_label(seg, i)
        kind = seg["kind"]
        if kind == "fixed":
            f = seg["fraction"]
        else:
            c = seg.get("tsfc", mis.get("tsfc"))
            air = isa(seg.get("altitude", 0.0), seg.get("temperature_offset", 0.0))
            V = _segment_speed(seg, air)
            W_seg = beta * W_S
            if V is None:
                # best-endurance (loiter) or best-range (cruise) lift coefficient of a
                # symmetric parabolic polar: jets sqrt(CD0/k1) for loiter and
                # sqrt(CD0/(3 k1)) for cruise; props sqrt(3 CD0/k1) and sqrt(CD0/k1)
                # (Anderson, Aircraft Performance and Design, §5.13-5.14)
                CD0, k1 = polar.CD0(0.3), polar.K1(0.3)
                factor = {("loiter", False): 1.0, ("cruise", False): 1.0 / 3.0,
                          ("loiter", True): 3.0, ("cruise", True): 1.0}[(kind, prop)]
                CL = m.sqrt(factor * CD0 / k1)
                V = m.sqrt(2.0 * W_seg / (air.density * CL))
            q = 0.5 * air.density * V ** 2
            M = V / air.speed_of_sound
            n = seg.get("load_factor", 1.0)
            CL = n * W_seg / q
            CD = polar.CD(CL, M)
            LD = CL / CD * (1.0 / n)     # drag over weight = n CD/CL ... W/D
            if kind == "cruise":
                f = breguet_cruise_fraction(seg["range"], V, LD, c, prop, eta)
            elif kind == "loiter":
                f = breguet_loiter_fraction(seg["time"], LD, c, V, prop, eta)
            else:   # combat / maneuver: Mattingly Eq. 3.16 at the thrust for D at n
                f = breguet_loiter_fraction(seg["time"], LD, c, V, prop, eta)
        beta = beta * f
        out.append((name, f, beta))
    return out


def has_mission_fuel(tree: dict) -> bool:
    """True when the fuel comes from mission segments (no fixed fraction given)."""
    return bool(tree.get("mission")) and "fraction" not in tree["aircraft"]["weights"].get("fuel", {})


def segment_end_fractions(tree: dict, ac, W_S, segments=None) -> dict:
    """{segment name: W_end/W_TO} at W_S, for ``weight_fraction: {after: ...}``.

    Only the names the user wrote are keys (an unnamed segment cannot be
    referred to). Empty when the fuel is a fixed fraction. ``segments`` reuses
    an already computed :func:`mission_fractions` list.
    """
    if not has_mission_fuel(tree):
        return {}
    segments = mission_fractions(tree, ac, W_S) if segments is None else segments
    return {seg["name"]: be for seg, (_label, _f, be) in zip(tree["mission"]["segments"], segments)
            if seg.get("name")}


def fuel_fraction(tree: dict, ac, W_S, segments=None):
    """m_fuel/m_TO: the fixed fraction, or from the mission segments.

    ``segments`` reuses an already computed :func:`mission_fractions` list.
    """
    fuel = tree["aircraft"]["weights"].get("fuel", {})
    if "fraction" in fuel:
        return fuel["fraction"] + 0.0 * W_S
    mis = tree["mission"]
    segs = mission_fractions(tree, ac, W_S) if segments is None else segments
    return fuel_fraction_from_segments(segs[-1][2], mis.get("reserve", 0.0), mis.get("trapped", 0.0))

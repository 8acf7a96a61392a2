"""Drag polar and lift limits.

CD = CD0(M) + k1(M) CL^2 + k2 CL, with CD0 and k1 each a constant or a
table over Mach, interpolated monotone piecewise-cubic (PCHIP: monotone
between breakpoints and continuously differentiable, so an optimizer can
move a free Mach across a breakpoint; held flat outside, and requirement
checks refuse Mach numbers above the table). CLmax per configuration
(clean, takeoff, landing).

All functions are pure SI and evaluate on floats, arrays and CasADi symbols.

References
----------
.. [1] Anderson, J. D., *Aircraft Performance and Design*, McGraw-Hill, 1999,
   Ch. 2 and 5 (drag polar, minimum-drag conditions).
.. [2] Raymer, D. P., *Aircraft Design: A Conceptual Approach*, AIAA,
   Eq. 12.48 (straight-wing Oswald efficiency estimate).
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field

from . import shim as m


@dataclass(frozen=True)
class MachTable:
    """A coefficient tabulated over Mach number (strictly increasing Mach, numeric values)."""

    mach: tuple
    values: tuple

    def __post_init__(self):
        object.__setattr__(self, "_slopes", m.pchip_slopes(self.mach, self.values))

    def __call__(self, M):
        return m.monotone_cubic(M, self.mach, self.values, self._slopes)

    @property
    def mach_max(self) -> float:
        return float(self.mach[-1])


def coefficient(c, M):
    """Evaluate a coefficient that is a constant or a :class:`MachTable`."""
    if isinstance(c, MachTable):
        return c(M)
    return c + 0.0 * M


def induced_drag_factor(aspect_ratio, oswald_efficiency):
    """Induced-drag factor k1 = 1/(pi A e) [-].

    Examples
    --------
    Source: docs/references.md check 3.1-a (A = 8, e = 0.8 -> K = 0.0497359).

    >>> round(induced_drag_factor(8.0, 0.8), 7)
    0.0497359
    """
    return 1.0 / (math.pi * aspect_ratio * oswald_efficiency)


def oswald_efficiency_straight_wing(aspect_ratio):
    """Oswald span efficiency estimate for a straight wing [-].

    e = 1.78 (1 - 0.045 A^0.68) - 0.64

    Notes
    -----
    A statistical fit for unswept wings (leading-edge sweep below about 30
    deg), aspect ratios of roughly 4 to 15.

    Examples
    --------
    Source: Raymer Eq. 12.48, computed in docs/references.md check 3.2-a: e(4) = 0.934395.

    >>> round(oswald_efficiency_straight_wing(4.0), 6)
    0.934395

    References
    ----------
    Raymer, D. P., *Aircraft Design: A Conceptual Approach*, AIAA, 4th-6th
    eds., Eq. 12.48.
    """
    return 1.78 * (1.0 - 0.045 * aspect_ratio ** 0.68) - 0.64


@dataclass(frozen=True)
class DragPolar:
    """CD = CD0(M) + dCD0(config) + k1(M) CL^2 + k2 CL, and CLmax per config.

    Parameters
    ----------
    cd0 : float or MachTable
        Zero-lift drag coefficient [-].
    k1 : float or MachTable
        Induced-drag factor [-].
    k2 : float
        Linear polar term [-] (0 for an uncambered polar).
    cl_max : dict
        Maximum lift coefficient per configuration: ``clean``, ``takeoff``,
        ``landing`` [-].
    drag_increment : dict
        Extra zero-lift drag per configuration (flaps, gear) [-].
    """

    cd0: object
    k1: object
    k2: object = 0.0
    cl_max: dict = field(default_factory=lambda: {"clean": 1.2})
    drag_increment: dict = field(default_factory=dict)

    def CD0(self, M, config="clean"):
        """Zero-lift drag coefficient including the configuration increment."""
        return coefficient(self.cd0, M) + self.drag_increment.get(config, 0.0)

    def K1(self, M):
        return coefficient(self.k1, M)

    def CD(self, CL, M, config="clean"):
        """Drag coefficient at lift coefficient CL and Mach M [-]."""
        return self.CD0(M, config) + self.K1(M) * CL ** 2 + self.k2 * CL

    def CLmax(self, config="clean"):
        return self.cl_max[config]

    @property
    def mach_max(self) -> float:
        """Highest Mach the tables cover (inf for constant coefficients)."""
        tops = [c.mach_max for c in (self.cd0, self.k1) if isinstance(c, MachTable)]
        return min(tops) if tops else math.inf


def max_lift_to_drag(CD0, k1):
    """(L/D)max = 1 / (2 sqrt(CD0 k1)) for a symmetric parabolic polar [-].

    Examples
    --------
    Source: Anderson *Introduction to Flight* Ch. 6 (docs/references.md check 3.3-c) light
    piston example: A = 7.3657, CD0 = 0.025, e = 0.8 -> (L/D)max = 13.606.

    >>> round(float(max_lift_to_drag(0.025, induced_drag_factor(7.3657, 0.8))), 3)
    13.606
    """
    return 1.0 / (2.0 * m.sqrt(CD0 * k1))


def minimum_drag_speed(W_S, rho, CD0, k1):
    """Speed for minimum drag, V = sqrt(2 (W/S)/rho) (k1/CD0)^(1/4) [m/s].

    Examples
    --------
    Source: docs/references.md check 3.3-b: CD0 0.025, A 8, e 0.8, sea level, W/S 1 500
    N/m^2 -> V_md = 58.7727 m/s.

    >>> round(float(minimum_drag_speed(1500.0, 1.225, 0.025, induced_drag_factor(8, 0.8))), 3)
    58.773
    """
    return m.sqrt(2.0 * W_S / rho) * m.power(k1 / CD0, 0.25)


def stall_speed(W_S, rho, CLmax, n=1.0):
    """Stall speed V_s = sqrt(2 n (W/S) / (rho CLmax)) [m/s].

    Examples
    --------
    Source: 14 CFR 23.49(c) 61 kt case, inverse check (docs/references.md check 3.4-a):
    W/S 1 206.35 N/m^2, sea level, CLmax 2.0 -> 31.381 m/s (61.0 kt).

    >>> round(float(stall_speed(1206.35, 1.225, 2.0)), 3)
    31.381
    """
    return m.sqrt(2.0 * n * W_S / (rho * CLmax))

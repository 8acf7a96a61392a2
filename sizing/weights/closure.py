"""The weight closure (Raymer Ch. 3).

m_TO = (m_crew + m_payload) / (1 - m_fuel/m_TO - m_empty/m_TO), solved inside
the optimizer as m_TO (1 - f_fuel - f_empty) = m_crew + m_payload.
"""
from __future__ import annotations


def closure_mass(fixed_mass, fuel_frac, empty_frac):
    """m_TO = (m_crew + m_payload) / (1 - fuel fraction - empty fraction) [kg].

    Examples
    --------
    Source: Raymer Ch. 3 ASW example, fixed point (docs/references.md check 13.2-a):
    10 800 lb fixed, Wf/W0 0.387, We/W0 = 0.93 W0^-0.07 -> W0 = 59 305 lb
    (solved in the tests by iteration); here one step with We/W0 0.43089.

    >>> round(closure_mass(10800.0, 0.387, 0.43089))
    59305
    """
    return fixed_mass / (1.0 - fuel_frac - empty_frac)

"""U.S. Standard Atmosphere 1976 (identical to the ICAO standard below 32 km).

Altitude here is always **geopotential (pressure) altitude** H in metres, as
aviation pressure altitude is. Hot and cold days are modelled by a
temperature offset at constant pressure: the pressure at a pressure altitude
is the standard one, the temperature is raised by the offset and density and
speed of sound follow from the gas law.

The layer formulation is branch-free (each layer's share of the altitude is
clipped to the layer), so :func:`isa` evaluates on floats, numpy arrays and
CasADi symbols alike.

References
----------
.. [1] U.S. Standard Atmosphere, 1976. NOAA/NASA/USAF, NOAA-S/T 76-1562,
   Part 1, Tables 3 and 4 (defining constants and layer lapse rates).
"""
from __future__ import annotations

from dataclasses import dataclass
from functools import lru_cache

import numpy as np

from . import shim as m

g0 = 9.80665            # standard gravity [m/s^2]
R_STAR = 8.31432        # universal gas constant, 1976 value [J/(mol K)]
M0 = 28.9644e-3         # sea-level molar mass of air [kg/mol]
R_AIR = R_STAR / M0     # specific gas constant [J/(kg K)]
GAMMA = 1.4             # ratio of specific heats [-]
T0 = 288.15             # sea-level temperature [K]
P0 = 101325.0           # sea-level pressure [Pa]
RHO0 = P0 / (R_AIR * T0)  # sea-level density [kg/m^3]
A0 = float(np.sqrt(GAMMA * R_AIR * T0))  # sea-level speed of sound [m/s]

# Layer base geopotential altitude [m] and lapse rate dT/dH [K/m]; the last
# entry is the top of the model (86 km geometric).
_LAYERS = (
    (0.0, -6.5e-3),
    (11000.0, 0.0),
    (20000.0, 1.0e-3),
    (32000.0, 2.8e-3),
    (47000.0, 0.0),
    (51000.0, -2.8e-3),
    (71000.0, -2.0e-3),
)
H_MIN = -5000.0   # lowest tabulated altitude of the 1976 standard [m]
H_MAX = 84852.0   # top of the model, 86 km geometric [m]


def _base_values():
    """Temperature and pressure at each layer base (computed once)."""
    Tb, pb = [T0], [P0]
    for i in range(len(_LAYERS) - 1):
        H_b, L = _LAYERS[i]
        dH = _LAYERS[i + 1][0] - H_b
        T_top = Tb[-1] + L * dH
        if L == 0.0:
            p_top = pb[-1] * np.exp(-g0 * dH / (R_AIR * Tb[-1]))
        else:
            p_top = pb[-1] * (Tb[-1] / T_top) ** (g0 / (R_AIR * L))
        Tb.append(T_top)
        pb.append(p_top)
    return tuple(Tb), tuple(pb)


_T_BASE, _P_BASE = _base_values()


@dataclass(frozen=True)
class Atmosphere:
    """State of the air at one (or many) altitudes.

    Attributes
    ----------
    temperature : [K]
    pressure : [Pa]
    density : [kg/m^3]
    speed_of_sound : [m/s]
    """

    temperature: object
    pressure: object
    density: object
    speed_of_sound: object

    @property
    def theta(self):
        """Temperature ratio T/T0 [-]."""
        return self.temperature / T0

    @property
    def delta(self):
        """Pressure ratio p/p0 [-]."""
        return self.pressure / P0

    @property
    def sigma(self):
        """Density ratio rho/rho0 [-]."""
        return self.density / RHO0


def _check_range(altitude_m) -> None:
    if m.is_symbolic(altitude_m):
        return
    h = np.asarray(altitude_m, dtype=float)
    bad = ~((h >= H_MIN) & (h <= H_MAX))   # NaN-safe
    if np.any(bad):
        value = h[bad].flat[0] if h.ndim else float(h)
        raise ValueError(
            f"altitude {value:g} m is outside the standard atmosphere model "
            f"({H_MIN:g} m to {H_MAX:g} m geopotential)"
        )


def standard_temperature_pressure(altitude_m):
    """Standard-day temperature [K] and pressure [Pa] at geopotential altitude.

    Gradient layers: p = p_b (T_b/T)^(g0/(R L)); isothermal layers:
    p = p_b exp(-g0 (H - H_b)/(R T_b)).
    Below the first base the first layer's gradient is continued (the 1976
    standard tabulates down to -5 km with the same lapse rate).
    """
    H = altitude_m
    T = T0 + 0.0 * H
    ratio = 1.0 + 0.0 * H
    for i, (H_b, L) in enumerate(_LAYERS):
        H_top = _LAYERS[i + 1][0] if i + 1 < len(_LAYERS) else H_MAX
        lo = -1.0e5 if i == 0 else H_b     # first layer extends downwards
        dH = m.clip(H, lo, H_top) - H_b
        T_b = _T_BASE[i]
        if L == 0.0:
            ratio = ratio * m.exp(-g0 * dH / (R_AIR * T_b))
        else:
            T_i = T_b + L * dH
            ratio = ratio * m.power(T_b / T_i, g0 / (R_AIR * L))
        T = T + L * dH
    return T, P0 * ratio


def isa(altitude_m, temperature_offset_K=0.0) -> Atmosphere:
    """Standard atmosphere at a pressure altitude, with a temperature offset.

    rho = p / (R T),  a = sqrt(gamma R T), with T = T_std(H) + dT and
    p = p_std(H) (offset at constant pressure).

    Parameters
    ----------
    altitude_m : float, array or CasADi symbol
        Geopotential (pressure) altitude [m], -5 000 to 84 852 m.
    temperature_offset_K : float, array or symbol
        Temperature above standard [K] (ISA + dT).

    Returns
    -------
    Atmosphere
        temperature [K], pressure [Pa], density [kg/m^3], speed_of_sound [m/s].

    Raises
    ------
    ValueError
        If a numeric altitude lies outside the model (NaN included).

    Examples
    --------
    Source: U.S. Standard Atmosphere 1976, tropopause at H = 11 000 m
    (docs/references.md check 2.5-a): T = 216.650 K, p = 22 632.06 Pa, rho = 0.363918.

    >>> air = isa(11000.0)
    >>> round(float(air.temperature), 3), round(float(air.pressure), 1)
    (216.65, 22632.1)
    >>> round(float(air.density), 6)
    0.363918

    References
    ----------
    U.S. Standard Atmosphere, 1976, NOAA-S/T 76-1562, Part 1.
    """
    if type(temperature_offset_K) in _SCALARS:
        if type(altitude_m) in _SCALARS:
            return _isa_scalar(altitude_m, temperature_offset_K)
        if type(altitude_m) is np.ndarray and altitude_m.size <= _ARRAY_CACHE_SIZE:
            return _isa_array(altitude_m, temperature_offset_K)
    if m.is_scalar_sx(altitude_m, temperature_offset_K):
        return Atmosphere(*m.inline(_isa_formula, 2, 4)(altitude_m, temperature_offset_K))
    return _isa(altitude_m, temperature_offset_K)


def _isa_formula(altitude_m, temperature_offset_K):
    air = _isa(altitude_m, temperature_offset_K)
    return air.temperature, air.pressure, air.density, air.speed_of_sound


_SCALARS = frozenset({float, int, np.float64})
_ARRAY_CACHE_SIZE = 4096       # arrays up to this many altitudes are remembered too
_ARRAYS: dict = {}


@lru_cache(maxsize=4096)
def _isa_scalar(altitude_m, temperature_offset_K):
    """:func:`isa` at one numeric altitude, remembered: the same few altitudes are asked for
    many times in a solve (the result is immutable, errors are not remembered)."""
    return _isa(altitude_m, temperature_offset_K)


def _isa_array(altitude_m, temperature_offset_K):
    """:func:`isa` on a small array, remembered by its bytes (a search evaluates the same
    altitudes again and again); the remembered arrays are read-only."""
    key = (altitude_m.dtype.str, altitude_m.shape, altitude_m.tobytes(), float(temperature_offset_K))
    air = _ARRAYS.get(key)
    if air is None:
        air = _isa(altitude_m, temperature_offset_K)
        for v in (air.temperature, air.pressure, air.density, air.speed_of_sound):
            if isinstance(v, np.ndarray):
                v.flags.writeable = False
        if len(_ARRAYS) >= 64:
            _ARRAYS.pop(next(iter(_ARRAYS)))
        _ARRAYS[key] = air
    return air


def _isa(altitude_m, temperature_offset_K):
    _check_range(altitude_m)
    T_std, p = standard_temperature_pressure(altitude_m)
    T = T_std + temperature_offset_K
    if not m.is_symbolic(T):
        if np.any(~(np.asarray(T) > 0)):
            raise ValueError(f"temperature offset {temperature_offset_K} K gives a non-positive temperature")
    rho = p / (R_AIR * T)
    a = m.sqrt(GAMMA * R_AIR * T)
    return Atmosphere(T, p, rho, a)

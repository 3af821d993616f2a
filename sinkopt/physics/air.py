"""Dry-air properties versus temperature and pressure, and the U.S. Standard Atmosphere 1976.

Every function takes numpy arrays (or scalars) in SI units and broadcasts; a scalar in gives a
numpy scalar out. Humidity is ignored: at 50 % RH and 25 °C it raises c_p by about 0.9 %
(CoolProp HAPropsSI, docs/theory.md#air-properties), well inside the uncertainty of the heat-transfer correlations.
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

__all__ = [
    "GAS_CONSTANT_AIR",
    "AirProperties",
    "air_density_ideal_gas",
    "air_viscosity_sutherland",
    "air_conductivity_sutherland",
    "air_heat_capacity",
    "air_properties",
    "pressure_standard_atmosphere_1976",
]

#: Specific gas constant of dry air [J/(kg K)], R*/M with the 1976 standard's M0 = 28.9644 g/mol.
GAS_CONSTANT_AIR = 287.05

# U.S. Standard Atmosphere 1976 constants (NOAA/NASA/USAF, 1976, Tables 1-4).
_R_STAR = 8.31432  # [J/(mol K)] universal gas constant as defined by the 1976 standard
_M0 = 28.9644e-3  # [kg/mol] sea-level mean molar mass of air
_G0 = 9.80665  # [m/s^2] standard gravity
_R_EARTH = 6356766.0  # [m] effective earth radius used for geopotential altitude
# Layer bases: geopotential altitude [m], molecular-scale temperature gradient [K/m]
_LAYER_H = np.array([0.0, 11000.0, 20000.0, 32000.0, 47000.0, 51000.0, 71000.0])
_LAYER_LAPSE = np.array([-6.5e-3, 0.0, 1.0e-3, 2.8e-3, 0.0, -2.8e-3, -2.0e-3])


def _layer_base_values():
    t_base = [288.15]
    p_base = [101325.0]
    for i in range(len(_LAYER_H) - 1):
        dh = _LAYER_H[i + 1] - _LAYER_H[i]
        t0, p0, lapse = t_base[-1], p_base[-1], _LAYER_LAPSE[i]
        t1 = t0 + lapse * dh
        if lapse == 0.0:
            p1 = p0 * np.exp(-_G0 * _M0 * dh / (_R_STAR * t0))
        else:
            p1 = p0 * (t0 / t1) ** (_G0 * _M0 / (_R_STAR * lapse))
        t_base.append(t1)
        p_base.append(p1)
    return np.array(t_base), np.array(p_base)


_LAYER_T, _LAYER_P = _layer_base_values()


class AirProperties(NamedTuple):
    """Air properties at one state (arrays broadcast together)."""

    density: np.ndarray  #: [kg/m^3]
    viscosity: np.ndarray  #: dynamic viscosity [Pa s]
    conductivity: np.ndarray  #: thermal conductivity [W/(m K)]
    heat_capacity: np.ndarray  #: isobaric specific heat [J/(kg K)]
    temperature: np.ndarray  #: [K]
    pressure: np.ndarray  #: [Pa]

    @property
    def prandtl(self) -> np.ndarray:
        """Prandtl number [-]."""
        return self.heat_capacity * self.viscosity / self.conductivity

    @property
    def kinematic_viscosity(self) -> np.ndarray:
        """Kinematic viscosity [m^2/s]."""
        return self.viscosity / self.density


def pressure_standard_atmosphere_1976(altitude):
    r"""Static pressure of the U.S. Standard Atmosphere 1976.

    .. math:: P = P_b \left(\frac{T_b}{T_b + L_b (H - H_b)}\right)^{g_0 M_0 / (R^* L_b)}
       \quad\text{or}\quad P_b \exp\!\left(-\frac{g_0 M_0 (H - H_b)}{R^* T_b}\right) \; (L_b = 0)

    Parameters
    ----------
    altitude : array_like
        Geometric altitude above mean sea level [m], -610 to 86 000.

    Returns
    -------
    numpy.ndarray
        Pressure [Pa].

    Notes
    -----
    Geometric altitude Z is converted to geopotential altitude H = r0 Z / (r0 + Z). The standard's
    own temperature is used only for the pressure; sinkopt takes the air temperature from the
    study's (worst-case) ambient, as docs/theory.md#air-properties recommends.

    References
    ----------
    U.S. Standard Atmosphere, 1976. NOAA, NASA, USAF, Washington D.C., 1976.

    Examples
    --------
    Matches ``fluids.atmosphere.ATMOSPHERE_1976(3000).P`` = 70121.162 Pa (docs/theory.md#air-properties):

    >>> round(float(pressure_standard_atmosphere_1976(3000.0)), 2)
    70121.16
    """
    z = np.asarray(altitude, dtype=float)
    h = _R_EARTH * z / (_R_EARTH + z)
    i = np.clip(np.searchsorted(_LAYER_H, h, side="right") - 1, 0, len(_LAYER_H) - 1)
    tb, pb, lapse, hb = _LAYER_T[i], _LAYER_P[i], _LAYER_LAPSE[i], _LAYER_H[i]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = tb + lapse * (h - hb)
        gradient = pb * (tb / t) ** (_G0 * _M0 / (_R_STAR * np.where(lapse == 0.0, 1.0, lapse)))
    isothermal = pb * np.exp(-_G0 * _M0 * (h - hb) / (_R_STAR * tb))
    return np.where(lapse == 0.0, isothermal, gradient)[()]


def air_density_ideal_gas(temperature, pressure):
    r"""Density of dry air as an ideal gas, :math:`\rho = P / (R T)`.

    Parameters
    ----------
    temperature : array_like
        Temperature [K].
    pressure : array_like
        Absolute pressure [Pa].

    Returns
    -------
    numpy.ndarray
        Density [kg/m^3].

    Notes
    -----
    Within 0.06 % of the Lemmon et al. (2000) equation of state (CoolProp) for 0–80 °C at 1 atm
    (docs/theory.md#air-properties).

    Examples
    --------
    CoolProp gives 1.184318 kg/m^3 at 25 °C, 101325 Pa:

    >>> round(float(air_density_ideal_gas(298.15, 101325.0)), 4)
    1.1839
    """
    return (np.asarray(pressure, dtype=float) / (GAS_CONSTANT_AIR * np.asarray(temperature, dtype=float)))[()]


def air_viscosity_sutherland(temperature):
    r"""Dynamic viscosity of air from Sutherland's law.

    .. math:: \mu = \mu_0 (T/T_0)^{3/2} (T_0 + S)/(T + S), \quad
       \mu_0 = 1.716\times10^{-5}\,\mathrm{Pa\,s},\ T_0 = 273.15\,\mathrm{K},\ S = 110.4\,\mathrm{K}

    Parameters
    ----------
    temperature : array_like
        Temperature [K], valid about 170–1900 K (pressure independent at these densities).

    Returns
    -------
    numpy.ndarray
        Dynamic viscosity [Pa s].

    References
    ----------
    Sutherland, W., Phil. Mag. 36:507–531, 1893; constants as in White, *Viscous Fluid Flow*,
    Table 1-2 (from memory). Measured −0.34…−0.65 % against CoolProp over 0–80 °C (docs/theory.md#air-properties).

    Examples
    --------
    CoolProp gives 1.844808e-5 Pa s at 25 °C:

    >>> round(float(air_viscosity_sutherland(298.15)), 9)
    1.8e-05
    """
    t = np.asarray(temperature, dtype=float)
    return (1.716e-5 * (t / 273.15) ** 1.5 * (273.15 + 110.4) / (t + 110.4))[()]


def air_conductivity_sutherland(temperature):
    r"""Thermal conductivity of air from a Sutherland-type law.

    .. math:: k = k_0 (T/T_0)^{3/2} (T_0 + S_k)/(T + S_k), \quad
       k_0 = 0.0241\,\mathrm{W/(m\,K)},\ T_0 = 273.15\,\mathrm{K},\ S_k = 194\,\mathrm{K}

    Parameters
    ----------
    temperature : array_like
        Temperature [K], valid about 170–1000 K.

    Returns
    -------
    numpy.ndarray
        Thermal conductivity [W/(m K)].

    References
    ----------
    White, *Viscous Fluid Flow*, Table 1-3 (from memory). Measured −1.1…+0.1 % against CoolProp
    over 0–80 °C (docs/theory.md#air-properties).

    Examples
    --------
    CoolProp gives 0.026247 W/(m K) at 25 °C:

    >>> round(float(air_conductivity_sutherland(298.15)), 4)
    0.0262
    """
    t = np.asarray(temperature, dtype=float)
    return (0.0241 * (t / 273.15) ** 1.5 * (273.15 + 194.0) / (t + 194.0))[()]


def air_heat_capacity(temperature):
    """Isobaric specific heat of dry air [J/(kg K)], taken constant.

    Parameters
    ----------
    temperature : array_like
        Temperature [K]; within ±0.2 % of CoolProp over 0–80 °C.

    Returns
    -------
    numpy.ndarray
        1006 J/(kg K), broadcast to the input's shape.

    Examples
    --------
    >>> float(air_heat_capacity(298.15))
    1006.0
    """
    return np.full_like(np.asarray(temperature, dtype=float), 1006.0)[()]


def air_properties(temperature, pressure) -> AirProperties:
    """All air properties at (temperature [K], pressure [Pa]) with the in-tool models above.

    Examples
    --------
    >>> air = air_properties(298.15, 101325.0)
    >>> round(float(air.prandtl), 3)
    0.708
    """
    t = np.asarray(temperature, dtype=float)
    p = np.asarray(pressure, dtype=float)
    return AirProperties(
        density=air_density_ideal_gas(t, p),
        viscosity=air_viscosity_sutherland(t),
        conductivity=air_conductivity_sutherland(t),
        heat_capacity=air_heat_capacity(t),
        temperature=t[()],
        pressure=np.broadcast_to(p, np.broadcast_shapes(t.shape, p.shape))[()],
    )

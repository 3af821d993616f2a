"""Straight rectangular fins: fin parameter, fin efficiency, overall surface efficiency."""
from __future__ import annotations

import numpy as np

__all__ = [
    "fin_parameter",
    "fin_efficiency_straight_rectangular",
    "corrected_fin_length",
    "surface_efficiency",
]


def fin_parameter(h, conductivity, fin_thickness):
    r"""Fin parameter of a thin straight fin, :math:`m = \sqrt{2h/(k t)}` [1/m].

    Parameters
    ----------
    h : array_like
        Heat transfer coefficient on the fin faces [W/(m^2 K)].
    conductivity : array_like
        Fin material conductivity [W/(m K)].
    fin_thickness : array_like
        Fin thickness t [m]; the perimeter is taken as twice the fin length (t ≪ fin length).

    Examples
    --------
    docs/theory.md#fin-efficiency: h = 50, k = 200, t = 1 mm gives m = 22.36068 1/m.

    >>> round(float(fin_parameter(50.0, 200.0, 0.001)), 5)
    22.36068
    """
    h, k, t = (np.asarray(x, dtype=float) for x in (h, conductivity, fin_thickness))
    return np.sqrt(2.0 * h / (k * t))[()]


def corrected_fin_length(fin_height, fin_thickness):
    """Corrected fin length L_c = H + t/2 that accounts for a convecting tip [m].

    The textbook notes the error is negligible when (h t / k)^(1/2) ≤ 0.0625 (Bergman et al.,
    *Fundamentals of Heat and Mass Transfer*, 7th ed., 2011, §3.6.4; from memory).
    """
    return (np.asarray(fin_height, dtype=float) + 0.5 * np.asarray(fin_thickness, dtype=float))[()]


def fin_efficiency_straight_rectangular(m_length):
    r"""Efficiency of a straight fin of uniform section with an adiabatic tip,
    :math:`\eta_f = \tanh(mL)/(mL)`.

    Parameters
    ----------
    m_length : array_like
        Product m·L [-] of the fin parameter and the fin length (use the corrected length
        :func:`corrected_fin_length` for a convecting tip).

    Returns
    -------
    numpy.ndarray
        Fin efficiency η_f in (0, 1] [-]; 1 at mL = 0.

    References
    ----------
    Bergman, Lavine, Incropera & DeWitt, *Fundamentals of Heat and Mass Transfer*, 7th ed.,
    Wiley, 2011, Table 3.4 (from memory).

    Examples
    --------
    docs/theory.md#fin-efficiency: mH = 0.559017 gives 0.9073923 (the straight-fin limit of
    ``ht.fin_efficiency_Kern_Kraus``):

    >>> round(float(fin_efficiency_straight_rectangular(22.36068 * 0.025)), 7)
    0.9073923
    """
    x = np.asarray(m_length, dtype=float)
    safe = np.where(x > 1e-12, x, 1.0)
    return np.where(x > 1e-12, np.tanh(safe) / safe, 1.0)[()]


def surface_efficiency(fin_efficiency, fin_area_total, total_area):
    r"""Overall surface efficiency of a finned array, :math:`\eta_o = 1 - (N A_f/A_t)(1 - \eta_f)`.

    Parameters
    ----------
    fin_efficiency : array_like
        η_f [-].
    fin_area_total : array_like
        Wetted area of all fins, N A_f [m^2].
    total_area : array_like
        Fin area plus exposed base area, A_t [m^2].

    Examples
    --------
    >>> round(float(surface_efficiency(0.9, 2.5e-3, 4.0e-3)), 6)
    0.9375
    """
    eta, af, at = (np.asarray(x, dtype=float) for x in (fin_efficiency, fin_area_total, total_area))
    return (1.0 - af / at * (1.0 - eta))[()]

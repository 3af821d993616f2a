"""Pressure drop of a shrouded plate-fin heatsink: developing-flow apparent friction in the fin
channels plus entrance-contraction and exit-expansion losses.

.. math:: \\Delta p = \\left(K_c + 4 f_{app} \\frac{L}{D_h} + K_e\\right)\\frac{\\rho V^2}{2}

with V the mean channel velocity and f_app a Fanning factor (Kays & London convention: the
reversible (1 − σ²) terms at inlet and outlet cancel for constant density).
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "EXIT_LOSS_MODELS",
    "friction_apparent_developing_muzychka_yovanovich_2009",
    "friction_fanning_turbulent_smooth",
    "contraction_loss_culham_muzychka_2001",
    "expansion_loss_culham_muzychka_2001",
    "expansion_loss_borda_carnot",
    "pressure_drop_from_loss",
]


def friction_apparent_developing_muzychka_yovanovich_2009(l_plus, fre):
    r"""Apparent Fanning friction factor times Re for laminar developing duct flow.

    .. math:: f_{app} Re = \left[\left(\frac{3.44}{\sqrt{L^+}}\right)^2 + (fRe)^2\right]^{1/2},
       \quad L^+ = \frac{L}{\ell\,Re_\ell}

    Parameters
    ----------
    l_plus : array_like
        Dimensionless hydrodynamic length L⁺ = L/(ℓ Re_ℓ) [-], with the same length scale ℓ as
        ``fre`` (here the hydraulic diameter).
    fre : array_like
        Fully developed Fanning f·Re on that length scale [-].

    Returns
    -------
    numpy.ndarray
        f_app·Re_ℓ (Fanning) [-].

    Notes
    -----
    An asymptotic composite of the short-duct (boundary-layer, 3.44/√L⁺) and fully developed
    limits; it differs from Shah's (1978) parallel-plate fit by at most 6.5 % (docs/theory.md#developing-flow-apparent-friction).
    sinkopt uses it because it is the form of the published plate-fin method (Culham &
    Muzychka 2001) and is smooth for every geometry.

    References
    ----------
    Muzychka, Y. S., Yovanovich, M. M., J. Fluids Eng. 131:111105, 2009 (from memory);
    Culham, J. R., Muzychka, Y. S., IEEE Trans. Comp. Packag. Technol. 24(2):159–165, 2001.

    Examples
    --------
    REF-1 (docs/theory.md#ref-1-golden-case): L* = 0.011715, fRe = 22.12210 gives f_app = 0.028652 at
    Re_Dh = 1351.524:

    >>> round(float(friction_apparent_developing_muzychka_yovanovich_2009(0.011715, 22.12210)) / 1351.524, 6)
    0.028652
    """
    lp = np.asarray(l_plus, dtype=float)
    fre = np.asarray(fre, dtype=float)
    return np.sqrt(3.44**2 / lp + fre**2)[()]


def friction_fanning_turbulent_smooth(reynolds):
    """Fanning friction factor of a smooth duct in turbulent flow (Petukhov 1970, Darcy/4).

    Parameters
    ----------
    reynolds : array_like
        Re_Dh [-], valid 3000 to 5e6.

    Examples
    --------
    >>> round(float(friction_fanning_turbulent_smooth(1e4)) * 4, 7)
    0.0314798
    """
    re = np.asarray(reynolds, dtype=float)
    return (0.25 * (0.790 * np.log(re) - 1.64) ** -2)[()]


def contraction_loss_culham_muzychka_2001(open_area_ratio):
    r"""Entrance contraction loss coefficient of a fin array, :math:`K_c = 0.42(1 - σ^2)`.

    Parameters
    ----------
    open_area_ratio : array_like
        σ = 1 − N t / W [-].

    Returns
    -------
    numpy.ndarray
        K_c [-], referred to the channel velocity.

    References
    ----------
    Culham & Muzychka (2001); repeated by Simons, Electronics Cooling, May 2003.

    Examples
    --------
    >>> round(float(contraction_loss_culham_muzychka_2001(0.6)), 4)
    0.2688
    """
    s = np.asarray(open_area_ratio, dtype=float)
    return (0.42 * (1.0 - s * s))[()]


def expansion_loss_culham_muzychka_2001(open_area_ratio):
    r"""Exit expansion loss coefficient of a fin array, :math:`K_e = (1 - σ^2)^2`.

    The published plate-fin form; larger than the Borda–Carnot (1 − σ)² and so conservative.
    sinkopt's default (docs/theory.md#heat-sink-pressure-drop).

    Examples
    --------
    >>> round(float(expansion_loss_culham_muzychka_2001(0.6)), 4)
    0.4096
    """
    s = np.asarray(open_area_ratio, dtype=float)
    return ((1.0 - s * s) ** 2)[()]


def expansion_loss_borda_carnot(open_area_ratio):
    r"""Sudden-expansion (Borda–Carnot) loss coefficient, :math:`K_e = (1 - σ)^2`.

    Referred to the upstream (channel) velocity. Same as
    ``fluids.fittings.diffuser_sharp(Di1=sqrt(σ), Di2=1)``.

    Examples
    --------
    >>> round(float(expansion_loss_borda_carnot(0.6)), 4)
    0.16
    """
    s = np.asarray(open_area_ratio, dtype=float)
    return ((1.0 - s) ** 2)[()]


#: Named exit-loss models; the first is the default.
EXIT_LOSS_MODELS = {
    "culham_muzychka": expansion_loss_culham_muzychka_2001,
    "borda_carnot": expansion_loss_borda_carnot,
}


def pressure_drop_from_loss(loss_coefficient, density, velocity):
    r"""Static pressure drop of a total loss coefficient, :math:`Δp = K ρ V^2 / 2` [Pa].

    Examples
    --------
    ``fluids.core.dP_from_K(K=2.5, rho=1.1843, V=5.0)`` = 37.009375:

    >>> round(float(pressure_drop_from_loss(2.5, 1.1843, 5.0)), 6)
    37.009375
    """
    k, rho, v = (np.asarray(x, dtype=float) for x in (loss_coefficient, density, velocity))
    return (0.5 * k * rho * v * v)[()]

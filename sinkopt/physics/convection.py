"""Forced-convection correlations for the channels between plate fins.

One function per published correlation; dimensionless inputs where the source uses them.
Friction factors here are **Fanning** (f_D = 4 f) unless the name says Darcy: the plate-fin papers
use Fanning, the fluids/ht libraries Darcy (docs/theory.md#symbols-and-units).
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "fre_rectangular_duct_shah_london_1978",
    "nu_t_rectangular_duct_shah_london_1978",
    "nu_h1_rectangular_duct_shah_london_1978",
    "fre_sqrt_area_rectangular_duct_muzychka_yovanovich_2009",
    "nu_plate_fin_teertstra_2000",
    "nu_sqrt_area_developing_muzychka_yovanovich_2004",
    "friction_darcy_smooth_petukhov_1970",
    "nu_turbulent_gnielinski_1976",
    "effectiveness_isothermal_wall",
    "transition_weight",
    "RE_TRANSITION_START",
    "RE_TRANSITION_END",
]

#: Hydraulic-diameter Reynolds numbers between which laminar and turbulent results are blended.
#: 2300 is the conventional end of laminar duct flow and the lower limit of Gnielinski's
#: correlation; by 4000 duct flow is normally fully turbulent (common practice, no source).
RE_TRANSITION_START = 2300.0
RE_TRANSITION_END = 4000.0


def fre_rectangular_duct_shah_london_1978(aspect_ratio):
    r"""Fully developed laminar Fanning f·Re of a rectangular duct (hydraulic-diameter basis).

    .. math:: fRe = 24(1 - 1.3553\alpha + 1.9467\alpha^2 - 1.7012\alpha^3 + 0.9564\alpha^4
              - 0.2537\alpha^5)

    Parameters
    ----------
    aspect_ratio : array_like
        Short side over long side, α in [0, 1] [-]. For a fin channel α = min(b, H)/max(b, H).

    Returns
    -------
    numpy.ndarray
        f·Re_Dh (Fanning) [-].

    Notes
    -----
    Fit to the exact series within 0.05 % (tabulated exact values: 20.585 at α = 0.125,
    15.548 at α = 0.5, 14.227 at α = 1, from memory, docs/theory.md#shah-and-london-fully-developed-duct). The "parallel-plate"
    polynomial in λ = b/H used by Culham & Muzychka (2001) is the same expression.

    References
    ----------
    Shah, R. K., London, A. L., *Laminar Flow Forced Convection in Ducts*, Academic Press, 1978.

    Examples
    --------
    >>> round(float(fre_rectangular_duct_shah_london_1978(0.5)), 4)
    15.5573
    """
    a = np.asarray(aspect_ratio, dtype=float)
    return (24.0 * (1.0 + a * (-1.3553 + a * (1.9467 + a * (-1.7012 + a * (0.9564 - 0.2537 * a))))))[()]


def nu_t_rectangular_duct_shah_london_1978(aspect_ratio):
    r"""Fully developed laminar Nusselt number, isothermal walls (T boundary condition).

    .. math:: Nu_T = 7.541(1 - 2.610\alpha + 4.970\alpha^2 - 5.119\alpha^3 + 2.702\alpha^4
              - 0.548\alpha^5)

    Parameters
    ----------
    aspect_ratio : array_like
        Short side over long side, α in [0, 1] [-].

    Returns
    -------
    numpy.ndarray
        Nu_Dh [-], all four walls heated.

    References
    ----------
    Shah & London (1978), see :func:`fre_rectangular_duct_shah_london_1978`.

    Examples
    --------
    >>> round(float(nu_t_rectangular_duct_shah_london_1978(0.0)), 3)
    7.541
    """
    a = np.asarray(aspect_ratio, dtype=float)
    return (7.541 * (1.0 + a * (-2.610 + a * (4.970 + a * (-5.119 + a * (2.702 - 0.548 * a))))))[()]


def nu_h1_rectangular_duct_shah_london_1978(aspect_ratio):
    r"""Fully developed laminar Nusselt number, H1 condition (axially uniform flux,
    peripherally uniform wall temperature).

    .. math:: Nu_{H1} = 8.235(1 - 2.0421\alpha + 3.0853\alpha^2 - 2.4765\alpha^3
              + 1.0578\alpha^4 - 0.1861\alpha^5)

    Parameters
    ----------
    aspect_ratio : array_like
        Short side over long side, α in [0, 1] [-].

    Returns
    -------
    numpy.ndarray
        Nu_Dh [-].

    References
    ----------
    Shah & London (1978). Same as ``ht.conv_internal.Nu_laminar_rectangular_Shan_London``.

    Examples
    --------
    ht gives 3.751762675455 at α = 0.7 (its docstring example):

    >>> round(float(nu_h1_rectangular_duct_shah_london_1978(0.7)), 9)
    3.751762675
    """
    a = np.asarray(aspect_ratio, dtype=float)
    return (8.235 * (1.0 + a * (-2.0421 + a * (3.0853 + a * (-2.4765 + a * (1.0578 - 0.1861 * a))))))[()]


def fre_sqrt_area_rectangular_duct_muzychka_yovanovich_2009(aspect_ratio):
    r"""Fully developed laminar Fanning f·Re of a rectangular duct on the √A length scale.

    .. math:: fRe_{\sqrt{A}} = \frac{12}{\sqrt{\varepsilon}(1+\varepsilon)
              \left[1 - \frac{192\varepsilon}{\pi^5}\tanh\frac{\pi}{2\varepsilon}\right]}

    Parameters
    ----------
    aspect_ratio : array_like
        ε = short/long side in (0, 1] [-].

    Returns
    -------
    numpy.ndarray
        f·Re_√A (Fanning) [-].

    References
    ----------
    Muzychka, Y. S., Yovanovich, M. M., "Pressure drop in laminar developing flow in noncircular
    ducts: a scaling and modeling approach", J. Fluids Eng. 131:111105, 2009 (from memory;
    formula corroborated, docs/theory.md#muzychka-and-yovanovich-developing-flow).

    Examples
    --------
    docs/theory.md#muzychka-and-yovanovich-developing-flow: 16.4572 at ε = 0.5.

    >>> round(float(fre_sqrt_area_rectangular_duct_muzychka_yovanovich_2009(0.5)), 4)
    16.4572
    """
    e = np.asarray(aspect_ratio, dtype=float)
    return (12.0 / (np.sqrt(e) * (1.0 + e) * (1.0 - 192.0 * e / np.pi**5 * np.tanh(np.pi / (2.0 * e)))))[()]


def nu_plate_fin_teertstra_2000(re_channel_star, prandtl):
    r"""Average Nusselt number of a shrouded plate-fin heatsink channel, laminar simultaneously
    developing flow, referenced to the **inlet** air temperature.

    .. math:: Nu_b = \left[\left(\frac{Re_b^* Pr}{2}\right)^{-3} + \left(0.664\sqrt{Re_b^*}
              Pr^{1/3}\sqrt{1 + \frac{3.65}{\sqrt{Re_b^*}}}\right)^{-3}\right]^{-1/3}

    Parameters
    ----------
    re_channel_star : array_like
        Channel Reynolds number Re_b* = (V b/ν)(b/L) [-], V the mean channel velocity.
    prandtl : array_like
        Prandtl number [-].

    Returns
    -------
    numpy.ndarray
        Nu_b = h b / k_air [-], with h referenced to the inlet air temperature.

    Notes
    -----
    Validity (from memory): laminar, 0.1 < Re_b* < 100, Pr ≈ 0.7, fully shrouded fins.
    The small-Re* limit Re_b* Pr / 2 is the energy-balance limit (outlet air at wall
    temperature), so the resulting sink resistance already contains the air heating; it must not
    be added again (docs/theory.md#teertstra-composite-nusselt-number).

    References
    ----------
    Teertstra, P., Yovanovich, M. M., Culham, J. R., "Analytical forced convection modeling of
    plate fin heat sinks", J. Electronics Manufacturing 10(4):253–261, 2000.

    Examples
    --------
    docs/theory.md#teertstra-composite-nusselt-number (Pr = 0.7): 2.402326 at Re* = 10.

    >>> round(float(nu_plate_fin_teertstra_2000(10.0, 0.7)), 6)
    2.402326
    """
    re = np.asarray(re_channel_star, dtype=float)
    pr = np.asarray(prandtl, dtype=float)
    developing = 0.664 * np.sqrt(re) * pr ** (1.0 / 3.0) * np.sqrt(1.0 + 3.65 / np.sqrt(re))
    return (((0.5 * re * pr) ** -3 + developing ** -3) ** (-1.0 / 3.0))[()]


def nu_sqrt_area_developing_muzychka_yovanovich_2004(z_star, prandtl, aspect_ratio):
    r"""Average Nusselt number for laminar combined (simultaneously developing) entry flow in a
    rectangular duct, isothermal wall, √A length scale.

    .. math:: Nu_{\sqrt{A}} = \left\{\left(\frac{C_4 f(Pr)}{\sqrt{z^*}}\right)^m +
       \left[\left(C_2 C_3 \left(\frac{fRe_{\sqrt{A}}}{z^*}\right)^{1/3}\right)^5 +
       \left(C_1 \frac{fRe_{\sqrt{A}}}{8\sqrt{\pi}\varepsilon^{\gamma}}\right)^5\right]^{m/5}
       \right\}^{1/m}

    with m = 2.27 + 1.65 Pr^{1/3}, f(Pr) = 0.564/[1 + (1.664 Pr^{1/6})^{9/2}]^{2/9},
    C1 = 3.24, C2 = 1.5, C3 = 0.409, C4 = 2, γ = 1/10 (average values, isothermal wall).

    Parameters
    ----------
    z_star : array_like
        Dimensionless thermal length z* = L/(√A Re_√A Pr) [-].
    prandtl : array_like
        Prandtl number [-], 0.1 to ∞.
    aspect_ratio : array_like
        ε = short/long side of the duct in (0, 1] [-].

    Returns
    -------
    numpy.ndarray
        Nu_√A = h √A / k [-], a log-mean-temperature-difference coefficient: use it with
        effectiveness–NTU (:func:`effectiveness_isothermal_wall`), not against inlet air.

    References
    ----------
    Muzychka, Y. S., Yovanovich, M. M., "Laminar forced convection heat transfer in the combined
    entry region of non-circular ducts", J. Heat Transfer 126(1):54–61, 2004,
    doi:10.1115/1.1643752 (formula corroborated, docs/theory.md#muzychka-and-yovanovich-developing-flow).

    Examples
    --------
    docs/theory.md#muzychka-and-yovanovich-developing-flow (ε = 0.1, Pr = 0.71): 12.0336 at z* = 0.01.

    >>> round(float(nu_sqrt_area_developing_muzychka_yovanovich_2004(0.01, 0.71, 0.1)), 4)
    12.0336
    """
    z = np.asarray(z_star, dtype=float)
    pr = np.asarray(prandtl, dtype=float)
    eps = np.asarray(aspect_ratio, dtype=float)
    fre = fre_sqrt_area_rectangular_duct_muzychka_yovanovich_2009(eps)
    m = 2.27 + 1.65 * pr ** (1.0 / 3.0)
    f_pr = 0.564 / (1.0 + (1.664 * pr ** (1.0 / 6.0)) ** 4.5) ** (2.0 / 9.0)
    c1, c2, c3, c4, gamma = 3.24, 1.5, 0.409, 2.0, 0.1
    developing = c4 * f_pr / np.sqrt(z)
    thermal = c2 * c3 * (fre / z) ** (1.0 / 3.0)
    developed = c1 * fre / (8.0 * np.sqrt(np.pi) * eps**gamma)
    return ((developing**m + (thermal**5 + developed**5) ** (m / 5.0)) ** (1.0 / m))[()]


def friction_darcy_smooth_petukhov_1970(reynolds):
    r"""Darcy friction factor of a smooth duct in turbulent flow, :math:`f_D = (0.790 \ln Re - 1.64)^{-2}`.

    Parameters
    ----------
    reynolds : array_like
        Re_Dh [-], valid 3000 to 5e6.

    Returns
    -------
    numpy.ndarray
        Darcy friction factor [-] (Fanning = f_D/4).

    References
    ----------
    Petukhov, B. S., "Heat transfer and friction in turbulent pipe flow with variable physical
    properties", Adv. Heat Transfer 6:503–564, 1970 (from memory).

    Examples
    --------
    docs/theory.md#turbulent-and-transitional-flow: 0.0314798 at Re = 1e4.

    >>> round(float(friction_darcy_smooth_petukhov_1970(1e4)), 7)
    0.0314798
    """
    re = np.asarray(reynolds, dtype=float)
    return ((0.790 * np.log(re) - 1.64) ** -2)[()]


def nu_turbulent_gnielinski_1976(reynolds, prandtl, friction_darcy):
    r"""Turbulent and transitional duct Nusselt number of Gnielinski.

    .. math:: Nu = \frac{(f_D/8)(Re - 1000) Pr}{1 + 12.7\sqrt{f_D/8}(Pr^{2/3} - 1)}

    Parameters
    ----------
    reynolds : array_like
        Re_Dh [-], valid 2300 to 5e6.
    prandtl : array_like
        Prandtl number [-], valid 0.5 to 2000.
    friction_darcy : array_like
        Darcy friction factor [-].

    Returns
    -------
    numpy.ndarray
        Nu_Dh [-] (fully developed; an LMTD coefficient).

    References
    ----------
    Gnielinski, V., "New equations for heat and mass transfer in turbulent pipe and channel flow",
    Int. Chem. Eng. 16:359–368, 1976.

    Examples
    --------
    ``ht.conv_internal.turbulent_Gnielinski(Re=1e4, Pr=0.71, fd=0.030882950353487693)``
    = 29.404129592704358:

    >>> round(float(nu_turbulent_gnielinski_1976(1e4, 0.71, 0.030882950353487693)), 9)
    29.404129593
    """
    re = np.asarray(reynolds, dtype=float)
    pr = np.asarray(prandtl, dtype=float)
    f8 = np.asarray(friction_darcy, dtype=float) / 8.0
    return (f8 * (re - 1000.0) * pr / (1.0 + 12.7 * np.sqrt(f8) * (pr ** (2.0 / 3.0) - 1.0)))[()]


def effectiveness_isothermal_wall(ntu):
    r"""Effectiveness of a heat exchanger with one isothermal stream (C_r = 0), ε = 1 − e^{−NTU}.

    Parameters
    ----------
    ntu : array_like
        Number of transfer units, η_o h A_t / (ṁ c_p) [-].

    Returns
    -------
    numpy.ndarray
        ε [-]; the sink resistance to inlet air is then 1/(ε ṁ c_p).

    References
    ----------
    Kays, W. M., London, A. L., *Compact Heat Exchangers*, 3rd ed., McGraw-Hill, 1984 (from
    memory); same as ``ht.hx.effectiveness_from_NTU(NTU, Cr=0)``.

    Examples
    --------
    ``ht.hx.effectiveness_from_NTU(1.0, Cr=0.0, subtype='counterflow')`` = 0.6321205588285577:

    >>> round(float(effectiveness_isothermal_wall(1.0)), 12)
    0.632120558829
    """
    return (-np.expm1(-np.asarray(ntu, dtype=float)))[()]


def transition_weight(reynolds, start=RE_TRANSITION_START, end=RE_TRANSITION_END):
    r"""Smooth weight of the turbulent result between laminar and turbulent duct flow.

    .. math:: w = s^2 (3 - 2 s), \quad s = \mathrm{clip}\left(\frac{Re - Re_1}{Re_2 - Re_1}, 0, 1\right)

    Parameters
    ----------
    reynolds : array_like
        Re_Dh [-].
    start, end : float
        Re_Dh where the blend starts (w = 0) and ends (w = 1) [-].

    Returns
    -------
    numpy.ndarray
        w in [0, 1], continuous with a continuous first derivative (a cubic "smoothstep").

    Notes
    -----
    sinkopt blends *conductances* as G = (1 − w) G_lam + w (G_lam^5 + G_turb^5)^{1/5}: the
    Churchill–Usagi form (Churchill & Usagi, AIChE J. 18:1121, 1972, from memory) with exponent 5
    is never below either branch, so the blend is continuous and cannot make more airflow give a
    worse sink. The interval 2300–4000 is common practice, no source.

    Examples
    --------
    >>> [round(float(transition_weight(r)), 3) for r in (1000.0, 3150.0, 5000.0)]
    [0.0, 0.5, 1.0]
    """
    s = np.clip((np.asarray(reynolds, dtype=float) - start) / (end - start), 0.0, 1.0)
    return (s * s * (3.0 - 2.0 * s))[()]

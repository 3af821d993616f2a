"""Natural convection from plate-fin heatsinks when the fans have stopped (issue 13).

One function per published correlation (dimensionless in, dimensionless out), plus
:func:`sink_natural_convection`, which composes them into the convective conductance of a whole
plate-fin sink in one of :data:`ORIENTATIONS`. Radiation is separate
(:mod:`sinkopt.physics.radiation`); the two conductances add.

Symbols: b fin gap, L fin length (along the fins), H fin height, t fin thickness, t_b base
thickness, W base width, N fins; ΔT base-to-ambient temperature difference; g gravity; β
expansion coefficient; ν kinematic viscosity; α thermal diffusivity. Properties are taken at the
film temperature T_a + ΔT/2, with β = 1/T_film (ideal gas).
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from sinkopt.physics import fin as fn
from sinkopt.physics import geometry as geo
from sinkopt.physics.air import air_properties

__all__ = [
    "GRAVITY",
    "ORIENTATIONS",
    "rayleigh_number",
    "elenbaas_number",
    "nu_vertical_channel_bar_cohen_rohsenow_1984",
    "nu_vertical_channel_asymmetric_bar_cohen_rohsenow_1984",
    "spacing_optimum_vertical_channel_bar_cohen_rohsenow_1984",
    "nu_vertical_plate_churchill_chu_1975",
    "nu_horizontal_plate_up_mcadams_1954",
    "nu_horizontal_plate_down_mcadams_1954",
    "length_horizontal_plate",
    "NaturalConvection",
    "sink_natural_convection",
]

#: Standard gravity [m/s^2] (the value of the U.S. Standard Atmosphere 1976, as in air.py).
GRAVITY = 9.80665

#: ``fins_vertical``: base vertical, fins vertical, channels open at the bottom and the top
#: (the Bar-Cohen & Rohsenow channel model; default, the orientation natural-convection sinks are
#: designed for). ``base_down_fins_up``: horizontal base below, fins pointing up.
#: ``base_up_fins_down``: horizontal base above, fins pointing down. The two horizontal ones use
#: the documented envelope simplification of :func:`sink_natural_convection`.
ORIENTATIONS = ("fins_vertical", "base_down_fins_up", "base_up_fins_down")


def rayleigh_number(length, delta_t, kinematic_viscosity, thermal_diffusivity,
                    expansion_coefficient, gravity=GRAVITY):
    r"""Rayleigh number on a length scale, :math:`Ra = g\beta\Delta T\,\ell^3/(\nu\alpha)`.

    Parameters
    ----------
    length : array_like
        Length scale ℓ [m] (fin gap b for a channel, plate height, or A/P for a horizontal plate).
    delta_t : array_like
        Surface-to-ambient temperature difference ΔT [K].
    kinematic_viscosity : array_like
        ν [m^2/s].
    thermal_diffusivity : array_like
        α = k/(ρ c_p) [m^2/s].
    expansion_coefficient : array_like
        β [1/K]; 1/T for an ideal gas.
    gravity : array_like
        g [m/s^2].

    Returns
    -------
    numpy.ndarray
        Ra [-].

    Examples
    --------
    By hand: 9.80665 × (1/300) × 10 × 1^3 / (1.5e-5)^2 = 1.452837e9:

    >>> round(float(rayleigh_number(1.0, 10.0, 1.5e-5, 1.5e-5, 1.0 / 300.0)) / 1e9, 6)
    1.452837
    """
    l, dt, nu, a, beta, g = (np.asarray(x, dtype=float) for x in
                             (length, delta_t, kinematic_viscosity, thermal_diffusivity,
                              expansion_coefficient, gravity))
    return (g * beta * dt * l**3 / (nu * a))[()]


def elenbaas_number(rayleigh_gap, gap, length):
    r"""Elenbaas number of a vertical channel, :math:`El = Ra_b\, b/L` [-].

    Parameters
    ----------
    rayleigh_gap : array_like
        Rayleigh number on the gap, Ra_b [-].
    gap : array_like
        Plate spacing b [m].
    length : array_like
        Channel length in the flow (vertical) direction, L [m].

    Examples
    --------
    >>> float(elenbaas_number(1000.0, 0.005, 0.1))
    50.0
    """
    ra, b, l = (np.asarray(x, dtype=float) for x in (rayleigh_gap, gap, length))
    return (ra * b / l)[()]


def nu_vertical_channel_bar_cohen_rohsenow_1984(elenbaas):
    r"""Average Nusselt number of a vertical channel between two isothermal plates at the same
    temperature (symmetric heating), natural convection, referenced to the **ambient** (inlet)
    temperature.

    .. math:: Nu_b = \frac{h b}{k} = \left[\frac{576}{El^2} + \frac{2.873}{El^{1/2}}\right]^{-1/2},
              \qquad El = Ra_b\,\frac{b}{L}

    Parameters
    ----------
    elenbaas : array_like
        Elenbaas number El = Ra_b b/L [-], Ra_b on the gap b with ΔT = T_wall − T_ambient.

    Returns
    -------
    numpy.ndarray
        Nu_b [-]; q = h A (T_wall − T_ambient).

    Notes
    -----
    Composite of the fully developed limit Nu_b = El/24 (small El: the air leaves at the wall
    temperature) and the isolated-plate limit Nu_b = 0.59 El^(1/4) (2.873^(-1/2) = 0.590), with
    the Churchill–Usagi exponent −2. Fitted to Elenbaas's (1942) measurements in air on square
    plates; laminar flow. Validity as registered in sinkopt.model.validity: El 0.1 … 1e5 (range
    of Elenbaas's data, from memory) and Ra_L = Ra_b (L/b)^3 ≤ 1e9 (laminar isolated plate,
    Bergman et al. 2011 §9.6).

    References
    ----------
    Bar-Cohen, A., Rohsenow, W. M., "Thermally optimum spacing of vertical, natural convection
    cooled, parallel plates", J. Heat Transfer 106:116–123, 1984.
    Elenbaas, W., "Heat dissipation of parallel plates by free convection", Physica 9(1):1–28,
    1942.
    Formula and limits as tabulated in Kutz (ed.), *Mechanical Engineers' Handbook*, Vol. 4,
    "Cooling Electronic Equipment", Table 1 (3rd ed., Wiley).

    Examples
    --------
    At the optimum spacing El = 2.714^4 (Bar-Cohen & Rohsenow 1984) the paper quotes
    Nu_opt ≈ 1.31 (from memory):

    >>> round(float(nu_vertical_channel_bar_cohen_rohsenow_1984(2.714**4)), 2)
    1.31
    """
    el = np.asarray(elenbaas, dtype=float)
    return ((576.0 / el**2 + 2.873 / np.sqrt(el)) ** -0.5)[()]


def nu_vertical_channel_asymmetric_bar_cohen_rohsenow_1984(elenbaas):
    r"""Average Nusselt number of a vertical channel with one isothermal and one adiabatic
    plate, natural convection, referenced to the ambient temperature.

    .. math:: Nu_b = \left[\frac{144}{El^2} + \frac{2.873}{El^{1/2}}\right]^{-1/2}

    Parameters
    ----------
    elenbaas : array_like
        El = Ra_b b/L [-].

    Returns
    -------
    numpy.ndarray
        Nu_b [-] of the heated plate.

    Notes
    -----
    Fully developed limit El/12, isolated-plate limit 0.59 El^(1/4). Same validity as
    :func:`nu_vertical_channel_bar_cohen_rohsenow_1984`.

    References
    ----------
    Bar-Cohen & Rohsenow (1984); Kutz (ed.), *Mechanical Engineers' Handbook*, Vol. 4, Table 1.

    Examples
    --------
    Fully developed limit El/12 (Kutz, Table 1) at small El:

    >>> round(float(nu_vertical_channel_asymmetric_bar_cohen_rohsenow_1984(1e-3)) / (1e-3 / 12), 4)
    1.0
    """
    el = np.asarray(elenbaas, dtype=float)
    return ((144.0 / el**2 + 2.873 / np.sqrt(el)) ** -0.5)[()]


def spacing_optimum_vertical_channel_bar_cohen_rohsenow_1984(length, delta_t, kinematic_viscosity,
                                                             thermal_diffusivity,
                                                             expansion_coefficient,
                                                             gravity=GRAVITY):
    r"""Plate spacing that maximises the heat transfer per unit volume of an array of vertical
    isothermal plates (symmetric heating), natural convection.

    .. math:: b_{opt} = \frac{2.714}{P^{1/4}}, \qquad
              P = \frac{c_p \rho^2 g \beta \Delta T}{\mu k L} = \frac{g\beta\Delta T}{\nu\alpha L}

    Parameters
    ----------
    length : array_like
        Plate length in the vertical (flow) direction, L [m].
    delta_t : array_like
        Plate-to-ambient temperature difference ΔT [K].
    kinematic_viscosity, thermal_diffusivity : array_like
        ν, α [m^2/s].
    expansion_coefficient : array_like
        β [1/K].
    gravity : array_like
        g [m/s^2].

    Returns
    -------
    numpy.ndarray
        b_opt [m].

    Notes
    -----
    Equivalent to El(b_opt) = 2.714^4 = 54.3; the maximiser of Nu_b/b^2 for the symmetric
    composite :func:`nu_vertical_channel_bar_cohen_rohsenow_1984` is El = 54.38 (2.7155^4), so the
    published constant and the composite agree to 0.1 %. Plate thickness neglected (thin plates).
    Bergman et al. (2011) eq. 9.47 quote the same result as S_opt = 2.71 (Ra_S/(S^3 L))^(-1/4)
    (from memory).

    References
    ----------
    Bar-Cohen, A., Rohsenow, W. M., J. Heat Transfer 106:116–123, 1984 (constant 2.714 and the
    form of P from memory).

    Examples
    --------
    With g β ΔT/(ν α) = 1e9 1/m^3 and L = 0.1 m: P = 1e10 1/m^4, b_opt = 2.714 × 1e-2.5 m:

    >>> round(float(spacing_optimum_vertical_channel_bar_cohen_rohsenow_1984(
    ...     0.1, 1.0, 1e-5, 1e-4, 1e-3, gravity=1e3)) * 1e3, 4)
    8.5824
    """
    l, dt, nu, a, beta, g = (np.asarray(x, dtype=float) for x in
                             (length, delta_t, kinematic_viscosity, thermal_diffusivity,
                              expansion_coefficient, gravity))
    p = g * beta * dt / (nu * a * l)
    return (2.714 * p**-0.25)[()]


def nu_vertical_plate_churchill_chu_1975(rayleigh, prandtl):
    r"""Average Nusselt number of an isothermal vertical plate, natural convection, laminar to
    turbulent.

    .. math:: Nu_L = \left\{0.825 + \frac{0.387\,Ra_L^{1/6}}
              {\left[1 + (0.492/Pr)^{9/16}\right]^{8/27}}\right\}^2

    Parameters
    ----------
    rayleigh : array_like
        Ra_L on the plate height L [-].
    prandtl : array_like
        Pr [-].

    Returns
    -------
    numpy.ndarray
        Nu_L = h L/k [-].

    Notes
    -----
    Validity: 0.1 ≤ Ra_L ≤ 1e12, all Pr (Churchill & Chu 1975; Bergman et al. 2011 eq. 9.26).

    References
    ----------
    Churchill, S. W., Chu, H. H. S., "Correlating equations for laminar and turbulent free
    convection from a vertical plate", Int. J. Heat Mass Transfer 18(11):1323–1329, 1975.
    Same as ``ht.conv_free_immersed.Nu_vertical_plate_Churchill``.

    Examples
    --------
    Bergman et al. (2011) Example 9.2, Pr = 0.69, Gr = 2.63e9; ht gives 147.16185223770603:

    >>> round(float(nu_vertical_plate_churchill_chu_1975(0.69 * 2.63e9, 0.69)), 6)
    147.161852
    """
    ra, pr = (np.asarray(x, dtype=float) for x in (rayleigh, prandtl))
    return ((0.825 + 0.387 * ra ** (1.0 / 6.0) / (1.0 + (0.492 / pr) ** (9.0 / 16.0)) ** (8.0 / 27.0))
            ** 2)[()]


def nu_horizontal_plate_up_mcadams_1954(rayleigh):
    r"""Average Nusselt number of the upper face of a hot (or lower face of a cold) isothermal
    horizontal plate.

    .. math:: Nu_L = 0.54\,Ra_L^{1/4} \ (10^4 \le Ra_L \le 10^7), \qquad
              Nu_L = 0.15\,Ra_L^{1/3} \ (10^7 < Ra_L \le 10^{11})

    Parameters
    ----------
    rayleigh : array_like
        Ra_L on L = A/P (plate area over perimeter, :func:`length_horizontal_plate`) [-].

    Returns
    -------
    numpy.ndarray
        Nu_L [-].

    Notes
    -----
    Validity 1e4 ≤ Ra_L ≤ 1e11, Pr ≳ 0.7 (Bergman et al. 2011 eqs. 9.30–9.31). The branches are
    used outside their ranges unchanged (the registry reports it). The characteristic length A/P
    is that of Goldstein, Sparrow & Jones (1973) and Lloyd & Moran (1974) (from memory).

    References
    ----------
    McAdams, W. H., *Heat Transmission*, 3rd ed., McGraw-Hill, 1954. Lloyd, J. R., Moran, W. R.,
    "Natural convection adjacent to horizontal surface of various planforms", J. Heat Transfer
    96:443–447, 1974 (from memory). Same as ``ht.conv_free_immersed.Nu_horizontal_plate_McAdams``
    with ``buoyancy=True``.

    Examples
    --------
    ht's docstring case Pr = 5.54, Gr = 3.21e8 gives 181.73121274384457:

    >>> round(float(nu_horizontal_plate_up_mcadams_1954(5.54 * 3.21e8)), 6)
    181.731213
    """
    ra = np.asarray(rayleigh, dtype=float)
    return np.where(ra <= 1e7, 0.54 * ra**0.25, 0.15 * np.cbrt(ra))[()]


def nu_horizontal_plate_down_mcadams_1954(rayleigh):
    r"""Average Nusselt number of the lower face of a hot (or upper face of a cold) isothermal
    horizontal plate.

    .. math:: Nu_L = 0.27\,Ra_L^{1/4} \quad (10^5 \le Ra_L \le 10^{10})

    Parameters
    ----------
    rayleigh : array_like
        Ra_L on L = A/P [-].

    Returns
    -------
    numpy.ndarray
        Nu_L [-].

    Notes
    -----
    Validity 1e5 ≤ Ra_L ≤ 1e10 (Bergman et al., 6th ed., 2007, eq. 9.32, from memory). The 7th
    edition replaces it with 0.52 Ra^(1/5) (1e4–1e9), which gives a higher value in air; the lower
    McAdams value is kept as the conservative choice.

    References
    ----------
    McAdams (1954). Same as ``ht.conv_free_immersed.Nu_horizontal_plate_McAdams`` with
    ``buoyancy=False`` for Ra ≤ 1e10.

    Examples
    --------
    ht's docstring case Pr = 5.54, Gr = 3.21e8 gives 55.44564799362829:

    >>> round(float(nu_horizontal_plate_down_mcadams_1954(5.54 * 3.21e8)), 6)
    55.445648
    """
    ra = np.asarray(rayleigh, dtype=float)
    return (0.27 * ra**0.25)[()]


def length_horizontal_plate(width, length):
    """Characteristic length of a horizontal rectangular plate, A/P = W L / (2 (W + L)) [m].

    Examples
    --------
    >>> float(length_horizontal_plate(0.1, 0.1))
    0.025
    """
    w, l = (np.asarray(x, dtype=float) for x in (width, length))
    return (w * l / (2.0 * (w + l)))[()]


def _full(x, shape):
    """``x`` broadcast to ``shape`` as a fresh array (a numpy scalar for shape ())."""
    return np.array(np.broadcast_to(np.asarray(x, dtype=float), shape))[()]


class NaturalConvection(NamedTuple):
    conductance: np.ndarray  #: convective conductance, base to ambient air [W/K]
    h_channel: np.ndarray  #: channel coefficient (fins_vertical; NaN otherwise) [W/(m^2 K)]
    h_vertical: np.ndarray  #: coefficient of the outer vertical faces [W/(m^2 K)]
    h_horizontal: np.ndarray  #: coefficient of the horizontal envelope face (NaN for fins_vertical) [W/(m^2 K)]
    fin_efficiency: np.ndarray  #: η_f of the inner fins (fins_vertical) or of the envelope fins [-]
    elenbaas: np.ndarray  #: El of the channels (NaN for the horizontal orientations) [-]
    rayleigh_vertical: np.ndarray  #: Ra on the height of the outer vertical faces [-]
    rayleigh_horizontal: np.ndarray  #: Ra on A/P of the horizontal face (NaN for fins_vertical) [-]


def sink_natural_convection(width, length, fin_height, fin_thickness, n_fins, base_thickness,
                            conductivity, delta_t, t_ambient, pressure=101325.0,
                            orientation="fins_vertical", back_exposed=False) -> NaturalConvection:
    r"""Convective conductance of a plate-fin sink in still air, base to ambient [W/K].

    Parameters
    ----------
    width : array_like
        Base width across the fins, W [m].
    length : array_like
        Fin length L [m]: the vertical channel length for ``fins_vertical``.
    fin_height, fin_thickness : array_like
        H, t [m].
    n_fins : array_like
        N [-], ≥ 2.
    base_thickness : array_like
        t_b [m].
    conductivity : array_like
        Fin conductivity k [W/(m K)].
    delta_t : array_like
        Base-to-ambient temperature difference ΔT > 0 [K].
    t_ambient : array_like
        Ambient air temperature [K].
    pressure : array_like
        Ambient pressure [Pa].
    orientation : str
        One of :data:`ORIENTATIONS`.
    back_exposed : bool
        Whether the back of the base (W × L) is exposed to the air (default: mounted, adiabatic).

    Returns
    -------
    NaturalConvection

    Notes
    -----
    Properties at T_film = T_a + ΔT/2 (:func:`sinkopt.physics.air.air_properties`), β = 1/T_film.

    ``fins_vertical`` (Bar-Cohen & Rohsenow 1984 channel model): the N − 1 channels have
    h_ch = Nu_b k/b from :func:`nu_vertical_channel_bar_cohen_rohsenow_1984` with El on the gap
    b and channel length L; the U-channel's open tip side and its base are treated as part of
    the parallel-plate channel (base strip (N − 1) b L at h_ch). Inner fins have the efficiency
    of :func:`sinkopt.physics.fin.fin_efficiency_straight_rectangular` at m = √(2 h_ch/(k t))
    over the corrected length H + t/2 (tip at h_ch). The two outer fins carry h_ch on the inner
    face and the isolated vertical-plate value h_v (:func:`nu_vertical_plate_churchill_chu_1975`,
    height L) on the outer face, with m = √((h_ch + h_v)/(k t)). The base edges (2 t_b L) and an
    exposed back (W L) take h_v; the top and bottom base edges are neglected.

    ``base_down_fins_up`` / ``base_up_fins_down``: **documented simplification** — no published
    horizontal fin-array correlation is implemented here. The sink is replaced by its outer
    envelope W × L × (H + t_b): the face formed by the fin tips is a horizontal plate facing up
    (:func:`nu_horizontal_plate_up_mcadams_1954`) or down
    (:func:`nu_horizontal_plate_down_mcadams_1954`) on A/P; the four sides are vertical plates of
    height H + t_b (:func:`nu_vertical_plate_churchill_chu_1975`). The fin-borne parts (tip face
    and the fin-height part of the sides) are multiplied by the fin efficiency at the mean
    envelope coefficient, m = √(2 h_env/(k t)) over H. Air drawn into the channels is ignored, so
    the result is a lower estimate for open fin arrays (the extra fin area is not credited) and
    tends to the solid-block value for very dense arrays; it is not validated against fin-array
    data.

    Examples
    --------
    Plausibility only (W = L = 0.1 m, H = 30 mm, 10 fins of 2 mm, t_b = 5 mm, aluminium, ΔT =
    40 K, 25 °C): see tests/physics/test_natural_convection.py for the outside checks.

    >>> g = sink_natural_convection(0.1, 0.1, 0.03, 0.002, 10, 0.005, 200.0, 40.0, 298.15)
    >>> bool(0.2 < float(g.conductance) < 0.6)
    True
    """
    if orientation not in ORIENTATIONS:
        raise ValueError(f"orientation must be one of {', '.join(ORIENTATIONS)}; got {orientation!r}")
    w, l, h, t, n, tb, k, dt, ta = (np.asarray(x, dtype=float) for x in
                                    (width, length, fin_height, fin_thickness, n_fins,
                                     base_thickness, conductivity, delta_t, t_ambient))
    t_film = ta + 0.5 * dt
    air = air_properties(t_film, pressure)
    nu = air.kinematic_viscosity
    alpha = air.conductivity / (air.density * air.heat_capacity)
    beta = 1.0 / t_film
    k_air = air.conductivity
    back = float(bool(back_exposed))
    shape = np.broadcast_shapes(w.shape, l.shape, h.shape, t.shape, n.shape, tb.shape, k.shape,
                                dt.shape, t_film.shape, np.shape(pressure))

    if orientation == "fins_vertical":
        b = geo.fin_gap(w, n, t)
        ra_b = rayleigh_number(b, dt, nu, alpha, beta)
        el = elenbaas_number(ra_b, b, l)
        h_ch = nu_vertical_channel_bar_cohen_rohsenow_1984(el) * k_air / b
        ra_v = rayleigh_number(l, dt, nu, alpha, beta)
        h_v = nu_vertical_plate_churchill_chu_1975(ra_v, air.prandtl) * k_air / l
        lc = fn.corrected_fin_length(h, t)
        eta_in = fn.fin_efficiency_straight_rectangular(fn.fin_parameter(h_ch, k, t) * lc)
        m_out = np.sqrt((h_ch + h_v) / (k * t))
        eta_out = fn.fin_efficiency_straight_rectangular(m_out * lc)
        g_fins = ((n - 2.0) * eta_in * h_ch * 2.0 * lc * l
                  + 2.0 * eta_out * (h_ch + h_v) * lc * l)
        g_base = (n - 1.0) * b * l * h_ch + h_v * (2.0 * tb * l + back * w * l)
        return NaturalConvection(*(_full(x, shape) for x in
                                   (g_fins + g_base, h_ch, h_v, np.nan, eta_in, el, ra_v, np.nan)))

    h_env = h + tb
    l_star = length_horizontal_plate(w, l)
    ra_face = rayleigh_number(l_star, dt, nu, alpha, beta)
    nu_up = nu_horizontal_plate_up_mcadams_1954(ra_face)
    nu_down = nu_horizontal_plate_down_mcadams_1954(ra_face)
    fins_up = orientation == "base_down_fins_up"
    h_face = (nu_up if fins_up else nu_down) * k_air / l_star
    h_back = (nu_down if fins_up else nu_up) * k_air / l_star
    ra_v = rayleigh_number(h_env, dt, nu, alpha, beta)
    h_v = nu_vertical_plate_churchill_chu_1975(ra_v, air.prandtl) * k_air / h_env
    perimeter = 2.0 * (w + l)
    fin_part = h_face * w * l + h_v * perimeter * h
    base_part = h_v * perimeter * tb + back * h_back * w * l
    h_mean = (h_face * w * l + h_v * perimeter * h_env) / (w * l + perimeter * h_env)
    eta = fn.fin_efficiency_straight_rectangular(fn.fin_parameter(h_mean, k, t) * h)
    return NaturalConvection(*(_full(x, shape) for x in
                               (eta * fin_part + base_part, np.nan, h_v, h_face, eta, np.nan, ra_v,
                                ra_face)))

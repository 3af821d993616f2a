"""Whole-sink hydraulics and thermal resistance of a shrouded plate-fin heatsink, composed from
the single correlations in :mod:`convection`, :mod:`pressure_drop` and :mod:`fin`.

Everything is vectorised over designs: pass equal-shaped (or broadcastable) arrays. Options are
plain strings so the model and the study file can name them; each is listed in a module constant
whose first entry is the default.
"""
from __future__ import annotations

from typing import NamedTuple

import numpy as np

from sinkopt.physics import convection as cv
from sinkopt.physics import fin as fn
from sinkopt.physics import geometry as geo
from sinkopt.physics import pressure_drop as pd_
from sinkopt.physics.air import AirProperties

__all__ = [
    "HEAT_TRANSFER_MODELS",
    "HYDRAULIC_DIAMETERS",
    "FIN_TIPS",
    "Hydraulics",
    "Thermal",
    "sink_hydraulics",
    "sink_pressure_drop_function",
    "sink_thermal",
]

#: ``teertstra``: Teertstra, Yovanovich & Culham (2000) composite, inlet-referenced (default:
#: the method published for exactly this geometry). ``muzychka_yovanovich``: M–Y (2004)
#: developing-flow Nusselt number with effectiveness–NTU.
HEAT_TRANSFER_MODELS = ("teertstra", "muzychka_yovanovich")
#: ``parallel_plates``: D_h = 2b, the published plate-fin convention (default, Culham & Muzychka
#: 2001). ``rectangular``: D_h = 2bH/(b + H), consistent with the rectangular-duct f·Re; gives a
#: higher pressure drop for short fins (REF-1: 69.70 vs 65.61 Pa).
HYDRAULIC_DIAMETERS = ("parallel_plates", "rectangular")
#: ``adiabatic``: fin tips touch the shroud (fully ducted sink, the published model's
#: assumption; default). ``corrected_length``: convecting tip through L_c = H + t/2.
FIN_TIPS = ("adiabatic", "corrected_length")


class Hydraulics(NamedTuple):
    gap: np.ndarray  #: fin gap b [m]
    velocity: np.ndarray  #: mean channel velocity V [m/s]
    hydraulic_diameter: np.ndarray  #: D_h [m]
    reynolds: np.ndarray  #: Re_Dh [-]
    l_plus: np.ndarray  #: L⁺ = L/(D_h Re_Dh) [-]
    friction_apparent: np.ndarray  #: Fanning f_app (laminar/turbulent blend) [-]
    contraction_loss: np.ndarray  #: K_c [-]
    expansion_loss: np.ndarray  #: K_e [-]
    pressure_drop: np.ndarray  #: static pressure drop across the sink [Pa]


class Thermal(NamedTuple):
    h: np.ndarray  #: heat transfer coefficient used for the fins [W/(m^2 K)]
    fin_efficiency: np.ndarray  #: η_f [-]
    surface_efficiency: np.ndarray  #: η_o [-]
    resistance: np.ndarray  #: sink resistance, base to **inlet** air, including air heating [K/W]
    resistance_convective: np.ndarray  #: the part without bulk air heating [K/W]
    mass_flow_heat_capacity: np.ndarray  #: ṁ c_p [W/K]
    reynolds_channel_star: np.ndarray  #: Re_b* = (V b/ν)(b/L) [-]
    z_star: np.ndarray  #: L/(√A Re_√A Pr) of the channel [-]


def _hydraulic_diameter(gap, fin_height, option):
    """D_h of the fin channel under the named convention (:data:`HYDRAULIC_DIAMETERS`)."""
    if option == "parallel_plates":
        return geo.hydraulic_diameter_parallel_plates(gap)
    return geo.hydraulic_diameter_rectangular_channel(gap, fin_height)


def _check_option(name, value, allowed):
    if value not in allowed:
        raise ValueError(f"{name} must be one of {', '.join(allowed)}; got {value!r}")


def sink_hydraulics(width, length, fin_height, fin_thickness, n_fins, flow, air: AirProperties,
                    hydraulic_diameter="parallel_plates", exit_loss="culham_muzychka",
                    friction_multiplier=1.0, loss_multiplier=1.0) -> Hydraulics:
    """Pressure drop of the fin array at a volume flow through the fins.

    Parameters
    ----------
    width, length, fin_height, fin_thickness : array_like
        W, L, H, t [m].
    n_fins : array_like
        N [-].
    flow : array_like
        Volume flow through the fin channels [m^3/s] at the air state ``air``.
    air : AirProperties
        Air at the inlet.
    hydraulic_diameter : str
        One of :data:`HYDRAULIC_DIAMETERS`.
    exit_loss : str
        One of :data:`sinkopt.physics.pressure_drop.EXIT_LOSS_MODELS`.
    friction_multiplier, loss_multiplier : float
        Calibration factors [-] on the channel friction factor (laminar and turbulent) and on
        the entrance + exit loss coefficients K_c + K_e; 1 without calibration
        (docs/theory.md#calibration-from-measurements).

    Notes
    -----
    Laminar: developing-flow apparent friction (Muzychka & Yovanovich composite with the
    Shah & London f·Re at λ = b/H). Turbulent: Petukhov smooth-duct friction. Between Re_Dh 2300
    and 4000 the two pressure drops are blended as described in
    :func:`sinkopt.physics.convection.transition_weight`, so Δp rises monotonically with flow.

    Examples
    --------
    REF-1 (docs/theory.md#ref-1-golden-case): 65.6113 Pa.

    >>> from sinkopt.physics.air import AirProperties
    >>> air = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)
    >>> round(float(sink_hydraulics(0.05, 0.05, 0.025, 0.001, 20, 0.005, air).pressure_drop), 4)
    65.6113
    """
    _check_option("hydraulic_diameter", hydraulic_diameter, HYDRAULIC_DIAMETERS)
    _check_option("exit_loss", exit_loss, tuple(pd_.EXIT_LOSS_MODELS))
    h = np.asarray(fin_height, dtype=float)
    length = np.asarray(length, dtype=float)
    b = geo.fin_gap(width, n_fins, fin_thickness)
    velocity = np.asarray(flow, dtype=float) / geo.channel_flow_area(width, n_fins, fin_thickness, h)
    dh = _hydraulic_diameter(b, h, hydraulic_diameter)
    # A floor on Re keeps Δp(0) = 0 (the fan solver evaluates the system at zero flow).
    re = np.maximum(air.density * velocity * dh / air.viscosity, 1e-12)
    aspect = np.minimum(b, h) / np.maximum(b, h)
    fre = cv.fre_rectangular_duct_shah_london_1978(aspect)
    l_plus = length / (dh * re)
    f_lam = pd_.friction_apparent_developing_muzychka_yovanovich_2009(l_plus, fre) / re
    sigma = geo.open_area_ratio(width, n_fins, fin_thickness)
    kc = pd_.contraction_loss_culham_muzychka_2001(sigma) * loss_multiplier
    ke = pd_.EXIT_LOSS_MODELS[exit_loss](sigma) * loss_multiplier
    f_lam = f_lam * friction_multiplier
    dynamic = 0.5 * air.density * velocity**2
    dp = (kc + 4.0 * f_lam * length / dh + ke) * dynamic
    dp = _blend_turbulent(dp, re, kc + ke, length / dh, dynamic, friction_multiplier)
    with np.errstate(divide="ignore", invalid="ignore"):  # zero flow: f_app undefined (NaN)
        f_app = (dp / dynamic - kc - ke) * dh / (4.0 * length)
    return Hydraulics(b, velocity, dh, re, l_plus, f_app, kc, ke, dp)


def _blend_turbulent(dp_lam, re, k_minor, l_over_dh, dynamic, friction_multiplier=1.0):
    """Blend the turbulent pressure drop in where Re_Dh > 2300 (see :func:`sink_hydraulics`).

    ``dp = (1 − w) dp_lam + w (dp_lam⁵ + dp_turb⁵)^(1/5)``; w = 0 gives exactly ``dp_lam``, so
    only the designs in or past the transition are computed (the Petukhov factor's log and the
    fifth powers are most of the cost of a laminar batch).
    """
    dp_lam = np.asarray(dp_lam)
    re = np.asarray(re)
    turb = re > cv.RE_TRANSITION_START
    if not turb.any():
        return dp_lam[()]
    parts = [np.asarray(x, dtype=float)
             for x in (k_minor, l_over_dh, dynamic, friction_multiplier)]
    shape = np.broadcast_shapes(dp_lam.shape, re.shape, *(x.shape for x in parts))
    if dp_lam.shape != shape or re.shape != shape:
        dp_lam, re = np.broadcast_to(dp_lam, shape), np.broadcast_to(re, shape)
        turb = np.broadcast_to(turb, shape)
    k_minor, l_over_dh, dynamic, friction_multiplier = (
        x[turb] if x.shape == shape else np.broadcast_to(x, shape)[turb] for x in parts)
    re_t = re[turb]
    lam = dp_lam[turb]
    f_turb = pd_.friction_fanning_turbulent_smooth(re_t) * friction_multiplier  # re_t > 2300
    turbulent = (k_minor + 4.0 * f_turb * l_over_dh) * dynamic
    w = cv.transition_weight(re_t)
    out = np.array(dp_lam, dtype=float, copy=True)
    out[turb] = (1.0 - w) * lam + w * (lam**5 + turbulent**5) ** 0.2
    return out


def sink_pressure_drop_function(width, length, fin_height, fin_thickness, n_fins,
                                air: AirProperties, hydraulic_diameter="parallel_plates",
                                exit_loss="culham_muzychka", friction_multiplier=1.0,
                                loss_multiplier=1.0):
    r"""``Δp(flow)`` of fixed fin arrays: :func:`sink_hydraulics`'s pressure drop, with every
    geometry- and air-only quantity computed once.

    For the fan operating-point solver, which evaluates the same n sinks at ~10 flows. Same
    formulas as :func:`sink_hydraulics`, regrouped per design as

    .. math:: \Delta p_{lam} = \left(K_c + K_e + \frac{4L}{D_h}
              \frac{\sqrt{3.44^2 D_h Re/L + (fRe)^2}}{Re}\right)\frac{\rho}{2A_c^2} Q^2
              = a Q^2 + c Q \sqrt{d Q + (fRe)^2},
              \quad Re = \frac{\rho D_h}{\mu A_c} Q

    with per-design constants a, c, d (results equal to round-off, ~1e-15 relative); the
    turbulent blend is evaluated only where Re_Dh > 2300.

    Parameters
    ----------
    width, length, fin_height, fin_thickness, n_fins, air, hydraulic_diameter, exit_loss
        As :func:`sink_hydraulics` (arrays broadcast to the n designs) [m], [-].
    friction_multiplier, loss_multiplier : float
        Calibration factors [-], as :func:`sink_hydraulics`.

    Returns
    -------
    callable
        ``dp(flow, index=None)``: volume flow through the fins, shape (n,) or scalar [m^3/s]
        -> static pressure drop [Pa], shape (n,). With ``index`` (an int array) the flows are
        those of the designs ``index`` only; the constants gathered for it are kept and reused
        while the same index object is passed again (the fan solver's calls).

    Examples
    --------
    REF-1 (docs/theory.md#ref-1-golden-case): 65.6113 Pa.

    >>> from sinkopt.physics.air import AirProperties
    >>> air = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)
    >>> dp = sink_pressure_drop_function(0.05, 0.05, 0.025, 0.001, 20, air)
    >>> round(float(dp(0.005)), 4)
    65.6113
    """
    _check_option("hydraulic_diameter", hydraulic_diameter, HYDRAULIC_DIAMETERS)
    _check_option("exit_loss", exit_loss, tuple(pd_.EXIT_LOSS_MODELS))
    h = np.asarray(fin_height, dtype=float)
    length = np.asarray(length, dtype=float)
    b = geo.fin_gap(width, n_fins, fin_thickness)
    inv_area = 1.0 / geo.channel_flow_area(width, n_fins, fin_thickness, h)
    dh = _hydraulic_diameter(b, h, hydraulic_diameter)
    re_per_flow = air.density * dh / air.viscosity * inv_area
    fre = cv.fre_rectangular_duct_shah_london_1978(np.minimum(b, h) / np.maximum(b, h))
    l_over_dh = length / dh
    sigma = geo.open_area_ratio(width, n_fins, fin_thickness)
    k_minor = (pd_.contraction_loss_culham_muzychka_2001(sigma)
               + pd_.EXIT_LOSS_MODELS[exit_loss](sigma)) * loss_multiplier
    dyn_per_flow2 = 0.5 * air.density * inv_area * inv_area
    # laminar: Δp = a Q² + c Q √(d Q + f²), with Re = r Q:
    #   a = (K_c + K_e) ρ/(2A²), c = 4 (L/D_h) ρ/(2A²)/r, d = 3.44² r/(L/D_h), f = f·Re
    quad = k_minor * dyn_per_flow2
    root_mult = 4.0 * l_over_dh * dyn_per_flow2 / re_per_flow * friction_multiplier
    root_lin = 3.44**2 / l_over_dh * re_per_flow
    fre2 = fre * fre
    # turbulent branch (Petukhov f): Δp_turb = (K_c + K_e + 4 f L/D_h) ρ/(2A²) Q² = (a + f m) Q²
    # with m = 4 (L/D_h) ρ/(2A²)
    turb_mult = 4.0 * l_over_dh * dyn_per_flow2 * friction_multiplier
    consts = np.broadcast_arrays(quad, root_mult, root_lin, fre2, re_per_flow, turb_mult)
    scalar = consts[0].ndim == 0
    cache: list = [None, None]  # the last index object and the constants gathered for it
    re_start = cv.RE_TRANSITION_START
    re_scale = 1.0 / (cv.RE_TRANSITION_END - cv.RE_TRANSITION_START)

    def pressure_drop(flow, index=None):
        q = np.asarray(flow, dtype=float)
        if index is None or scalar:
            c, design = consts, None
        elif cache[0] is index:
            c, design = cache[1], index
        else:
            c, design = [x[index] for x in consts[:5]] + [consts[5]], index
            cache[0], cache[1] = index, c
        a, cm, cl, f2, r, tm = c
        q2 = q * q
        dp = a * q2 + cm * q * np.sqrt(cl * q + f2)
        re = q * r
        if dp.ndim == 0:
            if not re > re_start:
                return dp[()]
            return _blend_turbulent(dp, re, k_minor, l_over_dh, dyn_per_flow2 * q2,
                                    friction_multiplier)
        if q.shape != dp.shape:
            q2 = np.broadcast_to(q2, dp.shape)
            re = np.broadcast_to(re, dp.shape)
        i = np.flatnonzero(re > re_start)
        if not i.size:
            return dp
        # _blend_turbulent on the designs with Re_Dh > 2300 only, with the constants above
        j = i if (design is None or tm.ndim == 0) else design[i]
        re_t = re[i]
        lam = dp[i]
        y = 0.790 * np.log(re_t) - 1.64
        f_turb = 0.25 / (y * y)  # Petukhov: pressure_drop.friction_fanning_turbulent_smooth
        turbulent = (a[i] if a.ndim else a) + f_turb * (tm[j] if tm.ndim else tm)
        turbulent *= q2[i]
        w = np.minimum((re_t - re_start) * re_scale, 1.0)  # Re > 2300: no lower clip needed
        w = w * w * (3.0 - 2.0 * w)  # convection.transition_weight
        lam2 = lam * lam
        tu2 = turbulent * turbulent
        dp[i] = (1.0 - w) * lam + w * (lam2 * lam2 * lam + tu2 * tu2 * turbulent) ** 0.2
        return dp

    return pressure_drop


def sink_thermal(width, length, fin_height, fin_thickness, n_fins, flow, air: AirProperties,
                 conductivity, heat_transfer="teertstra", fin_tip="adiabatic",
                 hydraulic_diameter="parallel_plates", heat_transfer_multiplier=1.0) -> Thermal:
    """Thermal resistance from the sink base (assumed isothermal) to the inlet air.

    Parameters
    ----------
    width, length, fin_height, fin_thickness : array_like
        W, L, H, t [m].
    n_fins : array_like
        N [-].
    flow : array_like
        Volume flow through the fin channels [m^3/s].
    air : AirProperties
        Air at the inlet.
    conductivity : array_like
        Sink material conductivity [W/(m K)].
    heat_transfer : str
        One of :data:`HEAT_TRANSFER_MODELS`.
    fin_tip : str
        One of :data:`FIN_TIPS`.
    hydraulic_diameter : str
        Length scale of the turbulent branch (Gnielinski), one of :data:`HYDRAULIC_DIAMETERS`.
    heat_transfer_multiplier : float
        Calibration factor [-] on the channel heat transfer coefficient (laminar and
        turbulent); 1 without calibration (docs/theory.md#calibration-from-measurements). The
        inlet-referenced conductance never exceeds ṁ c_p (the air cannot leave hotter than
        the base).

    Notes
    -----
    Laminar (Teertstra): R = 1/(h (A_b + N η_f A_f)), already inlet referenced.
    Laminar (Muzychka–Yovanovich) and turbulent (Gnielinski with Petukhov friction): an LMTD
    coefficient, turned into an inlet-referenced resistance by effectiveness–NTU,
    R = 1/(ε ṁ c_p), ε = 1 − exp(−NTU), NTU = h (A_b + N η_f A_f)/(ṁ c_p) (docs/theory.md#fan-operating-point).
    Laminar and turbulent conductances are blended between Re_Dh 2300 and 4000
    (:func:`sinkopt.physics.convection.transition_weight`).

    ``resistance_convective`` removes the bulk air heating, R − 1/(2 ṁ c_p) (the first terms of
    1/ε = 1/NTU + 1/2 + NTU/12 + ...), floored at half of R; the model adds the local mixed-mean
    air temperature at each device instead (docs/theory.md#fan-operating-point).

    Examples
    --------
    REF-1 (docs/theory.md#ref-1-golden-case): R_hs = 0.369348 K/W with the adiabatic tip.

    >>> from sinkopt.physics.air import AirProperties
    >>> air = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)
    >>> round(float(sink_thermal(0.05, 0.05, 0.025, 0.001, 20, 0.005, air, 200.0).resistance), 6)
    0.369348
    """
    _check_option("heat_transfer", heat_transfer, HEAT_TRANSFER_MODELS)
    _check_option("fin_tip", fin_tip, FIN_TIPS)
    _check_option("hydraulic_diameter", hydraulic_diameter, HYDRAULIC_DIAMETERS)
    h_fin = np.asarray(fin_height, dtype=float)
    length = np.asarray(length, dtype=float)
    t = np.asarray(fin_thickness, dtype=float)
    n = np.asarray(n_fins, dtype=float)
    k_s = np.asarray(conductivity, dtype=float)
    flow = np.asarray(flow, dtype=float)
    b = geo.fin_gap(width, n, t)
    velocity = flow / geo.channel_flow_area(width, n, t, h_fin)
    nu_kin = air.viscosity / air.density
    pr = air.prandtl
    mcp = air.density * flow * air.heat_capacity
    a_base = geo.exposed_base_area(width, n, t, length)
    if fin_tip == "adiabatic":
        fin_length, a_fin = h_fin, geo.fin_area(h_fin, length)
    else:
        fin_length, a_fin = fn.corrected_fin_length(h_fin, t), geo.fin_area(h_fin, length, t)

    def finned_conductance(h):
        eta = fn.fin_efficiency_straight_rectangular(fn.fin_parameter(h, k_s, t) * fin_length)
        return h * (a_base + n * eta * a_fin), eta

    re_b_star = velocity * b / nu_kin * b / length
    sqrt_area = np.sqrt(b * h_fin)
    z_star = length / (sqrt_area * (velocity * sqrt_area / nu_kin) * pr)
    if heat_transfer == "teertstra":
        h_lam = (cv.nu_plate_fin_teertstra_2000(re_b_star, pr) * air.conductivity / b
                 * heat_transfer_multiplier)
        g_lam, eta_lam = finned_conductance(h_lam)
        if np.any(np.asarray(heat_transfer_multiplier) != 1.0):
            g_lam = np.minimum(g_lam, mcp)
    else:
        aspect = np.minimum(b, h_fin) / np.maximum(b, h_fin)
        nu = cv.nu_sqrt_area_developing_muzychka_yovanovich_2004(z_star, pr, aspect)
        h_lam = nu * air.conductivity / sqrt_area * heat_transfer_multiplier
        ua, eta_lam = finned_conductance(h_lam)
        g_lam = cv.effectiveness_isothermal_wall(ua / mcp) * mcp

    dh = _hydraulic_diameter(b, h_fin, hydraulic_diameter)
    re = velocity * dh / nu_kin
    w = cv.transition_weight(re)

    def turbulent(re, dh, a_base, n, a_fin, fin_length, k_s, t, mcp, multiplier):
        re_t = np.maximum(re, cv.RE_TRANSITION_START)
        h_turb = cv.nu_turbulent_gnielinski_1976(
            re_t, pr, cv.friction_darcy_smooth_petukhov_1970(re_t)) * air.conductivity / dh
        h_turb = h_turb * multiplier
        eta = fn.fin_efficiency_straight_rectangular(fn.fin_parameter(h_turb, k_s, t) * fin_length)
        ua_t = h_turb * (a_base + n * eta * a_fin)
        return h_turb, eta, cv.effectiveness_isothermal_wall(ua_t / mcp) * mcp

    def blend(w, lam, turb):
        return (1.0 - w) * lam + w * turb

    parts = (re, dh, a_base, n, a_fin, fin_length, k_s, t, mcp,
             np.asarray(heat_transfer_multiplier, dtype=float))
    shape = np.broadcast_shapes(*(np.shape(x) for x in parts + (g_lam, h_lam, eta_lam, w)))
    # w = 0 gives the laminar values exactly: the turbulent branch only elsewhere (and at NaN)
    blended = ~(w <= 0)
    if len(shape) == 1 and shape[0] > 64 and not blended.all():
        i = np.flatnonzero(np.broadcast_to(blended, shape))
        sub = [np.broadcast_to(x, shape)[i] for x in parts]
        conductance, h_used, eta_f = (np.array(np.broadcast_to(x, shape), dtype=float)
                                      for x in (g_lam, h_lam, eta_lam))
        h_turb, eta_t, g_turb = turbulent(*sub)
        wi, gl = np.broadcast_to(w, shape)[i], conductance[i]
        conductance[i] = blend(wi, gl, (gl**5 + g_turb**5) ** 0.2)
        h_used[i] = blend(wi, h_used[i], h_turb)
        eta_f[i] = blend(wi, eta_f[i], eta_t)
    else:
        h_turb, eta_t, g_turb = turbulent(*parts)
        conductance = blend(w, g_lam, (g_lam**5 + g_turb**5) ** 0.2)
        h_used = blend(w, h_lam, h_turb)
        eta_f = blend(w, eta_lam, eta_t)
    resistance = 1.0 / conductance
    a_total = a_base + n * a_fin
    eta_o = fn.surface_efficiency(eta_f, n * a_fin, a_total)
    r_conv = np.maximum(resistance - 0.5 / mcp, 0.5 * resistance)
    return Thermal(h_used, eta_f, eta_o, resistance, r_conv, mcp, re_b_star, z_star)

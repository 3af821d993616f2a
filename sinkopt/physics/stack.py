"""Junction-to-base mounting stack of one device: slabs, interfaces and thermal vias in series.

Every function is a pure, vectorised 1-D conduction formula (Fourier's law, heat flowing
through the thickness of each layer over the given area). Spreading in the heat-sink base is
not here; see :mod:`sinkopt.physics.spreading`.
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "resistance_slab",
    "resistance_interface",
    "resistance_via_array",
    "resistance_stack",
    "COPPER_CONDUCTIVITY",
    "FR4_THROUGH_PLANE_CONDUCTIVITY",
]

# Common practice, no source: annealed pure copper is about 385-400 W/(m K); 385 is the usual
# handbook round value. Electroplated via copper can be lower (often quoted 300-350) - pass it.
COPPER_CONDUCTIVITY = 385.0
# Common practice, no source: FR-4 through-plane (z) conductivity about 0.3 W/(m K)
# (in-plane is higher because of the glass weave, irrelevant here).
FR4_THROUGH_PLANE_CONDUCTIVITY = 0.3


def _scalar_out(x):
    """Return a numpy scalar for a 0-d array (a scalar in gives a scalar out)."""
    x = np.asarray(x)
    return x[()] if x.ndim == 0 else x


def resistance_slab(thickness, conductivity, area):
    r"""Conduction resistance of a plane slab, heat flowing through its thickness.

    .. math:: R = \frac{t}{k A}

    Parameters
    ----------
    thickness : array_like
        Slab thickness in the heat-flow direction :math:`t` [m].
    conductivity : array_like
        Thermal conductivity in that direction :math:`k` [W/(m K)].
    area : array_like
        Cross-section normal to the heat flow :math:`A` [m^2].

    Returns
    -------
    R : numpy.ndarray or numpy.float64
        Thermal resistance [K/W], broadcast over the inputs.

    Notes
    -----
    1-D steady conduction (Fourier's law) with uniform temperature on both faces; no lateral
    spreading, so it is a lower bound when the heat enters over a smaller area than ``area``.

    References
    ----------
    .. [1] Fourier's law of conduction; e.g. Incropera, DeWitt et al., Fundamentals of Heat and
       Mass Transfer, ch. 3 (plane wall), from memory [M].

    Examples
    --------
    Base of the project's REF-1 case (docs/theory.md#ref-1-golden-case): 5 mm of k = 200 over 50x50 mm,
    0.005/(200*0.0025) = 0.010 K/W.

    >>> round(float(resistance_slab(0.005, 200.0, 0.05 * 0.05)), 6)
    0.01
    """
    t = np.asarray(thickness, dtype=float)
    return _scalar_out(t / (np.asarray(conductivity, dtype=float) * np.asarray(area, dtype=float)))


def resistance_interface(specific_resistance, area):
    r"""Resistance of a thin interface layer (TIM, pad, contact) from its specific resistance.

    .. math:: R = \frac{r''}{A}

    Parameters
    ----------
    specific_resistance : array_like
        Area-specific thermal resistance :math:`r''` [K m^2/W] (datasheets often give
        K cm^2/W; multiply by 1e-4).
    area : array_like
        Contact area :math:`A` [m^2].

    Returns
    -------
    R : numpy.ndarray or numpy.float64
        Thermal resistance [K/W], broadcast over the inputs.

    Notes
    -----
    The specific resistance lumps bulk conduction and both contact resistances of the layer;
    it is only as good as the datasheet's test pressure and bond line.

    Examples
    --------
    TIM of the project's REF-1 case (docs/theory.md#ref-1-golden-case): 0.1 K cm^2/W over 4 cm^2
    = 0.1e-4/4e-4 = 0.025 K/W.

    >>> round(float(resistance_interface(0.1e-4, 4e-4)), 6)
    0.025
    """
    r_spec = np.asarray(specific_resistance, dtype=float)
    return _scalar_out(r_spec / np.asarray(area, dtype=float))


def resistance_via_array(
    count,
    drill_diameter,
    plating_thickness,
    board_thickness,
    pad_area,
    copper_conductivity=COPPER_CONDUCTIVITY,
    board_conductivity=FR4_THROUGH_PLANE_CONDUCTIVITY,
):
    r"""Through-board resistance of a pad with an array of plated, unfilled thermal vias.

    Each via barrel is a copper annulus, outer radius :math:`d/2`, inner radius
    :math:`d/2 - p`, area :math:`A_v = \pi[(d/2)^2 - (d/2 - p)^2] = \pi p (d - p)`, conducting
    through the board thickness :math:`t`. All barrels act in parallel with each other and with
    the laminate over the rest of the pad, :math:`A_{lam} = A_{pad} - N\pi d^2/4`:

    .. math::

        R = \frac{t}{N k_{Cu} A_v + k_{b} A_{lam}}

    Parameters
    ----------
    count : array_like
        Number of vias under the pad :math:`N` (0 allowed) [-].
    drill_diameter : array_like
        Finished hole outer diameter :math:`d` [m].
    plating_thickness : array_like
        Barrel copper thickness :math:`p`, :math:`0 < p \le d/2` [m].
    board_thickness : array_like
        Board thickness :math:`t` [m].
    pad_area : array_like
        Pad area under the device that the vias sit in :math:`A_{pad}` [m^2].
    copper_conductivity : array_like, optional
        Barrel copper conductivity; default 385 (common practice, no source; plated copper is
        often lower) [W/(m K)].
    board_conductivity : array_like, optional
        Laminate through-plane conductivity; default 0.3 for FR-4 (common practice, no
        source) [W/(m K)].

    Returns
    -------
    R : numpy.ndarray or numpy.float64
        Thermal resistance pad-side copper to far-side copper [K/W]; NaN where the holes do not
        fit in the pad (:math:`N\pi d^2/4 > A_{pad}`) or the plating exceeds the radius.

    Notes
    -----
    Assumptions: 1-D conduction through the board; both faces isothermal over the pad (thick
    pad and plane copper); air core of the unfilled via neglected (solder- or epoxy-filled vias
    conduct more); surface copper layers, solder mask and lateral spreading not included (add
    them as slabs). ``plating_thickness = drill_diameter/2`` is a solid copper cylinder.

    References
    ----------
    .. [1] Fourier's law for each parallel path; annulus area
       :math:`\pi(r_o^2 - r_i^2)` (plane geometry).

    Examples
    --------
    One via, 0.3 mm drill, 25 um plating, 1.6 mm board, pad equal to the hole (no laminate):
    A_v = pi*25e-6*275e-6 = 2.15984e-8 m^2, R = 1.6e-3/(385*2.15984e-8) = 192.41 K/W.

    >>> round(float(resistance_via_array(1, 0.3e-3, 25e-6, 1.6e-3,
    ...                                  3.141592653589793 * 0.3e-3**2 / 4)), 2)
    192.41
    """
    n = np.asarray(count, dtype=float)
    d = np.asarray(drill_diameter, dtype=float)
    p = np.asarray(plating_thickness, dtype=float)
    barrel_area = np.pi * p * (d - p)
    laminate_area = np.asarray(pad_area, dtype=float) - n * np.pi * d**2 / 4
    conductance_per_length = (
        n * np.asarray(copper_conductivity, dtype=float) * barrel_area
        + np.asarray(board_conductivity, dtype=float) * laminate_area
    )
    r = np.asarray(board_thickness, dtype=float) / conductance_per_length
    # Geometry that cannot exist gives NaN rather than a plausible-looking number.
    impossible = (laminate_area < 0) | (p > d / 2)
    return _scalar_out(np.where(impossible, np.nan, r))


def resistance_stack(resistances):
    r"""Total resistance of layers in series.

    .. math:: R = \sum_i R_i

    Parameters
    ----------
    resistances : sequence of array_like
        Layer resistances, each a scalar or an array; all are broadcast together [K/W].

    Returns
    -------
    R : numpy.ndarray or numpy.float64
        Sum of the layer resistances [K/W], the broadcast shape of the layers.

    Notes
    -----
    Series layers carry the same heat, so resistances add. An empty sequence gives 0.0.

    Examples
    --------
    Junction to base of the project's REF-1 case (docs/theory.md#ref-1-golden-case):
    R_jc 0.30 + TIM 0.025 = 0.325 K/W.

    >>> round(float(resistance_stack([0.30, resistance_interface(0.1e-4, 4e-4)])), 6)
    0.325
    """
    layers = [np.asarray(r, dtype=float) for r in resistances]
    if not layers:
        return np.float64(0.0)
    return _scalar_out(sum(np.broadcast_arrays(*layers)))

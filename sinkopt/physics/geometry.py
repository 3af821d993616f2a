"""Plate-fin heatsink geometry: fin gap, channel hydraulic diameter, open-area ratio, areas,
envelope volume and mass.

Symbols (docs/theory.md): W base width across the flow, L flow length, H fin height, N fins,
t fin thickness, t_b base thickness, b = (W − N t)/(N − 1) fin gap, N − 1 channels.
All arrays broadcast; lengths in [m]. These functions trust their inputs: the model layer checks
that a geometry can exist before calling them (:func:`sinkopt.model.check_geometry`).
"""
from __future__ import annotations

import numpy as np

__all__ = [
    "fin_gap",
    "channel_count",
    "channel_flow_area",
    "hydraulic_diameter_parallel_plates",
    "hydraulic_diameter_rectangular_channel",
    "open_area_ratio",
    "fin_area",
    "exposed_base_area",
    "envelope_volume",
    "sink_mass",
    "fin_aspect_ratio",
]


def fin_gap(width, n_fins, fin_thickness):
    """Clear gap between adjacent fins, b = (W − N t)/(N − 1) [m].

    Parameters
    ----------
    width : array_like
        Base width across the flow, W [m].
    n_fins : array_like
        Number of fins, N [-] (>= 2).
    fin_thickness : array_like
        Fin thickness, t [m].

    Examples
    --------
    REF-1 of docs/theory.md#ref-1-golden-case (W = 50 mm, N = 20, t = 1 mm):

    >>> round(float(fin_gap(0.05, 20, 0.001)) * 1e3, 6)
    1.578947
    """
    w, n, t = (np.asarray(x, dtype=float) for x in (width, n_fins, fin_thickness))
    return ((w - n * t) / (n - 1.0))[()]


def channel_count(n_fins):
    """Number of flow channels between fins, N − 1 [-]."""
    return (np.asarray(n_fins, dtype=float) - 1.0)[()]


def channel_flow_area(width, n_fins, fin_thickness, fin_height):
    """Total free-flow area between the fins, (N − 1) b H [m^2].

    Examples
    --------
    >>> round(float(channel_flow_area(0.05, 20, 0.001, 0.025)), 8)
    0.00075
    """
    b = fin_gap(width, n_fins, fin_thickness)
    return (channel_count(n_fins) * b * np.asarray(fin_height, dtype=float))[()]


def hydraulic_diameter_parallel_plates(gap):
    """Hydraulic diameter of a parallel-plate channel, D_h = 2 b [m].

    This is the convention of Culham & Muzychka (2001) and Simons (2003); the fin-height sides of
    the channel are neglected.
    """
    return (2.0 * np.asarray(gap, dtype=float))[()]


def hydraulic_diameter_rectangular_channel(gap, fin_height):
    """Hydraulic diameter of a rectangular channel b × H, D_h = 4 b H / (2 (b + H)) [m].

    Consistent with the rectangular-duct f·Re of Shah & London (1978).

    Examples
    --------
    REF-1 (b = 1.578947 mm, H = 25 mm) gives 2.970297 mm:

    >>> round(float(hydraulic_diameter_rectangular_channel(0.05 / 19 * 0.6, 0.025)) * 1e3, 6)
    2.970297
    """
    b = np.asarray(gap, dtype=float)
    h = np.asarray(fin_height, dtype=float)
    return (2.0 * b * h / (b + h))[()]


def open_area_ratio(width, n_fins, fin_thickness):
    """Fraction of the fin-region face open to flow, σ = 1 − N t / W [-].

    Examples
    --------
    >>> round(float(open_area_ratio(0.05, 20, 0.001)), 12)
    0.6
    """
    w, n, t = (np.asarray(x, dtype=float) for x in (width, n_fins, fin_thickness))
    return (1.0 - n * t / w)[()]


def fin_area(fin_height, length, fin_thickness=0.0):
    """Wetted area of one fin, 2 L_c L with L_c = H + t/2 when a thickness is given [m^2].

    Pass ``fin_thickness=0`` for the adiabatic-tip area 2 H L.
    """
    lc = np.asarray(fin_height, dtype=float) + 0.5 * np.asarray(fin_thickness, dtype=float)
    return (2.0 * lc * np.asarray(length, dtype=float))[()]


def exposed_base_area(width, n_fins, fin_thickness, length):
    """Base area between the fins, (N − 1) b L [m^2]."""
    b = fin_gap(width, n_fins, fin_thickness)
    return (channel_count(n_fins) * b * np.asarray(length, dtype=float))[()]


def envelope_volume(width, length, fin_height, base_thickness):
    """Volume of the sink's bounding box, W L (H + t_b) [m^3]."""
    w, l, h, tb = (np.asarray(x, dtype=float) for x in (width, length, fin_height, base_thickness))
    return (w * l * (h + tb))[()]


def sink_mass(width, length, fin_height, base_thickness, n_fins, fin_thickness, density):
    """Mass of base plus fins, ρ (W L t_b + N t H L) [kg].

    Examples
    --------
    REF-1 sink in 6063 aluminium (2700 kg/m^3): 2700 (0.05·0.05·0.005 + 20·0.001·0.025·0.05)

    >>> round(float(sink_mass(0.05, 0.05, 0.025, 0.005, 20, 0.001, 2700.0)), 6)
    0.10125
    """
    w, l, h, tb, n, t, rho = (np.asarray(x, dtype=float) for x in
                              (width, length, fin_height, base_thickness, n_fins, fin_thickness,
                               density))
    return (rho * (w * l * tb + n * t * h * l))[()]


def fin_aspect_ratio(fin_height, gap):
    """Fin height over fin gap, H/b [-]: the figure extrusion dies are limited by."""
    return (np.asarray(fin_height, dtype=float) / np.asarray(gap, dtype=float))[()]

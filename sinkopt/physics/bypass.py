"""Flow bypass around a sink that does not fill its duct: the lossless-bypass model.

**Lower confidence** than the fully ducted model: docs/theory.md#flow-bypass labels it ±30 % (from memory).
"""
from __future__ import annotations

from typing import Callable

import numpy as np

__all__ = ["flow_fraction_lossless_bypass"]


def flow_fraction_lossless_bypass(sink_dp: Callable[[np.ndarray], np.ndarray], geometry,
                                  flow_total, duct_area, density, iterations: int = 60,
                                  base_in_airstream: bool = False):
    r"""Fraction of a duct's flow that passes through the fins when the rest bypasses them.

    The two streams leave a common inlet plenum and re-merge at equal static pressure, the
    bypass stream without loss (Simons & Schmidt 1997; Lee 1995; Copeland 2000 — all from
    memory; algebra derived and checked in docs/theory.md#flow-bypass):

    .. math:: Q = V_f A_f + V_b A_b, \qquad \Delta p_{hs}(V_f A_f) = \tfrac12\rho(V_b^2 - V_f^2)

    with A_f = (N − 1) b H the free area between the fins and A_b = A_duct − W H the duct area
    beside and above the fin region (A_duct − W (H + t_b) when the base stands in the duct's
    section too, ``base_in_airstream``).

    Parameters
    ----------
    sink_dp : callable
        ``sink_dp(q_fins) -> dp`` [m^3/s] -> [Pa] for the n sinks, shape (n,), increasing.
    geometry : SinkGeometry
        The n sinks (W, H, N, t used for the areas).
    flow_total : array_like
        Total duct flow per design [m^3/s].
    duct_area : float
        Duct cross-section around the sink [m^2]; must exceed W H.
    density : float
        Air density [kg/m^3].
    base_in_airstream : bool
        The base blocks part of the duct's section (a sink standing in a wind tunnel), rather
        than lying flush with a duct wall or a board.

    Returns
    -------
    numpy.ndarray
        Q_fins / Q in (0, 1) [-]; 1 where the duct leaves no bypass area.

    Notes
    -----
    The residual Δp_hs(V_f) − ½ρ(V_b² − V_f²) rises monotonically from −½ρ(Q/A_b)² at V_f = 0 to
    a positive value at V_f = Q/A_f, so the root is unique; vectorised bisection finds it.
    As A_b → 0 the model reduces to the ducted sink.

    Examples
    --------
    docs/theory.md#flow-bypass (REF-1 fins in a 60 × 35 mm duct at 3 m/s): fin flow fraction 0.27081.

    >>> from sinkopt.model.design import SinkGeometry
    >>> from sinkopt.physics.air import AirProperties
    >>> from sinkopt.physics.heatsink import sink_hydraulics
    >>> air = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)
    >>> g = SinkGeometry.of(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001,
    ...                     n_fins=20, base_thickness=0.005)
    >>> dp = lambda q: sink_hydraulics(g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins, q, air).pressure_drop
    >>> round(float(flow_fraction_lossless_bypass(dp, g, 6.3e-3, 2.1e-3, 1.184318)[0]), 5)
    0.27081
    """
    q = np.asarray(flow_total, dtype=float)
    g = geometry
    a_fins = (g.n_fins - 1) * (g.width - g.n_fins * g.fin_thickness) / (g.n_fins - 1) * g.fin_height
    blocked = g.width * (g.fin_height + (g.base_thickness if base_in_airstream else 0.0))
    a_bypass = duct_area - blocked
    if np.all(a_bypass <= 0):
        return np.ones_like(q)
    a_bypass = np.maximum(a_bypass, 1e-12)
    lo = np.zeros_like(q)
    hi = np.ones_like(q)
    for _ in range(iterations):
        x = 0.5 * (lo + hi)
        v_f = x * q / a_fins
        v_b = (1.0 - x) * q / a_bypass
        r = sink_dp(x * q) - 0.5 * density * (v_b**2 - v_f**2)
        hi = np.where(r > 0, x, hi)
        lo = np.where(r > 0, lo, x)
    return np.where(duct_area - blocked > 0, 0.5 * (lo + hi), 1.0)

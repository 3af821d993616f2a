"""Transient thermal RC networks: Foster and Cauer ladders, their conversion, and the exact
response of a linear RC network to piecewise-constant power (issue 13: fans stopped).

Temperatures are rises above a fixed ambient [K]; the ambient node is eliminated, so a
conductance to ambient sits on the diagonal of G only. Conductances [W/K], capacitances [J/K],
powers [W], times [s]. Batches: leading dimensions of every array broadcast together ("...").

State space: C dT/dt = P − G T, with G symmetric positive (semi-)definite and C > 0 diagonal.
With S = C^(-1/2) and S G S = V Λ V^T (symmetric eigen-decomposition), the modal coordinates
z = V^T C^(1/2) T decouple, and over an interval of constant P

    z(t0 + d) = exp(−Λ d) z(t0) + Λ^(-1) (1 − exp(−Λ d)) V^T S P,

which is exact (no time step); a zero eigenvalue (no path to ambient) gives the limit d V^T S P.
"""
from __future__ import annotations

from fractions import Fraction
from typing import NamedTuple

import numpy as np

__all__ = [
    "PowerSchedule",
    "impedance_foster",
    "build_ladder",
    "cauer_to_foster",
    "foster_to_cauer",
    "simulate",
    "time_to_limit",
    "periodic_state",
    "peak_rise",
    "network_modes",
]


class PowerSchedule(NamedTuple):
    """Piecewise-constant power: segment j holds ``power[..., j, :]`` from ``starts[j]`` to
    ``starts[j + 1]`` (the last segment forever)."""

    starts: np.ndarray  #: (m,) segment start times [s], increasing, starts[0] = 0
    power: np.ndarray  #: (..., m, n) power into each node [W]


def impedance_foster(resistances, time_constants, t):
    r"""Step-response thermal impedance of a Foster network,
    :math:`Z(t) = \sum_i R_i\,(1 - e^{-t/\tau_i})`.

    Parameters
    ----------
    resistances : array_like
        R_i, shape (..., n) [K/W].
    time_constants : array_like
        τ_i = R_i C_i, shape (..., n) [s].
    t : array_like
        Times ≥ 0 [s], any shape.

    Returns
    -------
    numpy.ndarray
        Z, shape (...) + t.shape [K/W].

    Examples
    --------
    One stage, R = 2 K/W, τ = 1 s, at t = τ: 2 (1 − e^(−1)) = 1.2642411 by hand:

    >>> round(float(impedance_foster([2.0], [1.0], 1.0)), 7)
    1.2642411
    """
    r = np.asarray(resistances, dtype=float)
    tau = np.asarray(time_constants, dtype=float)
    t = np.asarray(t, dtype=float)
    shape = np.broadcast_shapes(r.shape, tau.shape)
    r = np.broadcast_to(r, shape)
    tau = np.broadcast_to(tau, shape)
    lead = shape[:-1]
    r = r.reshape(lead + (1,) * t.ndim + shape[-1:])
    tau = tau.reshape(lead + (1,) * t.ndim + shape[-1:])
    return np.sum(-r * np.expm1(-t[..., None] / tau), axis=-1)[()]


def build_ladder(resistances, capacitances):
    r"""Conductance matrix of a Cauer ladder (chain): node k has capacitance C_k to the
    reference, R_k joins node k to node k + 1, and the last R joins the last node to ambient.

    Parameters
    ----------
    resistances : array_like
        R_k, shape (..., n) [K/W]; R_{n−1} is the resistance of the last node to ambient.
    capacitances : array_like
        C_k, shape (..., n) [J/K].

    Returns
    -------
    G : numpy.ndarray
        (..., n, n) conductance matrix [W/K] (ambient eliminated).
    C : numpy.ndarray
        (..., n) capacitances [J/K].

    Examples
    --------
    Two nodes, R = (1, 2) K/W: G = [[1, −1], [−1, 1.5]]:

    >>> G, C = build_ladder([1.0, 2.0], [1.0, 1.0])
    >>> G.tolist()
    [[1.0, -1.0], [-1.0, 1.5]]
    """
    r = np.asarray(resistances, dtype=float)
    c = np.asarray(capacitances, dtype=float)
    shape = np.broadcast_shapes(r.shape, c.shape)
    g = 1.0 / np.broadcast_to(r, shape)
    n = shape[-1]
    diag = g.copy()
    diag[..., 1:] += g[..., :-1]
    big = np.zeros(shape + (n,))
    idx = np.arange(n)
    big[..., idx, idx] = diag
    big[..., idx[:-1], idx[1:]] = -g[..., :-1]
    big[..., idx[1:], idx[:-1]] = -g[..., :-1]
    return big, np.array(np.broadcast_to(c, shape))


def network_modes(G, C):
    """The modes (λ, V, C^-1/2) of networks (..., n, n), to pass as ``modes=`` to
    :func:`simulate`, :func:`time_to_limit` and :func:`peak_rise` when one network is solved
    many times (the symmetric eigen-decomposition is most of the cost)."""
    return _modes(G, C)


def _modes(conductance, capacitance):
    """Eigenvalues λ (..., n) ≥ 0, eigenvectors V (..., n, n) of C^-1/2 G C^-1/2, and C^-1/2."""
    g = np.asarray(conductance, dtype=float)
    c = np.asarray(capacitance, dtype=float)
    s = 1.0 / np.sqrt(c)
    m = s[..., :, None] * g * s[..., None, :]
    m = 0.5 * (m + np.swapaxes(m, -1, -2))
    lam, v = np.linalg.eigh(m)
    # Round-off can leave a zero eigenvalue (no path to ambient) slightly negative.
    tiny = 1e-13 * np.max(np.abs(lam), axis=-1, keepdims=True)
    lam = np.where(lam < tiny, 0.0, lam)
    return lam, v, s


def cauer_to_foster(resistances, capacitances):
    r"""Foster network (R_i, τ_i) with the same driving-point impedance, seen from node 0, as a
    Cauer ladder (:func:`build_ladder`).

    Parameters
    ----------
    resistances, capacitances : array_like
        Cauer R_k [K/W], C_k [J/K], shape (..., n).

    Returns
    -------
    R : numpy.ndarray
        Foster resistances, shape (..., n) [K/W], ordered by increasing τ.
    tau : numpy.ndarray
        Foster time constants, shape (..., n) [s], increasing.

    Notes
    -----
    Z(s) = e_0^T (sC + G)^(-1) e_0 = Σ_i (V_0i^2/C_0)/(s + λ_i), so τ_i = 1/λ_i and
    R_i = V_0i^2/(C_0 λ_i) with (λ, V) the eigen-pairs of C^(-1/2) G C^(-1/2) (the poles of a
    ladder are real and negative). Σ R_i = Σ R_k (the steady state).

    Examples
    --------
    One stage: R = 2 K/W, C = 3 J/K is a Foster stage of τ = 6 s:

    >>> r, tau = cauer_to_foster([2.0], [3.0])
    >>> round(float(r[0]), 12), round(float(tau[0]), 12)
    (2.0, 6.0)
    """
    g, c = build_ladder(resistances, capacitances)
    lam, v, _ = _modes(g, c)
    r = v[..., 0, :] ** 2 / (c[..., :1] * lam)
    tau = 1.0 / lam
    return r[..., ::-1].copy(), tau[..., ::-1].copy()


def _poly_mul(a, b):
    out = [Fraction(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            out[i + j] += x * y
    return out


def _foster_to_cauer_one(r, tau):
    """Exact-rational Cauer I synthesis of one Foster network (1-D float arrays)."""
    rf = [Fraction(float(x)) for x in r]
    tf = [Fraction(float(x)) for x in tau]
    n = len(rf)
    if any(x <= 0 for x in rf + tf):
        raise ValueError("Foster resistances and time constants must be positive")
    if len(set(tf)) != n:
        raise ValueError("Foster time constants must be distinct (merge equal ones first)")
    # Z(s) = num(s)/den(s), coefficient lists in ascending powers of s.
    den = [Fraction(1)]
    for t in tf:
        den = _poly_mul(den, [Fraction(1), t])
    num = [Fraction(0)] * n
    for i in range(n):
        term = [rf[i]]
        for j in range(n):
            if j != i:
                term = _poly_mul(term, [Fraction(1), tf[j]])
        num = [a + b for a, b in zip(num, term)]
    r_out, c_out = [], []
    for _ in range(n):
        # Y = den/num = s C + den'/num   (deg den = deg num + 1)
        c_k = den[-1] / num[-1]
        shifted = [Fraction(0)] + [c_k * x for x in num]
        rem = [a - b for a, b in zip(den, shifted)][:-1]  # top coefficient cancels exactly
        # num/rem = R + num'/rem   (equal degrees)
        r_k = num[-1] / rem[-1]
        num = [a - r_k * b for a, b in zip(num, rem)][:-1]
        den = rem
        c_out.append(c_k)
        r_out.append(r_k)
    return [float(x) for x in r_out], [float(x) for x in c_out]


def foster_to_cauer(resistances, time_constants):
    r"""Cauer ladder (R_k, C_k) with the same driving-point impedance as a Foster network.

    .. math:: Z(s) = \sum_i \frac{R_i}{1 + s\tau_i} = \cfrac{1}{sC_1 + \cfrac{1}{R_1 +
              \cfrac{1}{sC_2 + \cfrac{1}{R_2 + \dots + \cfrac{1}{sC_n + \cfrac{1}{R_n}}}}}}

    Parameters
    ----------
    resistances : array_like
        Foster R_i > 0, shape (..., n) [K/W].
    time_constants : array_like
        Foster τ_i > 0, distinct, shape (..., n) [s].

    Returns
    -------
    R : numpy.ndarray
        Cauer resistances, shape (..., n) [K/W]; R_n joins the last node to ambient.
    C : numpy.ndarray
        Cauer capacitances, shape (..., n) [J/K]; C_1 at the driven node.

    Notes
    -----
    Cauer I synthesis by the polynomial continued fraction (Euclid's algorithm): Z = N/D with
    deg D = n, deg N = n − 1; repeatedly C_k = lead(D)/lead(N), D' = D − s C_k N, then
    R_k = lead(N)/lead(D'), N' = N − R_k D'. The division is notoriously ill-conditioned in
    floating point when the τ_i span decades; here it runs in **exact rational arithmetic**
    (:class:`fractions.Fraction` of the given floats), so the only rounding is the final
    conversion of each element to float. Cost O(n^3) big-rational operations per network; fine
    for the 3–20 stages of a thermal model. Loops over the leading dimensions.

    References
    ----------
    Cauer, W., "Die Verwirklichung von Wechselstromwiderständen vorgeschriebener
    Frequenzabhängigkeit", Archiv für Elektrotechnik 17:355–388, 1926 (from memory): the
    ladder as the Stieltjes continued fraction of Z(s). The same Foster→Cauer step is used in
    thermal structure-function analysis (JEDEC JESD51-14, 2010, from memory); no specific
    thermal paper's variant was checked.

    Examples
    --------
    Two analytic identities: Σ R_k = Σ R_i (steady state) and C_1 = 1/Σ(R_i/τ_i) (Z → 1/(s C_1)
    at high frequency). R = (1, 1), τ = (1, 10): Σ R = 2, C_1 = 1/1.1:

    >>> r, c = foster_to_cauer([1.0, 1.0], [1.0, 10.0])
    >>> round(float(r.sum()), 12), round(float(c[0]), 12)
    (2.0, 0.909090909091)
    """
    r = np.asarray(resistances, dtype=float)
    tau = np.asarray(time_constants, dtype=float)
    shape = np.broadcast_shapes(r.shape, tau.shape)
    r = np.broadcast_to(r, shape)
    tau = np.broadcast_to(tau, shape)
    r_out = np.empty(shape)
    c_out = np.empty(shape)
    for index in np.ndindex(shape[:-1]):
        r_out[index], c_out[index] = _foster_to_cauer_one(r[index], tau[index])
    return r_out, c_out


def _propagate(lam, z, f, d):
    """Modal state after a time d at constant forcing f (all arrays broadcast; d ≥ 0)."""
    x = lam * d
    decay = np.exp(-x)
    safe = np.where(lam > 0.0, lam, 1.0)
    phi = np.where(lam > 0.0, -np.expm1(-x) / safe, d)
    return decay * z + phi * f


def _schedule(p_segments):
    starts = np.atleast_1d(np.asarray(p_segments[0], dtype=float))
    power = np.asarray(p_segments[1], dtype=float)
    if starts[0] != 0.0 or np.any(np.diff(starts) <= 0.0):
        raise ValueError("segment starts must begin at 0 and increase")
    if power.shape[-2] != starts.size:
        raise ValueError(f"power has {power.shape[-2]} segments, starts has {starts.size}")
    return starts, power


def _start(G, C, P_segments, T0, modes, *extra_shapes):
    """Shared set-up of the solvers: the schedule, the batch shape, the modes and the modal
    initial state z0 (broadcast to the batch)."""
    starts, power = _schedule(P_segments)
    g = np.asarray(G, dtype=float)
    c = np.asarray(C, dtype=float)
    n = g.shape[-1]
    batch = np.broadcast_shapes(g.shape[:-2], c.shape[:-1], power.shape[:-2], *extra_shapes,
                                () if T0 is None else np.shape(T0)[:-1])
    lam, v, s = modes if modes is not None else _modes(g, c)
    t0 = np.zeros(batch + (n,)) if T0 is None else np.asarray(T0, dtype=float)
    z = np.broadcast_to(np.einsum("...ni,...n->...i", v, t0 / s), batch + (n,))
    return starts, power, batch, n, lam, v, s, z


def simulate(G, C, P_segments, t_out, T0=None, modes=None):
    r"""Exact temperature rises of a linear RC network under piecewise-constant power.

    Parameters
    ----------
    G : array_like
        Symmetric conductance matrix, shape (..., n, n) [W/K]; conductances to ambient on the
        diagonal only (e.g. from :func:`build_ladder`).
    C : array_like
        Node capacitances > 0, shape (..., n) [J/K]. (Massless nodes must be eliminated first.)
    P_segments : PowerSchedule or (starts, power)
        starts (m,) [s] from 0, increasing; power (..., m, n) [W].
    t_out : array_like
        Output times ≥ 0, shape (k,) [s], any order.
    T0 : array_like, optional
        Initial rises, shape (..., n) [K]; zero by default.
    modes : tuple, optional
        :func:`network_modes` of (G, C), when already known.

    Returns
    -------
    numpy.ndarray
        Temperature rises, shape (...) + (k, n) [K].

    Notes
    -----
    Modal solution of the module docstring: one symmetric eigen-decomposition per network, then
    closed-form evaluation of all output times of each segment at once (no time stepping). The
    long-time limit of a segment is G^(-1) P (when G is nonsingular).

    Examples
    --------
    One node, R = 2 K/W, C = 3 J/K, 1 W from t = 0: T = P R (1 − e^(−t/RC)); at t = 6 s,
    2 (1 − e^(−1)) = 1.2642411:

    >>> round(float(simulate([[0.5]], [3.0], ([0.0], [[1.0]]), [6.0])[0, 0]), 7)
    1.2642411
    """
    t_out = np.atleast_1d(np.asarray(t_out, dtype=float))
    starts, power, batch, n, lam, v, s, z = _start(G, C, P_segments, T0, modes)
    out = np.empty(batch + (t_out.size, n))
    m = starts.size
    for j in range(m):
        f = np.einsum("...ni,...n->...i", v, s * power[..., j, :])
        end = starts[j + 1] if j + 1 < m else np.inf
        mask = (t_out >= starts[j]) & (t_out < end)
        if j == 0:
            mask |= t_out < starts[0]
        if mask.any():
            d = np.maximum(t_out[mask] - starts[j], 0.0)[:, None]
            zt = _propagate(lam[..., None, :], z[..., None, :], f[..., None, :], d)
            temps = s[..., None, :] * np.einsum("...ni,...qi->...qn", v, zt)
            out[..., mask, :] = temps
        if j + 1 < m:
            z = _propagate(lam, z, f, end - starts[j])
    return out


def time_to_limit(G, C, P_segments, limit, node=0, T0=None, t_end=None, grid_points=256,
                  modes=None):
    r"""First time at which a node's temperature rise reaches ``limit`` (exact network
    solution, bracketed on a grid and refined by bisection).

    Parameters
    ----------
    G, C, P_segments, T0, modes :
        As for :func:`simulate`.
    limit : array_like
        Temperature-rise limit of the node [K], broadcast over the batch.
    node : int
        Index of the watched node.
    t_end : float, optional
        Stop searching at this time [s]. Default: the last segment is searched for 40 of the
        network's longest time constants after it starts (the response is then within e^-40 of
        its steady state); required when G is singular (no path to ambient).
    grid_points : int
        Log-spaced bracketing points per segment.

    Returns
    -------
    numpy.ndarray
        Time [s], shape (...); 0 if the node starts at or above the limit, ``inf`` if the limit
        is not reached.

    Notes
    -----
    Between grid points the bracket is refined by 80 bisection steps on the exact solution.
    From rest (or from a steady state) under a power step that is ≥ 0 at every node, every
    node's rise is monotone in time (e^(−C^-1 G t) has non-negative entries: −C^-1 G is a
    Metzler matrix), so there is one crossing and the result is exact to round-off. With power
    decreasing between segments, a crossing shorter than the grid spacing could be missed.

    Examples
    --------
    One node, R = 2 K/W, C = 3 J/K, 1 W: the limit 1 K is reached at t = −RC ln(1 − 1/2) =
    6 ln 2 = 4.158883 s:

    >>> round(float(time_to_limit([[0.5]], [3.0], ([0.0], [[1.0]]), 1.0)), 6)
    4.158883
    """
    starts, power, batch, n, lam, v, s, z = _start(G, C, P_segments, T0, modes, np.shape(limit))
    limit = np.broadcast_to(np.asarray(limit, dtype=float), batch)
    lam = np.broadcast_to(lam, batch + (n,))
    row = np.broadcast_to(s[..., node, None] * v[..., node, :], batch + (n,))  # T_node = row·z
    positive = lam[lam > 0.0]
    if t_end is None and (positive.size < lam.size):
        raise ValueError("t_end is required when a network has no path to ambient")
    tau_max = 1.0 / positive.min() if positive.size else np.inf
    tau_min = 1.0 / positive.max() if positive.size else 1.0
    result = np.where(np.sum(row * z, axis=-1) >= limit, 0.0, np.inf)
    m = starts.size
    for j in range(m):
        if np.all(np.isfinite(result)):
            break
        f = np.broadcast_to(np.einsum("...ni,...n->...i", v, s * power[..., j, :]), batch + (n,))
        end = starts[j + 1] if j + 1 < m else starts[j] + 40.0 * tau_max
        if t_end is not None:
            end = min(end, t_end)
        span = end - starts[j]
        if span <= 0.0:
            break
        grid = np.concatenate([[0.0], np.geomspace(min(span * 1e-9, tau_min * 1e-3), span,
                                                   grid_points)])
        zt = _propagate(lam[..., None, :], z[..., None, :], f[..., None, :], grid[:, None])
        temps = np.sum(row[..., None, :] * zt, axis=-1)  # (..., q)
        above = temps >= limit[..., None]
        hit = above.any(axis=-1) & ~np.isfinite(result)
        first = np.argmax(above, axis=-1)
        lo = grid[np.maximum(first - 1, 0)]
        hi = grid[first]
        for _ in range(80):
            mid = 0.5 * (lo + hi)
            t_mid = np.sum(row * _propagate(lam, z, f, mid[..., None]), axis=-1)
            up = t_mid >= limit
            hi = np.where(up, mid, hi)
            lo = np.where(up, lo, mid)
        result = np.where(hit, starts[j] + hi, result)
        if j + 1 < m:
            z = _propagate(lam, z, f, starts[j + 1] - starts[j])
    return result[()]


def periodic_state(G, C, P_segments, period):
    r"""The state at the start of each period when a power schedule repeats forever: the fixed
    point T0 = Φ(T0) of the one-period map Φ (exact network solution, :func:`simulate`).

    Φ is affine, Φ(T) = A T + b, so T0 = (I − A)^(-1) b with b = Φ(0) and the columns of A from
    the unit initial states; this needs every mode to decay (a path to ambient).

    Parameters
    ----------
    G, C, P_segments :
        As for :func:`simulate`; the segments must start before ``period``.
    period : float
        Length of one repetition [s].

    Returns
    -------
    numpy.ndarray
        Rises at the start of a period, shape (..., n) [K].

    Examples
    --------
    One node (R = 1 K/W, C = 1 J/K) with 2 W for half of a 2 s period and none for the other
    half: T0 = 2 (1 − e^(−1)) e^(−1) / (1 − e^(−2)) = 0.5378828 K (closed form of the geometric
    series of the repeated pulse):

    >>> round(float(periodic_state([[1.0]], [1.0], ([0.0, 1.0], [[2.0], [0.0]]), 2.0)[0]), 7)
    0.5378828
    """
    starts, power = _schedule(P_segments)
    if not starts[-1] < period:
        raise ValueError("the period must end after the last segment starts")
    g = np.asarray(G, dtype=float)
    c = np.asarray(C, dtype=float)
    n = g.shape[-1]
    batch = np.broadcast_shapes(g.shape[:-2], c.shape[:-1], power.shape[:-2])
    # Φ of the zero state and of the n unit states in one batched call
    t0 = np.concatenate([np.zeros((1, n)), np.eye(n)], axis=0).reshape((n + 1,) + (1,) * len(batch)
                                                                          + (n,))
    end = simulate(g[None], c[None], (starts, power[None]), np.array([period]),
                   T0=np.broadcast_to(t0, (n + 1,) + batch + (n,)))[..., 0, :]
    b = end[0]
    a = np.moveaxis(end[1:] - b[None], 0, -1)  # (..., n, n): column i is Φ(e_i) − b
    return np.linalg.solve(np.eye(n) - a, b[..., None])[..., 0]


def peak_rise(G, C, P_segments, t_end, nodes, T0=None, points=16, modes=None):
    r"""Highest rise of the given nodes over [0, t_end] under piecewise-constant power, and
    when it occurs.

    Parameters
    ----------
    G, C, P_segments, T0, modes :
        As for :func:`simulate`.
    t_end : float
        End of the interval [s].
    nodes : sequence of int
        Watched node indices (p of them).
    points : int
        Log-spaced sample times per segment (plus its ends).

    Returns
    -------
    (numpy.ndarray, numpy.ndarray)
        Peak rises [K] and their times [s], each of shape (..., p).

    Notes
    -----
    Each segment is sampled at its start, its end and ``points`` times spaced geometrically
    from 10^-4 of its length (the fast junction modes act at its start); the best sample of
    each node is refined by golden-section search between its neighbours on the exact solution,
    which finds the maximum of a response with one hump between samples. Memory is
    O(batch × points × n) whatever the number of segments.

    Examples
    --------
    One node (R = 2 K/W, C = 3 J/K), 1 W for 6 s and then nothing: the peak is at the end of
    the pulse, 2 (1 − e^(−1)) = 1.2642411 K at 6 s:

    >>> peak, when = peak_rise([[0.5]], [3.0], ([0.0, 6.0], [[1.0], [0.0]]), 20.0, [0])
    >>> round(float(peak[0]), 7), round(float(when[0]), 6)
    (1.2642411, 6.0)
    """
    nodes = np.atleast_1d(np.asarray(nodes, dtype=int))
    starts, power, batch, n, lam, v, s, z = _start(G, C, P_segments, T0, modes)
    lam = np.broadcast_to(lam, batch + (n,))
    rows = np.broadcast_to(s[..., nodes, None] * v[..., nodes, :], batch + (nodes.size, n))
    best = np.einsum("...pi,...i->...p", rows, z)
    when = np.zeros(batch + (nodes.size,))
    golden = (np.sqrt(5.0) - 1.0) / 2.0
    for j in range(starts.size):
        if starts[j] >= t_end:
            break
        end = min(starts[j + 1] if j + 1 < starts.size else np.inf, t_end)
        span = end - starts[j]
        f = np.broadcast_to(np.einsum("...ni,...n->...i", v, s * power[..., j, :]), batch + (n,))
        grid = np.concatenate([[0.0], np.geomspace(span * 1e-4, span, points)])

        def temps(d):  # d: (..., p) → (..., p)
            zt = _propagate(lam[..., None, :], z[..., None, :], f[..., None, :], d[..., None])
            return np.sum(rows * zt, axis=-1)

        zt = _propagate(lam[..., None, :], z[..., None, :], f[..., None, :], grid[:, None])
        values = np.einsum("...pi,...qi->...pq", rows, zt)  # (..., p, q)
        k = np.argmax(values, axis=-1)
        lo = grid[np.maximum(k - 1, 0)]
        hi = grid[np.minimum(k + 1, grid.size - 1)]
        top = np.take_along_axis(values, k[..., None], axis=-1)[..., 0]
        top_t = grid[k]
        a = hi - golden * (hi - lo)
        b = lo + golden * (hi - lo)
        fa, fb = temps(a), temps(b)
        for _ in range(24):  # bracket × 0.618^24 ≈ 1e-5: the peak to ~1e-10 (flat top)
            left = fa > fb
            hi = np.where(left, b, hi)
            lo = np.where(left, lo, a)
            b2 = np.where(left, a, lo + golden * (hi - lo))
            a2 = np.where(left, hi - golden * (hi - lo), b)
            fb2 = np.where(left, fa, np.nan)
            fa2 = np.where(left, np.nan, fb)
            a, b = a2, b2
            need_a = ~left
            fa = np.where(need_a, fa2, temps(a))
            fb = np.where(left, fb2, temps(b))
        mid = 0.5 * (lo + hi)
        refined = temps(mid)
        take = refined > top
        top = np.where(take, refined, top)
        top_t = np.where(take, mid, top_t)
        better = top > best
        best = np.where(better, top, best)
        when = np.where(better, starts[j] + top_t, when)
        z = _propagate(lam, z, f, span)
    return best, when

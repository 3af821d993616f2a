"""Spreading (constriction) resistance in a heat-sink base plate.

The base is a rectangular plate (flux channel) of thickness ``thickness`` and conductivity
``conductivity``, heated by isoflux rectangular sources on the top face, adiabatic on its four
edges, and cooled on the bottom face by a uniform film coefficient ``h`` (the heat-sink side,
``h_eff = 1/(R_hs * plate area)``). Three views of the same problem:

* :func:`resistance_spreading_rect_centered_yovanovich_1999` -- exact series, one centred source.
* :func:`temperature_rise_rect_sources_muzychka_2003` -- exact series, several sources at any
  position, by superposition (the reference; every reported design is evaluated with it).
* :func:`resistance_spreading_song_lee_au_1994` and
  :func:`temperature_rise_rect_sources_song_lee_au` -- closed-form approximation (the search's
  fast form, within about 8 % of the series on the project's check cases).

All functions are pure and vectorised: numpy in, numpy out, SI units. They trust their inputs
(validation happens once, at the design boundary) and let NaN propagate.
"""
from __future__ import annotations

import numpy as np

from sinkopt.errors import InputError

__all__ = [
    "spreading_function",
    "resistance_spreading_rect_centered_yovanovich_1999",
    "temperature_rise_rect_sources_muzychka_2003",
    "resistance_spreading_song_lee_au_1994",
    "temperature_rise_rect_sources_song_lee_au",
]

# Upper bound on the number of float64 elements in one (designs x m x n) block of the double
# sum: 2 MiB per temporary, so the handful alive at once stay in the core's L2/L3 cache
# (measured on the 20-term coarse series, 50k designs: 262k elements 1.45x faster than 2M,
# and faster than 65k or 16k, where per-call overhead takes over).
_BLOCK_ELEMENTS = 262_144

_SLA_KINDS = ("average", "peak")


def _scalar_out(x):
    """Return a numpy scalar for a 0-d array (a scalar in gives a scalar out)."""
    x = np.asarray(x)
    return x[()] if x.ndim == 0 else x


def _design_blocks(n_designs, terms_per_design):
    """Yield slices over designs so one block holds at most ``_BLOCK_ELEMENTS`` terms."""
    step = max(1, _BLOCK_ELEMENTS // max(1, terms_per_design))
    for start in range(0, n_designs, step):
        yield slice(start, min(start + step, n_designs))


def spreading_function(zeta, thickness, conductivity, h):
    r"""Spreading function of a finite plate cooled by a film on its far face.

    .. math::

        \phi(\zeta) = \frac{\zeta + (h/k)\tanh(\zeta t)}{\zeta\tanh(\zeta t) + h/k}

    Parameters
    ----------
    zeta : array_like
        Eigenvalue of the Fourier mode, :math:`\zeta > 0` [1/m].
    thickness : array_like
        Plate (base) thickness :math:`t` [m].
    conductivity : array_like
        Plate thermal conductivity :math:`k` [W/(m K)].
    h : array_like
        Film coefficient on the cooled face, :math:`h \ge 0` [W/(m^2 K)].

    Returns
    -------
    phi : numpy.ndarray or numpy.float64
        Spreading function [-], broadcast over the inputs.

    Notes
    -----
    The papers write :math:`\phi` with :math:`\exp(2\zeta t)`, which overflows for the high
    modes of a thick plate. The ``tanh`` form above is algebraically identical and bounded:
    as :math:`\zeta t \to \infty`, :math:`\tanh \to 1` and :math:`\phi \to 1` (semi-infinite
    plate). :math:`d\phi/d\tanh(\zeta t) \propto (h/k)^2 - \zeta^2`, so a thicker plate lowers
    every mode with :math:`\zeta > h/k`.

    References
    ----------
    .. [1] Yovanovich, M. M., Muzychka, Y. S., Culham, J. R., "Spreading resistance of isoflux
       rectangles and strips on compound flux channels", J. Thermophys. Heat Transfer 13(4),
       495-500, 1999 (volume/pages from memory, docs/theory.md#references; DOI 10.2514/2.6467 from
       memory, unverified).

    Examples
    --------
    Thick plate, high mode: the semi-infinite limit.

    >>> float(spreading_function(1.0e4, 0.005, 200.0, 1000.0))
    1.0

    First x mode of check case S1 (half width 25 mm, t = 5 mm, h/k = 5 1/m), by hand:
    zeta = pi/0.025 = 125.6637, tanh(0.6283185) = 0.5568933,
    phi = (125.6637 + 5*0.5568933)/(125.6637*0.5568933 + 5) = 128.44817/74.98128 = 1.7130700.

    >>> round(float(spreading_function(3.141592653589793 / 0.025, 0.005, 200.0, 1000.0)), 7)
    1.71307
    """
    zeta = np.asarray(zeta, dtype=float)
    biot_per_length = np.asarray(h, dtype=float) / np.asarray(conductivity, dtype=float)
    tanh_zt = np.tanh(zeta * np.asarray(thickness, dtype=float))
    phi = (zeta + biot_per_length * tanh_zt) / (zeta * tanh_zt + biot_per_length)
    return _scalar_out(phi)


def _centered_series(a, b, c, d, t, k, h, n_terms):
    """R_s of centred sources, 1-D arrays of half sizes (one entry per design)."""
    n = a.shape[0]
    mode = np.arange(1, n_terms + 1, dtype=float)
    r_s = np.empty(n)
    for blk in _design_blocks(n, n_terms * n_terms):
        ab, bb, cb, db = a[blk, None], b[blk, None], c[blk, None], d[blk, None]
        tb, kb, hb = t[blk, None], k[blk, None], h[blk, None]
        delta = mode * np.pi / cb  # (nb, M): x eigenvalues of the half plate
        lam = mode * np.pi / db  # (nb, N): y eigenvalues
        # sin^2(a delta)/delta^2 recurs in the strip sums and in the double sum.
        px = np.sin(ab * delta) ** 2 / delta**2
        py = np.sin(bb * lam) ** 2 / lam**2
        strip_x = np.sum(px * spreading_function(delta, tb, kb, hb) / delta, axis=1)
        strip_y = np.sum(py * spreading_function(lam, tb, kb, hb) / lam, axis=1)
        beta = np.sqrt(delta[:, :, None] ** 2 + lam[:, None, :] ** 2)  # (nb, M, N)
        g = spreading_function(beta, tb[:, :, None], kb[:, :, None], hb[:, :, None]) / beta
        double = np.einsum("im,imn,in->i", px, g, py)
        cdk = (cb * db * kb)[:, 0]
        r_s[blk] = (
            strip_x / (2 * ab[:, 0] ** 2 * cdk)
            + strip_y / (2 * bb[:, 0] ** 2 * cdk)
            + double / (ab[:, 0] ** 2 * bb[:, 0] ** 2 * cdk)
        )
    return r_s


def resistance_spreading_rect_centered_yovanovich_1999(
    source_x, source_y, plate_x, plate_y, thickness, conductivity, h, n_terms=200
):
    r"""Spreading resistance of a centred isoflux rectangle on a cooled rectangular plate.

    Exact Fourier series (half sizes :math:`a, b` of the source and :math:`c, d` of the plate;
    :math:`\delta_m = m\pi/c`, :math:`\lambda_n = n\pi/d`,
    :math:`\beta_{mn} = \sqrt{\delta_m^2 + \lambda_n^2}`):

    .. math::

        R_s = \frac{\sum_m \sin^2(a\delta_m)\phi(\delta_m)/\delta_m^3}{2a^2cdk}
            + \frac{\sum_n \sin^2(b\lambda_n)\phi(\lambda_n)/\lambda_n^3}{2b^2cdk}
            + \frac{\sum_m\sum_n \sin^2(a\delta_m)\sin^2(b\lambda_n)\phi(\beta_{mn})
                    /(\delta_m^2\lambda_n^2\beta_{mn})}{a^2b^2cdk}

    Parameters
    ----------
    source_x : array_like
        Source length along x (full size, :math:`2a`) [m].
    source_y : array_like
        Source length along y (full size, :math:`2b`) [m].
    plate_x : array_like
        Plate length along x (full size, :math:`2c`) [m].
    plate_y : array_like
        Plate length along y (full size, :math:`2d`) [m].
    thickness : array_like
        Plate thickness :math:`t` [m].
    conductivity : array_like
        Plate thermal conductivity :math:`k` [W/(m K)].
    h : array_like
        Uniform film coefficient on the cooled face [W/(m^2 K)].
    n_terms : int, optional
        Terms per index of the series (double sum has ``n_terms**2`` terms) [-].

    Returns
    -------
    R_s : numpy.ndarray or numpy.float64
        Spreading resistance, mean source temperature basis [K/W], broadcast over the inputs.
        It is the spreading part only: the source-mean to fluid resistance is
        ``R_total = t/(k*A) + 1/(h*A) + R_s`` with ``A = plate_x * plate_y``.

    Notes
    -----
    Assumptions: steady conduction, constant :math:`k`, uniform flux over the source, the rest of
    the top face and all four edges adiabatic, uniform :math:`h` over the whole cooled face,
    source centred. Valid for any :math:`0 < a \le c`, :math:`0 < b \le d`, :math:`t > 0`.

    The truncation error falls like ``1/n_terms``. Measured (project check case S2, 10x10 mm on
    100x100x3 mm): 200 terms is -3e-5 relative to 400 terms and 400 terms is -1e-5 relative to
    4000. The check values of docs/theory.md#spreading-check-cases are reproduced to 1e-5 with 400 terms.

    References
    ----------
    .. [1] Yovanovich, M. M., Muzychka, Y. S., Culham, J. R., "Spreading resistance of isoflux
       rectangles and strips on compound flux channels", J. Thermophys. Heat Transfer 13(4),
       495-500, 1999 (volume/pages from memory, docs/theory.md#references; DOI 10.2514/2.6467 from
       memory, unverified). Formula re-derived and checked against a 3-D finite-volume solve by
       the project (docs/theory.md#exact-series-one-centred-source, [N]).

    Examples
    --------
    Project check case S1 (docs/theory.md#spreading-check-cases, [N]): 20x20 mm centred on 50x50x5 mm,
    k = 200, h = 1000.

    >>> r_s = resistance_spreading_rect_centered_yovanovich_1999(
    ...     0.02, 0.02, 0.05, 0.05, 0.005, 200.0, 1000.0, n_terms=400)
    >>> round(float(r_s), 7)
    0.0903759
    >>> round(float(0.005 / (200.0 * 0.05**2) + 1 / (1000.0 * 0.05**2) + r_s), 6)
    0.500376
    """
    arrays = np.broadcast_arrays(
        *(np.asarray(x, dtype=float)
          for x in (source_x, source_y, plate_x, plate_y, thickness, conductivity, h))
    )
    shape = arrays[0].shape
    sizes, material = arrays[:4], arrays[4:]
    half_sizes = [x.ravel() / 2 for x in sizes]  # the series is written in half sizes
    r_s = _centered_series(*half_sizes, *(x.ravel() for x in material), n_terms=int(n_terms))
    return _scalar_out(r_s.reshape(shape))


def _multi_source_arrays(plate_x, plate_y, thickness, conductivity, h,
                         power, centre_x, centre_y, size_x, size_y):
    """Broadcast per-design inputs to (n,) and per-source inputs to (n, s).

    Returns ``(designs, sources, single)`` where ``single`` says the caller passed one design
    (all plate inputs scalar, source inputs at most 1-D) and wants an (s,) result.
    """
    plate = [np.asarray(x, dtype=float) for x in (plate_x, plate_y, thickness, conductivity, h)]
    src = [np.asarray(x, dtype=float) for x in (power, centre_x, centre_y, size_x, size_y)]
    if any(x.ndim > 1 for x in plate) or any(x.ndim > 2 for x in src):
        raise InputError(
            "plate inputs must be scalars or (n,) arrays and source inputs scalars, (s,) or"
            f" (n, s) arrays, but got plate ndims {[x.ndim for x in plate]} and source ndims"
            f" {[x.ndim for x in src]}"
        )
    single = all(x.ndim == 0 for x in plate) and all(x.ndim <= 1 for x in src)
    plate = np.broadcast_arrays(*(np.atleast_1d(x) for x in plate))
    src = np.broadcast_arrays(*(np.atleast_2d(x) for x in src))
    n = np.broadcast_shapes(plate[0].shape, src[0].shape[:1])[0]
    plate = [np.broadcast_to(x, (n,)) for x in plate]
    src = [np.broadcast_to(x, (n, src[0].shape[1])) for x in src]
    return plate, src, single


def _uniform_rise(c, d, t, k, h, power):
    """1-D conduction plus film rise (sum Q)(t/k + 1/h)/(c d), shape (n, 1)."""
    return (power.sum(axis=1) * (t / k + 1 / h) / (c * d))[:, None]


def temperature_rise_rect_sources_muzychka_2003(
    plate_x, plate_y, thickness, conductivity, h,
    power, centre_x, centre_y, size_x, size_y, n_terms=200,
):
    r"""Mean temperature rise of several rectangular sources on a cooled plate (exact series).

    Superposition of the eccentric-source solution. Full sizes: plate :math:`c \times d`;
    source :math:`i` has power :math:`Q_i`, centroid :math:`(X_i, Y_i)` from a plate corner and
    size :math:`a_i \times b_i`; :math:`\lambda_m = m\pi/c`, :math:`\delta_n = n\pi/d`,
    :math:`\beta_{mn} = \sqrt{\lambda_m^2 + \delta_n^2}`, :math:`S(x) = \sin x / x`,
    :math:`u_{im} = \cos(\lambda_m X_i) S(\lambda_m a_i/2)`,
    :math:`v_{in} = \cos(\delta_n Y_i) S(\delta_n b_i/2)`. The mean rise of source :math:`j`
    above the fluid is

    .. math::

        \theta_j = \frac{\sum_i Q_i}{cd}\left(\frac{t}{k} + \frac{1}{h}\right)
          + \frac{1}{cdk}\sum_i Q_i\Big[\sum_m \frac{2\phi(\lambda_m)}{\lambda_m} u_{im}u_{jm}
          + \sum_n \frac{2\phi(\delta_n)}{\delta_n} v_{in}v_{jn}
          + \sum_m\sum_n \frac{4\phi(\beta_{mn})}{\beta_{mn}} u_{im}v_{in}u_{jm}v_{jn}\Big]

    which is the paper's :math:`A_m, A_n, A_{mn}` coefficients (docs/theory.md#multiple-and-eccentric-sources) with the
    identity :math:`\sin((2X+a)\lambda/2) - \sin((2X-a)\lambda/2) = 2\cos(\lambda X)\sin(\lambda a/2)`
    applied.

    Parameters
    ----------
    plate_x : array_like
        Plate length along x, scalar or (n,) [m].
    plate_y : array_like
        Plate length along y, scalar or (n,) [m].
    thickness : array_like
        Plate thickness, scalar or (n,) [m].
    conductivity : array_like
        Plate thermal conductivity, scalar or (n,) [W/(m K)].
    h : array_like
        Uniform film coefficient on the cooled face, scalar or (n,) [W/(m^2 K)].
    power : array_like
        Heat input of each source, (s,) or (n, s) [W].
    centre_x : array_like
        x of each source centroid, measured from the plate corner, (s,) or (n, s) [m].
    centre_y : array_like
        y of each source centroid, measured from the plate corner, (s,) or (n, s) [m].
    size_x : array_like
        Source length along x, (s,) or (n, s) [m].
    size_y : array_like
        Source length along y, (s,) or (n, s) [m].
    n_terms : int, optional
        Terms per index over the full plate (the double sum has ``n_terms**2`` terms) [-].

    Returns
    -------
    theta : numpy.ndarray
        Mean temperature rise of each source above the fluid [K], shape (n, s); shape (s,) when
        all plate inputs are scalars and the source inputs are at most 1-D.

    Notes
    -----
    Same assumptions as :func:`resistance_spreading_rect_centered_yovanovich_1999`; sources must
    lie inside the plate and should not overlap (overlapping fluxes simply add). Only even modes
    of the full plate exist for a centred source, so ``n_terms`` here matches ``n_terms/2`` in the
    centred function; the check values S3 are reproduced to 1e-5 with 200 or more terms.

    Cost: about ``n * n_terms**2`` spreading-function evaluations plus ``n * s * n_terms**2``
    multiply-adds, done block-wise over designs so memory stays bounded.

    References
    ----------
    .. [1] Muzychka, Y. S., Culham, J. R., Yovanovich, M. M., "Thermal spreading resistance of
       eccentric heat sources on rectangular flux channels", J. Electron. Packag. 125(2),
       178-185, 2003 (details from memory, docs/theory.md#references; DOI 10.1115/1.1568125 from memory,
       unverified). Verified by the project against a 3-D finite-volume solve (docs/theory.md#multiple-and-eccentric-sources, [N]).

    Examples
    --------
    Project check case S3 (docs/theory.md#spreading-check-cases, [N]): plate 50x50x5 mm, k = 200, h = 1000;
    A: 10 W at (15, 25) mm, 10x10 mm; B: 20 W at (35, 30) mm, 10x16 mm.

    >>> theta = temperature_rise_rect_sources_muzychka_2003(
    ...     0.05, 0.05, 0.005, 200.0, 1000.0,
    ...     [10.0, 20.0], [0.015, 0.035], [0.025, 0.030], [0.010, 0.010], [0.010, 0.016],
    ...     n_terms=400)
    >>> [round(float(x), 4) for x in theta]
    [13.8801, 16.0364]
    """
    (c, d, t, k, h), (q, x0, y0, a, b), single = _multi_source_arrays(
        plate_x, plate_y, thickness, conductivity, h, power, centre_x, centre_y, size_x, size_y)
    n_terms = int(n_terms)
    mode = np.arange(1, n_terms + 1, dtype=float)
    theta = np.empty(q.shape)
    for blk in _design_blocks(c.shape[0], n_terms * n_terms):
        theta[blk] = _eccentric_series_block(
            c[blk], d[blk], t[blk], k[blk], h[blk],
            q[blk], x0[blk], y0[blk], a[blk], b[blk], mode)
    return theta[0] if single else theta


def _eccentric_series_block(c, d, t, k, h, q, x0, y0, a, b, mode):
    """Exact multi-source series for one block of designs; (nb,) and (nb, s) in, (nb, s) out."""
    lam = mode * np.pi / c[:, None]  # (nb, M)
    dlt = mode * np.pi / d[:, None]  # (nb, N)
    # Factor matrices (nb, s, M) and (nb, s, N): cos(lambda X) * sin(lambda a/2)/(lambda a/2);
    # the argument is > 0 (sources have a size), so sin(x)/x needs no guard at 0.
    half = lam[:, None, :] * (0.5 * a)[:, :, None]
    u = np.cos(lam[:, None, :] * x0[:, :, None])
    u *= np.sin(half) / half
    half = dlt[:, None, :] * (0.5 * b)[:, :, None]
    v = np.cos(dlt[:, None, :] * y0[:, :, None])
    v *= np.sin(half) / half
    tk = (t[:, None], k[:, None], h[:, None])
    wx = 2 * spreading_function(lam, *tk) / lam  # (nb, M)
    wy = 2 * spreading_function(dlt, *tk) / dlt
    strips = (np.einsum("nsm,nm,nm->ns", u, wx, np.einsum("ns,nsm->nm", q, u))
              + np.einsum("nsm,nm,nm->ns", v, wy, np.einsum("ns,nsm->nm", q, v)))
    g = _phi_over_zeta(lam, dlt, t, h / k)  # 4 phi(beta)/beta, (nb, M, N)
    # Source-weighted mode amplitudes W_mn = sum_i Q_i u_im v_in, then each source's mean:
    # theta_j = sum_mn u_jm (g W)_mn v_jn. Both contractions are batched matmuls.
    w = np.matmul(np.swapaxes(q[:, :, None] * u, 1, 2), v)  # (nb, M, N)
    w *= g
    double = np.sum(np.matmul(u, w) * v, axis=2)  # (nb, s)
    spread = (strips + double) / (c * d * k)[:, None]
    return _uniform_rise(c, d, t, k, h, q) + spread


def _phi_over_zeta(lam, dlt, t, h_over_k):
    r"""``4 phi(beta)/beta`` on the grid beta_mn = sqrt(lam_m^2 + dlt_n^2), shape (nb, M, N).

    The same value as ``4 * spreading_function(beta, t, k, h) / beta``, in fewer passes over the
    (nb, M, N) block and with one ``exp`` instead of ``tanh`` (about half its cost): with
    E = exp(-2 beta t), tanh(beta t) = (1 - E)/(1 + E), so

    .. math:: \phi = \frac{(\beta + B) + E(\beta - B)}{(\beta + B) - E(\beta - B)},
              \quad B = h/k

    E is in (0, 1] (no overflow for thick plates), and the denominator is
    beta (1 - E) + B (1 + E) > 0 with no cancellation worse than in 1 - E, which is >= ~0.1 for
    every mode of a real base (beta t >= pi t / max(c, d)); measured against the tanh form:
    ~1e-15 relative.
    """
    beta = np.square(lam)[:, :, None] + np.square(dlt)[:, None, :]
    np.sqrt(beta, out=beta)
    bk = h_over_k[:, None, None]
    e = np.multiply(beta, (-2.0 * t)[:, None, None])
    np.exp(e, out=e)
    plus = np.add(beta, bk)
    minus = np.subtract(beta, bk)
    e *= minus  # E (beta - B)
    np.subtract(plus, e, out=minus)  # denominator / beta
    plus += e  # numerator
    minus *= beta
    np.divide(plus, minus, out=plus)
    plus *= 4.0
    return plus


def resistance_spreading_song_lee_au_1994(
    source_area, plate_area, thickness, conductivity, h, kind="average"
):
    r"""Closed-form spreading resistance of a source on a cooled plate (Song, Lee & Au).

    Source and plate are replaced by coaxial discs of equal area:
    :math:`a = \sqrt{A_s/\pi}`, :math:`b = \sqrt{A_p/\pi}`, :math:`\epsilon = a/b`,
    :math:`\tau = t/b`, :math:`Bi = hb/k`, :math:`\lambda = \pi + 1/(\sqrt{\pi}\epsilon)`,

    .. math::

        \Phi = \frac{\tanh(\lambda\tau) + \lambda/Bi}{1 + (\lambda/Bi)\tanh(\lambda\tau)},\quad
        \psi_{avg} = \tfrac12(1-\epsilon)^{3/2}\Phi,\quad
        \psi_{max} = \frac{\epsilon\tau}{\sqrt\pi} + \frac{(1-\epsilon)\Phi}{\sqrt\pi},\quad
        R = \frac{\psi}{\sqrt{\pi} k a}

    Parameters
    ----------
    source_area : array_like
        Source footprint area :math:`A_s` [m^2].
    plate_area : array_like
        Plate area :math:`A_p` [m^2].
    thickness : array_like
        Plate thickness :math:`t` [m].
    conductivity : array_like
        Plate thermal conductivity :math:`k` [W/(m K)].
    h : array_like
        Uniform film coefficient on the cooled face [W/(m^2 K)].
    kind : {"average", "peak"}, optional
        ``"average"``: source-mean basis, spreading only. ``"peak"``: source-maximum basis,
        spreading plus 1-D plate conduction [-].

    Returns
    -------
    R : numpy.ndarray or numpy.float64
        Resistance [K/W], broadcast over the inputs.

    Notes
    -----
    Finding of the project (docs/theory.md#song-lee-au-closed-form, [N]): the two kinds do NOT share a basis.

    * ``"average"`` is spreading only; the source-mean to fluid resistance is
      ``t/(k A_p) + 1/(h A_p) + R``.
    * ``"peak"`` already contains the 1-D plate conduction (the :math:`\epsilon\tau/\sqrt\pi`
      term is exactly :math:`t/(k A_p)`); the peak source to fluid resistance is
      ``1/(h A_p) + R``.

    Accuracy: on the project check cases the average form is 5-7 % below the exact series and
    the peak total 0.3 % below a finite-volume peak. Valid for :math:`0 < \epsilon < 1`; the
    disc equivalence degrades for elongated sources or plates and for off-centre sources.

    References
    ----------
    .. [1] Song, S., Lee, S., Au, V., "Closed-form equation for thermal constriction/spreading
       resistances with variable resistance boundary condition", Proc. IEPS Conference,
       pp. 111-121, 1994 (bibliographic details [M], taken from secondary citations).
    .. [2] Lee, S., Song, S., Au, V., Moran, K. P., "Constriction/spreading resistance model for
       electronics packaging", Proc. ASME/JSME Thermal Engineering Joint Conference, Vol. 4,
       pp. 199-206, 1995 (bibliographic details [M]; formula corroborated only by public
       re-implementations [C], tested by the project [N]).

    Examples
    --------
    Project check case S1 (docs/theory.md#spreading-check-cases, [N]): 20x20 mm on 50x50x5 mm, k = 200,
    h = 1000.

    >>> r_avg = resistance_spreading_song_lee_au_1994(4e-4, 2.5e-3, 0.005, 200.0, 1000.0)
    >>> round(float(r_avg), 6)
    0.084852
    >>> r_peak = resistance_spreading_song_lee_au_1994(
    ...     4e-4, 2.5e-3, 0.005, 200.0, 1000.0, kind="peak")
    >>> round(float(r_peak + 1 / (1000.0 * 2.5e-3)), 6)
    0.533607
    """
    if kind not in _SLA_KINDS:
        raise InputError(f"`kind` must be one of {_SLA_KINDS}, but got kind={kind!r}",
                         field="kind")
    a = np.sqrt(np.asarray(source_area, dtype=float) / np.pi)
    b = np.sqrt(np.asarray(plate_area, dtype=float) / np.pi)
    k = np.asarray(conductivity, dtype=float)
    eps = a / b
    tau = np.asarray(thickness, dtype=float) / b
    lam = np.pi + 1 / (np.sqrt(np.pi) * eps)
    lam_over_bi = lam * k / (np.asarray(h, dtype=float) * b)
    tanh_lt = np.tanh(lam * tau)
    phi = (tanh_lt + lam_over_bi) / (1 + lam_over_bi * tanh_lt)
    if kind == "average":
        one_minus = 1 - eps
        psi = 0.5 * (one_minus * np.sqrt(one_minus)) * phi  # (1 - eps)**1.5, without pow
    else:
        psi = (eps * tau + (1 - eps) * phi) / np.sqrt(np.pi)
    return _scalar_out(psi / (np.sqrt(np.pi) * k * a))


def temperature_rise_rect_sources_song_lee_au(
    plate_x, plate_y, thickness, conductivity, h,
    power, centre_x, centre_y, size_x, size_y, n_terms=200,
):
    r"""Mean temperature rise of several sources on a cooled plate, fast closed-form estimate.

    .. math::

        \theta_j = \frac{\sum_i Q_i}{cd}\left(\frac{t}{k} + \frac{1}{h}\right)
                   + Q_j R_{sp,avg}(a_j b_j,\ cd)

    with :math:`R_{sp,avg}` from :func:`resistance_spreading_song_lee_au_1994` for source
    :math:`j` alone on the full plate.

    Parameters
    ----------
    plate_x : array_like
        Plate length along x, scalar or (n,) [m].
    plate_y : array_like
        Plate length along y, scalar or (n,) [m].
    thickness : array_like
        Plate thickness, scalar or (n,) [m].
    conductivity : array_like
        Plate thermal conductivity, scalar or (n,) [W/(m K)].
    h : array_like
        Uniform film coefficient on the cooled face, scalar or (n,) [W/(m^2 K)].
    power : array_like
        Heat input of each source, (s,) or (n, s) [W].
    centre_x : array_like
        x of each source centroid from the plate corner, (s,) or (n, s); unused by the
        approximation, kept for a signature identical to the exact series [m].
    centre_y : array_like
        y of each source centroid from the plate corner, (s,) or (n, s); unused [m].
    size_x : array_like
        Source length along x, (s,) or (n, s) [m].
    size_y : array_like
        Source length along y, (s,) or (n, s) [m].
    n_terms : int, optional
        Unused; kept for a signature identical to the exact series [-].

    Returns
    -------
    theta : numpy.ndarray
        Mean temperature rise of each source above the fluid [K], shape (n, s); shape (s,) when
        all plate inputs are scalars and the source inputs are at most 1-D.

    Notes
    -----
    Each source is treated as if centred alone on the full plate; the other sources enter only
    through the plate-mean (uniform) term. Mutual spreading interaction between sources beyond
    that mean, and the extra spreading of a source placed near an edge, are neglected, so the
    estimate is position-blind. This is the optimiser's fast form; every design that is
    reported is re-evaluated with :func:`temperature_rise_rect_sources_muzychka_2003`.

    References
    ----------
    .. [1] Song, S., Lee, S., Au, V., Proc. IEPS Conference, pp. 111-121, 1994 [M].
    .. [2] Lee, S., Song, S., Au, V., Moran, K. P., Proc. ASME/JSME Thermal Engineering Joint
       Conference, Vol. 4, pp. 199-206, 1995 [M].

    Examples
    --------
    One source reduces to the S1 numbers (docs/theory.md#spreading-check-cases): 1 W times 0.010 K/W plate
    conduction + 0.400 K/W film + 0.084852 K/W spreading.

    >>> theta = temperature_rise_rect_sources_song_lee_au(
    ...     0.05, 0.05, 0.005, 200.0, 1000.0, [1.0], [0.025], [0.025], [0.02], [0.02])
    >>> round(float(theta[0]), 6)
    0.494852
    """
    (c, d, t, k, h), (q, _, _, a, b), single = _multi_source_arrays(
        plate_x, plate_y, thickness, conductivity, h, power, centre_x, centre_y, size_x, size_y)
    r_sp = resistance_spreading_song_lee_au_1994(
        a * b, (c * d)[:, None], t[:, None], k[:, None], h[:, None], kind="average")
    theta = _uniform_rise(c, d, t, k, h, q) + q * r_sp
    return theta[0] if single else theta

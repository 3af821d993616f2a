"""Radiation: view factors against Bergman et al. (2011) Table 13.1 and an independent
crossed-strings computation, the channel's apparent emittance against a finely discretised
radiosity solution, fluxes against ht."""
import numpy as np
import pytest

from sinkopt.physics import radiation as rd

ht_rad = pytest.importorskip("ht.radiation")


@pytest.mark.parametrize("w, d", [(1.0, 1.0), (0.005, 0.03), (0.03, 0.005), (2.0, 0.1)])
def test_parallel_plates_against_table_13_1(w, d):
    # Bergman, Lavine, Incropera & DeWitt 2011, Table 13.1, parallel plates with midlines connected
    # by perpendicular: F_ij = {[(Wi + Wj)^2 + 4]^1/2 - [(Wj - Wi)^2 + 4]^1/2}/(2 Wi), W = w/L.
    wi = wj = w / d
    table = (np.sqrt((wi + wj) ** 2 + 4) - np.sqrt((wj - wi) ** 2 + 4)) / (2 * wi)
    assert rd.view_factor_parallel_plates_hottel(w, d) == pytest.approx(table, rel=1e-12)


@pytest.mark.parametrize("wi, wj", [(1.0, 1.0), (0.03, 0.005), (0.005, 0.03)])
def test_perpendicular_plates_against_table_13_1(wi, wj):
    # Table 13.1, perpendicular plates with a common edge: F_ij = [1 + wj/wi - (1 + (wj/wi)^2)^1/2]/2.
    table = (1 + wj / wi - np.sqrt(1 + (wj / wi) ** 2)) / 2
    assert rd.view_factor_perpendicular_plates_hottel(wi, wj) == pytest.approx(table, rel=1e-12)


def _segments(gap, height, m):
    """The channel's boundary traversed counter-clockwise (base, right fin, opening, left fin),
    each side cut into m strips; returns start points, end points and the side index."""
    corners = np.array([[0.0, 0.0], [gap, 0.0], [gap, height], [0.0, height], [0.0, 0.0]])
    starts, ends, side = [], [], []
    for k in range(4):
        p = corners[k] + np.linspace(0.0, 1.0, m + 1)[:, None] * (corners[k + 1] - corners[k])
        starts.append(p[:-1])
        ends.append(p[1:])
        side += [k] * m
    return np.vstack(starts), np.vstack(ends), np.array(side)


def _crossed_strings(a1, a2, b1, b2):
    # Hottel: F_AB = [(crossed strings) - (uncrossed strings)]/(2 |A|) for a convex enclosure whose
    # boundary runs a1 -> a2 ... b1 -> b2 (crossed: a1-b1 and a2-b2).
    dist = lambda p, q: np.linalg.norm(p - q, axis=-1)
    return (dist(a1, b1) + dist(a2, b2) - dist(a2, b1) - dist(a1, b2)) / (2 * dist(a1, a2))


def _view_factor_matrix(gap, height, m):
    s, e, side = _segments(gap, height, m)
    f = _crossed_strings(s[:, None], e[:, None], s[None, :], e[None, :])
    f[side[:, None] == side[None, :]] = 0.0  # flat strips of one side do not see each other
    return f, side, np.linalg.norm(e - s, axis=-1)


@pytest.mark.parametrize("gap, height", [(0.005, 0.03), (0.01, 0.01), (0.02, 0.005)])
def test_u_channel_view_factors_against_independent_crossed_strings(gap, height):
    # Whole sides (m = 1) of the rectangle by the crossed-strings rule coded from coordinates.
    f, side, _ = _view_factor_matrix(gap, height, 1)  # sides: 0 base, 1 right fin, 2 opening, 3 left fin
    vf = rd.view_factors_u_channel_hottel(gap, height)
    assert vf.fin_fin == pytest.approx(f[1, 3], rel=1e-12)
    assert vf.fin_base == pytest.approx(f[1, 0], rel=1e-12)
    assert vf.fin_opening == pytest.approx(f[1, 2], rel=1e-12)
    assert vf.base_fin == pytest.approx(f[0, 1], rel=1e-12)
    assert vf.base_opening == pytest.approx(f[0, 2], rel=1e-12)
    assert vf.opening_fin == pytest.approx(f[2, 1], rel=1e-12)
    assert vf.opening_base == pytest.approx(f[2, 0], rel=1e-12)
    # Summation and reciprocity.
    assert vf.fin_fin + vf.fin_base + vf.fin_opening == pytest.approx(1.0, rel=1e-12)
    assert 2 * vf.opening_fin + vf.opening_base == pytest.approx(1.0, rel=1e-12)
    assert height * vf.fin_base == pytest.approx(gap * vf.base_fin, rel=1e-12)


def _apparent_emittance_discretised(gap, height, eps, m=60):
    """Radiosity solution with every wall cut into m strips (non-uniform radiosity)."""
    f, side, length = _view_factor_matrix(gap, height, m)
    grey = side != 2
    fg = f[np.ix_(grey, grey)]
    j = np.linalg.solve(np.eye(grey.sum()) - (1 - eps) * fg, np.full(grey.sum(), eps))
    opening = side == 2
    return float(np.sum(length[opening, None] * f[np.ix_(opening, grey)] * j[None, :]) / gap)


@pytest.mark.parametrize("gap, height", [(0.005, 0.03), (0.005, 0.005), (0.01, 0.002), (0.002, 0.05)])
@pytest.mark.parametrize("eps", [0.07, 0.5, 0.85])
def test_apparent_emittance_against_discretised_radiosity(gap, height, eps):
    # Independent solution: every wall cut into 120 uniform strips, view factors by the
    # crossed-strings rule coded above, full (non-symmetric) radiosity system. Converged to 1e-4
    # (60 vs 120 strips); the module (24 graded strips, Richardson) agrees within 0.1 %.
    got = rd.emittance_apparent_u_channel(gap, height, eps)
    fine = _apparent_emittance_discretised(gap, height, eps, m=120)
    assert got == pytest.approx(fine, rel=1e-3)


def test_apparent_emittance_limits_and_three_zone_over_prediction():
    # Black walls: the opening is black. Shallow channel: the flat surface's emissivity.
    assert rd.emittance_apparent_u_channel(0.005, 0.03, 1.0) == pytest.approx(1.0, rel=1e-12)
    assert rd.emittance_apparent_u_channel(0.005, 1e-7, 0.3) == pytest.approx(0.3, rel=1e-4)
    # Deeper or more emissive channels look blacker.
    e = rd.emittance_apparent_u_channel(0.005, np.array([0.001, 0.01, 0.03, 0.1]), 0.3)
    assert np.all(np.diff(e) > 0)
    # One radiosity per wall (three zones, whole-side view factors of view_factors_u_channel_hottel)
    # over-predicts a deep channel: J_f = eps + rho (F_ff J_f + F_fb J_b), J_b = eps + 2 rho F_bf J_f.
    gap, height, eps = 0.005, 0.03, 0.07
    vf = rd.view_factors_u_channel_hottel(gap, height)
    rho = 1 - eps
    mat = np.array([[1 - rho * vf.fin_fin, -rho * vf.fin_base], [-2 * rho * vf.base_fin, 1.0]])
    jf, jb = np.linalg.solve(mat, [eps, eps])
    three_zone = 2 * vf.opening_fin * jf + vf.opening_base * jb
    assert three_zone > 1.1 * rd.emittance_apparent_u_channel(gap, height, eps)


def test_apparent_emittance_vectorised():
    gap = np.array([0.002, 0.005, 0.01])
    height = np.array([[0.01], [0.04]])
    got = rd.emittance_apparent_u_channel(gap, height, 0.6)
    assert got.shape == (2, 3)
    for i in range(2):
        for j in range(3):
            one = rd.emittance_apparent_u_channel(gap[j], height[i, 0], 0.6)
            assert np.shape(one) == ()
            assert got[i, j] == pytest.approx(float(one), rel=1e-12)


def test_flux_and_linearised_coefficient_against_ht():
    # Oracle: ht.radiation.q_rad; ht's sigma is CODATA 2014 (5.670367e-8), ours CODATA 2018: 2e-6.
    for eps, ts, ta in [(0.85, 400.0, 305.0), (0.07, 330.0, 298.15), (1.0, 300.0, 350.0)]:
        q = ht_rad.q_rad(eps, ts, ta)
        assert rd.heat_flux_radiation(eps, ts, ta) == pytest.approx(q, rel=2e-6)
        assert rd.h_radiation_linearised(eps, ts, ta) * (ts - ta) == pytest.approx(q, rel=2e-6)


def test_sink_radiation_areas_and_scaling():
    w, l, h, t, n, tb = 0.1, 0.12, 0.03, 0.002, 10, 0.005
    ts, ta = 345.0, 298.15
    black = rd.sink_radiation(w, l, h, t, n, tb, 1.0, ts, ta)
    # Black: the tip face W L, sides 2 L (H + t_b), solid parts of the ends 2 (N t H + W t_b).
    area = w * l + 2 * l * (h + tb) + 2 * (n * t * h + w * tb)
    assert black.area_emittance == pytest.approx(area, rel=1e-12)
    assert black.heat == pytest.approx(ht_rad.q_rad(1.0, ts, ta) * area, rel=2e-6)
    assert black.conductance * (ts - ta) == pytest.approx(black.heat, rel=1e-12)
    # A grey sink radiates less than the black one but more than eps times it (cavity effect).
    grey = rd.sink_radiation(w, l, h, t, n, tb, 0.5, ts, ta)
    assert 0.5 * black.heat < grey.heat < black.heat
    # An exposed back adds eps W L.
    back = rd.sink_radiation(w, l, h, t, n, tb, 0.5, ts, ta, back_exposed=True)
    assert back.area_emittance - grey.area_emittance == pytest.approx(0.5 * w * l, rel=1e-12)
    # The emissivity table holds the documented finishes.
    assert 0.8 <= rd.EMISSIVITY["anodised"] <= 0.9
    assert 0.05 <= rd.EMISSIVITY["bare_aluminium"] <= 0.1

"""Natural-convection correlations against ht, the published limits and the published optimum
spacing (docs: sinkopt/physics/natural_convection.py)."""
import numpy as np
import pytest
from scipy.optimize import minimize_scalar

from sinkopt.physics import natural_convection as nc
from sinkopt.physics.air import air_properties

ht_free = pytest.importorskip("ht.conv_free_immersed")


@pytest.mark.parametrize("ra", [0.1, 10.0, 1e4, 1e6, 1e9, 1e12])
@pytest.mark.parametrize("pr", [0.69, 0.71, 7.0])
def test_churchill_chu_against_ht(ra, pr):
    # Oracle: ht.conv_free_immersed.Nu_vertical_plate_Churchill(Pr, Gr), Gr = Ra/Pr
    # (Churchill & Chu 1975).
    assert nc.nu_vertical_plate_churchill_chu_1975(ra, pr) == pytest.approx(
        ht_free.Nu_vertical_plate_Churchill(pr, ra / pr), rel=1e-12)


@pytest.mark.parametrize("ra", [1e4, 3e5, 1e7, 1.0001e7, 1e9, 1e11])
def test_horizontal_up_against_ht_mcadams(ra):
    # Oracle: ht.conv_free_immersed.Nu_horizontal_plate_McAdams(Pr, Gr, buoyancy=True).
    pr = 0.71
    assert nc.nu_horizontal_plate_up_mcadams_1954(ra) == pytest.approx(
        ht_free.Nu_horizontal_plate_McAdams(pr, ra / pr, buoyancy=True), rel=1e-12)


@pytest.mark.parametrize("ra", [1e5, 1e7, 1e9, 1e10])
def test_horizontal_down_against_ht_mcadams(ra):
    # Oracle: ht.conv_free_immersed.Nu_horizontal_plate_McAdams(Pr, Gr, buoyancy=False), which
    # is 0.27 Ra^(1/4) up to Ra = 1e10.
    pr = 0.71
    assert nc.nu_horizontal_plate_down_mcadams_1954(ra) == pytest.approx(
        ht_free.Nu_horizontal_plate_McAdams(pr, ra / pr, buoyancy=False), rel=1e-12)


def test_horizontal_length_is_area_over_perimeter():
    # ht's horizontal-plate docstrings: L = a b / (2 (a + b)).
    assert nc.length_horizontal_plate(0.2, 0.05) == pytest.approx(0.2 * 0.05 / (2 * 0.25))


def test_bar_cohen_rohsenow_limits():
    # Fully developed limits (Kutz, Mechanical Engineers' Handbook Vol. 4, Table 1): symmetric
    # isothermal Nu = El/24, one plate adiabatic Nu = El/12.
    el = np.array([1e-4, 1e-3])
    np.testing.assert_allclose(nc.nu_vertical_channel_bar_cohen_rohsenow_1984(el), el / 24, rtol=2e-3)
    np.testing.assert_allclose(nc.nu_vertical_channel_asymmetric_bar_cohen_rohsenow_1984(el), el / 12,
                               rtol=2e-3)
    # Isolated-plate limit: laminar vertical plate Nu_L = 0.59 Ra_L^(1/4) (McAdams; Bergman et al.
    # 2011 eq. 9.27) is Nu_b = 0.59 El^(1/4) on the gap; 2.873^(-1/2) = 0.58998.
    el = np.array([1e8, 1e10])
    np.testing.assert_allclose(nc.nu_vertical_channel_bar_cohen_rohsenow_1984(el), 0.59 * el**0.25,
                               rtol=2e-3)


def _air(t_film=318.15):
    air = air_properties(t_film, 101325.0)
    return air, air.kinematic_viscosity, air.conductivity / (air.density * air.heat_capacity)


def test_optimum_spacing_published_form_and_composite_maximum():
    # Bar-Cohen & Rohsenow 1984: b_opt = 2.714 / P^(1/4), P = c_p rho^2 g beta dT/(mu k L).
    air, nu, alpha = _air()
    length, dt, beta = 0.1, 40.0, 1.0 / 318.15
    p = air.heat_capacity * air.density**2 * nc.GRAVITY * beta * dt / (air.viscosity * air.conductivity * length)
    b_opt = nc.spacing_optimum_vertical_channel_bar_cohen_rohsenow_1984(length, dt, nu, alpha, beta)
    assert b_opt == pytest.approx(2.714 * p**-0.25, rel=1e-12)
    # Bergman et al. 2011 eq. 9.47 (from memory): S_opt = 2.71 (Ra_S/(S^3 L))^(-1/4).
    ra_over_s3 = nc.rayleigh_number(1.0, dt, nu, alpha, beta)
    assert b_opt == pytest.approx(2.71 * (ra_over_s3 / length) ** -0.25, rel=2e-3)
    # The spacing that maximises the heat per unit volume of thin plates, q''' ~ Nu_b/b^2, from the
    # composite itself agrees with the published constant within 0.1 %.

    def minus_q_per_volume(b):
        el = nc.elenbaas_number(nc.rayleigh_number(b, dt, nu, alpha, beta), b, length)
        return -nc.nu_vertical_channel_bar_cohen_rohsenow_1984(el) / b**2

    best = minimize_scalar(minus_q_per_volume, bounds=(1e-3, 3e-2), method="bounded",
                           options={"xatol": 1e-9})
    assert best.x == pytest.approx(b_opt, rel=1e-3)
    # Nu_b at the optimum: 1.31 quoted by Bar-Cohen & Rohsenow (from memory).
    el_opt = nc.elenbaas_number(nc.rayleigh_number(b_opt, dt, nu, alpha, beta), b_opt, length)
    assert nc.nu_vertical_channel_bar_cohen_rohsenow_1984(el_opt) == pytest.approx(1.31, abs=0.005)


def test_sink_fins_vertical_composes_the_correlations():
    # Highly conductive fins (eta -> 1): channel area at h_ch from the composite, outer faces and
    # base edges at the isolated-plate h from ht's Churchill–Chu.
    w, l, h, t, n, tb, dt, ta = 0.1, 0.15, 0.03, 0.001, 8, 0.005, 30.0, 298.15
    out = nc.sink_natural_convection(w, l, h, t, n, tb, 1e9, dt, ta)
    air, nu, alpha = _air(ta + dt / 2)
    beta = 1.0 / (ta + dt / 2)
    b = (w - n * t) / (n - 1)
    el = nc.rayleigh_number(b, dt, nu, alpha, beta) * b / l
    h_ch = (576 / el**2 + 2.873 / el**0.5) ** -0.5 * air.conductivity / b
    ra_l = nc.rayleigh_number(l, dt, nu, alpha, beta)
    h_v = ht_free.Nu_vertical_plate_Churchill(float(air.prandtl), float(ra_l / air.prandtl)) * air.conductivity / l
    lc = h + t / 2
    want = (h_ch * ((n - 2) * 2 * lc * l + (n - 1) * b * l) + 2 * (h_ch + h_v) * lc * l
            + h_v * 2 * tb * l)
    assert out.conductance == pytest.approx(want, rel=1e-6)
    assert out.h_channel == pytest.approx(h_ch, rel=1e-12)
    assert out.elenbaas == pytest.approx(el, rel=1e-12)


def test_sink_fins_vertical_best_fin_count_near_published_optimum_spacing():
    # Thin, conductive, tall fins on a wide base: the fin count that maximises the conductance has
    # a gap within 5 % of Bar-Cohen & Rohsenow's b_opt (measured 1.8 %; base strips and outer faces
    # shift it, and neighbouring integer fin counts differ by about 2 % in gap).
    w, l, h, t, tb, dt, ta = 0.3, 0.1, 0.1, 1e-4, 0.005, 40.0, 298.15
    n = np.arange(5, 120)
    g = nc.sink_natural_convection(w, l, h, t, n, tb, 1e6, dt, ta).conductance
    best = n[np.argmax(g)]
    b_best = (w - best * t) / (best - 1)
    air, nu, alpha = _air(ta + dt / 2)
    b_opt = nc.spacing_optimum_vertical_channel_bar_cohen_rohsenow_1984(l, dt, nu, alpha, 1 / (ta + dt / 2))
    assert b_best == pytest.approx(b_opt, rel=0.05)


@pytest.mark.parametrize("orientation, up", [("base_down_fins_up", True), ("base_up_fins_down", False)])
def test_sink_horizontal_envelope_against_ht(orientation, up):
    # Envelope simplification with conductive fins: tip face W x L at ht's McAdams horizontal plate
    # (L = A/P), four sides of height H + t_b at ht's Churchill–Chu; back face the other way up.
    w, l, h, t, n, tb, dt, ta = 0.12, 0.08, 0.025, 0.0015, 9, 0.004, 35.0, 300.0
    out = nc.sink_natural_convection(w, l, h, t, n, tb, 1e9, dt, ta, orientation=orientation,
                                     back_exposed=True)
    air, nu, alpha = _air(ta + dt / 2)
    beta = 1.0 / (ta + dt / 2)
    pr = float(air.prandtl)
    ls = w * l / (2 * (w + l))
    ra = float(nc.rayleigh_number(ls, dt, nu, alpha, beta))
    k = float(air.conductivity)
    h_face = ht_free.Nu_horizontal_plate_McAdams(pr, ra / pr, buoyancy=up) * k / ls
    h_back = ht_free.Nu_horizontal_plate_McAdams(pr, ra / pr, buoyancy=not up) * k / ls
    he = h + tb
    ra_v = float(nc.rayleigh_number(he, dt, nu, alpha, beta))
    h_v = ht_free.Nu_vertical_plate_Churchill(pr, ra_v / pr) * k / he
    want = (h_face + h_back) * w * l + h_v * 2 * (w + l) * he
    assert out.conductance == pytest.approx(want, rel=1e-6)


def test_sink_vectorised_equals_scalar_calls():
    n = np.array([4, 8, 16])
    dt = np.array([10.0, 30.0, 60.0])
    for orientation in nc.ORIENTATIONS:
        batch = nc.sink_natural_convection(0.1, 0.1, 0.03, 0.0015, n, 0.005, 200.0, dt, 298.15,
                                           orientation=orientation)
        for i in range(3):
            one = nc.sink_natural_convection(0.1, 0.1, 0.03, 0.0015, n[i], 0.005, 200.0, dt[i],
                                             298.15, orientation=orientation)
            assert np.shape(one.conductance) == ()
            assert batch.conductance[i] == pytest.approx(float(one.conductance), rel=1e-14)


def test_sink_orientation_checked_and_low_conductivity_lowers_conductance():
    with pytest.raises(ValueError, match="orientation"):
        nc.sink_natural_convection(0.1, 0.1, 0.03, 0.002, 10, 0.005, 200.0, 40.0, 298.15,
                                   orientation="sideways")
    for orientation in nc.ORIENTATIONS:
        hi = nc.sink_natural_convection(0.1, 0.1, 0.03, 0.002, 10, 0.005, 1e6, 40.0, 298.15,
                                        orientation=orientation)
        lo = nc.sink_natural_convection(0.1, 0.1, 0.03, 0.002, 10, 0.005, 5.0, 40.0, 298.15,
                                        orientation=orientation)
        assert lo.conductance < hi.conductance
        assert lo.fin_efficiency < hi.fin_efficiency <= 1.0

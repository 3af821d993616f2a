"""Channel correlations against ht and fluids (docs/theory.md#laminar-channel-flow, docs/theory.md#channel-correlation-check-values)."""
import numpy as np
import pytest

from sinkopt.physics import convection as cv

ht_ci = pytest.importorskip("ht.conv_internal")
ht_hx = pytest.importorskip("ht.hx")
fluids_friction = pytest.importorskip("fluids.friction")


@pytest.mark.parametrize("alpha", [0.0, 0.125, 0.25, 0.5, 0.7, 1.0])
def test_nu_h1_against_ht_shah_london(alpha):
    # Oracle: ht.conv_internal.Nu_laminar_rectangular_Shan_London (Shah & London 1978).
    assert cv.nu_h1_rectangular_duct_shah_london_1978(alpha) == pytest.approx(
        ht_ci.Nu_laminar_rectangular_Shan_London(alpha), rel=1e-12)


@pytest.mark.parametrize("alpha, fre_exact, nut_exact", [
    # Shah & London 1978 tabulated exact values (from memory, docs/theory.md#shah-and-london-fully-developed-duct brackets);
    # the polynomial fits agree within 0.06 %.
    (0.125, 20.585, None), (0.25, 18.233, None), (0.5, 15.548, 3.391), (1.0, 14.227, 2.976),
])
def test_shah_london_polynomials_against_tabulated_exact(alpha, fre_exact, nut_exact):
    assert cv.fre_rectangular_duct_shah_london_1978(alpha) == pytest.approx(fre_exact, rel=1e-3)
    if nut_exact:
        assert cv.nu_t_rectangular_duct_shah_london_1978(alpha) == pytest.approx(nut_exact, rel=1e-3)


def test_parallel_plate_limits():
    # Parallel plates (alpha -> 0): fRe = 24, Nu_T = 7.541, Nu_H = 8.235 (Shah & London 1978;
    # classical limits, common textbook values).
    assert cv.fre_rectangular_duct_shah_london_1978(0.0) == pytest.approx(24.0)
    assert cv.nu_t_rectangular_duct_shah_london_1978(0.0) == pytest.approx(7.541)


@pytest.mark.parametrize("eps, fre_sqrt_a, fre_dh", [
    # docs/theory.md#muzychka-and-yovanovich-developing-flow [O/N]: M–Y √A values and their Dh-basis conversion.
    (0.1, 36.8069, 21.1625), (0.5, 16.4572, 15.5160), (1.0, 14.1320, 14.1320)])
def test_muzychka_yovanovich_fre(eps, fre_sqrt_a, fre_dh):
    got = cv.fre_sqrt_area_rectangular_duct_muzychka_yovanovich_2009(eps)
    assert got == pytest.approx(fre_sqrt_a, rel=1e-5)
    # Dh/√A for a rectangle eps: Dh = 2 eps c/(1+eps) with c the long side, √A = c √eps
    dh_over_sqrt_a = 2.0 * np.sqrt(eps) / (1.0 + eps)
    assert got * dh_over_sqrt_a == pytest.approx(fre_dh, rel=1e-5)
    # ... within 0.7 % of Shah & London on the Dh basis (docs/theory.md#muzychka-and-yovanovich-developing-flow).
    assert got * dh_over_sqrt_a == pytest.approx(cv.fre_rectangular_duct_shah_london_1978(eps), rel=7e-3)


@pytest.mark.parametrize("z, nu", [(1e-3, 25.7056), (1e-2, 12.0336), (0.1, 10.6219), (1.0, 10.5886)])
def test_muzychka_yovanovich_nusselt(z, nu):
    # docs/theory.md#muzychka-and-yovanovich-developing-flow [O/N]: Nu_√A (average, UWT, eps = 0.1, Pr = 0.71).
    assert cv.nu_sqrt_area_developing_muzychka_yovanovich_2004(z, 0.71, 0.1) == pytest.approx(nu, rel=1e-5)


@pytest.mark.parametrize("re_star, nu", [(0.1, 0.034998), (1.0, 0.347599), (10.0, 2.402326), (100.0, 6.870702)])
def test_teertstra_check_values(re_star, nu):
    # docs/theory.md#teertstra-composite-nusselt-number [N] (Pr = 0.7).
    assert cv.nu_plate_fin_teertstra_2000(re_star, 0.7) == pytest.approx(nu, rel=1e-5)


def test_teertstra_small_re_limit_is_energy_balance():
    # Teertstra et al. 2000: the Re* -> 0 asymptote Re* Pr / 2 (outlet air at wall temperature).
    re = 1e-4
    assert cv.nu_plate_fin_teertstra_2000(re, 0.71) == pytest.approx(re * 0.71 / 2, rel=1e-6)


@pytest.mark.parametrize("re", [3000.0, 1e4, 1e5, 1e6])
@pytest.mark.parametrize("pr", [0.7, 5.0])
def test_gnielinski_against_ht(re, pr):
    # Oracles: fluids.friction.friction_factor (Darcy, Clamond) and ht.conv_internal.turbulent_Gnielinski.
    fd = fluids_friction.friction_factor(Re=re, eD=0.0)
    assert cv.nu_turbulent_gnielinski_1976(re, pr, fd) == pytest.approx(
        ht_ci.turbulent_Gnielinski(Re=re, Pr=pr, fd=fd), rel=1e-12)


def test_gnielinski_with_petukhov_friction():
    # docs/theory.md#turbulent-and-transitional-flow: with Petukhov f_D = 0.0314798 at Re = 1e4, Nu = 30.0278486.
    fd = cv.friction_darcy_smooth_petukhov_1970(1e4)
    assert fd == pytest.approx(0.0314798, rel=1e-6)
    assert cv.nu_turbulent_gnielinski_1976(1e4, 0.71, fd) == pytest.approx(30.0278486, rel=1e-7)


@pytest.mark.parametrize("re", [5e3, 1e4, 1e5, 1e6])
def test_petukhov_against_colebrook_smooth(re):
    # Oracle: fluids.friction.friction_factor (Colebrook/Clamond, smooth). Petukhov's fit is
    # quoted as within a few per cent of the smooth-pipe law (Incropera 7th ed. §8.5, from memory).
    assert cv.friction_darcy_smooth_petukhov_1970(re) == pytest.approx(
        fluids_friction.friction_factor(Re=re, eD=0.0), rel=4e-2)


@pytest.mark.parametrize("ntu", [0.1, 0.5, 1.0, 2.0, 5.0])
def test_effectiveness_against_ht(ntu):
    # Oracle: ht.hx.effectiveness_from_NTU with Cr = 0 (any subtype gives 1 - exp(-NTU)).
    assert cv.effectiveness_isothermal_wall(ntu) == pytest.approx(
        ht_hx.effectiveness_from_NTU(ntu, Cr=0.0, subtype="counterflow"), rel=1e-12)


def test_transition_weight_is_smooth_and_monotone():
    re = np.linspace(1000, 6000, 2001)
    w = cv.transition_weight(re)
    assert w[0] == 0.0 and w[-1] == 1.0
    assert np.all(np.diff(w) >= 0)
    assert np.max(np.abs(np.diff(w))) < 3e-3  # no jump (max slope 1.5/(4000-2300) x 2.5 step)


def test_scalar_and_array_agree():
    res = np.array([0.5, 5.0, 50.0])
    arr = cv.nu_plate_fin_teertstra_2000(res, 0.7)
    for i, r in enumerate(res):
        one = cv.nu_plate_fin_teertstra_2000(float(r), 0.7)
        assert np.ndim(one) == 0 and one == arr[i]

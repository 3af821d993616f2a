"""Fin-array loss coefficients and friction against fluids (docs/theory.md#heat-sink-pressure-drop)."""
import numpy as np
import pytest

from sinkopt.physics import pressure_drop as pdm

fittings = pytest.importorskip("fluids.fittings")
fluids_core = pytest.importorskip("fluids.core")


@pytest.mark.parametrize("sigma, kc, ke_cm, ke_bc", [
    # docs/theory.md#heat-sink-pressure-drop table (Culham & Muzychka 2001 forms; Borda–Carnot).
    (0.2, 0.4032, 0.9216, 0.6400), (0.5, 0.3150, 0.5625, 0.2500),
    (0.6, 0.2688, 0.4096, 0.1600), (0.8, 0.1512, 0.1296, 0.0400)])
def test_loss_coefficients_table(sigma, kc, ke_cm, ke_bc):
    assert pdm.contraction_loss_culham_muzychka_2001(sigma) == pytest.approx(kc, abs=5e-5)
    assert pdm.expansion_loss_culham_muzychka_2001(sigma) == pytest.approx(ke_cm, abs=5e-5)
    assert pdm.expansion_loss_borda_carnot(sigma) == pytest.approx(ke_bc, abs=5e-5)


@pytest.mark.parametrize("sigma", [0.2, 0.4, 0.6, 0.8, 0.95])
def test_borda_carnot_against_fluids_diffuser_sharp(sigma):
    # Oracle: fluids.fittings.diffuser_sharp(Di1=sqrt(sigma), Di2=1) is the Borda–Carnot loss.
    assert pdm.expansion_loss_borda_carnot(sigma) == pytest.approx(
        fittings.diffuser_sharp(Di1=np.sqrt(sigma), Di2=1.0), rel=1e-9)


@pytest.mark.parametrize("sigma", [0.5, 0.6, 0.8])
def test_contraction_is_the_same_order_as_pipe_sharp_contraction(sigma):
    # Oracle: fluids.fittings.contraction_sharp (Rennels). The plate-fin K_c = 0.42(1 - sigma^2)
    # is a different fit; docs/theory.md#heat-sink-pressure-drop shows the two within 0.06 absolute for sigma >= 0.5 (0.11 at sigma = 0.2).
    assert pdm.contraction_loss_culham_muzychka_2001(sigma) == pytest.approx(
        fittings.contraction_sharp(Di1=1.0, Di2=np.sqrt(sigma)), abs=0.06)


def test_exit_loss_default_is_conservative():
    # docs/theory.md#heat-sink-pressure-drop: (1 - sigma^2)^2 >= (1 - sigma)^2 for sigma in [0, 1].
    s = np.linspace(0, 1, 101)
    assert np.all(pdm.expansion_loss_culham_muzychka_2001(s) >= pdm.expansion_loss_borda_carnot(s) - 1e-15)


def test_dp_from_k_against_fluids():
    # Oracle: fluids.core.dP_from_K.
    assert pdm.pressure_drop_from_loss(2.5, 1.1843, 5.0) == pytest.approx(
        fluids_core.dP_from_K(K=2.5, rho=1.1843, V=5.0), rel=1e-12)


def test_apparent_friction_limits():
    # Fully developed limit: L+ -> inf gives fRe (Shah & London); short duct: 3.44/sqrt(L+)
    # (the Blasius-type boundary-layer limit used by Muzychka & Yovanovich).
    assert pdm.friction_apparent_developing_muzychka_yovanovich_2009(1e9, 24.0) == pytest.approx(24.0, rel=1e-6)
    lp = 1e-8
    assert pdm.friction_apparent_developing_muzychka_yovanovich_2009(lp, 24.0) == pytest.approx(3.44 / np.sqrt(lp), rel=1e-6)


@pytest.mark.parametrize("x_plus, shah", [
    # docs/theory.md#developing-flow-apparent-friction [N]: Shah (1978) parallel plates; the composite differs by <= 6.5 %.
    (1e-4, 344.4705), (1e-3, 111.5729), (1e-2, 39.4000), (0.05, 27.2326), (0.1, 25.6422)])
def test_apparent_friction_against_shah_1978(x_plus, shah):
    got = pdm.friction_apparent_developing_muzychka_yovanovich_2009(x_plus, 24.0)
    assert got == pytest.approx(shah, rel=0.065)


@pytest.mark.parametrize("re", [1e4, 1e5])
def test_turbulent_fanning_against_fluids(re):
    # Oracle: fluids.friction.friction_factor is Darcy; Fanning = Darcy/4 (Petukhov within 4 %).
    fric = pytest.importorskip("fluids.friction")
    assert 4 * pdm.friction_fanning_turbulent_smooth(re) == pytest.approx(fric.friction_factor(Re=re, eD=0.0), rel=4e-2)


def test_laminar_darcy_relation_to_fluids():
    # fluids.friction.friction_laminar(Re) = 64/Re (Darcy, circular tube) = 4 x Fanning 16/Re:
    # checks the Darcy/Fanning factor of 4 this module relies on.
    fric = pytest.importorskip("fluids.friction")
    assert fric.friction_laminar(1000.0) == pytest.approx(4 * 16.0 / 1000.0)

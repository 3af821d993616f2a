"""Fin efficiency against ht and the analytic convective-tip solution (docs/theory.md#fin-efficiency)."""
import numpy as np
import pytest

from sinkopt.physics import fin

ht = pytest.importorskip("ht")


def test_check_values_physics_note():
    # docs/theory.md#fin-efficiency [N/O]: h = 50, k = 200, t = 1 mm, H = 25 mm.
    m = fin.fin_parameter(50.0, 200.0, 1e-3)
    assert m == pytest.approx(22.36068, rel=1e-6)
    assert fin.fin_efficiency_straight_rectangular(m * 0.025) == pytest.approx(0.9073923, rel=1e-6)
    lc = fin.corrected_fin_length(0.025, 1e-3)
    assert fin.fin_efficiency_straight_rectangular(m * lc) == pytest.approx(0.9040803, rel=1e-6)


def test_against_ht_annular_fin_in_straight_limit():
    # Oracle: ht.fin_efficiency_Kern_Kraus (annular fin) tends to the straight fin as the root
    # diameter grows: Do = 5 m, fin diameter 5.05 m (25 mm fin) -> 0.9069732 vs 0.9073923.
    eta_ht = ht.fin_efficiency_Kern_Kraus(5.0, 5.05, 1e-3, 200.0, 50.0)
    m = fin.fin_parameter(50.0, 200.0, 1e-3)
    assert fin.fin_efficiency_straight_rectangular(m * 0.025) == pytest.approx(eta_ht, abs=1e-3)


def test_corrected_length_against_exact_convective_tip():
    # Bergman et al. 2011, Table 3.4 case A (convective tip), from memory: q/theta_b =
    # sqrt(hPkAc) [sinh mH + (h/mk) cosh mH]/[cosh mH + (h/mk) sinh mH]; docs/theory.md#fin-efficiency gives
    # 0.11527032 W/K exact vs 0.11527024 with the corrected length (fin 50 mm long).
    h, k, t, H, w = 50.0, 200.0, 1e-3, 0.025, 0.05
    m = fin.fin_parameter(h, k, t)
    hpka = np.sqrt(h * 2 * w * k * t * w)
    r = h / (m * k)
    exact = hpka * (np.sinh(m * H) + r * np.cosh(m * H)) / (np.cosh(m * H) + r * np.sinh(m * H))
    assert exact == pytest.approx(0.11527032, rel=1e-6)
    lc = fin.corrected_fin_length(H, t)
    approx = h * 2 * lc * w * fin.fin_efficiency_straight_rectangular(m * lc)
    assert approx == pytest.approx(exact, rel=1e-5)


def test_limits_and_vectorisation():
    x = np.array([0.0, 1e-9, 0.5, 5.0, 50.0])
    eta = fin.fin_efficiency_straight_rectangular(x)
    assert eta[0] == 1.0 and eta[1] == pytest.approx(1.0)
    assert np.all(np.diff(eta) <= 0)
    assert eta[-1] == pytest.approx(1 / 50.0)  # tanh -> 1: long-fin limit 1/(mL)
    assert fin.fin_efficiency_straight_rectangular(0.5) == eta[2]

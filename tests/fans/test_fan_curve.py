"""Curve model: PCHIP vs SciPy, no overshoot or extrapolation, stall limit, fan laws, arrays."""
from __future__ import annotations

import math

import numpy as np
import pytest
from fan_helpers import CATALOG, quadratic_fan
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.interpolate import PchipInterpolator

from sinkopt.errors import InputError
from sinkopt.fans import FanArray, FanCurve, load_fan_curve
from sinkopt.fans.curve import _IntervalFinder, pchip_evaluate


@pytest.fixture
def quad_fan():
    return quadratic_fan()


knots = st.lists(st.floats(1e-4, 1.0), min_size=3, max_size=40)


@settings(max_examples=60, deadline=None)
@given(knots, st.data())
def test_pchip_matches_scipy_and_never_overshoots(dx, data):
    q = np.cumsum(np.r_[0.0, dx]) * 1e-2
    p = np.asarray(data.draw(st.lists(st.floats(0.0, 500.0), min_size=q.size, max_size=q.size)))
    p[-1] = 0.0
    p[-2] = max(p[-2], 1.0)  # the stable branch falls toward free delivery
    fan = FanCurve(q, p)
    u = np.r_[np.linspace(q[0], q[-1], 997), q]
    # reference: scipy.interpolate.PchipInterpolator (Fritsch & Carlson 1980 / Fritsch & Butland)
    np.testing.assert_allclose(fan.pressure(u), PchipInterpolator(q, p)(u), rtol=1e-12, atol=1e-9)
    # shape preserving: inside every interval the curve stays between its end values
    i = np.clip(np.searchsorted(q, u, side="right") - 1, 0, q.size - 2)
    lo, hi = np.minimum(p[i], p[i + 1]), np.maximum(p[i], p[i + 1])
    v = fan.pressure(u)
    assert np.all(v >= lo - 1e-9) and np.all(v <= hi + 1e-9)


@settings(max_examples=60, deadline=None)
@given(knots, st.lists(st.floats(-0.5, 1.5), min_size=1, max_size=200))
def test_interval_finder_equals_searchsorted(dx, u):
    x = np.cumsum(np.r_[0.0, dx])
    u = np.asarray(u) * x[-1]
    u = np.r_[u, x, np.nextafter(x, -np.inf), np.nextafter(x, np.inf)]
    expected = np.clip(np.searchsorted(x, u, side="right") - 1, 0, x.size - 2)  # numpy reference
    np.testing.assert_array_equal(_IntervalFinder(x)(u), expected)


def test_interval_finder_with_capped_grid():
    x = np.r_[0.0, 1e-9, 2e-9, np.linspace(0.1, 1.0, 10)]  # spacing forces the grid cap
    f = _IntervalFinder(x)
    assert f.cells == _IntervalFinder.MAX_CELLS and f.steps >= 3
    u = np.r_[np.linspace(-0.1, 1.1, 5001), x, 0.5e-9, 1.5e-9]
    np.testing.assert_array_equal(f(u), np.clip(np.searchsorted(x, u, "right") - 1, 0, x.size - 2))
    c = np.ones((4, x.size - 1))
    np.testing.assert_array_equal(pchip_evaluate(x, c, u, f), pchip_evaluate(x, c, u))


def test_no_extrapolation(quad_fan):
    q = np.array([-1e-6, 0.0, 0.005, 0.010, 0.0100001])
    p = quad_fan.pressure(q)
    assert np.isnan(p[0]) and np.isnan(p[-1]) and np.all(np.isfinite(p[1:-1]))
    # at speed ratio s the data reach s*Qmax and no further
    assert np.isnan(quad_fan.pressure(0.0081, speed_ratio=0.8))
    assert quad_fan.pressure(0.008, speed_ratio=0.8) == pytest.approx(0.0, abs=1e-12)


def test_scalar_in_scalar_out(quad_fan):
    assert np.ndim(quad_fan.pressure(0.004)) == 0
    assert quad_fan.pressure(np.array([0.004, 0.005])).shape == (2,)


def test_stall_limit_of_the_stall_demo_fan():
    fan = load_fan_curve(CATALOG / "demo-axial-80-stall.csv")
    # walking back from free delivery, pressure rises up to the hump at 0.70 m3/min (1 min = 60 s)
    assert fan.q_stall_limit_m3_s == pytest.approx(0.70 / 60, rel=1e-15)
    assert fan.has_stall_region and fan.stall_index == 7


def test_monotone_fan_has_no_stall_region(quad_fan):
    assert quad_fan.stall_index == 0 and not quad_fan.has_stall_region
    assert quad_fan.q_stall_limit_m3_s == 0.0


def test_flat_segment_counts_as_stall():
    fan = FanCurve([0, 1, 2, 3, 4], [10, 8, 8, 5, 0])
    assert fan.q_stall_limit_m3_s == 2  # the walk back stops where p no longer strictly rises


def test_fan_laws_speed():
    # docs/theory.md#fan-operating-point check: N2/N1 = 0.8 -> Q x0.8, dp x0.64, P x0.512; noise +50 log10(0.8) dB
    fan = load_fan_curve(CATALOG / "demo-axial-80-stall.csv")
    slow = fan.scaled(0.8)
    np.testing.assert_allclose(slow.flow_m3_s, 0.8 * fan.flow_m3_s, rtol=1e-15)
    np.testing.assert_allclose(slow.pressure_Pa, 0.64 * fan.pressure_Pa, rtol=1e-15)
    np.testing.assert_allclose(slow.power_W, 0.512 * fan.power_W, rtol=1e-15)
    assert slow.noise_dBA - fan.noise_dBA == pytest.approx(50 * math.log10(0.8), rel=1e-15)
    assert slow.noise_dBA - fan.noise_dBA == pytest.approx(-4.845501, abs=1e-6)
    assert slow.speed_rpm == pytest.approx(0.8 * 3200)
    q = np.linspace(0, slow.q_free_m3_s, 51)
    np.testing.assert_allclose(fan.pressure(q, speed_ratio=0.8), slow.pressure(q), rtol=1e-12,
                               atol=1e-12)
    np.testing.assert_allclose(fan.electrical_power(q, speed_ratio=0.8), slow.electrical_power(q),
                               rtol=1e-12)


def test_fan_laws_rated_power():
    fan = load_fan_curve(CATALOG / "demo-axial-40.csv")
    assert fan.electrical_power(0.001, speed_ratio=0.8) == pytest.approx(0.512 * 1.2, rel=1e-15)


def test_density_scaling():
    # at equal volume flow dp is proportional to density (fan laws; docs/theory.md#fan-operating-point)
    fan = quadratic_fan()
    q = np.linspace(0, 0.01, 11)
    rho = 0.870  # 2000 m, 45 °C (common practice, no source)
    np.testing.assert_allclose(fan.pressure(q, air_density_kg_m3=rho),
                               fan.pressure(q) * rho / 1.2, rtol=1e-15)
    thin = fan.scaled(1.0, rho)
    assert thin.air_density_kg_m3 == rho
    np.testing.assert_allclose(thin.pressure_Pa, fan.pressure_Pa * rho / 1.2, rtol=1e-15)


def test_noise():
    fan = quadratic_fan(noise_dBA=40.0)
    assert fan.noise(0.5) == pytest.approx(40 - 50 * math.log10(2))
    assert np.isnan(quadratic_fan().noise(0.5))
    # N equal incoherent sources: +10 log10 N (common practice, no source)
    assert FanArray(fan, count=4).noise(1.0) == pytest.approx(40 + 10 * math.log10(4))
    assert FanArray(fan, count=4, failed=1, shuttered=True).noise() == pytest.approx(
        40 + 10 * math.log10(3))


@pytest.mark.parametrize("kwargs, pattern", [
    (dict(flow_m3_s=[0, 1], pressure_Pa=[1, 0]), "at least 3 points"),
    (dict(flow_m3_s=[0, 1, 2], pressure_Pa=[1, -1, 0]), "pressure_Pa >= 0"),
    (dict(flow_m3_s=[0, 1, np.nan], pressure_Pa=[1, 1, 0]), "flow_m3_s >= 0"),
    (dict(flow_m3_s=[0, 1, 1], pressure_Pa=[2, 1, 0]), "distinct"),
    (dict(flow_m3_s=[0, 1, 2], pressure_Pa=[2, 1, 1]), "must fall toward free delivery"),
    (dict(flow_m3_s=[0, 1, 2], pressure_Pa=[2, 1, 0], air_density_kg_m3=0), "air_density"),
    (dict(flow_m3_s=[0, 1, 2], pressure_Pa=[2, 1]), "same length"),
])
def test_curve_rejects_bad_points(kwargs, pattern):
    with pytest.raises(InputError, match=pattern):
        FanCurve(**kwargs)


def test_curve_sorts_points():
    fan = FanCurve([2, 0, 1], [0, 2, 1], power_W=[3, 1, 2], lines=(7, 5, 6))
    assert fan.flow_m3_s.tolist() == [0, 1, 2] and fan.power_W.tolist() == [1, 2, 3]
    assert fan.lines == (5, 6, 7)
    with pytest.raises(ValueError):
        fan.flow_m3_s[0] = 1.0  # read-only


@pytest.mark.parametrize("kwargs, pattern", [
    (dict(count=0), "count >= 1"),
    (dict(count=2, failed=2), "failed < count"),
    (dict(count=2, arrangement="ring"), "one of 'parallel', 'series'"),
    (dict(count=2, failed=1), "needs the fan's flow area"),
    (dict(count=2, failed=1, arrangement="series"), "needs the fan's flow area"),
    (dict(count=2, failed=1, fan_area_m2=1e-3, leak_K=0), "leak_K > 0"),
])
def test_array_validation(quad_fan, kwargs, pattern):
    with pytest.raises(InputError, match=pattern):
        FanArray(quad_fan, **kwargs)


def test_array_defaults(quad_fan):
    assert FanArray(quad_fan, count=2, failed=1, shuttered=True).running == 1
    arr = FanArray(quadratic_fan(size_mm=80), count=3, failed=1)
    assert arr.fan_area_m2 == pytest.approx(math.pi / 4 * 0.08**2)  # full circle of the frame side


def test_array_curves(quad_fan):
    # docs/theory.md#fan-operating-point: series doubles dp at equal Q, parallel doubles Q at equal dp
    q = np.linspace(0, 0.01, 11)
    par = FanArray(quad_fan, count=2).evaluate(q)
    ser = FanArray(quad_fan, count=2, arrangement="series").evaluate(q)
    np.testing.assert_allclose(par.flow_m3_s, 2 * q)
    np.testing.assert_allclose(par.pressure_Pa, quad_fan.pressure(q))
    np.testing.assert_allclose(ser.flow_m3_s, q)
    np.testing.assert_allclose(ser.pressure_Pa, 2 * quad_fan.pressure(q))
    assert FanArray(quad_fan, count=2).sample(50).flow_m3_s.size >= 50

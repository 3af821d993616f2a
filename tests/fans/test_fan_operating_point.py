"""Operating point: closed-form cases, scipy.optimize.brentq, stall, no intersection, powers."""
from __future__ import annotations

import math

import numpy as np
import pytest
from fan_helpers import CATALOG, K_SYS, P0_Pa, QMAX_m3_s, quadratic_fan
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq

from sinkopt.errors import InputError
from sinkopt.fans import FanArray, FanCurve, load_fan_curve, solve_operating_point
from sinkopt.fans.operating_point import DEFAULT_FAN_EFFICIENCY, solve_operating_points


@pytest.fixture
def quad_fan():
    return quadratic_fan()

# PCHIP through 40 equally spaced points of the quadratic fan reproduces it to ~1e-6 relative
# near the operating points (measured: 1.0e-6 on Q); 1e-5 leaves margin for that interpolation
# error while still resolving the 5-6 significant digits printed in docs/theory.md#fan-operating-point.
RTOL_40 = 1e-5


def quad_system(q):
    return K_SYS * q**2


@pytest.mark.parametrize("count, arrangement, q_closed, dp_closed, q_printed, dp_printed", [
    # closed form (docs/theory.md#fan-operating-point): p0 (1 - (Q/(m Qmax))^2) * n_s = k Q^2
    #   => Q = sqrt(n_s p0 / (k + n_s p0 / (m Qmax)^2)), m fans in parallel, n_s in series
    (1, "parallel", math.sqrt(P0_Pa / (K_SYS + P0_Pa / QMAX_m3_s**2)), None, 0.0081650, 26.6667),
    (2, "series", math.sqrt(2 * P0_Pa / (K_SYS + 2 * P0_Pa / QMAX_m3_s**2)), None, 0.0089443,
     32.0000),
    (2, "parallel", math.sqrt(P0_Pa / (K_SYS + P0_Pa / (2 * QMAX_m3_s) ** 2)), None, 0.0115470,
     53.3333),
])
def test_closed_form_cases(count, arrangement, q_closed, dp_closed, q_printed, dp_printed):
    arr = FanArray(quadratic_fan(40), count=count, arrangement=arrangement)
    op = solve_operating_point(arr, quad_system)
    assert op.flow_m3_s.shape == (1,)
    assert op.flow_m3_s[0] == pytest.approx(q_closed, rel=RTOL_40)
    assert op.pressure_Pa[0] == pytest.approx(K_SYS * q_closed**2, rel=2 * RTOL_40)
    # the values printed in docs/theory.md#fan-operating-point (5-6 significant digits)
    assert op.flow_m3_s[0] == pytest.approx(q_printed, rel=RTOL_40)
    assert op.pressure_Pa[0] == pytest.approx(dp_printed, rel=2 * RTOL_40)
    assert not op.no_intersection[0] and not op.in_stall[0]
    assert op.air_power_W[0] == pytest.approx(op.flow_m3_s[0] * op.pressure_Pa[0], rel=1e-15)


def test_closed_form_converges_with_more_points():
    # PCHIP is third-order accurate: 400 points bring the error to ~1e-9
    op = solve_operating_point(quadratic_fan(400), quad_system)
    assert op.flow_m3_s[0] == pytest.approx(math.sqrt(P0_Pa / (K_SYS + P0_Pa / QMAX_m3_s**2)),
                                            rel=1e-8)


def test_closed_form_batch_with_speeds_and_densities():
    # speed s and density rho: p0 -> s^2 rho/1.2 p0, Qmax -> s Qmax (fan laws)
    rng = np.random.default_rng(7)
    n = 1000
    s = rng.uniform(0.3, 1.5, n)
    rho = rng.uniform(0.7, 1.3, n)
    k = rng.uniform(1e4, 3e6, n)
    op = solve_operating_point(FanArray(quadratic_fan(400), count=3), lambda q: k * q**2,
                               speed_ratio=s, air_density=rho)
    p0 = P0_Pa * s**2 * rho / 1.2
    q_exact = np.sqrt(p0 / (k + p0 / (3 * s * QMAX_m3_s) ** 2))
    np.testing.assert_allclose(op.flow_m3_s, q_exact, rtol=1e-8)
    np.testing.assert_allclose(op.fan_flow_m3_s, q_exact / 3, rtol=1e-8)


def _random_case(rng):
    """A random monotone fan (data points), a power-law system and operating conditions."""
    m = int(rng.integers(6, 30))
    qmax = rng.uniform(1e-3, 0.1)
    a = rng.uniform(0.8, 3.0)
    p0 = rng.uniform(10, 1000)
    q = np.sort(np.r_[0.0, rng.uniform(0, qmax, m - 2), qmax])
    q = np.unique(q)
    p = p0 * (1 - (q / qmax) ** a)
    return q, p


def test_against_brentq_random_monotone_fans():
    rng = np.random.default_rng(20261201)
    for case in range(25):
        q, p = _random_case(rng)
        fan = FanCurve(q, p)
        count = int(rng.integers(1, 4))
        arrangement = ("parallel", "series")[case % 2]
        n = 40
        s = rng.uniform(0.3, 1.6, n)
        rho = rng.uniform(0.7, 1.3, n)
        expo = rng.uniform(1.0, 2.0, n)  # laminar ... turbulent systems (docs/theory.md#fan-operating-point)
        # choose k so that the system crosses the fan somewhere inside the data
        q_target = rng.uniform(0.05, 0.95, n) * s * q[-1] * (count if arrangement == "parallel"
                                                               else 1)
        k = rng.uniform(0.05, 1.0, n) * p[0] * s**2 / q_target**expo

        op = solve_operating_point(FanArray(fan, count=count, arrangement=arrangement),
                                   lambda Q: k * Q**expo, speed_ratio=s, air_density=rho)
        ref = PchipInterpolator(q, p)  # reference interpolant built independently by SciPy
        for i in range(n):
            n_par = count if arrangement == "parallel" else 1
            n_ser = count if arrangement == "series" else 1
            q_top = n_par * s[i] * q[-1]

            def f(Q):  # fan laws + identical fans (docs/theory.md#fan-operating-point), then minus the system
                return (n_ser * s[i] ** 2 * rho[i] / 1.2 * ref(Q / (n_par * s[i]))
                        - k[i] * Q ** expo[i])

            q_ref = brentq(f, 0.0, q_top, xtol=1e-15, rtol=1e-13)
            assert op.flow_m3_s[i] == pytest.approx(q_ref, rel=1e-9), (case, i)
            assert op.pressure_Pa[i] == pytest.approx(k[i] * q_ref ** expo[i], rel=1e-8)
        assert not op.no_intersection.any() and not op.in_stall.any()


def test_failed_parallel_fan_against_brentq_on_pressure():
    # Independent formulation in dp (docs/fan-curves.md): each running fan gives
    # Q1(dp) = s Qmax sqrt(1 - dp/(s^2 r p0)) (inverse of the quadratic fan), the stopped fan leaks
    # A sqrt(2 dp/(K rho)) (orifice equation, K referred to the area A), the system takes
    # sqrt(dp/k); find dp with brentq.
    fan = quadratic_fan(400, size_mm=40)
    area = math.pi / 4 * 0.04**2
    rng = np.random.default_rng(3)
    n = 30
    s = rng.uniform(0.6, 1.3, n)
    rho = rng.uniform(0.8, 1.25, n)
    k = rng.uniform(2e4, 2e6, n)
    for count, leak_K in ((2, 1.0), (3, 1.0), (4, 2.5)):
        arr = FanArray(fan, count=count, failed=1, leak_K=leak_K)
        op = solve_operating_point(arr, lambda q: k * q**2, speed_ratio=s, air_density=rho)
        for i in range(n):
            p_top = s[i] ** 2 * rho[i] / 1.2 * P0_Pa

            def net(dp):
                q1 = s[i] * QMAX_m3_s * math.sqrt(max(1 - dp / p_top, 0.0))
                leak = area * math.sqrt(2 * dp / (leak_K * rho[i]))
                return (count - 1) * q1 - leak - math.sqrt(dp / k[i])

            dp = brentq(net, 1e-12, p_top, xtol=1e-14, rtol=1e-13)
            assert op.pressure_Pa[i] == pytest.approx(dp, rel=1e-6), (count, i)
            assert op.flow_m3_s[i] == pytest.approx(math.sqrt(dp / k[i]), rel=1e-6)
            assert op.leak_flow_m3_s[i] == pytest.approx(
                area * math.sqrt(2 * dp / (leak_K * rho[i])), rel=1e-6)


def test_failed_parallel_fan_is_worse_than_shuttered_or_n_minus_1():
    fan = quadratic_fan(100, size_mm=60)
    k = np.array([1e5, 4e5, 2e6])
    leak = solve_operating_point(FanArray(fan, count=3, failed=1), lambda q: k * q**2, n=3)
    shut = solve_operating_point(FanArray(fan, count=3, failed=1, shuttered=True),
                                 lambda q: k * q**2, n=3)
    n_minus_1 = solve_operating_point(FanArray(fan, count=2), lambda q: k * q**2, n=3)
    np.testing.assert_allclose(shut.flow_m3_s, n_minus_1.flow_m3_s, rtol=1e-12)
    assert np.all(leak.flow_m3_s < shut.flow_m3_s)
    assert np.all(shut.leak_flow_m3_s == 0)


def test_failed_series_fan_closed_form():
    # (N-1) p0 (1 - (Q/Qmax)^2) - K rho/2 (Q/A)^2 = k Q^2
    #   => Q = sqrt((N-1) p0 / (k + (N-1) p0/Qmax^2 + K rho/(2 A^2)))
    fan = quadratic_fan(400, size_mm=40)
    area = math.pi / 4 * 0.04**2
    for count, K in ((2, 3.0), (3, 1.5)):
        op = solve_operating_point(FanArray(fan, count, "series", failed=1, stopped_loss_K=K),
                                   quad_system, air_density=1.1)
        p0 = P0_Pa * 1.1 / 1.2
        q = math.sqrt((count - 1) * p0 / (K_SYS + (count - 1) * p0 / QMAX_m3_s**2
                                          + K * 1.1 / (2 * area**2)))
        assert op.flow_m3_s[0] == pytest.approx(q, rel=1e-8)


def _stall_fan():
    return load_fan_curve(CATALOG / "demo-axial-80-stall.csv")


def _largest_root_reference(fan, k):
    """Largest-flow root of PCHIP(fan) - k Q^2 by a fine scan + brentq (SciPy only)."""
    ref = PchipInterpolator(fan.flow_m3_s, fan.pressure_Pa)
    f = lambda Q: ref(Q) - k * Q**2  # noqa: E731
    grid = np.linspace(0, fan.q_free_m3_s, 20001)
    g = f(grid)
    j = np.nonzero((g[:-1] >= 0) & (g[1:] < 0))[0][-1]
    return brentq(f, grid[j], grid[j + 1], xtol=1e-15, rtol=1e-13)


def test_stall_region_root_and_flag():
    fan = _stall_fan()
    q_stall = fan.q_stall_limit_m3_s
    p_stall = fan.pressure(q_stall)
    # k_steep: the system passes above the hump, so the point lies in the stall region;
    # k_mild: it crosses on the stable branch
    k = np.array([1.5 * p_stall / q_stall**2, 0.5 * p_stall / q_stall**2, 4 * p_stall / q_stall**2])
    op = solve_operating_point(fan, lambda q: k * q**2, n=3)
    assert op.in_stall.tolist() == [True, False, True]
    assert op.feasible().tolist() == [False, True, False]
    assert op.feasible(allow_stall=True).all()
    for i in range(3):
        assert op.flow_m3_s[i] == pytest.approx(_largest_root_reference(fan, k[i]), rel=1e-9)
    assert op.flow_m3_s[0] < q_stall and op.flow_m3_s[1] > q_stall


def test_no_intersection_beyond_the_data():
    # data end at 40 % of the shut-off pressure: a weak system would cross beyond the data
    fan = FanCurve([0, 0.005, 0.010], [50, 35, 20])
    op = solve_operating_point(fan, lambda q: np.array([1e4, 4e5]) * q**2, n=2)
    assert op.no_intersection.tolist() == [True, False]
    assert np.isnan(op.flow_m3_s[0]) and np.isnan(op.pressure_Pa[0])
    assert np.isnan(op.electrical_power_W[0]) and np.isnan(op.air_power_W[0])
    assert not op.in_stall[0]
    assert not op.feasible(allow_stall=True)[0]


def test_no_intersection_below_the_data():
    # data start at 30 % of free delivery: a very restrictive system would cross left of them
    fan = FanCurve([0.003, 0.006, 0.010], [60, 40, 0])
    op = solve_operating_point(fan, lambda q: np.array([1e8, 1e5]) * q**2, n=2)
    assert op.no_intersection.tolist() == [True, False]


def test_fan_that_cannot_move_air_is_infeasible_not_an_error(quad_fan):
    s = np.array([1.0, 0.0, -1.0, np.nan, 1.0, 1.0])
    rho = np.array([1.2, 1.2, 1.2, 1.2, 0.0, 1.2])
    k = np.array([4e5, 4e5, 4e5, 4e5, 4e5, np.nan])  # last: the system model gave NaN
    op = solve_operating_point(quad_fan, lambda q: k * q**2, speed_ratio=s, air_density=rho)
    assert op.no_intersection.tolist() == [False, True, True, True, True, True]
    assert np.isnan(op.flow_m3_s[1:]).all() and np.isfinite(op.flow_m3_s[0])


def test_mixed_batch_shapes_and_system_contract():
    fan = _stall_fan()
    q_stall = fan.q_stall_limit_m3_s
    k = np.array([0.5, 1.5, 0.0001, 3.0]) * fan.pressure(q_stall) / q_stall**2
    s = np.array([1.0, 1.0, 1.0, 0.0])
    calls = []

    def system(q):
        assert q.shape == (4,) and np.all(np.isfinite(q)) and np.all(q >= 0)
        calls.append(1)
        return k * q**2

    op = solve_operating_point(fan, system, speed_ratio=s)
    for name in ("flow_m3_s", "pressure_Pa", "air_power_W", "electrical_power_W", "noise_dBA",
                 "no_intersection", "in_stall", "fan_flow_m3_s", "leak_flow_m3_s"):
        assert getattr(op, name).shape == (4,), name
    assert op.in_stall.tolist() == [False, True, False, False]
    assert op.no_intersection.tolist() == [False, False, False, True]
    assert len(calls) < 40  # a handful of vectorised calls, not one per design
    assert len(op) == 4


def test_residual_is_solved_to_tolerance(quad_fan):
    k = np.geomspace(1e3, 1e8, 200)
    op = solve_operating_point(quad_fan, lambda q: k * q**2, n=k.size)
    fan_p = quad_fan.pressure(op.flow_m3_s)
    np.testing.assert_allclose(fan_p, k * op.flow_m3_s**2, rtol=1e-8, atol=1e-9)


def test_scalar_inputs_and_n(quad_fan):
    assert solve_operating_point(quad_fan, quad_system).flow_m3_s.shape == (1,)
    op = solve_operating_point(quad_fan, quad_system, speed_ratio=0.9, n=5)
    assert op.flow_m3_s.shape == (5,) and np.all(op.flow_m3_s == op.flow_m3_s[0])
    with pytest.raises(InputError, match="n=4"):
        solve_operating_point(quad_fan, quad_system, speed_ratio=np.ones(3), n=4)
    with pytest.raises(InputError, match=r"returned shape \(3,\) for n=1 designs; pass n="):
        solve_operating_point(quad_fan, lambda q: np.ones(3) * q)
    with pytest.raises(InputError, match="efficiency"):
        solve_operating_point(quad_fan, quad_system, efficiency=0)


def test_electrical_power_from_power_column():
    fan = _stall_fan()  # power column, 15 points
    k = np.full(3, 0.3 * fan.pressure(fan.q_stall_limit_m3_s) / fan.q_stall_limit_m3_s**2)
    s = np.array([1.0, 0.8, 1.1])
    rho = np.array([1.2, 1.0, 1.1])
    op = solve_operating_point(FanArray(fan, count=2), lambda q: k * q**2, speed_ratio=s,
                               air_density=rho)
    # per fan: power column interpolated linearly at q/s, times s^3 rho/rho_ref (fan laws)
    per_fan = np.interp(op.fan_flow_m3_s / s, fan.flow_m3_s, fan.power_W) * s**3 * rho / 1.2
    np.testing.assert_allclose(op.electrical_power_W, 2 * per_fan, rtol=1e-12)


def test_electrical_power_from_rated_power_and_noise():
    fan = load_fan_curve(CATALOG / "demo-axial-40.csv")  # power_W 1.2, noise 28 dB(A)
    op = solve_operating_point(FanArray(fan, count=3), lambda q: np.full(2, 2e6) * q**2,
                               speed_ratio=np.array([1.0, 0.7]))
    np.testing.assert_allclose(op.electrical_power_W, 3 * 1.2 * np.array([1.0, 0.7**3]), rtol=1e-14)
    np.testing.assert_allclose(op.noise_dBA, 28 + 10 * math.log10(3)
                               + 50 * np.log10([1.0, 0.7]), rtol=1e-14)


def test_electrical_power_from_efficiency(quad_fan):
    op = solve_operating_point(FanArray(quad_fan, count=2, arrangement="series"), quad_system)
    assert DEFAULT_FAN_EFFICIENCY == 0.20
    assert op.electrical_power_W[0] == pytest.approx(op.air_power_W[0] / 0.20, rel=1e-12)
    op = solve_operating_point(quad_fan, quad_system, efficiency=0.4)
    assert op.electrical_power_W[0] == pytest.approx(op.air_power_W[0] / 0.4, rel=1e-12)
    assert np.isnan(op.noise_dBA[0])


def test_efficiency_power_counts_the_leak_recirculation():
    fan = quadratic_fan(100, size_mm=40)
    op = solve_operating_point(FanArray(fan, count=3, failed=1), quad_system)
    # the two running fans each move fan_flow against pressure_Pa; only flow_m3_s reaches the system
    assert op.electrical_power_W[0] == pytest.approx(
        2 * op.fan_flow_m3_s[0] * op.pressure_Pa[0] / DEFAULT_FAN_EFFICIENCY, rel=1e-12)
    assert op.flow_m3_s[0] == pytest.approx(2 * op.fan_flow_m3_s[0] - op.leak_flow_m3_s[0],
                                            rel=1e-12)


def test_against_brentq_random_fans_with_stall_dip():
    # random axial-like curves with a dip; reference: largest root of SciPy PCHIP - system by a
    # fine scan + scipy.optimize.brentq; in_stall must equal "root below the stall limit"
    rng = np.random.default_rng(11)
    for case in range(20):
        qmax = rng.uniform(5e-3, 5e-2)
        p0 = rng.uniform(20, 300)
        u = np.linspace(0, 1, int(rng.integers(10, 25)))
        dip = rng.uniform(0.15, 0.4) * np.exp(-(((u - rng.uniform(0.3, 0.5)) / 0.1) ** 2))
        p = p0 * (1 - u**2) * (1 - dip)
        p[-1] = 0.0
        fan = FanCurve(u * qmax, p)
        n = 30
        expo = rng.uniform(1.0, 2.0, n)
        q_target = rng.uniform(0.1, 0.95, n) * qmax
        k = fan.pressure(q_target) / q_target**expo * rng.uniform(0.95, 1.05, n)
        op = solve_operating_point(fan, lambda Q: k * Q**expo, n=n)
        ref = PchipInterpolator(fan.flow_m3_s, fan.pressure_Pa)
        grid = np.linspace(0, qmax, 40001)
        for i in range(n):
            def f(Q):
                return ref(Q) - k[i] * Q ** expo[i]
            g = f(grid)
            j = np.nonzero((g[:-1] >= 0) & (g[1:] < 0))[0][-1]
            q_ref = brentq(f, grid[j], grid[j + 1], xtol=1e-15, rtol=1e-13)
            assert op.flow_m3_s[i] == pytest.approx(q_ref, rel=1e-8), (case, i)
            assert op.in_stall[i] == (q_ref < fan.q_stall_limit_m3_s), (case, i)
        assert not op.no_intersection.any()


_OP_FIELDS = ("flow_m3_s", "pressure_Pa", "air_power_W", "electrical_power_W", "noise_dBA",
              "fan_flow_m3_s", "leak_flow_m3_s", "speed_ratio", "air_density_kg_m3")


def _mixed_arrays():
    """Every catalog fan (stall dips, power columns, rated powers) in parallel and series
    arrays, with and without a stopped fan, plus the quadratic fan without noise or power."""
    fans = [load_fan_curve(path) for path in sorted(CATALOG.glob("*.csv"))]
    arrays = []
    for i, fan in enumerate(fans):
        arrays += [FanArray(fan), FanArray(fan, count=2), FanArray(fan, count=3, failed=1),
                   FanArray(fan, count=2, arrangement="series", failed=i % 2),
                   FanArray(fan, count=3, failed=1, shuttered=True)]
    arrays.append(FanArray(quadratic_fan(40), count=2, arrangement="series"))
    return arrays


def test_multi_curve_solve_equals_per_group_solves():
    # one vectorised pass over designs that use different fan arrays = one solve per array on
    # its designs (a design's iterates depend on its own data only): equal to 1e-12
    arrays = _mixed_arrays()
    rng = np.random.default_rng(20261202)
    n = 4000
    group = rng.integers(0, len(arrays), n)
    s = rng.uniform(0.4, 1.2, n)
    s[::97] = 0.0  # cannot move air
    rho = rng.uniform(0.9, 1.25, n)
    expo = rng.uniform(1.0, 2.0, n)
    # systems from very open to very restrictive: stable branch, stall region, no intersection
    q_ref = np.array([a.curve.q_free_m3_s * (a.running if a.arrangement == "parallel" else 1)
                      for a in arrays])[group] * s
    p_ref = np.array([a.curve.p_max_Pa * (a.running if a.arrangement == "series" else 1)
                      for a in arrays])[group] * s**2
    k = p_ref / np.maximum(q_ref, 1e-9) ** expo * 10 ** rng.uniform(-1.5, 1.5, n)
    efficiency = [None if i % 3 else 0.3 for i in range(len(arrays))]
    calls = []

    def system(q, index):
        calls.append(None if index is None else index.size)
        kk, ee = (k, expo) if index is None else (k[index], expo[index])
        assert q.shape == kk.shape and np.all(np.isfinite(q)) and np.all(q >= 0)
        return kk * q**ee

    op = solve_operating_points(arrays, group, system, speed_ratio=s, air_density=rho,
                                efficiency=efficiency)
    assert len(calls) < 60  # vectorised calls, not one per design or per group
    assert op.in_stall.sum() > 100 and op.no_intersection.sum() >= 41
    assert (~op.no_intersection & ~op.in_stall).sum() > 1000
    for j, arr in enumerate(arrays):
        sel = np.flatnonzero(group == j)
        ref = solve_operating_point(arr, lambda q: k[sel] * q ** expo[sel], speed_ratio=s[sel],
                                    air_density=rho[sel],
                                    efficiency=efficiency[j] or DEFAULT_FAN_EFFICIENCY)
        np.testing.assert_array_equal(op.no_intersection[sel], ref.no_intersection)
        np.testing.assert_array_equal(op.in_stall[sel], ref.in_stall)
        for name in _OP_FIELDS:
            np.testing.assert_allclose(getattr(op, name)[sel], getattr(ref, name), rtol=1e-12,
                                       atol=0, equal_nan=True, err_msg=f"{j}: {name}")


def test_multi_curve_solve_against_brentq_and_inputs():
    fans = [quadratic_fan(40), _stall_fan()]
    k = np.array([4e5, 4e5, 1e5, 2e6])
    group = np.array([0, 1, 1, 0])
    op = solve_operating_points(fans, group, lambda q, i: (k if i is None else k[i]) * q**2)
    for i in range(4):
        ref = PchipInterpolator(fans[group[i]].flow_m3_s, fans[group[i]].pressure_Pa)
        grid = np.linspace(0, fans[group[i]].q_free_m3_s, 20001)
        g = ref(grid) - k[i] * grid**2
        j = np.nonzero((g[:-1] >= 0) & (g[1:] < 0))[0][-1]
        q_ref = brentq(lambda Q: ref(Q) - k[i] * Q**2, grid[j], grid[j + 1], xtol=1e-15,
                       rtol=1e-13)
        assert op.flow_m3_s[i] == pytest.approx(q_ref, rel=1e-9), i
    np.testing.assert_array_equal(op.air_density_kg_m3, [1.2, 1.2, 1.2, 1.2])
    with pytest.raises(InputError, match="group_index"):
        solve_operating_points(fans, [0, 2], lambda q, i: q)
    with pytest.raises(InputError, match="efficiency"):
        solve_operating_points(fans, [0, 1], lambda q, i: q, efficiency=[0.2])
    with pytest.raises(InputError, match="speed_ratio"):
        solve_operating_points(fans, [0, 1], lambda q, i: q, speed_ratio=np.ones(3))

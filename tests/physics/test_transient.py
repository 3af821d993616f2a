"""Transient RC networks against analytic solutions and an independent finite-volume solve."""
import numpy as np
import pytest
from scipy.linalg import lu_factor, lu_solve

from sinkopt.physics import transient as tr


def _step(n, node=0, watts=1.0):
    power = np.zeros((1, n))
    power[0, node] = watts
    return ([0.0], power)


def test_single_rc_step_against_analytic():
    # Analytic step response of one RC node: T = P R (1 - exp(-t/RC)).
    r, c, p = 2.0, 3.0, 5.0
    t = np.array([0.0, 0.1, 1.0, 6.0, 30.0, 300.0])
    got = tr.simulate([[1.0 / r]], [c], ([0.0], [[p]]), t)[:, 0]
    np.testing.assert_allclose(got, p * r * (1.0 - np.exp(-t / (r * c))), rtol=1e-13, atol=1e-15)


def test_single_rc_batch_matches_scalar_calls():
    # Vectorised over designs: a batch of single-RC networks against the analytic response.
    r = np.array([1.0, 2.0, 0.5])
    c = np.array([10.0, 1.0, 4.0])
    g = (1.0 / r)[:, None, None]
    t = np.geomspace(1e-3, 1e3, 50)
    got = tr.simulate(g, c[:, None], ([0.0], np.ones((3, 1, 1))), t)[..., 0]
    want = r[:, None] * (1.0 - np.exp(-t[None, :] / (r * c)[:, None]))
    np.testing.assert_allclose(got, want, rtol=1e-12)


def _mesh_network():
    # A 4-node network that is not a chain: junction, case, sink, board; two paths to ambient.
    g = np.zeros((4, 4))
    for i, j, cond in [(0, 1, 2.0), (1, 2, 5.0), (1, 3, 0.5), (2, 3, 0.2)]:
        g[i, j] -= cond
        g[j, i] -= cond
        g[i, i] += cond
        g[j, j] += cond
    g[2, 2] += 0.8  # sink to ambient
    g[3, 3] += 0.1  # board to ambient
    c = np.array([0.01, 2.0, 60.0, 15.0])
    return g, c


def test_long_time_limit_is_steady_state():
    # Steady state of C dT/dt = P - G T is G^-1 P.
    g, c = _mesh_network()
    p = np.array([[3.0, 0.0, 0.0, 1.0]])
    t = np.array([1e6])
    got = tr.simulate(g, c, ([0.0], p), t)[0]
    np.testing.assert_allclose(got, np.linalg.solve(g, p[0]), rtol=1e-10)


def test_piecewise_power_against_step_superposition():
    # Linearity: the response to piecewise power is the sum of delayed step responses
    # sum_k dP_k Z(t - t_k), Z from the network's own Foster expansion via cauer_to_foster.
    r = np.array([0.3, 0.7, 1.5])
    c = np.array([0.02, 1.0, 30.0])
    g, cap = tr.build_ladder(r, c)
    starts = np.array([0.0, 5.0, 40.0])
    watts = np.array([2.0, 0.5, 3.0])
    power = np.zeros((3, 3))
    power[:, 0] = watts
    t = np.linspace(0.0, 200.0, 401)
    got = tr.simulate(g, cap, (starts, power), t)[:, 0]
    rf, tf = tr.cauer_to_foster(r, c)
    steps = np.diff(np.concatenate([[0.0], watts]))
    want = sum(dp * np.where(t >= tk, tr.impedance_foster(rf, tf, np.maximum(t - tk, 0.0)), 0.0)
               for dp, tk in zip(steps, starts))
    np.testing.assert_allclose(got, want, rtol=1e-10, atol=1e-12)


def test_adiabatic_node_heats_linearly():
    # No path to ambient (zero eigenvalue): T = T0 + P t / C.
    t = np.array([0.0, 1.0, 10.0])
    got = tr.simulate([[0.0]], [4.0], ([0.0], [[2.0]]), t, T0=[1.0])[:, 0]
    np.testing.assert_allclose(got, 1.0 + 2.0 * t / 4.0, rtol=1e-14)


@pytest.mark.parametrize("r, tau", [
    ([1.0, 2.0, 0.5], [0.01, 1.0, 100.0]),
    ([0.05, 0.2, 0.5, 1.0], [1e-4, 3e-3, 0.1, 5.0]),
    ([0.05, 0.2, 0.5, 1.0, 2.0], [1e-5, 3e-3, 0.1, 5.0, 1e3]),  # eight decades of tau
])
def test_foster_to_cauer_preserves_impedance(r, tau):
    r = np.array(r)
    tau = np.array(tau)
    rc, cc = tr.foster_to_cauer(r, tau)
    assert np.all(rc > 0) and np.all(cc > 0)
    t = np.geomspace(1e-7, 1e5, 241)
    z_foster = tr.impedance_foster(r, tau, t)
    # Independent path: the Cauer ladder simulated as a state-space network (unit power step).
    g, cap = tr.build_ladder(rc, cc)
    z_cauer = tr.simulate(g, cap, _step(r.size), t)[:, 0]
    np.testing.assert_allclose(z_cauer, z_foster, rtol=1e-6)
    # And back: Cauer -> Foster recovers the original elements.
    rf, tf = tr.cauer_to_foster(rc, cc)
    np.testing.assert_allclose(rf, r, rtol=1e-6)
    np.testing.assert_allclose(tf, tau, rtol=1e-6)


def test_foster_to_cauer_batch_and_identities():
    # Sum of R is the steady state; C_1 = 1/sum(R_i/tau_i) is the high-frequency limit.
    r = np.array([[1.0, 2.0, 3.0], [0.1, 0.1, 5.0]])
    tau = np.array([[0.1, 1.0, 10.0], [1e-3, 1.0, 50.0]])
    rc, cc = tr.foster_to_cauer(r, tau)
    np.testing.assert_allclose(rc.sum(axis=-1), r.sum(axis=-1), rtol=1e-12)
    np.testing.assert_allclose(cc[:, 0], 1.0 / (r / tau).sum(axis=-1), rtol=1e-12)
    with pytest.raises(ValueError):
        tr.foster_to_cauer([1.0, 1.0], [2.0, 2.0])


def _slab_fv(n_cells, thickness, k, rho_c, h, q, t_out, dt):
    """Independent 1-D finite-volume solve (Crank–Nicolson) of a slab heated by flux q on face
    x = 0 and cooled by h on x = thickness; per unit area. Returns the temperature rise of the
    first cell and the heated-face extrapolation T_0 + q dx/(2k)."""
    dx = thickness / n_cells
    a = np.zeros((n_cells, n_cells))
    for i in range(n_cells - 1):
        a[i, i] += k / dx
        a[i + 1, i + 1] += k / dx
        a[i, i + 1] -= k / dx
        a[i + 1, i] -= k / dx
    a[-1, -1] += 1.0 / (dx / (2.0 * k) + 1.0 / h)
    cap = rho_c * dx
    src = np.zeros(n_cells)
    src[0] = q
    lhs = lu_factor(np.eye(n_cells) * cap / dt + 0.5 * a)
    rhs_m = np.eye(n_cells) * cap / dt - 0.5 * a
    temp = np.zeros(n_cells)
    out = []
    steps_done = 0
    for target in t_out:
        for _ in range(int(round(target / dt)) - steps_done):
            temp = lu_solve(lhs, rhs_m @ temp + src)
        steps_done = int(round(target / dt))
        out.append(temp[0] + q * dx / (2.0 * k))
    return np.array(out)


def _slab_ladder(n_nodes, thickness, k, rho_c, h):
    dx = thickness / n_nodes
    r = np.full(n_nodes, dx / k)
    r[-1] = dx / (2.0 * k) + 1.0 / h
    return tr.build_ladder(r, np.full(n_nodes, rho_c * dx))


def test_lumped_slab_against_finite_volume():
    # Slab L = 10 mm, k = 1 W/(m K), rho c = 2e6 J/(m^3 K), h = 100 W/(m^2 K) (Bi = 1), heated by
    # q = 1000 W/m^2: steady heated-face rise q (L/k + 1/h) = 20 K; diffusion time L^2/a = 200 s.
    thickness, k, rho_c, h, q = 0.01, 1.0, 2e6, 100.0, 1000.0
    t_out = np.array([5.0, 20.0, 60.0, 200.0, 600.0, 3000.0])
    fine = _slab_fv(200, thickness, k, rho_c, h, q, t_out, dt=0.05)
    assert fine[-1] == pytest.approx(q * (thickness / k + 1.0 / h), rel=1e-3)  # steady state
    # Same 200-cell discretisation as an exact RC network: only the time-stepping error of the
    # Crank–Nicolson reference remains (dt = 0.05 s; measured 6e-6 K): 1e-4 K.
    g, c = _slab_ladder(200, thickness, k, rho_c, h)
    exact_200 = tr.simulate(g, c, _step(200, watts=q), t_out)[:, 0] + q * thickness / 200 / (2 * k)
    np.testing.assert_allclose(exact_200, fine, atol=1e-4)
    # A lumped 10-node ladder: within 0.5 % of the 20 K steady rise at all these times (the
    # spatial error of 10 cells, measured 0.045 K at 5 s, inside the first cell's diffusion time).
    g, c = _slab_ladder(10, thickness, k, rho_c, h)
    lumped = tr.simulate(g, c, _step(10, watts=q), t_out)[:, 0] + q * thickness / 10 / (2 * k)
    np.testing.assert_allclose(lumped, fine, atol=0.005 * 20.0)


def test_time_to_limit_single_rc_inverse():
    # Analytic inverse of the single-RC step: t = -tau ln(1 - dT_lim/(P R)).
    r, c, p = 2.0, 3.0, 1.5
    limits = np.array([0.1, 1.0, 2.0, 2.9, 3.5, -1.0])
    got = tr.time_to_limit([[1.0 / r]], [c], ([0.0], [[p]]), limits)
    tau = r * c
    want = -tau * np.log(1.0 - limits[:4] / (p * r))
    np.testing.assert_allclose(got[:4], want, rtol=1e-12)
    assert np.isinf(got[4])  # above the steady rise P R = 3 K: never reached
    assert got[5] == 0.0  # already above the limit at t = 0


def test_time_to_limit_second_segment_and_ladder():
    # Piecewise analytic: 1 W for 4 s, then 3 W; one RC (R = 2, C = 3, tau = 6 s).
    r, c = 2.0, 3.0
    tau = r * c
    t1 = 4.0
    temp1 = 1.0 * r * (1.0 - np.exp(-t1 / tau))
    limit = 4.0
    want = t1 - tau * np.log((3.0 * r - limit) / (3.0 * r - temp1))
    got = tr.time_to_limit([[1.0 / r]], [c], ([0.0, t1], [[1.0], [3.0]]), limit)
    assert got == pytest.approx(want, rel=1e-12)
    # A ladder: the time found puts the node exactly on the limit in simulate.
    g, cap = tr.build_ladder([0.2, 0.5, 1.0], [0.05, 2.0, 40.0])
    t_hit = tr.time_to_limit(g, cap, _step(3, watts=10.0), 12.0)
    assert tr.simulate(g, cap, _step(3, watts=10.0), [t_hit])[0, 0] == pytest.approx(12.0, rel=1e-10)


def test_periodic_state_against_many_repeated_periods():
    # brute force: repeat a two-level cycle until it repeats itself (fixed-point iteration of
    # the exact one-period map); a 3-node ladder with a slow sink node
    G, C = tr.build_ladder([0.2, 0.5, 0.8], [0.05, 2.0, 400.0])
    sched = ([0.0, 3.0], [[10.0, 0.0, 0.0], [1.0, 0.0, 0.0]])
    expected = tr.periodic_state(G, C, sched, 10.0)
    state = np.zeros(3)
    for _ in range(3000):  # 3000 periods of 10 s: e^-(30000 / ~560 s) ≈ 1e-23
        state = tr.simulate(G, C, sched, [10.0], T0=state)[0]
    np.testing.assert_allclose(expected, state, rtol=1e-9)


def test_peak_rise_against_a_dense_sample():
    G, C = tr.build_ladder([0.2, 0.5, 0.8], [0.05, 2.0, 40.0])
    sched = ([0.0, 3.0, 5.0], [[10.0, 0.0, 0.0], [1.0, 0.0, 0.0], [4.0, 0.0, 0.0]])
    t = np.linspace(0.0, 60.0, 600_001)
    dense = tr.simulate(G, C, sched, t)
    peak, when = tr.peak_rise(G, C, sched, 60.0, [0, 1, 2])
    np.testing.assert_allclose(peak, dense.max(axis=0), rtol=1e-7)
    np.testing.assert_allclose(when, t[dense.argmax(axis=0)], atol=2e-4)

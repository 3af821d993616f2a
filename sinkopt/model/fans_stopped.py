"""When the fans stop: the sink in still air (natural convection and radiation), its steady
junction temperatures at a fraction of the load, the largest load it carries with no airflow,
and the seconds from a fan stop at full load until the first junction reaches its limit.

Vectorised over designs. Theory, assumptions and checks: docs/theory.md#when-the-fans-stop.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sinkopt.model.design import SinkGeometry
from sinkopt.model.known_flow import ZERO_C, stack_resistances
from sinkopt.model.problem import Problem
from sinkopt.model.thermal_network import device_network, running_state
from sinkopt.model.columns import geometry_of, stack_choice, to_columns
from sinkopt.physics import spreading as sp
from sinkopt.physics.air import pressure_standard_atmosphere_1976
from sinkopt.physics.natural_convection import sink_natural_convection
from sinkopt.physics.radiation import STEFAN_BOLTZMANN, sink_radiation
from sinkopt.physics.transient import PowerSchedule, network_modes, simulate, time_to_limit

__all__ = ["StillAirResult", "still_air_conductance", "still_air_steady", "largest_still_air_load",
           "fan_stop_transient", "fans_stopped", "fans_stopped_of"]

#: Below this sink rise the still-air conductance is taken at this rise (h ∝ ΔT^¼ → 0).
MIN_RISE_K = 0.5


def still_air_conductance(problem: Problem, g: SinkGeometry):
    """``G(rise)``: the sink-to-ambient conductance in still air [W/K] at a mean sink rise
    [K] — natural convection (the study's orientation) plus radiation (its emissivity). The
    radiating surfaces' Σ ε_eff A depends on geometry only and is computed once."""
    s = problem.still_air
    t_a = problem.conditions.ambient_C + ZERO_C
    p = pressure_standard_atmosphere_1976(problem.conditions.altitude_m)
    area_emittance = None

    def conductance(rise) -> np.ndarray:
        nonlocal area_emittance
        dt = np.maximum(np.asarray(rise, dtype=float), MIN_RISE_K)
        conv = sink_natural_convection(g.width, g.length, g.fin_height, g.fin_thickness,
                                       g.n_fins, g.base_thickness, problem.conductivity, dt, t_a,
                                       p, orientation=s.orientation, back_exposed=s.back_exposed)
        if area_emittance is None:
            area_emittance = sink_radiation(
                g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins, g.base_thickness,
                s.emissivity, t_a + dt, t_a, back_exposed=s.back_exposed,
                fin_efficiency=conv.fin_efficiency).area_emittance
        radiation = area_emittance * STEFAN_BOLTZMANN * ((t_a + dt) ** 4 - t_a ** 4) / dt
        return np.asarray(conv.conductance + radiation, dtype=float)

    return conductance


def _sink_rise(conductance, heat: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Mean sink rise ΔT with G(ΔT)·ΔT = heat (bisection in log ΔT); returns (ΔT, G)."""
    heat = np.asarray(heat, dtype=float)
    lo = np.full(heat.shape, 1e-3)
    hi = np.full(heat.shape, 5e3)
    for _ in range(32):  # 6.7 decades / 2^32: far below any digit reported
        mid = np.sqrt(lo * hi)
        too_hot = conductance(mid) * mid > heat
        hi = np.where(too_hot, mid, hi)
        lo = np.where(too_hot, lo, mid)
    rise = np.sqrt(lo * hi)
    return rise, conductance(rise)


def _junctions(problem: Problem, g: SinkGeometry, fraction, conductance, stack_choice,
               terms: int) -> np.ndarray:
    """Junction rises above ambient (m, s) with the sink side a uniform film G/(W L)."""
    devices = problem.devices
    m = len(g)
    f = np.broadcast_to(np.asarray(fraction, dtype=float), (m,))
    power = np.array([d.power for d in devices], dtype=float)[None, :] * f[:, None]
    h_eff = conductance / (g.width * g.length)
    src = [np.array([getattr(d, a) for d in devices], dtype=float)
           for a in ("center_x", "center_y", "size_x", "size_y")]
    theta = np.asarray(sp.temperature_rise_rect_sources_muzychka_2003(
        g.width, g.length, g.base_thickness, problem.conductivity, h_eff, power, *src,
        n_terms=terms)).reshape(m, len(devices))
    r_jc = np.array([d.r_jc for d in devices], dtype=float)[None, :]
    return theta + power * (r_jc + stack_resistances(devices, m, stack_choice))


def still_air_steady(problem: Problem, g: SinkGeometry, fraction, stack_choice=None,
                     terms: int | None = None, conductance_fn=None):
    """Steady state with every fan stopped at ``fraction`` of the load: (junction °C (m, s),
    mean sink rise [K] (m,), still-air conductance [W/K] (m,))."""
    m = len(g)
    f = np.broadcast_to(np.asarray(fraction, dtype=float), (m,))
    heat = f * sum(d.power for d in problem.devices)
    fn = conductance_fn or still_air_conductance(problem, g)
    rise, conductance = _sink_rise(fn, np.maximum(heat, 1e-12))
    tj = problem.conditions.ambient_C + _junctions(problem, g, f, conductance, stack_choice,
                                                   terms or problem.options.series_terms)
    return tj, rise, conductance


def largest_still_air_load(problem: Problem, g: SinkGeometry, stack_choice=None) -> np.ndarray:
    """The largest fraction of the load (0…1) with every junction at or below its tj_max and no
    airflow; 1 when the full load is carried. Bisection on the fraction (junctions rise
    monotonically with load); the 20-term spreading series."""
    tj_max = np.array([d.tj_max for d in problem.devices], dtype=float)
    lo = np.zeros(len(g))
    hi = np.ones(len(g))
    fn = still_air_conductance(problem, g)

    def ok(f):
        tj, _, _ = still_air_steady(problem, g, f, stack_choice, terms=problem.options.coarse_terms,
                                    conductance_fn=fn)
        return np.all(tj <= tj_max[None, :], axis=1)

    full = ok(hi)
    for _ in range(16):  # the fraction to 2e-5
        mid = 0.5 * (lo + hi)
        good = ok(mid)
        lo = np.where(good, mid, lo)
        hi = np.where(good, hi, mid)
    return np.where(full, 1.0, lo)


@dataclass
class FanStop:
    """The fan-stop event of m designs: junction rises at the sample times, and the time of
    the first junction to reach its limit."""

    times_s: np.ndarray  #: (k,) sample times after the stop
    junction_C: np.ndarray  #: (m, k, s)
    sink_C: np.ndarray  #: (m, k) mean sink temperature
    time_to_limit_s: np.ndarray  #: (m,) inf: no junction reaches its limit within the horizon
    first_device: list[str | None]


def fan_stop_transient(problem: Problem, g: SinkGeometry, junction0_C: np.ndarray,
                       sink_rise0: np.ndarray, stack_choice=None, steps: int = 60) -> FanStop:
    """From the steady state with the fans running (junctions ``junction0_C`` (m, s), mean sink
    rise ``sink_rise0`` (m,)) to still air at full load, at t = 0.

    Network per design (sinkopt.model.thermal_network): the sink (its whole heat capacity
    m c_p) to the ambient through the still-air conductance; each junction (its Cauer ladder,
    or one node of capacity τ_jc / R_jc) to the sink through the resistance that reproduces its
    steady state. The still-air conductance rises with
    the sink temperature, so it is re-evaluated at the start of each of ``steps`` geometric time
    steps (exact solution within a step, sinkopt.physics.transient)."""
    s_air = problem.still_air
    devices = problem.devices
    m, s = len(g), len(devices)
    power = np.array([d.power for d in devices], dtype=float)
    tj_max = np.array([d.tj_max for d in devices], dtype=float)
    t_a = problem.conditions.ambient_C
    # still-air steady state at full load: the junction-to-sink resistances that reproduce it
    fn = still_air_conductance(problem, g)
    tj_final, rise_final, _ = still_air_steady(problem, g, 1.0, stack_choice,
                                               terms=problem.options.coarse_terms,
                                               conductance_fn=fn)
    # junction-to-sink resistance: the larger of the still-air and the running one (the running
    # one carries the upstream air heating and the stronger constriction of a high film
    # coefficient); the larger keeps a junction from cooling when its fan stops (conservative)
    r_still = (tj_final - t_a - rise_final[:, None]) / power[None, :]
    r_running = (np.asarray(junction0_C, dtype=float) - t_a
                 - np.asarray(sink_rise0, dtype=float)[:, None]) / power[None, :]
    r_link = np.maximum(np.fmax(r_still, r_running), 1e-6)
    mass = _sink_mass(problem, g)
    net = device_network(devices, r_link, mass * problem.specific_heat, s_air.tau_jc_s)
    jn = net.junction_nodes
    edges = np.concatenate([[0.0], np.geomspace(0.05, s_air.horizon_s, steps)])
    state = running_state(net, sink_rise0, np.asarray(junction0_C, dtype=float) - t_a)
    # One decomposition at the final still-air conductance; within each step the gap between
    # the conductance at the step's start and that reference acts as a heat input at the sink
    # node (as exact as freezing the conductance over the step, at 1/steps the cost).
    g_ref = fn(rise_final)
    G = net.with_ambient(g_ref)
    modes = network_modes(G, net.C)
    p_dev = net.node_power(power)
    limit = tj_max - t_a
    first = np.full(m, np.inf)
    which = np.full(m, -1)
    trace_j = [state[:, jn].copy()]
    trace_s = [state[:, 0].copy()]
    for k in range(steps):
        dt = edges[k + 1] - edges[k]
        p_nodes = np.repeat(p_dev[None, :], m, axis=0)
        p_nodes[:, 0] += (g_ref - fn(state[:, 0])) * state[:, 0]
        sched = PowerSchedule(np.array([0.0]), p_nodes[:, None, :])
        end = simulate(G, net.C, sched, np.array([dt]), T0=state, modes=modes)[:, 0, :]
        todo = np.isinf(first)
        crossed = todo[:, None] & (end[:, jn] >= limit[None, :])
        for j in range(s):
            rows = np.flatnonzero(crossed[:, j])
            if rows.size == 0:
                continue
            sub = PowerSchedule(np.array([0.0]), sched.power[rows])
            t = time_to_limit(G[rows], net.C[rows], sub, limit[j], node=int(jn[j]),
                              T0=state[rows], t_end=dt, grid_points=64,
                              modes=tuple(x[rows] for x in modes))
            t = edges[k] + np.minimum(t, dt)
            better = t < first[rows]
            first[rows[better]] = t[better]
            which[rows[better]] = j
        state = end
        trace_j.append(state[:, jn].copy())
        trace_s.append(state[:, 0].copy())
    return FanStop(edges, t_a + np.stack(trace_j, axis=1), t_a + np.stack(trace_s, axis=1),
                   first, [devices[w].name if w >= 0 else None for w in which])


def _sink_mass(problem: Problem, g: SinkGeometry) -> np.ndarray:
    from sinkopt.physics.geometry import sink_mass

    return np.asarray(sink_mass(g.width, g.length, g.fin_height, g.base_thickness, g.n_fins,
                                g.fin_thickness, problem.density), dtype=float)


@dataclass
class StillAirResult:
    """Everything the fans-stopped checks report for m designs."""

    load_fraction: float
    steady_junction_C: np.ndarray  #: (m, s) at ``load_fraction`` with no airflow
    steady_sink_rise_K: np.ndarray  #: (m,)
    largest_load_fraction: np.ndarray  #: (m,)
    fan_stop: FanStop

    def record(self, i: int, device_names) -> dict:
        fs = self.fan_stop
        t = float(fs.time_to_limit_s[i])
        return {
            "load_fraction": self.load_fraction,
            "steady_junction_C": {n: round(float(self.steady_junction_C[i, j]), 3)
                                  for j, n in enumerate(device_names)},
            "steady_sink_rise_K": round(float(self.steady_sink_rise_K[i]), 3),
            "largest_load_fraction": round(float(self.largest_load_fraction[i]), 4),
            "time_to_limit_after_fan_stop_s": None if not np.isfinite(t) else round(t, 2),
            "first_device_at_limit": fs.first_device[i],
            "fan_stop_trace": {"time_s": [round(float(x), 3) for x in fs.times_s],
                               "sink_C": [round(float(x), 2) for x in fs.sink_C[i]],
                               "junction_C": {n: [round(float(x), 2) for x in fs.junction_C[i, :, j]]
                                              for j, n in enumerate(device_names)}},
        }


def fans_stopped(problem: Problem, g: SinkGeometry, junction0_C: np.ndarray,
                 sink_rise0: np.ndarray, stack_choice=None) -> StillAirResult:
    """The study's fans-stopped checks for m designs (their running steady state given)."""
    f = problem.still_air.load_fraction
    tj, rise, _ = still_air_steady(problem, g, f, stack_choice)
    return StillAirResult(f, tj, rise, largest_still_air_load(problem, g, stack_choice),
                          fan_stop_transient(problem, g, junction0_C, sink_rise0, stack_choice))


def fans_stopped_of(problem: Problem, params, running) -> StillAirResult:
    """:func:`fans_stopped` of designs given as parameters, with their running state
    ``running`` (a sinkopt.model.system.BatchResult of the same designs, exact series)."""
    cols = to_columns(problem, params)
    n = len(next(iter(cols.values())))
    g = geometry_of(problem, cols)
    ev = running.evaluation
    heat = sum(d.power for d in problem.devices)
    return fans_stopped(problem, g, ev.junction_C, np.nan_to_num(ev.r_sink * heat),
                        stack_choice(problem, cols, n))

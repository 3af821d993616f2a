"""A load profile with the fans running: the junction temperatures over time, their peaks, and
the trace the report plots. Vectorised over designs.

The network (sinkopt.model.thermal_network) is built so that its steady state at the study's
powers is the steady model's: the sink reaches the ambient through its running resistance
R_sink (air heating included) and each junction reaches the sink through the rest of its steady
rise per watt. Two simplifications, both stated in docs/theory.md#load-profiles: the film
coefficient and the fan's operating point do not change with the load (they do not: the flow is
set by the fan, and the air properties move little), and the share of the base's spreading that
one device causes under another is taken at the study's power split.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sinkopt.model.columns import geometry_of, to_columns
from sinkopt.model.design import SinkGeometry
from sinkopt.model.problem import LoadProfile, Problem
from sinkopt.model.thermal_network import device_network, running_state
from sinkopt.physics.geometry import sink_mass
from sinkopt.physics.transient import peak_rise, periodic_state, simulate

__all__ = ["ProfileResult", "profile_response", "profile_of", "TRACE_POINTS"]

#: Sample times of the plotted trace (plus every row's time).
TRACE_POINTS = 240
#: Default tau_jc of a device without a Foster table when [fans_stopped] gives none [s].
DEFAULT_TAU_JC_S = 0.5


@dataclass
class ProfileResult:
    """The load profile's response of m designs."""

    peak_junction_C: np.ndarray  #: (m, s)
    peak_time_s: np.ndarray  #: (m, s) when each junction peaks, from the profile's start
    start: str
    times_s: np.ndarray | None = None  #: (q,) trace sample times
    junction_C: np.ndarray | None = None  #: (m, q, s)
    sink_C: np.ndarray | None = None  #: (m, q) mean sink temperature

    def record(self, i: int, devices) -> dict:
        names = [d.name for d in devices]
        out = {
            "start": self.start,
            "peak_junction_C": {n: round(float(self.peak_junction_C[i, j]), 3)
                                for j, n in enumerate(names)},
            "peak_time_s": {n: round(float(self.peak_time_s[i, j]), 3)
                            for j, n in enumerate(names)},
            "peak_margin_K": {d.name: round(float(d.tj_max - self.peak_junction_C[i, j]), 3)
                              for j, d in enumerate(devices)},
        }
        if self.times_s is not None:
            out["trace"] = {"time_s": [round(float(t), 4) for t in self.times_s],
                            "sink_C": [round(float(x), 2) for x in self.sink_C[i]],
                            "junction_C": {n: [round(float(x), 2) for x in self.junction_C[i, :, j]]
                                           for j, n in enumerate(names)}}
        return out


def _tau_jc(problem: Problem) -> float:
    return problem.still_air.tau_jc_s if problem.still_air is not None else DEFAULT_TAU_JC_S


def profile_response(problem: Problem, g: SinkGeometry, junction0_C, sink_rise0,
                     profile: LoadProfile | None = None, trace: bool = False) -> ProfileResult:
    """Junction temperatures of m designs through the load profile, fans running.

    ``junction0_C`` (m, s) and ``sink_rise0`` (m,) are the designs' steady state at the study's
    powers (sinkopt.model.system.evaluate_params); they fix the network's resistances.
    """
    profile = profile or problem.load_profile
    devices = problem.devices
    t_a = problem.conditions.ambient_C
    power = np.array([d.power for d in devices], dtype=float)
    tj0 = np.asarray(junction0_C, dtype=float) - t_a
    sink0 = np.asarray(sink_rise0, dtype=float)
    m = len(sink0)
    bad = ~np.isfinite(sink0) | ~np.all(np.isfinite(tj0), axis=1) | ~(sink0 > 0)
    sink0 = np.where(bad, 1.0, sink0)
    tj0 = np.where(bad[:, None], 1.0 + power[None, :], tj0)
    r_link = np.maximum((tj0 - sink0[:, None]) / power[None, :], 1e-6)
    mass = np.asarray(sink_mass(g.width, g.length, g.fin_height, g.base_thickness, g.n_fins,
                                g.fin_thickness, problem.density), dtype=float)
    net = device_network(devices, r_link, mass * problem.specific_heat, _tau_jc(problem))
    G = net.with_ambient(power.sum() / sink0)
    times = np.asarray(profile.times_s, dtype=float)
    starts = times[:-1]
    node_p = net.node_power(np.asarray(profile.power_W, dtype=float))  # (k, N)
    sched = (starts, node_p)
    if profile.start == "periodic":
        T0 = periodic_state(G, net.C, sched, profile.duration_s)
    elif profile.start == "steady":
        T0 = np.linalg.solve(G, np.broadcast_to(node_p[0], (m, node_p.shape[1]))[..., None])[..., 0]
    else:
        T0 = np.zeros((m, net.C.shape[1]))
    peak, when = peak_rise(G, net.C, sched, profile.duration_s, net.junction_nodes, T0=T0)
    peak = np.where(bad[:, None], np.nan, peak)
    result = ProfileResult(t_a + peak, when, profile.start)
    if trace:
        t = np.unique(np.concatenate([np.linspace(0.0, profile.duration_s, TRACE_POINTS + 1),
                                      times]))
        temps = simulate(G, net.C, sched, t, T0=T0)
        result.times_s = t
        result.junction_C = t_a + np.where(bad[:, None, None], np.nan,
                                           temps[..., net.junction_nodes])
        result.sink_C = t_a + np.where(bad[:, None], np.nan, temps[..., 0])
    return result


def profile_of(problem: Problem, params, running, trace: bool = True) -> ProfileResult:
    """:func:`profile_response` of designs given as parameters, with their running state
    ``running`` (a sinkopt.model.system.BatchResult of the same designs)."""
    cols = to_columns(problem, params)
    g = geometry_of(problem, cols)
    ev = running.evaluation
    heat = sum(d.power for d in problem.devices)
    return profile_response(problem, g, ev.junction_C, ev.r_sink * heat, trace=trace)

"""Turn a finished (or interrupted) study into results: every trial's numbers, the Pareto front
re-evaluated with the exact spreading series, and one detailed record per Pareto design.

Optuna stores what the search saw (the truncated spreading series). The reported front is
decided on the exact series, so every reported feasible design meets the constraints when it is
recomputed, e.g. by ``sinkopt evaluate``.
"""
from __future__ import annotations

import logging
import math
import shlex
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import optuna
from optuna.trial import TrialState

from sinkopt.search.pareto import nondominated_mask, to_minimization
from sinkopt.model.problem import OBJECTIVES, Problem
from sinkopt.model.columns import geometry_of
from sinkopt.model.system import BatchResult, evaluate_params, fan_face_area, fan_path_dp
from sinkopt.model.fans_stopped import StillAirResult, fans_stopped_of
from sinkopt.model.load_profile import ProfileResult, profile_of
from sinkopt.model.uncertainty import Band, junction_band

__all__ = ["Results", "collect_results", "design_record", "evaluate_command",
           "SCHEMA_VERSION", "REVIEW_MARGIN_K"]

log = logging.getLogger(__name__)

SCHEMA_VERSION = 1
#: Designs that the search found infeasible by less than this junction margin are re-checked
#: with the exact series too (the truncated series is within ~0.3 K, system.py).
REVIEW_MARGIN_K = 1.0


def _clean(v: Any) -> Any:
    if isinstance(v, (np.floating, float)):
        return None if not math.isfinite(float(v)) else float(v)
    if isinstance(v, (np.integer,)):
        return int(v)
    if isinstance(v, np.bool_):
        return bool(v)
    return v


def evaluate_command(problem: Problem, params: dict[str, Any]) -> str:
    """A ``sinkopt evaluate`` command line that reproduces one design."""
    study = str(problem.source) if problem.source else "STUDY.toml"
    sets = []
    for v in problem.variables:
        if v.is_fixed or v.name not in params:
            continue
        value = params[v.name]
        text = f"{value:.6g}" if isinstance(value, float) else str(value)
        sets.append(f"{v.name}={text}")
    return " ".join(["sinkopt", "evaluate", shlex.quote(study), "--set",
                     *(shlex.quote(s) for s in sets)])


def fan_rpm(problem: Problem, label: str, speed_ratio) -> float | None:
    """The fan's real speed [rpm] at ``speed_ratio`` of rated, where its file gives the rated
    speed (``# speed_rpm:``); None otherwise."""
    choice = problem.air.fan_choices().get(label) if label else None
    rated = getattr(choice[0].curve, "speed_rpm", None) if choice else None
    if rated is None or speed_ratio is None or not np.isfinite(speed_ratio):
        return None
    return round(float(rated * speed_ratio), 0)


#: What a design with a single fan says of the one-fan-stopped check.
SINGLE_FAN_NOTE = ("does not apply: a single fan has no redundancy (with it stopped the sink is in "
                   "still air; see [fans_stopped])")


def failed_fan_record(problem: Problem, result: BatchResult, i: int) -> dict[str, Any]:
    """The design with one fan of its array stopped (``failed_fan_check``)."""
    if not result.failed_fan_applies[i]:
        return {"applies": False, "note": SINGLE_FAN_NOTE}
    return {"applies": True,
            "airflow_m3_s": _clean(result.failed_fan_flow[i]),
            "worst_margin_K": _clean(result.failed_fan_margin[i]),
            "junction_C": {d.name: _clean(result.failed_fan_junction_C[i, j])
                           for j, d in enumerate(problem.devices)}}


def design_record(problem: Problem, result: BatchResult, i: int,
                  trial: int | None = None, search_result: BatchResult | None = None,
                  search_index: int | None = None) -> dict[str, Any]:
    """Everything about design ``i`` of ``result`` as a JSON-ready dict (units in the keys)."""
    e = result.evaluation
    cols = result.columns()
    rec: dict[str, Any] = {"schema_version": SCHEMA_VERSION, "trial": trial,
                           "params": {k: _clean(v) for k, v in result.params[i].items()}}
    for key in ("feasible", "fan", "speed_ratio", "airflow_m3_s", "airflow_fins_m3_s",
                "pressure_drop_Pa", "sink_pressure_drop_Pa", "sink_resistance_K_per_W",
                "fan_power_W", "noise_dBA", "volume_cm3", "mass_kg", "air_rise_K",
                "air_outlet_C", "worst_margin_K", "fin_gap_mm", "fin_aspect",
                "channel_velocity_m_s", "reynolds_dh", "in_stall", "no_airflow"):
        rec[key] = _clean(cols[key][i])
    if result.basis_margin is not None:
        rec["margin_basis"] = result.margin_basis
        rec[f"{result.margin_basis}_margin_K"] = _clean(result.basis_margin[i])
    if problem.air.uses_fans and np.isfinite(result.flow_total[i]):
        area = fan_face_area(problem, [result.fan_label[i]])
        g1 = geometry_of(problem, {k: np.asarray([v]) for k, v in result.params[i].items()})
        rec["fan_path_loss_Pa"] = _clean(fan_path_dp(problem, g1, result.flow_total[i:i + 1],
                                                     float(e.air_density[i]), area)[0])
    rec["fan_speed_pct"] = _clean(cols["fan_speed_pct"][i])
    rec["fan_speed_rpm"] = fan_rpm(problem, result.fan_label[i], result.speed_ratio[i])
    rec["air_density_kg_m3"] = _clean(e.air_density[i])
    rec["ambient_C"] = problem.conditions.ambient_C
    rec["altitude_m"] = problem.conditions.altitude_m
    rec["fin_efficiency"] = _clean(e.fin_efficiency[i])
    rec["heat_transfer_coefficient_W_m2K"] = _clean(e.h[i])
    rec["spreading"] = e.spreading
    if problem.calibration is not None:
        c = problem.calibration
        rec["model_calibration"] = {"file": c.path.name, "multipliers": dict(c.multipliers),
                                    "intervals_95": {k: list(v) for k, v in c.intervals.items()}}
    devices = []
    for j, d in enumerate(problem.devices):
        stack_name = result.params[i].get(f"mount_{d.name}", d.stacks[0].name if d.stacks else "")
        devices.append({
            "name": d.name, "power_W": d.power, "tj_max_C": d.tj_max,
            "junction_C": _clean(e.junction_C[i, j]), "margin_K": _clean(e.margin[i, j]),
            "mounting": stack_name,
            "breakdown_K": {  # temperature rise of each step from inlet air to junction
                "air_heating_upstream": _clean(e.air_local_rise[i, j]),
                "sink_and_spreading": _clean(e.base_rise[i, j]),
                "mounting_stack": _clean(d.power * e.r_stack[i, j]),
                "junction_to_case": _clean(d.power * e.r_jc[i, j]),
            },
            "r_stack_K_per_W": _clean(e.r_stack[i, j]),
            "r_jc_K_per_W": d.r_jc,
        })
    rec["devices"] = devices
    if result.failed_fan_applies is not None:
        rec["failed_fan"] = failed_fan_record(problem, result, i)
    rec["constraints"] = {k: _clean(v[i]) for k, v in result.constraints.items()}
    rec["objectives"] = {name: _clean(result.objectives[i, k])
                         for k, name in enumerate(problem.objectives)}
    warns = result.warnings(i)
    if not problem.air.ducted:
        warns.append("unducted sink: lossless-bypass model, lower confidence (±30 %)")
    rec["warnings"] = warns
    if search_result is not None and search_index is not None:
        diff = e.junction_C[i] - search_result.evaluation.junction_C[search_index]
        rec["spreading_check"] = {
            "search_model": search_result.evaluation.spreading,
            "junction_difference_K": {d.name: _clean(diff[j])
                                      for j, d in enumerate(problem.devices)},
        }
    rec["evaluate_command"] = evaluate_command(problem, result.params[i])
    return rec


@dataclass
class Results:
    """A study's trials and its Pareto front (exact series), as plain Python/numpy data."""

    problem: Problem
    trial_numbers: np.ndarray  #: complete trials, in order
    search: BatchResult  #: every complete trial, search model
    pareto_trials: np.ndarray  #: trial numbers on the front
    exact: BatchResult | None  #: the reviewed candidates, exact series
    exact_trials: np.ndarray  #: trial numbers of ``exact``'s rows
    states: dict[str, int] = field(default_factory=dict)
    band: Band | None = None  #: uncertainty band of the Pareto designs, in pareto_trials order
    still_air: StillAirResult | None = None  #: fans-stopped checks, in pareto_trials order
    profile: ProfileResult | None = None  #: the load profile's response, in pareto_trials order

    @property
    def directions(self) -> list[str]:
        return [OBJECTIVES[o][1] for o in self.problem.objectives]

    def short_list(self) -> list[dict[str, Any]]:
        """The named picks of the front (sinkopt.results.shortlist), each with its trial,
        reason and key numbers; empty when the front is."""
        from sinkopt.results.shortlist import short_list

        if self.exact is None or not len(self.pareto_trials):
            return []
        where = {int(t): k for k, t in enumerate(self.exact_trials)}
        rows = np.array([where[int(t)] for t in self.pareto_trials])
        cols = self.exact.columns()
        take = {k: np.asarray(cols[k], dtype=float)[rows]
                for k in ("volume_cm3", "fan_power_W", "worst_margin_K", "mass_kg",
                          "airflow_m3_s")}
        objectives = to_minimization(self.exact.objectives[rows], self.directions)
        out = []
        given = dict(self.problem.pick_weights)
        weights = ([given.get(o, 0.0) for o in self.problem.objectives] if given else None)
        text = ", ".join(f"{o} × {w:g}" for o, w in self.problem.pick_weights)
        for p in short_list(take["volume_cm3"], take["fan_power_W"], take["worst_margin_K"],
                            objectives, has_fans=self.problem.air.uses_fans, weights=weights,
                            weight_text=text):
            i = p.index
            out.append({"pick": p.name, "trial": int(self.pareto_trials[i]), "reason": p.reason,
                        "volume_cm3": _clean(take["volume_cm3"][i]),
                        "mass_kg": _clean(take["mass_kg"][i]),
                        "fan": self.exact.fan_label[rows[i]] or None,
                        "fan_power_W": _clean(take["fan_power_W"][i]),
                        "worst_margin_K": _clean(take["worst_margin_K"][i]),
                        "airflow_m3_h": _clean(take["airflow_m3_s"][i] * 3600.0)})
        return out

    def pareto_records(self) -> list[dict[str, Any]]:
        out = []
        if self.exact is None:
            return out
        where = {int(t): k for k, t in enumerate(self.exact_trials)}
        search_where = {int(t): k for k, t in enumerate(self.trial_numbers)}
        for k, t in enumerate(self.pareto_trials):
            rec = design_record(self.problem, self.exact, where[int(t)], int(t),
                                self.search, search_where[int(t)])
            if self.band is not None:
                rec["uncertainty"] = self.band.record(k)
            if self.still_air is not None:
                rec["fans_stopped"] = self.still_air.record(
                    k, [d.name for d in self.problem.devices])
            if self.profile is not None:
                rec["load_profile"] = self.profile.record(k, self.problem.devices)
            out.append(rec)
        return out


def collect_results(problem: Problem, study: optuna.Study, with_band: bool = True) -> Results:
    """Re-evaluate the study's complete trials and decide the front on the exact series; with
    ``with_band``, the uncertainty band of every Pareto design (sinkopt.model.uncertainty)."""
    trials = study.get_trials(deepcopy=False)
    states: dict[str, int] = {}
    for t in trials:
        states[t.state.name] = states.get(t.state.name, 0) + 1
    searched = {v.name for v in problem.variables if not v.is_fixed}
    complete = [t for t in trials if t.state == TrialState.COMPLETE]
    partial = [t.number for t in complete if not searched <= set(t.params)]
    if partial:
        # Seen once in CI after a multi-worker run was interrupted; not reproduced since. Such a
        # trial cannot be re-evaluated, so it is left out of the results, and said so.
        log.warning("trials %s are COMPLETE but lack some design variables; left out of the "
                    "results", partial[:20])
        complete = [t for t in complete if t.number not in partial]
    numbers = np.array([t.number for t in complete], dtype=int)
    if not complete:
        empty = np.array([], dtype=int)
        return Results(problem, numbers, evaluate_params(problem, []), empty, None, empty, states)
    search = evaluate_params(problem, [t.params for t in complete])
    margin_gap = search.constraints["junction_margin_K"]
    others_ok = np.ones(len(complete), dtype=bool)
    for name, v in search.constraints.items():
        if name not in ("junction_margin_K", "failed_fan_margin_K"):
            others_ok &= v <= 0
    review = others_ok & (margin_gap <= REVIEW_MARGIN_K)
    if "failed_fan_margin_K" in search.constraints:
        review &= search.constraints["failed_fan_margin_K"] <= REVIEW_MARGIN_K
    idx = np.flatnonzero(review)
    if idx.size == 0:
        return Results(problem, numbers, search, np.array([], dtype=int), None,
                       np.array([], dtype=int), states)
    exact = evaluate_params(problem, [complete[i].params for i in idx], spreading="exact")
    feasible = exact.feasible
    front = np.zeros(idx.size, dtype=bool)
    if feasible.any():
        f = to_minimization(exact.objectives[feasible],
                            [OBJECTIVES[o][1] for o in problem.objectives])
        front[np.flatnonzero(feasible)[nondominated_mask(f)]] = True
    pareto = numbers[idx][front]
    band = None
    if front.any() and with_band:
        # the same draws for every design (seeded from the study): the band is reproducible
        band = junction_band(problem, [complete[i].params for i in idx[front]],
                             problem.uncertainty)
    still_air = profile = None
    if front.any() and (problem.still_air is not None or problem.load_profile is not None):
        front_params = [complete[i].params for i in idx[front]]
        running = evaluate_params(problem, front_params, spreading="exact")
        if problem.still_air is not None:
            still_air = fans_stopped_of(problem, front_params, running)
        if problem.load_profile is not None:
            profile = profile_of(problem, front_params, running)
    return Results(problem, numbers, search, pareto, exact, numbers[idx], states, band,
                   still_air, profile)

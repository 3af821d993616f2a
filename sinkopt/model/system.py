"""Evaluate a batch of candidate designs of a :class:`~sinkopt.model.problem.Problem`: sink geometry,
fan operating point on the system curve, per-device junction temperatures, objectives and
constraints. This is what the search calls once per batch of trials, vectorised.

Parameter dictionaries use the search variables' names and units (``width_mm``, ``n_fins``,
``fan``, ``fan_speed``, ``mount_<device>``); :func:`evaluate_params` fills fixed variables in.
"""
from __future__ import annotations

import os
from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Sequence

import numpy as np

from sinkopt.model.design import ModelOptions, Perturbation, SinkGeometry
from sinkopt.model.uncertainty_spec import Z_95, corner, first_order_steps
from sinkopt.fans import FanArray
from sinkopt.fans.operating_point import solve_operating_points
from sinkopt.model.fans_stopped import fan_stop_transient
from sinkopt.model.known_flow import Evaluation, evaluate, inlet_air
from sinkopt.model.load_profile import profile_response
from sinkopt.physics import heatsink as hs
from sinkopt.physics.bypass import flow_fraction_lossless_bypass
from sinkopt.model.columns import full_params, stack_choice, to_columns, geometry_of
from sinkopt.model.problem import OBJECTIVES, FanOption, Problem

__all__ = ["BatchResult", "evaluate_params", "fan_choices", "full_params", "to_columns",
           "PENALTY", "system_pressure_drop", "fan_path_dp", "fan_face_area", "STALL_MARGIN"]

#: Finite stand-in for objectives and constraints of a design that cannot be evaluated (no fan
#: operating point, a geometry that cannot exist); Optuna rejects NaN and such designs are marked
#: infeasible anyway.
PENALTY = 1e6

#: Batches of at least this many designs switch the C allocator to keep freed memory
#: (:func:`_tune_allocator`); smaller ones make no temporaries large enough to matter.
TUNE_ALLOCATOR_MIN_DESIGNS = 10_000
_allocator_tuned = False


def _tune_allocator() -> None:
    """Once per process (glibc only): let freed heap memory stay in the process.

    A batch of 50,000 designs makes thousands of numpy temporaries of 0.4-2 MB. By default glibc
    serves such sizes from fresh mmap'd pages or trims the top of the heap after the frees, so
    nearly every temporary is page-faulted in again: measured as ~1/3 of the CPU time of
    :func:`evaluate_params` (system time, ~15k page faults per 50k designs). With
    ``M_MMAP_THRESHOLD`` 32 MiB and ``M_TRIM_THRESHOLD`` 256 MiB (``mallopt(3)``) the memory
    is reused instead; the cost is that up to 256 MiB of freed heap is kept by the process.
    Process-wide; set the environment variable ``SINKOPT_MALLOC_TUNING=0`` to leave the
    allocator alone.
    """
    global _allocator_tuned
    if _allocator_tuned:
        return
    _allocator_tuned = True
    if os.environ.get("SINKOPT_MALLOC_TUNING", "1") == "0":
        return
    try:
        import ctypes

        libc = ctypes.CDLL(None)
        libc.gnu_get_libc_version  # glibc only  # noqa: B018
        m_trim_threshold, m_mmap_threshold = -1, -3  # <malloc.h>
        libc.mallopt(m_mmap_threshold, 32 << 20)
        libc.mallopt(m_trim_threshold, 256 << 20)
    except (OSError, AttributeError, TypeError):
        pass


def fan_choices(problem: Problem) -> dict[str, tuple[FanOption, int]]:
    """Every fan label the search may pick, with its fan option and count."""
    return problem.air.fan_choices()


def _impedance_dp(problem: Problem, q, density):
    air = problem.air
    dp = np.zeros_like(q)
    if air.extra_loss_coefficient and air.extra_loss_area_m2:
        dp = dp + 0.5 * air.extra_loss_coefficient * density * (q / air.extra_loss_area_m2) ** 2
    if air.extra_impedance is not None:
        fq, fp = (np.asarray(a, dtype=float) for a in air.extra_impedance)
        # Beyond the measured points the impedance is extended as a quadratic (turbulent
        # grille/filter behaviour, common practice, no source).
        inside = np.interp(q, fq, fp)
        beyond = fp[-1] * (q / fq[-1]) ** 2
        dp = dp + np.where(q <= fq[-1], inside, beyond) * density / air.extra_impedance_density
    return dp


#: Air path from the fans to the fin field: sudden-expansion (Borda–Carnot) and
#: sudden-contraction loss coefficients (docs/theory.md#fan-to-sink-air-path).
def fan_path_dp(problem: Problem, g: SinkGeometry, q, density, fan_area) -> np.ndarray:
    """Static pressure lost between the fans and the fin field and at the free discharge [Pa],
    at total flows ``q`` through fans of total face area ``fan_area`` [m²] (NaN: unknown size,
    no transition loss). Zero for a known flow (no fans)."""
    a = problem.air
    q = np.asarray(q, dtype=float)
    dp = np.zeros_like(q)
    if not a.uses_fans:
        return dp
    face = g.width * g.fin_height  # the fin field's face, where the shroud meets the sink
    v_face = q / face
    head_face = 0.5 * density * v_face ** 2
    if a.discharge_loss:
        dp = dp + head_face  # K = 1: the outlet's velocity head leaves with the air
    if a.fan_to_sink == "none" or fan_area is None:
        return dp
    area = np.asarray(fan_area, dtype=float)
    known = np.isfinite(area) & (area > 0)
    safe = np.where(known, area, 1.0)
    head_fan = 0.5 * density * (q / safe) ** 2
    if a.fan_to_sink == "plenum":
        k_dp = head_fan  # the fans' jets dissipate in the plenum (K = 1 on the fan velocity)
    else:
        ratio = safe / face
        # expansion (fan face smaller): Borda–Carnot K = (1 − A_fan/A_face)² on V_fan;
        # contraction (fan face larger): K = 0.5 (1 − A_face/A_fan) on V_face
        k_dp = np.where(ratio < 1.0, (1.0 - ratio) ** 2 * head_fan,
                        0.5 * (1.0 - 1.0 / np.maximum(ratio, 1.0)) * head_face)
    return dp + np.where(known, k_dp, 0.0)


def fan_face_area(problem: Problem, labels, failed: int = 0) -> np.ndarray:
    """Total face area [m²] of the running fans of each design's ``fan`` label (π/4 size² per
    fan from the file's ``# size_mm:``; NaN where the size is unknown). Series fans share one
    face."""
    choices = problem.air.fan_choices()
    out = np.full(len(labels), np.nan)
    for i, label in enumerate(labels):
        choice = choices.get(label)
        if choice is None or choice[0].curve.size_mm is None:
            continue
        option, count = choice
        running = 1 if option.arrangement == "series" else max(count - failed, 1)
        out[i] = running * np.pi / 4.0 * (option.curve.size_mm * 1e-3) ** 2
    return out


def system_pressure_drop(problem: Problem, geometry: SinkGeometry, q, air, options: ModelOptions,
                         fan_area=None):
    """System static pressure drop [Pa] at total flows q (n,): sink (ducted, or in a duct with a
    lossless bypass), the air path from the fans (``fan_area``: their face area per design,
    :func:`fan_face_area`) and the study's extra losses. Returns (dp, flow through the fins)."""
    g = geometry
    q = np.asarray(q, dtype=float)

    def sink_dp(q_fins):
        return hs.sink_hydraulics(g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins,
                                  q_fins, air, options.hydraulic_diameter,
                                  options.exit_loss, options.friction_multiplier,
                                  options.loss_multiplier).pressure_drop

    if problem.air.ducted:
        q_fins = q
    else:
        q_fins = q * flow_fraction_lossless_bypass(sink_dp, g, q, problem.air.duct_area_m2,
                                                   air.density,
                                                   base_in_airstream=problem.air.base_in_airstream)
    return (sink_dp(q_fins) + _impedance_dp(problem, q, air.density)
            + fan_path_dp(problem, g, q, air.density, fan_area)), q_fins


@dataclass
class BatchResult:
    """Results of n designs. ``objectives`` is (n, k) in the problem's objective order, in
    natural units and directions; ``constraints`` maps names to (n,) values, ≤ 0 feasible."""

    columns_in: dict[str, np.ndarray]  #: the parameters, one array per variable
    evaluation: Evaluation
    fan_label: list[str]
    flow_total: np.ndarray  #: [m^3/s] delivered by the fans (or given)
    flow_fins: np.ndarray  #: [m^3/s] through the fin channels
    system_pressure: np.ndarray  #: [Pa]
    fan_power: np.ndarray  #: electrical [W]
    noise: np.ndarray  #: [dB(A)]
    speed_ratio: np.ndarray  #: [-]
    in_stall: np.ndarray
    no_airflow: np.ndarray
    valid_geometry: np.ndarray
    objectives: np.ndarray
    constraints: dict[str, np.ndarray]
    feasible: np.ndarray
    failed_fan_margin: np.ndarray | None = None  #: worst margin with one fan stopped [K]
    #: With one fan of the array stopped: junctions (n, s) [°C], the flow [m^3/s], and whether
    #: the check applies (an array of two or more fans; a single fan has no redundancy).
    failed_fan_junction_C: np.ndarray | None = None
    failed_fan_flow: np.ndarray | None = None
    failed_fan_applies: np.ndarray | None = None
    #: Operating point within STALL_MARGIN above the fan's stall knee (not in stall).
    near_stall: np.ndarray | None = None
    extras: dict[str, np.ndarray] = field(default_factory=dict)
    #: The margin the constraint and objective use when the study's margin basis is not
    #: "nominal": the worst margin at the pessimistic corner, or its first-order 5th percentile.
    basis_margin: np.ndarray | None = None
    margin_basis: str = "nominal"

    def __len__(self) -> int:
        return len(self.flow_total)

    @cached_property
    def params(self) -> list[dict[str, Any]]:
        """The parameters as one dict per design (plain Python values)."""
        names = list(self.columns_in)
        rows = zip(*(self.columns_in[k].tolist() for k in names))
        return [dict(zip(names, r)) for r in rows]

    def columns(self) -> dict[str, np.ndarray]:
        """Per-design result columns with units in their names (trials.csv, reports)."""
        e = self.evaluation
        cols = {
            "feasible": self.feasible,
            "fan": np.array(self.fan_label, dtype=object),
            "speed_ratio": self.speed_ratio,
            "fan_speed_pct": self.speed_ratio * 100.0,  # what a person reads: % of rated
            "airflow_m3_s": self.flow_total,
            "airflow_fins_m3_s": self.flow_fins,
            "pressure_drop_Pa": self.system_pressure,
            "sink_pressure_drop_Pa": e.pressure_drop,
            "sink_resistance_K_per_W": e.r_sink,
            "fan_power_W": self.fan_power,
            "noise_dBA": self.noise,
            "volume_cm3": e.volume * 1e6,
            "mass_kg": e.mass,
            "air_rise_K": e.air_rise,
            "air_outlet_C": e.air_outlet_C,
            "worst_margin_K": e.worst_margin,
            "fin_gap_mm": e.gap * 1e3,
            "fin_aspect": e.fin_aspect,
            "channel_velocity_m_s": e.velocity,
            "reynolds_dh": e.reynolds_dh,
            "in_stall": self.in_stall,
            "no_airflow": self.no_airflow,
        }
        for j, name in enumerate(e.device_names):
            cols[f"tj_{name}_C"] = e.junction_C[:, j]
            cols[f"margin_{name}_K"] = e.margin[:, j]
        if self.failed_fan_margin is not None:
            cols["failed_fan_margin_K"] = self.failed_fan_margin
            cols["failed_fan_airflow_m3_s"] = self.failed_fan_flow
            for j, name in enumerate(e.device_names):
                cols[f"tj_{name}_failed_fan_C"] = self.failed_fan_junction_C[:, j]
        if self.basis_margin is not None:
            cols[f"{self.margin_basis}_margin_K"] = self.basis_margin
        cols.update(self.extras)
        return cols

    def warnings(self, i: int) -> list[str]:
        out = self.evaluation.warnings(i)
        if self.in_stall[i]:
            out.append("fan operates in its stall region (unstable, noisy)")
        elif self.near_stall is not None and self.near_stall[i]:
            out.append(f"fan operates within {STALL_MARGIN:.0%} of its stall knee's flow: a "
                       "dirty filter or a tolerance on the system curve can push it into stall")
        if self.no_airflow[i]:
            out.append("no fan operating point inside the fan data: the fan cannot move air "
                       "through this system")
        if not self.valid_geometry[i]:
            out.append("geometry cannot exist (fins do not fit on the base)")
        return out


def _fan_codes(problem: Problem, cols, n: int) -> tuple[list[str], np.ndarray]:
    """The fan labels the problem offers (sorted) and each design's index into them.

    Raises KeyError for a label that is not one of them."""
    names = sorted(fan_choices(problem))
    labels = np.asarray(cols["fan"])
    if n == 0:
        return names, np.zeros(0, dtype=np.intp)
    if labels.dtype.kind == "U":
        table = np.array(names)
        code = np.minimum(np.searchsorted(table, labels), len(names) - 1)
        bad = table[code] != labels
        if bad.any():
            raise KeyError(str(labels[np.argmax(bad)]))
        return names, code
    lookup = {k: i for i, k in enumerate(names)}
    try:
        code = np.fromiter(map(lookup.__getitem__, labels.tolist()), dtype=np.intp, count=n)
    except KeyError:
        code = np.fromiter((lookup[str(v)] for v in labels.tolist()), dtype=np.intp, count=n)
    return names, code


def _system_dp_function(problem: Problem, g: SinkGeometry, air, options: ModelOptions,
                        fan_area=None):
    """``dp(Q, index)`` of :func:`solve_operating_points`: :func:`system_pressure_drop` of the
    sinks ``g`` (designs ``index`` of them, or all) with the geometry-only work done once."""
    sink_dp = hs.sink_pressure_drop_function(g.width, g.length, g.fin_height, g.fin_thickness,
                                             g.n_fins, air, options.hydraulic_diameter,
                                             options.exit_loss, options.friction_multiplier,
                                             options.loss_multiplier)
    a = problem.air
    extra = bool((a.extra_loss_coefficient and a.extra_loss_area_m2)
                 or a.extra_impedance is not None)
    path = a.uses_fans and (a.discharge_loss or a.fan_to_sink != "none")
    if a.ducted and not extra and not path:
        return sink_dp
    density = air.density
    taken: list = [None, None]

    def sub(index):
        if index is None:
            return g
        if taken[0] is not index:
            taken[0], taken[1] = index, g.take(index)
        return taken[1]

    def system_dp(q, index):
        if a.ducted:
            q_fins = q
        else:
            q_fins = q * flow_fraction_lossless_bypass(lambda qf: sink_dp(qf, index), sub(index),
                                                       q, a.duct_area_m2, density,
                                                       base_in_airstream=a.base_in_airstream)
        dp = sink_dp(q_fins, index)
        if extra:
            dp = dp + _impedance_dp(problem, q, density)
        if path:
            area = None if fan_area is None else (fan_area if index is None else fan_area[index])
            dp = dp + fan_path_dp(problem, sub(index), q, density, area)
        return dp

    return system_dp


_MULTIPLIERS = ("heat_transfer_multiplier", "friction_multiplier", "loss_multiplier")


def _options_take(options: ModelOptions, index) -> ModelOptions:
    """``options`` for the designs ``index`` of the batch (per-design multipliers taken)."""
    over = {k: np.asarray(getattr(options, k))[index] for k in _MULTIPLIERS
            if np.ndim(getattr(options, k))}
    return ModelOptions(**{**options.__dict__, **over}) if over else options


def _solve_fans(problem, cols, g, air, options, valid, failed=0, fan_codes=None, fan_flow=None):
    n = len(g)
    flow = np.full(n, np.nan)
    dp = np.full(n, np.nan)
    power = np.full(n, np.nan)
    noise = np.full(n, np.nan)
    speed = np.full(n, np.nan)
    stall = np.zeros(n, dtype=bool)
    names, code = _fan_codes(problem, cols, n) if fan_codes is None else fan_codes
    choices = fan_choices(problem)
    options_counts = [choices[k] for k in names]
    # groups that can run with `failed` fans stopped, renumbered for the solver
    usable = [i for i, (_, count) in enumerate(options_counts) if failed < count]
    renumber = np.full(len(names), -1, dtype=np.intp)
    renumber[usable] = np.arange(len(usable))
    group = renumber[code]
    sel = np.flatnonzero(valid & (group >= 0))
    if sel.size:
        arrays, efficiency = [], []
        lo = np.empty(len(usable))
        span = np.empty(len(usable))
        for j, i in enumerate(usable):
            option, count = options_counts[i]
            arrays.append(FanArray(option.curve, count=count, arrangement=option.arrangement,
                                   failed=failed))
            efficiency.append(option.efficiency)
            lo[j] = option.speed_min
            span[j] = option.speed_max - option.speed_min
        gsel = group[sel]
        fraction = (np.asarray(cols["fan_speed"], dtype=float)[sel] if "fan_speed" in cols
                    else np.zeros(sel.size))
        s = lo[gsel] + fraction * span[gsel]
        sub = g if sel.size == n else g.take(sel)
        density = float(air.density)
        solve_speed = s
        if fan_flow is not None:
            # A fan delivering c times its curve's flow at every pressure is, by the fan laws,
            # the fan at speed c s in air of density ρ/c²: Δp = (ρ/c²)/ρ_ref (cs)² p(Q/(cs)).
            c = np.broadcast_to(np.asarray(fan_flow, dtype=float), (n,))[sel]
            solve_speed, density = s * c, density / (c * c)
        sub_options = options if sel.size == n else _options_take(options, sel)
        area_group = fan_face_area(problem, [names[i] for i in usable], failed=failed)
        op = solve_operating_points(arrays, gsel, _system_dp_function(problem, sub, air, sub_options,
                                                                      area_group[gsel]),
                                    speed_ratio=solve_speed, air_density=density,
                                    efficiency=efficiency)
        flow[sel], dp[sel] = op.flow_m3_s, op.pressure_Pa
        power[sel], noise[sel], speed[sel] = op.electrical_power_W, op.noise_dBA, s
        stall[sel] = op.in_stall
    labels = np.array(names, dtype=object)[code].tolist()
    return flow, dp, power, noise, speed, stall, labels, (names, code)


#: An operating point within this share above the stall knee's flow is flagged (common practice,
#: no source: fan data scatter and the system curve's uncertainty are of this order).
STALL_MARGIN = 0.15


def _near_stall(problem, labels, speed, flow) -> np.ndarray:
    """Operating points within STALL_MARGIN above the stall knee: the knee's flow scales with
    the speed (fan laws) and with the number of fans in parallel."""
    choices = problem.air.fan_choices()
    knee = {}
    for label, (option, count) in choices.items():
        curve = option.curve
        if getattr(curve, "has_stall_region", False):
            knee[label] = curve.q_stall_limit_m3_s * (count if option.arrangement == "parallel"
                                                      else 1)
    if not knee:
        return np.zeros(len(flow), dtype=bool)
    q_knee = np.array([knee.get(k, np.nan) for k in labels], dtype=float) * speed
    with np.errstate(invalid="ignore"):
        return np.asarray(flow < (1.0 + STALL_MARGIN) * q_knee) & np.isfinite(q_knee)


def _fin_flow(problem, g, flow, air, options):
    """Flow through the fins at total flows ``flow`` (NaN where NaN)."""
    if problem.air.ducted:
        return flow.copy()
    flow_fins = np.full(len(g), np.nan)
    ok = np.isfinite(flow)
    if ok.any():
        flow_fins[ok] = system_pressure_drop(problem, g.take(ok), flow[ok], air,
                                             _options_take(options, ok))[1]
    return flow_fins


def evaluate_params(problem: Problem, params, spreading: str | None = None,
                    perturb: Perturbation | None = None) -> BatchResult:
    """Evaluate designs given as parameter dictionaries, or as a dict of columns (one array per
    variable, the fast path for large batches); fixed variables may be left out.

    ``perturb`` gives per-design factors on the uncertain inputs (sinkopt.model.uncertainty):
    the fan operating point is solved again with them."""
    cols = to_columns(problem, params)
    n = len(next(iter(cols.values())))
    if n >= TUNE_ALLOCATOR_MIN_DESIGNS and not _allocator_tuned:
        _tune_allocator()
    options = problem.options
    if spreading is not None:
        options = ModelOptions(**{**options.__dict__, "spreading": spreading})
    fan_flow = None
    if perturb is not None:
        over = {}
        if perturb.heat_transfer is not None:
            over["heat_transfer_multiplier"] = options.heat_transfer_multiplier * np.asarray(
                perturb.heat_transfer, dtype=float)
        if perturb.pressure_drop is not None:
            dp = np.asarray(perturb.pressure_drop, dtype=float)
            over["friction_multiplier"] = options.friction_multiplier * dp
            over["loss_multiplier"] = options.loss_multiplier * dp
        options = ModelOptions(**{**options.__dict__, **over})
        fan_flow = perturb.fan_flow
    g = geometry_of(problem, cols)
    mounts = stack_choice(problem, cols, n)
    valid = (g.n_fins >= 2) & (g.n_fins * g.fin_thickness < g.width)
    # Designs that cannot exist are evaluated on a stand-in geometry (so no NaN leaks into the
    # batch) and then marked infeasible with penalty values.
    if valid.all():
        safe = g
    else:
        safe = SinkGeometry(width=g.width, length=g.length, fin_height=g.fin_height,
                            fin_thickness=np.where(valid, g.fin_thickness,
                                                   g.width / (4 * g.n_fins + 4)),
                            n_fins=np.where(g.n_fins >= 2, g.n_fins, 2.0),
                            base_thickness=g.base_thickness)
    air = inlet_air(problem.conditions)
    failed_margin = None
    if problem.air.uses_fans:
        flow, dp, power, noise, speed, stall, labels, codes = _solve_fans(problem, cols, safe, air,
                                                                          options, valid,
                                                                          fan_flow=fan_flow)
        flow_fins = _fin_flow(problem, safe, flow, air, options)
        near_stall = _near_stall(problem, labels, speed, flow) & ~stall
    else:
        if problem.air.fixed_flow_m3_s is not None:
            flow = np.full(n, problem.air.fixed_flow_m3_s)
        else:
            flow = problem.air.approach_flow(safe.width, safe.fin_height, safe.base_thickness)
        dp, flow_fins = system_pressure_drop(problem, safe, flow, air, options)
        power = np.zeros(n)
        noise = np.full(n, np.nan)
        speed = np.full(n, np.nan)
        stall = np.zeros(n, dtype=bool)
        near_stall = np.zeros(n, dtype=bool)
        labels = [""] * n
    no_air = ~np.isfinite(flow_fins) | ~(flow_fins > 0)
    with np.errstate(invalid="ignore", divide="ignore"):
        ev = evaluate(safe, np.where(no_air, np.nan, flow_fins), problem.devices,
                      problem.conductivity, problem.density, problem.conditions, options,
                      stack_choice=mounts, perturb=perturb)
    if problem.air.uses_fans and problem.air.failed_fan_check:
        f_flow, *_ = _solve_fans(problem, cols, safe, air, options, valid & ~no_air, failed=1,
                                 fan_codes=codes, fan_flow=fan_flow)
        f_fins = _fin_flow(problem, safe, f_flow, air, options)
        with np.errstate(invalid="ignore", divide="ignore"):
            failed_ev = evaluate(safe, f_fins, problem.devices, problem.conductivity,
                                 problem.density, problem.conditions, options,
                                 stack_choice=mounts, perturb=perturb)
        failed_margin = failed_ev.worst_margin
        names, fan_code = codes
        counts = np.array([fan_choices(problem)[k][1] for k in names], dtype=int)
        failed_extra = (failed_ev.junction_C, f_flow, counts[fan_code] >= 2)
    else:
        failed_extra = (None, None, None)
    bad = no_air | ~valid
    result = BatchResult(cols, ev, labels, flow, flow_fins, dp, power, noise, speed, stall,
                         no_air, valid, np.empty((n, 0)), {}, np.zeros(n, dtype=bool),
                         failed_margin, *failed_extra)
    if problem.limits.margin_basis != "nominal" and perturb is None:
        result.margin_basis = problem.limits.margin_basis
        result.basis_margin = np.where(bad, -PENALTY, _robust_margin(problem, cols, spreading, ev))
    result.near_stall = near_stall
    if perturb is None:
        # the transients cost a thousand times the steady model: only for designs that meet
        # every steady constraint (the others are infeasible whatever their transients)
        steady = _constraints(problem, result, g, bad)
        skip = bad.copy()
        for v in steady.values():
            skip |= v > 0
        result.extras = _dynamics(problem, safe, ev, mounts, skip)
    result.constraints = _constraints(problem, result, g, bad)
    feasible = ~bad
    for v in result.constraints.values():
        feasible &= v <= 0
    result.feasible = feasible
    result.objectives = _objectives(problem, result, bad)
    return result


def _robust_margin(problem: Problem, cols, spreading, ev: Evaluation) -> np.ndarray:
    """The worst margin on the study's margin basis (docs/theory.md#uncertainty-band-and-sensitivity):
    at the pessimistic corner (fan point re-solved), or nominal − 1.645 σ per device with σ from
    one-input steps (first order)."""
    n, s = len(ev), len(problem.devices)
    spec = problem.uncertainty
    if problem.limits.margin_basis == "pessimistic":
        hot = evaluate_params(problem, cols, spreading, perturb=corner(spec, n, s))
        return np.where(hot.no_airflow | ~hot.valid_geometry, -PENALTY,
                        hot.evaluation.worst_margin)
    var = np.zeros((n, s))
    for _, step in first_order_steps(spec, n, s):
        r = evaluate_params(problem, cols, spreading, perturb=step)
        d = r.evaluation.junction_C - ev.junction_C
        var += np.where(np.isfinite(d), d, PENALTY) ** 2
    margin = ev.margin - Z_95 * np.sqrt(var)
    return margin.min(axis=1) if s else np.full(n, np.inf)


def needs_fan_stop(problem: Problem) -> bool:
    """The search asks for the seconds to the limit after a fan stop."""
    return ("time_to_limit_after_fan_stop" in problem.objectives
            or problem.limits.min_time_to_limit_after_fan_stop_s is not None)


def needs_profile(problem: Problem) -> bool:
    """The search asks for the load profile's peak junctions."""
    lp = problem.load_profile
    return lp is not None and (lp.constrain or "peak_junction_in_profile" in problem.objectives)


def _dynamics(problem: Problem, g: SinkGeometry, ev: Evaluation, mounts, bad) -> dict:
    """The transient results the study's objectives and constraints use (only those: each
    costs about a millisecond per design, a thousand times the steady model)."""
    out: dict[str, np.ndarray] = {}
    heat = sum(d.power for d in problem.devices)
    sink_rise = np.where(bad, np.nan, ev.r_sink * heat)
    if needs_profile(problem):
        ok = ~bad
        peak = np.full((len(bad), len(problem.devices)), np.nan)
        if ok.any():
            peak[ok] = profile_response(problem, g.take(ok), ev.junction_C[ok],
                                        sink_rise[ok]).peak_junction_C
        tj_max = np.array([d.tj_max for d in problem.devices], dtype=float)
        out["profile_peak_junction_C"] = np.max(peak, axis=1)
        out["profile_peak_margin_K"] = np.min(tj_max[None, :] - peak, axis=1)
    if needs_fan_stop(problem):
        ok = ~bad
        t = np.full(len(bad), np.nan)  # not computed: a penalty in the constraint
        if ok.any():
            sub = g.take(ok)
            fs = fan_stop_transient(problem, sub, ev.junction_C[ok], sink_rise[ok],
                                    None if mounts is None else mounts[ok])
            # "never within the horizon" counts as the horizon: a finite, comparable number
            t[ok] = np.minimum(fs.time_to_limit_s, problem.still_air.horizon_s)
        out["time_to_limit_after_fan_stop_s"] = t
    return out


def _objectives(problem: Problem, r: BatchResult, bad: np.ndarray) -> np.ndarray:
    cols = r.columns()
    out = np.empty((len(r), len(problem.objectives)))
    for k, name in enumerate(problem.objectives):
        column, direction = OBJECTIVES[name]
        if name == "junction_margin" and r.basis_margin is not None:
            column = f"{r.margin_basis}_margin_K"
        v = np.asarray(cols.get(column, np.full(len(r), np.nan)), dtype=float)
        worst = PENALTY if direction == "minimize" else -PENALTY
        out[:, k] = np.where(bad | ~np.isfinite(v), worst, v)
    return out


def _constraints(problem: Problem, r: BatchResult, g: SinkGeometry, bad) -> dict[str, np.ndarray]:
    """Every constraint on every design (a missing one would count as feasible in Optuna 5)."""
    e = r.evaluation
    lim, proc = problem.limits, problem.process
    c: dict[str, np.ndarray] = {}
    margin = e.worst_margin if r.basis_margin is None else r.basis_margin
    c["junction_margin_K"] = lim.min_junction_margin_K - margin
    c["fin_gap_mm"] = (proc.min_gap_m - (g.width - g.n_fins * g.fin_thickness)
                       / np.maximum(g.n_fins - 1, 1)) * 1e3
    c["fin_thickness_mm"] = (proc.min_fin_thickness_m - g.fin_thickness) * 1e3
    c["fin_aspect"] = e.fin_aspect - proc.max_fin_aspect
    c["base_thickness_mm"] = (proc.min_base_thickness_m - g.base_thickness) * 1e3
    overhang = np.zeros(len(r))
    for d in problem.devices:
        overhang = np.maximum(overhang, d.center_x + d.size_x / 2 - g.width)
        overhang = np.maximum(overhang, d.center_y + d.size_y / 2 - g.length)
    # a footprint flush with an edge is on the base: rounding of the mm inputs (1e-15 m) is not
    c["devices_on_base_mm"] = overhang * 1e3 - 1e-9
    c["airflow"] = np.where(r.no_airflow, 1.0, -1.0)
    if not lim.allow_stall:
        c["fan_stall"] = np.where(r.in_stall, 1.0, -1.0)
    optional = [
        ("air_rise_K", lim.max_air_rise_K, e.air_rise),
        ("noise_dBA", lim.max_noise_dBA, r.noise),
        ("width_mm", None if lim.max_width_m is None else lim.max_width_m * 1e3, g.width * 1e3),
        ("length_mm", None if lim.max_length_m is None else lim.max_length_m * 1e3, g.length * 1e3),
        ("height_mm", None if lim.max_height_m is None else lim.max_height_m * 1e3,
         (g.fin_height + g.base_thickness) * 1e3),
        ("mass_kg", lim.max_mass_kg, e.mass),
        ("fan_power_W", lim.max_fan_power_W, r.fan_power),
        ("pressure_drop_Pa", lim.max_pressure_drop_Pa, r.system_pressure),
    ]
    for name, limit, value in optional:
        if limit is not None:
            c[name] = value - limit
    if r.failed_fan_margin is not None:
        c["failed_fan_margin_K"] = lim.min_junction_margin_K - r.failed_fan_margin
    # the transients are not computed for perturbed inputs (uncertainty band): no constraint
    if "time_to_limit_after_fan_stop_s" in r.extras and \
            lim.min_time_to_limit_after_fan_stop_s is not None:
        c["time_to_limit_after_fan_stop_s"] = (lim.min_time_to_limit_after_fan_stop_s
                                               - r.extras["time_to_limit_after_fan_stop_s"])
    if "profile_peak_margin_K" in r.extras and problem.load_profile.constrain:
        c["profile_margin_K"] = lim.min_junction_margin_K - r.extras["profile_peak_margin_K"]
    return {k: np.where(np.isfinite(v), v, PENALTY) for k, v in c.items()}

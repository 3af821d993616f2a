"""A resolved design problem: what the study file describes, in SI units, ready for the search.

The study-file reader (:mod:`sinkopt.study.reader`) builds a :class:`Problem`; the evaluator
(:mod:`sinkopt.model.system`) and the search (:mod:`sinkopt.search.optuna_search`) consume it. No I/O here.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from sinkopt.model.calibration import Calibration
from sinkopt.model.design import Conditions, Device, ModelOptions
from sinkopt.model.uncertainty_spec import DEFAULT_UNCERTAINTY, UncertaintySpec

__all__ = [
    "SAMPLERS",
    "DEFAULT_SAMPLER",
    "GEOMETRY_VARIABLES",
    "OBJECTIVES",
    "Variable",
    "fan_label",
    "FanOption",
    "AirSupply",
    "FAN_TO_SINK",
    "ProcessLimits",
    "Limits",
    "LoadProfile",
    "PROFILE_STARTS",
    "Problem",
]

#: Geometric design variables: name -> (unit shown to users, factor from that unit to SI).
GEOMETRY_VARIABLES = {
    "width_mm": ("mm", 1e-3),
    "length_mm": ("mm", 1e-3),
    "fin_height_mm": ("mm", 1e-3),
    "fin_thickness_mm": ("mm", 1e-3),
    "n_fins": ("-", 1.0),
    "base_thickness_mm": ("mm", 1e-3),
}

#: Search schemes. ``tpe-refine`` (default): multivariate TPE plus vectorised refinement of the
#: Pareto front (sinkopt.search.refine); the others are Optuna's samplers alone.
SAMPLERS = ("tpe-refine", "tpe", "nsga2", "random", "gp")
DEFAULT_SAMPLER = "tpe-refine"

#: Objectives: name -> (result column, direction). Directions are Optuna's words.
OBJECTIVES = {
    "sink_volume": ("volume_cm3", "minimize"),
    "sink_mass": ("mass_kg", "minimize"),
    "fan_power": ("fan_power_W", "minimize"),
    "junction_margin": ("worst_margin_K", "maximize"),
    "time_to_limit_after_fan_stop": ("time_to_limit_after_fan_stop_s", "maximize"),
    "peak_junction_in_profile": ("profile_peak_junction_C", "minimize"),
    "air_rise": ("air_rise_K", "minimize"),
    "noise": ("noise_dBA", "minimize"),
}


@dataclass(frozen=True)
class Variable:
    """One search variable. ``kind`` is ``int``, ``float`` or ``categorical``; a variable with
    ``fixed`` set is not searched. Values are in the units the name carries (mm, -, ratio)."""

    name: str
    kind: str
    low: float | None = None
    high: float | None = None
    step: float | None = None
    choices: tuple[Any, ...] = ()
    fixed: Any = None

    @property
    def is_fixed(self) -> bool:
        return self.fixed is not None


def fan_label(key: str, count: int) -> str:
    """The ``fan`` search choice for ``count`` fans of the curve file ``key``.

    >>> fan_label("fan_a", 1), fan_label("fan_a", 2)
    ('fan_a', 'fan_a x2')
    """
    return key if count == 1 else f"{key} x{count}"


@dataclass(frozen=True)
class FanOption:
    """A candidate fan (one curve file) with its allowed counts, arrangement and speed range."""

    key: str  #: unique short name used as the categorical choice
    path: Path
    curve: Any  #: sinkopt.fans.FanCurve
    counts: tuple[int, ...] = (1,)
    arrangement: str = "parallel"
    speed_min: float = 1.0  #: fraction of the curve's rated speed
    speed_max: float = 1.0
    efficiency: float | None = None  #: total efficiency when the file has no power data


@dataclass(frozen=True)
class AirSupply:
    """Where the air comes from: candidate fans, or a known flow / approach velocity."""

    fans: tuple[FanOption, ...] = ()
    fixed_flow_m3_s: float | None = None
    approach_velocity_m_s: float | None = None
    #: Extra system losses in series with the sink: Δp = K ρ V²/2 at V = Q/area ...
    extra_loss_coefficient: float = 0.0
    extra_loss_area_m2: float | None = None
    #: ... and/or a measured impedance curve (flow [m^3/s], pressure [Pa]) at ρ_ref.
    extra_impedance: tuple[tuple[float, ...], tuple[float, ...]] | None = None
    extra_impedance_density: float = 1.2
    ducted: bool = True
    #: Duct cross-section around an unducted sink (bypass model), [m^2], and its sides [m].
    duct_area_m2: float | None = None
    duct_width_m: float | None = None
    duct_height_m: float | None = None
    #: The base stands in the air stream (a sink in a wind tunnel, on a strut) rather than flush
    #: with a duct wall or a board: the face an approach velocity acts on, and the section the
    #: sink blocks in a duct, include the base (docs/theory.md#approach-velocity-and-duct-section).
    base_in_airstream: bool = False
    failed_fan_check: bool = False  #: also evaluate with one fan of the array stopped
    #: The air path from the fans to the fin field (docs/theory.md#fan-to-sink-air-path):
    #: ``transition`` (a shroud from the fans' faces to the fin field: sudden expansion or
    #: contraction), ``plenum`` (the fans' velocity head lost in a plenum), ``none``.
    fan_to_sink: str = "transition"
    #: The velocity head at the fin field's outlet face is lost to the room (free discharge).
    discharge_loss: bool = True

    @property
    def uses_fans(self) -> bool:
        return bool(self.fans)

    def approach_flow(self, width, fin_height, base_thickness):
        """Volume flow [m^3/s] carried by the given approach velocity.

        Ducted: the velocity acts on the sink's face, the fin region W × H, or W × (H + t_b)
        with ``base_in_airstream``. Unducted: it is the duct's mean velocity over the whole duct
        section, of which the bypass model then sends part around the fins.
        """
        v = self.approach_velocity_m_s
        if not self.ducted:
            return v * self.duct_area_m2 + 0.0 * width
        face = fin_height + (base_thickness if self.base_in_airstream else 0.0)
        return v * width * face

    def fan_choices(self) -> dict[str, tuple["FanOption", int]]:
        """Every ``fan`` label, in order, with its fan option and count."""
        return {fan_label(f.key, n): (f, n) for f in self.fans for n in f.counts}


#: Choices of ``AirSupply.fan_to_sink``.
FAN_TO_SINK = ("transition", "plenum", "none")


@dataclass(frozen=True)
class ProcessLimits:
    """Manufacturing limits of the sink's process (presets are common practice, no source)."""

    name: str = "extruded"
    min_fin_thickness_m: float = 1.0e-3
    min_gap_m: float = 2.0e-3
    max_fin_aspect: float = 10.0  #: fin height / gap
    min_base_thickness_m: float = 2.0e-3


@dataclass(frozen=True)
class Limits:
    """Constraints every feasible design meets. None: not constrained."""

    min_junction_margin_K: float = 0.0
    max_air_rise_K: float | None = None
    max_noise_dBA: float | None = None
    max_width_m: float | None = None
    max_length_m: float | None = None
    max_height_m: float | None = None  #: fins + base
    max_mass_kg: float | None = None
    max_fan_power_W: float | None = None
    max_pressure_drop_Pa: float | None = None
    allow_stall: bool = False
    #: The fans-stopped checks must leave this long from a fan stop at full load until the first
    #: junction reaches its limit [s] (needs ``[fans_stopped]``).
    min_time_to_limit_after_fan_stop_s: float | None = None
    #: What the junction-margin constraint and objective use: "nominal", "pessimistic" (every
    #: uncertain input at its hot-side bound) or "p95" (5th percentile of the margin, first order).
    margin_basis: str = "nominal"


@dataclass(frozen=True)
class StillAir:
    """The fans-stopped checks (``[fans_stopped]``): the sink in still air."""

    orientation: str  #: sinkopt.physics.natural_convection.ORIENTATIONS
    emissivity: float  #: of the sink's surface [-]
    finish: str = ""
    load_fraction: float = 1.0  #: load of the fans-stopped steady state [-]
    back_exposed: bool = False  #: the back of the base sees the air
    tau_jc_s: float = 0.5  #: junction-to-case time constant of every device [s]
    horizon_s: float = 3600.0  #: how long after a fan stop is followed [s]


#: How a load profile begins: ``periodic`` (the profile repeats forever; its periodic steady
#: state), ``steady`` (from the steady state at the first row's powers), ``ambient`` (from cold:
#: everything at the inlet air temperature).
PROFILE_STARTS = ("periodic", "steady", "ambient")


@dataclass(frozen=True)
class LoadProfile:
    """A load profile (``[load_profile]``): piecewise-constant power per device, fans running.
    Row k's powers hold from ``times_s[k]`` to ``times_s[k + 1]``; the last time ends it."""

    times_s: tuple[float, ...]  #: (k + 1,) from 0, increasing
    power_W: tuple[tuple[float, ...], ...]  #: (k, s) in the study's device order
    start: str = "periodic"
    source: Path | None = None
    constrain: bool = True  #: the profile's peak junctions must keep the junction margin

    @property
    def duration_s(self) -> float:
        return float(self.times_s[-1])


@dataclass(frozen=True)
class Problem:
    name: str
    conditions: Conditions
    devices: tuple[Device, ...]
    material_name: str
    conductivity: float  #: [W/(m K)]
    density: float  #: [kg/m^3]
    process: ProcessLimits
    variables: tuple[Variable, ...]  #: geometry, fan choice, count, speed, mounting
    air: AirSupply
    objectives: tuple[str, ...]  #: keys of OBJECTIVES
    limits: Limits
    options: ModelOptions = field(default_factory=ModelOptions)
    trials: int = 300
    seed: int | None = None
    sampler: str = DEFAULT_SAMPLER
    source: Path | None = None  #: the study file
    description: str = ""
    inputs: tuple[Path, ...] = ()  #: every file read (study, fan curves, impedance curves)
    #: The calibration the model runs on (``[model] calibration``), or None.
    calibration: "Calibration | None" = None
    #: The uncertain inputs (``[uncertainty]``): the band of every Pareto design, robust search.
    uncertainty: UncertaintySpec = DEFAULT_UNCERTAINTY
    #: The fans-stopped checks (``[fans_stopped]``), or None.
    still_air: StillAir | None = None
    specific_heat: float = 900.0  #: sink material [J/(kg K)]
    #: A load profile (``[load_profile]``), or None.
    load_profile: LoadProfile | None = None
    #: The user's own weights of the objectives for a short-list pick (``[shortlist]``).
    pick_weights: tuple[tuple[str, float], ...] = ()

    @property
    def slug(self) -> str:
        """The study name as a folder name (``demo inverter`` -> ``demo-inverter``)."""
        import re

        return re.sub(r"[^A-Za-z0-9._-]+", "-", self.name).strip("-") or "study"

    def default_results_dir(self) -> Path:
        return Path("results") / self.slug

    def variable(self, name: str) -> Variable:
        for v in self.variables:
            if v.name == name:
                return v
        raise KeyError(name)

    def fan(self, key: str) -> FanOption:
        for f in self.air.fans:
            if f.key == key:
                return f
        raise KeyError(key)

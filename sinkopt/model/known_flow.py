"""Evaluate a batch of heatsink designs at known airflow: every quantity per design, per-device
junction temperatures, and the correlations whose validity range each design leaves.

This is the middle layer: it composes the pure physics functions and knows about devices and
options, but does no I/O and never imports optuna, plotly or pandas.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from sinkopt.model.design import Conditions, Device, ModelOptions, Perturbation, SinkGeometry
from sinkopt.physics import geometry as geo
from sinkopt.physics import heatsink as hs
from sinkopt.physics import spreading as sp
from sinkopt.physics.air import air_properties, pressure_standard_atmosphere_1976
from sinkopt.model.validity import describe, out_of_range

__all__ = ["Evaluation", "evaluate", "inlet_air", "stack_resistances", "upstream_heat_fraction"]

ZERO_C = 273.15


@dataclass
class Evaluation:
    """Per-design results; arrays of shape (n,), per-device arrays of shape (n, s)."""

    device_names: list[str]
    air_density: np.ndarray  #: inlet air [kg/m^3]
    air_pressure: np.ndarray  #: [Pa]
    flow: np.ndarray  #: volume flow through the fins [m^3/s]
    gap: np.ndarray  #: fin gap [m]
    velocity: np.ndarray  #: mean channel velocity [m/s]
    reynolds_dh: np.ndarray  #: [-]
    reynolds_channel_star: np.ndarray  #: [-]
    pressure_drop: np.ndarray  #: sink static pressure drop [Pa]
    h: np.ndarray  #: [W/(m^2 K)]
    fin_efficiency: np.ndarray  #: [-]
    r_sink: np.ndarray  #: base to inlet air [K/W]
    r_convective: np.ndarray  #: base to local air [K/W]
    air_rise: np.ndarray  #: bulk air temperature rise through the sink [K]
    air_outlet_C: np.ndarray  #: [°C]
    volume: np.ndarray  #: envelope [m^3]
    mass: np.ndarray  #: [kg]
    fin_aspect: np.ndarray  #: H/b [-]
    r_jc: np.ndarray  #: (n, s) [K/W]
    r_stack: np.ndarray  #: (n, s) case to sink base [K/W]
    air_local_rise: np.ndarray  #: (n, s) mixed-mean air rise at each device [K]
    base_rise: np.ndarray  #: (n, s) mean base rise under each device above its local air [K]
    junction_C: np.ndarray  #: (n, s) [°C]
    margin: np.ndarray  #: (n, s) tj_max − T_j [K]
    worst_margin: np.ndarray  #: (n,) [K]
    spreading: str  #: "fast", "coarse" or "exact"
    out_of_range: dict[str, np.ndarray] = field(default_factory=dict)  #: name -> (n,) bool
    range_quantities: dict[str, np.ndarray] = field(default_factory=dict)

    def __len__(self) -> int:
        return int(self.flow.shape[0])

    def warnings(self, i: int) -> list[str]:
        """Names of the correlations design ``i`` uses outside their validity range."""
        return [describe(name, self.range_quantities, i)
                for name, bad in self.out_of_range.items() if bad[i]]


def inlet_air(conditions: Conditions):
    """Air properties at the worst-case ambient temperature and the altitude's static pressure."""
    pressure = pressure_standard_atmosphere_1976(conditions.altitude_m)
    return air_properties(conditions.ambient_C + ZERO_C, pressure)


def stack_resistances(devices: Sequence[Device], n: int, stack_choice=None) -> np.ndarray:
    """Case-to-base resistance (n, s) for each design's choice of mounting stack per device.

    ``stack_choice`` is None (first stack of every device) or an int array (n, s) of indices.
    """
    s = len(devices)
    table = [np.array([st.resistance() for st in d.stacks] or [0.0]) for d in devices]
    if stack_choice is None:
        return np.tile(np.array([t[0] for t in table]), (n, 1)).reshape(n, s)
    choice = np.broadcast_to(np.asarray(stack_choice, dtype=int), (n, s))
    out = np.empty((n, s))
    for j, t in enumerate(table):
        out[:, j] = t[choice[:, j]]
    return out


def upstream_heat_fraction(center_y, size_y) -> np.ndarray:
    """Matrix F (s, s): the fraction of device i's footprint upstream of device j's centre.

    The mixed-mean air at device j has picked up Σ_i F[j, i] Q_i; F[j, j] = 1/2. Footprints
    are taken as heating the air uniformly along their length (common practice, no source).

    >>> upstream_heat_fraction([0.01, 0.03], [0.01, 0.01]).tolist()
    [[0.5, 0.0], [1.0, 0.5]]
    """
    y = np.asarray(center_y, dtype=float)
    b = np.asarray(size_y, dtype=float)
    return np.clip((y[:, None] - (y[None, :] - b[None, :] / 2)) / b[None, :], 0.0, 1.0)


def evaluate(geometry: SinkGeometry, flow, devices: Sequence[Device], conductivity: float,
             density: float, conditions: Conditions, options: ModelOptions = ModelOptions(),
             stack_choice=None, perturb: Perturbation | None = None) -> Evaluation:
    """Evaluate n designs at volume flows ``flow`` (n,) [m^3/s] through the fins.

    Parameters
    ----------
    geometry : SinkGeometry
        n geometries (checked beforehand with :func:`sinkopt.model.design.check_geometry`).
    flow : array_like
        Volume flow through the fin channels per design [m^3/s]; NaN where the fan found no
        operating point (results are NaN there).
    devices : sequence of Device
        The heat sources, in the same order as the per-device result columns.
    conductivity, density : float
        Sink material [W/(m K)], [kg/m^3].
    conditions : Conditions
        Ambient and altitude.
    options : ModelOptions
        Correlation choices.
    stack_choice : array_like of int, optional
        (n, s) index of the mounting stack of each device in each design.
    perturb : Perturbation, optional
        Per-design factors on the devices' losses and resistances and a shift of the ambient
        (the uncertainty band); its heat-transfer and pressure-drop factors are applied by the
        caller through ``options``.

    Notes
    -----
    T_j = T_in + ΔT_air,j + θ_j + P_j (R_jc + R_stack,j), where θ_j is the mean base rise under
    device j from the spreading solution with the sink side as a uniform film
    h_eff = 1/(R A_base) and ΔT_air,j the mixed-mean air rise at the device's centre
    (``air_heating="local"``, with R the convective part of the sink resistance), or 0 with R the
    inlet-referenced sink resistance (``air_heating="lumped"``, docs/theory.md#ref-1-golden-case REF-1).
    """
    g = geometry
    n = len(g)
    flow = np.broadcast_to(np.asarray(flow, dtype=float), (n,))
    air = inlet_air(conditions)
    hyd = hs.sink_hydraulics(g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins, flow,
                             air, options.hydraulic_diameter, options.exit_loss,
                             options.friction_multiplier, options.loss_multiplier)
    th = hs.sink_thermal(g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins, flow, air,
                         conductivity, options.heat_transfer, options.fin_tip,
                         options.hydraulic_diameter, options.heat_transfer_multiplier)
    power = np.array([d.power for d in devices], dtype=float)
    s = len(devices)
    p = perturb or Perturbation()
    if p.power is not None:  # (n, s) losses, one row per design
        power = power[None, :] * np.broadcast_to(p.power, (n, s))
        total_power = power.sum(axis=1)
    else:
        total_power = power.sum()
    air_rise = total_power / th.mass_flow_heat_capacity
    base_area = g.width * g.length
    if options.air_heating == "local":
        fraction = upstream_heat_fraction([d.center_y for d in devices],
                                          [d.size_y for d in devices])
        air_local = ((power @ fraction.T) if power.ndim == 2 else (fraction @ power)[None, :]) \
            / th.mass_flow_heat_capacity[:, None]
        r_film = th.resistance_convective
    elif options.air_heating == "lumped":
        air_local = np.zeros((n, s))
        r_film = th.resistance
    else:
        raise ValueError(f"air_heating must be 'local' or 'lumped'; got {options.air_heating!r}")
    h_eff = 1.0 / (r_film * base_area)
    if options.spreading not in ("fast", "coarse", "exact"):
        raise ValueError(f"spreading must be 'fast', 'coarse' or 'exact'; got {options.spreading!r}")
    rise_fn = (sp.temperature_rise_rect_sources_song_lee_au if options.spreading == "fast"
               else sp.temperature_rise_rect_sources_muzychka_2003)
    terms = options.coarse_terms if options.spreading == "coarse" else options.series_terms
    src = [np.array([getattr(d, a) for d in devices], dtype=float)
           for a in ("center_x", "center_y", "size_x", "size_y")]
    base_rise = np.asarray(rise_fn(g.width, g.length, g.base_thickness, conductivity, h_eff,
                                   power, *src, n_terms=terms)).reshape(n, s)
    r_jc = np.tile(np.array([d.r_jc for d in devices], dtype=float), (n, 1))
    r_stack = stack_resistances(devices, n, stack_choice)
    if p.r_jc is not None:
        r_jc = r_jc * p.r_jc
    if p.r_stack is not None:
        r_stack = r_stack * p.r_stack
    t_in = conditions.ambient_C
    if p.ambient_K is not None:
        t_in = t_in + np.broadcast_to(np.asarray(p.ambient_K, dtype=float), (n,))
    t_in_col = t_in[:, None] if np.ndim(t_in) else t_in
    tj = t_in_col + air_local + base_rise + (power if power.ndim == 2 else power[None, :]) \
        * (r_jc + r_stack)
    tj_max = np.array([d.tj_max for d in devices], dtype=float)
    margin = tj_max[None, :] - tj
    worst = margin.min(axis=1) if s else np.full(n, np.inf)

    w_turb = hs.cv.transition_weight(hyd.reynolds)
    source_area = src[2] * src[3]
    quantities = {
        "reynolds_channel_star": th.reynolds_channel_star,
        "reynolds_dh": hyd.reynolds,
        "transition_blend": ((w_turb > 0) & (w_turb < 1)).astype(float),
        "uses_teertstra": (options.heat_transfer == "teertstra") & (w_turb < 1.0),
        "uses_turbulent": w_turb > 0.0,
        "uses_corrected_length": options.fin_tip == "corrected_length",
        "tip_biot_root": np.sqrt(th.h * g.fin_thickness / conductivity),
        "uses_fast_spreading": options.spreading == "fast",
        "sla_relative_radius": np.sqrt(source_area.max() / base_area) if s else np.zeros(n),
        "air_temperature_K": np.full(n, t_in + ZERO_C + 0.0) + air_rise,
    }
    return Evaluation(
        device_names=[d.name for d in devices],
        air_density=np.broadcast_to(air.density, (n,)),
        air_pressure=np.broadcast_to(air.pressure, (n,)),
        flow=flow, gap=hyd.gap, velocity=hyd.velocity, reynolds_dh=hyd.reynolds,
        reynolds_channel_star=th.reynolds_channel_star, pressure_drop=hyd.pressure_drop,
        h=th.h, fin_efficiency=th.fin_efficiency, r_sink=th.resistance,
        r_convective=th.resistance_convective, air_rise=air_rise, air_outlet_C=t_in + air_rise,
        volume=geo.envelope_volume(g.width, g.length, g.fin_height, g.base_thickness),
        mass=geo.sink_mass(g.width, g.length, g.fin_height, g.base_thickness, g.n_fins,
                           g.fin_thickness, density),
        fin_aspect=geo.fin_aspect_ratio(g.fin_height, hyd.gap),
        r_jc=r_jc, r_stack=r_stack, air_local_rise=air_local, base_rise=base_rise,
        junction_C=tj, margin=margin, worst_margin=worst, spreading=options.spreading,
        out_of_range=out_of_range(quantities, n), range_quantities=quantities,
    )

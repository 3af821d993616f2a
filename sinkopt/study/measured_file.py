"""A prototype's measurements, as a CSV with the units in the column names (the convention of
fan-curve files), for ``sinkopt calibrate``.

::

    # sinkopt-measurements: 1
    # width_mm: 41.5              geometry of the prototype: the study's geometry variables,
    # length_mm: 90               each given here or fixed in the study
    # fin_height_mm: 11.3
    # fin_thickness_mm: 0.86
    # n_fins: 16
    # base_thickness_mm: 2.7
    # air_temperature_C: 20       the test's inlet air (required unless a column gives it)
    # air_pressure_Pa: 101325     optional, default 101325
    flow_m3_h,pressure_drop_Pa,thermal_resistance_K_per_W
    4.89,36.7,
    6.92,55.2,0.729

Flow: ``flow_<unit>`` (any fan-curve flow unit, through the sink in a ducted test),
``channel_velocity_m_s`` (mean velocity between the fins) or ``approach_velocity_m_s`` (on the
face the study's ``[air]`` section states). Pressure drop: ``pressure_drop_<unit>`` (any
fan-curve pressure unit). Thermal: ``thermal_resistance_K_per_W`` (mean base to inlet air), or
``base_temperature_C`` with ``power_W`` (and ``inlet_temperature_C`` or the header's air
temperature). A cell may be empty where a point has no value of that kind.

Every rule broken raises :class:`InputError` naming the file, line and column.
"""
from __future__ import annotations

import csv
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from sinkopt.errors import InputError
from sinkopt.fans.units import lookup_unit, unit_choices
from sinkopt.model.calibration import Measurements

__all__ = ["MeasuredFile", "read_measured_file", "GEOMETRY_KEYS", "finite_number"]

GEOMETRY_KEYS = ("width_mm", "length_mm", "fin_height_mm", "fin_thickness_mm", "n_fins",
                 "base_thickness_mm")
_META_NUMBERS = {"air_temperature_C": (-60.0, 150.0), "air_pressure_Pa": (1e4, 2e5),
                 "conductivity_W_per_mK": (1.0, 2000.0),
                 **{k: (0.0, None) for k in GEOMETRY_KEYS}}
_FLOW_VELOCITY = ("channel_velocity_m_s", "approach_velocity_m_s")
_THERMAL = ("thermal_resistance_K_per_W", "base_temperature_C", "power_W", "inlet_temperature_C")


@dataclass
class MeasuredFile:
    """The file's content, converted to SI; ``flow_kind`` says what the flow column measured."""

    source: str
    meta: dict[str, float]
    flow_kind: str  #: "flow", "channel_velocity" or "approach_velocity"
    flow_values: np.ndarray  #: [m^3/s] or [m/s] as ``flow_kind`` says
    pressure_drop: np.ndarray  #: [Pa]
    thermal_resistance: np.ndarray  #: [K/W]
    inlet_temperature_C: float
    air_pressure_Pa: float
    lines: list[int] = field(default_factory=list)  #: file line of each point

    def measurements(self, flow_m3_s: np.ndarray) -> Measurements:
        return Measurements(flow_m3_s, self.pressure_drop, self.thermal_resistance)


def finite_number(text: str, where: str, column: str) -> float:
    """A CSV cell as a finite float, or InputError naming the file:line and the column."""
    try:
        v = float(text)
    except ValueError:
        raise InputError(f"not a number: {text!r}", where, column) from None
    if not math.isfinite(v):
        raise InputError(f"not a finite number: {text!r}", where, column)
    return v


def read_measured_file(path) -> MeasuredFile:
    """Read and check a measurements CSV (see the module docstring)."""
    path = Path(path)
    source = str(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(f"cannot read the measurements file: {exc.strerror or exc}", source) from None
    meta: dict[str, float] = {}
    header: list[str] | None = None
    header_line = 0
    rows: list[tuple[int, list[str]]] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            key, sep, value = line[1:].partition(":")
            key, value = key.strip(), value.split("#")[0].strip()
            if sep and key in _META_NUMBERS:
                v = finite_number(value, f"{source}:{lineno}", key)
                lo, hi = _META_NUMBERS[key]
                if (lo is not None and v <= lo) or (hi is not None and v > hi):
                    raise InputError(f"must lie in ({lo:g}, {hi if hi is not None else '∞'}], "
                                     f"got {v:g}", f"{source}:{lineno}", key)
                meta[key] = v
            continue
        cells = [c.strip() for c in next(csv.reader([line]))]
        if header is None:
            header, header_line = cells, lineno
        else:
            rows.append((lineno, cells))
    if header is None:
        raise InputError("no header line (e.g. flow_m3_h,pressure_drop_Pa)", source)

    where = f"{source}:{header_line}"
    cols: dict[str, tuple[int, float]] = {}  # role -> (column index, factor to SI)
    flow_kind = None
    for j, name in enumerate(header):
        low = name.lower()
        if low in _FLOW_VELOCITY:
            role, factor = low, 1.0
        elif low.startswith("flow"):
            unit_text = name[4:].lstrip("_ ([").rstrip(")]").strip()
            unit = lookup_unit("flow", unit_text) if unit_text else None
            if unit is None:
                raise InputError(f"missing or unknown flow unit in {name!r}; use flow_<unit> with "
                                 f"one of {unit_choices('flow')}, or channel_velocity_m_s / "
                                 "approach_velocity_m_s", where, name)
            role, factor = "flow", unit.factor
        elif low.startswith("pressure_drop") or low.startswith("pressure"):
            stem = "pressure_drop" if low.startswith("pressure_drop") else "pressure"
            unit_text = name[len(stem):].lstrip("_ ([").rstrip(")]").strip()
            unit = lookup_unit("pressure", unit_text) if unit_text else None
            if unit is None:
                raise InputError(f"missing or unknown pressure unit in {name!r}; use "
                                 f"pressure_drop_<unit> with one of {unit_choices('pressure')}",
                                 where, name)
            role, factor = "pressure_drop", unit.factor
        elif name in _THERMAL:
            role, factor = name, 1.0
        elif low.rstrip("_") in ("thermal_resistance", "base_temperature", "power",
                                 "inlet_temperature", "velocity", "temperature", "resistance"):
            raise InputError(f"column {name!r} names no unit; use one of {', '.join(_THERMAL)}, "
                             f"{', '.join(_FLOW_VELOCITY)}", where, name)
        else:
            raise InputError(f"unknown column {name!r}; known: flow_<unit>, "
                             f"{', '.join(_FLOW_VELOCITY)}, pressure_drop_<unit>, "
                             f"{', '.join(_THERMAL)}", where, name)
        if role in cols or (role in ("flow", *_FLOW_VELOCITY) and flow_kind is not None):
            raise InputError(f"column {name!r}: a second column of the same kind", where, name)
        if role in ("flow", *_FLOW_VELOCITY):
            flow_kind = role
        cols[role] = (j, factor)
    if flow_kind is None:
        raise InputError("no flow column: give flow_<unit>, channel_velocity_m_s or "
                         "approach_velocity_m_s", where)
    if "pressure_drop" not in cols and "thermal_resistance_K_per_W" not in cols \
            and "base_temperature_C" not in cols:
        raise InputError("nothing to calibrate on: give pressure_drop_<unit>, "
                         "thermal_resistance_K_per_W, or base_temperature_C with power_W", where)
    if "base_temperature_C" in cols and "power_W" not in cols:
        raise InputError("base_temperature_C needs a power_W column (the heat put in)", where)
    if "base_temperature_C" in cols and "thermal_resistance_K_per_W" in cols:
        raise InputError("give thermal_resistance_K_per_W or base_temperature_C, not both", where)
    thermal_given = "thermal_resistance_K_per_W" in cols or "base_temperature_C" in cols
    if "air_temperature_C" not in meta and "inlet_temperature_C" not in cols:
        raise InputError("the test's air temperature is missing: add a line "
                         "'# air_temperature_C: ...' or an inlet_temperature_C column", source)

    def cell(cells, role, lineno):
        if role not in cols:
            return math.nan
        j, factor = cols[role]
        if j >= len(cells) or cells[j] == "":
            return math.nan
        return finite_number(cells[j], f"{source}:{lineno}", header[j]) * factor

    flows, dps, rs, tins, lines = [], [], [], [], []
    for lineno, cells in rows:
        at = f"{source}:{lineno}"
        if len(cells) > len(header):
            raise InputError(f"{len(cells)} cells but the header has {len(header)}", at)
        q = cell(cells, flow_kind, lineno)
        if math.isnan(q):
            raise InputError("every point needs a flow", at, header[cols[flow_kind][0]])
        if q <= 0:
            raise InputError(f"flow must be > 0, got {cells[cols[flow_kind][0]]}", at,
                             header[cols[flow_kind][0]])
        dp = cell(cells, "pressure_drop", lineno)
        if not math.isnan(dp) and dp <= 0:
            raise InputError(f"pressure drop must be > 0, got {cells[cols['pressure_drop'][0]]}",
                             at, header[cols["pressure_drop"][0]])
        t_in = cell(cells, "inlet_temperature_C", lineno)
        if math.isnan(t_in):
            t_in = meta.get("air_temperature_C", math.nan)
        r = cell(cells, "thermal_resistance_K_per_W", lineno)
        if "base_temperature_C" in cols:
            tb, power = cell(cells, "base_temperature_C", lineno), cell(cells, "power_W", lineno)
            if not math.isnan(tb):
                if math.isnan(power) or power <= 0:
                    raise InputError("a base temperature needs a power > 0 on the same line", at,
                                     "power_W")
                if math.isnan(t_in):
                    raise InputError("no inlet air temperature for this point", at,
                                     "inlet_temperature_C")
                if tb <= t_in:
                    raise InputError(f"base temperature {tb:g} °C is not above the inlet air "
                                     f"{t_in:g} °C: heat cannot flow into the air", at,
                                     "base_temperature_C")
                r = (tb - t_in) / power
        if not math.isnan(r) and r <= 0:
            raise InputError(f"thermal resistance must be > 0, got {r:g}", at,
                             "thermal_resistance_K_per_W")
        if math.isnan(dp) and math.isnan(r):
            raise InputError("this point has neither a pressure drop nor a thermal value", at)
        flows.append(q)
        dps.append(dp)
        rs.append(r)
        tins.append(t_in)
        lines.append(lineno)
    n_dp = sum(not math.isnan(v) for v in dps)
    n_th = sum(not math.isnan(v) for v in rs)
    if len(flows) < 2 or ("pressure_drop" in cols and n_dp == 1) or (thermal_given and n_th == 1):
        raise InputError(f"{len(flows)} point(s) ({n_dp} with a pressure drop, {n_th} thermal): a "
                         "calibration needs several points of each kind measured, over a range "
                         "of flows", source)
    tin = np.array(tins, dtype=float)
    return MeasuredFile(source, meta, flow_kind.replace("_m_s", ""), np.array(flows),
                        np.array(dps), np.array(rs),
                        float(np.nanmean(tin)) if np.isfinite(tin).any() else math.nan,
                        meta.get("air_pressure_Pa", 101325.0), lines)

"""Read a study file (TOML, docs/study-file.md) into a :class:`~sinkopt.model.problem.Problem` in SI,
reporting every problem of the file in one :class:`~sinkopt.errors.InputError`.

Search variables and their names
--------------------------------
Values stay in the unit their name carries; the search converts (``GEOMETRY_VARIABLES``).

- ``width_mm``, ``length_mm``, ``fin_height_mm``, ``fin_thickness_mm``, ``base_thickness_mm``
  (float) and ``n_fins`` (int): searched over ``[low, high]`` or fixed.
- ``fan`` (categorical, only when ``[[air.fan]]`` is used): one *label* per fan file and allowed
  count. The label is the fan's key (its file stem) for one fan and ``"<key> x<N>"`` for N fans
  in the fan's arrangement, e.g. ``"fan_a"``, ``"fan_a x2"``. Order: ``[[air.fan]]`` entries as
  written, files of a glob sorted by name, counts ascending. With a single label the variable is
  fixed to it. :func:`fan_choices` maps each label back to ``(FanOption, count)``.
- ``fan_speed`` (float in [0, 1]): the chosen fan runs at
  ``speed_min + fan_speed * (speed_max - speed_min)`` of its rated speed (its own range from the
  study's ``speed``); a fan with one fixed speed ignores it. Fixed at 0 when no fan has a range.
  :func:`fan_speed_ratio` does the mapping.
- ``mount_<device name>`` (categorical, only for a device with two or more
  ``[[device.mounting]]``): the mounting names in file order; the index of the chosen name is the
  index into ``Device.stacks``. A device with one mounting has no variable (stack 0).
"""
from __future__ import annotations

import dataclasses
import difflib
import re
import tomllib
from pathlib import Path

from sinkopt.model.calibration import apply_multipliers
from sinkopt.model.uncertainty_spec import (DEFAULT_UNCERTAINTY, DISTRIBUTIONS, MARGIN_BASES,
                                            InputUncertainty, UncertaintySpec)
from sinkopt.physics.natural_convection import ORIENTATIONS
from sinkopt.physics.radiation import EMISSIVITY
from sinkopt.study import catalogs
from sinkopt.study.calibration_file import read_calibration
from sinkopt.study.profile_file import read_profile
from sinkopt.model.design import Conditions, Device, ModelOptions, MountingStack, SlabLayer, ViaLayer
from sinkopt.errors import InputError
from sinkopt.model.problem import (DEFAULT_SAMPLER, FAN_TO_SINK, GEOMETRY_VARIABLES, OBJECTIVES,
                                   PROFILE_STARTS, SAMPLERS, AirSupply, FanOption, Limits, Problem,
                                   ProcessLimits, StillAir, Variable, fan_label)
from sinkopt.study.schema import (PROCESS_KEYS, PROCESS_PRESETS, Problems, Table, cross_check,
                                  item_path, join_path, read_impedance_curve, resolve_files, show,
                                  span)

__all__ = ["load_study", "parse_study", "fan_label", "fan_choices", "fan_speed_ratio",
           "mount_variable", "SAMPLERS", "SECTIONS", "FAN_SPEED_MAX"]

SECTIONS = ("study", "ambient", "device", "sink", "air", "objectives", "constraints", "model",
            "uncertainty", "fans_stopped", "load_profile", "shortlist")
#: Highest allowed fan speed, as a fraction of the rated speed (fan laws beyond the data).
FAN_SPEED_MAX = 1.2
#: Default junction margin [K]: common practice is 10-25 K below tj_max (common practice, no source).
DEFAULT_MARGIN_K = 10.0

_STUDY_KEYS = ("name", "description", "trials", "seed", "sampler")
_AMBIENT_KEYS = ("temperature_C", "altitude_m")
_DEVICE_KEYS = ("name", "power_W", "tj_max_C", "r_jc_K_per_W", "center_x_mm", "center_y_mm",
                "footprint_x_mm", "footprint_y_mm", "mounting", "zth_foster")
_MOUNTING_KEYS = ("name", "interface", "interface_K_cm2_per_W", "contact_area_mm2", "layer")
_SLAB_KEYS = ("name", "thickness_mm", "conductivity_W_per_mK", "area_mm2")
_VIA_KEYS = ("name", "vias", "via_drill_mm", "via_plating_um", "board_thickness_mm",
             "pad_area_mm2", "copper_W_per_mK", "board_W_per_mK")
_SINK_KEYS = ("material", "process", *PROCESS_KEYS, *GEOMETRY_VARIABLES, "grid_mm",
              "fin_thickness_grid_mm")
#: Dimension grid of the search [mm]: what a drawing carries and a supplier makes (common
#: practice, no source): 0.5 mm on width, length, fin height and base; 0.1 mm on fin thickness.
DEFAULT_GRID_MM = 0.5
DEFAULT_FIN_THICKNESS_GRID_MM = 0.1
_FLOW_KEYS = {"flow_m3_per_h": 1 / 3600, "flow_m3_per_s": 1.0, "flow_cfm": 4.719474432e-4}
_AIR_KEYS = ("fan", *_FLOW_KEYS, "approach_velocity_m_per_s", "base_in_airstream", "ducted",
             "duct_width_mm",
             "duct_height_mm", "extra_loss_coefficient", "extra_loss_area_mm2",
             "extra_impedance_file", "failed_fan_check", "fan_to_sink", "discharge_loss")
_FAN_KEYS = ("file", "count", "arrangement", "speed", "efficiency")
_CONSTRAINT_KEYS = ("min_junction_margin_K", "max_air_rise_K", "max_noise_dBA", "max_width_mm",
                    "max_length_mm", "max_height_mm", "max_mass_kg", "max_fan_power_W",
                    "max_pressure_drop_Pa", "min_time_to_limit_after_fan_stop_s", "allow_stall",
                    "margin_basis")
_MODEL_CHOICES = {
    "heat_transfer": "sinkopt.physics.heatsink:HEAT_TRANSFER_MODELS",
    "hydraulic_diameter": "sinkopt.physics.heatsink:HYDRAULIC_DIAMETERS",
    "exit_loss": "sinkopt.physics.pressure_drop:EXIT_LOSS_MODELS",
    "fin_tip": "sinkopt.physics.heatsink:FIN_TIPS",
}
#: Evaluation modes of sinkopt.model.evaluate (first: the search's default).
_MODEL_MODES = {"spreading": ("coarse", "fast", "exact"), "air_heating": ("local", "lumped")}
_MODEL_KEYS = (*_MODEL_CHOICES, *_MODEL_MODES, "series_terms", "coarse_terms", "calibration")
_GEOMETRY_HINTS = {
    "width_mm": "across the flow",
    "length_mm": "along the flow",
    "fin_height_mm": "above the base",
    "fin_thickness_mm": "",
    "n_fins": "whole number >= 2",
    "base_thickness_mm": "",
}


# ---- search-variable helpers -------------------------------------------------------------------
def fan_choices(air: AirSupply) -> dict[str, tuple[FanOption, int]]:
    """Every ``fan`` label of the problem, in order, with its fan and count."""
    return air.fan_choices()


def fan_speed_ratio(option: FanOption, fan_speed):
    """Speed as a fraction of rated for the search value ``fan_speed`` in [0, 1].

    >>> fan_speed_ratio(FanOption("f", Path("f.csv"), None, speed_min=0.5, speed_max=1.0), 0.5)
    0.75
    """
    return option.speed_min + fan_speed * (option.speed_max - option.speed_min)


def mount_variable(device_name: str) -> str:
    """Name of the mounting-choice variable of a device."""
    return f"mount_{device_name}"


# ---- sections ----------------------------------------------------------------------------------
def _model_choices(key: str) -> tuple[str, ...]:
    import importlib

    module, name = _MODEL_CHOICES[key].split(":")
    return tuple(getattr(importlib.import_module(module), name))


def _study(root: Table, default_name: str) -> dict:
    data = root.table("study") or {}
    t = Table(data, "study", root.problems, _STUDY_KEYS)
    return {
        "name": t.text("name", default=default_name),
        "description": t.text("description", default=""),
        "trials": t.integer("trials", default=300, minimum=1),
        "seed": t.integer("seed", default=None, minimum=0),
        "sampler": t.text("sampler", default=DEFAULT_SAMPLER, choices=SAMPLERS),
    }


def _ambient(root: Table):
    data = root.table("ambient", required=True, hint="worst-case temperature_C and altitude_m")
    if data is None:
        return None, None
    t = Table(data, "ambient", root.problems, _AMBIENT_KEYS)
    temp = t.number("temperature_C", "°C", required=True, minimum=-273.15, exclusive=True,
                    hint="worst-case inlet air, °C")
    alt = t.number("altitude_m", "m", default=0.0, minimum=-610.0, maximum=86000.0)
    return temp, alt


def _layer(data: dict, path: str, problems: Problems, contact_area):
    is_via = any(k in data for k in _VIA_KEYS if k != "name")
    is_via = is_via and not any(k in data for k in ("thickness_mm", "conductivity_W_per_mK"))
    t = Table(data, path, problems, _VIA_KEYS if is_via else _SLAB_KEYS)
    name = t.text("name", required=True)
    if not is_via:
        thick = t.number("thickness_mm", "mm", required=True, minimum=0, exclusive=True)
        k = t.number("conductivity_W_per_mK", "W/(m·K)", required=True, minimum=0, exclusive=True)
        area = t.number("area_mm2", "mm²", minimum=0, exclusive=True)
        area = area * 1e-6 if area is not None else contact_area
        if None in (name, thick, k, area):
            return None
        return SlabLayer(name, thick * 1e-3, k, area)
    vias = t.integer("vias", required=True, minimum=0)
    drill = t.number("via_drill_mm", "mm", required=True, minimum=0, exclusive=True)
    plating = t.number("via_plating_um", "µm", required=True, minimum=0, exclusive=True)
    board = t.number("board_thickness_mm", "mm", required=True, minimum=0, exclusive=True)
    pad = t.number("pad_area_mm2", "mm²", minimum=0, exclusive=True)
    pad = pad * 1e-6 if pad is not None else contact_area
    k_cu = t.number("copper_W_per_mK", "W/(m·K)", minimum=0, exclusive=True)
    k_b = t.number("board_W_per_mK", "W/(m·K)", minimum=0, exclusive=True)
    if None in (name, vias, drill, plating, board, pad) or (
            "copper_W_per_mK" in data and k_cu is None) or ("board_W_per_mK" in data and k_b is None):
        return None
    if plating * 1e-3 > drill / 2:
        t.add("via_plating_um", f"the plating must fit in the hole (plating <= drill/2 = "
                                f"{drill * 500:g} µm), but got {plating:g} µm")
        return None
    holes = vias * 3.141592653589793 * (drill * 1e-3) ** 2 / 4
    if holes > pad:
        t.add("vias", f"{vias} holes of {drill:g} mm take {holes * 1e6:.4g} mm², more than the "
                      f"pad area {pad * 1e6:.4g} mm²")
        return None
    return ViaLayer(name, vias, drill * 1e-3, plating * 1e-6, board * 1e-3, pad, k_cu, k_b)


def _mounting(data: dict, path: str, problems: Problems, footprint_area):
    t = Table(data, path, problems, _MOUNTING_KEYS)
    name = t.text("name", required=True)
    area = t.number("contact_area_mm2", "mm²", minimum=0, exclusive=True)
    contact = area * 1e-6 if area is not None else footprint_area
    ok = not ("contact_area_mm2" in data and area is None)
    if ("interface" in data) == ("interface_K_cm2_per_W" in data):
        t.add(None, "give exactly one of interface (a catalog name: "
                    f"{', '.join(catalogs.interfaces())}) or interface_K_cm2_per_W")
        iface, r_spec = None, None
    elif "interface" in data:
        iface = t.text("interface")
        r_spec = None
        if iface is not None:
            try:
                r_spec = catalogs.interface(iface).specific_resistance
            except InputError as exc:
                t.add("interface", exc.message)
    else:
        value = t.number("interface_K_cm2_per_W", "K·cm²/W", minimum=0)
        iface, r_spec = ("specified", value * 1e-4) if value is not None else (None, None)
    layers = []
    for j, layer in enumerate(t.tables("layer")):
        lpath = item_path(path, "layer", j, layer.get("name"))
        layers.append(_layer(layer, lpath, problems, contact))
    if None in (name, iface, r_spec, contact) or None in layers or not ok:
        return None
    return MountingStack(name, tuple(layers), iface, r_spec, contact)


#: How far the Foster resistances may sum from r_jc_K_per_W (datasheet rounding) [-].
FOSTER_SUM_TOLERANCE = 0.05


def _foster(t: Table, r_jc):
    """A device's ``zth_foster = {r_K_per_W = [...], tau_s = [...]}``: ((R_i), (τ_i)), ((), ())
    when absent, None when wrong."""
    data = t.table("zth_foster")
    if data is None:
        return (), ()
    sub = Table(data, t.at("zth_foster"), t.problems, ("r_K_per_W", "tau_s"))
    lists = {}
    for key, unit in (("r_K_per_W", "K/W"), ("tau_s", "s")):
        v = sub._get(key, True, f"a list of the Foster {'resistances' if unit == 'K/W' else 'time constants'} "
                                f"from the datasheet's Z_th curve, {unit}")
        if v is None:
            return None
        if (not isinstance(v, list) or not v or len(v) > 20
                or not all(isinstance(x, (int, float)) and not isinstance(x, bool) and x > 0
                           for x in v)):
            sub.add(key, f"expected a list of 1 to 20 positive numbers [{unit}], got {show(v)}")
            return None
        lists[key] = tuple(float(x) for x in v)
    r, tau = lists["r_K_per_W"], lists["tau_s"]
    if len(r) != len(tau):
        sub.add("tau_s", f"{len(tau)} time constants for {len(r)} resistances; give one per stage")
        return None
    if len(set(tau)) != len(tau):
        sub.add("tau_s", f"the time constants must differ (merge equal stages), got {show(list(tau))}")
        return None
    if r_jc is not None and abs(sum(r) - r_jc) > FOSTER_SUM_TOLERANCE * r_jc:
        sub.add("r_K_per_W", f"the stages sum to {sum(r):.4g} K/W, but r_jc_K_per_W is {r_jc:g}; "
                             f"both describe junction to case (within "
                             f"{FOSTER_SUM_TOLERANCE:.0%})")
        return None
    return r, tau


def _devices(root: Table) -> list:
    problems = root.problems
    items = root.tables("device", required=True,
                        hint="the heat sources on the sink, one table each")
    out, names = [], {}
    for i, data in enumerate(items):
        path = item_path("", "device", i, data.get("name"))
        t = Table(data, path, problems, _DEVICE_KEYS)
        name = t.text("name", required=True)
        if name is not None and name in names:
            t.add("name", f"device names must be unique; {show(name)} is also device[{names[name] + 1}]")
        elif name is not None:
            names[name] = i
        vals = {
            "power": t.number("power_W", "W", required=True, minimum=0, exclusive=True,
                              hint="heat dissipated, W"),
            "tj_max": t.number("tj_max_C", "°C", required=True,
                               hint="maximum junction temperature, °C, from datasheet"),
            "r_jc": t.number("r_jc_K_per_W", "K/W", required=True, minimum=0,
                             hint="junction-to-case, K/W, from datasheet"),
            "center_x": t.number("center_x_mm", "mm", required=True, minimum=0,
                                 hint="footprint centre across the flow from the left edge, mm"),
            "center_y": t.number("center_y_mm", "mm", required=True, minimum=0,
                                 hint="footprint centre along the flow from the inlet edge, mm"),
            "size_x": t.number("footprint_x_mm", "mm", required=True, minimum=0, exclusive=True,
                               hint="across the flow, mm"),
            "size_y": t.number("footprint_y_mm", "mm", required=True, minimum=0, exclusive=True,
                               hint="along the flow, mm"),
        }
        area = (vals["size_x"] * vals["size_y"] * 1e-6
                if vals["size_x"] is not None and vals["size_y"] is not None else None)
        stacks, stack_names = [], set()
        mountings = t.tables("mounting", required=True,
                             hint="one or more [[device.mounting]] tables: case-to-sink stacks")
        for j, m in enumerate(mountings):
            mpath = item_path(path, "mounting", j, m.get("name"))
            stack = _mounting(m, mpath, problems, area)
            if isinstance(m.get("name"), str):
                if m["name"] in stack_names:
                    problems.add(join_path(mpath, "name"), "mounting names must be unique per "
                                 f"device; {show(m['name'])} is given twice")
                    stack = None
                stack_names.add(m["name"])
            stacks.append(stack)
        if name is None or None in vals.values() or None in stacks or not stacks:
            out.append(None)
            continue
        foster = _foster(t, vals["r_jc"])
        if foster is None:
            out.append(None)
            continue
        mm = {k: (v * 1e-3 if k in ("center_x", "center_y", "size_x", "size_y") else v)
              for k, v in vals.items()}
        out.append(Device(name=name, stacks=tuple(stacks), foster_r=foster[0],
                          foster_tau=foster[1], **mm))
    return out


def _sink(root: Table):
    data = root.table("sink", required=True, hint="material, process and the six geometry keys")
    if data is None:
        return None
    t = Table(data, "sink", root.problems, _SINK_KEYS)
    out: dict = {"material": None, "process": None, "geometry": {}}
    name = t.text("material", default="al6063-t5")
    if name is not None:
        try:
            out["material"] = catalogs.material(name)
        except InputError as exc:
            t.add("material", exc.message)
    process = t.text("process", default="extruded", choices=PROCESS_PRESETS)
    if process is not None:
        preset = PROCESS_PRESETS[process]
        limits, ok = {}, True
        for key, unit in PROCESS_KEYS.items():
            if key in data:
                v = t.number(key, unit, minimum=0, exclusive=True)
                ok = ok and v is not None
            else:
                v = getattr(preset, key)
                if v is None:
                    t.add(None, f"missing required key {key} (process \"custom\" has no preset)")
                    ok = False
            limits[key] = v
        if ok:
            out["process"] = ProcessLimits(
                name=process, min_fin_thickness_m=limits["min_fin_thickness_mm"] * 1e-3,
                min_gap_m=limits["min_gap_mm"] * 1e-3, max_fin_aspect=limits["max_fin_aspect"],
                min_base_thickness_m=limits["min_base_thickness_mm"] * 1e-3)
    for key in GEOMETRY_VARIABLES:
        integer = key == "n_fins"
        hint = ("a number (fixed) or [low, high] (searched)" + (", " if _GEOMETRY_HINTS[key] else "")
                + _GEOMETRY_HINTS[key])
        spec = t.number_or_range(key, "-" if integer else "mm", integer=integer, required=True,
                                 minimum=2 if integer else 0, exclusive=not integer, hint=hint)
        out["geometry"][key] = spec
    grid = t.number("grid_mm", "mm", default=DEFAULT_GRID_MM, minimum=0)
    fin_grid = t.number("fin_thickness_grid_mm", "mm", default=DEFAULT_FIN_THICKNESS_GRID_MM,
                        minimum=0)
    out["grid"] = {k: (fin_grid if k == "fin_thickness_mm" else grid) or None
                   for k in GEOMETRY_VARIABLES if k != "n_fins"}
    for key, step in out["grid"].items():
        spec = out["geometry"].get(key)
        if step and spec is not None and spec[0] != "fixed":
            lo, hi = _on_grid(spec[1], spec[2], step)
            if lo > hi:
                t.add(key, f"[{spec[1]:g}, {spec[2]:g}] holds no multiple of the {step:g} mm "
                           f"grid; widen it, or set {'fin_thickness_grid_mm' if key == 'fin_thickness_mm' else 'grid_mm'} = 0")
    return out


def _on_grid(low: float, high: float, step: float) -> tuple[float, float]:
    """The range's first and last multiples of ``step`` (a hair of rounding forgiven)."""
    import math

    lo = math.ceil(low / step - 1e-9) * step
    hi = math.floor(high / step + 1e-9) * step
    return round(lo, 9), round(hi, 9)


def _variable(name: str, spec, step: float | None = None) -> Variable:
    kind = "int" if name == "n_fins" else "float"
    if spec[0] == "fixed":
        return Variable(name, kind, fixed=spec[1])
    if step:
        lo, hi = _on_grid(spec[1], spec[2], step)
        if lo == hi:
            return Variable(name, kind, fixed=lo)
        return Variable(name, kind, low=lo, high=hi, step=step)
    return Variable(name, kind, low=spec[1], high=spec[2])


def _fans(t: Table, base_dir: Path, inputs: list[Path]) -> list | None:
    from sinkopt.fans import load_fan_curve

    problems = t.problems
    fans, keys, ok = [], {}, True
    for i, data in enumerate(t.tables("fan")):
        path = item_path("air", "fan", i, None)
        f = Table(data, path, problems, _FAN_KEYS)
        pattern = f.text("file", required=True, hint="a fan-curve CSV path or glob, relative to "
                                                     "the study file's folder")
        counts = None
        raw = data.get("count", 1)
        if isinstance(raw, list) and raw:
            got = [f.check_number(f"count[{k + 1}]", v, "-", 1, integer=True)
                   for k, v in enumerate(raw)]
            if None not in got:
                if len(set(got)) != len(got):
                    f.add("count", f"each count at most once, but got {show(raw)}")
                else:
                    counts = tuple(sorted(got))
        elif isinstance(raw, list):
            f.add("count", "expected a whole number >= 1 or a list of them, got []")
        else:
            n = f.check_number("count", raw, "-", 1, integer=True)
            counts = None if n is None else (n,)
        arrangement = f.text("arrangement", default="parallel", choices=("parallel", "series"))
        speed = f.number_or_range("speed", "-", minimum=0, exclusive=True,
                                  maximum=FAN_SPEED_MAX)
        if speed is None and "speed" not in data:
            speed = ("fixed", 1.0)
        efficiency = f.number("efficiency", "-", minimum=0, exclusive=True, maximum=1.0)
        bad = (None in (pattern, counts, arrangement, speed)
               or ("efficiency" in data and efficiency is None))
        ok = ok and not bad
        if pattern is None:
            continue
        files, err = resolve_files(pattern, base_dir)
        if err:
            f.add("file", err)
            ok = False
        for p in files:
            key = p.stem
            if key in keys:
                f.add("file", f"fan key {show(key)} (the file name without .csv) is also "
                              f"{keys[key]}; keys must be unique: rename one file")
                ok = False
                continue
            keys[key] = str(p)
            try:
                curve = load_fan_curve(p)  # the path as shown in messages
            except InputError as exc:
                f.add("file", str(exc))
                ok = False
                continue
            inputs.append(p.resolve())
            if not bad:
                lo, hi = span(speed)
                fans.append(FanOption(key, p.resolve(), curve, counts, arrangement, lo, hi,
                                      efficiency))
    if ok:
        labels = [fan_label(fo.key, n) for fo in fans for n in fo.counts]
        dups = sorted({x for x in labels if labels.count(x) > 1})
        if dups:
            t.add("fan", f"fan labels must be unique, but {', '.join(map(show, dups))} occur more than once")
            ok = False
    return fans if ok else None


def _air(root: Table, base_dir: Path, inputs: list[Path]):
    data = root.table("air", required=True,
                      hint="[[air.fan]] entries or a known flow such as flow_m3_per_h")
    if data is None:
        return None
    t = Table(data, "air", root.problems, _AIR_KEYS)
    kw: dict = {}
    ok = True
    known = [k for k in (*_FLOW_KEYS, "approach_velocity_m_per_s") if k in data]
    fans = _fans(t, base_dir, inputs) if "fan" in data else []
    if fans is None:
        ok = False
    elif fans:
        kw["fans"] = tuple(fans)
    if "fan" in data and known:
        t.add(known[0], "give either [[air.fan]] or a known airflow, not both")
        ok = False
    elif "fan" not in data and len(known) != 1:
        choices = ", ".join(("[[air.fan]]", *_FLOW_KEYS, "approach_velocity_m_per_s"))
        t.add(None, f"give exactly one of {choices}" + (f"; got {', '.join(known)}" if known else ""))
        ok = False
    elif known:
        key = known[0]
        if key == "approach_velocity_m_per_s":
            v = t.number(key, "m/s", minimum=0, exclusive=True)
            kw["approach_velocity_m_s"] = v
        else:
            v = t.number(key, key.split("_", 1)[1].replace("_per_", "/"), minimum=0, exclusive=True)
            kw["fixed_flow_m3_s"] = None if v is None else v * _FLOW_KEYS[key]
        ok = ok and v is not None
    ducted = t.boolean("ducted", default=True)
    kw["ducted"] = ducted
    in_stream = t.boolean("base_in_airstream", default=False)
    kw["base_in_airstream"] = in_stream
    if in_stream is None:
        ok = False
    elif (in_stream and ducted and "approach_velocity_m_per_s" not in data):
        t.add("base_in_airstream", "matters only with approach_velocity_m_per_s or ducted = false "
                                   "(it sets the face the velocity acts on, or the section the "
                                   "sink blocks in its duct)")
        ok = False
    dw = t.number("duct_width_mm", "mm", minimum=0, exclusive=True)
    dh = t.number("duct_height_mm", "mm", minimum=0, exclusive=True)
    if ducted is False:
        for key, v in (("duct_width_mm", dw), ("duct_height_mm", dh)):
            if key not in data:
                t.add(None, f"missing required key {key} (ducted = false: the duct around the "
                            "sink, for the bypass model)")
        if dw is not None and dh is not None:
            kw["duct_area_m2"] = dw * dh * 1e-6
            kw["duct_width_m"], kw["duct_height_m"] = dw * 1e-3, dh * 1e-3
        else:
            ok = False
    elif ducted:
        for key in ("duct_width_mm", "duct_height_mm"):
            if key in data:
                t.add(key, "used only with ducted = false (a ducted sink has no bypass)")
                ok = False
    kk = t.number("extra_loss_coefficient", "-", minimum=0)
    ka = t.number("extra_loss_area_mm2", "mm²", minimum=0, exclusive=True)
    if ("extra_loss_coefficient" in data) != ("extra_loss_area_mm2" in data):
        t.add(None, "extra_loss_coefficient and extra_loss_area_mm2 go together (Δp = K ρ V²/2 "
                    "at V = flow / area)")
        ok = False
    elif kk is not None and ka is not None:
        kw["extra_loss_coefficient"], kw["extra_loss_area_m2"] = kk, ka * 1e-6
    elif "extra_loss_coefficient" in data:
        ok = False
    file = t.text("extra_impedance_file")
    if file is not None:
        files, err = resolve_files(file, base_dir)
        if err or len(files) != 1:
            t.add("extra_impedance_file", err or f"{show(file)} matches {len(files)} files; give one")
            ok = False
        else:
            try:
                q, p, rho = read_impedance_curve(files[0], str(files[0]))
                kw["extra_impedance"], kw["extra_impedance_density"] = (q, p), rho
                inputs.append(files[0].resolve())
            except InputError as exc:
                t.add("extra_impedance_file", str(exc))
                ok = False
    failed = t.boolean("failed_fan_check", default=False)
    kw["failed_fan_check"] = failed
    kw["fan_to_sink"] = t.text("fan_to_sink", default="transition", choices=FAN_TO_SINK)
    kw["discharge_loss"] = t.boolean("discharge_loss", default=True)
    if kw["fan_to_sink"] is None or kw["discharge_loss"] is None:
        ok = False
    elif "fan" not in data and ("fan_to_sink" in data or "discharge_loss" in data):
        t.add("fan_to_sink" if "fan_to_sink" in data else "discharge_loss",
              "describes the air path from fans: needs [[air.fan]] entries (a known airflow "
              "already is the flow through the sink)")
        ok = False
    if None in (ducted, failed) or "extra_impedance_file" in data and file is None:
        ok = False
    if failed and fans:
        if all(n == 1 for f in fans for n in f.counts):
            t.add("failed_fan_check", "needs an array of 2 or more fans, but every allowed "
                                      "count is 1 (set count = 2 or more)")
            ok = False
        for f in fans:
            if f.curve.size_mm is None and any(n > 1 for n in f.counts):
                t.add("failed_fan_check", f"fan {show(f.key)}: a stopped fan's flow area needs "
                                          f"'# size_mm: ...' in {f.curve.source}")
                ok = False
    elif failed and "fan" not in data:
        t.add("failed_fan_check", "needs [[air.fan]] entries (not a known airflow)")
        ok = False
    return AirSupply(**kw) if ok else None


def _objectives(root: Table) -> tuple[str, ...] | None:
    data = root.table("objectives", required=True,
                      hint=f"use = [...] with 2 or more of {', '.join(OBJECTIVES)}")
    if data is None:
        return None
    t = Table(data, "objectives", root.problems, ("use",))
    use = t._get("use", True, f"2 or more of {', '.join(OBJECTIVES)}")
    if use is None:
        return None
    if not isinstance(use, list) or not all(isinstance(u, str) for u in use):
        t.add("use", f"expected a list of names such as [\"sink_volume\", \"junction_margin\"], "
                     f"got {show(use)}")
        return None
    ok = True
    for k, name in enumerate(use):
        if name not in OBJECTIVES:
            close = difflib.get_close_matches(name, OBJECTIVES, n=1)
            near = f"did you mean {show(close[0])}? " if close else ""
            t.add(f"use[{k + 1}]", f"unknown objective {show(name)}; {near}(choices: "
                                   f"{', '.join(OBJECTIVES)})")
            ok = False
    dups = sorted({u for u in use if use.count(u) > 1})
    if dups:
        t.add("use", f"each objective at most once, but got {show(use)}")
        ok = False
    if len(use) < 2:
        t.add("use", f"a trade-off needs at least 2 objectives, but got {len(use)}")
        ok = False
    return tuple(use) if ok else None


def _constraints(root: Table):
    data = root.table("constraints") or {}
    t = Table(data, "constraints", root.problems, _CONSTRAINT_KEYS)
    kw = {"min_junction_margin_K": t.number("min_junction_margin_K", "K", default=DEFAULT_MARGIN_K,
                                            minimum=0)}
    units = {"K": "K", "dBA": "dB(A)", "mm": "mm", "kg": "kg", "W": "W", "Pa": "Pa", "s": "s"}
    for key in _CONSTRAINT_KEYS[1:-2]:
        unit = key.rsplit("_", 1)[1]
        v = t.number(key, units[unit], minimum=0, exclusive=True)
        name = key.replace("_mm", "_m")
        kw[name] = None if v is None else (v * 1e-3 if unit == "mm" else v)
    kw["allow_stall"] = t.boolean("allow_stall", default=False)
    kw["margin_basis"] = t.text("margin_basis", default="nominal", choices=MARGIN_BASES)
    bad = [k for k in data if k in _CONSTRAINT_KEYS and kw.get(k.replace("_mm", "_m")) is None]
    if bad or None in (kw["min_junction_margin_K"], kw["allow_stall"], kw["margin_basis"]):
        return None
    return Limits(**kw)


_UNCERTAIN_INPUTS = ("heat_transfer", "pressure_drop", "fan_flow", "power", "r_jc", "interface")
_UNCERTAINTY_KEYS = (*_UNCERTAIN_INPUTS, "ambient_K", "power_correlation", "samples", "seed")


_STILL_AIR_KEYS = ("orientation", "finish", "emissivity", "load_fraction", "back_exposed",
                   "tau_jc_s", "horizon_s")


def _still_air(root: Table):
    """The ``[fans_stopped]`` table: the sink in still air (None when the table is absent)."""
    data = root.table("fans_stopped")
    if data is None:
        return None, True
    t = Table(data, "fans_stopped", root.problems, _STILL_AIR_KEYS)
    orientation = t.text("orientation", required=True, choices=ORIENTATIONS,
                         hint="how the sink hangs with the fans stopped: "
                              + ", ".join(ORIENTATIONS))
    finish = t.text("finish", default=None, choices=tuple(EMISSIVITY))
    emissivity = t.number("emissivity", "-", minimum=0, exclusive=True, maximum=1)
    if finish is not None and emissivity is not None:
        t.add("emissivity", "give finish or emissivity, not both")
        return None, False
    if emissivity is None and "emissivity" not in data:
        emissivity = EMISSIVITY[finish or "anodised"]
    kw = dict(
        load_fraction=t.number("load_fraction", "-", default=1.0, minimum=0, exclusive=True,
                               maximum=1),
        back_exposed=t.boolean("back_exposed", default=False),
        tau_jc_s=t.number("tau_jc_s", "s", default=0.5, minimum=0, exclusive=True),
        horizon_s=t.number("horizon_s", "s", default=3600.0, minimum=1, maximum=1e6))
    if None in (orientation, emissivity) or None in kw.values():
        return None, False
    return StillAir(orientation, emissivity, finish or ("" if "emissivity" in data
                                                        else "anodised"), **kw), True


_LOAD_PROFILE_KEYS = ("file", "start", "constrain")


def _load_profile(root: Table, base_dir: Path, devices, inputs: list[Path]):
    """The ``[load_profile]`` table and its CSV (None when absent); returns (profile, ok)."""
    data = root.table("load_profile")
    if data is None:
        return None, True
    t = Table(data, "load_profile", root.problems, _LOAD_PROFILE_KEYS)
    file = t.text("file", required=True, hint="a CSV of time against power (docs/study-file.md, [load_profile])")
    start = t.text("start", default="periodic", choices=PROFILE_STARTS)
    constrain = t.boolean("constrain", default=True)
    if None in (file, start, constrain) or None in devices:
        return None, False
    path = Path(base_dir or ".") / file
    if not path.is_file():
        t.add("file", f"no load profile {show(file)} (relative to the study's folder)")
        return None, False
    try:
        profile = read_profile(path, devices, start, constrain)
    except InputError as exc:
        t.add("file", str(exc))
        return None, False
    inputs.append(path.resolve())
    return profile, True


def _uncertainty(root: Table):
    """The ``[uncertainty]`` table over the defaults (sinkopt.model.uncertainty_spec)."""
    data = root.table("uncertainty") or {}
    t = Table(data, "uncertainty", root.problems, _UNCERTAINTY_KEYS)
    d = DEFAULT_UNCERTAINTY
    kw: dict = {}
    ok = True
    for key in (*_UNCERTAIN_INPUTS, "ambient_K"):
        name = "ambient" if key == "ambient_K" else key
        default = getattr(d, name)
        value = data.get(key)
        unit, top = ("K", 50.0) if key == "ambient_K" else ("-", 0.9)
        if value is None:
            kw[name] = default
            continue
        if isinstance(value, dict):
            sub = Table(value, t.at(key), root.problems, ("size", "distribution"))
            size = sub.number("size", unit, required=True, minimum=0, maximum=top,
                              hint="relative standard uncertainty, or half-width if uniform")
            dist = sub.text("distribution", default=default.distribution, choices=DISTRIBUTIONS)
        else:
            size = t.number(key, unit, minimum=0, maximum=top)
            dist = default.distribution
        if size is None or dist is None:
            ok = False
            continue
        kw[name] = InputUncertainty(size, dist, "set in the study")
    rho = t.number("power_correlation", "-", default=d.power_correlation, minimum=0, maximum=1)
    samples = t.integer("samples", default=d.samples, minimum=100)
    seed = t.integer("seed", default=d.seed, minimum=0)
    if not ok or None in (rho, samples, seed):
        return None
    return UncertaintySpec(**kw, power_correlation=rho, samples=samples, seed=seed)


def _model(root: Table, base_dir: Path, inputs: list[Path]):
    """Model options, and the calibration they run on; returns (options, calibration)."""
    data = root.table("model") or {}
    known = {f.name for f in dataclasses.fields(ModelOptions)} | {"calibration"}
    t = Table(data, "model", root.problems, [k for k in _MODEL_KEYS if k in known])
    defaults = ModelOptions()
    kw = {key: t.text(key, default=getattr(defaults, key), choices=_model_choices(key))
          for key in _MODEL_CHOICES}
    for key, choices in _MODEL_MODES.items():
        if key in known:
            kw[key] = t.text(key, default=getattr(defaults, key), choices=choices)
    for key in ("series_terms", "coarse_terms"):
        if key in known:
            kw[key] = t.integer(key, default=getattr(defaults, key), minimum=1)
    calibration = None
    file = t.text("calibration")
    if file is not None:
        path = Path(base_dir or ".") / file
        if not path.is_file():
            t.add("calibration", f"no calibration file {show(file)} (relative to the study's "
                                 "folder; write one with sinkopt calibrate)")
        else:
            try:
                calibration = read_calibration(path)
                inputs.append(path.resolve())
            except InputError as exc:
                t.add("calibration", str(exc))
    if None in kw.values() or ("calibration" in data and calibration is None):
        return None, None
    options = ModelOptions(**kw)
    if calibration is not None:
        options = apply_multipliers(options, calibration.multipliers)
    return options, calibration


def _pick_weights(root: Table, objectives) -> tuple[tuple[str, float], ...] | None:
    """``[shortlist] weights = {objective = weight, ...}``: a pick of the user's own."""
    data = root.table("shortlist")
    if data is None:
        return ()
    t = Table(data, "shortlist", root.problems, ("weights",))
    weights = t.table("weights", required=True,
                      hint="{objective = weight, ...} over the study's objectives")
    if weights is None or objectives is None:
        return None
    w = Table(weights, t.at("weights"), root.problems, objectives)
    out = []
    for name in weights:
        if name in objectives:
            v = w.number(name, "-", minimum=0)
            if v is None:
                return None
            out.append((name, float(v)))
    if out and not any(v > 0 for _, v in out):
        t.add("weights", "at least one weight must be > 0")
        return None
    return tuple(out) if len(out) == len(weights) else None


def _check_dynamics(problems, root: Table, objectives, limits, still_ok: bool) -> None:
    """Objectives and constraints on the transients need the tables that describe them."""
    uses = set(objectives or ())
    if still_ok and root.table("fans_stopped") is None:
        hint = ("add a [fans_stopped] table with orientation = one of "
                + ", ".join(ORIENTATIONS) + " (how the sink hangs with the fans stopped)")
        if "time_to_limit_after_fan_stop" in uses:
            problems.add("objectives.use", f"time_to_limit_after_fan_stop needs the sink in still "
                                           f"air: {hint}")
        if limits is not None and limits.min_time_to_limit_after_fan_stop_s is not None:
            problems.add("constraints.min_time_to_limit_after_fan_stop_s", f"needs the sink in "
                                                                           f"still air: {hint}")
    if "peak_junction_in_profile" in uses and root.table("load_profile") is None:
        problems.add("objectives.use", "peak_junction_in_profile needs a load profile: add a "
                                       "[load_profile] table with file = \"<profile>.csv\"")


# ---- entry points ------------------------------------------------------------------------------
_TOML_POS = re.compile(r"\(at line (\d+), column (\d+)\)")


def parse_study(text: str, source: str = "<study>", base_dir=None) -> Problem:
    """Check a study file's text and resolve it into a :class:`Problem` (SI units).

    Parameters
    ----------
    text : str
        TOML text.
    source : str
        Name used in messages (the file name).
    base_dir : path-like, optional
        Folder that relative fan and impedance file names start from; default the current one.

    Raises
    ------
    InputError
        ``"<source>: N problems"`` followed by one line per problem, each with its dotted path;
        for a TOML syntax error, ``"<source>:<line>: invalid TOML: ..."``.
    """
    base_dir = Path(base_dir) if base_dir is not None else Path(".")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        m = _TOML_POS.search(str(exc))
        where = f"{source}:{m.group(1)}" if m else source
        raise InputError(f"invalid TOML: {exc}", source=where) from None
    problems = Problems(source)
    root = Table(data, "", problems, SECTIONS, what="section")
    stem = Path(source).stem if not source.startswith("<") else "study"
    study = _study(root, stem)
    ambient, altitude = _ambient(root)
    devices = _devices(root)
    sink = _sink(root)
    inputs: list[Path] = []
    air = _air(root, base_dir, inputs)
    objectives = _objectives(root)
    limits = _constraints(root)
    options, calibration = _model(root, base_dir, inputs)
    uncertainty = _uncertainty(root)
    still_air, still_ok = _still_air(root)
    profile, _ = _load_profile(root, base_dir, devices, inputs)
    pick_weights = _pick_weights(root, objectives)
    cross_check(problems, sink, devices, air, objectives, limits, ambient)
    _check_dynamics(problems, root, objectives, limits, still_ok)
    problems.raise_if_any()

    variables = [_variable(k, sink["geometry"][k], sink["grid"].get(k)) for k in GEOMETRY_VARIABLES]
    if air.uses_fans:
        labels = tuple(fan_choices(air))
        variables.append(Variable("fan", "categorical", choices=labels,
                                  fixed=labels[0] if len(labels) == 1 else None))
        ranged = any(f.speed_max > f.speed_min for f in air.fans)
        variables.append(Variable("fan_speed", "float", low=0.0, high=1.0) if ranged
                         else Variable("fan_speed", "float", fixed=0.0))
    for d in devices:
        if len(d.stacks) > 1:
            variables.append(Variable(mount_variable(d.name), "categorical",
                                      choices=tuple(s.name for s in d.stacks)))
    material = sink["material"]
    return Problem(
        name=study["name"],
        conditions=Conditions(ambient, altitude, limits.min_junction_margin_K),
        devices=tuple(devices),
        material_name=material.name,
        conductivity=material.conductivity,
        density=material.density,
        process=sink["process"],
        variables=tuple(variables),
        air=air,
        objectives=objectives,
        limits=limits,
        options=options,
        trials=study["trials"],
        seed=study["seed"],
        sampler=study["sampler"],
        description=study["description"] or "",
        inputs=tuple(inputs),
        calibration=calibration,
        uncertainty=uncertainty,
        still_air=still_air,
        specific_heat=material.specific_heat,
        load_profile=profile,
        pick_weights=pick_weights or (),
    )


def load_study(path) -> Problem:
    """Read, check and resolve the study file at ``path`` (relative file names start from its
    folder). Raises :class:`InputError` listing every problem."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"not UTF-8 text (byte {exc.start}); save the file as UTF-8",
                         str(path)) from None
    except OSError as exc:
        raise InputError(f"cannot read study file: {exc.strerror or exc}", str(path)) from None
    problem = parse_study(text, str(path), path.parent)
    return dataclasses.replace(problem, source=path.resolve(),
                               inputs=(path.resolve(), *problem.inputs))

"""Data of the HTML report: plain, JSON-ready dicts and lists built from a study's results.

Nothing here draws or imports plotly; :mod:`sinkopt.results.report` embeds :func:`report_data` in
the page, whose script draws the figures. Quantities stay in SI (flows in m^3/s) unless the key
names another unit (``_mm``, ``_cm3``); values that do not exist (no operating point, a geometry
that cannot exist) are ``None``.

Sources of the numbers: the Pareto designs and every design the results reviewed with the exact
spreading series carry the exact values (as in ``pareto.csv``); the other trials carry the search
model's values (as in ``trials.csv``).

The page's data holds each number once: every trial's values in ``pareto.points`` (columns, one
entry per trial; the Pareto table, the plots and the design panel read them there), per Pareto
design only what the points lack (device temperatures, warnings, system curve, command), each fan
array's curve once at its rated speed (other speeds follow by the fan laws), and the drawings are
made by the page from the geometry (:func:`sink_drawing` is the reference it follows).
"""
from __future__ import annotations

import math
import os
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from sinkopt.model.design import SinkGeometry
from sinkopt.fans import FanArray
from sinkopt.model.known_flow import inlet_air
from sinkopt.model.problem import GEOMETRY_VARIABLES, OBJECTIVES, Problem
from sinkopt.results.collect import Results
from sinkopt.model.system import (PENALTY, evaluate_params, fan_choices, fan_face_area, full_params,
                                  system_pressure_drop)

__all__ = [
    "OBJECTIVE_LABELS",
    "BAND_COLUMNS",
    "uncertainty_data",
    "RESULT_LABELS",
    "objective_axes",
    "trial_points",
    "pareto_plot_data",
    "table_columns",
    "pareto_table_data",
    "parcoords_data",
    "fan_curves",
    "system_curves",
    "fan_system_curves",
    "drawing_scale",
    "sink_drawing",
    "design_data",
    "DESIGN_KEYS",
    "DEVICE_COLUMNS",
    "study_inputs_data",
    "report_data",
]

#: Objective name -> (label, unit) shown on the page.
OBJECTIVE_LABELS = {
    "sink_volume": ("sink volume", "cm³"),
    "sink_mass": ("sink mass", "kg"),
    "fan_power": ("fan electrical power", "W"),
    "junction_margin": ("worst junction margin", "K"),
    "air_rise": ("air temperature rise", "K"),
    "noise": ("fan noise", "dB(A)"),
}

#: Result columns offered for colouring and shown in hovers: column -> (label, unit).
RESULT_LABELS = {
    "volume_cm3": ("sink volume", "cm³"),
    "mass_kg": ("sink mass", "kg"),
    "fan_power_W": ("fan power", "W"),
    "worst_margin_K": ("worst junction margin", "K"),
    "airflow_m3_s": ("airflow", "m³/s"),
    "pressure_drop_Pa": ("system pressure drop", "Pa"),
    "air_rise_K": ("air temperature rise", "K"),
    "noise_dBA": ("fan noise", "dB(A)"),
    "fin_gap_mm": ("fin gap", "mm"),
    "sink_resistance_K_per_W": ("sink resistance", "K/W"),
    "fan_speed_pct": ("fan speed", "% of rated"),
}

#: Search variables' labels (name -> (label, unit)); mounting variables are labelled on the fly.
VARIABLE_LABELS = {
    "width_mm": ("base width W", "mm"),
    "length_mm": ("base length L", "mm"),
    "fin_height_mm": ("fin height H", "mm"),
    "fin_thickness_mm": ("fin thickness t", "mm"),
    "n_fins": ("number of fins N", "-"),
    "base_thickness_mm": ("base thickness", "mm"),
    "fan": ("fan", ""),
    "fan_speed": ("fan speed setting (0 to 1)", "-"),
}

_STATUS = ("infeasible", "feasible", "pareto")


def _num(v: Any) -> float | None:
    """A finite float, or None."""
    try:
        f = float(v)
    except (TypeError, ValueError):
        return None
    return f if math.isfinite(f) else None


def _label(name: str) -> tuple[str, str]:
    if name in VARIABLE_LABELS:
        return VARIABLE_LABELS[name]
    if name.startswith("mount_"):
        return (f"mounting of {name[len('mount_'):]}", "")
    return (name, "")


def objective_axes(problem: Problem) -> list[dict[str, Any]]:
    """One entry per objective: name, result column, direction, label and unit."""
    out = []
    for name in problem.objectives:
        column, direction = OBJECTIVES[name]
        label, unit = OBJECTIVE_LABELS.get(name, (name, ""))
        out.append({"name": name, "column": column, "direction": direction, "label": label,
                    "unit": unit})
    return out


def _merged(results: Results) -> tuple[dict[str, np.ndarray], np.ndarray, np.ndarray,
                                        np.ndarray, list[dict[str, Any]]]:
    """Columns, objectives, feasibility, 'exact' flags and params of every complete trial: the
    exact values where the trial was reviewed, the search model's otherwise."""
    s = results.search
    n = len(results.trial_numbers)
    cols = {k: np.array(v, dtype=object if k == "fan" else float)
            for k, v in s.columns().items()}
    objectives = np.array(s.objectives, dtype=float).reshape(n, len(results.problem.objectives))
    feasible = np.array(s.feasible, dtype=bool)
    bad = ~np.asarray(s.valid_geometry, dtype=bool) | np.asarray(s.no_airflow, dtype=bool)
    exact = np.zeros(n, dtype=bool)
    params = list(s.params)
    if results.exact is not None and len(results.exact_trials):
        where = {int(t): k for k, t in enumerate(results.trial_numbers)}
        rows = np.array([where[int(t)] for t in results.exact_trials], dtype=int)
        e = results.exact
        for k, v in e.columns().items():
            if k in cols:
                cols[k][rows] = np.asarray(v, dtype=cols[k].dtype)
        objectives[rows] = e.objectives
        feasible[rows] = e.feasible
        bad[rows] = ~np.asarray(e.valid_geometry, dtype=bool) | np.asarray(e.no_airflow, dtype=bool)
        exact[rows] = True
        for k, i in enumerate(rows):
            params[i] = e.params[k]
    with np.errstate(invalid="ignore"):
        missing = bad[:, None] | ~np.isfinite(objectives) | (np.abs(objectives) >= PENALTY)
    objectives[missing] = np.nan
    return cols, objectives, feasible, exact, params


def trial_points(results: Results) -> dict[str, Any]:
    """Every complete trial as columns (lists of equal length), ready to plot.

    Keys: ``trial``, ``status`` (``"pareto"``, ``"feasible"`` = feasible but dominated,
    ``"infeasible"``), ``exact`` (values from the exact series), ``objectives`` {name: values,
    None where the design has no value}, ``categorical`` {variable: labels} (fan, mountings),
    ``numeric`` {variable or result column: values}.
    """
    problem = results.problem
    cols, objectives, feasible, exact, params = _merged(results)
    trials = [int(t) for t in results.trial_numbers]
    front = {int(t) for t in results.pareto_trials}
    status = ["pareto" if t in front else ("feasible" if f else "infeasible")
              for t, f in zip(trials, feasible)]
    categorical: dict[str, list[str]] = {}
    numeric: dict[str, list[float | None]] = {}
    for v in problem.variables:
        if v.name == "fan_speed":
            continue  # the search's internal setting; people read fan_speed_pct
        values = [p.get(v.name, v.fixed) for p in params]
        if v.kind == "categorical":
            categorical[v.name] = [str(x) for x in values]
        else:
            numeric[v.name] = [_num(x) for x in values]
    for column in RESULT_LABELS:
        if column in cols:
            numeric[column] = [_num(x) for x in cols[column]]
    return {
        "trial": trials,
        "status": status,
        "exact": [bool(x) for x in exact],
        "objectives": {name: [_num(x) for x in objectives[:, k]]
                       for k, name in enumerate(problem.objectives)},
        "categorical": categorical,
        "numeric": numeric,
    }


def pareto_plot_data(results: Results) -> dict[str, Any]:
    """Everything the Pareto plots need: axes, every trial's point, colouring choices."""
    points = trial_points(results)
    colour = []
    for name in points["categorical"]:
        label, _ = _label(name)
        colour.append({"key": name, "kind": "categorical", "label": label, "unit": ""})
    for name in points["numeric"]:
        label, unit = RESULT_LABELS.get(name) or _label(name)
        values = [v for v in points["numeric"][name] if v is not None]
        if len(set(values)) > 1:  # a fixed variable colours nothing
            colour.append({"key": name, "kind": "numeric", "label": label, "unit": unit})
    counts = {s: points["status"].count(s) for s in _STATUS}
    plotted = sum(all(points["objectives"][o][i] is not None for o in points["objectives"])
                  for i in range(len(points["trial"])))
    return {
        "objectives": objective_axes(results.problem),
        "points": points,
        "colour_options": colour,
        "counts": counts,
        "not_plotted": len(points["trial"]) - plotted,
    }


def table_columns(problem: Problem, records: Sequence[dict[str, Any]]) -> list[dict[str, Any]]:
    """Columns of the Pareto table: key, label, unit and kind (``int``, ``number``, ``text``)."""
    columns = [{"key": "trial", "label": "trial", "unit": "", "kind": "int"}]
    if any("fan" in r["params"] for r in records):
        columns.append({"key": "fan", "label": "fan", "unit": "", "kind": "text"})
    for name in GEOMETRY_VARIABLES:
        label, unit = VARIABLE_LABELS[name]
        columns.append({"key": name, "label": label, "unit": unit,
                        "kind": "int" if name == "n_fins" else "number"})
    if any("fan_speed" in r["params"] for r in records) and problem.air.uses_fans:
        columns.append({"key": "fan_speed_pct", "label": "fan speed", "unit": "% of rated",
                        "kind": "number"})
    shown = []
    for o in objective_axes(problem):
        shown.append(o["column"])
        columns.append({"key": o["column"], "label": o["label"], "unit": o["unit"],
                        "kind": "number"})
    for column in ("volume_cm3", "mass_kg", "fan_power_W", "worst_margin_K", "airflow_m3_s",
                   "pressure_drop_Pa", "air_rise_K"):
        if column not in shown:
            label, unit = RESULT_LABELS[column]
            col = {"key": column, "label": label, "unit": unit, "kind": "number"}
            if column == "airflow_m3_s":  # people size fans in m³/h (or cfm: a toggle)
                col.update(unit="m³/h", scale=3600.0, alt_unit="cfm", alt_scale=2118.880003)
            columns.append(col)
    for v in problem.variables:
        if v.name.startswith("mount_") and not v.is_fixed:
            columns.append({"key": v.name, "label": f"mounting {v.name[len('mount_'):]}",
                            "unit": "", "kind": "text"})
    columns.append({"key": "n_warnings", "label": "warnings", "unit": "", "kind": "int"})
    return columns


def pareto_table_data(results: Results, records: Sequence[dict[str, Any]] | None = None
                      ) -> dict[str, Any]:
    """The Pareto designs as table columns and rows (exact series, as in ``pareto.csv``).

    The page builds the same rows from its points and design data (each number once); this is
    the table as plain rows, for scripts and tests."""
    records = results.pareto_records() if records is None else records
    columns = table_columns(results.problem, records)
    rows = []
    for r in records:
        row = {"trial": r["trial"], "fan": r.get("fan") or r["params"].get("fan")}
        for name in GEOMETRY_VARIABLES:
            row[name] = r["params"].get(name)
        for c in columns:
            if c["key"] not in row and c["key"] != "n_warnings":
                row[c["key"]] = _num(r.get(c["key"]))
        row["n_warnings"] = len(r.get("warnings", []))
        rows.append(row)
    return {"columns": columns, "rows": rows}


def parcoords_data(results: Results, points: dict[str, Any] | None = None) -> dict[str, Any]:
    """Dimensions of a parallel-coordinates view of every trial that has objective values.

    Categorical variables become integer codes with ``tickvals``/``ticktext``; ``status`` codes
    are 0 infeasible, 1 feasible dominated, 2 Pareto. Each dimension's ``from`` names the group
    of ``points`` its values come from (``categorical``, ``numeric`` or ``objectives``).
    """
    points = trial_points(results) if points is None else points
    n = len(points["trial"])
    keep = [i for i in range(n)
            if all(points["objectives"][o][i] is not None for o in points["objectives"])]
    dims = []
    for name, values in points["categorical"].items():
        labels = sorted(set(values[i] for i in keep))
        if len(labels) < 2:
            continue
        code = {lab: k for k, lab in enumerate(labels)}
        label, _ = _label(name)
        dims.append({"key": name, "from": "categorical", "label": label,
                     "values": [code[values[i]] for i in keep],
                     "tickvals": list(range(len(labels))), "ticktext": labels})
    for name, values in points["numeric"].items():
        if name not in _variable_names(results.problem):
            continue
        kept = [values[i] for i in keep]
        if len(set(kept)) < 2:
            continue
        label, unit = _label(name)
        dims.append({"key": name, "from": "numeric", "label": label, "unit": unit,
                     "values": kept})
    for o in objective_axes(results.problem):
        dims.append({"key": o["name"], "from": "objectives", "label": o["label"],
                     "unit": o["unit"],
                     "values": [points["objectives"][o["name"]][i] for i in keep]})
    return {"trial": [points["trial"][i] for i in keep],
            "status": [_STATUS.index(points["status"][i]) for i in keep],
            "dimensions": dims}


def _variable_names(problem: Problem) -> set[str]:
    return {v.name for v in problem.variables}


def _geometries(params_list: Sequence[dict[str, Any]]) -> SinkGeometry:
    """The designs' sinks as one geometry batch (SI)."""
    values = {name: np.array([float(p[name]) for p in params_list], dtype=float) * factor
              for name, (_, factor) in GEOMETRY_VARIABLES.items()}
    return SinkGeometry.of(width=values["width_mm"], length=values["length_mm"],
                           fin_height=values["fin_height_mm"],
                           fin_thickness=values["fin_thickness_mm"],
                           n_fins=np.round(values["n_fins"]),
                           base_thickness=values["base_thickness_mm"])


def _finite_xy(q, p) -> dict[str, list[float]]:
    q = np.asarray(q, dtype=float)
    p = np.asarray(p, dtype=float)
    ok = np.isfinite(q) & np.isfinite(p) & (q >= 0)
    return {"flow_m3_s": q[ok].tolist(), "pressure_Pa": p[ok].tolist()}


def _fan_curve(option, count: int, rho: float, n_points: int) -> dict[str, Any]:
    arr = FanArray(option.curve, count=count, arrangement=option.arrangement)
    st = arr.sample(n_points, 1.0, rho)
    stall = None
    if option.curve.has_stall_region:
        stall = _num(arr.evaluate(option.curve.q_stall_limit_m3_s, 1.0, rho).flow_m3_s)
    return {"name": option.curve.name, "count": count, "arrangement": option.arrangement,
            "speed_min": option.speed_min, "speed_max": option.speed_max,
            "stall_limit_m3_s": stall, **_finite_xy(st.flow_m3_s, st.pressure_Pa)}


def fan_curves(problem: Problem, n_points: int = 80,
               air_density_kg_m3: float | None = None) -> dict[str, dict[str, Any]]:
    """Every fan array the study can choose, sampled once at rated speed and the site air density.

    The curve at speed ratio ``s`` follows by the fan laws, point by point: flow × s, pressure
    × s² (the very points :meth:`sinkopt.fans.FanArray.sample` gives at ``s``); so does the
    stall limit (× s). The report's page draws each design's fan curve so.

    Parameters
    ----------
    problem : Problem
    n_points : int
        Grid points of each curve (the fan file's own points are added).
    air_density_kg_m3 : float, optional
        Default: the site's inlet air.

    Returns
    -------
    dict
        Fan label -> ``name``, ``count``, ``arrangement``, ``speed_min`` and ``speed_max``
        [-], ``flow_m3_s`` and ``pressure_Pa`` lists at speed ratio 1, ``stall_limit_m3_s``:
        the array's flow at the stall limit at speed ratio 1 (None without a stall region).
        Empty for a study without fans.
    """
    if not problem.air.uses_fans:
        return {}
    rho = (float(inlet_air(problem.conditions).density) if air_density_kg_m3 is None
           else float(air_density_kg_m3))
    return {label: _fan_curve(option, count, rho, n_points)
            for label, (option, count) in fan_choices(problem).items()}


def system_curves(problem: Problem, params_list: Sequence[dict[str, Any]], flows
                  ) -> np.ndarray:
    """System static pressure drop [Pa] of each design (sink, the air path from the fans and
    the study's extra losses, at the site air) at its own flows, in one vectorised call.

    Parameters
    ----------
    problem : Problem
    params_list : sequence of dict
        The designs' parameters (fixed variables may be left out).
    flows : array_like, shape (m, n)
        Total flows [m³/s], one row per design.

    Returns
    -------
    ndarray, shape (m, n)
        NaN where the model has no value.
    """
    q = np.asarray(flows, dtype=float)
    m, n = q.shape
    if m == 0:
        return np.zeros((0, n))
    params_list = [full_params(problem, p) for p in params_list]
    g = _geometries(params_list).take(np.repeat(np.arange(m), n))
    area = None
    if problem.air.uses_fans:
        area = np.repeat(fan_face_area(problem, [p.get("fan") for p in params_list]), n)
    with np.errstate(invalid="ignore", divide="ignore"):
        dp, _ = system_pressure_drop(problem, g, q.ravel(), inlet_air(problem.conditions),
                                     problem.options, fan_area=area)
    return np.asarray(dp, dtype=float).reshape(m, n)


def _speed_and_extent(problem: Problem, params: dict[str, Any], speed_ratio: float | None,
                      q_op: float | None, fans: dict[str, dict[str, Any]]
                      ) -> tuple[float | None, float]:
    """A design's fan speed ratio (from its ``fan_speed`` setting when not known) and the flow
    range its fan/system plot spans [m³/s]: the fans' free delivery at the design's and at the
    top speed, and 1.25 × the operating flow."""
    q_max = 0.0
    fan = fans.get(params.get("fan")) if problem.air.uses_fans else None
    if fan is not None:
        if speed_ratio is None:
            speed_ratio = fan["speed_min"] + float(params.get("fan_speed", 0.0)) * (
                fan["speed_max"] - fan["speed_min"])
        if fan["flow_m3_s"]:
            q_max = max(fan["flow_m3_s"]) * max(speed_ratio, fan["speed_max"])
    if q_op is not None:
        q_max = max(q_max, 1.25 * q_op)
    return speed_ratio, (q_max if q_max > 0 else 1e-3)


def _at_speed(curve: dict[str, Any], s: float) -> dict[str, list[float]]:
    return {"flow_m3_s": [q * s for q in curve["flow_m3_s"]],
            "pressure_Pa": [p * s * s for p in curve["pressure_Pa"]]}


def fan_system_curves(problem: Problem, params: dict[str, Any],
                      operating: dict[str, Any] | None = None,
                      n_points: int = 80) -> dict[str, Any]:
    """Fan-array curve and system curve of one design at the site air density: what the
    report's design panel draws (the page builds it from :func:`fan_curves` and
    :func:`system_curves`).

    Parameters
    ----------
    problem : Problem
    params : dict
        The design's parameters (fixed variables may be left out).
    operating : dict, optional
        ``speed_ratio`` [-], ``airflow_m3_s`` and ``pressure_drop_Pa`` of the design (its
        record); evaluated here when not given.
    n_points : int
        Grid points of each curve.

    Returns
    -------
    dict
        ``fan_curve`` (the array at the design's speed), ``fan_curve_rated`` (at the top of the
        fan's speed range, None when that is the design's speed), ``system_curve``, each with
        ``flow_m3_s`` and ``pressure_Pa`` lists; ``operating_point`` (or None);
        ``stall_limit_m3_s``: the array's flow at the stall limit, below which the fan is
        unstable (None without a stall region); ``fan``, ``count``, ``arrangement``,
        ``speed_ratio``, ``air_density_kg_m3``.
    """
    params = full_params(problem, params)
    if operating is None:
        r = evaluate_params(problem, [params])
        operating = {"speed_ratio": _num(r.speed_ratio[0]), "airflow_m3_s": _num(r.flow_total[0]),
                     "pressure_drop_Pa": _num(r.system_pressure[0])}
    rho = float(inlet_air(problem.conditions).density)
    q_op = _num(operating.get("airflow_m3_s"))
    dp_op = _num(operating.get("pressure_drop_Pa"))
    out: dict[str, Any] = {"fan": None, "count": None, "arrangement": None,
                           "speed_ratio": _num(operating.get("speed_ratio")),
                           "air_density_kg_m3": rho, "fan_curve": None, "fan_curve_rated": None,
                           "stall_limit_m3_s": None,
                           "operating_point": (None if q_op is None or dp_op is None
                                               else {"flow_m3_s": q_op, "pressure_Pa": dp_op})}
    fans: dict[str, dict[str, Any]] = {}
    if problem.air.uses_fans and params.get("fan") in fan_choices(problem):
        option, count = fan_choices(problem)[params["fan"]]
        fans[params["fan"]] = _fan_curve(option, count, rho, n_points)
    s, q_max = _speed_and_extent(problem, params, out["speed_ratio"], q_op, fans)
    out["speed_ratio"] = s
    if fans:
        fan = fans[params["fan"]]
        out.update(fan=params["fan"], name=fan["name"], count=fan["count"],
                   arrangement=fan["arrangement"], fan_curve=_at_speed(fan, s))
        if abs(fan["speed_max"] - s) > 1e-9:
            out["fan_curve_rated"] = _at_speed(fan, fan["speed_max"])
        if fan["stall_limit_m3_s"] is not None:
            out["stall_limit_m3_s"] = fan["stall_limit_m3_s"] * s
    q = np.union1d(np.linspace(0.0, q_max, n_points), [] if q_op is None else [q_op])
    out["system_curve"] = _finite_xy(q, system_curves(problem, [params], q[None, :])[0])
    return out


def drawing_scale(records: Sequence[dict[str, Any]], target_px: float = 320.0,
                  max_px_per_mm: float = 4.0) -> float:
    """One drawing scale [px/mm] for every design of a report, so sizes compare at a glance:
    the largest base extent (width or length) draws ``target_px`` long."""
    extent = 0.0
    for r in records:
        p = r["params"]
        extent = max(extent, float(p.get("width_mm") or 0), float(p.get("length_mm") or 0))
    return max_px_per_mm if extent <= 0 else min(max_px_per_mm, target_px / extent)


def _dim(x1, y1, x2, y2, text, tx, ty, anchor="middle") -> list[dict[str, Any]]:
    return [{"kind": "dim", "x1": x1, "y1": y1, "x2": x2, "y2": y2},
            {"kind": "text", "x": tx, "y": ty, "text": text, "anchor": anchor, "cls": "dimtext"}]


def sink_drawing(params: dict[str, Any], devices: Sequence[dict[str, Any]] = (),
                 scale: float = 2.0) -> dict[str, Any]:
    """To-scale front view (looking along the flow) and plan view (from the fin side, inlet at
    the bottom) of a plate-fin sink, as shapes in millimetres.

    Parameters
    ----------
    params : dict
        ``width_mm``, ``length_mm``, ``fin_height_mm``, ``fin_thickness_mm``, ``n_fins``,
        ``base_thickness_mm``.
    devices : sequence of dict
        ``name``, ``center_x_mm`` (across the flow from the left edge), ``center_y_mm`` (along
        the flow from the inlet edge), ``size_x_mm``, ``size_y_mm``.
    scale : float
        Drawing scale [px/mm]: the SVG's width/height attributes are the view box times it.

    Returns
    -------
    dict
        ``front`` and ``plan``: ``view_box`` [x, y, w, h] in mm, ``width_px``, ``height_px``,
        ``font_mm`` and ``shapes`` (``rect``, ``line``, ``dim``, ``arrow``, ``text``).
    """
    W = float(params["width_mm"])
    L = float(params["length_mm"])
    H = float(params["fin_height_mm"])
    t = float(params["fin_thickness_mm"])
    N = int(round(float(params["n_fins"])))
    tb = float(params["base_thickness_mm"])
    gap = (W - N * t) / max(N - 1, 1)
    pitch = t + gap
    px = 1.0 / scale  # one pixel in mm
    font = 11 * px

    def view(x0, y0, x1, y1, shapes):
        return {"view_box": [x0, y0, x1 - x0, y1 - y0], "width_px": (x1 - x0) * scale,
                "height_px": (y1 - y0) * scale, "font_mm": font, "scale_px_per_mm": scale,
                "shapes": shapes}

    # Front view: y downwards, fin tips at y = 0, base underside at y = H + tb.
    front: list[dict[str, Any]] = [
        {"kind": "text", "x": W / 2, "y": -10 * px,
         "text": f"{N} fins, t {t:.3g} mm, gap {gap:.3g} mm", "anchor": "middle",
         "cls": "note"},
        {"kind": "rect", "x": 0, "y": H, "w": W, "h": tb, "cls": "metal"},
    ]
    for i in range(N):
        front.append({"kind": "rect", "x": i * pitch, "y": 0, "w": t, "h": H, "cls": "metal"})
    yb = H + tb
    front += _dim(0, yb + 14 * px, W, yb + 14 * px, f"W {W:.4g} mm", W / 2, yb + 28 * px)
    xr = W + 12 * px
    front += _dim(xr, 0, xr, H, f"H {H:.3g} mm", xr + 6 * px, H / 2 + 4 * px, "start")
    front += _dim(xr, H, xr, yb, f"base {tb:.3g} mm", xr + 6 * px, H + tb / 2 + 4 * px, "start")
    front_view = view(-6 * px, -24 * px, W + 100 * px, yb + 36 * px, front)

    # Plan view: x across the flow, inlet edge at the bottom (y_svg = L - y_along).
    plan: list[dict[str, Any]] = [{"kind": "rect", "x": 0, "y": 0, "w": W, "h": L, "cls": "base"}]
    for i in range(N):
        plan.append({"kind": "rect", "x": i * pitch, "y": 0, "w": t, "h": L, "cls": "fin"})
    for d in devices:
        x = float(d["center_x_mm"]) - float(d["size_x_mm"]) / 2
        y = L - (float(d["center_y_mm"]) + float(d["size_y_mm"]) / 2)
        plan.append({"kind": "rect", "x": x, "y": y, "w": float(d["size_x_mm"]),
                     "h": float(d["size_y_mm"]), "cls": "device"})
        plan.append({"kind": "text", "x": float(d["center_x_mm"]),
                     "y": L - float(d["center_y_mm"]) + 4 * px, "text": str(d["name"]),
                     "anchor": "middle", "cls": "devtext"})
    xa = -22 * px
    plan.append({"kind": "arrow", "x1": xa, "y1": L, "x2": xa, "y2": max(L - 60 * px, 0.0)})
    plan.append({"kind": "text", "x": xa, "y": L + 14 * px, "text": "air in", "anchor": "middle",
                 "cls": "note"})
    plan.append({"kind": "text", "x": W / 2, "y": -8 * px,
                 "text": "outlet edge (devices under the base, dashed)", "anchor": "middle",
                 "cls": "note"})
    plan += _dim(0, L + 14 * px, W, L + 14 * px, f"W {W:.4g} mm", W / 2, L + 28 * px)
    xr = W + 12 * px
    plan += _dim(xr, 0, xr, L, f"L {L:.4g} mm", xr + 6 * px, L / 2 + 4 * px, "start")
    plan_view = view(-44 * px, -22 * px, W + 90 * px, L + 36 * px, plan)
    return {"front": front_view, "plan": plan_view, "gap_mm": gap, "pitch_mm": pitch}


#: Key numbers of a Pareto design that the points lack (the page reads the others there).
DESIGN_KEYS = ("air_outlet_C", "fin_aspect", "channel_velocity_m_s",
               "heat_transfer_coefficient_W_m2K", "fin_efficiency", "fan_path_loss_Pa")
#: Per-device values of a Pareto design (``mounting``: index into the device's mountings in
#: the study inputs, or the name when it is not one of them; then the junction, the margin and
#: the temperature breakdown [K] from the inlet air to the junction).
DEVICE_COLUMNS = ("mounting", "junction_C", "margin_K", "air_heating_upstream",
                  "sink_and_spreading", "mounting_stack", "junction_to_case")


def _common_prefix(texts: Sequence[str]) -> str:
    """The longest common prefix of ``texts`` that ends at a space (or is empty)."""
    if len(texts) < 2:
        return ""
    prefix = os.path.commonprefix(list(texts))
    return prefix[:prefix.rfind(" ") + 1]


#: Columns of a design's uncertainty band per device (sinkopt.model.uncertainty.Band.record).
BAND_COLUMNS = ("nominal_C", "median_C", "p95_C", "p99_C", "pessimistic_C")


def uncertainty_data(problem: Problem) -> dict[str, Any]:
    """The uncertain inputs, the margin basis and the calibration, for the page."""
    spec = problem.uncertainty
    labels = {"heat_transfer": "heat transfer coefficient", "pressure_drop": "sink pressure drop",
              "fan_flow": "fan flow at a given pressure", "power": "device losses",
              "r_jc": "junction-to-case resistance", "interface": "mounting stack",
              "ambient": "ambient allowance"}
    rows = []
    for k, u in spec.inputs().items():
        size = (f"{u.size:g} K" if k == "ambient" else f"{100 * u.size:g} %")
        kind = "1σ, normal clipped at ±2σ" if u.distribution == "normal" else "half-width, uniform"
        rows.append([labels[k], f"{size} ({kind})", u.source])
    rows.append(["correlation between the devices' losses", f"{spec.power_correlation:g}", ""])
    out = {"inputs": rows, "samples": spec.samples, "seed": spec.seed,
           "margin_basis": problem.limits.margin_basis, "calibration": None}
    c = problem.calibration
    if c is not None:
        pts = list(c.points)
        def col(key):
            return [_num(p.get(key)) for p in pts]
        out["calibration"] = {
            "file": c.path.name, "measured_file": c.info.get("measured_file"),
            "multipliers": [[k, v, *(c.intervals.get(k) or (None, None))]
                            for k, v in c.multipliers.items()],
            "flow_m3_s": col("flow_m3_s"),
            "pressure": [col("pressure_drop_Pa"), col("model_before_Pa"), col("model_after_Pa")],
            "thermal": [col("thermal_resistance_K_per_W"), col("model_before_K_per_W"),
                        col("model_after_K_per_W")],
        }
    return out


def design_data(problem: Problem, records: Sequence[dict[str, Any]],
                fans: dict[str, dict[str, Any]] | None = None, scale: float | None = None,
                n_system: int = 41) -> dict[str, Any]:
    """What the report's design panel needs of each Pareto design beyond its entry in the
    points (geometry, fan, objectives and results are there): device temperatures, warnings,
    the spreading check, the command that reproduces it and its system curve.

    Parameters
    ----------
    problem : Problem
    records : sequence of dict
        The Pareto designs' records (:meth:`sinkopt.results.collect.Results.pareto_records`).
    fans : dict, optional
        :func:`fan_curves` of the problem (computed when not given).
    scale : float, optional
        Drawing scale [px/mm]; default :func:`drawing_scale` of the records.
    n_system : int
        Points of each system curve, evenly spaced from 0 to ``system_q_max_m3_s``.

    Returns
    -------
    dict
        ``trials`` (table order), ``ambient_C``, ``air_density_kg_m3``,
        ``drawing_scale_px_per_mm``, ``key_columns`` (:data:`DESIGN_KEYS`),
        ``device_columns`` (:data:`DEVICE_COLUMNS`), ``spreading_models`` ([search model,
        reported model] pairs), ``warnings`` (each distinct text once), ``command_prefix``
        and ``by_trial``: trial (str) -> ``feasible``, ``speed_ratio``, ``key`` (values of
        ``key_columns``), ``devices`` (a row of ``device_columns`` per device of the study, in
        its order), ``warnings`` (indices), ``spreading`` ([model index, junction differences
        exact − search model [K] per device] or None), ``command`` (after the prefix),
        ``system_q_max_m3_s`` and ``system_Pa``.
    """
    rho = float(inlet_air(problem.conditions).density)
    fans = fan_curves(problem, air_density_kg_m3=rho) if fans is None else fans
    params_list = [full_params(problem, r["params"]) for r in records]
    speeds, extents = [], []
    for r, p in zip(records, params_list):
        s, q_max = _speed_and_extent(problem, p, _num(r.get("speed_ratio")),
                                     _num(r.get("airflow_m3_s")), fans)
        speeds.append(s)
        extents.append(q_max)
    grid = np.linspace(0.0, 1.0, n_system)
    system = system_curves(problem, params_list, np.outer(extents, grid))
    commands = [str(r.get("evaluate_command") or "") for r in records]
    prefix = _common_prefix(commands)
    mountings = {d.name: [st.name for st in d.stacks] for d in problem.devices}
    warnings: list[str] = []
    warning_index: dict[str, int] = {}
    models: list[list[Any]] = []
    by_trial = {}
    for k, r in enumerate(records):
        devices = {d.get("name"): d for d in r.get("devices", [])}
        rows = []
        for dev in problem.devices:
            d = devices.get(dev.name)
            if d is None:
                rows.append(None)
                continue
            mount = d.get("mounting")
            b = d.get("breakdown_K") or {}
            rows.append([mountings[dev.name].index(mount) if mount in mountings[dev.name]
                         else mount, _num(d.get("junction_C")), _num(d.get("margin_K")),
                         *(_num(b.get(c)) for c in DEVICE_COLUMNS[3:])])
        idx = []
        for w in r.get("warnings", []):
            w = str(w)
            if w not in warning_index:
                warning_index[w] = len(warnings)
                warnings.append(w)
            idx.append(warning_index[w])
        check = r.get("spreading_check") or None
        spreading = None
        if check:
            pair = [check.get("search_model"), r.get("spreading")]
            if pair not in models:
                models.append(pair)
            diffs = check.get("junction_difference_K") or {}
            spreading = [models.index(pair), [_num(diffs.get(d.name)) for d in problem.devices]]
        band = r.get("uncertainty")
        band_data = None
        if band:
            band_data = {
                "p_exceed": _num(band.get("p_exceed")),
                "corner_margin_K": _num(band.get("pessimistic_margin_K")),
                "p95_margin_K": _num(band.get("p95_margin_K")),
                # per device of the study: nominal, median, P95, P99, corner [°C]
                "devices": [[_num((band["devices"].get(dev.name) or {}).get(c))
                             for c in BAND_COLUMNS] for dev in problem.devices],
                "critical": band.get("critical_device"),
                "sensitivity": [[k, _num(v)] for k, v in list(
                    (band.get("sensitivity") or {}).items())[:8] if v and v > 0.005],
            }
        still = r.get("fans_stopped")
        still_data = None
        if still:
            tr = still["fan_stop_trace"]
            keep = slice(None, None, 3)  # every third step of the event: the curve's shape
            still_data = {
                "load_fraction": still["load_fraction"],
                "steady_C": [_num(still["steady_junction_C"].get(d.name)) for d in problem.devices],
                "largest_load": _num(still["largest_load_fraction"]),
                "time_to_limit_s": _num(still["time_to_limit_after_fan_stop_s"]),
                "first": still["first_device_at_limit"],
                "t_s": [_num(v) for v in tr["time_s"][keep]],
                "tj_C": [[_num(v) for v in tr["junction_C"][d.name][keep]]
                         for d in problem.devices],
            }
        prof = r.get("load_profile")
        profile_data = None
        if prof:
            tr = prof.get("trace") or {"time_s": [], "junction_C": {}}
            step = max(1, len(tr["time_s"]) // 250)  # the curve's shape, not every sample
            profile_data = {
                "start": prof["start"],
                "peak_C": [_num(prof["peak_junction_C"].get(d.name)) for d in problem.devices],
                "peak_t_s": [_num(prof["peak_time_s"].get(d.name)) for d in problem.devices],
                "t_s": [_num(v) for v in tr["time_s"][::step]],
                "tj_C": [[_num(v) for v in (tr["junction_C"].get(d.name) or [])[::step]]
                         for d in problem.devices],
            }
        failed = r.get("failed_fan")
        failed_data = None
        if failed:
            failed_data = {"applies": bool(failed["applies"]), "note": failed.get("note"),
                           "airflow_m3_s": _num(failed.get("airflow_m3_s")),
                           "tj_C": [_num((failed.get("junction_C") or {}).get(d.name))
                                    for d in problem.devices]}
        by_trial[str(r["trial"])] = {
            "failed": failed_data,
            "band": band_data,
            "profile": profile_data,
            "still": still_data,
            "feasible": bool(r.get("feasible")),
            "speed_ratio": _num(speeds[k]),
            "key": [_num(r.get(c)) for c in DESIGN_KEYS],
            "devices": rows,
            "warnings": idx,
            "spreading": spreading,
            "command": commands[k][len(prefix):],
            "system_q_max_m3_s": extents[k],
            "system_Pa": [_num(v) for v in system[k]],
        }
    return {
        "trials": [int(r["trial"]) for r in records],
        "ambient_C": problem.conditions.ambient_C,
        "air_density_kg_m3": rho,
        "drawing_scale_px_per_mm": drawing_scale(records) if scale is None else scale,
        "key_columns": list(DESIGN_KEYS),
        "device_columns": list(DEVICE_COLUMNS),
        "spreading_models": models,
        "warnings": warnings,
        "command_prefix": prefix,
        "by_trial": by_trial,
    }


def _limit_rows(problem: Problem) -> list[list[str]]:
    lim, proc = problem.limits, problem.process
    rows = [["minimum junction margin", f"{lim.min_junction_margin_K:g} K"],
            ["fan stall allowed", "yes" if lim.allow_stall else "no"]]
    optional = [("maximum air temperature rise", lim.max_air_rise_K, 1, "K"),
                ("maximum fan noise", lim.max_noise_dBA, 1, "dB(A)"),
                ("maximum width", lim.max_width_m, 1e3, "mm"),
                ("maximum length", lim.max_length_m, 1e3, "mm"),
                ("maximum height (fins + base)", lim.max_height_m, 1e3, "mm"),
                ("maximum sink mass", lim.max_mass_kg, 1, "kg"),
                ("maximum fan power", lim.max_fan_power_W, 1, "W"),
                ("maximum system pressure drop", lim.max_pressure_drop_Pa, 1, "Pa")]
    for label, value, factor, unit in optional:
        if value is not None:
            rows.append([label, f"{value * factor:g} {unit}"])
    rows += [[f"process ({proc.name}): minimum fin thickness",
              f"{proc.min_fin_thickness_m * 1e3:g} mm"],
             [f"process ({proc.name}): minimum fin gap", f"{proc.min_gap_m * 1e3:g} mm"],
             [f"process ({proc.name}): maximum fin height / gap", f"{proc.max_fin_aspect:g}"],
             [f"process ({proc.name}): minimum base thickness",
              f"{proc.min_base_thickness_m * 1e3:g} mm"]]
    if problem.air.failed_fan_check:
        rows.append(["one fan stopped", "every junction keeps its margin"])
    basis = {"nominal": "nominal (the model's central estimate)",
             "pessimistic": "pessimistic corner: every uncertain input at its hot-side bound",
             "p95": "5th percentile under the stated uncertainty (first order)"}
    rows.append(["junction margin basis", basis[lim.margin_basis]])
    return rows


def _variable_text(v) -> str:
    if v.is_fixed:
        return f"fixed at {v.fixed}"
    if v.kind == "categorical":
        return ", ".join(str(c) for c in v.choices)
    step = f" step {v.step:g}" if v.step else ""
    return f"{v.low:g} to {v.high:g}{step}"


def _air_rows(problem: Problem) -> list[list[str]]:
    a = problem.air
    rows = [["ducted (shroud over the fin tips)", "yes" if a.ducted else
             "no (lossless-bypass model, lower confidence)"]]
    if a.duct_area_m2:
        rows.append(["duct cross-section", f"{a.duct_area_m2 * 1e6:g} mm²"])
    if a.fixed_flow_m3_s is not None:
        rows.append(["given airflow", f"{a.fixed_flow_m3_s * 3600:.4g} m³/h"])
    if a.approach_velocity_m_s is not None:
        rows.append(["given approach velocity", f"{a.approach_velocity_m_s:g} m/s"])
    if a.extra_loss_coefficient and a.extra_loss_area_m2:
        rows.append(["extra loss", f"K = {a.extra_loss_coefficient:g} at "
                                   f"{a.extra_loss_area_m2 * 1e6:g} mm²"])
    if a.extra_impedance is not None:
        rows.append(["extra impedance curve", f"{len(a.extra_impedance[0])} points"])
    for f in a.fans:
        speed = (f"{f.speed_min:g}" if f.speed_min == f.speed_max
                 else f"{f.speed_min:g} to {f.speed_max:g}")
        counts = ", ".join(str(c) for c in f.counts)
        rows.append([f"fan {f.key}", f"{f.curve.name or f.key}; count {counts} "
                                     f"({f.arrangement}); speed {speed} of rated; "
                                     f"file {Path(f.path).name}"])
    return rows


def study_inputs_data(problem: Problem, info: dict[str, Any] | None) -> dict[str, Any]:
    """The study's inputs and the run's record (versions, seed, checksums) for the page."""
    info = info or {}
    c = problem.conditions
    devices = []
    for d in problem.devices:
        devices.append({"name": d.name, "power_W": d.power, "tj_max_C": d.tj_max,
                        "r_jc_K_per_W": d.r_jc, "center_x_mm": d.center_x * 1e3,
                        "center_y_mm": d.center_y * 1e3, "size_x_mm": d.size_x * 1e3,
                        "size_y_mm": d.size_y * 1e3,
                        "mountings": [s.name for s in d.stacks],
                        "stack_K_per_W": [s.resistance() for s in d.stacks]})
    versions = dict(info.get("versions") or {})
    run = {
        "sinkopt": info.get("sinkopt"), "python": info.get("python"),
        "platform": info.get("platform"), "versions": versions, "seed": info.get("seed"),
        "sampler": info.get("sampler"), "n_trials": info.get("n_trials"),
        "trial_states": info.get("trial_states"), "storage": info.get("storage"),
        "finished_utc": info.get("finished_utc"), "elapsed_s": info.get("elapsed_s"),
        "command": " ".join(str(a) for a in info.get("command") or []),
        "report_rebuilt_utc": info.get("report_rebuilt_utc"),
        "warnings": list(info.get("warnings") or []),
        "model_options": dict(info.get("model_options") or problem.options.__dict__),
    }
    return {
        "name": problem.name,
        "description": problem.description,
        "source": str(problem.source) if problem.source else None,
        "ambient_C": c.ambient_C,
        "altitude_m": c.altitude_m,
        "material": {"name": problem.material_name, "conductivity_W_mK": problem.conductivity,
                     "density_kg_m3": problem.density},
        "devices": devices,
        "limits": _limit_rows(problem),
        "air": _air_rows(problem),
        "objectives": objective_axes(problem),
        "variables": [[v.name, _variable_text(v)] for v in problem.variables],
        "run": run,
        "inputs": [[str(k), str(v)] for k, v in (info.get("inputs") or {}).items()],
    }


def report_data(results: Results, info: dict[str, Any] | None = None) -> dict[str, Any]:
    """All of the report's data, as the page embeds it (each number once; see the module's
    notes): ``pareto`` (:func:`pareto_plot_data`: every trial's values), ``table`` (the Pareto
    table's ``columns``: its rows are the Pareto designs' points), ``parcoords`` (the
    ``dimensions`` of :func:`parcoords_data` without their values), ``fans``
    (:func:`fan_curves`), ``designs`` (:func:`design_data`), ``inputs``
    (:func:`study_inputs_data`)."""
    from sinkopt.results.drawing import DRAWINGS_DIR, drawing_trials

    problem = results.problem
    records = results.pareto_records()
    pareto = pareto_plot_data(results)
    fans = fan_curves(problem)
    parcoords = parcoords_data(results, pareto["points"])
    return {
        "schema_version": 2,
        "study": problem.name,
        "summary": {"trials": len(results.trial_numbers), "states": dict(results.states),
                    "pareto": len(records), **pareto["counts"],
                    "not_plotted": pareto["not_plotted"]},
        "pareto": pareto,
        "table": {"columns": table_columns(problem, records)},
        "shortlist": results.short_list(),
        # designs whose SVG/DXF drawing and design sheet sit in drawings/ beside the page
        "drawings": {"folder": DRAWINGS_DIR, "trials": drawing_trials(results)},
        "parcoords": {"dimensions": [{k: v for k, v in d.items() if k not in ("values",
                                                                               "tickvals")}
                                     for d in parcoords["dimensions"]]},
        "fans": fans,
        "designs": design_data(problem, records, fans),
        "inputs": study_inputs_data(problem, info),
        "uncertainty": uncertainty_data(problem),
    }

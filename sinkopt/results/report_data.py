"""Data of the HTML report: plain, JSON-ready dicts and lists built from a study's results.

Nothing here draws or imports plotly; :mod:`sinkopt.results.report` turns these into figures and the page.
Quantities stay in SI (flows in m^3/s) unless the key names another unit (``_mm``, ``_cm3``);
values that do not exist (no operating point, a geometry that cannot exist) are ``None``.

Sources of the numbers: the Pareto designs and every design the results reviewed with the exact
spreading series carry the exact values (as in ``pareto.csv``); the other trials carry the search
model's values (as in ``trials.csv``).
"""
from __future__ import annotations

import math
from pathlib import Path
from typing import Any, Sequence

import numpy as np

from sinkopt.model.design import SinkGeometry
from sinkopt.fans import FanArray
from sinkopt.model.known_flow import inlet_air
from sinkopt.model.problem import GEOMETRY_VARIABLES, OBJECTIVES, Problem
from sinkopt.results.collect import Results
from sinkopt.model.system import PENALTY, evaluate_params, fan_choices, full_params, system_pressure_drop

__all__ = [
    "OBJECTIVE_LABELS",
    "RESULT_LABELS",
    "objective_axes",
    "trial_points",
    "pareto_plot_data",
    "pareto_table_data",
    "parcoords_data",
    "fan_system_curves",
    "drawing_scale",
    "sink_drawing",
    "design_panel_data",
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


def pareto_table_data(results: Results, records: Sequence[dict[str, Any]] | None = None
                      ) -> dict[str, Any]:
    """The Pareto designs as table columns and rows (exact series, as in ``pareto.csv``)."""
    records = results.pareto_records() if records is None else records
    problem = results.problem
    columns = [{"key": "trial", "label": "trial", "unit": "", "kind": "int"}]
    if any("fan" in r["params"] for r in records):
        columns.append({"key": "fan", "label": "fan", "unit": "", "kind": "text"})
    for name in GEOMETRY_VARIABLES:
        label, unit = VARIABLE_LABELS[name]
        columns.append({"key": name, "label": label, "unit": unit,
                        "kind": "int" if name == "n_fins" else "number"})
    if any("fan_speed" in r["params"] for r in records) and problem.air.uses_fans:
        columns.append({"key": "speed_ratio", "label": "fan speed", "unit": "of rated",
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
            columns.append({"key": column, "label": label, "unit": unit, "kind": "number"})
    columns.append({"key": "n_warnings", "label": "warnings", "unit": "", "kind": "int"})
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
    are 0 infeasible, 1 feasible dominated, 2 Pareto.
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
        dims.append({"key": name, "label": label, "values": [code[values[i]] for i in keep],
                     "tickvals": list(range(len(labels))), "ticktext": labels})
    for name, values in points["numeric"].items():
        if name not in _variable_names(results.problem):
            continue
        kept = [values[i] for i in keep]
        if len(set(kept)) < 2:
            continue
        label, unit = _label(name)
        dims.append({"key": name, "label": label, "unit": unit, "values": kept})
    for o in objective_axes(results.problem):
        dims.append({"key": o["name"], "label": o["label"], "unit": o["unit"],
                     "values": [points["objectives"][o["name"]][i] for i in keep]})
    return {"trial": [points["trial"][i] for i in keep],
            "status": [_STATUS.index(points["status"][i]) for i in keep],
            "dimensions": dims}


def _variable_names(problem: Problem) -> set[str]:
    return {v.name for v in problem.variables}


def _geometry(params: dict[str, Any]) -> SinkGeometry:
    values = {name: float(params[name]) * factor
              for name, (_, factor) in GEOMETRY_VARIABLES.items()}
    return SinkGeometry.of(width=values["width_mm"], length=values["length_mm"],
                           fin_height=values["fin_height_mm"],
                           fin_thickness=values["fin_thickness_mm"],
                           n_fins=round(values["n_fins"]),
                           base_thickness=values["base_thickness_mm"])


def _finite_xy(q, p) -> dict[str, list[float]]:
    q = np.asarray(q, dtype=float)
    p = np.asarray(p, dtype=float)
    ok = np.isfinite(q) & np.isfinite(p) & (q >= 0)
    return {"flow_m3_s": q[ok].tolist(), "pressure_Pa": p[ok].tolist()}


def fan_system_curves(problem: Problem, params: dict[str, Any],
                      operating: dict[str, Any] | None = None,
                      n_points: int = 80) -> dict[str, Any]:
    """Fan-array curve and system curve of one design at the site air density.

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
    air = inlet_air(problem.conditions)
    rho = float(air.density)
    q_op = _num(operating.get("airflow_m3_s"))
    dp_op = _num(operating.get("pressure_drop_Pa"))
    out: dict[str, Any] = {"fan": None, "count": None, "arrangement": None,
                           "speed_ratio": _num(operating.get("speed_ratio")),
                           "air_density_kg_m3": rho, "fan_curve": None, "fan_curve_rated": None,
                           "stall_limit_m3_s": None,
                           "operating_point": (None if q_op is None or dp_op is None
                                               else {"flow_m3_s": q_op, "pressure_Pa": dp_op})}
    q_max = 0.0
    if problem.air.uses_fans and params.get("fan") in fan_choices(problem):
        option, count = fan_choices(problem)[params["fan"]]
        s = out["speed_ratio"]
        if s is None:
            s = option.speed_min + float(params.get("fan_speed", 0.0)) * (option.speed_max
                                                                         - option.speed_min)
            out["speed_ratio"] = s
        arr = FanArray(option.curve, count=count, arrangement=option.arrangement)
        st = arr.sample(n_points, s, rho)
        out.update(fan=params["fan"], name=option.curve.name, count=count,
                   arrangement=option.arrangement, fan_curve=_finite_xy(st.flow_m3_s,
                                                                        st.pressure_Pa))
        if out["fan_curve"]["flow_m3_s"]:
            q_max = max(out["fan_curve"]["flow_m3_s"])
        if abs(option.speed_max - s) > 1e-9:
            rated = arr.sample(n_points, option.speed_max, rho)
            out["fan_curve_rated"] = _finite_xy(rated.flow_m3_s, rated.pressure_Pa)
            q_max = max([q_max, *out["fan_curve_rated"]["flow_m3_s"]])
        if option.curve.has_stall_region:
            limit = arr.evaluate(option.curve.q_stall_limit_m3_s * s, s, rho).flow_m3_s
            out["stall_limit_m3_s"] = _num(limit)
    if q_op is not None:
        q_max = max(q_max, 1.25 * q_op)
    if not q_max > 0:
        q_max = 1e-3
    q = np.union1d(np.linspace(0.0, q_max, n_points), [] if q_op is None else [q_op])
    g = _geometry(params).take(np.zeros(q.size, dtype=int))
    with np.errstate(invalid="ignore", divide="ignore"):
        dp, _ = system_pressure_drop(problem, g, q, air, problem.options)
    out["system_curve"] = _finite_xy(q, dp)
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


def _device_layout(problem: Problem) -> list[dict[str, Any]]:
    return [{"name": d.name, "center_x_mm": d.center_x * 1e3, "center_y_mm": d.center_y * 1e3,
             "size_x_mm": d.size_x * 1e3, "size_y_mm": d.size_y * 1e3} for d in problem.devices]


_KEY_NUMBERS = ("volume_cm3", "mass_kg", "fan_power_W", "noise_dBA", "airflow_m3_s",
                "airflow_fins_m3_s", "pressure_drop_Pa", "sink_pressure_drop_Pa",
                "sink_resistance_K_per_W", "air_rise_K", "air_outlet_C", "worst_margin_K",
                "speed_ratio", "fin_gap_mm", "fin_aspect", "channel_velocity_m_s", "reynolds_dh",
                "heat_transfer_coefficient_W_m2K", "fin_efficiency", "air_density_kg_m3")


def design_panel_data(problem: Problem, record: dict[str, Any], scale: float = 2.0
                      ) -> dict[str, Any]:
    """Everything the design panel shows about one design record
    (:func:`sinkopt.results.design_record`): key numbers, drawings, fan and system curves,
    per-device temperatures and breakdowns, warnings, the spreading check and the command."""
    check = record.get("spreading_check") or {}
    diffs = {k: _num(v) for k, v in (check.get("junction_difference_K") or {}).items()}
    finite = [abs(v) for v in diffs.values() if v is not None]
    return {
        "trial": record.get("trial"),
        "fan": record.get("fan"),
        "feasible": bool(record.get("feasible")),
        "params": record["params"],
        "key": {k: _num(record.get(k)) for k in _KEY_NUMBERS},
        "ambient_C": record.get("ambient_C"),
        "objectives": record.get("objectives", {}),
        "devices": record.get("devices", []),
        "warnings": list(record.get("warnings", [])),
        "spreading_check": {"search_model": check.get("search_model"),
                            "reported_model": record.get("spreading"),
                            "junction_difference_K": diffs,
                            "max_abs_K": max(finite) if finite else None} if check else None,
        "evaluate_command": record.get("evaluate_command", ""),
        "drawing": sink_drawing(record["params"], _device_layout(problem), scale),
        "curves": fan_system_curves(problem, record["params"], record),
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
    """All of the report's data (the page embeds it as JSON, figures aside)."""
    records = results.pareto_records()
    scale = drawing_scale(records)
    pareto = pareto_plot_data(results)
    return {
        "schema_version": 1,
        "study": results.problem.name,
        "summary": {"trials": len(results.trial_numbers), "states": dict(results.states),
                    "pareto": len(records), **pareto["counts"],
                    "not_plotted": pareto["not_plotted"]},
        "pareto": pareto,
        "table": pareto_table_data(results, records),
        "parcoords": parcoords_data(results, pareto["points"]),
        "designs": {str(r["trial"]): design_panel_data(results.problem, r, scale)
                    for r in records},
        "inputs": study_inputs_data(results.problem, info),
    }

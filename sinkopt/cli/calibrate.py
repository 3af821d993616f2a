"""``sinkopt calibrate STUDY.toml MEASURED.csv``: fit the model to a prototype's measurements.

Reads the measurements (sinkopt/study/measured_file.py), fits multipliers on the heat transfer
coefficient, the channel friction and the entrance + exit losses (sinkopt/model/calibration.py),
prints them with their 95 % intervals and the residuals before and after, and writes a
calibration file that a study references with ``[model] calibration = "FILE"``. A fit the data
cannot support is refused (exit 2) and nothing is written. Theory:
docs/theory.md#calibration-from-measurements.
"""
from __future__ import annotations

import argparse
import datetime
import hashlib
from pathlib import Path

from sinkopt.errors import InputError

__all__ = ["register", "cmd_calibrate"]


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "calibrate", help="fit the model to a prototype's measured pressure drop / resistance",
        description="Fit multipliers on the heat transfer coefficient, the channel friction and "
                    "the entrance + exit losses to a prototype's measurements (a CSV with units "
                    "in the column names), print them with 95 %% intervals, and write a "
                    "calibration file for [model] calibration = \"FILE\".",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="example:\n  sinkopt calibrate study.toml proto.csv --out proto.calibration.toml\n"
               "then in study.toml:\n  [model]\n  calibration = \"proto.calibration.toml\"")
    p.add_argument("study", type=Path, metavar="STUDY.toml", help="the study file")
    p.add_argument("measured", type=Path, metavar="MEASURED.csv", help="the measurements")
    p.add_argument("--out", type=Path, default=None,
                   help="calibration file to write (default: MEASURED.calibration.toml beside "
                        "the measurements)")
    p.add_argument("--pressure-fit", choices=("split", "total"), default="split",
                   help="pressure-drop multipliers: 'split' = one on friction and one on the "
                        "entrance + exit losses (default), 'total' = one on both")
    p.set_defaults(func=cmd_calibrate)


def _design(problem, measured) -> dict[str, float]:
    """The prototype's geometry variables: the measurements' header, else the study's fixed
    values; an InputError names what is missing."""
    from sinkopt.study.measured_file import GEOMETRY_KEYS

    values, missing = {}, []
    for key in GEOMETRY_KEYS:
        if key in measured.meta:
            values[key] = measured.meta[key]
            continue
        v = problem.variable(key)
        if v.is_fixed:
            values[key] = float(v.fixed)
        else:
            missing.append(key)
    if missing:
        raise InputError("the prototype's geometry is incomplete: add "
                         + ", ".join(f"'# {k}: ...'" for k in missing)
                         + " (the study leaves them free)", measured.source)
    return values


def cmd_calibrate(args) -> int:
    import numpy as np

    from sinkopt.model.calibration import CalibrationRefused, fit_calibration
    from sinkopt.model.design import ModelOptions, SinkGeometry, check_geometry
    from sinkopt.physics.air import air_properties
    from sinkopt.study.calibration_file import calibration_toml
    from sinkopt.study.measured_file import read_measured_file
    from sinkopt.study.reader import load_study

    problem = load_study(args.study)
    measured = read_measured_file(args.measured)
    d = _design(problem, measured)
    g = SinkGeometry.of(width=d["width_mm"] * 1e-3, length=d["length_mm"] * 1e-3,
                        fin_height=d["fin_height_mm"] * 1e-3,
                        fin_thickness=d["fin_thickness_mm"] * 1e-3, n_fins=d["n_fins"],
                        base_thickness=d["base_thickness_mm"] * 1e-3)
    check_geometry(g, label=f"{measured.source}: prototype")
    conductivity = measured.meta.get("conductivity_W_per_mK", problem.conductivity)
    air = air_properties(measured.inlet_temperature_C + 273.15, measured.air_pressure_Pa)
    w, h, t, n = (float(g.width[0]), float(g.fin_height[0]), float(g.fin_thickness[0]),
                  float(g.n_fins[0]))
    if measured.flow_kind == "flow":
        flow = measured.flow_values
        rule = "flow through the sink, as measured"
    elif measured.flow_kind == "channel_velocity":
        flow = measured.flow_values * (w - n * t) * h  # (N − 1) channels of b × H
        rule = "mean velocity between the fins × (N − 1) b H"
    else:
        if not problem.air.ducted:
            raise InputError("approach_velocity_m_s needs a ducted test; give flow_<unit> for a "
                             "prototype measured with bypass", measured.source)
        face = w * (h + (float(g.base_thickness[0]) if problem.air.base_in_airstream else 0.0))
        flow = measured.flow_values * face
        rule = ("approach velocity × the sink's whole face W (H + t_b)"
                if problem.air.base_in_airstream else "approach velocity × the fin region W H")
    base = problem.options
    if problem.calibration is not None:  # calibrate the published correlations, not a calibration
        base = ModelOptions(**{**base.__dict__, "heat_transfer_multiplier": 1.0,
                               "friction_multiplier": 1.0, "loss_multiplier": 1.0})
    try:
        fit = fit_calibration(g, conductivity, air, base, measured.measurements(flow),
                              args.pressure_fit)
    except CalibrationRefused as exc:
        raise InputError(f"calibration refused: {exc}", measured.source) from None

    out = args.out or measured_path_default(args.measured)
    if out.is_dir():
        raise InputError(f"{out} is a folder; give a file name", field="--out")
    rms = {}
    for kind, meas, before, after in (
            ("pressure drop", measured.pressure_drop, fit.pressure_before, fit.pressure_after),
            ("thermal resistance", measured.thermal_resistance, fit.thermal_before,
             fit.thermal_after)):
        keep = np.isfinite(meas)
        if keep.any():
            rms[kind] = tuple(float(np.sqrt(np.mean((m[keep] / meas[keep] - 1) ** 2)) * 100)
                              for m in (before, after))
    points = []
    for i in range(len(flow)):
        p = {"line": measured.lines[i], "flow_m3_s": float(flow[i])}
        if np.isfinite(measured.pressure_drop[i]):
            p.update(pressure_drop_Pa=float(measured.pressure_drop[i]),
                     model_before_Pa=float(fit.pressure_before[i]),
                     model_after_Pa=float(fit.pressure_after[i]))
        if np.isfinite(measured.thermal_resistance[i]):
            p.update(thermal_resistance_K_per_W=float(measured.thermal_resistance[i]),
                     model_before_K_per_W=float(fit.thermal_before[i]),
                     model_after_K_per_W=float(fit.thermal_after[i]))
        points.append(p)
    info = {"measured_file": str(args.measured),
            "measured_sha256": hashlib.sha256(Path(args.measured).read_bytes()).hexdigest(),
            "study": str(args.study), "created_utc": datetime.datetime.now(
                datetime.timezone.utc).isoformat(timespec="seconds"),
            "flow_rule": rule, "pressure_fit": args.pressure_fit,
            "air_temperature_C": measured.inlet_temperature_C,
            "air_pressure_Pa": measured.air_pressure_Pa, "conductivity_W_per_mK": conductivity,
            "degrees_of_freedom": fit.dof,
            **{f"rms_error_{k.replace(' ', '_')}_before_pct": v[0] for k, v in rms.items()},
            **{f"rms_error_{k.replace(' ', '_')}_after_pct": v[1] for k, v in rms.items()},
            **{f"design_{k}": v for k, v in d.items()}}
    mult = {k: fit.multipliers[k] for k in fit.fitted}
    text = calibration_toml(mult, {k: fit.intervals[k] for k in fit.fitted}, info, points)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = out.with_name(out.name + ".part")
    tmp.write_text(text, encoding="utf-8")
    tmp.replace(out)  # never a half-written calibration file

    print(f"calibrated on {measured.source}: {len(flow)} points "
          f"(air {measured.inlet_temperature_C:g} °C, {measured.air_pressure_Pa:g} Pa; {rule})")
    for k in fit.fitted:
        lo, hi = fit.intervals[k]
        print(f"  {k} multiplier {fit.multipliers[k]:.4g}  (95 % interval {lo:.4g} … {hi:.4g})")
    for kind, (before, after) in rms.items():
        print(f"  {kind}: RMS error {before:.1f} % with the published correlations, "
              f"{after:.1f} % calibrated")
    print("  point  flow m³/h   measured   before   after")
    for p in points:
        for key, unit in (("pressure_drop_Pa", "Pa"), ("thermal_resistance_K_per_W", "K/W")):
            if key in p:
                m, b, a = p[key], p[f"model_before_{unit.replace('/', '_per_')}"], \
                    p[f"model_after_{unit.replace('/', '_per_')}"]
                print(f"  line {p['line']:<3} {p['flow_m3_s'] * 3600:9.4g}  {m:8.4g} {unit:<3} "
                      f"{b:8.4g} ({100 * (b / m - 1):+.1f} %)  {a:8.4g} ({100 * (a / m - 1):+.1f} %)")
    for w_ in fit.warnings:
        print(f"  warning: {w_}")
    print(f"wrote {out}\nuse it: [model] calibration = \"{out.name}\" in the study "
          "(path relative to the study's folder)")
    return 0


def measured_path_default(measured: Path) -> Path:
    return measured.with_name(measured.stem + ".calibration.toml")

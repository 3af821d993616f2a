"""``sinkopt check STUDY.toml`` and ``sinkopt init [DIR]``: set up and validate a study file.

``check`` reads the study (docs/study-file.md), reports every problem at once (exit 2) or prints
the resolved problem in SI. ``init`` writes a starter study and an invented example fan curve
that ``check`` accepts.
"""
from __future__ import annotations

import argparse
import sys
import warnings
from pathlib import Path

from sinkopt.errors import InputError

__all__ = ["register", "cmd_check", "cmd_init", "describe_problem", "STARTER_STUDY",
           "EXAMPLE_FAN"]


def register(subparsers) -> None:
    p = subparsers.add_parser(
        "check", help="validate a study file and print the resolved problem",
        description="Validate a study file, report every problem at once (exit 2), or print the "
                    "resolved problem in SI units (exit 0).",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="example:\n  sinkopt check studies/demo_inverter.toml")
    p.add_argument("study", metavar="STUDY.toml", help="the study file")
    p.set_defaults(func=cmd_check)
    p = subparsers.add_parser(
        "init", help="write a starter study.toml and an example fan curve",
        description="Write study.toml and fan_example.csv (an invented fan) into DIR; existing "
                    "files are never overwritten.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="example:\n  sinkopt init my_study && sinkopt check my_study/study.toml")
    p.add_argument("dir", metavar="DIR", nargs="?", default=".",
                   help="folder to write into, created if missing (default: .)")
    p.set_defaults(func=cmd_init)


# ---- check -------------------------------------------------------------------------------------
def _range(problem, name: str) -> tuple[float, float]:
    """(low, high) of a geometry variable in SI (its fixed value twice)."""
    v = next(v for v in problem.variables if v.name == name)
    lo, hi = (v.fixed, v.fixed) if v.is_fixed else (v.low, v.high)
    return float(lo) * 1e-3, float(hi) * 1e-3


def _approach_lines(problem) -> list[str]:
    """The flow a known approach velocity carries, and the face it acts on."""
    a = problem.air
    w, h, tb = (_range(problem, n) for n in ("width_mm", "fin_height_mm", "base_thickness_mm"))
    q_lo, q_hi = (a.approach_flow(w[i], h[i], tb[i]) for i in (0, 1))
    if not a.ducted:
        face = f"the duct section {_g(a.duct_area_m2)} m² (part of it bypasses the fins)"
    elif a.base_in_airstream:
        face = "the sink's whole face W × (fin height + base) (base_in_airstream = true)"
    else:
        face = "the fin region W × fin height (base flush with a wall or board)"
    span = (f"{_g(q_lo)} m³/s ({q_lo * 3600:.4g} m³/h)" if q_lo == q_hi else
            f"{_g(q_lo)} … {_g(q_hi)} m³/s ({q_lo * 3600:.4g} … {q_hi * 3600:.4g} m³/h) "
            "over the geometry ranges")
    return [f"  known approach velocity {a.approach_velocity_m_s:g} m/s over {face}",
            f"  resulting flow {span}"]


def _duct_lines(problem) -> list[str]:
    a = problem.air
    if a.ducted:
        return ["  ducted: all the air passes between the fins"]
    w, h, tb = (_range(problem, n) for n in ("width_mm", "fin_height_mm", "base_thickness_mm"))
    blocked = [w[i] * (h[i] + (tb[i] if a.base_in_airstream else 0.0)) for i in (0, 1)]
    free = [a.duct_area_m2 - b for b in blocked]
    out = [f"  not ducted: lossless bypass in a duct of {_g(a.duct_area_m2)} m²; the sink blocks "
           f"{_g(blocked[0])} … {_g(blocked[1])} m² "
           f"({'fins and base' if a.base_in_airstream else 'fin region; base flush with a wall'}),"
           f" leaving {_g(max(free[1], 0.0))} … {_g(max(free[0], 0.0))} m² to bypass"]
    if a.duct_width_m is not None and a.duct_height_m is not None:
        out.append(f"  duct {a.duct_width_m * 1e3:g} × {a.duct_height_m * 1e3:g} mm: side clearance "
                   f"{(a.duct_width_m - w[1]) * 1e3:.3g} … {(a.duct_width_m - w[0]) * 1e3:.3g} mm, "
                   f"clearance above the fin tips "
                   f"{(a.duct_height_m - h[1] - (tb[1] if a.base_in_airstream else 0)) * 1e3:.3g}"
                   f" … {(a.duct_height_m - h[0] - (tb[0] if a.base_in_airstream else 0)) * 1e3:.3g}"
                   " mm")
    return out


def _g(x: float) -> str:
    return f"{x:.4g}"


def describe_problem(problem) -> list[str]:
    """Lines describing a resolved :class:`~sinkopt.model.problem.Problem` in SI units."""
    from sinkopt.model.known_flow import inlet_air
    from sinkopt.model.problem import GEOMETRY_VARIABLES, OBJECTIVES
    from sinkopt.study.reader import fan_choices

    c = problem.conditions
    air = inlet_air(c)
    rho = float(air.density)
    out = [f"study {problem.name!r}: valid ({problem.trials} trials, sampler {problem.sampler}, "
           f"seed {problem.seed if problem.seed is not None else 'drawn at run time'})",
           "",
           f"ambient: {c.ambient_C:g} °C ({c.ambient_C + 273.15:g} K) worst-case inlet, altitude "
           f"{c.altitude_m:g} m: pressure {_g(float(air.pressure))} Pa, air density "
           f"{rho:.4g} kg/m³",
           "",
           f"devices ({len(problem.devices)}):"]
    for d in problem.devices:
        out.append(f"  {d.name}: {d.power:g} W, tj_max {d.tj_max:g} °C, R_jc {d.r_jc:g} K/W, "
                   f"centre ({_g(d.center_x)}, {_g(d.center_y)}) m, footprint "
                   f"{_g(d.size_x)} x {_g(d.size_y)} m")
        for s in d.stacks:
            parts = ", ".join(f"{n} {r:.3g}" for n, r in s.layer_resistances())
            out.append(f"    mounting {s.name!r}: R_cs {s.resistance():.4g} K/W ({parts}; "
                       f"contact {_g(s.contact_area)} m²)")
    p = problem.process
    out += ["",
            f"sink: {problem.material_name}, k {problem.conductivity:g} W/(m·K), density "
            f"{problem.density:g} kg/m³",
            f"process {p.name}: fin thickness >= {_g(p.min_fin_thickness_m)} m, gap >= "
            f"{_g(p.min_gap_m)} m, fin height/gap <= {p.max_fin_aspect:g}, base >= "
            f"{_g(p.min_base_thickness_m)} m",
            "",
            "variables:"]
    for v in problem.variables:
        factor = GEOMETRY_VARIABLES.get(v.name, (None, None))[1]
        si = (lambda x: f"{x * factor:.4g} m") if factor not in (None, 1.0) else None
        if v.kind == "categorical":
            body = (f"fixed {v.fixed!r}" if v.is_fixed
                    else f"one of {', '.join(repr(c) for c in v.choices)}")
        elif v.is_fixed:
            body = f"fixed {v.fixed:g}" + (f" ({si(v.fixed)})" if si else "")
        else:
            body = f"{v.low:g} .. {v.high:g}" + (f" ({si(v.low)} .. {si(v.high)})" if si else "")
        out.append(f"  {v.name:<18} {v.kind:<12} {body}")
    a = problem.air
    out += ["", "air:"]
    if a.uses_fans:
        for f in a.fans:
            cv = f.curve
            speed = (f"{f.speed_min:g}" if f.speed_min == f.speed_max
                     else f"{f.speed_min:g}..{f.speed_max:g}")
            out.append(f"  fan {f.key!r} ({f.curve.source}): free delivery {_g(cv.q_free_m3_s)} m³/s "
                       f"({cv.q_free_m3_s * 3600:.4g} m³/h), max pressure {cv.p_max_Pa:.4g} Pa "
                       f"at rated speed and {cv.air_density_kg_m3:g} kg/m³ "
                       f"({cv.p_max_Pa * rho / cv.air_density_kg_m3:.4g} Pa at the site); "
                       f"counts {', '.join(map(str, f.counts))} {f.arrangement}; speed {speed} "
                       "of rated")
        out.append(f"  fan labels: {', '.join(fan_choices(a))}")
    elif a.fixed_flow_m3_s is not None:
        out.append(f"  known flow {_g(a.fixed_flow_m3_s)} m³/s ({a.fixed_flow_m3_s * 3600:.4g} m³/h)")
    else:
        out += _approach_lines(problem)
    out += _duct_lines(problem)
    if a.extra_loss_area_m2 is not None:
        out.append(f"  extra loss K = {a.extra_loss_coefficient:g} at {_g(a.extra_loss_area_m2)} m²")
    if a.extra_impedance is not None:
        q, dp = a.extra_impedance
        out.append(f"  extra impedance curve: {len(q)} points up to {_g(q[-1])} m³/s, "
                   f"{dp[-1]:.4g} Pa at {a.extra_impedance_density:g} kg/m³")
    if a.failed_fan_check:
        out.append("  failed-fan check: also evaluated with one fan of the array stopped")
    need_w = max(d.center_x + d.size_x / 2 for d in problem.devices) * 1e3
    need_l = max(d.center_y + d.size_y / 2 for d in problem.devices) * 1e3
    for key, need in (("width_mm", need_w), ("length_mm", need_l)):
        v = problem.variable(key)
        low = v.fixed if v.is_fixed else v.low
        if need > low + 1e-9:
            out.append(f"  note: the device footprints need {key.removesuffix('_mm')} >= "
                       f"{need:.4g} mm: smaller bases searched ({low:g} mm up) are infeasible")
    out += ["", "objectives:"]
    out += [f"  {OBJECTIVES[o][1]} {o} ({OBJECTIVES[o][0]})" for o in problem.objectives]
    lim = problem.limits
    out += ["", "constraints:", f"  junction margin >= {lim.min_junction_margin_K:g} K"]
    for name, unit in (("max_air_rise_K", "K"), ("max_noise_dBA", "dB(A)"), ("max_width_m", "m"),
                       ("max_length_m", "m"), ("max_height_m", "m"), ("max_mass_kg", "kg"),
                       ("max_fan_power_W", "W"), ("max_pressure_drop_Pa", "Pa")):
        v = getattr(lim, name)
        if v is not None:
            out.append(f"  {name.removeprefix('max_').rsplit('_', 1)[0].replace('_', ' ')} "
                       f"<= {v:g} {unit}")
    out.append(f"  fan stall {'allowed' if lim.allow_stall else 'not allowed'}")
    out.append(f"  junction margin basis: {lim.margin_basis}")
    if lim.min_time_to_limit_after_fan_stop_s is not None:
        out.append(f"  after a fan stop at full load, no junction at its limit before "
                   f"{lim.min_time_to_limit_after_fan_stop_s:g} s")
    lp = problem.load_profile
    if lp is not None:
        if lp.constrain:
            out.append("  every junction's peak in the load profile keeps the junction margin")
        heat = [sum(row) for row in lp.power_W]
        rated = sum(d.power for d in problem.devices)
        out += ["", f"load profile ({lp.source.name if lp.source else 'study'}; fans running, "
                    f"{lp.start} start): {len(lp.power_W)} steps over {lp.duration_s:g} s, total "
                    f"{min(heat):.4g} … {max(heat):.4g} W (rated {rated:.4g} W)"]
        foster = [d.name for d in problem.devices if d.foster_r]
        if foster:
            out.append(f"  junction-to-case from Foster tables: {', '.join(foster)}")
    spec = problem.uncertainty
    out += ["", f"uncertainty ({spec.samples} samples, seed {spec.seed}; the band of every Pareto "
                "design):"]
    for k, u in spec.inputs().items():
        size = f"{u.size:g} K" if k == "ambient" else f"{100 * u.size:g} %"
        out.append(f"  {k:<14} {size} {u.distribution}")
    out.append(f"  power_correlation {spec.power_correlation:g}")
    o = problem.options
    out += ["", f"model: heat_transfer {o.heat_transfer}, hydraulic_diameter "
                f"{o.hydraulic_diameter}, exit_loss {o.exit_loss}, fin_tip {o.fin_tip}, "
                + ", ".join(f"{k} {getattr(o, k)}" for k in ("spreading", "coarse_terms", "air_heating",
                                                   "series_terms") if hasattr(o, k))]
    if problem.calibration is not None:
        c = problem.calibration
        out.append(f"calibrated from {c.path.name}: " + ", ".join(
            f"{k} × {v:.4g}" + (f" (95 % {c.intervals[k][0]:.3g} … {c.intervals[k][1]:.3g})"
                                if k in c.intervals else "")
            for k, v in c.multipliers.items()))
    out.append(f"inputs: {', '.join(str(p) for p in problem.inputs)}")
    return out


def cmd_check(args) -> int:
    from sinkopt.study.reader import load_study

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        problem = load_study(args.study)
    print("\n".join(describe_problem(problem)))
    for w in caught:
        print(f"sinkopt: warning: {w.message}", file=sys.stderr)
    return 0


# ---- init --------------------------------------------------------------------------------------
STARTER_STUDY = """\
# sinkopt study file: docs/study-file.md lists every key. Keys carry their unit in the name.
# Starter study written by `sinkopt init`: an invented example; replace it with your data.

[study]
name = "starter"
trials = 300
seed = 1
sampler = "tpe-refine"   # the default search scheme (docs/study-file.md lists the others)

[ambient]
temperature_C = 40   # worst-case inlet air
altitude_m = 0

[[device]]
name = "Q1"
power_W = 25
tj_max_C = 150
r_jc_K_per_W = 0.5
center_x_mm = 25     # across the flow, from the sink's left edge
center_y_mm = 20     # along the flow, from the inlet edge
footprint_x_mm = 16
footprint_y_mm = 21

  [[device.mounting]]
  name = "pad"
  interface = "insulating-pad"   # a built-in interface material (docs/study-file.md lists them)
  contact_area_mm2 = 220

[sink]
material = "al6063-t5"   # a built-in material (docs/study-file.md lists them)
process = "extruded"
width_mm = [50, 120]     # [low, high] is searched, a number is fixed
length_mm = [40, 120]
fin_height_mm = [15, 45]
fin_thickness_mm = [1.0, 2.5]
n_fins = [6, 25]
base_thickness_mm = [3, 8]

[air]
ducted = true

  [[air.fan]]
  file = "fan_example.csv"   # a path or glob, relative to this file's folder
  count = [1, 2]
  arrangement = "parallel"
  speed = [0.6, 1.0]         # fraction of the rated speed

[objectives]
use = ["sink_volume", "fan_power", "junction_margin"]

[constraints]
min_junction_margin_K = 10   # common practice: 10-25 K below tj_max

[model]
heat_transfer = "teertstra"
"""

EXAMPLE_FAN = """\
# sinkopt-fan-curve: 1
# name: Example 80 mm fan (invented for the starter study, not a real product)
# note: invented numbers shaped like a typical axial fan curve, with a small stall dip
# speed_rpm: 4000
# voltage_V: 12
# power_W: 4.8
# noise_dBA: 42
# size_mm: 80
# air_density_kg_m3: 1.2
flow_m3_h,pressure_Pa
0,110
20,96
35,80
45,78
55,79
70,66
90,40
105,18
118,0
"""


def cmd_init(args) -> int:
    folder = Path(args.dir)
    targets = {folder / "study.toml": STARTER_STUDY, folder / "fan_example.csv": EXAMPLE_FAN}
    existing = [str(p) for p in targets if p.exists()]
    if existing:
        raise InputError(f"refusing to overwrite {', '.join(existing)}; choose another folder or "
                         "move the files away", source="init")
    try:
        folder.mkdir(parents=True, exist_ok=True)
        for path, text in targets.items():
            with path.open("x", encoding="utf-8") as fh:
                fh.write(text)
    except OSError as exc:
        raise InputError(f"cannot write the starter files: {exc}", source="init") from None
    for path in targets:
        print(f"wrote {path}")
    print(f"next: sinkopt check {folder / 'study.toml'}")
    return 0

"""``sinkopt fan check FILE.csv... [--plot PLOT.html|DIR]``: validate fan-curve files, show them, plot them.

The file is parsed with :func:`sinkopt.fans.load_fan_curve`; any problem is an
:class:`~sinkopt.errors.InputError` (exit code 2, nothing written). On success the curve is printed
in SI and in the file's own units, and, where asked (``--plot``), an offline HTML plot
(plotly.js embedded) is written with the stall region shaded. Plotly is imported only when the plot is drawn.
"""
from __future__ import annotations

import os
import sys
import warnings
from pathlib import Path
from typing import NamedTuple

__all__ = ["register", "cmd_check", "CurvePlotData", "curve_plot_data", "format_curve",
           "fan_curve_figure"]

_EPILOG = """examples:
  sinkopt fan check catalogs/fans/demo-axial-80-stall.csv
  sinkopt fan check my_fan.csv --plot /tmp/my_fan.html
  sinkopt fan check fans/*.csv --plot /tmp/fan_plots

file format: docs/fan-curves.md (units in the column names, e.g. flow_cfm,pressure_inH2O)"""


def register(subparsers) -> None:
    """Add the ``fan`` command and its ``check`` sub-command to ``subparsers``."""
    import argparse

    fan = subparsers.add_parser(
        "fan", help="fan-curve tools (check a fan-curve CSV file)",
        description="Fan-curve tools.", epilog=_EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter)
    sub = fan.add_subparsers(dest="fan_command", metavar="SUBCOMMAND")
    check = sub.add_parser(
        "check", help="validate a fan-curve CSV, print it in SI and plot it to HTML",
        description="Validate a fan-curve CSV file, print the parsed curve in SI and in the "
                    "file's units, and write an offline HTML plot with the stall region marked.",
        epilog=_EPILOG, formatter_class=argparse.RawDescriptionHelpFormatter)
    check.add_argument("files", metavar="FILE.csv", nargs="+", help="fan-curve file(s)")
    check.add_argument("--plot", metavar="PLOT.html",
                       help="write an offline HTML plot: a file for one fan-curve file, a "
                            "folder (one PLOT per file, named after it) for several; no plot "
                            "unless asked")
    check.add_argument("--out", dest="plot", help=argparse.SUPPRESS)  # the former name
    check.add_argument("--no-plot", action="store_true", help=argparse.SUPPRESS)  # the default now
    check.set_defaults(func=cmd_check)

    def _usage(args) -> int:
        fan.print_help(sys.stderr)
        return 2

    fan.set_defaults(func=_usage)


class CurvePlotData(NamedTuple):
    """What the plot shows, in the file's units (pure data, no plotly)."""

    name: str
    note: str
    flow_unit: str
    pressure_unit: str
    q_points: list  # data points [file flow unit]
    p_points: list  # [file pressure unit]
    lines: list  # source line per point (0 = added by end extension)
    q_curve: list  # interpolated curve [file flow unit]
    p_curve: list  # [file pressure unit]
    q_stall: float  # stall limit [file flow unit]; == q_points[0] if no stall region
    q_points_si: list  # [m3/s]
    p_points_si: list  # [Pa]
    power_W: list | None  # per-point electrical power [W]


def _factors(curve):
    from sinkopt.fans.units import flow_unit, pressure_unit

    return flow_unit(curve.flow_unit).factor, pressure_unit(curve.pressure_unit).factor


def curve_plot_data(curve, n_points: int = 300) -> CurvePlotData:
    """Collect the plotted quantities of ``curve`` (a :class:`~sinkopt.fans.FanCurve`)."""
    fq, fp = _factors(curve)
    qs, ps = curve.sample(n_points)
    return CurvePlotData(
        name=curve.name, note=curve.metadata.get("note", ""),
        flow_unit=curve.flow_unit, pressure_unit=curve.pressure_unit,
        q_points=(curve.flow_m3_s / fq).tolist(), p_points=(curve.pressure_Pa / fp).tolist(),
        lines=list(curve.lines or [0] * curve.flow_m3_s.size),
        q_curve=(qs / fq).tolist(), p_curve=(ps / fp).tolist(),
        q_stall=curve.q_stall_limit_m3_s / fq,
        q_points_si=curve.flow_m3_s.tolist(), p_points_si=curve.pressure_Pa.tolist(),
        power_W=None if curve.power_W is None else curve.power_W.tolist(),
    )


def format_curve(curve) -> str:
    """Human-readable summary and point table of ``curve``, in SI and in the file's units."""
    fq, fp = _factors(curve)
    fu, pu = curve.flow_unit, curve.pressure_unit
    out = [f"{curve.name}  ({curve.source or 'no file'})"]
    if "note" in curve.metadata:
        out.append(f"  note: {curve.metadata['note']}")
    facts = []
    for label, value, unit in (("speed", curve.speed_rpm, "rpm"), ("voltage", curve.voltage_V, "V"),
                               ("noise", curve.noise_dBA, "dB(A)"), ("size", curve.size_mm, "mm")):
        if value is not None:
            facts.append(f"{label} {value:g} {unit}")
    facts.append(f"curve at air density {curve.air_density_kg_m3:g} kg/m3")
    out.append("  " + ", ".join(facts))
    q, p = curve.flow_m3_s, curve.pressure_Pa
    from sinkopt.fans.curve_file import RECOMMENDED_POINTS

    n_data = sum(1 for ln in (curve.lines or ()) if ln) or q.size
    if n_data < RECOMMENDED_POINTS:
        out.append(f"  note: only {n_data} data points; {RECOMMENDED_POINTS} or more are "
                   "recommended for a faithful curve")
    out.append(f"  {q.size} points; flow {q[0]:.6g} to {q[-1]:.6g} m3/s ({q[0] / fq:.6g} to "
               f"{q[-1] / fq:.6g} {fu}); max pressure {p.max():.6g} Pa ({p.max() / fp:.6g} {pu})")
    if curve.has_stall_region:
        out.append(f"  stall region: below {curve.q_stall_limit_m3_s:.6g} m3/s "
                   f"({curve.q_stall_limit_m3_s / fq:.6g} {fu}); operating points there are "
                   "flagged in_stall")
    else:
        out.append("  stall region: none in the data (pressure falls all the way)")
    if curve.power_W is not None:
        out.append(f"  electrical power: power column, {curve.power_W.min():.4g} to "
                   f"{curve.power_W.max():.4g} W (interpolated in flow)")
    elif curve.rated_power_W is not None:
        out.append(f"  electrical power: {curve.rated_power_W:g} W at rated speed (power_W)")
    else:
        from sinkopt.fans.operating_point import DEFAULT_FAN_EFFICIENCY

        out.append("  electrical power: no data; estimated as air power / efficiency "
                   f"(default {DEFAULT_FAN_EFFICIENCY:g})")
    head = (f"  {'line':>5}  {'flow [m3/s]':>13}  {'pressure [Pa]':>13}  "
            f"{'flow [' + fu + ']':>14}  {'pressure [' + pu + ']':>16}")
    if curve.power_W is not None:
        head += f"  {'power [W]':>9}"
    out += ["", head + "  region"]
    lines = curve.lines or (0,) * q.size
    for i in range(q.size):
        row = (f"  {lines[i] or 'added':>5}  {q[i]:>13.6g}  {p[i]:>13.6g}  {q[i] / fq:>14.6g}  "
               f"{p[i] / fp:>16.6g}")
        if curve.power_W is not None:
            row += f"  {curve.power_W[i]:>9.4g}"
        out.append(row + ("  stall" if i < curve.stall_index else "  stable"))
    return "\n".join(out)


def fan_curve_figure(data: CurvePlotData):
    """Plotly figure of a fan curve (file units) with the stall region shaded."""
    import plotly.graph_objects as go

    fig = go.Figure()
    q0 = data.q_points[0]
    if data.q_stall > q0:
        fig.add_vrect(x0=q0, x1=data.q_stall, fillcolor="firebrick", opacity=0.12, line_width=0,
                      annotation_text="stall region (unstable)", annotation_position="top left")
    fig.add_trace(go.Scatter(x=data.q_curve, y=data.p_curve, mode="lines",
                             name="curve (PCHIP)", line={"color": "royalblue"}))
    custom = [[ln or "added", qs, ps] for ln, qs, ps in
              zip(data.lines, data.q_points_si, data.p_points_si)]
    fig.add_trace(go.Scatter(
        x=data.q_points, y=data.p_points, mode="markers", name="data points",
        marker={"color": ["darkorange" if ln else "grey" for ln in data.lines], "size": 8},
        customdata=custom,
        hovertemplate=(f"line %{{customdata[0]}}<br>%{{x:.6g}} {data.flow_unit}, "
                       f"%{{y:.6g}} {data.pressure_unit}<br>%{{customdata[1]:.6g}} m3/s, "
                       "%{customdata[2]:.6g} Pa<extra></extra>")))
    if data.power_W is not None:
        fig.add_trace(go.Scatter(x=data.q_points, y=data.power_W, mode="lines+markers",
                                 name="electrical power [W]", yaxis="y2",
                                 line={"color": "seagreen", "dash": "dot"}))
        fig.update_layout(yaxis2={"title": "electrical power [W]", "overlaying": "y",
                                  "side": "right", "rangemode": "tozero"})
    title = data.name + (f"<br><sup>{data.note}</sup>" if data.note else "")
    fig.update_layout(title=title, xaxis_title=f"flow [{data.flow_unit}]",
                      yaxis_title=f"static pressure [{data.pressure_unit}]",
                      xaxis={"rangemode": "tozero"}, yaxis={"rangemode": "tozero"},
                      template="plotly_white", legend={"x": 0.99, "xanchor": "right", "y": 0.99})
    return fig


def _write_html(fig, out: Path) -> None:
    tmp = out.with_name(out.name + ".tmp")
    try:
        fig.write_html(tmp, include_plotlyjs=True, full_html=True, div_id="fan-curve",
                       config={"displaylogo": False})
        os.replace(tmp, out)
    finally:
        if tmp.exists():
            tmp.unlink()


def cmd_check(args) -> int:
    """Run ``sinkopt fan check``; returns the exit code (InputError propagates: exit 2). Every
    file is checked before any plot is written."""
    from sinkopt.errors import InputError
    from sinkopt.fans import FanCurveWarning, load_fan_curve

    sources = [Path(f) for f in args.files]
    plot = Path(args.plot) if args.plot and not args.no_plot else None
    targets: list[Path] = []
    if plot is not None:
        if len(sources) == 1 and plot.suffix.lower() in (".html", ".htm"):
            targets = [plot]
        else:
            if plot.exists() and not plot.is_dir():
                raise InputError(f"{str(plot)!r} is a file; with several fan files, --plot "
                                 "names a folder", field="--plot")
            targets = [plot / (src.stem + ".html") for src in sources]
        folder = targets[0].parent
        if not folder.is_dir():
            raise InputError(f"output folder {str(folder)!r} does not exist", field="--plot")
        for src, out in zip(sources, targets):
            if src.exists() and out.resolve() == src.resolve():
                raise InputError("the plot would overwrite the fan-curve file; pass another "
                                 "--plot", field="--plot")
    curves = []
    for src in sources:
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", FanCurveWarning)
            curves.append(load_fan_curve(src))
        for w in caught:
            print(f"sinkopt: warning: {w.message}", file=sys.stderr)
    for k, curve in enumerate(curves):
        if k:
            print()
        print(format_curve(curve))
    for curve, out in zip(curves, targets):
        _write_html(fan_curve_figure(curve_plot_data(curve)), out)
        print(f"\nplot written to {out}")
    return 0

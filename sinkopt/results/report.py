"""The self-contained HTML report of a results folder (``report.html``).

One file that works with no network: plotly.js is inlined once, the page's own script and style
come from ``sinkopt/results/report_assets/``, and the data (:func:`sinkopt.results.report_data.report_data`) plus
the per-design figures built here are embedded as JSON in ``<script type="application/json">``
blocks. A Content-Security-Policy ``<meta>`` forbids every network request from the page.

Safety of user text: every string from the study or fan files reaches the page either through
:func:`html.escape` (the static tables written here) or through ``textContent`` (the page's
script); the embedded JSON has ``<``, ``>`` and ``&`` written as ``\\u003c`` etc., so no name can
close the ``<script>`` block; text handed to plotly (which reads a few HTML-like tags) is escaped
too.

The figure functions return plain plotly figure dicts (``{"data": [...], "layout": {...}}``,
checked against plotly's schema by the tests); plotly itself is imported only to inline
plotly.js.
"""
from __future__ import annotations

import datetime as _dt
import html
import json
import math
import os
from importlib import resources
from pathlib import Path
from typing import Any, Sequence

from sinkopt.results.collect import Results

__all__ = ["write_report", "render_report", "report_figures", "fan_system_figure",
           "breakdown_figure", "parcoords_figure", "json_for_script", "CSP"]

#: Content-Security-Policy of the page: no request leaves the file (plotly.js needs inline
#: script, eval for its WebGL shaders, inline styles and data:/blob: images).
CSP = ("default-src 'none'; script-src 'unsafe-inline' 'unsafe-eval'; "
       "style-src 'unsafe-inline'; img-src data: blob:; font-src data:; worker-src blob:; "
       "connect-src 'none'; form-action 'none'; base-uri 'none'")

#: Neutral palette: text, muted, grid, accent, highlight, stall shading.
INK = "#1f2328"
MUTED = "#6a7077"
GRID = "#e3e5e8"
ACCENT = "#2f5d7c"
WARM = "#b5652b"
BREAKDOWN_COLOURS = ("#9fb3c2", "#2f5d7c", "#c7a15a", "#7b4f6e")
BREAKDOWN_LABELS = {
    "air_heating_upstream": "air heated by upstream devices",
    "sink_and_spreading": "sink and base spreading",
    "mounting_stack": "mounting stack (case to sink)",
    "junction_to_case": "junction to case",
}
FONT = {"family": "system-ui, -apple-system, 'Segoe UI', Roboto, Helvetica, Arial, sans-serif",
        "size": 12, "color": INK}


def _t(s: Any) -> str:
    """Text for plotly (it reads a few HTML-like tags): escaped."""
    return html.escape(str(s), quote=False)


def _round(v: Any, digits: int = 6) -> Any:
    """Round floats to ``digits`` significant digits, recursively (smaller page)."""
    if isinstance(v, float):
        if not math.isfinite(v):
            return None
        return float(f"{v:.{digits}g}")
    if isinstance(v, dict):
        return {k: _round(x, digits) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_round(x, digits) for x in v]
    return v


def json_for_script(data: Any) -> str:
    """JSON safe inside an HTML ``<script type="application/json">`` block: ``<``, ``>``, ``&``
    and the line separators U+2028/U+2029 are written as ``\\u`` escapes.

    >>> json_for_script({"name": "</script><b>&"})
    '{"name":"\\\\u003c/script\\\\u003e\\\\u003cb\\\\u003e\\\\u0026"}'
    """
    text = json.dumps(data, allow_nan=False, separators=(",", ":"), ensure_ascii=False,
                      default=_json_default)
    for ch, esc in (("<", "\\u003c"), (">", "\\u003e"), ("&", "\\u0026"),
                    ("\u2028", "\\u2028"), ("\u2029", "\\u2029")):
        text = text.replace(ch, esc)
    return text


def _json_default(o):
    import numpy as np

    if isinstance(o, np.integer):
        return int(o)
    if isinstance(o, np.floating):
        return float(o) if np.isfinite(o) else None
    if isinstance(o, np.bool_):
        return bool(o)
    if isinstance(o, np.ndarray):
        return o.tolist()
    if isinstance(o, Path):
        return str(o)
    raise TypeError(f"not JSON serialisable: {type(o).__name__}")


def _scatter(**kw) -> dict[str, Any]:
    return {"type": "scatter", **kw}


def _bar(**kw) -> dict[str, Any]:
    return {"type": "bar", **kw}


def _base_layout(**extra) -> dict[str, Any]:
    layout = {"font": FONT, "paper_bgcolor": "rgba(0,0,0,0)", "plot_bgcolor": "#ffffff",
              "margin": {"l": 60, "r": 20, "t": 30, "b": 50}, "hovermode": "closest",
              "legend": {"orientation": "h", "y": -0.25, "x": 0}}
    layout.update(extra)
    return layout


def _axis(title: str, **extra) -> dict[str, Any]:
    axis = {"title": {"text": title}, "gridcolor": GRID, "zerolinecolor": "#c9ccd0",
            "linecolor": "#9aa0a6", "showline": True, "mirror": True}
    axis.update(extra)
    return axis


def fan_system_figure(curves: dict[str, Any]):
    """Fan-array curve(s) against the system curve, with the operating point and the stall
    region shaded; flows drawn in m³/h."""
    h = 3600.0
    traces: list[dict[str, Any]] = []
    p_top = 0.0
    sysc = curves.get("system_curve") or {"flow_m3_s": [], "pressure_Pa": []}
    stall = curves.get("stall_limit_m3_s")
    rated = curves.get("fan_curve_rated")
    if rated and rated["flow_m3_s"]:
        traces.append(_scatter(
            x=[q * h for q in rated["flow_m3_s"]], y=rated["pressure_Pa"], mode="lines",
            name="fans at top of speed range", line={"color": "#9aa0a6", "dash": "dot",
                                                     "width": 1.5},
            hovertemplate="%{x:.4g} m³/h, %{y:.4g} Pa<extra>top speed</extra>"))
        p_top = max(p_top, max(rated["pressure_Pa"]))
    fan = curves.get("fan_curve")
    if fan and fan["flow_m3_s"]:
        q = [x * h for x in fan["flow_m3_s"]]
        p = fan["pressure_Pa"]
        p_top = max(p_top, max(p))
        label = _t(curves.get("fan") or "fan")
        speed = curves.get("speed_ratio")
        name = f"{label} at {speed * 100:.0f} % speed" if speed else label
        if stall:
            qs = stall * h
            unstable = [i for i, x in enumerate(q) if x <= qs * (1 + 1e-9)]
            stable = [i for i, x in enumerate(q) if x >= qs * (1 - 1e-9)]
            if len(unstable) > 1:
                traces.append(_scatter(
                    x=[q[i] for i in unstable], y=[p[i] for i in unstable], mode="lines",
                    name="fans, stall region", line={"color": ACCENT, "dash": "dash", "width": 2},
                    hovertemplate="%{x:.4g} m³/h, %{y:.4g} Pa<extra>stall region</extra>"))
        else:
            stable = list(range(len(q)))
        traces.append(_scatter(
            x=[q[i] for i in stable], y=[p[i] for i in stable], mode="lines", name=name,
            line={"color": ACCENT, "width": 2.5},
            hovertemplate="%{x:.4g} m³/h, %{y:.4g} Pa<extra>fans</extra>"))
    if sysc["flow_m3_s"]:
        traces.append(_scatter(
            x=[q * h for q in sysc["flow_m3_s"]], y=sysc["pressure_Pa"], mode="lines",
            name="system (sink and extra losses)", line={"color": INK, "width": 2},
            hovertemplate="%{x:.4g} m³/h, %{y:.4g} Pa<extra>system</extra>"))
    op = curves.get("operating_point")
    if op:
        traces.append(_scatter(
            x=[op["flow_m3_s"] * h], y=[op["pressure_Pa"]], mode="markers",
            name="operating point", marker={"size": 11, "color": WARM,
                                            "line": {"color": INK, "width": 1.5}},
            hovertemplate="operating point<br>%{x:.4g} m³/h, %{y:.4g} Pa<extra></extra>"))
        p_top = max(p_top, op["pressure_Pa"] * 1.2)
    if not p_top > 0:
        p_top = max(sysc["pressure_Pa"] or [1.0])
    shapes, notes = [], []
    if stall:
        shapes.append({"type": "rect", "xref": "x", "yref": "paper", "x0": 0, "x1": stall * h,
                       "y0": 0, "y1": 1, "fillcolor": "rgba(181,101,43,0.12)", "line": {"width": 0},
                       "layer": "below"})
        notes.append({"x": stall * h / 2, "y": 1, "xref": "x", "yref": "paper",
                      "yanchor": "top", "text": "stall region at this speed", "showarrow": False,
                      "font": {"color": WARM, "size": 11}})
    return {"data": traces, "layout": _base_layout(
        height=340, shapes=shapes, annotations=notes,
        xaxis=_axis("airflow [m³/h]", rangemode="tozero"),
        yaxis=_axis("static pressure [Pa]", range=[0, p_top * 1.08]))}


def breakdown_figure(devices: Sequence[dict[str, Any]], ambient_C: float | None = None):
    """Stacked temperature rises from the inlet air to each junction, one bar per device, with
    each device's allowed rise (Tj,max − inlet air) marked."""
    names = [_t(d["name"]) for d in devices]
    traces: list[dict[str, Any]] = []
    for (key, label), colour in zip(BREAKDOWN_LABELS.items(), BREAKDOWN_COLOURS):
        traces.append(_bar(
            x=names, y=[(d.get("breakdown_K") or {}).get(key) for d in devices], name=label,
            marker={"color": colour},
            hovertemplate="%{x}: %{y:.3g} K<extra>" + _t(label) + "</extra>"))
    if ambient_C is not None:
        traces.append(_scatter(
            x=names, y=[d["tj_max_C"] - ambient_C for d in devices], mode="markers",
            name="allowed rise (Tj,max − inlet air)",
            marker={"symbol": "line-ew-open", "size": 34, "color": WARM,
                    "line": {"width": 2.5, "color": WARM}},
            hovertemplate="%{x}: allowed %{y:.3g} K<extra></extra>"))
    return {"data": traces, "layout": _base_layout(
        height=340, barmode="stack", bargap=0.45,
        xaxis=_axis("device", type="category"),
        yaxis=_axis("temperature rise above inlet air [K]", rangemode="tozero"))}


def parcoords_figure(pc: dict[str, Any]):
    """Parallel coordinates of every trial, coloured infeasible / dominated / Pareto."""
    dims = []
    for d in pc["dimensions"]:
        label = d["label"] + (f" [{d['unit']}]" if d.get("unit") and d["unit"] != "-" else "")
        dim = {"label": _t(label), "values": d["values"]}
        if "tickvals" in d:
            dim["tickvals"] = d["tickvals"]
            dim["ticktext"] = [_t(x) for x in d["ticktext"]]
        dims.append(dim)
    line = {"color": pc["status"], "cmin": 0, "cmax": 2, "showscale": False,
            "colorscale": [[0, "#d5d8dc"], [0.5, "#9fb3c2"], [1, WARM]]}
    trace = {"type": "parcoords", "line": line, "dimensions": dims, "labelangle": -20,
             "labelside": "bottom", "labelfont": {"size": 11}, "tickfont": {"size": 10},
             "rangefont": {"size": 9}}
    return {"data": [trace], "layout": {"font": FONT, "paper_bgcolor": "rgba(0,0,0,0)",
                                        "height": 460,
                                        "margin": {"l": 150, "r": 60, "t": 40, "b": 90}}}


def report_figures(data: dict[str, Any]) -> dict[str, Any]:
    """The figures built in Python, as plotly JSON: the parallel coordinates and, per Pareto
    design, the fan/system curves and the temperature breakdown."""
    figs: dict[str, Any] = {"parcoords": None, "designs": {}}
    if data["parcoords"]["trial"]:
        figs["parcoords"] = _round(parcoords_figure(data["parcoords"]), 5)
    for key, d in data["designs"].items():
        figs["designs"][key] = {
            "fan_system": _round(fan_system_figure(d["curves"]), 5),
            "breakdown": _round(breakdown_figure(d["devices"], d.get("ambient_C")), 5),
        }
    return figs


# ---------------------------------------------------------------- static HTML (escaped)

def _fmt(v: Any) -> str:
    if v is None:
        return "–"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, int):
        return str(v)
    if isinstance(v, float):
        if not math.isfinite(v):
            return "–"
        if abs(v) >= 1e4:
            return f"{v:.0f}"
        return f"{v:.4g}"
    return str(v)


def _table(headers: Sequence[str], rows: Sequence[Sequence[Any]], cls: str = "") -> str:
    e = html.escape
    head = "".join(f"<th scope=\"col\">{e(h)}</th>" for h in headers)
    body = "".join("<tr>" + "".join(f"<td>{e(_fmt(c))}</td>" for c in row) + "</tr>"
                   for row in rows)
    c = f' class="{e(cls)}"' if cls else ""
    return f"<table{c}><thead><tr>{head}</tr></thead><tbody>{body}</tbody></table>"


def _kv(rows: Sequence[Sequence[Any]]) -> str:
    e = html.escape
    body = "".join(f"<tr><th scope=\"row\">{e(str(k))}</th><td>{e(_fmt(v))}</td></tr>"
                   for k, v in rows)
    return f'<table class="kv"><tbody>{body}</tbody></table>'


def _pareto_table(table: dict[str, Any]) -> str:
    e = html.escape
    cols = table["columns"]
    head = []
    for c in cols:
        unit = f" [{c['unit']}]" if c["unit"] and c["unit"] != "-" else ""
        head.append(f'<th scope="col" data-kind="{e(c["kind"])}" aria-sort="none">'
                    f'<button type="button">{e(c["label"] + unit)}</button></th>')
    rows = []
    for r in table["rows"]:
        cells = []
        for c in cols:
            v = r.get(c["key"])
            sort = "" if v is None else (str(v) if c["kind"] == "text" else repr(float(v)))
            cells.append(f'<td data-v="{e(sort)}">{e(_fmt(v))}</td>')
        rows.append(f'<tr data-trial="{int(r["trial"])}" tabindex="0">{"".join(cells)}</tr>')
    if not rows:
        return "<p>No feasible design was found, so the front is empty; trials.csv lists the " \
               "closest designs.</p>"
    return (f'<table id="pareto-table" class="sortable"><thead><tr>{"".join(head)}</tr></thead>'
            f'<tbody>{"".join(rows)}</tbody></table>')


def _inputs_html(inp: dict[str, Any]) -> str:
    parts = ["<h3>Conditions and sink</h3>", _kv([
        ["study", inp["name"]],
        ["description", inp.get("description") or "–"],
        ["study file", inp["source"] or "–"],
        ["inlet air temperature (worst case)", f"{inp['ambient_C']:g} °C"],
        ["altitude", f"{inp['altitude_m']:g} m"],
        ["sink material", f"{inp['material']['name']} (k = "
                          f"{inp['material']['conductivity_W_mK']:g} W/(m·K), ρ = "
                          f"{inp['material']['density_kg_m3']:g} kg/m³)"],
    ])]
    dev_rows = []
    for d in inp["devices"]:
        mounts = "; ".join(f"{m} ({r:.3g} K/W)" for m, r in zip(d["mountings"], d["stack_K_per_W"]))
        dev_rows.append([d["name"], d["power_W"], d["tj_max_C"], d["r_jc_K_per_W"],
                         d["center_x_mm"], d["center_y_mm"],
                         f"{d['size_x_mm']:.4g} × {d['size_y_mm']:.4g}", mounts])
    parts += ["<h3>Devices</h3>",
              '<p class="note">Positions are footprint centres: x across the flow from the '
              "base's left edge, y along the flow from the inlet edge.</p>",
              _table(["device", "power [W]", "Tj,max [°C]", "Rjc [K/W]", "x [mm]", "y [mm]",
                      "footprint [mm]", "mounting (case to sink)"], dev_rows, "devices")]
    parts += ["<h3>Air supply</h3>", _kv(inp["air"])]
    parts += ["<h3>Constraints</h3>", _kv(inp["limits"])]
    obj_rows = [[o["label"] + (f" [{o['unit']}]" if o["unit"] else ""),
                 "lower is better" if o["direction"] == "minimize" else "higher is better"]
                for o in inp["objectives"]]
    parts += ["<h3>Objectives</h3>", _kv(obj_rows)]
    parts += ["<h3>Search variables</h3>", _kv(inp["variables"])]
    return "\n".join(parts)


def _run_html(inp: dict[str, Any]) -> str:
    run = inp["run"]
    versions = ", ".join(f"{k} {v}" for k, v in (run["versions"] or {}).items())
    states = ", ".join(f"{k.lower()} {v}" for k, v in (run["trial_states"] or {}).items())
    rows = [["sinkopt", run["sinkopt"]], ["Python", run["python"]], ["libraries", versions],
            ["platform", run["platform"]], ["sampler", run["sampler"]], ["seed", run["seed"]],
            ["trials requested", run["n_trials"]], ["trial states", states],
            ["storage", run["storage"]], ["finished (UTC)", run["finished_utc"]],
            ["search time", None if run["elapsed_s"] is None else f"{run['elapsed_s']:g} s"],
            ["command", run["command"]]]
    if run.get("report_rebuilt_utc"):
        rows.append(["report rebuilt (UTC)", run["report_rebuilt_utc"]])
    model = ", ".join(f"{k} = {v}" for k, v in (run["model_options"] or {}).items())
    rows.append(["model options", model])
    for w in run["warnings"]:
        rows.append(["warning", w])
    parts = ["<h3>Run</h3>", _kv(rows), "<h3>Input files (SHA-256)</h3>"]
    if inp["inputs"]:
        parts.append(_table(["file", "SHA-256"], inp["inputs"], "checksums"))
    else:
        parts.append("<p>No input checksums were recorded.</p>")
    return "\n".join(parts)


SAFETY_HTML = """
<ul class="safety">
<li><strong>Hot surfaces.</strong> A sink running near its limits, and the air leaving it, can be
hot enough to burn skin. Let parts cool before touching them; guard or mark hot surfaces that
people can reach.</li>
<li><strong>Fans.</strong> Fit finger guards to every fan and keep cables, hair and tools away
from the blades. A guard, filter or grille adds pressure drop: include it in the study's extra
losses.</li>
<li><strong>Mains voltage and insulation.</strong> Power devices often sit at mains or higher
potential and capacitors keep their charge after switch-off. A sink can become live if an
insulating pad or barrier fails: keep the insulation barriers, creepage and clearance distances
the design needs, bond the sink to protective earth where required, and isolate, lock off and
discharge before work.</li>
<li><strong>A model, not a measurement.</strong> The numbers here come from correlations with
stated validity ranges and uncertainty (see each design's warnings). Confirm the chosen design by
measuring junction or case temperatures on a prototype at the worst-case inlet air, altitude and
supply conditions, with margin.</li>
<li><strong>Codes and standards.</strong> Follow local electrical and building codes, the
product-safety standards that apply to the equipment, and licensed professional practice; have
the final design reviewed and approved by a qualified person.</li>
</ul>
"""


def _asset(name: str) -> str:
    return resources.files("sinkopt.results").joinpath("report_assets", name).read_text(encoding="utf-8")


def _plotly_js() -> str:
    from plotly.offline import get_plotlyjs

    js = get_plotlyjs()
    # Never let the bundle end the <script> element early.
    return js.replace("</script", "<\\/script").replace("<!--", "<\\!--")


def render_report(results: Results, info: dict[str, Any] | None = None) -> str:
    """The report page as one HTML string."""
    from sinkopt.results.report_data import report_data

    data = _round(report_data(results, info))
    figures = report_figures(data)
    inp = data["inputs"]
    s = data["summary"]
    e = html.escape
    objectives = ", ".join(o["label"] for o in data["pareto"]["objectives"])
    summary = (f"{s['trials']} trials: {s['pareto']} designs on the Pareto front, {s['feasible']} "
               f"feasible but dominated, {s['infeasible']} infeasible. Objectives: {objectives}.")
    if s["not_plotted"]:
        n = s["not_plotted"]
        summary += (f" Not plotted: {n} {'trial' if n == 1 else 'trials'} with no fan operating "
                    "point or no valid geometry.")
    generated = _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds")
    page = _asset("page.html")
    fill = {
        "CSP": e(CSP),
        "TITLE": e(f"sinkopt report: {data['study']}"),
        "STUDY": e(data["study"]),
        "SUMMARY": e(summary),
        "GENERATED": e(generated),
        "SEED": e(_fmt(inp["run"]["seed"])),
        "VERSION": e(_fmt(inp["run"]["sinkopt"])),
        "PARETO_TABLE": _pareto_table(data["table"]),
        "INPUTS": _inputs_html(inp),
        "RUN": _run_html(inp),
        "SAFETY": SAFETY_HTML,
        "CSS": _asset("report.css"),
        "DATA_JSON": json_for_script(data),
        "FIGURES_JSON": json_for_script(figures),
        "PLOTLY_JS": _plotly_js(),
        "REPORT_JS": _asset("report.js"),
    }
    out = []
    rest = page
    # Single pass over {{NAME}} markers, so no inserted text is scanned for markers again.
    while True:
        i = rest.find("{{")
        if i < 0:
            out.append(rest)
            break
        j = rest.index("}}", i)
        out.append(rest[:i])
        out.append(fill[rest[i + 2:j]])
        rest = rest[j + 2:]
    return "".join(out)


def write_report(results: Results, path, info: dict[str, Any] | None = None) -> Path:
    """Write the report page to ``path`` (atomically) and return the path."""
    path = Path(path)
    text = render_report(results, info)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.tmp{os.getpid()}")
    tmp.write_text(text, encoding="utf-8")
    os.replace(tmp, path)
    return path

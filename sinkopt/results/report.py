"""The self-contained HTML report of a results folder (``report.html``).

One file that works with no network: the page's own script and style come from
``sinkopt/results/report_assets/``, the data (:func:`sinkopt.results.report_data.report_data`) is
embedded once as compact JSON in a ``<script type="application/json">`` block, and plotly.js is
embedded once, gzip-compressed and base64-encoded (4.8 MB of minified plotly.js becomes ~2 MB);
the page unpacks it with the browser's ``DecompressionStream`` and runs it. The page's script
draws every figure from the data: the Pareto front, the parallel coordinates, each design's
drawings and fan/system and breakdown charts. A Content-Security-Policy ``<meta>`` forbids every
network request from the page.

Safety of user text: every string from the study or fan files reaches the page either through
:func:`html.escape` (the static tables written here) or through ``textContent`` (the page's
script); the embedded JSON has ``<``, ``>`` and ``&`` written as ``\\u003c`` etc., so no name can
close the ``<script>`` block; text the page hands to plotly (which reads a few HTML-like tags) is
escaped there.

Size: numbers are written with 6 significant digits (the curves, drawn only, with 4), integral
values as integers; see ``benchmarks/README.md`` for the demo report's size and load time.
"""
from __future__ import annotations

import base64
import datetime as _dt
import functools
import gzip
import html
import json
import math
import os
import re
from importlib import resources
from pathlib import Path
from typing import Any, Sequence

from sinkopt.results.collect import Results

__all__ = ["write_report", "render_report", "json_for_script", "plotly_payload", "CSP"]

#: Content-Security-Policy of the page: no request leaves the file (plotly.js needs inline
#: script, eval for its WebGL shaders and to run its unpacked bundle, inline styles and
#: data:/blob: images).
CSP = ("default-src 'none'; script-src 'unsafe-inline' 'unsafe-eval'; "
       "style-src 'unsafe-inline'; img-src data: blob:; font-src data:; worker-src blob:; "
       "connect-src 'none'; form-action 'none'; base-uri 'none'")

#: Significant digits of the numbers in the page's data, and of the curves (drawn only).
DIGITS = 6
CURVE_DIGITS = 4


def _round(v: Any, digits: int = DIGITS) -> Any:
    """Round floats to ``digits`` significant digits, recursively (smaller page); integral
    values become ints, non-finite ones None.

    >>> _round({"a": [1.23456789, 2.0, float("nan")], "b": "text", "c": 7})
    {'a': [1.23457, 2, None], 'b': 'text', 'c': 7}
    """
    if isinstance(v, float):
        if not math.isfinite(v):
            return None
        r = float(f"{v:.{digits}g}")
        return int(r) if r.is_integer() and abs(r) < 1e15 else r
    if isinstance(v, dict):
        return {k: _round(x, digits) for k, x in v.items()}
    if isinstance(v, (list, tuple)):
        return [_round(x, digits) for x in v]
    return v


def _compact(data: dict[str, Any]) -> dict[str, Any]:
    """The page's copy of the report data: curves with :data:`CURVE_DIGITS`, every other number
    with :data:`DIGITS` significant digits."""
    data = dict(data)
    data["fans"] = {k: dict(f, flow_m3_s=_round(f["flow_m3_s"], CURVE_DIGITS),
                            pressure_Pa=_round(f["pressure_Pa"], CURVE_DIGITS))
                    for k, f in data.get("fans", {}).items()}
    designs = dict(data["designs"])
    designs["by_trial"] = {k: dict(d, system_Pa=_round(d["system_Pa"], CURVE_DIGITS))
                           for k, d in designs["by_trial"].items()}
    data["designs"] = designs
    return _round(data)


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


def _uncertainty_html(unc: dict[str, Any]) -> str:
    """The uncertain inputs and, when the model is calibrated, the calibration."""
    parts = ["<h3>Uncertainty</h3>",
             f'<p class="note">Each Pareto design is evaluated at {unc["samples"]} seeded samples '
             f"(seed {unc['seed']}) of these inputs, and at the pessimistic corner where every "
             "input sits at its bound on the hot side; junction margins are judged on the "
             f"<strong>{html.escape(unc['margin_basis'])}</strong> basis.</p>",
             _table(["input", "uncertainty", "source of the value"], unc["inputs"], "uncertainty")]
    cal = unc.get("calibration")
    if cal:
        rows = [[k, f"{v:.4g}", "–" if lo is None else f"{lo:.4g} … {hi:.4g}"]
                for k, v, lo, hi in cal["multipliers"]]
        parts += ["<h3>Model calibration</h3>",
                  f'<p class="note">The model runs calibrated on measurements of a prototype '
                  f"({html.escape(str(cal.get('measured_file') or '?'))}, fitted by sinkopt "
                  f"calibrate into {html.escape(cal['file'])}): the published correlations "
                  "times these multipliers. The chart shows the measured points with the model "
                  "before and after.</p>",
                  _table(["multiplier", "value", "95 % interval"], rows, "calibration"),
                  '<div id="calibration-plot" class="plot"></div>']
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


@functools.lru_cache(maxsize=1)
def plotly_payload() -> tuple[str, str]:
    """plotly.js (the bundle of the installed plotly package) as the page embeds it: its
    licence header (kept readable) and the whole bundle gzip-compressed, base64-encoded.

    The base64 alphabet holds no ``<``, ``&`` or ``:``, so the text can neither end its
    ``<script>`` block nor name a URL. Computed once per process (~0.3 s).
    """
    from plotly.offline import get_plotlyjs

    js = get_plotlyjs()
    m = re.match(r"\s*/\*\*?(.*?)\*/", js, flags=re.S)
    header = " ".join(ln.strip(" *") for ln in (m.group(1) if m else "plotly.js").splitlines())
    header = " ".join(header.split())
    packed = gzip.compress(js.encode("utf-8"), compresslevel=9, mtime=0)
    return header, base64.b64encode(packed).decode("ascii")


def render_report(results: Results, info: dict[str, Any] | None = None) -> str:
    """The report page as one HTML string."""
    from sinkopt.results.report_data import report_data

    data = _compact(report_data(results, info))
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
    plotly_header, plotly_packed = plotly_payload()
    page = _asset("page.html")
    fill = {
        "CSP": e(CSP),
        "TITLE": e(f"sinkopt report: {data['study']}"),
        "STUDY": e(data["study"]),
        "SUMMARY": e(summary),
        "GENERATED": e(generated),
        "SEED": e(_fmt(inp["run"]["seed"])),
        "VERSION": e(_fmt(inp["run"]["sinkopt"])),
        "INPUTS": _inputs_html(inp) + "\n" + _uncertainty_html(data["uncertainty"]),
        "RUN": _run_html(inp),
        "SAFETY": SAFETY_HTML,
        "CSS": _asset("report.css"),
        "DATA_JSON": json_for_script(data),
        # an HTML comment: no "--" inside
        "PLOTLY_LICENSE": e(plotly_header).replace("--", "- -"),
        "PLOTLY_GZ_BASE64": plotly_packed,
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
    """Write the report page to ``path`` (atomically) and, into ``drawings/`` beside it, the
    drawings and design sheets of the short list's designs
    (:func:`sinkopt.results.drawing.write_report_drawings`); return the page's path."""
    path = Path(path)
    text = render_report(results, info)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_name(f".{path.name}.tmp{os.getpid()}")
    tmp.write_text(text, encoding="utf-8")
    os.replace(tmp, path)
    # the drawings the design panel links to (the short list's designs), beside the page
    from sinkopt.results.drawing import DRAWINGS_DIR, write_report_drawings

    write_report_drawings(results, path.parent / DRAWINGS_DIR, info, cautions=SAFETY_HTML)
    return path

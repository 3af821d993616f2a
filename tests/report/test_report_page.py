"""report.html as a file: self-contained, no network, user text escaped; the figures are valid
plotly figures; ``sinkopt report`` rebuilds the page."""
import html
import json
import re
import shutil

import pytest

from sinkopt.cli.main import main
from sinkopt.results.report import (breakdown_figure, fan_system_figure, json_for_script,
                            parcoords_figure, render_report)
from sinkopt.results.report_data import report_data

from report_cases import (DEMO, HOSTILE_DEVICE, HOSTILE_FAN, HOSTILE_FAN_NAME,
                          HOSTILE_STUDY)


def _page(path):
    return path.read_text(encoding="utf-8")


def _without_plotly_bundle(text):
    """The page minus the inlined plotly.js (which names URLs in its own code and comments)."""
    from plotly.offline import get_plotlyjs

    bundle = get_plotlyjs().replace("</script", "<\\/script").replace("<!--", "<\\!--")
    assert text.count(bundle) == 1, "plotly.js must be inlined exactly once"
    return text.replace(bundle, "")


def _scripts(text):
    return re.findall(r"<script\b([^>]*)>(.*?)</script>", text, flags=re.S | re.I)


def test_run_writes_the_report(demo_dir):
    text = _page(demo_dir / "report.html")
    assert text.lower().startswith("<!doctype html>")
    assert "demo inverter" in text


def test_report_needs_no_network(demo_dir):
    """What is checked: (1) nothing outside plotly.js names an http(s) URL; (2) no element
    loads anything: no <script src>, <link>, <img>, <iframe>, <object>, <embed>, CSS url() or
    @import; (3) a Content-Security-Policy forbids every request (default-src 'none',
    connect-src 'none'). The browser test also records every request the page makes."""
    text = _page(demo_dir / "report.html")
    rest = _without_plotly_bundle(text)
    assert not re.search(r"https?://", rest.replace("http://www.w3.org/2000/svg", "")), \
        re.findall(r".{40}https?://.{40}", rest)[:3]
    assert not re.search(r"<(link|img|iframe|object|embed|base)\b", rest, flags=re.I)
    for attrs, _ in _scripts(text):
        assert "src" not in attrs.lower()
    assert not re.search(r"url\(|@import", rest, flags=re.I)
    csp = re.search(r'<meta http-equiv="Content-Security-Policy" content="([^"]+)"', text)
    assert csp
    policy = html.unescape(csp.group(1))
    assert "default-src 'none'" in policy and "connect-src 'none'" in policy


def test_report_is_one_file_with_four_scripts(demo_dir):
    scripts = _scripts(_page(demo_dir / "report.html"))
    kinds = [a.strip() for a, _ in scripts]
    assert kinds[:2] == ['type="application/json" id="sinkopt-data"',
                         'type="application/json" id="sinkopt-figures"']
    assert len(scripts) == 4
    data = json.loads(scripts[0][1])
    assert data["study"] == "demo inverter"
    figures = json.loads(scripts[1][1])
    assert set(figures["designs"]) == set(data["designs"])


def test_json_for_script_cannot_close_the_script_block():
    nasty = {"a": "</script><script>alert(1)</script>", "b": "x & y <!-- \u2028"}
    text = json_for_script(nasty)
    assert "<" not in text and ">" not in text and "&" not in text and "\u2028" not in text
    assert json.loads(text) == nasty


def test_hostile_names_are_text_not_markup(hostile_dir):
    text = _page(hostile_dir / "report.html")
    for raw in (HOSTILE_DEVICE, HOSTILE_STUDY, HOSTILE_FAN, HOSTILE_FAN_NAME, "alert(1)</script>",
                "<img src=", "<b onmouseover"):
        assert raw not in text, raw
    # the names are there, escaped: in the static tables...
    assert html.escape(HOSTILE_DEVICE, quote=False) in text
    assert html.escape(HOSTILE_STUDY, quote=False) in text
    # ...and in the data, which the page's script parses back to the very names
    scripts = _scripts(text)
    assert len(scripts) == 4  # nothing added a script element
    data = json.loads(scripts[0][1])
    assert data["study"] == HOSTILE_STUDY
    assert HOSTILE_DEVICE in [d["name"] for d in data["inputs"]["devices"]]
    assert HOSTILE_FAN in data["pareto"]["points"]["categorical"]["fan"]
    # text handed to plotly is escaped (plotly reads a few HTML-like tags)
    figures = json.loads(scripts[1][1])
    some = next(iter(figures["designs"].values()))
    assert html.escape(HOSTILE_DEVICE, quote=False) in some["breakdown"]["data"][0]["x"]
    js = _page(hostile_dir / "report.html").split('id="sinkopt-figures"')[1]
    assert ".innerHTML" not in js.split("<script>", 2)[-1]  # the page's own script


def test_page_script_never_uses_innerhtml():
    from importlib import resources

    js = resources.files("sinkopt.results").joinpath("report_assets", "report.js").read_text()
    assert "innerHTML" not in js and "insertAdjacentHTML" not in js and "document.write" not in js


def test_figures_are_valid_plotly_figures(demo_results, demo_info):
    import plotly.graph_objects as go

    data = report_data(demo_results, demo_info)
    d = next(iter(data["designs"].values()))
    for fig in (fan_system_figure(d["curves"]), breakdown_figure(d["devices"], d["ambient_C"]),
                parcoords_figure(data["parcoords"])):
        go.Figure(fig)  # raises on any property plotly does not know


def test_fan_system_figure_shades_the_stall_region():
    curves = {"fan": "f", "speed_ratio": 1.0, "stall_limit_m3_s": 0.01,
              "fan_curve": {"flow_m3_s": [0, 0.005, 0.01, 0.02], "pressure_Pa": [50, 40, 42, 0]},
              "fan_curve_rated": None,
              "system_curve": {"flow_m3_s": [0, 0.01, 0.02], "pressure_Pa": [0, 10, 40]},
              "operating_point": {"flow_m3_s": 0.015, "pressure_Pa": 22.0}}
    fig = fan_system_figure(curves)
    (rect,) = fig["layout"]["shapes"]
    assert (rect["x0"], rect["x1"]) == (0, pytest.approx(36.0))  # m³/h
    names = [t["name"] for t in fig["data"]]
    assert "operating point" in names and "fans, stall region" in names
    op = [t for t in fig["data"] if t["name"] == "operating point"][0]
    assert op["x"] == [pytest.approx(54.0)] and op["y"] == [22.0]


def test_report_command_rebuilds_the_page(demo_dir, tmp_path, capsys):
    out = tmp_path / "copy"
    shutil.copytree(demo_dir, out)
    (out / "report.html").unlink()
    assert main(["report", str(out)]) == 0
    text = _page(out / "report.html")
    assert "report rebuilt (UTC)" in text
    data = json.loads(_scripts(text)[0][1])
    assert data["summary"]["trials"] == 60


def test_report_command_falls_back_to_the_copied_study(demo_dir, tmp_path, capsys):
    """The copy in inputs/ is used when the original is gone (its fan paths must resolve: here
    the study names them relative to itself, so the original is given with --study)."""
    out = tmp_path / "copy"
    shutil.copytree(demo_dir, out)
    info = json.loads((out / "run.json").read_text())
    info["inputs"] = {str(tmp_path / "gone" / "demo_inverter.toml"): "0" * 64}
    (out / "run.json").write_text(json.dumps(info))
    # The copy cannot resolve ../catalogs/fans/*.csv from inputs/: a clear input error.
    assert main(["report", str(out)]) == 2
    err = capsys.readouterr().err
    assert "inputs" in err and "--study" in err
    assert main(["report", str(out), "--study", str(DEMO),
                 "--out", str(tmp_path / "r.html")]) == 0
    assert (tmp_path / "r.html").is_file()


def test_report_command_errors(tmp_path, capsys):
    assert main(["report", str(tmp_path / "missing")]) == 2
    assert "results folder not found" in capsys.readouterr().err
    assert main(["report", str(tmp_path)]) == 2
    assert "no run.json" in capsys.readouterr().err


def test_render_report_without_info(demo_results):
    text = render_report(demo_results, None)
    assert "No input checksums were recorded" in text

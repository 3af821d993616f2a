"""report.html as a file: self-contained, no network, user text escaped, plotly.js embedded once,
each number stored once; ``sinkopt report`` rebuilds the page. (The figures, which the page's
script builds, are checked against plotly's schema in test_report_browser.py.)"""
import base64
import gzip
import html
import json
import re
import shutil

import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.results.report import json_for_script, plotly_payload, render_report

from report_cases import (DEMO, HOSTILE_DEVICE, HOSTILE_FAN, HOSTILE_FAN_NAME,
                          HOSTILE_STUDY)


def _page(path):
    return path.read_text(encoding="utf-8")


PLOTLY_SCRIPT = re.compile(r'<script type="application/octet-stream" id="plotly-js"[^>]*>'
                           r'([^<]*)</script>')


def _without_plotly_bundle(text):
    """The page minus the embedded plotly.js (gzip, base64): the installed plotly's bundle,
    whole, embedded exactly once."""
    from plotly.offline import get_plotlyjs

    found = PLOTLY_SCRIPT.findall(text)
    assert len(found) == 1, "plotly.js must be embedded exactly once"
    assert gzip.decompress(base64.b64decode(found[0])).decode("utf-8") == get_plotlyjs()
    return PLOTLY_SCRIPT.sub("", text)


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


def test_report_is_one_file_with_three_scripts(demo_dir):
    text = _page(demo_dir / "report.html")
    scripts = _scripts(text)
    kinds = [a.strip() for a, _ in scripts]
    assert kinds[:2] == ['type="application/json" id="sinkopt-data"',
                         'type="application/octet-stream" id="plotly-js" '
                         'data-encoding="gzip, base64"']
    assert len(scripts) == 3
    data = json.loads(scripts[0][1])
    assert data["study"] == "demo inverter"
    assert sorted(data["designs"]["by_trial"]) == sorted(str(t) for t in data["designs"]["trials"])
    assert scripts[1][1] == plotly_payload()[1]
    assert "plotly.js v" in text and "MIT license" in text  # its licence stays readable


def test_page_data_holds_each_number_once(demo_dir):
    """No figure, drawing or per-design fan curve is stored (the page builds them from the
    points, the per-fan curves and the designs' own values); numbers have at most 6 significant
    digits."""
    text = _page(demo_dir / "report.html")
    raw = _scripts(text)[0][1]
    data = json.loads(raw)
    for gone in ('"shapes"', '"drawing"', '"fan_curve"', '"layout"', '"hovertemplate"'):
        assert gone not in raw, gone
    assert '<table id="pareto-table"' not in text  # built from the data
    for number in re.findall(r"(?<![\w.])-?\d+\.\d+(?:e[-+]?\d+)?", raw):
        digits = number.lstrip("-").split("e")[0].replace(".", "").lstrip("0")
        assert len(digits) <= 6, number
    assert set(data["fans"]) >= set(data["pareto"]["points"]["categorical"]["fan"])
    for d in data["designs"]["by_trial"].values():
        assert not d["command"].startswith("sinkopt")  # the common prefix is stored once
    assert data["designs"]["command_prefix"].startswith("sinkopt evaluate ")


def test_pareto_rows_are_the_points_of_pareto_csv(demo_dir):
    """The page's table and design panel read the Pareto designs' values from the points: they
    are pareto.csv's, to the 6 significant digits the page keeps."""
    data = json.loads(_scripts(_page(demo_dir / "report.html"))[0][1])
    pareto = pd.read_csv(demo_dir / "pareto.csv").set_index("trial")
    pts = data["pareto"]["points"]
    index = {t: i for i, t in enumerate(pts["trial"])}
    designs = data["designs"]
    assert sorted(designs["trials"]) == sorted(pareto.index)
    for c in data["table"]["columns"]:
        key = c["key"]
        if key in ("trial", "n_warnings"):
            continue
        for t in designs["trials"]:
            if key == "fan" or key.startswith("mount_"):
                column = "fan" if key == "fan" else "mounting_" + key[len("mount_"):]
                assert pts["categorical"][key][index[t]] == pareto.loc[t, column]
                continue
            shown = (designs["by_trial"][str(t)]["speed_ratio"] if key == "speed_ratio"
                     else pts["numeric"][key][index[t]])
            assert shown == pytest.approx(pareto.loc[t, key], rel=5e-6), (t, key)


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
    # ...and in the data, which the page's script parses back to the very names (it escapes
    # the text it hands to plotly: see test_report_browser.py)
    scripts = _scripts(text)
    assert len(scripts) == 3  # nothing added a script element
    data = json.loads(scripts[0][1])
    assert data["study"] == HOSTILE_STUDY
    assert HOSTILE_DEVICE in [d["name"] for d in data["inputs"]["devices"]]
    assert HOSTILE_FAN in data["pareto"]["points"]["categorical"]["fan"]
    assert HOSTILE_FAN_NAME in [f["name"] for f in data["fans"].values()]
    js = text.split('id="sinkopt-data"')[1]
    assert ".innerHTML" not in js.split("<script>", 1)[-1]  # the page's own script


def test_page_script_never_uses_innerhtml():
    from importlib import resources

    js = resources.files("sinkopt.results").joinpath("report_assets", "report.js").read_text()
    assert "innerHTML" not in js and "insertAdjacentHTML" not in js and "document.write" not in js
    # the one eval runs the page's own embedded plotly.js
    assert len(re.findall(r"\beval\b", js)) == 1 and "(0, eval)(code)" in js


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

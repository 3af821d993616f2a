"""The uncertainty band and the calibration in the report: in the page's data, in the design
panel (headless Chromium) with the numbers of designs/*.json, and in the study inputs."""
import json
import re
from pathlib import Path

import pytest

from sinkopt.cli.main import main
from sinkopt.results.report_data import BAND_COLUMNS

from test_report_browser import _click_pareto_point, _shot, browser, playwright  # noqa: F401

ROOT = Path(__file__).resolve().parents[2]


def test_page_data_carries_the_band_of_every_pareto_design(demo_dir):
    html = (demo_dir / "report.html").read_text()
    data = json.loads(re.search(r'<script type="application/json" id="sinkopt-data">(.*?)</script>',
                                html, re.S).group(1))
    designs = data["designs"]["by_trial"]
    assert designs
    for trial, d in designs.items():
        rec = json.loads((demo_dir / "designs" / f"trial_{int(trial):06d}.json").read_text())
        band = rec["uncertainty"]
        assert d["band"]["p_exceed"] == pytest.approx(band["p_exceed"], abs=1e-6)
        q1 = data["inputs"]["devices"][0]["name"]
        assert d["band"]["devices"][0][BAND_COLUMNS.index("p95_C")] == pytest.approx(
            band["devices"][q1]["p95_C"], abs=1e-3)
    unc = data["uncertainty"]
    assert unc["margin_basis"] == "nominal" and unc["samples"] == 1000
    assert "Uncertainty</h3>" in html and "junction margin basis" in html


@pytest.mark.browser
def test_design_panel_shows_the_band_and_the_sensitivity(browser, demo_dir):  # noqa: F811
    b = browser()
    page = b.open(demo_dir / "report.html")
    trial = _click_pareto_point(page, 0)
    page.wait_for_selector("#design-band")
    rec = json.loads((demo_dir / "designs" / f"trial_{trial:06d}.json").read_text())
    rows = page.locator("#design-band tbody tr")
    assert rows.count() == len(rec["devices"])
    first = rec["devices"][0]["name"]
    cells = rows.nth(0).locator("td")
    assert cells.nth(0).text_content() == first
    assert float(cells.nth(3).text_content()) == pytest.approx(
        rec["uncertainty"]["devices"][first]["p95_C"], rel=1e-3)
    page.wait_for_selector("#band-plot .main-svg")
    page.wait_for_selector("#sensitivity-plot .main-svg")
    assert "Probability that a junction exceeds its limit" in page.text_content("#band-summary")
    # error bars down to the 5th percentile on the junction-margin axis of the front
    page.select_option("#sel-y", "objective:junction_margin")
    page.wait_for_timeout(300)
    bars = page.evaluate("""() => document.getElementById('pareto2d')._fullData
        .filter(t => t.meta === 'pareto').map(t => (t.error_x && t.error_x.visible) ||
                                                   (t.error_y && t.error_y.visible))""")
    assert any(bars)
    _shot(page, "report-band.png", "#design-panel")


@pytest.fixture(scope="module")
def calibrated_dir(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("calibrated")
    data = json.loads((ROOT / "tests" / "data" / "pires-fonseca_2024.json").read_text())
    rows = ["# width_mm: 41.5", "# length_mm: 90", "# fin_height_mm: 11.3",
            "# fin_thickness_mm: 0.86", "# n_fins: 16", "# base_thickness_mm: 2.7",
            "# air_temperature_C: 20",
            "channel_velocity_m_s,pressure_drop_Pa,thermal_resistance_K_per_W"]
    for p in data["sinks"][0]["points"]:
        rows.append(f"{p['velocity_m_per_s']},{p['pressure_drop_Pa'] or ''},"
                    f"{p['thermal_resistance_K_per_W'] or ''}")
    (tmp / "proto.csv").write_text("\n".join(rows) + "\n")
    text = (ROOT / "studies" / "demo_inverter.toml").read_text()
    study = tmp / "study.toml"
    study.write_text(text.replace("../catalogs/", str(ROOT / "catalogs") + "/"))
    assert main(["calibrate", str(study), str(tmp / "proto.csv")]) == 0
    study.write_text(study.read_text() + '\n[model]\ncalibration = "proto.calibration.toml"\n')
    out = tmp / "res"
    assert main(["run", str(study), "--out", str(out), "--trials", "30", "--seed", "1",
                 "--sampler", "random", "--no-progress"]) == 0
    return out


def test_the_report_shows_the_calibration(calibrated_dir):
    html = (calibrated_dir / "report.html").read_text()
    assert "Model calibration</h3>" in html and "proto.calibration.toml" in html
    assert 'id="calibration-plot"' in html
    assert re.search(r"heat_transfer</td><td>0\.9\d+", html)


@pytest.mark.browser
def test_the_calibration_chart_draws(browser, calibrated_dir):  # noqa: F811
    page = browser().open(calibrated_dir / "report.html")
    page.wait_for_selector("#calibration-plot .main-svg")
    names = page.evaluate("() => document.getElementById('calibration-plot')._fullData"
                          ".map(t => t.name)")
    assert {"measured", "published correlations", "calibrated"} <= set(names)
    _shot(page, "report-calibration.png", "#calibration-plot")

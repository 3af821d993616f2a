"""An unducted sink in a larger duct: the bypass model runs through the whole chain, is labelled
lower confidence, and gives less fin flow (and a warmer junction) than the same sink ducted."""
import contextlib
import io
import json
from pathlib import Path

import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parent.parent


def _study(tmp_path, ducted: bool) -> Path:
    text = (ROOT / "studies" / "demo_inverter.toml").read_text()
    text = text.replace("../catalogs/", str(ROOT / "catalogs") + "/")
    if not ducted:
        text = text.replace("ducted = true", "ducted = false\nduct_width_mm = 160\nduct_height_mm = 80", 1)
    path = tmp_path / ("unducted.toml" if not ducted else "ducted.toml")
    path.write_text(text)
    return path


def _evaluate(path):
    buf = io.StringIO()
    sets = ["width_mm=100", "length_mm=100", "fin_height_mm=40", "fin_thickness_mm=1.5",
            "n_fins=20", "base_thickness_mm=6", "fan=demo-axial-120", "fan_speed=1"]
    with contextlib.redirect_stdout(buf):
        assert main(["evaluate", str(path), "--json", "--set", *sets]) == 0
    return json.loads(buf.getvalue())


def test_unducted_sink_uses_bypass_and_says_so(tmp_path):
    ducted = _evaluate(_study(tmp_path, True))
    open_ = _evaluate(_study(tmp_path, False))
    assert open_["airflow_fins_m3_s"] < open_["airflow_m3_s"]  # part of the air bypasses
    assert ducted["airflow_fins_m3_s"] == pytest.approx(ducted["airflow_m3_s"])
    assert open_["worst_margin_K"] < ducted["worst_margin_K"]
    assert any("bypass" in w and "lower confidence" in w for w in open_["warnings"])
    assert not any("bypass" in w for w in ducted["warnings"])

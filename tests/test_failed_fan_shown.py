"""Issue 16 item 6: the one-fan-failed results (junctions and flow with one fan of the array
stopped) are shown in evaluate's text and JSON, pareto.csv and the design records; a single fan
says the check does not apply instead of a penalty margin. Checks of our own model's
consistency (the stopped fan cannot raise the flow nor cool a junction); the fan-array physics
itself is checked in tests/fans/."""
import json
from pathlib import Path

import pandas as pd
import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
DESIGN = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
          "n_fins": 18, "base_thickness_mm": 6, "fan_speed": 1.0}


@pytest.fixture()
def study(tmp_path):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text.replace("ducted = true ", "ducted = true\nfailed_fan_check = true ")
    path = tmp_path / "ff.toml"
    path.write_text(text)
    return path


def _evaluate(path, fan, capsys, json_out=True):
    sets = [f"{k}={v}" for k, v in DESIGN.items()] + [f"fan={fan}"]
    assert main(["evaluate", str(path), *(["--json"] if json_out else []), "--set", *sets]) == 0
    out = capsys.readouterr().out
    return json.loads(out) if json_out else out


def test_two_fans_show_the_one_stopped_case(study, capsys):
    rec = _evaluate(study, "demo-axial-60 x2", capsys)
    failed = rec["failed_fan"]
    assert failed["applies"] is True
    assert 0 < failed["airflow_m3_s"] < rec["airflow_m3_s"]
    for d in rec["devices"]:
        assert failed["junction_C"][d["name"]] > d["junction_C"]
    assert failed["worst_margin_K"] == pytest.approx(
        min(d["tj_max_C"] - failed["junction_C"][d["name"]] for d in rec["devices"]))
    text = _evaluate(study, "demo-axial-60 x2", capsys, json_out=False)
    assert "one fan stopped     airflow" in text


def test_a_single_fan_says_the_check_does_not_apply(study, capsys):
    rec = _evaluate(study, "demo-axial-60", capsys)
    assert rec["failed_fan"] == {"applies": False, "note": rec["failed_fan"]["note"]}
    assert "single fan has no redundancy" in rec["failed_fan"]["note"]
    assert any("single fan has no redundancy" in f for f in rec["failed_constraints"])
    assert not any("1e+06" in f or "1000000" in f for f in rec["failed_constraints"])
    text = _evaluate(study, "demo-axial-60", capsys, json_out=False)
    assert "does not apply" in text and "1e+06" not in text


def test_pareto_csv_carries_the_one_fan_stopped_columns(study, tmp_path):
    out = tmp_path / "res"
    assert main(["run", str(study), "--trials", "40", "--seed", "2", "--out", str(out)]) in (0, 3)
    front = pd.read_csv(out / "pareto.csv")
    if len(front):
        assert {"failed_fan_check", "failed_fan_airflow_m3_s", "failed_fan_margin_K",
                "tj_Q1_failed_fan_C"} <= set(front.columns)
        assert (front["failed_fan_check"] == "applies").all()  # single fans are infeasible
        assert (front["failed_fan_airflow_m3_s"] < front["airflow_m3_s"]).all()

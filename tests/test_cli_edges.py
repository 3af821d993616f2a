"""What a new user hits at the command line: out-of-range or non-integer --set values, an
infeasible design that says why, a closed pipe, and run options that make no sense."""
import json
import subprocess
import sys
from pathlib import Path

import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"


@pytest.mark.parametrize("setting,message", [
    ("n_fins=12.5", "must be a whole number, got '12.5'"),
    ("width_mm=-5", "-5 is outside what the study allows (the study's range is 60 … 140)"),
    ("fan_speed=1.5", "1.5 is outside what the study allows"),
    ("fin_height_mm=nan", "must be a finite number"),
])
def test_evaluate_refuses_values_the_study_does_not_allow(capsys, setting, message):
    assert main(["evaluate", str(DEMO), "--set", setting]) == 2
    err = capsys.readouterr().err
    assert message in err and f"--set {setting.split('=')[0]}" in err


def test_an_infeasible_design_says_which_constraints_fail_and_by_how_much(capsys):
    args = ["evaluate", str(DEMO), "--set", "width_mm=60", "fin_height_mm=15", "n_fins=10",
            "fan=demo-axial-40", "fan_speed=0"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert "feasible            False" in out
    assert "fails: junction margin:" in out and "K short of the required margin" in out
    assert main([*args, "--json"]) == 0
    rec = json.loads(capsys.readouterr().out)
    assert rec["feasible"] is False and rec["failed_constraints"]


def test_a_footprint_flush_with_the_base_edge_is_on_the_base():
    from sinkopt.model.system import evaluate_params
    from sinkopt.study.reader import load_study

    problem = load_study(DEMO)
    params = {"width_mm": 60, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
              "n_fins": 12, "base_thickness_mm": 6, "fan": "demo-axial-120", "fan_speed": 1.0}
    r = evaluate_params(problem, [params])
    assert r.constraints["devices_on_base_mm"][0] <= 0


def test_evaluate_json_into_a_closed_pipe_is_not_an_internal_error():
    cmd = (f"{sys.executable} -m sinkopt evaluate {DEMO} --json | head -c 10 > /dev/null; "
           "exit ${PIPESTATUS[0]}")
    res = subprocess.run(["bash", "-c", cmd], capture_output=True, text=True, timeout=120)
    assert "internal error" not in res.stderr
    assert res.returncode == 0, res.stderr


@pytest.mark.parametrize("extra,message", [
    (["--trials", "0"], "--trials: must be 1 or more, got 0"),
    (["--trials", "-5"], "--trials: must be 1 or more, got -5"),
    (["--workers", "0"], "--workers: must be 1 or more"),
])
def test_run_refuses_meaningless_counts(tmp_path, capsys, extra, message):
    assert main(["run", str(DEMO), "--out", str(tmp_path / "o"), "--no-progress", *extra]) == 2
    assert message in capsys.readouterr().err
    assert not (tmp_path / "o").exists()


def test_run_into_a_file_is_an_input_error(tmp_path, capsys):
    f = tmp_path / "taken.txt"
    f.write_text("x")
    assert main(["run", str(DEMO), "--out", str(f), "--trials", "8", "--no-progress"]) == 2
    assert "is a file, not a folder" in capsys.readouterr().err
    assert f.read_text() == "x"


def test_no_feasible_design_still_writes_a_readable_pareto_csv(tmp_path, capsys):
    import pandas as pd

    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text.replace("[constraints]\n", "[constraints]\nmax_fan_power_W = 0.000001\n", 1)
    study = tmp_path / "hard.toml"
    study.write_text(text)
    out = tmp_path / "o"
    assert main(["run", str(study), "--out", str(out), "--trials", "16", "--seed", "1",
                 "--no-progress", "--no-report"]) == 3
    front = pd.read_csv(out / "pareto.csv")
    assert len(front) == 0 and {"trial", "width_mm", "worst_margin_K"} <= set(front.columns)

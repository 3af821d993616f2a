"""Issue 16 item 7: people read the fan's real speed (% of rated, and rpm where the fan file
gives its rated speed), not the search's normalised setting. Check of our own bookkeeping: the
fan laws' speed ratio is the setting mapped onto the fan's [speed_min, speed_max]."""
import json
from pathlib import Path

import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.results.report_data import trial_points
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
SETS = ["width_mm=100", "length_mm=100", "fin_height_mm=30", "fin_thickness_mm=1.5",
        "n_fins=18", "base_thickness_mm=6", "fan=demo-axial-60 x2", "fan_speed=0.3"]


def test_evaluate_shows_percent_of_rated_and_rpm(capsys):
    fan = load_study(DEMO).fan("demo-axial-60")
    ratio = fan.speed_min + 0.3 * (fan.speed_max - fan.speed_min)  # 0.5 + 0.3 * 0.5 = 0.65
    assert main(["evaluate", str(DEMO), "--json", "--set", *SETS]) == 0
    rec = json.loads(capsys.readouterr().out)
    assert rec["fan_speed_pct"] == pytest.approx(100 * ratio)
    assert rec["fan_speed_rpm"] == pytest.approx(round(fan.curve.speed_rpm * ratio))
    assert main(["evaluate", str(DEMO), "--set", *SETS]) == 0
    text = capsys.readouterr().out
    assert f"at 65 % of rated speed ({fan.curve.speed_rpm * ratio:.0f} rpm)" in text


def test_results_carry_the_real_speed_not_the_setting(tmp_path):
    out = tmp_path / "r"
    assert main(["run", str(DEMO), "--trials", "30", "--no-report", "--no-progress",
                 "--out", str(out)]) == 0
    front = pd.read_csv(out / "pareto.csv")
    assert {"fan_speed_pct", "fan_speed_rpm"} <= set(front.columns)
    assert front["fan_speed_pct"].between(50 - 1e-9, 100 + 1e-9).all()  # speed = [0.5, 1.0]
    from sinkopt.api import load_results  # noqa: F401  (the folder reads back)
    import optuna

    from sinkopt.results.collect import collect_results
    from sinkopt.search.storage import storage_for

    problem = load_study(DEMO)
    study = optuna.load_study(study_name=problem.name, storage=storage_for(out, None))
    points = trial_points(collect_results(problem, study, with_band=False))
    assert "fan_speed" not in points["numeric"]  # the internal setting is not plotted
    assert "fan_speed_pct" in points["numeric"]

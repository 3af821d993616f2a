"""Issue 14 item 1: the short list. The knee is that of normal-boundary intersection (Das, I.,
Structural Optimization 18:107-115, 1999: the point of the front farthest from the hyperplane
through its anchor points, in normalised objectives); the checks use fronts whose knee is known
by construction. The other picks are extremes of the front's own columns."""
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.results.shortlist import knee_index, short_list

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"


def test_knee_of_a_bent_two_objective_front():
    # two straight pieces meeting at (0.1, 0.3): the farthest point from the anchors' line
    front = [[0.0, 1.0], [0.05, 0.65], [0.1, 0.3], [0.55, 0.15], [1.0, 0.0]]
    assert knee_index(front) == 2


def test_knee_is_scale_free():
    front = np.array([[0.0, 1.0], [0.05, 0.65], [0.1, 0.3], [0.55, 0.15], [1.0, 0.0]])
    assert knee_index(front * [1000.0, 0.01] + [5.0, -3.0]) == 2


def test_knee_of_a_three_objective_front():
    # the anchors (unit vectors) span the plane f1 + f2 + f3 = 1; one design bulges toward the
    # ideal point: it is the knee
    front = [[1, 0, 0], [0, 1, 0], [0, 0, 1], [0.5, 0.5, 0.0], [0.2, 0.2, 0.2], [0.3, 0.3, 0.3]]
    assert knee_index(front) == 4


def test_picks_are_the_extremes_and_the_knee():
    volume = [300.0, 120.0, 200.0]
    power = [0.5, 3.0, 1.0]
    margin = [30.0, 12.0, 20.0]
    picks = {p.name: p.index for p in short_list(volume, power, margin,
                                                  np.c_[volume, power, -np.array(margin)])}
    assert picks["smallest sink"] == 1 and picks["lowest fan power"] == 0
    assert picks["most margin"] == 0 and "balanced (knee)" in picks


def test_the_run_writes_and_prints_the_short_list(tmp_path, capsys):
    out = tmp_path / "r"
    assert main(["run", str(DEMO), "--trials", "60", "--seed", "3", "--no-progress",
                 "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "short list" in printed and "balanced (knee)" in printed
    front = pd.read_csv(out / "pareto.csv")
    names = [n for cell in front["pick"].fillna("") for n in cell.split("+") if n]
    assert sorted(names) == sorted(["smallest sink", "lowest fan power", "most margin",
                                    "balanced (knee)"])
    smallest = front[front["pick"].fillna("").str.contains("smallest sink")]
    assert smallest["volume_cm3"].iloc[0] == pytest.approx(front["volume_cm3"].min())
    assert main(["pick", str(out), "--json"]) == 0
    picks = json.loads(capsys.readouterr().out)
    assert {p["pick"] for p in picks} == set(names)
    assert all(p["trial"] in set(front["trial"]) for p in picks)
    assert main(["pick", str(out)]) == 0
    assert "the knee of the front (Das 1999)" in capsys.readouterr().out
    assert '"shortlist"' in (out / "report.html").read_text(encoding="utf-8")


def test_pick_on_a_folder_without_results_is_a_clear_error(tmp_path, capsys):
    assert main(["pick", str(tmp_path)]) == 2
    assert "no shortlist.json" in capsys.readouterr().err


def test_weighted_pick_by_hand():
    from sinkopt.results.shortlist import weighted_index

    # normalised: (0,1), (0.4,0.3), (1,0); weights (1,3): sums 3, 1.3, 1 -> the third design
    assert weighted_index([[0.0, 10.0], [4.0, 7.0], [10.0, 0.0]], [1.0, 3.0]) == 2
    assert weighted_index([[0.0, 10.0], [2.0, 3.0], [10.0, 0.0]], [1.0, 1.0]) == 1  # 1, 0.5, 1


def _with(tmp_path, table):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/") + table
    path = tmp_path / "w.toml"
    path.write_text(text)
    return path


def test_the_study_weights_add_a_pick(tmp_path, capsys):
    path = _with(tmp_path, "\n[shortlist]\nweights = { fan_power = 3, sink_volume = 1 }\n")
    out = tmp_path / "r"
    assert main(["run", str(path), "--trials", "40", "--seed", "3", "--no-progress",
                 "--out", str(out)]) == 0
    picks = json.loads((out / "shortlist.json").read_text())["picks"]
    mine = [p for p in picks if p["pick"] == "your weights"]
    assert len(mine) == 1 and "fan_power × 3, sink_volume × 1" in mine[0]["reason"]


@pytest.mark.parametrize("table,message", [
    ("weights = { noise = 1 }", "unknown key"),
    ("weights = { fan_power = -1 }", "must be >= 0"),
    ("weights = { fan_power = 0 }", "at least one weight must be > 0"),
])
def test_bad_weights_say_which_key(tmp_path, capsys, table, message):
    path = _with(tmp_path, "\n[shortlist]\n" + table + "\n")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "shortlist" in err and message in err

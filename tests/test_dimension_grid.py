"""Issue 14 item 2: buildable dimensions. The search works on a dimension grid (0.5 mm on width,
length, fin height and base, 0.1 mm on fin thickness: common practice, no source; overridable
in the study), so every reported number is one a drawing can carry and a supplier makes."""
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
GRID = {"width_mm": 0.5, "length_mm": 0.5, "fin_height_mm": 0.5, "base_thickness_mm": 0.5,
        "fin_thickness_mm": 0.1}


def _study(tmp_path, extra=""):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text.replace("base_thickness_mm = [3, 10]", "base_thickness_mm = [3, 10]\n" + extra)
    path = tmp_path / "s.toml"
    path.write_text(text)
    return path


def test_every_reported_design_lies_on_the_grid_and_meets_the_process(tmp_path):
    out = tmp_path / "r"
    assert main(["run", str(DEMO), "--trials", "120", "--seed", "4", "--no-progress",
                 "--out", str(out)]) == 0
    problem = load_study(DEMO)
    for name in ("pareto.csv", "trials.csv"):
        frame = pd.read_csv(out / name)
        assert len(frame)
        for column, step in GRID.items():
            v = frame[column].to_numpy()
            assert np.allclose(v / step, np.round(v / step), rtol=0, atol=1e-6), column
    front = pd.read_csv(out / "pareto.csv")
    proc = problem.process
    assert (front["fin_thickness_mm"] >= proc.min_fin_thickness_m * 1e3 - 1e-9).all()
    assert (front["base_thickness_mm"] >= proc.min_base_thickness_m * 1e3 - 1e-9).all()
    assert (front["fin_gap_mm"] >= proc.min_gap_m * 1e3 - 1e-9).all()
    assert (front["fin_aspect"] <= proc.max_fin_aspect + 1e-9).all()


def test_the_grid_can_be_changed_or_turned_off(tmp_path):
    coarse = load_study(_study(tmp_path, "grid_mm = 2\nfin_thickness_grid_mm = 0.5"))
    assert coarse.variable("width_mm").step == 2 and coarse.variable("fin_thickness_mm").step == 0.5
    off = load_study(_study(tmp_path, "grid_mm = 0\nfin_thickness_grid_mm = 0"))
    assert off.variable("width_mm").step is None and off.variable("fin_thickness_mm").step is None


def test_a_range_between_two_grid_points_is_an_error(tmp_path, capsys):
    path = _study(tmp_path, "grid_mm = 5")
    text = path.read_text().replace("length_mm = [50, 150]", "length_mm = [51, 54]")
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    assert "sink.length_mm: [51, 54] holds no multiple of the 5 mm grid" in capsys.readouterr().err

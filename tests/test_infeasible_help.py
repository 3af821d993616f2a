"""Issue 16 item 5: when nothing is feasible the run names the blocking constraints with the
share of trials each rejects and by how much; `check` says up front which base sizes cannot
carry the footprints, and refuses overlapping footprints. Rules of our own."""
from pathlib import Path

import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"


def _study(tmp_path, old=None, new=None, extra=""):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    if old:
        assert old in text
        text = text.replace(old, new, 1)
    path = tmp_path / "s.toml"
    path.write_text(text + extra)
    return path


def test_no_feasible_design_names_the_blocking_constraints(tmp_path, capsys):
    path = _study(tmp_path, "allow_stall = false", "allow_stall = false\nmax_fan_power_W = 0.05")
    code = main(["run", str(path), "--trials", "20", "--no-report", "--no-progress",
                 "--out", str(tmp_path / "r")])
    assert code == 3
    err = capsys.readouterr().err
    assert "no feasible design found" in err
    line = next(ln for ln in err.splitlines() if ln.strip().startswith("fan power:"))
    assert "rejects 100% of 20 trials" in line and "W over the limit (median;" in line


def test_check_says_which_base_sizes_cannot_carry_the_devices(tmp_path, capsys):
    # B1 moved to x = 70 mm with a 20 mm footprint: the base must be at least 80 mm wide
    path = _study(tmp_path, "center_x_mm = 50", "center_x_mm = 70")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "the device footprints need width >= 80 mm" in out
    assert "(60 mm up) are infeasible" in out


def test_check_refuses_overlapping_footprints(tmp_path, capsys):
    # Q2 at x = 20 mm overlaps Q1 at x = 12 mm (16 mm wide each): 8 mm across, 21 mm along
    path = _study(tmp_path, "center_x_mm = 30", "center_x_mm = 20")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert 'device[2] (name "Q2").center_x_mm' in err
    assert "overlaps that of device Q1 by 8 mm across and 21 mm along the flow" in err


def test_touching_footprints_are_fine(tmp_path, capsys):
    path = _study(tmp_path, "center_x_mm = 30", "center_x_mm = 28")  # edge to edge with Q1
    assert main(["check", str(path)]) == 0

"""``sinkopt calibrate`` end to end on a published measured set, and its bad-input rules.

The measured points are those of Pires-Fonseca & Carrasco-Altemani 2024 (tests/data/
pires-fonseca_2024.json: Fig. 6 pressure drop, Fig. 8 thermal resistance), written as a
prototype's measurement file the way a user would.
"""
import json
import tomllib
from pathlib import Path

import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parents[2]
HEADER = ["# sinkopt-measurements: 1", "# width_mm: 41.5", "# length_mm: 90",
          "# fin_height_mm: 11.3", "# fin_thickness_mm: 0.86", "# n_fins: 16",
          "# base_thickness_mm: 2.7"]


def published_points():
    data = json.loads((ROOT / "tests" / "data" / "pires-fonseca_2024.json").read_text())
    return data["sinks"][0]["points"]


@pytest.fixture
def study(tmp_path):
    text = (ROOT / "studies" / "demo_inverter.toml").read_text()
    path = tmp_path / "study.toml"
    path.write_text(text.replace("../catalogs/", str(ROOT / "catalogs") + "/"))
    return path


def write_measured(tmp_path, lines, header=HEADER + ["# air_temperature_C: 20"], name="proto.csv"):
    path = tmp_path / name
    path.write_text("\n".join(header + lines) + "\n", encoding="utf-8")
    return path


def prototype_csv(tmp_path):
    rows = ["channel_velocity_m_s,pressure_drop_Pa,thermal_resistance_K_per_W"]
    for p in published_points():
        rows.append(f"{p['velocity_m_per_s']},{p['pressure_drop_Pa'] or ''},"
                    f"{p['thermal_resistance_K_per_W'] or ''}")
    return write_measured(tmp_path, rows)


def test_calibrate_end_to_end_then_the_study_runs_on_it(study, tmp_path, capsys):
    measured = prototype_csv(tmp_path)
    assert main(["calibrate", str(study), str(measured)]) == 0
    out = capsys.readouterr().out
    assert "heat_transfer multiplier" in out and "95 % interval" in out
    cal_path = tmp_path / "proto.calibration.toml"
    cal = tomllib.loads(cal_path.read_text())
    m = cal["multipliers"]
    # The measured R lies 4-13 % above the published model (docs/validation.md): h must drop.
    assert 0.8 < m["heat_transfer"] < 0.98
    lo, hi = cal["intervals_95"]["heat_transfer"]
    assert lo < m["heat_transfer"] < hi
    info = cal["info"]
    assert info["rms_error_pressure_drop_after_pct"] < info["rms_error_pressure_drop_before_pct"] / 2
    assert (info["rms_error_thermal_resistance_after_pct"]
            < info["rms_error_thermal_resistance_before_pct"] / 2)
    assert len(cal["points"]) == 25

    design = ["width_mm=100", "length_mm=100", "fin_height_mm=30", "fin_thickness_mm=1.5",
              "n_fins=18", "base_thickness_mm=6", "fan=demo-axial-80-stall", "fan_speed=1"]
    assert main(["evaluate", str(study), "--json", "--set", *design]) == 0
    plain = json.loads(capsys.readouterr().out)
    study.write_text(study.read_text() + '\n[model]\ncalibration = "proto.calibration.toml"\n')
    assert main(["check", str(study)]) == 0
    assert "calibrated from proto.calibration.toml" in capsys.readouterr().out
    assert main(["evaluate", str(study), "--json", "--set", *design]) == 0
    calibrated = json.loads(capsys.readouterr().out)
    # lower h: a warmer junction at the same design (less margin)
    assert calibrated["worst_margin_K"] < plain["worst_margin_K"]


def test_base_temperature_and_power_columns(study, tmp_path, capsys):
    rows = ["flow_m3_h,base_temperature_C,power_W"]
    for q, tb in ((5.0, 60.0), (8.0, 52.0), (12.0, 46.0), (16.0, 43.0), (20.0, 41.5)):
        rows.append(f"{q},{tb},40")
    measured = write_measured(tmp_path, rows)
    assert main(["calibrate", str(study), str(measured), "--out", str(tmp_path / "c.toml")]) == 0
    cal = tomllib.loads((tmp_path / "c.toml").read_text())
    assert set(cal["multipliers"]) == {"heat_transfer"}
    assert cal["points"][0]["thermal_resistance_K_per_W"] == pytest.approx((60 - 20) / 40)


@pytest.mark.parametrize("header,rows,message", [
    (None, ["flow,pressure_drop_Pa", "5,40", "10,90", "15,150"], "missing or unknown flow unit"),
    (None, ["flow_m3_h,pressure_drop", "5,40", "10,90", "15,150"], "missing or unknown pressure unit"),
    (None, ["flow_m3_h,pressure_drop_Pa", "5,40", "-10,90", "15,150"], "flow must be > 0"),
    (None, ["flow_m3_h,pressure_drop_Pa", "5,40"], "1 point(s)"),
    (None, ["flow_m3_h,base_temperature_C,power_W", "5,60,40", "10,15,40", "15,45,40"],
     "not above the inlet air"),
    (HEADER, ["flow_m3_h,pressure_drop_Pa", "5,40", "10,90", "15,150"], "air temperature is missing"),
    (HEADER[:-1] + ["# air_temperature_C: 20"], ["flow_m3_h,pressure_drop_Pa", "5,40", "10,90"],
     "add '# base_thickness_mm: ...'"),
])
def test_bad_measurements_exit_2_and_write_nothing(study, tmp_path, capsys, header, rows, message):
    kw = {} if header is None else {"header": header}
    measured = write_measured(tmp_path, rows, **kw)
    assert main(["calibrate", str(study), str(measured)]) == 2
    err = capsys.readouterr().err
    assert message in err and "proto.csv" in err
    assert not (tmp_path / "proto.calibration.toml").exists()


def test_the_line_and_column_are_named(study, tmp_path, capsys):
    measured = write_measured(tmp_path, ["flow_m3_h,pressure_drop_Pa", "5,40", "-10,90", "15,150"])
    assert main(["calibrate", str(study), str(measured)]) == 2
    assert "proto.csv:11: flow_m3_h: flow must be > 0" in capsys.readouterr().err


def test_too_few_points_for_two_pressure_multipliers_is_refused(study, tmp_path, capsys):
    measured = write_measured(tmp_path, ["flow_m3_h,pressure_drop_Pa", "5,40", "10,90", "15,150"])
    assert main(["calibrate", str(study), str(measured)]) == 2
    err = capsys.readouterr().err
    assert "cannot support 2 multiplier(s)" in err and "--pressure-fit total" in err
    assert not (tmp_path / "proto.calibration.toml").exists()
    # one multiplier on both: 3 points are enough
    assert main(["calibrate", str(study), str(measured), "--pressure-fit", "total"]) == 0


def test_points_that_cannot_separate_friction_from_losses_are_refused(study, tmp_path, capsys):
    """Five points within 2 % of one flow: friction and losses scale alike there."""
    rows = ["flow_m3_h,pressure_drop_Pa"] + [f"{10 + 0.05 * i},{90 + 0.9 * i + (-1) ** i}"
                                             for i in range(5)]
    measured = write_measured(tmp_path, rows)
    assert main(["calibrate", str(study), str(measured)]) == 2
    assert "cannot tell friction from losses apart" in capsys.readouterr().err


def test_a_bad_calibration_file_is_named_by_the_study_check(study, tmp_path, capsys):
    (tmp_path / "bad.toml").write_text("schema = 1\n[multipliers]\nfriktion = 1.1\n")
    study.write_text(study.read_text() + '\n[model]\ncalibration = "bad.toml"\n')
    assert main(["check", str(study)]) == 2
    err = capsys.readouterr().err
    assert "model.calibration" in err and "unknown multiplier 'friktion'" in err


def test_a_calibrated_run_records_its_calibration(study, tmp_path, capsys):
    measured = prototype_csv(tmp_path)
    assert main(["calibrate", str(study), str(measured)]) == 0
    study.write_text(study.read_text() + '\n[model]\ncalibration = "proto.calibration.toml"\n')
    out = tmp_path / "res"
    assert main(["run", str(study), "--trials", "16", "--seed", "1", "--out", str(out),
                 "--no-report", "--no-progress"]) in (0, 3)
    run = json.loads((out / "run.json").read_text())
    assert run["calibration"]["file"] == "proto.calibration.toml"
    assert run["model_options"]["heat_transfer_multiplier"] == pytest.approx(
        run["calibration"]["multipliers"]["heat_transfer"])
    assert any(str(tmp_path / "proto.calibration.toml") == k for k in run["inputs"])
    design = next((out / "designs").glob("*.json"), None)
    if design is not None:
        assert json.loads(design.read_text())["model_calibration"]["file"] == "proto.calibration.toml"

"""Fan-curve files: good files, warnings, and one clear error per kind of bad file."""
from __future__ import annotations

import warnings

import numpy as np
import pytest
from fan_helpers import write

from sinkopt.cli.main import main
from sinkopt.errors import InputError
from sinkopt.fans import FanCurveWarning, load_fan_curve, parse_fan_curve

GOOD = """\
# sinkopt-fan-curve: 1
# name: Test fan
# speed_rpm: 3000
# voltage_V: 12
# power_W: 2.5
# noise_dBA: 30
# air_density_kg_m3: 1.15
# size_mm: 80
# a free comment without a colon is fine
flow_m3_h,pressure_Pa
60,0
0,50
# comments between rows are skipped

30,30
45,16
15,42
"""


def test_good_file(tmp_path):
    fan = load_fan_curve(write(tmp_path, GOOD))
    assert fan.name == "Test fan"
    # sorted by flow; lines follow their points; 1 h = 3600 s
    np.testing.assert_allclose(fan.flow_m3_s, np.array([0, 15, 30, 45, 60]) / 3600, rtol=1e-15)
    np.testing.assert_array_equal(fan.pressure_Pa, [50, 42, 30, 16, 0])
    assert fan.lines == (12, 17, 15, 16, 11)
    assert (fan.speed_rpm, fan.voltage_V, fan.rated_power_W, fan.noise_dBA) == (3000, 12, 2.5, 30)
    assert fan.air_density_kg_m3 == 1.15 and fan.size_mm == 80
    assert fan.flow_unit == "m3/h" and fan.pressure_unit == "Pa"
    assert fan.source == str(tmp_path / "fan.csv")
    assert fan.metadata["name"] == "Test fan"


def test_defaults_name_from_file_and_density(tmp_path):
    fan = load_fan_curve(write(tmp_path, "flow_l/s,pressure_Pa\n0,9\n1,5\n2,0\n", "my_fan.csv"))
    assert fan.name == "my_fan"
    assert fan.air_density_kg_m3 == 1.2  # standard air (AMCA 210 / ISO 5801)
    assert fan.power_W is None and fan.rated_power_W is None and fan.noise_dBA is None


def test_bom_crlf_spreadsheet_header_and_power_column(tmp_path):
    text = ("\ufeffFlow [CFM],Static pressure (inH2O),Power [W]\r\n"
            "0,0.3,2\r\n5,0.2,1.9\r\n10,0,1.7\r\n")
    path = tmp_path / "s.csv"
    path.write_bytes(text.encode("utf-8"))
    fan = load_fan_curve(path)
    np.testing.assert_array_equal(fan.power_W, [2, 1.9, 1.7])
    assert fan.flow_unit == "cfm" and fan.pressure_unit == "inH2O"


def test_extra_columns_ignored_with_warning(tmp_path):
    with pytest.warns(FanCurveWarning, match=r"fan\.csv:1: column 'current_A' ignored"):
        fan = load_fan_curve(write(tmp_path,
                                   "flow_cfm,pressure_Pa,current_A\n0,9,1\n1,5,1\n2,0,1\n"))
    assert fan.flow_m3_s.size == 3


def test_exact_duplicates_dropped_with_warning(tmp_path):
    text = "flow_cfm,pressure_Pa\n0,9\n1,5\n1,5\n2,0\n0,9\n"
    with pytest.warns(FanCurveWarning, match="exact duplicate") as rec:
        fan = load_fan_curve(write(tmp_path, text))
    msgs = [str(w.message) for w in rec]
    assert any(m.endswith("fan.csv:4: exact duplicate of line 3 dropped") for m in msgs)
    assert any(m.endswith("fan.csv:6: exact duplicate of line 2 dropped") for m in msgs)
    assert fan.flow_m3_s.size == 3
    assert fan.lines == (2, 3, 5)


def test_unknown_metadata_key_warns_with_suggestion(tmp_path):
    text = "# speed: 3000\nflow_cfm,pressure_Pa\n0,9\n1,5\n2,0\n"
    pattern = r"fan\.csv:1: unknown metadata key 'speed'.*speed_rpm"
    with pytest.warns(FanCurveWarning, match=pattern):
        load_fan_curve(write(tmp_path, text))


def test_power_column_wins_over_metadata(tmp_path):
    text = "# power_W: 3\nflow_cfm,pressure_Pa,power_W\n0,9,2\n1,5,2\n2,0,2\n"
    with pytest.warns(FanCurveWarning, match="metadata power_W ignored"):
        fan = load_fan_curve(write(tmp_path, text))
    assert fan.rated_power_W is None and fan.power_W is not None


def test_end_points_near_axes_extended_with_warning(tmp_path):
    # last point 2 Pa above 0 (4 % of 50 Pa), first point at 2 % of the flow range:
    text = "flow_l/s,pressure_Pa\n0.2,49\n5,30\n9,6\n10,2\n"
    with pytest.warns(FanCurveWarning) as rec:
        fan = load_fan_curve(write(tmp_path, text))
    msgs = " | ".join(str(w.message) for w in rec)
    assert "fan.csv:5: the curve ends at 2 Pa" in msgs and "extended linearly" in msgs
    assert "fan.csv:2: the curve starts at 0.2 l/s" in msgs
    # last segment (9, 6)-(10, 2) has slope -4 Pa/(l/s): reaches 0 at 10.5 l/s (straight line)
    assert fan.flow_m3_s[-1] == pytest.approx(10.5e-3, rel=1e-12)
    assert fan.pressure_Pa[-1] == 0.0
    # first segment (0.2, 49)-(5, 30): slope -19/4.8, so 49 + 0.2*19/4.8 at 0 flow
    assert fan.flow_m3_s[0] == 0.0
    assert fan.pressure_Pa[0] == pytest.approx(49 + 0.2 * 19 / 4.8, rel=1e-12)
    assert fan.lines == (0, 2, 3, 4, 5, 0)


def test_end_point_far_from_axis_not_extended(tmp_path):
    text = "flow_l/s,pressure_Pa\n0,50\n5,40\n10,25\n"
    with pytest.warns(FanCurveWarning, match="not extended"):
        fan = load_fan_curve(write(tmp_path, text))
    assert fan.flow_m3_s[-1] == 0.01 and fan.pressure_Pa[-1] == 25
    fan2 = load_fan_curve(write(tmp_path, "flow_l/s,pressure_Pa\n0,50\n5,40\n10,2\n"),
                          extend_ends=False)
    assert fan2.pressure_Pa[-1] == 2


HEAD = "flow_cfm,pressure_Pa\n"
# name: (file text, line, column named in the error, message pattern)
BAD = {
    "missing unit": ("flow,pressure_Pa\n0,9\n1,5\n2,0\n", 1, "flow", r"column 'flow' has no unit"),
    "missing pressure unit": ("flow_cfm,pressure\n0,9\n1,5\n2,0\n", 1, "pressure",
                              r"column 'pressure' has no unit"),
    "unknown flow unit": ("flow_ft3min,pressure_Pa\n0,9\n1,5\n2,0\n", 1, "flow_ft3min",
                          r"unknown flow unit 'ft3min'.*m3/s, m3/min, m3/h, l/s, l/min, cfm"),
    "unknown pressure unit": ("flow_cfm,pressure_psi\n0,9\n1,5\n2,0\n", 1, "pressure_psi",
                              r"unknown pressure unit 'psi'.*Pa, kPa, inH2O, mmH2O"),
    "NaN": (HEAD + "0,9\n1,NaN\n2,0\n", 3, "pressure_Pa", r"not a finite number: 'NaN'"),
    "infinite": (HEAD + "0,9\ninf,5\n2,0\n", 3, "flow_cfm", r"not a finite number: 'inf'"),
    "negative": (HEAD + "0,9\n1,5\n2,-0.5\n", 4, "pressure_Pa", r"negative value -0.5"),
    "too few points": (HEAD + "0,9\n2,0\n", 3, "flow_cfm", r"only 2 data point\(s\).*at least 3"),
    "too few after duplicates": (HEAD + "0,9\n0,9\n2,0\n", 4, "flow_cfm", r"only 2 data point"),
    "same flow two pressures": (HEAD + "0,9\n1,5\n2,0\n1,6\n", 5, "pressure_Pa",
                                r"same flow 1 appears with two pressures: line 3 has 5, line 5 "
                                r"has 6"),
    "semicolon separated": ("flow_m3_h;pressure_Pa\n0;9\n1;5\n2;0\n", 1, "column",
                            r"semicolon-separated file"),
    "semicolon comma decimals": ("flow_m3_h;pressure_Pa\n0;9,5\n1;5\n2;0\n", 1, "column",
                                 r"semicolon-separated"),
    "non-numeric": (HEAD + "0,9\n1,abc\n2,0\n", 3, "pressure_Pa", r"not a number: 'abc'"),
    "decimal comma": (HEAD + "0,9\n1,5,5\n2,0\n", 3, "column 3",
                      r"expected 2 values.*decimal comma"),
    "missing value": (HEAD + "0,9\n1\n2,0\n", 3, "pressure_Pa", r"expected 2 values"),
    "empty value": (HEAD + "0,9\n1, \n2,0\n", 3, "pressure_Pa", r"empty value"),
    "no pressure column": ("flow_cfm,current_A\n0,9\n1,5\n2,0\n", 1, "header",
                           r"no pressure column"),
    "two flow columns": ("flow_cfm,flow_m3_h,pressure_Pa\n0,0,9\n", 1, "flow_m3_h",
                         r"two flow columns"),
    "no header": ("0,9\n1,5\n2,0\n", 1, "column 1", r"must be the header"),
    "empty file": ("# name: x\n\n", None, None, r"no header line"),
    "rising at free delivery": (HEAD + "0,9\n1,5\n2,6\n", 4, "pressure_Pa",
                                r"does not fall toward free delivery: line 3 has 5, line 4"),
    "all zero": (HEAD + "0,0\n1,0\n2,0\n", 4, "pressure_Pa", r"every pressure is 0"),
    "unit in metadata value": ("# speed_rpm: 3000 rpm\n" + HEAD + "0,9\n1,5\n2,0\n", 1, "speed_rpm",
                               r"expected a number in rpm, got '3000 rpm'"),
    "bad density": ("# air_density_kg_m3: 0\n" + HEAD + "0,9\n1,5\n2,0\n", 1, "air_density_kg_m3",
                    r"a number > 0"),
    "metadata twice": ("# name: a\n# name: b\n" + HEAD + "0,9\n1,5\n2,0\n", 2, "name",
                       r"given twice \(lines 1 and 2\)"),
    "format version": ("# sinkopt-fan-curve: 2\n" + HEAD + "0,9\n1,5\n2,0\n", 1,
                       "sinkopt-fan-curve", r"unsupported format version '2'"),
}


@pytest.mark.filterwarnings("ignore::sinkopt.fans.FanCurveWarning")
@pytest.mark.parametrize("kind", list(BAD))
def test_bad_file_message_names_file_line_column(tmp_path, kind):
    text, line, column, pattern = BAD[kind]
    path = write(tmp_path, text, "bad_fan.csv")
    with pytest.raises(InputError, match=pattern) as info:
        load_fan_curve(path)
    err = info.value
    expected_source = str(path) if line is None else f"{path}:{line}"
    assert err.source == expected_source
    if column is not None:
        assert column in err.field
    assert str(err).startswith(expected_source)
    assert "bad_fan.csv" in str(err)


@pytest.mark.filterwarnings("ignore::sinkopt.fans.FanCurveWarning")
@pytest.mark.parametrize("kind", list(BAD))
def test_bad_file_cli_exit_2_and_nothing_written(tmp_path, kind, capsys):
    path = write(tmp_path, BAD[kind][0], "bad_fan.csv")
    assert main(["fan", "check", str(path)]) == 2
    assert sorted(p.name for p in tmp_path.iterdir()) == ["bad_fan.csv"]  # no HTML, no temp file
    err = capsys.readouterr().err
    assert err.startswith("sinkopt: error: ") and "bad_fan.csv" in err


def test_missing_file(tmp_path):
    with pytest.raises(InputError, match="cannot read fan curve file"):
        load_fan_curve(tmp_path / "nope.csv")
    assert main(["fan", "check", str(tmp_path / "nope.csv")]) == 2


def test_not_utf8(tmp_path):
    path = tmp_path / "latin.csv"
    path.write_bytes("# name: Lüfter\nflow_cfm,pressure_Pa\n0,9\n1,5\n2,0\n".encode("latin-1"))
    with pytest.raises(InputError, match="not UTF-8"):
        load_fan_curve(path)


def test_duplicate_rows_warning_reaches_cli_stderr(tmp_path, capsys):
    path = write(tmp_path, HEAD + "0,9\n1,5\n1,5\n2,0\n")
    assert main(["fan", "check", str(path), "--no-plot"]) == 0
    assert "warning: " in capsys.readouterr().err


def test_parse_from_text_without_file():
    fan = parse_fan_curve(HEAD + "2,0\n0,9\n1,5\n")
    assert fan.source == "<text>" and fan.lines == (3, 4, 2)


def test_implausible_pressure_for_the_fan_size_warns(tmp_path):
    # issue 16 item 9: Pa values under an inH2O header (26 kPa... as inH2O: 6.5 MPa) for a
    # 25 cfm, 40 mm fan. Bound: Δp ≤ ρ u_tip² (pressure coefficient 2; real fans ≲ 1.2, from
    # memory), u_tip = π D n = π · 0.04 m · 150 /s = 18.85 m/s → 426 Pa at 1.2 kg/m³.
    from sinkopt.fans import FanCurveWarning

    path = write(tmp_path, "# size_mm: 40\n# speed_rpm: 9000\nflow_cfm,pressure_inH2O\n"
                           "0,260\n10,200\n25,0\n")
    with pytest.warns(FanCurveWarning, match=r"above the 426 Pa that its 40 mm rotor"):
        load_fan_curve(path)
    # the same numbers in Pa are a plausible 40 mm fan: no warning
    ok = write(tmp_path, "# size_mm: 40\n# speed_rpm: 9000\nflow_cfm,pressure_Pa\n"
                         "0,260\n10,200\n25,0\n", name="ok.csv")
    with warnings.catch_warnings():
        warnings.simplefilter("error", FanCurveWarning)
        load_fan_curve(ok)


def test_implausible_pressure_without_size_uses_the_tip_speed_cap(tmp_path):
    from sinkopt.fans import FanCurveWarning

    path = write(tmp_path, "flow_cfm,pressure_inH2O\n0,26000\n10,20000\n25,0\n")
    with pytest.warns(FanCurveWarning, match="give '# size_mm:' and '# speed_rpm:'"):
        load_fan_curve(path)

"""Each class of bad input is reported with its dotted path and rule; `sinkopt check` exits 2."""
from __future__ import annotations

import pytest

from sinkopt.cli.main import main
from sinkopt.errors import InputError
from sinkopt.study.reader import load_study

FAN_ENTRY = '  [[air.fan]]\n  file = "fans/*.csv"\n'


def problems_of(path) -> str:
    with pytest.raises(InputError) as info:
        load_study(path)
    return str(info.value)


def assert_check_fails(path, capsys, *needles: str) -> str:
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    for needle in needles:
        assert needle in err, err
    return err


def test_missing_device(write_study, valid_study_text, capsys):
    path = _without_device(write_study, valid_study_text)
    text = problems_of(path)
    assert "1 problem\n" in text
    assert ("  device: missing required section [[device]] (the heat sources on the sink, one "
            "table each)") in text
    assert_check_fails(path, capsys, "missing required section [[device]]")


def _without_device(write_study, text):
    return write_study(text=text[:text.index("[[device]]")] + text[text.index("[sink]"):])


def test_unknown_key_did_you_mean(write_study, capsys):
    path = write_study(("temperature_C = 40", "temperature_F = 104"))
    text = problems_of(path)
    assert ("ambient.temperature_F: unknown key; did you mean temperature_C? "
            "(keys are <quantity>_<unit>)") in text
    assert "ambient: missing required key temperature_C" in text
    assert_check_fails(path, capsys, "ambient.temperature_F: unknown key; did you mean")


def test_unknown_section_did_you_mean(write_study):
    text = problems_of(write_study(("[constraints]", "[constraint]")))
    assert "constraint: unknown section; did you mean constraints?" in text


def test_wrong_unit_in_value(write_study, capsys):
    path = write_study(("power_W = 20", 'power_W = "20 W"'))
    text = problems_of(path)
    assert ('device[1] (name "Q1").power_W: expected a number in W, got "20 W" '
            "(units belong in the key name)") in text
    assert_check_fails(path, capsys, 'device[1] (name "Q1").power_W: expected a number in W')


def test_quoted_number_and_boolean(write_study):
    text = problems_of(write_study(("tj_max_C = 150", 'tj_max_C = "150"'),
                                   ("r_jc_K_per_W = 0.5", "r_jc_K_per_W = true")))
    assert 'tj_max_C: expected a number in °C, got "150" (write numbers without quotes)' in text
    assert "r_jc_K_per_W: expected a number in K/W, got true" in text


def test_impossible_range_low_above_high(write_study, capsys):
    path = write_study(("length_mm = [40, 100]", "length_mm = [100, 40]"))
    text = problems_of(path)
    assert "sink.length_mm: impossible range: low 100 > high 40" in text
    assert_check_fails(path, capsys, "sink.length_mm: impossible range")


def test_negative_size_and_too_few_fins(write_study):
    text = problems_of(write_study(("fin_height_mm = [15, 40]", "fin_height_mm = [-5, 40]"),
                                   ("n_fins = [6, 20]", "n_fins = 1")))
    assert "sink.fin_height_mm[1]: must be > 0 mm, but got -5" in text
    assert "sink.n_fins: must be >= 2, but got 1" in text


def test_fins_cannot_fit(write_study, capsys):
    path = write_study(("n_fins = [6, 20]", "n_fins = [130, 140]"))
    assert_check_fails(path, capsys, "sink.n_fins: the fins cannot fit: the fewest fins 130 x "
                       "the thinnest 1 mm = 130 mm >= the largest width 120 mm")


def test_fins_cannot_keep_the_process_gap(write_study):
    # 70 x 1 mm fits in 120 mm, but not with 69 gaps of at least 2.5 mm (extruded preset)
    text = problems_of(write_study(("n_fins = [6, 20]", "n_fins = [70, 80]")))
    assert "the fins cannot fit" not in text
    assert ("sink.n_fins: the fins cannot keep the extruded process's minimum gap 2.5 mm: "
            "70 fins x 1 mm + 69 gaps = 242.5 mm > the largest width 120 mm") in text


def test_footprint_off_the_largest_base(write_study):
    text = problems_of(write_study(("center_x_mm = 25", "center_x_mm = 115")))
    assert ('device[1] (name "Q1").center_x_mm: the footprint 107..123 mm leaves the base even '
            "at the largest width 120 mm") in text


def test_unknown_material(write_study, capsys):
    path = write_study(('material = "al6063-t5"', 'material = "al6036"'))
    text = problems_of(path)
    assert "sink.material: unknown material 'al6036'; did you mean 'al6063-t5'?" in text
    assert_check_fails(path, capsys, "sink.material: unknown material")


def test_unknown_interface_and_option(write_study):
    text = problems_of(write_study(('interface = "insulating-pad"', 'interface = "paste"'),
                                   ('sampler = "nsga2"', 'sampler = "nsga"')))
    assert 'mounting[1] (name "pad").interface: unknown interface material' in text
    assert 'study.sampler: unknown value "nsga"; did you mean "nsga2"?' in text


def test_missing_fan_file(write_study, capsys):
    path = write_study(('file = "fans/*.csv"', 'file = "fans/missing.csv"'))
    text = problems_of(path)
    assert "air.fan[1].file: file not found: " in text and "missing.csv" in text
    assert_check_fails(path, capsys, "air.fan[1].file: file not found")


def test_glob_matching_nothing(write_study):
    text = problems_of(write_study(('file = "fans/*.csv"', 'file = "nowhere/*.csv"')))
    assert 'air.fan[1].file: "nowhere/*.csv" matches no file' in text


def test_fan_file_error_is_included(write_study, study_dir):
    (study_dir / "fans" / "fan_c.csv").write_text("flow_ft3min,pressure_Pa\n0,1\n",
                                                  encoding="utf-8")
    text = problems_of(write_study())
    assert "air.fan[1].file: " in text
    assert "fan_c.csv:1: flow_ft3min: unknown flow unit 'ft3min'" in text


def test_noise_objective_needs_noise_data(write_study, study_dir):
    csv = (study_dir / "fans" / "fan_b.csv").read_text(encoding="utf-8")
    (study_dir / "fans" / "fan_b.csv").write_text(csv.replace("# noise_dBA: 35\n", ""),
                                                  encoding="utf-8")
    text = problems_of(write_study(('"fan_power", ', '"noise", ')))
    assert "objectives.use: noise needs noise data in every fan file" in text
    assert "fan_b.csv has no '# noise_dBA: ...' line" in text


def test_objectives_rules(write_study):
    text = problems_of(write_study(('use = ["sink_volume", "fan_power", "junction_margin"]',
                                    'use = ["sink_volume", "sink_volume", "tj"]')))
    assert 'objectives.use[3]: unknown objective "tj"' in text
    assert "objectives.use: each objective at most once" in text
    text = problems_of(write_study(('use = ["sink_volume", "fan_power", "junction_margin"]',
                                    'use = ["sink_volume"]')))
    assert "objectives.use: a trade-off needs at least 2 objectives, but got 1" in text


def test_air_supply_rules(write_study):
    text = problems_of(write_study(("[air]\n", "[air]\nflow_m3_per_h = 100\nducted = false\n")))
    assert "air.flow_m3_per_h: give either [[air.fan]] or a known airflow, not both" in text
    assert "air: missing required key duct_width_mm" in text
    text = problems_of(write_study((FAN_ENTRY + "  count = [1, 2]\n  speed = [0.5, 1.0]\n", "")))
    assert "air: give exactly one of [[air.fan]], flow_m3_per_h" in text


def test_toml_syntax_error(write_study, capsys):
    path = write_study(("trials = 50", "trials = "))
    with pytest.raises(InputError) as info:
        load_study(path)
    assert str(info.value).startswith(f"{path}:3: invalid TOML: ")
    assert "(at line 3, column" in str(info.value)
    assert_check_fails(path, capsys, f"{path}:3: invalid TOML")


def test_several_problems_reported_at_once(write_study, capsys):
    path = write_study(("temperature_C = 40", "temperature_F = 104"),
                       ("power_W = 20", 'power_W = "20 W"'),
                       ("length_mm = [40, 100]", "length_mm = [100, 40]"),
                       ('material = "al6063-t5"', 'material = "al6036"'),
                       ('file = "fans/*.csv"', 'file = "fans/missing.csv"'))
    with pytest.raises(InputError) as info:
        load_study(path)
    exc = info.value
    lines = str(exc).splitlines()
    assert lines[0] == f"{path}: 6 problems"
    assert all(line.startswith("  ") for line in lines[1:]) and len(lines) == 7
    assert len(exc.problems) == 6
    fields = [field for field, _ in exc.problems]
    assert fields == ["ambient.temperature_F", "ambient", 'device[1] (name "Q1").power_W',
                      "sink.material", "sink.length_mm", "air.fan[1].file"]
    assert_check_fails(path, capsys, "6 problems")


def test_unreadable_study(tmp_path, capsys):
    assert_check_fails(tmp_path / "nope.toml", capsys, "cannot read study file")

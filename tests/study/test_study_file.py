"""A valid study resolves to the expected Problem, in SI units."""
from __future__ import annotations

import math
from pathlib import Path

import pytest

from sinkopt.model.problem import AirSupply, Problem
from sinkopt.study.reader import (fan_choices, fan_label, fan_speed_ratio, load_study,
                                parse_study)


def test_valid_study_resolves_to_problem(study_dir):
    p = load_study(study_dir / "study.toml")
    assert isinstance(p, Problem)
    assert (p.name, p.trials, p.seed, p.sampler) == ("unit test", 50, 7, "nsga2")
    assert p.conditions.ambient_C == 40 and p.conditions.altitude_m == 2000
    # min_junction_margin_K defaults to 10 K (common practice) and is the required margin
    assert p.limits.min_junction_margin_K == 10 == p.conditions.required_margin_K
    assert p.limits.max_height_m == pytest.approx(0.060)
    assert p.limits.max_width_m is None and p.limits.allow_stall is False
    (d,) = p.devices
    assert (d.name, d.power, d.tj_max, d.r_jc) == ("Q1", 20, 150, 0.5)
    assert (d.center_x, d.center_y, d.size_x, d.size_y) == pytest.approx((0.025, 0.020, 0.016, 0.020))
    (stack,) = d.stacks
    # insulating-pad 1.2 K cm^2/W over 200 mm^2 = 1.2e-4 / 2e-4 = 0.6 K/W
    assert stack.contact_area == pytest.approx(200e-6)
    assert stack.resistance() == pytest.approx(0.6)
    assert (p.material_name, p.conductivity, p.density) == ("al6063-t5", 205, 2700)
    assert p.process.name == "extruded"
    assert p.process.min_fin_thickness_m == pytest.approx(1e-3)
    assert p.process.min_gap_m == pytest.approx(2.5e-3)
    assert p.objectives == ("sink_volume", "fan_power", "junction_margin")
    assert p.source == (study_dir / "study.toml").resolve()
    assert p.inputs == (p.source, (study_dir / "fans/fan_a.csv").resolve(),
                        (study_dir / "fans/fan_b.csv").resolve())


def test_variables_and_fan_labels(study_dir):
    p = load_study(study_dir / "study.toml")
    names = [v.name for v in p.variables]
    assert names == ["width_mm", "length_mm", "fin_height_mm", "fin_thickness_mm", "n_fins",
                     "base_thickness_mm", "fan", "fan_speed"]
    w = p.variable("width_mm")
    assert (w.kind, w.low, w.high, w.is_fixed) == ("float", 50, 120, False)
    n = p.variable("n_fins")
    assert (n.kind, n.low, n.high) == ("int", 6, 20)
    b = p.variable("base_thickness_mm")
    assert b.is_fixed and b.fixed == 5
    fan = p.variable("fan")
    assert fan.kind == "categorical"
    assert fan.choices == ("fan_a", "fan_a x2", "fan_b", "fan_b x2")
    speed = p.variable("fan_speed")
    assert (speed.low, speed.high, speed.is_fixed) == (0.0, 1.0, False)
    option, count = fan_choices(p.air)["fan_b x2"]
    assert (option.key, count, option.arrangement) == ("fan_b", 2, "parallel")
    assert option.curve.p_max_Pa == pytest.approx(120)
    assert option.curve.q_free_m3_s == pytest.approx(100 / 3600)
    assert fan_speed_ratio(option, 0.0) == 0.5 and fan_speed_ratio(option, 1.0) == 1.0
    assert p.fan("fan_a").counts == (1, 2)


def test_fixed_speed_and_single_fan_fix_the_variables(write_study):
    path = write_study(('file = "fans/*.csv"', 'file = "fans/fan_a.csv"'),
                       ("count = [1, 2]", "count = 3"), ("speed = [0.5, 1.0]", "speed = 0.8"))
    p = load_study(path)
    fan = p.variable("fan")
    assert fan.choices == (fan_label("fan_a", 3),) == ("fan_a x3",) and fan.fixed == "fan_a x3"
    assert p.variable("fan_speed").fixed == 0.0
    assert (p.air.fans[0].speed_min, p.air.fans[0].speed_max) == (0.8, 0.8)


def test_known_airflow_has_no_fan_variables(write_study):
    path = write_study(('  [[air.fan]]\n  file = "fans/*.csv"\n  count = [1, 2]\n'
                        '  speed = [0.5, 1.0]\n', "flow_cfm = 20\n"),
                       ('"fan_power", ', ""))
    p = load_study(path)
    assert isinstance(p.air, AirSupply) and not p.air.uses_fans
    assert p.air.fixed_flow_m3_s == pytest.approx(20 * 0.3048**3 / 60)
    assert [v.name for v in p.variables][-1] == "base_thickness_mm"
    assert p.inputs == (path.resolve(),)


def test_mountings_make_a_categorical_variable(write_study):
    extra = '''
  [[device.mounting]]
  name = "board"
  interface_K_cm2_per_W = 2.0
  contact_area_mm2 = 400
    [[device.mounting.layer]]
    name = "vias"
    vias = 1
    via_drill_mm = 0.3
    via_plating_um = 25
    board_thickness_mm = 1.6
    pad_area_mm2 = 0.07069
    [[device.mounting.layer]]
    name = "spreader"
    thickness_mm = 2
    conductivity_W_per_mK = 400
'''
    path = write_study(("  contact_area_mm2 = 200\n", "  contact_area_mm2 = 200\n" + extra))
    p = load_study(path)
    v = p.variable("mount_Q1")
    assert (v.kind, v.choices) == ("categorical", ("pad", "board"))
    board = p.devices[0].stacks[1]
    assert board.interface_specific_resistance == pytest.approx(2e-4)
    names = [n for n, _ in board.layer_resistances()]
    assert names == ["vias", "spreader", "interface (specified)"]
    # one via, pad = hole area: the stack module's worked example, 192.41 K/W
    assert board.layers[0].resistance() == pytest.approx(192.41, abs=0.01)
    # slab area defaults to the contact area: 2 mm / (400 * 400e-6) = 0.0125 K/W
    assert board.layers[1].resistance() == pytest.approx(0.0125)


def test_process_preset_and_override(write_study):
    path = write_study(('process = "extruded"', 'process = "skived"\nmin_gap_mm = 1.2'),
                       ("fin_thickness_mm = [1.0, 2.0]", "fin_thickness_mm = [0.3, 1.0]"))
    p = load_study(path)
    assert p.process.name == "skived"
    assert p.process.min_gap_m == pytest.approx(1.2e-3)
    assert p.process.min_fin_thickness_m == pytest.approx(0.3e-3)


def test_model_options_and_unducted_bypass(write_study):
    path = write_study(("[air]\n", "[air]\nducted = false\nduct_width_mm = 150\n"
                                   "duct_height_mm = 80\nextra_loss_coefficient = 1.5\n"
                                   "extra_loss_area_mm2 = 5000\n"),
                       ("[constraints]", '[model]\nheat_transfer = "muzychka_yovanovich"\n'
                                         'exit_loss = "borda_carnot"\n\n[constraints]'))
    p = load_study(path)
    assert p.air.ducted is False and p.air.duct_area_m2 == pytest.approx(0.012)
    assert p.air.extra_loss_coefficient == 1.5 and p.air.extra_loss_area_m2 == pytest.approx(5e-3)
    assert p.options.heat_transfer == "muzychka_yovanovich"
    assert p.options.exit_loss == "borda_carnot"


def test_extra_impedance_file_in_si(write_study, study_dir):
    (study_dir / "filter.csv").write_text("# air_density_kg_m3: 1.15\nflow_l/s,pressure_mmH2O\n"
                                          "0,0\n10,1\n20,4\n", encoding="utf-8")
    p = load_study(write_study(("[air]\n", '[air]\nextra_impedance_file = "filter.csv"\n')))
    q, dp = p.air.extra_impedance
    assert q == pytest.approx((0.0, 0.01, 0.02))
    assert dp == pytest.approx((0.0, 9.80665, 4 * 9.80665))
    assert p.air.extra_impedance_density == 1.15
    assert (study_dir / "filter.csv").resolve() in p.inputs


def test_parse_study_uses_base_dir(study_dir, valid_study_text):
    p = parse_study(valid_study_text, "inline.toml", base_dir=study_dir)
    assert [f.key for f in p.air.fans] == ["fan_a", "fan_b"]
    assert p.source is None


@pytest.mark.parametrize("name", ["demo_inverter.toml", "demo_mounting.toml"])
def test_demo_studies_are_valid(name):
    root = Path(__file__).resolve().parents[2]
    if not list((root / "catalogs" / "fans").glob("*.csv")):
        pytest.skip("no fan catalog yet")
    p = load_study(root / "studies" / name)
    assert len(p.devices) >= 4
    assert p.objectives == ("sink_volume", "fan_power", "junction_margin")
    assert p.conditions.required_margin_K == 10
    assert 1000 <= p.conditions.altitude_m <= 2000 and 40 <= p.conditions.ambient_C <= 45
    assert all(math.isfinite(s.resistance()) for d in p.devices for s in d.stacks)
    if name == "demo_mounting.toml":
        assert all(p.variable(f"mount_{d.name}").kind == "categorical" for d in p.devices)

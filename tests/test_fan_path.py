"""Issue 16 item 8: the air path from the fans to the fin field (docs/theory.md#fan-to-sink-air-path)
and the near-stall warning.

References: Borda–Carnot sudden expansion K = (1 − A1/A2)² on the upstream velocity (momentum
balance; Idelchik's handbook, White's Fluid Mechanics: from memory); sudden contraction
K ≈ 0.5 (1 − A2/A1) on the downstream velocity (same texts, the 0.5 form from memory); the free
discharge loses one velocity head (K = 1, the definition of static pressure). The hand values
below are computed here from those formulas, independently of the code's arrangement.
"""
import dataclasses
import json
import math
from pathlib import Path

import numpy as np
import pytest

from sinkopt.cli.main import main
from sinkopt.model.columns import geometry_of, to_columns
from sinkopt.model.system import evaluate_params, fan_face_area, fan_path_dp
from sinkopt.results.report_data import system_curves
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
DESIGN = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
          "n_fins": 18, "base_thickness_mm": 6, "fan": "demo-axial-60 x2", "fan_speed": 0.3}
RHO = 1.0


@pytest.fixture(scope="module")
def demo():
    return load_study(DEMO)


def _air(problem, **kw):
    return dataclasses.replace(problem, air=dataclasses.replace(problem.air, **kw))


def test_contraction_and_discharge_by_hand(demo):
    # two 60 mm fans (5654.9 mm²) onto a 100 x 30 mm fin field (3000 mm²): contraction
    g = geometry_of(demo, to_columns(demo, [DESIGN]))
    area = fan_face_area(demo, [DESIGN["fan"]])
    assert area[0] == pytest.approx(2 * math.pi / 4 * 0.060 ** 2)
    q = 0.01
    v_face = q / (0.100 * 0.030)
    k_contraction = 0.5 * (1 - 0.003 / area[0])
    expected = (1.0 + k_contraction) * 0.5 * RHO * v_face ** 2
    assert fan_path_dp(demo, g, [q], RHO, area)[0] == pytest.approx(expected, rel=1e-12)
    # without the discharge: the contraction alone; "none": nothing
    no_dis = _air(demo, discharge_loss=False)
    assert fan_path_dp(no_dis, g, [q], RHO, area)[0] == pytest.approx(
        k_contraction * 0.5 * RHO * v_face ** 2, rel=1e-12)
    assert fan_path_dp(_air(no_dis, fan_to_sink="none"), g, [q], RHO, area)[0] == 0.0


def test_expansion_and_plenum_by_hand(demo):
    # one 40 mm fan (1256.6 mm²) onto a 140 x 50 mm fin field (7000 mm²): sudden expansion
    design = dict(DESIGN, width_mm=140, fin_height_mm=50, fan="demo-axial-40")
    g = geometry_of(demo, to_columns(demo, [design]))
    area = fan_face_area(demo, [design["fan"]])
    q = 0.004
    v_fan, v_face = q / area[0], q / 0.007
    expected = (1 - area[0] / 0.007) ** 2 * 0.5 * RHO * v_fan ** 2 + 0.5 * RHO * v_face ** 2
    assert fan_path_dp(demo, g, [q], RHO, area)[0] == pytest.approx(expected, rel=1e-12)
    plenum = _air(demo, fan_to_sink="plenum")
    assert fan_path_dp(plenum, g, [q], RHO, area)[0] == pytest.approx(
        0.5 * RHO * (v_fan ** 2 + v_face ** 2), rel=1e-12)


def test_the_path_lowers_the_flow_and_the_system_curve_shows_it(demo):
    with_path = evaluate_params(demo, [DESIGN])
    bare = evaluate_params(_air(demo, fan_to_sink="none", discharge_loss=False), [DESIGN])
    assert with_path.flow_total[0] < 0.95 * bare.flow_total[0]
    assert with_path.system_pressure[0] > bare.system_pressure[0]
    # the panel's system curve passes through the operating point (same losses)
    curve = system_curves(demo, [DESIGN], [[with_path.flow_total[0]]])
    assert curve[0, 0] == pytest.approx(with_path.system_pressure[0], rel=1e-6)


def test_known_flow_has_no_fan_path(tmp_path, capsys):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    start = text.index("  [[air.fan]]")
    end = text.index("[objectives]")
    text = text[:start] + "flow_m3_per_h = 40\nfan_to_sink = \"plenum\"\n\n" + text[end:]
    text = text.replace('"fan_power", ', "")
    path = tmp_path / "s.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    assert "air.fan_to_sink: describes the air path from fans" in capsys.readouterr().err


def test_near_stall_operating_points_warn(demo):
    # the demo's stall-dip fan at half speed on a 100 mm sink: flow ratios to the knee found
    # by this model of 1.055 (near), 1.29 (clear) and 0.77 (in stall)
    knee_at = demo.fan("demo-axial-80-stall").curve.q_stall_limit_m3_s
    base = dict(DESIGN, fan="demo-axial-80-stall", fan_speed=0.0, length_mm=100,
                fin_thickness_mm=1.0, width_mm=140)
    designs = [dict(base, n_fins=10, fin_height_mm=15), dict(base, n_fins=20, fin_height_mm=25),
               dict(base, n_fins=20, fin_height_mm=15)]
    r = evaluate_params(demo, designs)
    ratio = r.flow_total / (knee_at * r.speed_ratio)
    assert ratio[0] < 1.15 and ratio[1] > 1.15 and ratio[2] < 1.0
    assert r.near_stall.tolist() == [True, False, False]
    assert r.in_stall.tolist() == [False, False, True]
    assert any("within 15% of its stall knee" in w for w in r.warnings(0))
    assert not any("stall knee" in w for w in r.warnings(1))

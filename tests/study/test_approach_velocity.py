"""What a known approach velocity means (docs/theory.md#approach-velocity-and-duct-section):
ducted, it acts on the fin region W × H, or on the whole face W × (H + t_b) when the base stands
in the air stream; unducted, it is the duct's mean velocity over the duct section. The rule is
geometry (continuity, Q = V A), checked here on the evaluated flows."""
import contextlib
import io
import json
import re
from pathlib import Path

import numpy as np
import pytest

from sinkopt.cli.main import main
from sinkopt.model.design import SinkGeometry
from sinkopt.physics.air import AirProperties
from sinkopt.physics.bypass import flow_fraction_lossless_bypass
from sinkopt.physics.heatsink import sink_hydraulics

ROOT = Path(__file__).resolve().parents[2]
DESIGN = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 40, "fin_thickness_mm": 1.5,
          "n_fins": 20, "base_thickness_mm": 6}


def _study(tmp_path, air: str) -> Path:
    text = (ROOT / "studies" / "demo_inverter.toml").read_text()
    text = text.replace("../catalogs/", str(ROOT / "catalogs") + "/")
    a = text.index("[air]")
    b = text.index("[objectives]")
    text = text[:a] + "[air]\n" + air + "\n\n" + text[b:]
    text = text.replace('use = ["sink_volume", "fan_power", "junction_margin"]',
                        'use = ["sink_volume", "junction_margin"]')
    path = tmp_path / "study.toml"
    path.write_text(text)
    return path


def _evaluate(path) -> dict:
    buf = io.StringIO()
    sets = [f"{k}={v}" for k, v in DESIGN.items()]
    with contextlib.redirect_stdout(buf):
        assert main(["evaluate", str(path), "--json", "--set", *sets]) == 0
    return json.loads(buf.getvalue())


def test_ducted_velocity_acts_on_the_fin_region(tmp_path):
    out = _evaluate(_study(tmp_path, "approach_velocity_m_per_s = 3.0"))
    assert out["airflow_m3_s"] == pytest.approx(3.0 * 0.100 * 0.040, rel=1e-12)


def test_base_in_the_stream_widens_the_face(tmp_path):
    out = _evaluate(_study(tmp_path, "approach_velocity_m_per_s = 3.0\nbase_in_airstream = true"))
    assert out["airflow_m3_s"] == pytest.approx(3.0 * 0.100 * (0.040 + 0.006), rel=1e-12)


def test_unducted_velocity_is_the_duct_mean_velocity(tmp_path):
    out = _evaluate(_study(tmp_path, "approach_velocity_m_per_s = 3.0\nducted = false\n"
                                     "duct_width_mm = 160\nduct_height_mm = 80"))
    assert out["airflow_m3_s"] == pytest.approx(3.0 * 0.160 * 0.080, rel=1e-12)
    assert out["airflow_fins_m3_s"] < out["airflow_m3_s"]


def test_check_prints_the_face_and_the_resulting_flow(tmp_path, capsys):
    assert main(["check", str(_study(tmp_path, "approach_velocity_m_per_s = 2.0"))]) == 0
    text = capsys.readouterr().out
    assert "over the fin region W × fin height" in text
    # demo ranges: width 60..140 mm, fin height 15..50 mm -> 2 m/s x 0.06 x 0.015 .. x 0.14 x 0.05
    m = re.search(r"resulting flow ([\d.e-]+) … ([\d.e-]+) m³/s", text)
    assert m, text
    assert float(m.group(1)) == pytest.approx(2.0 * 0.060 * 0.015, rel=1e-3)
    assert float(m.group(2)) == pytest.approx(2.0 * 0.140 * 0.050, rel=1e-3)


def test_check_prints_the_bypass_clearances(tmp_path, capsys):
    path = _study(tmp_path, "approach_velocity_m_per_s = 2.0\nducted = false\n"
                            "duct_width_mm = 160\nduct_height_mm = 80")
    assert main(["check", str(path)]) == 0
    text = capsys.readouterr().out
    assert "clearance above the fin tips 30 … 65 mm" in text  # 80 - 50 .. 80 - 15
    assert "side clearance 20 … 100 mm" in text


def test_base_in_airstream_is_refused_where_it_means_nothing(tmp_path, capsys):
    path = _study(tmp_path, "base_in_airstream = true\nflow_m3_per_h = 100")
    assert main(["check", str(path)]) == 2
    assert "air.base_in_airstream" in capsys.readouterr().err


def test_bypass_base_in_stream_equals_a_smaller_duct():
    """Identity of the model: a base of thickness t_b in the stream removes W t_b of the duct
    section and nothing else."""
    air = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)
    g = SinkGeometry.of(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001,
                        n_fins=20, base_thickness=0.005)

    def dp(q):
        return sink_hydraulics(g.width, g.length, g.fin_height, g.fin_thickness, g.n_fins, q,
                               air).pressure_drop

    q = np.array([3e-3, 6.3e-3, 1e-2])
    in_stream = flow_fraction_lossless_bypass(dp, g, q, 2.1e-3, air.density,
                                              base_in_airstream=True)
    smaller = flow_fraction_lossless_bypass(dp, g, q, 2.1e-3 - 0.05 * 0.005, air.density)
    flush = flow_fraction_lossless_bypass(dp, g, q, 2.1e-3, air.density)
    np.testing.assert_allclose(in_stream, smaller, rtol=1e-12)
    assert np.all(in_stream > flush)  # less room to bypass: more air through the fins

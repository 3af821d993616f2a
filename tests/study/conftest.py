"""Fixtures for the study-file tests: a valid study and an invented fan curve in a temp folder."""
from __future__ import annotations

import pytest

#: Invented fan curve (not a real product): 0-100 m3/h, 0-80 Pa.
FAN_CSV = """\
# sinkopt-fan-curve: 1
# name: test fan (invented)
# speed_rpm: 3000
# power_W: 2.5
# noise_dBA: 35
# size_mm: 60
flow_m3_h,pressure_Pa
0,80
25,70
50,52
75,28
100,0
"""

VALID_STUDY = """\
[study]
name = "unit test"
trials = 50
seed = 7
sampler = "nsga2"

[ambient]
temperature_C = 40
altitude_m = 2000

[[device]]
name = "Q1"
power_W = 20
tj_max_C = 150
r_jc_K_per_W = 0.5
center_x_mm = 25
center_y_mm = 20
footprint_x_mm = 16
footprint_y_mm = 20
  [[device.mounting]]
  name = "pad"
  interface = "insulating-pad"
  contact_area_mm2 = 200

[sink]
material = "al6063-t5"
process = "extruded"
width_mm = [50, 120]
length_mm = [40, 100]
fin_height_mm = [15, 40]
fin_thickness_mm = [1.0, 2.0]
n_fins = [6, 20]
base_thickness_mm = 5

[air]
  [[air.fan]]
  file = "fans/*.csv"
  count = [1, 2]
  speed = [0.5, 1.0]

[objectives]
use = ["sink_volume", "fan_power", "junction_margin"]

[constraints]
max_height_mm = 60
"""


@pytest.fixture
def valid_study_text():
    return VALID_STUDY


@pytest.fixture
def study_dir(tmp_path):
    """A folder with fans/fan_a.csv, fans/fan_b.csv and study.toml (VALID_STUDY)."""
    (tmp_path / "fans").mkdir()
    (tmp_path / "fans" / "fan_a.csv").write_text(FAN_CSV, encoding="utf-8")
    (tmp_path / "fans" / "fan_b.csv").write_text(FAN_CSV.replace("80\n", "120\n", 1),
                                                 encoding="utf-8")
    (tmp_path / "study.toml").write_text(VALID_STUDY, encoding="utf-8")
    return tmp_path


@pytest.fixture
def write_study(study_dir):
    """Write ``VALID_STUDY`` edited by (old, new) replacements; return the path."""

    def write(*edits: tuple[str, str], text: str | None = None):
        text = VALID_STUDY if text is None else text
        for old, new in edits:
            assert old in text, old
            text = text.replace(old, new)
        path = study_dir / "edited.toml"
        path.write_text(text, encoding="utf-8")
        return path

    return write

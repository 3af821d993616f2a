"""The demo fan catalog: invented data, clearly marked, loading cleanly in varied units."""
from __future__ import annotations

import warnings

import pytest
from fan_helpers import CATALOG

from sinkopt.fans import FanArray, load_fan_curve, solve_operating_point

FILES = sorted(CATALOG.glob("*.csv"))


def test_catalog_size():
    assert 4 <= len(FILES) <= 6


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_catalog_file_loads_cleanly_and_is_marked_invented(path):
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        fan = load_fan_curve(path)
    assert fan.metadata["note"] == "invented demo data, not a real product"
    assert fan.name.startswith("Demo ")
    assert fan.size_mm and fan.speed_rpm and fan.noise_dBA is not None
    assert fan.metadata["sinkopt-fan-curve"] == "1"
    assert fan.pressure_Pa[-1] == 0 and fan.flow_m3_s[0] == 0  # both axes in the data
    assert fan.power_W is not None or fan.rated_power_W is not None
    # a failed-fan array can be built (size_mm gives the leak area)
    FanArray(fan, count=2, failed=1)


def test_catalog_exercises_varied_units():
    units = {(f.flow_unit, f.pressure_unit) for f in map(load_fan_curve, FILES)}
    assert {("cfm", "inH2O"), ("m3/h", "Pa"), ("m3/min", "mmH2O")} <= units
    assert len(units) >= 4


def test_catalog_has_sizes_stall_and_high_pressure():
    fans = [load_fan_curve(p) for p in FILES]
    assert {40, 60, 80, 120} <= {f.size_mm for f in fans}
    assert any(f.has_stall_region for f in fans)
    assert any(f.p_max_Pa > 500 for f in fans)


@pytest.mark.parametrize("path", FILES, ids=lambda p: p.name)
def test_catalog_fan_operating_point_on_a_moderate_system(path):
    fan = load_fan_curve(path)
    # a system that takes half the max pressure at 70 % of free delivery: a stable-branch point
    k = 0.5 * fan.p_max_Pa / (0.7 * fan.q_free_m3_s) ** 2
    op = solve_operating_point(fan, lambda q: k * q**2)
    assert op.feasible(allow_stall=True)[0]

"""The fans-stopped checks (sinkopt.model.fans_stopped) on the demo study: the still-air steady
state balances its heat, the largest still-air load puts the hottest junction at its limit,
and the fan-stop event is consistent with its own trace and with the still-air steady state.

Outside references for the parts are in tests/physics/test_natural_convection.py,
test_radiation.py and test_transient.py (ht, handbook limits, analytic RC responses); these
tests check how the model layer composes them (energy balance, monotonicity, consistency).
"""
import dataclasses
import json
from pathlib import Path

import numpy as np
import pytest

from sinkopt.cli.main import main
from sinkopt.model.fans_stopped import (fans_stopped_of, largest_still_air_load,
                                        still_air_conductance, still_air_steady)
from sinkopt.model.columns import geometry_of as _geometry
from sinkopt.model.system import evaluate_params, to_columns
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "studies" / "demo_inverter.toml"
SMALL = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
         "n_fins": 18, "base_thickness_mm": 6, "fan": "demo-axial-80-stall", "fan_speed": 1.0}
LARGE = dict(SMALL, width_mm=140, length_mm=150, fin_height_mm=50, n_fins=14,
             fan="demo-axial-60 x2", fan_speed=0.3)


@pytest.fixture(scope="module")
def demo():
    problem = load_study(DEMO)
    assert problem.still_air is not None and problem.still_air.orientation == "fins_vertical"
    return problem


def _geom(problem, params):
    return _geometry(problem, to_columns(problem, params))


def test_still_air_steady_state_balances_its_heat(demo):
    g = _geom(demo, [SMALL, LARGE])
    for fraction in (0.1, 0.25, 1.0):
        tj, rise, conductance = still_air_steady(demo, g, fraction)
        heat = fraction * sum(d.power for d in demo.devices)
        np.testing.assert_allclose(conductance * rise, heat, rtol=1e-6)
        # the junctions sit above the mean sink temperature
        assert np.all(tj > demo.conditions.ambient_C + rise[:, None])
    # more load, hotter; the larger sink runs cooler
    t1, _, _ = still_air_steady(demo, g, 0.2)
    t2, _, _ = still_air_steady(demo, g, 0.4)
    assert np.all(t2 > t1) and np.all(t1[1] < t1[0])


def test_still_air_conductance_rises_with_temperature(demo):
    """Natural convection h ∝ ΔT^¼ and radiation ∝ T³: the conductance grows with the rise."""
    fn = still_air_conductance(demo, _geom(demo, [SMALL]))
    values = [float(fn(np.array([dt]))[0]) for dt in (5, 20, 60, 120)]
    assert values == sorted(values)


def test_the_largest_still_air_load_puts_the_hottest_junction_at_its_limit(demo):
    g = _geom(demo, [SMALL, LARGE])
    f = largest_still_air_load(demo, g)
    tj_max = np.array([d.tj_max for d in demo.devices])
    for i in range(2):
        if f[i] < 1.0:
            tj, _, _ = still_air_steady(demo, g.take([i]), f[i],
                                        terms=demo.options.coarse_terms)
            assert (tj_max - tj).min() == pytest.approx(0.0, abs=0.05)
        else:
            tj, _, _ = still_air_steady(demo, g.take([i]), 1.0)
            assert np.all(tj <= tj_max + 0.05)


def test_fan_stop_event_is_consistent_with_its_trace(demo):
    params = [SMALL, LARGE]
    running = evaluate_params(demo, params, spreading="exact")
    res = fans_stopped_of(demo, params, running)
    fs = res.fan_stop
    tj_max = np.array([d.tj_max for d in demo.devices])
    t0 = fs.junction_C[:, 0, :]
    np.testing.assert_allclose(t0, running.evaluation.junction_C, rtol=1e-9)
    for i in range(2):
        t = fs.time_to_limit_s[i]
        over = np.any(fs.junction_C[i] >= tj_max[None, :] - 1e-9, axis=1)
        if np.isfinite(t):
            assert not over[fs.times_s < t - 1e-9].any()
            assert over[fs.times_s > t + 1e-9].all()
            assert fs.first_device[i] in [d.name for d in demo.devices]
        else:
            assert not over.any()
        # no junction cools when its fan stops (the junction link keeps the running state)
        assert np.all(np.diff(fs.junction_C[i], axis=0) >= -1e-6)
    # the small sink overheats, the large one does not (demo scenario: 76 W, 45 °C, 1500 m)
    assert np.isfinite(fs.time_to_limit_s[0]) and not np.isfinite(fs.time_to_limit_s[1])
    # long after the stop, the trace sits at or above the still-air steady state (conservative)
    steady, _, _ = still_air_steady(demo, _geom(demo, params), 1.0)
    assert np.all(fs.junction_C[:, -1, :] >= steady - 0.5)


def test_evaluate_json_carries_the_fans_stopped_checks(capsys):
    sets = [f"{k}={v}" for k, v in SMALL.items()]
    assert main(["evaluate", str(DEMO), "--json", "--set", *sets]) == 0
    rec = json.loads(capsys.readouterr().out)["fans_stopped"]
    assert rec["load_fraction"] == 0.25
    assert rec["time_to_limit_after_fan_stop_s"] > 0
    assert set(rec["steady_junction_C"]) == {d.name for d in load_study(DEMO).devices}
    assert 0 < rec["largest_load_fraction"] < 1


@pytest.mark.parametrize("table,message", [
    ('finish = "anodised"', "missing required key orientation"),
    ('orientation = "sideways"', 'unknown value "sideways"'),
    ('orientation = "fins_vertical"\nfinish = "anodised"\nemissivity = 0.8',
     "give finish or emissivity, not both"),
    ('orientation = "fins_vertical"\nload_fraction = 0', "must be > 0"),
])
def test_bad_fans_stopped_tables_say_which_key(tmp_path, capsys, table, message):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text[:text.index("[fans_stopped]")] + "[fans_stopped]\n" + table + "\n"
    path = tmp_path / "s.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "fans_stopped" in err and message in err

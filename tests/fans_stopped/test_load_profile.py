"""Load profiles with the fans running (sinkopt.model.load_profile, sinkopt.study.profile_file,
sinkopt.model.thermal_network) and the transient objectives and constraints of the search.

References: the network's long-time limit must be the steady model's state (the issue's
check; an identity of the exact solution, not a tuning); the junction-to-case response of an
embedded Foster table must be the table's own Z_th(t) = Σ R_i (1 − e^(−t/τ_i)) (the datasheet
form of JEDEC JESD51-14, from memory) while the sink has not moved; the rest are bad-input rules
of our own and the demo study's search.
"""
import dataclasses
import json
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.model.columns import geometry_of, to_columns
from sinkopt.model.design import Device
from sinkopt.model.load_profile import profile_of, profile_response
from sinkopt.model.problem import LoadProfile
from sinkopt.model.system import evaluate_params
from sinkopt.model.thermal_network import device_network, running_state
from sinkopt.physics.transient import impedance_foster, simulate
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "studies" / "demo_inverter.toml"
HOIST = ROOT / "studies" / "demo_hoist.toml"
DESIGN = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
          "n_fins": 18, "base_thickness_mm": 6, "fan": "demo-axial-80-stall", "fan_speed": 1.0}


@pytest.fixture(scope="module")
def demo():
    return load_study(DEMO)


def _rated(problem, start, duration=1e6):
    return LoadProfile((0.0, duration), (tuple(d.power for d in problem.devices),), start)


@pytest.mark.parametrize("start", ["periodic", "steady", "ambient"])
def test_long_time_limit_is_the_steady_model(demo, start):
    running = evaluate_params(demo, [DESIGN], spreading="exact")
    g = geometry_of(demo, to_columns(demo, [DESIGN]))
    heat = sum(d.power for d in demo.devices)
    pr = profile_response(demo, g, running.evaluation.junction_C,
                          running.evaluation.r_sink * heat, _rated(demo, start))
    np.testing.assert_allclose(pr.peak_junction_C, running.evaluation.junction_C, rtol=0,
                               atol=1e-6)


def test_embedded_foster_table_reproduces_its_zth_curve():
    r, tau = (0.05, 0.15, 0.25), (0.0008, 0.012, 0.15)
    dev = Device("Q", 10.0, 150.0, sum(r), 0.0, 0.0, 0.01, 0.01, foster_r=r, foster_tau=tau)
    # the sink holds its temperature (huge capacity) and the case sits on it (no stack)
    net = device_network([dev], np.array([[sum(r)]]), np.array([1e12]))
    G = net.with_ambient([1.0])
    t = np.geomspace(1e-5, 2.0, 40)
    rise = simulate(G, net.C, ([0.0], net.node_power([[10.0]])), t)[0, :, net.junction_nodes[0]]
    np.testing.assert_allclose(rise, 10.0 * impedance_foster(r, tau, t), rtol=1e-9, atol=1e-12)


def test_running_state_is_a_steady_state_of_the_network():
    devs = [Device("A", 8.0, 150.0, 0.4, 0, 0, 0.01, 0.01, foster_r=(0.1, 0.3),
                   foster_tau=(0.01, 0.2)),
            Device("B", 5.0, 150.0, 1.0, 0, 0, 0.01, 0.01)]
    r_link = np.array([[0.9, 1.6], [1.2, 2.0]])
    net = device_network(devs, r_link, np.array([300.0, 500.0]))
    sink = np.array([20.0, 30.0])
    tj = sink[:, None] + r_link * np.array([8.0, 5.0])
    state = running_state(net, sink, tj)
    g_amb = 13.0 / sink
    residual = np.einsum("mij,mj->mi", net.with_ambient(g_amb), state) - net.node_power([8.0, 5.0])
    np.testing.assert_allclose(residual, 0.0, atol=1e-9)


def test_a_pulse_above_the_rating_peaks_above_the_steady_state(demo):
    running = evaluate_params(demo, [DESIGN], spreading="exact")
    base = tuple(d.power for d in demo.devices)
    profile = LoadProfile((0.0, 60.0, 70.0, 120.0),
                          (tuple(0.3 * p for p in base), tuple(2.0 * p for p in base),
                           tuple(0.3 * p for p in base)), "periodic")
    pr = profile_of(dataclasses.replace(demo, load_profile=profile), [DESIGN], running)
    steady = running.evaluation.junction_C[0]
    assert np.all(pr.peak_junction_C[0] > steady)  # a 2x pulse of 10 s lifts every junction
    np.testing.assert_allclose(pr.peak_time_s[0], 70.0, atol=0.01)  # at the end of the pulse
    # the trace agrees with the peak at the pulse's end
    k = int(np.argmin(abs(pr.times_s - 70.0)))
    np.testing.assert_allclose(pr.junction_C[0, k], pr.peak_junction_C[0], atol=1e-6)


def test_the_hoist_demo_searches_on_the_profile_peak(tmp_path, capsys):
    problem = load_study(HOIST)
    assert "peak_junction_in_profile" in problem.objectives
    assert problem.load_profile.start == "periodic" and problem.devices[0].foster_r
    out = tmp_path / "res"
    code = main(["run", str(HOIST), "--trials", "40", "--seed", "3", "--out", str(out)])
    assert code == 0, capsys.readouterr().err
    front = pd.read_csv(out / "pareto.csv")
    assert len(front) > 0
    margin = min(d.tj_max for d in problem.devices)
    peaks = front[[f"tj_{d.name}_profile_peak_C" for d in problem.devices]].to_numpy()
    assert np.all(peaks <= margin - problem.limits.min_junction_margin_K + 1e-6)
    assert np.all(front["fan_stop_time_to_limit_s"].fillna(np.inf) >= 60.0 - 1e-6)
    design = json.loads(next((out / "designs").glob("trial_*.json")).read_text())
    trace = design["load_profile"]["trace"]
    assert trace["time_s"][-1] == pytest.approx(40.0)
    assert set(trace["junction_C"]) == {d.name for d in problem.devices}


def test_evaluate_json_carries_the_profile(capsys):
    problem = load_study(HOIST)
    sets = [f"{k}={v}" for k, v in DESIGN.items()]
    assert main(["evaluate", str(HOIST), "--json", "--set", *sets]) == 0
    rec = json.loads(capsys.readouterr().out)
    peaks = rec["load_profile"]["peak_junction_C"]
    assert set(peaks) == {d.name for d in problem.devices}
    assert "time_to_limit_after_fan_stop_s" in rec["fans_stopped"]


def _study_with(tmp_path, csv_text, extra=""):
    text = HOIST.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    (tmp_path / "demo_hoist_cycle.csv").write_text(csv_text)
    path = tmp_path / "s.toml"
    path.write_text(text + extra)
    return path


GOOD_HEADER = "time_s,Q1_W,Q2_W,Q3_W,Q4_W,B1_W\n"


@pytest.mark.parametrize("csv_text,message", [
    (GOOD_HEADER + "0,1,1,1,1,1\n5,1,1,1,1,1\n5,2,2,2,2,2\n", "time must increase"),
    (GOOD_HEADER + "0,1,1,1,1,1\n5,1,-1,1,1,1\n", "a power cannot be negative"),
    ("time,Q1_W,Q2_W,Q3_W,Q4_W,B1_W\n0,1,1,1,1,1\n5,1,1,1,1,1\n", "the time needs its unit"),
    ("time_s,Q1,Q2_W,Q3_W,Q4_W,B1_W\n0,1,1,1,1,1\n5,1,1,1,1,1\n", "a power needs its unit"),
    ("time_s,Q1_W,Q2_W\n0,1,1\n5,1,1\n", "no power column for Q3, Q4, B1"),
    (GOOD_HEADER + "0,1,1,1,1,1\n", "at least two rows"),
])
def test_bad_profiles_get_one_clear_error(tmp_path, capsys, csv_text, message):
    path = _study_with(tmp_path, csv_text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "load_profile.file" in err and "demo_hoist_cycle.csv" in err and message in err


def test_a_load_column_covers_the_devices_without_their_own(tmp_path, capsys):
    path = _study_with(tmp_path, "time_min,Q1_kW,load_pct\n0,0.02,100\n0.5,0.01,50\n1,0,0\n")
    problem = load_study(path)
    lp = problem.load_profile
    assert lp.times_s == (0.0, 30.0, 60.0)
    assert lp.power_W[0][0] == pytest.approx(20.0) and lp.power_W[1][0] == pytest.approx(10.0)
    assert lp.power_W[1][4] == pytest.approx(0.5 * problem.devices[4].power)


def test_transient_objectives_say_which_table_to_add(tmp_path, capsys):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text[:text.index("[fans_stopped]")]
    text = text.replace('use = ["sink_volume", "fan_power", "junction_margin"]',
                        'use = ["sink_volume", "time_to_limit_after_fan_stop", '
                        '"peak_junction_in_profile"]')
    path = tmp_path / "s.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "add a [fans_stopped] table with orientation" in err
    assert "add a [load_profile] table" in err


def test_foster_table_must_describe_r_jc(tmp_path, capsys):
    text = HOIST.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text.replace("r_K_per_W = [0.05, 0.15, 0.25]", "r_K_per_W = [0.05, 0.15, 0.5]", 1)
    (tmp_path / "demo_hoist_cycle.csv").write_text((ROOT / "studies" /
                                                    "demo_hoist_cycle.csv").read_text())
    path = tmp_path / "s.toml"
    path.write_text(text)
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "zth_foster.r_K_per_W" in err and "Q1" in err and "sum to 0.7 K/W" in err

"""The report's data functions: plain dicts, checked against the results folder and the model."""
import numpy as np
import pandas as pd
import pytest

from sinkopt.fans import FanArray
from sinkopt.model.known_flow import inlet_air
from sinkopt.model.problem import OBJECTIVES
from sinkopt.results.report_data import (DEVICE_COLUMNS, design_data, drawing_scale, fan_curves,
                                         fan_system_curves, pareto_plot_data, pareto_table_data,
                                         parcoords_data, report_data, sink_drawing,
                                         system_curves)
from sinkopt.model.system import evaluate_params, fan_choices


def test_pareto_data_holds_exactly_the_pareto_trials(demo_results):
    pts = pareto_plot_data(demo_results)["points"]
    on_front = [t for t, s in zip(pts["trial"], pts["status"]) if s == "pareto"]
    assert sorted(on_front) == sorted(int(t) for t in demo_results.pareto_trials)
    assert len(on_front) > 0
    assert pts["trial"] == [int(t) for t in demo_results.trial_numbers]
    # every column has one value per trial
    for group in ("objectives", "categorical", "numeric"):
        for name, values in pts[group].items():
            assert len(values) == len(pts["trial"]), (group, name)


def test_pareto_points_carry_the_values_of_pareto_csv(demo_dir, demo_results):
    pareto = pd.read_csv(demo_dir / "pareto.csv").set_index("trial")
    data = pareto_plot_data(demo_results)
    pts = data["points"]
    for i, t in enumerate(pts["trial"]):
        if pts["status"][i] != "pareto":
            continue
        assert pts["exact"][i]
        for o in data["objectives"]:
            assert pts["objectives"][o["name"]][i] == pytest.approx(pareto.loc[t, o["column"]],
                                                                     rel=1e-12)
        assert pts["categorical"]["fan"][i] == pareto.loc[t, "fan"]


def test_statuses_follow_feasibility(demo_dir, demo_results):
    trials = pd.read_csv(demo_dir / "trials.csv").set_index("trial")
    pts = pareto_plot_data(demo_results)["points"]
    for i, t in enumerate(pts["trial"]):
        if not pts["exact"][i]:  # search model, as in trials.csv
            assert (pts["status"][i] != "infeasible") == bool(trials.loc[t, "feasible"])


def test_objective_axes_follow_the_problem(demo_results):
    axes = pareto_plot_data(demo_results)["objectives"]
    assert [a["name"] for a in axes] == list(demo_results.problem.objectives)
    for a in axes:
        assert (a["column"], a["direction"]) == OBJECTIVES[a["name"]]
        assert a["unit"]


@pytest.fixture(scope="module")
def record(demo_results):
    return demo_results.pareto_records()[0]


def test_system_curve_passes_through_the_operating_point(demo_results):
    problem = demo_results.problem
    for rec in demo_results.pareto_records():
        c = fan_system_curves(problem, rec["params"], rec)
        op = c["operating_point"]
        q, p = (np.array(c["system_curve"][k]) for k in ("flow_m3_s", "pressure_Pa"))
        assert np.all(np.diff(q) > 0) and q[0] == 0
        # The solver stops at xrtol 1e-10 of the free-delivery flow: fan and system pressures
        # agree there to far better than 1e-6 relative.
        assert np.interp(op["flow_m3_s"], q, p) == pytest.approx(op["pressure_Pa"], rel=1e-6)
        # The fan curve crosses there too (PCHIP sampled on the grid: a coarser tolerance).
        fq, fp = (np.array(c["fan_curve"][k]) for k in ("flow_m3_s", "pressure_Pa"))
        assert np.interp(op["flow_m3_s"], fq, fp) == pytest.approx(op["pressure_Pa"], rel=0.02)


def test_fan_curves_without_a_record_evaluate_the_design(demo_results, record):
    problem = demo_results.problem
    own = fan_system_curves(problem, record["params"])
    given = fan_system_curves(problem, record["params"], record)
    assert own["operating_point"]["flow_m3_s"] == pytest.approx(
        given["operating_point"]["flow_m3_s"], rel=1e-9)
    assert own["speed_ratio"] == pytest.approx(record["speed_ratio"])
    assert own["air_density_kg_m3"] == pytest.approx(inlet_air(problem.conditions).density)


def test_stall_limit_is_the_arrays_flow_at_the_curves_stall_limit(demo_results):
    problem = demo_results.problem
    stalling = [(label, f, n) for label, (f, n) in fan_choices(problem).items()
                if f.curve.has_stall_region]
    assert stalling, "the demo catalog has fans with a stall region"
    label, option, count = stalling[-1]
    params = dict(demo_results.pareto_records()[0]["params"], fan=label, fan_speed=1.0)
    c = fan_system_curves(problem, params)
    s = option.speed_max
    assert c["speed_ratio"] == pytest.approx(s)
    expected = option.curve.q_stall_limit_m3_s * s * (count if option.arrangement == "parallel"
                                                       else 1)
    assert c["stall_limit_m3_s"] == pytest.approx(expected, rel=1e-12)
    # the array curve drawn is FanArray.sample at the site density
    st = FanArray(option.curve, count, option.arrangement).sample(
        80, s, inlet_air(problem.conditions).density)
    ok = np.isfinite(st.pressure_Pa)
    assert c["fan_curve"]["pressure_Pa"] == pytest.approx(st.pressure_Pa[ok].tolist())


def test_no_stall_region_gives_no_stall_limit(demo_results):
    problem = demo_results.problem
    calm = [label for label, (f, n) in fan_choices(problem).items()
            if not f.curve.has_stall_region]
    if not calm:
        pytest.skip("every demo fan has a stall region")
    params = dict(demo_results.pareto_records()[0]["params"], fan=calm[0])
    assert fan_system_curves(problem, params)["stall_limit_m3_s"] is None


GEOM = {"width_mm": 100.0, "length_mm": 80.0, "fin_height_mm": 40.0, "fin_thickness_mm": 2.0,
        "n_fins": 10, "base_thickness_mm": 6.0}


def _rects(view, cls):
    return [s for s in view["shapes"] if s["kind"] == "rect" and s["cls"] == cls]


def test_drawing_is_to_scale_and_grows_with_the_design():
    scale = 2.5
    a = sink_drawing(GEOM, scale=scale)
    b = sink_drawing(dict(GEOM, width_mm=200.0, length_mm=160.0), scale=scale)
    # SVG size = view box [mm] x scale [px/mm]
    for d in (a, b):
        for view in (d["front"], d["plan"]):
            assert view["width_px"] == pytest.approx(view["view_box"][2] * scale)
            assert view["height_px"] == pytest.approx(view["view_box"][3] * scale)
    assert b["front"]["width_px"] - a["front"]["width_px"] == pytest.approx(100 * scale)
    assert b["plan"]["height_px"] - a["plan"]["height_px"] == pytest.approx(80 * scale)
    base_a = _rects(a["plan"], "base")[0]
    base_b = _rects(b["plan"], "base")[0]
    assert (base_b["w"], base_b["h"]) == (2 * base_a["w"], 2 * base_a["h"]) == (200, 160)


def test_front_view_has_the_fins_base_and_gap_of_the_design():
    d = sink_drawing(GEOM, scale=2.0)
    metal = _rects(d["front"], "metal")
    base = [r for r in metal if r["w"] == GEOM["width_mm"]]
    fins = [r for r in metal if r["w"] == GEOM["fin_thickness_mm"]]
    assert len(base) == 1 and base[0]["h"] == GEOM["base_thickness_mm"]
    assert len(fins) == GEOM["n_fins"]
    assert all(f["h"] == GEOM["fin_height_mm"] for f in fins)
    assert fins[0]["x"] == 0
    assert fins[-1]["x"] + fins[-1]["w"] == pytest.approx(GEOM["width_mm"])
    gap = (100 - 10 * 2) / 9
    assert d["gap_mm"] == pytest.approx(gap)
    assert fins[1]["x"] - (fins[0]["x"] + fins[0]["w"]) == pytest.approx(gap)
    texts = " ".join(s["text"] for s in d["front"]["shapes"] if s["kind"] == "text")
    assert "W 100 mm" in texts and "H 40 mm" in texts and "base 6 mm" in texts


def test_plan_view_places_devices_at_their_positions():
    dev = {"name": "U1", "center_x_mm": 30.0, "center_y_mm": 20.0, "size_x_mm": 10.0,
           "size_y_mm": 16.0}
    d = sink_drawing(GEOM, [dev], scale=2.0)
    (r,) = _rects(d["plan"], "device")
    # x across the flow from the left edge; inlet edge at the bottom of the drawing
    assert (r["x"], r["w"], r["h"]) == (25.0, 10.0, 16.0)
    assert r["y"] == pytest.approx(GEOM["length_mm"] - (20.0 + 8.0))
    labels = [s for s in d["plan"]["shapes"] if s["kind"] == "text" and s["text"] == "U1"]
    assert labels and labels[0]["x"] == 30.0
    assert any(s["kind"] == "arrow" for s in d["plan"]["shapes"])


def test_drawing_scale_fits_the_largest_design():
    recs = [{"params": {"width_mm": 100, "length_mm": 60}},
            {"params": {"width_mm": 80, "length_mm": 160}}]
    assert drawing_scale(recs, target_px=320) == pytest.approx(2.0)
    assert drawing_scale([], target_px=320) > 0


def test_design_data_holds_what_the_points_lack(demo_results):
    problem = demo_results.problem
    records = demo_results.pareto_records()
    d = design_data(problem, records)
    assert d["trials"] == [r["trial"] for r in records]
    assert d["drawing_scale_px_per_mm"] == pytest.approx(drawing_scale(records))
    names = [x.name for x in problem.devices]
    for r in records:
        row = d["by_trial"][str(r["trial"])]
        assert d["command_prefix"] + row["command"] == r["evaluate_command"]
        assert [d["warnings"][k] for k in row["warnings"]] == list(r["warnings"])
        assert row["speed_ratio"] == pytest.approx(r["speed_ratio"], rel=1e-12)
        assert row["key"] == [pytest.approx(r[k], rel=1e-12) for k in d["key_columns"]]
        assert len(row["devices"]) == len(names)
        for dev, values in zip(r["devices"], row["devices"]):
            got = dict(zip(DEVICE_COLUMNS, values))
            mountings = [s.name for s in problem.devices[names.index(dev["name"])].stacks]
            assert mountings[got["mounting"]] == dev["mounting"]
            assert got["junction_C"] == pytest.approx(dev["junction_C"], rel=1e-12)
            assert got["margin_K"] == pytest.approx(dev["margin_K"], rel=1e-12)
            for k, v in dev["breakdown_K"].items():
                assert got[k] == pytest.approx(v, rel=1e-12)
            # the breakdown adds up to the junction temperature
            assert d["ambient_C"] + sum(values[3:]) == pytest.approx(got["junction_C"], abs=1e-6)
        model, diffs = row["spreading"]
        assert d["spreading_models"][model] == [r["spreading_check"]["search_model"],
                                                r["spreading"]]
        assert diffs == [pytest.approx(r["spreading_check"]["junction_difference_K"][n])
                         for n in names]


def test_design_system_curves_pass_through_the_operating_points(demo_results):
    records = demo_results.pareto_records()
    d = design_data(demo_results.problem, records)
    for r in records:
        row = d["by_trial"][str(r["trial"])]
        q = np.linspace(0, row["system_q_max_m3_s"], len(row["system_Pa"]))
        assert q[-1] >= 1.25 * r["airflow_m3_s"] * (1 - 1e-12)
        # 41 points on a smooth, convex curve: linear interpolation within 1 %
        assert np.interp(r["airflow_m3_s"], q, row["system_Pa"]) == pytest.approx(
            r["pressure_drop_Pa"], rel=1e-2)


def test_system_curves_match_one_design_at_a_time(demo_results):
    problem = demo_results.problem
    records = demo_results.pareto_records()[:4]
    flows = np.outer([r["airflow_m3_s"] for r in records], [0.5, 1.0, 1.5])
    batch = system_curves(problem, [r["params"] for r in records], flows)
    for k, r in enumerate(records):
        one = system_curves(problem, [r["params"]], flows[k:k + 1])[0]
        assert batch[k] == pytest.approx(one, rel=1e-12)
        assert batch[k][1] == pytest.approx(r["pressure_drop_Pa"], rel=1e-6)


def test_fan_curves_follow_the_fan_laws(demo_results):
    """One curve per fan array at rated speed; at speed s the fan laws give FanArray.sample's
    points: flow × s, pressure × s²."""
    problem = demo_results.problem
    rho = inlet_air(problem.conditions).density
    curves = fan_curves(problem)
    assert set(curves) == set(fan_choices(problem))
    for label, (option, count) in fan_choices(problem).items():
        c = curves[label]
        assert (c["count"], c["arrangement"], c["speed_max"]) == (count, option.arrangement,
                                                                  option.speed_max)
        s = 0.7
        st = FanArray(option.curve, count, option.arrangement).sample(80, s, rho)
        ok = np.isfinite(st.pressure_Pa)
        assert np.array(c["flow_m3_s"]) * s == pytest.approx(st.flow_m3_s[ok], rel=1e-12)
        assert np.array(c["pressure_Pa"]) * s * s == pytest.approx(st.pressure_Pa[ok], rel=1e-9)
        if option.curve.has_stall_region:
            assert c["stall_limit_m3_s"] == pytest.approx(
                option.curve.q_stall_limit_m3_s * (count if option.arrangement == "parallel"
                                                   else 1), rel=1e-12)
        else:
            assert c["stall_limit_m3_s"] is None


def test_parcoords_encodes_categories_as_integers(demo_results):
    pc = parcoords_data(demo_results)
    fan = [d for d in pc["dimensions"] if d["key"] == "fan"]
    assert fan, "the demo searches over fans"
    fan = fan[0]
    assert fan["tickvals"] == list(range(len(fan["ticktext"])))
    assert all(isinstance(v, int) for v in fan["values"])
    pts = pareto_plot_data(demo_results)["points"]
    labels = dict(zip(pts["trial"], pts["categorical"]["fan"]))
    for t, v in zip(pc["trial"], fan["values"]):
        assert fan["ticktext"][v] == labels[t]
    assert set(pc["status"]) <= {0, 1, 2} and 2 in pc["status"]
    n = len(pc["trial"])
    assert all(len(d["values"]) == n for d in pc["dimensions"])


def test_pareto_table_rows_follow_pareto_csv(demo_dir, demo_results):
    pareto = pd.read_csv(demo_dir / "pareto.csv").set_index("trial")
    table = pareto_table_data(demo_results)
    assert sorted(r["trial"] for r in table["rows"]) == sorted(pareto.index)
    keys = [c["key"] for c in table["columns"]]
    for r in table["rows"]:
        for k in keys:
            if k in pareto.columns and k not in ("fan",):
                assert r[k] == pytest.approx(pareto.loc[r["trial"], k], rel=1e-12), k


def test_designs_without_values_carry_none(demo_results):
    """A design with no valid geometry gets None, never the search's penalty numbers."""
    from sinkopt.results.collect import Results
    from sinkopt.results.report_data import trial_points

    problem = demo_results.problem
    good = demo_results.pareto_records()[0]["params"]
    r = evaluate_params(problem, [good, dict(good, n_fins=200)])  # 200 fins cannot fit
    assert not r.valid_geometry[1]
    empty = np.array([], dtype=int)
    pts = trial_points(Results(problem, np.array([0, 1]), r, empty, None, empty))
    for values in pts["objectives"].values():
        assert values[0] is not None and values[1] is None
    assert pts["status"] == ["feasible" if r.feasible[0] else "infeasible", "infeasible"]
    assert pareto_plot_data(Results(problem, np.array([0, 1]), r, empty, None,
                                    empty))["not_plotted"] == 1


def test_report_data_is_json_ready(demo_results, demo_info):
    import json

    data = report_data(demo_results, demo_info)
    json.dumps(data, allow_nan=False)
    assert set(data["designs"]["by_trial"]) == {str(int(t)) for t in demo_results.pareto_trials}
    assert data["inputs"]["run"]["seed"] == demo_info["seed"]
    assert data["inputs"]["inputs"]


def test_curves_of_a_study_with_a_given_airflow(tmp_path):
    """No fans: only the system curve, through the operating point at the given flow."""
    from report_cases import DEMO
    from sinkopt.study.reader import load_study

    text = DEMO.read_text(encoding="utf-8")
    text = (text[:text.index("[air]")] + "[air]\nducted = true\nflow_m3_per_h = 60\n\n"
            + text[text.index("[objectives]"):])
    text = text.replace('use = ["sink_volume", "fan_power", "junction_margin"]',
                        'use = ["sink_volume", "junction_margin"]')
    path = tmp_path / "given_flow.toml"
    path.write_text(text, encoding="utf-8")
    problem = load_study(path)
    params = dict(GEOM, width_mm=80.0, length_mm=100.0)
    c = fan_system_curves(problem, params)
    assert c["fan_curve"] is None and c["stall_limit_m3_s"] is None
    op = c["operating_point"]
    assert op["flow_m3_s"] == pytest.approx(60 / 3600)
    q, p = (np.array(c["system_curve"][k]) for k in ("flow_m3_s", "pressure_Pa"))
    assert np.interp(op["flow_m3_s"], q, p) == pytest.approx(op["pressure_Pa"], rel=1e-9)

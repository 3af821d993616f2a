"""End to end: the demo study runs, its Pareto front is sound and reproducible, a killed run
resumes without losing trials."""
import contextlib
import io
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.search.pareto import dominates, to_minimization
from sinkopt.model.problem import OBJECTIVES
from sinkopt.study.reader import load_study
from sinkopt.model.system import evaluate_params

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "studies" / "demo_inverter.toml"


@pytest.fixture(scope="module")
def demo_run(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    code = main(["run", str(DEMO), "--out", str(out), "--trials", "120", "--seed", "3",
                 "--no-progress", "--no-report"])
    assert code == 0
    return out


def _evaluate_json(args):
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["evaluate", str(DEMO), "--json", "--set", *args]) == 0
    return json.loads(buf.getvalue())


def test_results_folder_is_complete(demo_run):
    for name in ("trials.csv", "pareto.csv", "run.json", "study.journal"):
        assert (demo_run / name).is_file(), name
    trials = pd.read_csv(demo_run / "trials.csv")
    assert len(trials) == 120
    run = json.loads((demo_run / "run.json").read_text())
    assert run["seed"] == 3 and run["trial_states"]["COMPLETE"] == 120
    assert str(DEMO) in run["inputs"] and len(run["inputs"][str(DEMO)]) == 64
    assert (demo_run / "inputs" / DEMO.name).is_file()


def test_pareto_front_nonempty_and_reproduced_by_evaluate(demo_run):
    pareto = pd.read_csv(demo_run / "pareto.csv")
    assert len(pareto) > 0
    designs = sorted((demo_run / "designs").glob("trial_*.json"))
    assert len(designs) == len(pareto)
    for path in designs:
        rec = json.loads(path.read_text())
        sets = [f"{k}={v!r}" if isinstance(v, float) else f"{k}={v}" for k, v in rec["params"].items()]
        again = _evaluate_json(sets)
        for key in ("airflow_m3_s", "pressure_drop_Pa", "sink_resistance_K_per_W", "fan_power_W",
                    "volume_cm3", "mass_kg", "air_outlet_C"):
            assert again[key] == pytest.approx(rec[key], rel=1e-9), key
        for d_again, d in zip(again["devices"], rec["devices"]):
            assert d_again["name"] == d["name"]
            assert d_again["junction_C"] == pytest.approx(d["junction_C"], rel=1e-9)
            assert d_again["margin_K"] == pytest.approx(d["margin_K"], rel=1e-9)
        assert isinstance(again["warnings"], list)


def test_every_reported_design_meets_the_margin_and_none_is_dominated(demo_run):
    problem = load_study(DEMO)
    trials = pd.read_csv(demo_run / "trials.csv")
    names = [v.name for v in problem.variables if not v.is_fixed]
    params = [{k: (row[k].item() if hasattr(row[k], "item") else row[k]) for k in names}
              for _, row in trials.iterrows()]
    for p in params:
        p["n_fins"] = int(p["n_fins"])
    exact = evaluate_params(problem, params, spreading="exact")
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    f_all = to_minimization(exact.objectives, directions)
    front = trials["pareto"].to_numpy(bool)
    assert front.any()
    for i in np.flatnonzero(front):
        assert exact.feasible[i]
        # Recomputed junction margin meets the study's constraint (exact series).
        assert exact.evaluation.worst_margin[i] >= problem.limits.min_junction_margin_K
        for j in np.flatnonzero(exact.feasible):
            assert not dominates(f_all[j], f_all[i]), (trials["trial"][j], trials["trial"][i])


def _complete_trials(journal):
    import optuna
    from optuna.storages.journal import JournalFileBackend, JournalStorage

    storage = JournalStorage(JournalFileBackend(str(journal)))
    study = optuna.load_study(study_name=load_study(DEMO).name, storage=storage)
    return study.get_trials(deepcopy=False)


def test_killed_run_resumes_without_losing_trials(tmp_path):
    out = tmp_path / "run"
    cmd = [sys.executable, "-m", "sinkopt", "run", str(DEMO), "--out", str(out), "--trials", "160",
           "--seed", "5", "--no-progress", "--no-report"]
    proc = subprocess.Popen(cmd, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    journal = out / "study.journal"
    deadline = time.monotonic() + 300  # a safety bound for a loaded machine, not a speed claim
    before = []
    try:
        while time.monotonic() < deadline:
            time.sleep(0.5)
            if journal.exists():
                done = [t for t in _complete_trials(journal) if t.state.name == "COMPLETE"]
                if len(done) >= 40:
                    break
        os.kill(proc.pid, signal.SIGKILL)  # a real signal: no chance to clean up
        proc.wait(timeout=30)
    finally:
        if proc.poll() is None:
            proc.kill()
    before = {t.number: t.params for t in _complete_trials(journal) if t.state.name == "COMPLETE"}
    assert 40 <= len(before) < 160
    res = subprocess.run(cmd, capture_output=True, text=True, timeout=900)
    assert res.returncode == 0, res.stderr
    after = _complete_trials(journal)
    complete = {t.number: t.params for t in after if t.state.name == "COMPLETE"}
    assert len(complete) == 160  # the requested total is reached
    for number, params in before.items():  # no finished trial lost or changed
        assert complete[number] == params
    assert not [t for t in after if t.state.name == "RUNNING"]  # none left running
    # The resumed search continues rather than repeating its first proposals.
    first = [tuple(sorted(p.items())) for n, p in sorted(before.items())][:20]
    resumed = [tuple(sorted(p.items())) for n, p in sorted(complete.items()) if n not in before]
    assert not set(first) & set(resumed[:20]) - {()}


def test_interrupt_saves_results_and_exits_130(tmp_path):
    out = tmp_path / "run"
    cmd = [sys.executable, "-m", "sinkopt", "run", str(DEMO), "--out", str(out), "--trials", "2000",
           "--seed", "1", "--no-progress", "--no-report"]
    # SIGINT back to its default in the child: a test run started in the background ignores it
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    journal = out / "study.journal"
    deadline = time.monotonic() + 300  # wait for the event (trials written), however slow
    while not (journal.exists() and journal.stat().st_size > 20000):
        if time.monotonic() > deadline or proc.poll() is not None:
            proc.kill()
            pytest.fail("the run wrote no trials to interrupt")
        time.sleep(0.3)
    proc.send_signal(signal.SIGINT)
    _, err = proc.communicate(timeout=600)
    assert proc.returncode == 130, err
    assert (out / "trials.csv").is_file() and (out / "run.json").is_file()
    assert "interrupted" in err


def test_notebook_api_reads_the_results_folder(demo_run):
    import sinkopt.api as so

    res = so.load_results(demo_run)
    trials, pareto = res.trials_df(), res.pareto_df()
    assert len(trials) == 120 and len(pareto) == int(trials["pareto"].sum())
    first = int(pareto["trial"].iloc[0])
    rec = res.design(first)
    assert rec["trial"] == first
    assert rec["volume_cm3"] == pytest.approx(float(pareto["volume_cm3"].iloc[0]))
    assert res.run_info["seed"] == 3
    with pytest.raises(FileNotFoundError):
        so.load_results(demo_run / "designs")


def test_input_warnings_reach_run_json(tmp_path):
    # A fan file with an exact duplicate point loads with a warning (docs/fan-curves.md); the run
    # records it in run.json rather than losing it on the terminal.
    fans = tmp_path / "fans"
    fans.mkdir()
    lines = (ROOT / "catalogs" / "fans" / "demo-axial-60.csv").read_text().splitlines()
    last = lines[-1]
    (fans / "dup.csv").write_text("\n".join(lines + [last]) + "\n")
    study = tmp_path / "study.toml"
    study.write_text(DEMO.read_text().replace("../catalogs/fans/*.csv", "fans/dup.csv"))
    out = tmp_path / "out"
    assert main(["run", str(study), "--out", str(out), "--trials", "16", "--seed", "1",
                 "--no-progress", "--no-report"]) in (0, 3)
    warnings = json.loads((out / "run.json").read_text())["warnings"]
    assert any("duplicate" in w for w in warnings), warnings

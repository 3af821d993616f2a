"""Three ``sinkopt worker`` processes on one PostgreSQL study, one of them killed with SIGKILL
part-way: the study still reaches its trial count, nothing is lost, duplicated or left RUNNING,
and the results collected from the database hold the true Pareto front. Needs a server:
``export "$(.ci/postgres | tail -n 1)"``."""
from __future__ import annotations

import json
import os
import subprocess

import optuna
import pandas as pd
import pytest

from sinkopt.cli.main import main
from sinkopt.search.storage import storage_for
from sinkopt.study.reader import load_study

from dist_helpers import (check_study_sound, complete_count, kill_holding_trials, password_of,
                      recomputed_front, sinkopt_cmd, wait_until, write_study)

N_TRIALS = 60
N_WORKERS = 3
BATCH = 4


def _env(url: str) -> dict:
    env = dict(os.environ)
    env["SINKOPT_STORAGE"] = url  # the URL travels in the environment, not on the command line
    return env


@pytest.mark.slow
def test_three_workers_one_killed(pg_url, tmp_path, monkeypatch, capsys):
    study_file = write_study(tmp_path)
    problem = load_study(study_file)
    env = _env(pg_url)
    secret = password_of(pg_url)
    assert secret
    monkeypatch.setenv("SINKOPT_STORAGE", pg_url)

    # A worker that is not allowed to create the study refuses a storage without it.
    assert main(["worker", str(study_file), "--trials", "5"]) == 2
    err = capsys.readouterr().err
    assert "--create" in err and secret not in err

    # Create the study once, before any worker starts (first creation races: optuna#1092).
    assert main(["worker", str(study_file), "--create", "--trials", "0"]) == 0
    err = capsys.readouterr().err
    assert ":***@" in err and secret not in err

    storage = storage_for(None, pg_url)

    def reader():
        return optuna.load_study(study_name=problem.name, storage=storage)

    logs = [open(tmp_path / f"worker{i}.log", "w+") for i in range(N_WORKERS)]
    procs = [subprocess.Popen(
        sinkopt_cmd("worker", str(study_file), "--trials", str(N_TRIALS), "--seed", str(i),
                    "--sampler", "random", "--batch", str(BATCH), "--stale-after", "60"),
        env=env, stdout=logs[i], stderr=subprocess.STDOUT) for i in range(N_WORKERS)]
    try:
        # Let the workers get going, then kill one while it holds RUNNING trials.
        wait_until(lambda: complete_count(reader()) >= N_TRIALS // 4, 300, "a quarter of the "
                   "trials", procs=procs)
        victim = procs[1]
        killed_running = kill_holding_trials(victim.pid, reader)
        assert victim.wait(timeout=30) == -9  # reaped: its pid is dead, not a zombie
        done_at_kill = complete_count(reader())
        assert done_at_kill < N_TRIALS * 0.6, "the kill came too late to matter"
        for i, p in enumerate(procs):
            if p is not victim:
                assert p.wait(timeout=600) == 0, open(logs[i].name).read()
    finally:
        for p in procs:
            if p.poll() is None:
                p.kill()
                p.wait()
        for f in logs:
            f.close()

    study = reader()
    facts = check_study_sound(study, N_TRIALS, N_WORKERS, BATCH, killed_running)
    # The survivors, not the dead worker, finished the study after the kill.
    victim_tag = f":{victim.pid}"
    after_kill = [t for t in facts["complete"]
                  if not t.user_attrs.get("worker", "").endswith(victim_tag)]
    assert len(after_kill) >= N_TRIALS - done_at_kill
    for i in range(N_WORKERS):
        text = open(logs[i].name).read()
        assert secret not in text

    # Collect the results from the database as a single run does (no new trials needed).
    out = tmp_path / "results"
    code = main(["run", str(study_file), "--storage", pg_url, "--trials", str(N_TRIALS),
                 "--out", str(out), "--no-progress", "--no-report"])
    captured = capsys.readouterr()
    assert code in (0, 3), captured.err
    assert secret not in captured.out + captured.err
    run_json = (out / "run.json").read_text()
    assert secret not in run_json
    info = json.loads(run_json)
    assert info["storage"].startswith("postgresql") and ":***@" in info["storage"]
    assert info["trial_states"]["COMPLETE"] == len(facts["complete"])
    assert info["trial_states"].get("RUNNING", 0) == 0
    trials_csv = pd.read_csv(out / "trials.csv")
    assert sorted(trials_csv["trial"]) == sorted(t.number for t in facts["complete"])
    front = recomputed_front(problem, facts["complete"])
    assert front, "the demo study has feasible designs"
    pareto_csv = pd.read_csv(out / "pareto.csv")
    assert set(int(t) for t in pareto_csv["trial"]) == front

"""``sinkopt run --workers 2`` on the default storage (the journal file in the results folder):
one worker killed with SIGKILL part-way, the other and the parent finish the study; Ctrl-C on
the parent stops every worker and leaves nothing RUNNING."""
from __future__ import annotations

import contextlib
import json
import os
import signal
import subprocess
from pathlib import Path

import optuna
import pandas as pd
import pytest
from optuna.storages.journal import JournalFileBackend, JournalStorage
from optuna.trial import TrialState

from sinkopt.study.reader import load_study

from dist_helpers import (default_sigint, check_study_sound, complete_count, kill_holding_trials,
                          recomputed_front, sinkopt_cmd, wait_until, write_study)

N_TRIALS = 64
BATCH = 4


def _reader(journal, name):
    storage = []

    def read():
        if not storage:
            storage.append(JournalStorage(JournalFileBackend(str(journal))))
        return optuna.load_study(study_name=name, storage=storage[0])
    return read


def _kill_own_workers(pids, study_file) -> None:
    """SIGKILL the pids that are still workers of this test's study (a pid of a worker that has
    exited may already belong to another process: its command line is checked first)."""
    for pid in pids:
        try:
            cmdline = Path(f"/proc/{pid}/cmdline").read_bytes()
        except OSError:
            continue
        if b"worker" in cmdline and str(study_file).encode() in cmdline:
            with contextlib.suppress(ProcessLookupError):
                os.kill(pid, signal.SIGKILL)


def _worker_pids(study, parent_pid: int) -> set[int]:
    pids = set()
    for t in study.get_trials(deepcopy=False):
        pid = t.user_attrs.get("worker", ":").rpartition(":")[2]
        if pid.isdigit() and int(pid) != parent_pid:
            pids.add(int(pid))
    return pids


@pytest.mark.slow
def test_run_with_two_workers_one_killed(tmp_path):
    study_file = write_study(tmp_path, slow=True)  # a worker is caught holding trials
    problem = load_study(study_file)
    out = tmp_path / "results"
    journal = out / "study.journal"
    parent = subprocess.Popen(
        sinkopt_cmd("run", str(study_file), "--workers", "2", "--trials", str(N_TRIALS),
                    "--seed", "5", "--sampler", "tpe", "--batch", str(BATCH), "--out", str(out),
                    "--no-progress", "--no-report"),
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, preexec_fn=default_sigint)
    try:
        wait_until(lambda: journal.is_file() and journal.stat().st_size > 0, 300,
                   "the parent to create the study", procs=[parent])
        read = _reader(journal, problem.name)
        wait_until(lambda: complete_count(read()) >= N_TRIALS // 4
                   and len(_worker_pids(read(), parent.pid)) == 2, 300,
                   "both workers to finish trials", procs=[parent])
        victim = min(_worker_pids(read(), parent.pid))
        killed_running = kill_holding_trials(victim, read, lock_file=journal.with_name(
            journal.name + ".lock"))
        done_at_kill = complete_count(read())
        assert done_at_kill < N_TRIALS * 0.6, "the kill came too late to matter"
        stdout, stderr = parent.communicate(timeout=600)
    finally:
        if parent.poll() is None:
            parent.kill()
            parent.communicate()
    # The run reached its count, so losing a worker is reported but is not a failure.
    assert parent.returncode in (0, 3), stderr
    assert f"(pid {victim}) stopped: killed by SIGKILL" in stderr
    study = _reader(journal, problem.name)()  # a fresh replay of the whole journal
    facts = check_study_sound(study, N_TRIALS, 2, BATCH, killed_running)
    # Both local workers had distinct seeds: no two trials share all their parameters.
    keys = [tuple(sorted(t.params.items())) for t in facts["complete"]
            if "retry_of" not in t.user_attrs]
    assert len(set(keys)) == len(keys)
    # The parent wrote the results folder from the shared journal, as a single run does.
    info = json.loads((out / "run.json").read_text())
    assert info["trial_states"]["COMPLETE"] == len(facts["complete"])
    assert info["trial_states"].get("RUNNING", 0) == 0
    assert "--workers" in info["command"]
    trials_csv = pd.read_csv(out / "trials.csv")
    assert sorted(trials_csv["trial"]) == sorted(t.number for t in facts["complete"])
    pareto_csv = pd.read_csv(out / "pareto.csv")
    assert set(int(t) for t in pareto_csv["trial"]) == recomputed_front(problem,
                                                                       facts["complete"])


@pytest.mark.slow
def test_interrupting_the_parent_stops_every_worker(tmp_path):
    study_file = write_study(tmp_path, slow=True)
    problem = load_study(study_file)
    out = tmp_path / "results"
    journal = out / "study.journal"
    parent = subprocess.Popen(
        # slow designs and far more trials than can finish before the test interrupts it: the
        # run is still going when the signal comes (an event, not a race with the clock)
        sinkopt_cmd("run", str(study_file), "--workers", "2", "--trials", "100000",
                    "--sampler", "random", "--out", str(out), "--no-progress", "--no-report"),
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, preexec_fn=default_sigint)
    try:
        wait_until(lambda: journal.is_file() and journal.stat().st_size > 0, 300,
                   "the parent to create the study", procs=[parent])
        read = _reader(journal, problem.name)
        wait_until(lambda: len(_worker_pids(read(), parent.pid)) == 2
                   and complete_count(read()) >= 10, 300, "both workers to work",
                   procs=[parent])
        workers = _worker_pids(read(), parent.pid)
        parent.send_signal(signal.SIGINT)  # as kill -INT: the workers do not get it directly
        # a safety bound, not a speed claim: stopping the workers, re-evaluating the front and
        # its uncertainty band take seconds, minutes on a heavily loaded 2-core machine
        stdout, stderr = parent.communicate(timeout=600)
    finally:
        if parent.poll() is None:
            parent.kill()
            parent.communicate()
            if journal.is_file():  # never leave a worker behind a failed test
                _kill_own_workers(_worker_pids(_reader(journal, problem.name)(), parent.pid),
                                  study_file)
    assert parent.returncode == 130, stderr
    for pid in workers:  # every worker is gone (and reaped by the parent)
        with pytest.raises(ProcessLookupError):
            os.kill(pid, 0)
    study = _reader(journal, problem.name)()
    states = {t.state for t in study.get_trials(deepcopy=False)}
    assert TrialState.RUNNING not in states
    n_complete = complete_count(study)
    assert 0 < n_complete < 100000
    info = json.loads((out / "run.json").read_text())
    assert info["trial_states"]["COMPLETE"] == n_complete
    assert sum(info["trial_states"].values()) == len(study.trials)

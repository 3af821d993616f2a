"""Helpers for the distributed tests: a private copy of the demo study, the PostgreSQL URL from
``SINKOPT_TEST_POSTGRES_URL`` (set by ``.ci/postgres``), killing a worker at a meaningful moment,
and the checks every distributed run must pass."""
from __future__ import annotations

import os
import re
import signal
import sys
import time
import uuid
from collections import Counter
from pathlib import Path

import numpy as np
import optuna
import pytest
from optuna.trial import TrialState

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "studies" / "demo_inverter.toml"
PG_ENV = "SINKOPT_TEST_POSTGRES_URL"


@pytest.fixture
def pg_url() -> str:
    url = os.environ.get(PG_ENV)
    if not url:
        pytest.skip(f"{PG_ENV} is not set: start a server with `.ci/postgres` and export the "
                    "line it prints")
    pytest.importorskip("psycopg2", reason="psycopg2 is needed: pip install -e '.[postgres]'")
    return url


def password_of(url: str) -> str:
    from urllib.parse import urlsplit

    return urlsplit(url).password or ""


def write_study(folder: Path, name: str | None = None, slow: bool = False) -> Path:
    """The demo study under a unique name (the study's name in the storage), fan files absolute.

    ``slow``: every design on a 2000-term spreading series (about 0.1 s a design), so that a
    run is still working when a test wants to interrupt it, however loaded the machine."""
    name = name or f"dist-{uuid.uuid4().hex[:10]}"
    text = DEMO.read_text(encoding="utf-8")
    text = re.sub(r'(?m)^name = "demo inverter"', f'name = "{name}"', text, count=1)
    fans = (ROOT / "catalogs" / "fans").as_posix()
    text = text.replace('"../catalogs/fans/*.csv"', f'"{fans}/*.csv"')
    assert f'name = "{name}"' in text and "../catalogs" not in text
    if slow:
        text += '\n[model]\nspreading = "exact"\nseries_terms = 2000\n'
    
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def default_sigint() -> None:
    """``preexec_fn`` of a child the test will interrupt: SIGINT back to its default. A test run
    started in the background (nohup, some CI runners) ignores SIGINT, and a child would
    inherit that and never see the test's Ctrl-C."""
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def sinkopt_cmd(*args: str) -> list[str]:
    return [sys.executable, "-m", "sinkopt", *args]


def complete_count(study: optuna.Study) -> int:
    return len(study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)))


def wait_until(predicate, timeout: float, what: str, poll: float = 0.2, procs=()):
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        value = predicate()
        if value:
            return value
        for p in procs:
            if p.poll() is not None:
                raise AssertionError(f"process {p.pid} ended early ({p.returncode}) while "
                                     f"waiting for {what}")
        time.sleep(poll)
    raise AssertionError(f"timed out after {timeout} s waiting for {what}")


def running_of(study: optuna.Study, pid: int) -> list[int]:
    """Numbers of the RUNNING trials that worker ``pid`` (on this host) holds."""
    return [t.number for t in study.get_trials(deepcopy=False, states=(TrialState.RUNNING,))
            if t.user_attrs.get("worker", "").endswith(f":{pid}")]


def kill_holding_trials(pid: int, study_reader, lock_file: Path | None = None,
                        tries: int = 400) -> list[int]:
    """SIGKILL worker ``pid`` at a moment when it holds RUNNING trials; return their numbers.

    The worker is frozen with SIGSTOP and inspected through a fresh view of the storage
    (``study_reader()``): if it holds no RUNNING trial right then (or holds the journal's file
    lock, which would stall the other workers for the lock's 30 s grace period), it is let go on
    and tried again a moment later.
    """
    for _ in range(tries):
        os.kill(pid, signal.SIGSTOP)
        try:
            time.sleep(0.03)
            held = running_of(study_reader(), pid)
            locked = lock_file is not None and os.path.lexists(lock_file)
            if locked:  # someone holds the lock: another worker lets go within milliseconds
                time.sleep(0.05)
                locked = os.path.lexists(lock_file)
            if held and not locked:
                os.kill(pid, signal.SIGKILL)
                return held
        finally:
            try:
                os.kill(pid, signal.SIGCONT)
            except ProcessLookupError:
                pass
        time.sleep(0.02)
    raise AssertionError(f"worker {pid} never held a RUNNING trial while stopped")


def check_study_sound(study: optuna.Study, n_trials: int, n_workers: int, batch: int,
                      killed_running: list[int]) -> dict:
    """The invariants of a distributed run in which a worker was killed holding
    ``killed_running``; returns facts for further checks."""
    trials = study.get_trials(deepcopy=False)
    numbers = [t.number for t in trials]
    # Every trial is in the storage once: numbers are unique and without gaps.
    assert sorted(numbers) == list(range(len(trials))), "duplicate or missing trial numbers"
    states = Counter(t.state for t in trials)
    assert states[TrialState.RUNNING] == 0, "a trial was left RUNNING"
    complete = [t for t in trials if t.state == TrialState.COMPLETE]
    # The requested number is reached; each worker asks at most what is missing, so the
    # overshoot is below one batch per other worker.
    assert n_trials <= len(complete) <= n_trials + (n_workers - 1) * batch, len(complete)
    # No failed trial was retried to completion twice.
    retry_of = Counter(t.user_attrs["retry_of"] for t in complete if "retry_of" in t.user_attrs)
    assert all(c == 1 for c in retry_of.values()), retry_of
    # The killed worker's trials did not stay RUNNING: each was failed and queued again once
    # with the parameters it had (all of them, or those drawn before the kill when it was killed
    # while sampling; one killed before its first draw is not queued), and that retry ran to
    # completion.
    by_number = {t.number: t for t in trials}
    assert killed_running
    for n in killed_running:
        failed = by_number[n]
        assert failed.state == TrialState.FAIL, (n, failed.state)
        retries = [t for t in trials if t.user_attrs.get("retry_of") == n]
        assert len(retries) == (1 if failed.params else 0), (n, [t.number for t in retries])
        for retry in retries:
            assert retry.system_attrs["fixed_params"] == failed.params
            assert retry.state == TrialState.COMPLETE, (n, retry.state)
            assert {k: retry.params[k] for k in failed.params} == failed.params
    return {"complete": complete, "states": states}


def recomputed_front(problem, complete_trials) -> set[int]:
    """The Pareto front recomputed from scratch: every COMPLETE trial re-evaluated with the exact
    spreading series, the infeasible ones dropped, the non-dominated rest (objectives turned to
    minimisation) kept. This is what ``pareto.csv`` must list: collect_results reviews only the
    trials the search model found feasible or nearly so, and this checks that none was missed."""
    from sinkopt.search.pareto import nondominated_mask, to_minimization
    from sinkopt.model.problem import OBJECTIVES
    from sinkopt.model.system import evaluate_params

    exact = evaluate_params(problem, [t.params for t in complete_trials], spreading="exact")
    numbers = np.array([t.number for t in complete_trials])
    ok = np.asarray(exact.feasible, dtype=bool)
    f = to_minimization(exact.objectives[ok], [OBJECTIVES[o][1] for o in problem.objectives])
    return set(int(n) for n in numbers[ok][nondominated_mask(f)])

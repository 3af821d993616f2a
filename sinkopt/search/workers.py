"""Several worker processes on one study: the worker loop, local spawning, and credential hygiene.

A *worker* (``sinkopt worker``) joins a study that already exists in a shared storage (a
PostgreSQL/MySQL URL, or the journal file of a results folder on this host) and asks, evaluates
and tells batches until the study holds its number of finished trials. ``sinkopt run --workers
N`` creates the study once in the parent (concurrent first creation on a fresh database races:
optuna#1092/#4621), starts N local workers with :func:`run_local_workers`, waits for them, and
then writes the results folder from the shared storage as a single run does.

Faults:

- A killed worker leaves RUNNING trials behind. Every worker (and the waiting parent) calls
  :func:`sinkopt.search.fail_stale_trials` every few seconds: a trial whose worker process on
  this host is gone, or that started more than ``stale_after_s`` ago (a worker on another host),
  is failed and its parameters are queued again, tagged ``retry_of``. Failing is a state change
  that the storage refuses for a trial that is already finished (PostgreSQL: ``SELECT ... FOR
  UPDATE``; journal: the first operation in the log wins), so of two workers failing the same
  trial exactly one succeeds and queues the retry.
- A worker whose trial was failed under it (it was too slow, or another process thought it dead)
  gets ``UpdateFinishedTrialError`` when it tells the result; :func:`work` drops that batch and
  goes on. The failed trial's retry is in the queue, so no point is lost or counted twice.
- Each worker limits its batch to the trials still missing, so the study overshoots its count by
  at most (workers - 1) x batch trials.

Credentials: see :mod:`sinkopt.search.storage`.
"""
from __future__ import annotations

import contextlib
import logging
import os
import signal
import subprocess
import sys
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Sequence

from sinkopt.errors import SinkoptError
from sinkopt.search.storage import STORAGE_ENV

__all__ = ["tag_new_trials", "derive_seed", "sampler_seed", "worker_argv", "work", "WorkSummary",
           "run_local_workers", "WorkersOutcome", "describe_exit", "sigterm_as_interrupt",
           "graceful_stop",
           "DEFAULT_STALE_AFTER_S", "CHECK_EVERY_S"]

log = logging.getLogger(__name__)

#: A RUNNING trial older than this is stale even when its worker runs on another host.
DEFAULT_STALE_AFTER_S = 120.0
#: Seconds between two stale-trial checks of a worker or of the waiting parent.
CHECK_EVERY_S = 2.0
#: How long the parent waits for interrupted workers to fail their batch and exit.
INTERRUPT_GRACE_S = 15.0
#: A worker gives up after this many batches lost to trials failed under it.
MAX_LOST_BATCHES = 50


# --------------------------------------------------------------------------- credentials

# --------------------------------------------------------------------------- seeds, argv

def derive_seed(seed: int | None, index: int) -> int | None:
    """The seed of local worker ``index`` (0-based) of a run with seed ``seed``.

    >>> [derive_seed(7, i) for i in range(3)]
    [7000, 7001, 7002]
    >>> derive_seed(None, 2) is None
    True
    """
    return None if seed is None else seed * 1000 + index


def sampler_seed(worker_seed: int | None, n_stored: int) -> int | None:
    """The sampler seed of a worker that joins a study holding ``n_stored`` trials.

    Mixed (not added) so that two workers with neighbouring seeds that join at different moments
    never end up with the same seed, and a resumed worker does not repeat its first proposals.

    >>> sampler_seed(7000, 0) != sampler_seed(7001, 0) != sampler_seed(7000, 1)
    True
    >>> sampler_seed(7000, 5) == sampler_seed(7000, 5)
    True
    """
    if worker_seed is None:
        return None
    import numpy as np

    return int(np.random.SeedSequence([int(worker_seed) % 2**63, int(n_stored)])
               .generate_state(1)[0] % 2**31)


def worker_argv(study_path: Path, *, study_name: str, n_trials: int, seed: int | None,
                sampler: str | None, out: Path | None, batch: int | None = None,
                timeout: float | None = None, stale_after_s: float | None = None,
                quiet: bool = True) -> list[str]:
    """The command line of one local worker (the storage URL goes through the environment)."""
    argv = [sys.executable, "-m", "sinkopt", "worker", str(Path(study_path).resolve()),
            "--study-name", study_name, "--trials", str(n_trials)]
    if out is not None:
        argv += ["--out", str(Path(out).resolve())]
    if seed is not None:
        argv += ["--seed", str(seed)]
    if sampler:
        argv += ["--sampler", sampler]
    if batch:
        argv += ["--batch", str(batch)]
    if timeout is not None:
        argv += ["--timeout", str(timeout)]
    if stale_after_s is not None:
        argv += ["--stale-after", str(stale_after_s)]
    if quiet:
        argv.append("--quiet")
    return argv


# --------------------------------------------------------------------------- signals

@contextlib.contextmanager
def sigterm_as_interrupt():
    """Turn SIGTERM into KeyboardInterrupt (so the current batch is failed, not left RUNNING)."""
    import threading

    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def handler(signum, frame):  # noqa: ARG001
        raise KeyboardInterrupt

    previous = signal.signal(signal.SIGTERM, handler)
    try:
        yield
    finally:
        signal.signal(signal.SIGTERM, previous)


@contextlib.contextmanager
def graceful_stop():
    """In a worker: the first SIGINT or SIGTERM asks it to stop after its current batch (no
    storage write is cut short, no trial is failed); a second one interrupts at once (the batch
    is failed). Yields a function telling whether a stop was asked."""
    import threading

    flag = {"stop": False}
    if threading.current_thread() is not threading.main_thread():
        yield lambda: flag["stop"]
        return

    def handler(signum, frame):  # noqa: ARG001
        if flag["stop"]:
            raise KeyboardInterrupt
        flag["stop"] = True

    previous = {s: signal.signal(s, handler) for s in (signal.SIGINT, signal.SIGTERM)}
    try:
        yield lambda: flag["stop"]
    finally:
        for s, h in previous.items():
            signal.signal(s, h)


def describe_exit(code: int | None) -> str:
    """``'exit code 2'``, ``'killed by SIGKILL'``, ``'still running'``.

    >>> describe_exit(-9)
    'killed by SIGKILL'
    >>> describe_exit(0)
    'exit code 0'
    """
    if code is None:
        return "still running"
    if code < 0:
        try:
            return f"killed by {signal.Signals(-code).name}"
        except ValueError:
            return f"killed by signal {-code}"
    return f"exit code {code}"


# --------------------------------------------------------------------------- trial ownership

def tag_new_trials(storage, tag: str) -> None:
    """Make every trial this process starts carry ``user_attrs["worker"] = tag`` from its very
    first moment.

    :func:`sinkopt.search.run_search` tags a trial right after ``study.ask``, but ``ask`` runs
    the sampler after it has created the trial, so a worker killed while sampling (for TPE most
    of its time) would leave an untagged RUNNING trial that only the age check can recover. Here
    the storage instance of a worker creates its trials with the tag (Optuna's trial template,
    one write) and tags a queued trial in the write right after taking it from the queue.
    Hooks the instance only; storages without these methods are left as they are.
    """
    import optuna
    from optuna.trial import TrialState

    def with_tag(template):
        if template is None:
            return optuna.trial.create_trial(state=TrialState.RUNNING,
                                             user_attrs={"worker": tag})
        if template.state == TrialState.RUNNING and "worker" not in template.user_attrs:
            template = optuna.trial.create_trial(
                state=template.state, params=template.params,
                distributions=template.distributions,
                user_attrs={**template.user_attrs, "worker": tag},
                system_attrs=template.system_attrs)
        return template

    # RDBStorage (behind Optuna's cache) creates through _create_new_trial, the journal storage
    # through create_new_trial.
    for name in ("create_new_trial", "_create_new_trial"):
        original = getattr(storage, name, None)
        if original is None:
            continue

        def create(study_id, template_trial=None, _original=original):
            return _original(study_id, with_tag(template_trial))

        setattr(storage, name, create)
    set_state = getattr(storage, "set_trial_state_values", None)
    if set_state is not None:
        def set_trial_state_values(trial_id, state, values=None, _original=set_state):
            taken = _original(trial_id, state, values)
            if taken and state == TrialState.RUNNING:  # this process took a queued trial
                storage.set_trial_user_attr(trial_id, "worker", tag)
            return taken

        storage.set_trial_state_values = set_trial_state_values


# --------------------------------------------------------------------------- the worker loop

@dataclass
class WorkSummary:
    told: int = 0  #: trials this worker finished (COMPLETE)
    lost_batches: int = 0  #: batches dropped because a trial was failed under the worker
    stale_failed: int = 0  #: stale trials of other workers this worker failed and queued again
    study_complete: int = 0  #: COMPLETE trials in the study when the worker stopped
    timed_out: bool = False
    stopped: bool = False  #: stopped early on request (should_stop)


def _is_conflict(exc: BaseException) -> bool:
    """A tell/set on a trial that another process has already finished (failed as stale)."""
    import optuna

    if isinstance(exc, optuna.exceptions.UpdateFinishedTrialError):
        return True
    return isinstance(exc, ValueError) and str(exc).startswith("Cannot tell a ")


def _count_complete(study) -> int:
    from optuna.trial import TrialState

    return len(study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)))


def work(problem, study, n_trials: int, *, batch_size: int | None = None,
         timeout: float | None = None, stale_after_s: float | None = DEFAULT_STALE_AFTER_S,
         check_every_s: float = CHECK_EVERY_S, scheme: str | None = None,
         seed: int | None = None, should_stop: Callable[[], bool] | None = None) -> WorkSummary:
    """Work on ``study`` until it holds ``n_trials`` COMPLETE trials or ``timeout`` passes.

    Batches of :func:`sinkopt.search.run_search`; between batches, every ``check_every_s``
    seconds, stale trials are failed and queued again. A batch hit by a conflict (one of its
    trials was failed as stale by another process) is dropped and the loop goes on.
    ``should_stop`` is polled between batches (a graceful stop); KeyboardInterrupt propagates
    after the current batch is failed.
    """
    from sinkopt.search.optuna_search import _worker_id, fail_stale_trials

    me = _worker_id()
    summary = WorkSummary()
    start = time.monotonic()
    last_check = [time.monotonic()]

    def check(_progress=None) -> None:
        now = time.monotonic()
        if now - last_check[0] >= check_every_s:
            last_check[0] = now
            summary.stale_failed += fail_stale_trials(study, stale_after_s)

    summary.stale_failed += fail_stale_trials(study, stale_after_s)
    try:
        _work_loop(problem, study, n_trials, summary, me, start, check, batch_size=batch_size,
                   timeout=timeout, stale_after_s=stale_after_s, scheme=scheme, seed=seed,
                   should_stop=should_stop)
    except BaseException:
        # run_search fails the trials of its batch, but not one that ask() had created when the
        # interrupt came (ask samples after creating the trial): fail every trial of this
        # process that is still RUNNING, so none is left for the others' age check.
        with contextlib.suppress(Exception):
            _fail_own_running(study, me)
        raise
    if timeout is not None and time.monotonic() - start >= timeout:
        summary.timed_out = True
    # Last sweep: trials of a worker that died near the end must not stay RUNNING.
    summary.stale_failed += fail_stale_trials(study, stale_after_s)
    from optuna.trial import TrialState

    summary.study_complete = 0
    for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)):
        summary.study_complete += 1
        if t.user_attrs.get("worker") == me:
            summary.told += 1
    return summary


def _fail_own_running(study, me: str) -> int:
    from optuna.trial import TrialState

    n = 0
    for t in study.get_trials(deepcopy=False, states=(TrialState.RUNNING,)):
        if t.user_attrs.get("worker") == me:
            with contextlib.suppress(Exception):
                study.tell(t.number, state=TrialState.FAIL)
                n += 1
    return n


def _work_loop(problem, study, n_trials, summary, me, start, check, *, batch_size, timeout,
               stale_after_s, scheme, seed, should_stop) -> None:
    from sinkopt.search.optuna_search import DEFAULT_BATCH, run_search

    lost = 0
    while True:
        left = None if timeout is None else timeout - (time.monotonic() - start)
        if left is not None and left <= 0:
            summary.timed_out = True
            break
        if should_stop is not None and should_stop():
            summary.stopped = True
            break
        try:
            run_search(problem, study, n_trials, timeout=left,
                       batch_size=batch_size or DEFAULT_BATCH, progress=check,
                       stop_at_total=True, stale_after_s=stale_after_s, scheme=scheme,
                       seed=seed, should_stop=should_stop)
            summary.stopped = should_stop is not None and should_stop()
            break
        except Exception as exc:  # noqa: BLE001 - only conflicts are retried
            if not _is_conflict(exc):
                raise
            summary.lost_batches += 1
            lost += 1
            log.warning("worker %s: a trial of its batch was failed by another worker as stale "
                        "(%s); batch dropped", me, exc)
            if lost >= MAX_LOST_BATCHES:
                raise SinkoptError(f"{lost} batches were failed under this worker by others: "
                                   "is --stale-after shorter than a batch?")
            continue


# --------------------------------------------------------------------------- local workers

@dataclass
class WorkersOutcome:
    exit_codes: list[int] = field(default_factory=list)
    finished_here: int = 0  #: trials the parent ran itself after workers stopped early
    stale_failed: int = 0  #: trials the parent failed and queued again


def _progress_from_study(study, n_trials: int, start: float):
    import math

    from optuna.trial import TrialState

    from sinkopt.search.optuna_search import SearchProgress

    done = feasible = 0
    best = -math.inf
    for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)):
        done += 1
        if t.user_attrs.get("feasible"):
            feasible += 1
            best = max(best, float(t.user_attrs.get("worst_margin_K", -math.inf)))
    return SearchProgress(done, n_trials, feasible, -1, best, time.monotonic() - start)


def _stop(procs: Sequence[subprocess.Popen], grace_s: float) -> None:
    """SIGINT every live worker, wait ``grace_s``, then SIGKILL what is left; reap all."""
    for p in procs:
        if p.poll() is None:
            with contextlib.suppress(ProcessLookupError):
                p.send_signal(signal.SIGINT)
    deadline = time.monotonic() + grace_s
    for p in procs:
        try:
            p.wait(timeout=max(0.0, deadline - time.monotonic()))
        except subprocess.TimeoutExpired:
            with contextlib.suppress(ProcessLookupError):
                p.kill()
            p.wait()


def run_local_workers(problem, study, study_path: Path, *, n_workers: int, n_trials: int,
                      seed: int | None, sampler: str | None, out: Path,
                      storage_url: str | None = None, batch: int | None = None,
                      timeout: float | None = None,
                      stale_after_s: float | None = DEFAULT_STALE_AFTER_S,
                      progress: Callable | None = None, poll_s: float = 0.25,
                      env: dict[str, str] | None = None) -> WorkersOutcome:
    """Start ``n_workers`` ``sinkopt worker`` processes on ``study`` (already created), wait.

    Worker ``i`` gets the seed :func:`derive_seed` ``(seed, i)``. While waiting, the parent
    reports progress from the storage and fails trials of workers that died. When the workers
    are done, the parent fails whatever they left RUNNING and, if the study is still short of
    ``n_trials`` (a worker was killed and the others had already stopped) and time is left,
    runs the rest itself. Raises :class:`SinkoptError` when every worker failed with an error
    code (not by a signal), KeyboardInterrupt (after stopping the workers) on Ctrl-C or SIGTERM.
    """
    from sinkopt.search.optuna_search import DEFAULT_BATCH, fail_stale_trials, run_search

    child_env = dict(os.environ if env is None else env)
    child_env.pop(STORAGE_ENV, None)
    if storage_url:
        child_env[STORAGE_ENV] = storage_url
    outcome = WorkersOutcome()
    start = time.monotonic()
    procs: list[subprocess.Popen] = []
    reported: set[int] = set()
    with sigterm_as_interrupt():
        try:
            for i in range(n_workers):
                argv = worker_argv(study_path, study_name=study.study_name, n_trials=n_trials,
                                   seed=derive_seed(seed, i), sampler=sampler,
                                   out=None if storage_url else out, batch=batch,
                                   timeout=timeout, stale_after_s=stale_after_s)
                # Own process group: a terminal's Ctrl-C reaches only the parent, which
                # forwards exactly one SIGINT to each worker (a second one could cut short the
                # worker's clean-up of its batch).
                procs.append(subprocess.Popen(argv, env=child_env, stdin=subprocess.DEVNULL,
                                              process_group=0))
            last_check = last_progress = 0.0
            while True:
                running = 0
                newly_dead = False
                for i, p in enumerate(procs):
                    code = p.poll()  # also reaps: a zombie would still look alive to kill(pid, 0)
                    if code is None:
                        running += 1
                    elif i not in reported:
                        reported.add(i)
                        if code != 0:
                            newly_dead = True
                            print(f"sinkopt: worker {i + 1} (pid {p.pid}) stopped: "
                                  f"{describe_exit(code)}", file=sys.stderr)
                now = time.monotonic()
                if newly_dead or now - last_check >= CHECK_EVERY_S:
                    last_check = now
                    outcome.stale_failed += fail_stale_trials(study, stale_after_s)
                if progress is not None and (running == 0 or now - last_progress >= 1.0):
                    last_progress = now
                    progress(_progress_from_study(study, n_trials, start))
                if running == 0:
                    break
                time.sleep(poll_s)
        except BaseException:
            _stop(procs, INTERRUPT_GRACE_S)
            with contextlib.suppress(Exception):
                outcome.stale_failed += fail_stale_trials(study, None,
                                                          exclusive=storage_url is None)
            raise
    outcome.exit_codes = [p.returncode for p in procs]
    # Every local worker is gone. With the results folder's journal no one else works on the
    # study, so whatever is still RUNNING is stale (even a trial a worker was killed before it
    # could tag); with a shared database, only trials of dead local processes or old ones are.
    outcome.stale_failed += fail_stale_trials(study, stale_after_s,
                                              exclusive=storage_url is None)
    if outcome.exit_codes and all(c > 0 for c in outcome.exit_codes):
        raise SinkoptError("every worker failed (" + ", ".join(
            describe_exit(c) for c in outcome.exit_codes) + "); see their messages above")
    complete = _count_complete(study)
    left = None if timeout is None else timeout - (time.monotonic() - start)
    if complete < n_trials and (left is None or left > 0):
        print(f"sinkopt: the study holds {complete} of {n_trials} finished trials after the "
              "workers stopped; running the rest in this process", file=sys.stderr)
        with sigterm_as_interrupt():
            outcome.finished_here = run_search(problem, study, n_trials, timeout=left,
                                               batch_size=batch or DEFAULT_BATCH,
                                               progress=progress, stale_after_s=stale_after_s,
                                               scheme=sampler, seed=seed)
    return outcome

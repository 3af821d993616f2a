"""The multi-objective Bayesian search: an Optuna study over a :class:`Problem`, asked and told
in batches so each batch is evaluated in one vectorised call.

Optuna is used only through its public API: samplers, storages, ``ask``/``tell`` and
``trial.set_constraint`` (Optuna ≥ 5: a trial that sets no constraint would count as feasible,
so every trial sets every constraint).
"""
from __future__ import annotations

import logging
import math
import os
import socket
import time
import warnings
from dataclasses import dataclass
from typing import Callable

import numpy as np
import optuna
from optuna.distributions import (BaseDistribution, CategoricalDistribution, FloatDistribution,
                                  IntDistribution)
from optuna.trial import TrialState

from sinkopt.search.pareto import nondominated_mask, to_minimization
from sinkopt.model.problem import OBJECTIVES, SAMPLERS, Problem
from sinkopt.model.system import BatchResult, evaluate_params

__all__ = ["SAMPLERS", "distributions", "make_sampler", "open_study", "run_search",
           "SearchProgress", "fail_stale_trials"]

log = logging.getLogger(__name__)



def refine_due(batch_index: int) -> bool:
    """``tpe-refine``: run a refinement round before this batch? Every batch for the first 16,
    then every 8th. A schedule, not a time budget, so a seeded run is reproducible."""
    return batch_index < 16 or batch_index % 8 == 0


def sampler_asks(n_complete: int, batch: int) -> int:
    """``tpe-refine``: how many of a batch TPE proposes (the refined archive fills the rest).

    A quarter while the study is small; then fewer, because TPE's cost per proposal grows with
    the Pareto set it must split (0.3 s at 1000 trials, docs/theory.md#search-and-pareto-front) while the archive's
    proposals cost nothing.

    >>> [sampler_asks(n, 8) for n in (0, 199, 200, 500, 508)]
    [2, 2, 1, 1, 0]
    """
    if n_complete < 200:
        return max(1, round(0.25 * batch))
    if n_complete < 500:
        return 1
    return 1 if (n_complete // batch) % 2 == 0 else 0
#: Trials asked before the batch is evaluated and told. TPE's constant liar keeps a batch spread
#: out; batches make TPE ~3x cheaper per trial (docs/theory.md#search-and-pareto-front).
DEFAULT_BATCH = 8
#: Batches between two looks for trials left running by a dead worker.
STALE_CHECK_EVERY = 10


def distributions(problem: Problem) -> dict[str, BaseDistribution]:
    """The static search space: one distribution per non-fixed variable."""
    out: dict[str, BaseDistribution] = {}
    for v in problem.variables:
        if v.is_fixed:
            continue
        if v.kind == "float":
            out[v.name] = FloatDistribution(float(v.low), float(v.high),
                                            step=float(v.step) if v.step else None)
        elif v.kind == "int":
            out[v.name] = IntDistribution(int(v.low), int(v.high))
        elif v.kind == "categorical":
            out[v.name] = CategoricalDistribution(list(v.choices))
        else:
            raise ValueError(f"variable {v.name}: unknown kind {v.kind!r}")
    return out


def make_sampler(name: str, seed: int | None, n_objectives: int) -> optuna.samplers.BaseSampler:
    """Build the named Optuna sampler. ``tpe`` and ``tpe-refine``: multivariate TPE with the
    constant liar (``tpe-refine`` adds :mod:`sinkopt.search.refine` proposals in :func:`run_search`)."""
    if name in ("tpe", "tpe-refine"):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
            return optuna.samplers.TPESampler(seed=seed, multivariate=True, constant_liar=True,
                                              n_startup_trials=20)
    if name == "nsga2":
        return optuna.samplers.NSGAIISampler(seed=seed, population_size=40)
    if name == "random":
        return optuna.samplers.RandomSampler(seed=seed)
    if name == "gp":
        try:
            import torch  # noqa: F401  (GPSampler's own dependency)
        except ImportError:
            log.warning("the GP sampler needs torch, which is not installed; using TPE")
            return make_sampler("tpe", seed, n_objectives)
        return optuna.samplers.GPSampler(seed=seed)
    raise ValueError(f"sampler must be one of {', '.join(SAMPLERS)}; got {name!r}")


def open_study(problem: Problem, storage, seed: int | None, sampler: str | None = None,
               study_name: str | None = None) -> optuna.Study:
    """Create the study, or load it to resume; refuse a stored study with other objectives."""
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    name = study_name or problem.name
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
        study = optuna.create_study(study_name=name, storage=storage, directions=directions,
                                    load_if_exists=True)
    stored = [d.name.lower() for d in study.directions]
    if stored != directions:
        raise ValueError(f"the stored study {name!r} optimises {stored}, not {directions}: "
                         "use another results folder or study name")
    # A reused seed would make a resumed random search repeat its first proposals
    # (docs/theory.md#search-and-pareto-front): derive it from the number of trials already stored.
    effective = None if seed is None else seed + len(study.trials)
    study.sampler = make_sampler(sampler or problem.sampler, effective, len(directions))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", optuna.exceptions.ExperimentalWarning)
        study.set_metric_names([OBJECTIVES[o][0] for o in problem.objectives])
    study.set_user_attr("objectives", list(problem.objectives))
    return study


def _worker_id() -> str:
    return f"{socket.gethostname()}:{os.getpid()}"


def _pid_alive(pid: int) -> bool:
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def fail_stale_trials(study: optuna.Study, max_age_s: float | None = None,
                      exclusive: bool = False, max_retries: int = 2) -> int:
    """Fail RUNNING trials left by a dead worker and queue their parameters again.

    A trial is stale when its worker ran on this host and that process is gone, or (when
    ``max_age_s`` is given) when it started longer ago than that, whatever its worker. With
    ``exclusive=True`` the caller is the only worker of the study (a plain ``sinkopt run``), so
    a RUNNING trial without a worker tag is stale too. The journal storage has no
    heartbeat, so without this a killed run's trials would stay RUNNING forever.
    """
    host = socket.gethostname()
    now = time.time()
    n = 0
    for t in study.get_trials(deepcopy=False, states=(TrialState.RUNNING,)):
        worker = t.user_attrs.get("worker", "")
        w_host, _, pid = worker.partition(":")
        dead = w_host == host and pid.isdigit() and not _pid_alive(int(pid))
        old = (max_age_s is not None and t.datetime_start is not None
               and now - t.datetime_start.timestamp() > max_age_s)
        # The only worker of a study (a plain `sinkopt run`) also fails untagged trials: trials
        # are tagged when created, so an untagged RUNNING one was cut off mid-creation.
        if dead or old or (exclusive and not worker):
            try:
                study.tell(t.number, state=TrialState.FAIL)
            except Exception:  # noqa: BLE001 - another worker may have finished it meanwhile
                continue
            # Only the process whose FAIL went through gets here (the storage refuses to
            # finish a trial twice), so each stale trial is queued again at most once; a trial
            # that already went stale ``max_retries`` times (it may be what kills workers) is not.
            # The list may predate parameters drawn just before the FAIL: queue the final ones.
            params = next((f.params for f in study.get_trials(deepcopy=False,
                                                              states=(TrialState.FAIL,))
                           if f.number == t.number), t.params)
            retries = int(t.user_attrs.get("retries", 0))
            if params and retries < max_retries:
                study.enqueue_trial(params, user_attrs={"retry_of": t.number,
                                                        "retries": retries + 1})
            n += 1
    return n


@dataclass
class SearchProgress:
    done: int
    total: int
    feasible: int
    pareto: int
    best_margin: float
    elapsed: float


def _trial_attrs(result: BatchResult, i: int) -> dict:
    return {"worst_margin_K": float(np.nan_to_num(result.evaluation.worst_margin[i], nan=-1e6)),
            "feasible": bool(result.feasible[i])}


def _tell(study: optuna.Study, trials, result: BatchResult, offset: int = 0) -> None:
    """Set every constraint and tell each asked trial its objectives (rows offset + i).

    A trial that another worker has meanwhile failed as stale (its retry is already queued) is
    skipped; the rest of the batch is still told.
    """
    for i, trial in enumerate(trials):
        row = offset + i
        try:
            for name, values in result.constraints.items():
                trial.set_constraint(name, float(values[row]))
            for key, value in _trial_attrs(result, row).items():
                trial.set_user_attr(key, value)
            study.tell(trial, [float(v) for v in result.objectives[row]])
        except optuna.exceptions.UpdateFinishedTrialError:
            log.info("trial %d was finished by another worker; skipped", trial.number)


def _add_finished(study: optuna.Study, params: list[dict], result: BatchResult,
                  space: dict[str, BaseDistribution], worker: str) -> None:
    """Add designs evaluated outside the sampler as COMPLETE trials, constraints included."""
    for i, p in enumerate(params):
        attrs = {**_trial_attrs(result, i), "worker": worker, "proposed_by": "refine"}
        study.add_trial(optuna.trial.create_trial(
            params=p, distributions={k: space[k] for k in p},
            values=[float(v) for v in result.objectives[i]],
            constraints={k: float(v[i]) for k, v in result.constraints.items()},
            user_attrs=attrs))


def run_search(problem: Problem, study: optuna.Study, n_trials: int, timeout: float | None = None,
               batch_size: int = DEFAULT_BATCH,
               progress: Callable[[SearchProgress], None] | None = None,
               stop_at_total: bool = True, stale_after_s: float | None = 120.0,
               scheme: str | None = None, seed: int | None = None,
               should_stop: Callable[[], bool] | None = None) -> int:
    """Ask, evaluate and tell until the study holds ``n_trials`` finished trials (or, with
    ``stop_at_total=False``, until this call has added ``n_trials``), or ``timeout`` passes.

    Returns the number of trials this call finished. On KeyboardInterrupt the trials of the
    current batch are failed (so none stays RUNNING) and the interrupt is re-raised.

    ``should_stop`` is polled between batches: a graceful stop (e.g. after Ctrl-C) that never
    interrupts a write to the storage.

    Every ``STALE_CHECK_EVERY`` batches, trials left RUNNING by a dead worker (or older than
    ``stale_after_s``: a batch takes well under a second, so such a trial's worker is gone) are
    failed and queued again (:func:`fail_stale_trials`), so a study shared by several workers
    still reaches its trial count when one of them is killed.
    """
    space = distributions(problem)
    start = time.monotonic()
    scheme = scheme or problem.sampler
    refiner = None
    if scheme == "tpe-refine" and space:
        from sinkopt.search.refine import FrontRefiner

        done_trials = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
        refiner = FrontRefiner(problem, None if seed is None else seed + len(study.trials))
        refiner.add_known([t.params for t in done_trials])
        directions = [OBJECTIVES[o][1] for o in problem.objectives]
        refiner.mark_told(to_minimization(np.array([t.values for t in done_trials
                                                    if t.user_attrs.get("feasible")]).reshape(
            -1, len(directions)), directions))
        refiner.sweep()
        refiner.refine(rounds=3)
    added = 0
    feasible = sum(1 for t in study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
                   if t.user_attrs.get("feasible"))
    best = max((t.user_attrs.get("worst_margin_K", -math.inf) for t in
                study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
                if t.user_attrs.get("feasible")), default=-math.inf)
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    done_feasible = [t.values for t in study.get_trials(deepcopy=False,
                                                        states=(TrialState.COMPLETE,))
                     if t.user_attrs.get("feasible")]
    front = to_minimization(np.array(done_feasible).reshape(-1, len(directions)), directions)
    front = front[nondominated_mask(front)] if len(front) else front
    worker = _worker_id()
    batches = 0
    while True:
        if batches % STALE_CHECK_EVERY == 0 and batches:
            fail_stale_trials(study, stale_after_s)
        batches += 1
        finished = len(study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,)))
        remaining = (n_trials - finished) if stop_at_total else (n_trials - added)
        if remaining <= 0 or (timeout is not None and time.monotonic() - start > timeout):
            break
        if should_stop is not None and should_stop():
            break
        batch = min(batch_size, remaining)
        if refiner is not None:
            if refine_due(batches - 1):
                refiner.refine()
            proposals = refiner.propose(batch - sampler_asks(finished, batch))
        else:
            proposals = []
        trials = []
        try:
            for _ in range(batch - len(proposals)):
                t = study.ask(space)
                t.set_user_attr("worker", worker)
                trials.append(t)
            result = evaluate_params(problem, proposals + [t.params for t in trials])
            k = len(proposals)
            # Refined designs are already evaluated: they enter the study as finished trials
            # (no sampler call, never RUNNING); the sampler's own proposals are told.
            _add_finished(study, proposals, result, space, worker)
            _tell(study, trials, result, offset=k)
            if refiner is not None:
                refiner.mark_told(to_minimization(result.objectives[result.feasible],
                                                  refiner.directions))
        except BaseException:
            for t in trials:
                try:
                    study.tell(t, state=TrialState.FAIL)
                except Exception:  # noqa: BLE001 - already told
                    pass
            raise
        added += batch
        feasible += int(result.feasible.sum())
        if result.feasible.any():
            best = max(best, float(np.max(result.evaluation.worst_margin[result.feasible])))
            front = np.vstack([front, to_minimization(result.objectives[result.feasible],
                                                      directions)])
            front = front[nondominated_mask(front)]
        if progress:
            progress(SearchProgress(finished + batch if stop_at_total else added,
                                    n_trials, feasible, len(front), best,
                                    time.monotonic() - start))
    return added

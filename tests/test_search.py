"""The search scheme itself: reproducible with a seed, every trial carries every constraint,
and the default scheme does better than random search on the demo study."""
from pathlib import Path

import numpy as np
import optuna
import pytest

from sinkopt.search.pareto import nondominated_mask, to_minimization
from sinkopt.model.problem import OBJECTIVES
from sinkopt.search.optuna_search import open_study, run_search
from sinkopt.study.reader import load_study

DEMO = Path(__file__).resolve().parent.parent / "studies" / "demo_inverter.toml"


def _run(scheme, seed, n=60):
    problem = load_study(DEMO)
    optuna.logging.set_verbosity(optuna.logging.ERROR)
    study = open_study(problem, optuna.storages.InMemoryStorage(), seed,
                       "tpe" if scheme == "tpe-refine" else scheme)
    run_search(problem, study, n, scheme=scheme, seed=seed)
    return problem, study.get_trials(deepcopy=False)


@pytest.mark.parametrize("scheme", ["tpe-refine", "tpe", "nsga2"])
def test_same_seed_same_trials(scheme):
    _, a = _run(scheme, 7, 40)
    _, b = _run(scheme, 7, 40)
    assert [t.params for t in a] == [t.params for t in b]
    assert [t.values for t in a] == [t.values for t in b]
    _, c = _run(scheme, 8, 40)
    assert [t.params for t in a] != [t.params for t in c]


def test_every_trial_sets_every_constraint():
    # Optuna 5 counts a trial without constraints as feasible (docs/theory.md#search-and-pareto-front).
    _, trials = _run("tpe-refine", 1, 40)
    names = set(trials[0].constraints)
    assert {"junction_margin_K", "fin_gap_mm", "fin_aspect", "airflow", "fan_stall"} <= names
    for t in trials:
        assert t.state.name == "COMPLETE"
        assert set(t.constraints) == names
        feasible = all(v <= 0 for v in t.constraints.values())
        assert feasible == t.user_attrs["feasible"]


def test_default_scheme_beats_random_search_at_equal_trials():
    # Hypervolume of the feasible trials (objectives normalised by the union's extremes,
    # reference point 1.1): the default scheme must lead random search at 60 trials.
    moocore = pytest.importorskip("moocore")
    problem, refine = _run("tpe-refine", 3)
    _, rand = _run("random", 3)
    directions = [OBJECTIVES[o][1] for o in problem.objectives]

    def feasible_f(trials):
        return to_minimization(np.array([t.values for t in trials if t.user_attrs["feasible"]]),
                               directions)

    fa, fb = feasible_f(refine), feasible_f(rand)
    both = np.vstack([fa, fb])
    lo, hi = both.min(axis=0), both.max(axis=0)

    def hv(f):
        z = (f[nondominated_mask(f)] - lo) / (hi - lo)
        return moocore.hypervolume(z, ref=np.full(z.shape[1], 1.1))

    assert hv(fa) > hv(fb)


def test_a_complete_trial_without_every_variable_is_left_out_of_the_results(caplog):
    from optuna.distributions import FloatDistribution

    from sinkopt.results.collect import collect_results

    problem = load_study(DEMO)
    optuna.logging.set_verbosity(optuna.logging.ERROR)
    study = open_study(problem, optuna.storages.InMemoryStorage(), 1, "random")
    run_search(problem, study, 16, scheme="random", seed=1)
    study.add_trial(optuna.trial.create_trial(
        params={"width_mm": 80.0}, distributions={"width_mm": FloatDistribution(60, 140)},
        values=[1.0, 1.0, 1.0]))
    results = collect_results(problem, study)
    assert len(results.trial_numbers) == 16 and 16 not in results.trial_numbers
    assert results.states["COMPLETE"] == 17
    assert "lack some design variables" in caplog.text

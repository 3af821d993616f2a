"""Search quality: hypervolume of each search scheme's feasible designs as a fraction of a
reference front, against evaluations and wall time, side by side in one run.

Usage::

    python benchmarks/search_quality.py                      # full run (about 15-25 min)
    python benchmarks/search_quality.py --seeds 2 --budgets 100 200 --sweep 14   # quick look

The reference front is the non-dominated feasible set of a dense scrambled-Sobol sweep of the
whole design space (2**SWEEP designs per fan choice, evaluated with the vectorised model)
merged with every design any scheme evaluated, so no scheme can score above 1. Objectives are
normalised by the reference front's ideal and nadir points and the hypervolume reference point
is 1.1 on every normalised axis (minimisation form); hypervolumes come from moocore. "Evaluations"
are Optuna trials told (for pymoo, designs evaluated); the default scheme also evaluates
designs internally with the vectorised model, and that time is in its wall time.
"""
from __future__ import annotations

import argparse
import os
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

import optuna  # noqa: E402

from sinkopt.search.refine import Encoder  # noqa: E402
from sinkopt.search.pareto import nondominated_mask, to_minimization  # noqa: E402
from sinkopt.model.problem import OBJECTIVES  # noqa: E402
from sinkopt.search.optuna_search import open_study, run_search  # noqa: E402
from sinkopt.study.reader import load_study  # noqa: E402
from sinkopt.model.system import evaluate_params  # noqa: E402

STUDIES = {"demo_inverter": ROOT / "studies" / "demo_inverter.toml",
           "demo_mounting": ROOT / "studies" / "demo_mounting.toml"}
SCHEMES = ("tpe-refine", "tpe", "nsga2", "random", "pymoo-nsga2")


def reference_sweep(problem, log2_n: int, seed: int = 12345):
    """Feasible non-dominated designs of a scrambled Sobol sweep (min-form objectives)."""
    from scipy.stats import qmc

    enc = Encoder(problem)
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    sampler = qmc.Sobol(enc.dim, scramble=True, seed=seed)
    front = np.empty((0, len(directions)))
    n_total = 2 ** log2_n
    chunk = 2 ** 14
    done = 0
    while done < n_total:
        x = sampler.random(chunk)
        r = evaluate_params(problem, enc.decode(x))
        f = to_minimization(r.objectives[r.feasible], directions)
        front = np.vstack([front, f])
        front = front[nondominated_mask(front)]
        done += chunk
    return front


def _feasible_min(study, directions):
    out, times = [], []
    for t in sorted(study.get_trials(deepcopy=False), key=lambda t: t.number):
        if t.state.name != "COMPLETE":
            continue
        feasible = bool(t.user_attrs.get("feasible"))
        out.append((to_minimization(np.array(t.values), directions) if feasible else None))
        times.append(t.datetime_complete.timestamp())
    return out, np.array(times)


def run_optuna(problem, scheme, seed, budget, batch=8):
    optuna.logging.set_verbosity(optuna.logging.ERROR)
    storage = optuna.storages.InMemoryStorage()
    sampler = "tpe" if scheme == "tpe-refine" else scheme
    study = open_study(problem, storage, seed, sampler, study_name=f"{scheme}-{seed}")
    t0 = time.time()
    run_search(problem, study, budget, batch_size=batch, scheme=scheme, seed=seed)
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    points, stamps = _feasible_min(study, directions)
    return points, stamps - t0


def run_pymoo(problem, seed, budget, pop=40):
    from pymoo.algorithms.moo.nsga2 import NSGA2
    from pymoo.core.problem import Problem as PymooProblem
    from pymoo.optimize import minimize

    enc = Encoder(problem)
    directions = [OBJECTIVES[o][1] for o in problem.objectives]
    log: list = []
    stamps: list = []
    t0 = time.time()

    class Wrapped(PymooProblem):
        def __init__(self):
            names = list(problem.objectives)
            super().__init__(n_var=enc.dim, n_obj=len(names), n_ieq_constr=1, xl=0.0, xu=1.0)

        def _evaluate(self, x, out, *args, **kwargs):
            r = evaluate_params(problem, enc.decode(x))
            f = to_minimization(r.objectives, directions)
            viol = sum(np.maximum(v, 0.0) for v in r.constraints.values())
            out["F"] = f
            out["G"] = np.where(r.feasible, -1.0, viol + 1e-9)[:, None]
            now = time.time() - t0
            for i in range(len(x)):
                log.append(f[i] if r.feasible[i] else None)
                stamps.append(now)

    minimize(Wrapped(), NSGA2(pop_size=pop), ("n_eval", budget), seed=seed, verbose=False)
    return log[:budget], np.array(stamps[:budget])


def hypervolume(points, lo, hi):
    import moocore

    pts = [p for p in points if p is not None]
    if not pts:
        return 0.0
    z = (np.array(pts) - lo) / np.where(hi > lo, hi - lo, 1.0)
    return float(moocore.hypervolume(z, ref=np.full(z.shape[1], 1.1)))


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--studies", nargs="+", default=list(STUDIES), choices=list(STUDIES))
    ap.add_argument("--schemes", nargs="+", default=list(SCHEMES), choices=list(SCHEMES))
    ap.add_argument("--budgets", nargs="+", type=int, default=[200, 500, 1000])
    ap.add_argument("--seeds", type=int, default=5)
    ap.add_argument("--sweep", type=int, default=18, help="log2 of the reference sweep size")
    ap.add_argument("--times", nargs="+", type=float, default=[1.0, 2.0, 5.0, 10.0, 30.0, 60.0],
                    help="wall-time checkpoints [s] for the HV-versus-time table")
    args = ap.parse_args(argv)
    budget = max(args.budgets)
    summary = {}
    for name in args.studies:
        problem = load_study(STUDIES[name])
        t0 = time.time()
        ref = reference_sweep(problem, args.sweep)
        sweep_s = time.time() - t0
        runs = {}
        for scheme in args.schemes:
            for seed in range(args.seeds):
                if scheme == "pymoo-nsga2":
                    runs[scheme, seed] = run_pymoo(problem, seed, budget)
                else:
                    runs[scheme, seed] = run_optuna(problem, scheme, seed, budget)
        everything = [ref] + [np.array([p for p in pts if p is not None]).reshape(-1, ref.shape[1])
                              for pts, _ in runs.values()]
        allf = np.vstack(everything)
        reference = allf[nondominated_mask(allf)]
        lo, hi = reference.min(axis=0), reference.max(axis=0)
        hv_ref = hypervolume(list(reference), lo, hi)
        hv_sweep = hypervolume(list(ref), lo, hi)
        print(f"\n## {name}: {len(problem.devices)} devices, {len(problem.air.fans)} fans, "
              f"objectives {', '.join(problem.objectives)}")
        print(f"reference front: {len(reference)} points (sweep of 2^{args.sweep} designs in "
              f"{sweep_s:.0f} s gives {hv_sweep / hv_ref:.4f} of it); HV ref point 1.1 (normalised)")
        print("\nmedian HV fraction over", args.seeds, "seeds, by evaluations")
        print("| scheme | " + " | ".join(str(b) for b in args.budgets) + " | wall s at "
              f"{budget} |")
        print("|---|" + "---|" * (len(args.budgets) + 1))
        for scheme in args.schemes:
            cells, walls = [], []
            for b in args.budgets:
                fr = [hypervolume(runs[scheme, s][0][:b], lo, hi) / hv_ref for s in range(args.seeds)]
                cells.append(f"{np.median(fr):.3f}")
            for s in range(args.seeds):
                walls.append(runs[scheme, s][1][-1] if len(runs[scheme, s][1]) else np.nan)
            print(f"| {scheme} | " + " | ".join(cells) + f" | {np.median(walls):.1f} |")
            summary[name, scheme] = cells
        print("\nmedian HV fraction by wall time (all designs evaluated by then)")
        print("| scheme | " + " | ".join(f"{t:g} s" for t in args.times) + " |")
        print("|---|" + "---|" * len(args.times))
        for scheme in args.schemes:
            cells = []
            for t in args.times:
                fr = []
                for s in range(args.seeds):
                    pts, stamps = runs[scheme, s]
                    k = int(np.searchsorted(stamps, t, side="right"))
                    fr.append(hypervolume(pts[:k], lo, hi) / hv_ref)
                cells.append(f"{np.median(fr):.3f}")
            print(f"| {scheme} | " + " | ".join(cells) + " |")
    print(f"\nmachine: {os.cpu_count()} cores; optuna {optuna.__version__}; numpy {np.__version__}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

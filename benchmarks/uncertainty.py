"""Speed and accuracy of the uncertainty band (sinkopt.model.uncertainty).

    python benchmarks/uncertainty.py [--trials 300] [--samples 1000] [--check-designs 20]

1. Runs the demo study's search (seeded) to get its Pareto front, then times the Monte-Carlo
   band of every front design (``samples`` per design, the corrected 20-term series) and the
   same band on the exact series, side by side, on a few designs (the exact series is the slow
   reference: only ``--check-designs`` of them).
2. Reports the error of the corrected fast form against the exact series, sample by sample
   (same draws), and the error the correction removes (the uncorrected 20-term series).

Prints a table; the latest one is in benchmarks/README.md.
"""
from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]


def _front(trials: int, seed: int):
    import pandas as pd

    from sinkopt.cli.main import main
    from sinkopt.study.reader import load_study

    problem = load_study(ROOT / "studies" / "demo_inverter.toml")
    out = Path(tempfile.mkdtemp(prefix="sinkopt-unc-"))
    code = main(["run", str(ROOT / "studies" / "demo_inverter.toml"), "--trials", str(trials),
                 "--seed", str(seed), "--out", str(out), "--no-report", "--no-progress"])
    assert code == 0, code
    names = [v.name for v in problem.variables if not v.is_fixed]
    front = pd.read_csv(out / "pareto.csv")
    return problem, front[names].to_dict("records")


def _samples_on(problem, params, spec, samples, seed, spreading):
    """Junction temperatures (m, S, s) of the band's draws on a given series (no correction)."""
    from sinkopt.model.design import Perturbation
    from sinkopt.model.system import evaluate_params, to_columns
    from sinkopt.model.uncertainty import sample

    rng = np.random.default_rng(seed)
    cols = to_columns(problem, params)
    m = len(next(iter(cols.values())))
    pert, _ = sample(spec, samples, len(problem.devices), rng)
    rep = {k: np.repeat(np.asarray(v), samples, axis=0) for k, v in cols.items()}
    tile = Perturbation(**{f: None if getattr(pert, f) is None else
                           np.tile(getattr(pert, f), (m, 1) if np.ndim(getattr(pert, f)) == 2
                                   else m) for f in pert.__dataclass_fields__})
    r = evaluate_params(problem, rep, spreading=spreading, perturb=tile)
    return r.evaluation.junction_C.reshape(m, samples, len(problem.devices))


def main(argv=None) -> dict:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=300)
    ap.add_argument("--samples", type=int, default=1000)
    ap.add_argument("--check-designs", type=int, default=20)
    ap.add_argument("--check-samples", type=int, default=200)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--quiet", action="store_true")
    args = ap.parse_args(argv)

    from sinkopt.model.system import evaluate_params
    from sinkopt.model.uncertainty import junction_band

    problem, params = _front(args.trials, args.seed)
    spec = problem.uncertainty
    t0 = time.perf_counter()
    band = junction_band(problem, params, spec, samples=args.samples)
    t_band = time.perf_counter() - t0

    check = params[:: max(1, len(params) // args.check_designs)][: args.check_designs]
    t0 = time.perf_counter()
    exact = _samples_on(problem, check, spec, args.check_samples, 5, "exact")
    t_exact = time.perf_counter() - t0
    t0 = time.perf_counter()
    coarse = _samples_on(problem, check, spec, args.check_samples, 5, "coarse")
    t_coarse = time.perf_counter() - t0
    nominal_exact = evaluate_params(problem, check, spreading="exact").evaluation.junction_C
    nominal_coarse = evaluate_params(problem, check, spreading="coarse").evaluation.junction_C
    corrected = coarse + (nominal_exact - nominal_coarse)[:, None, :]
    ok = np.isfinite(exact)
    err_corrected = np.abs(corrected - exact)[ok]
    err_raw = np.abs(coarse - exact)[ok]
    n_rows = len(check) * args.check_samples
    rows = [
        ("band of the whole front (corrected 20-term series)", len(params), args.samples,
         t_band, len(params) * args.samples / t_band),
        ("the same draws, 20-term series", len(check), args.check_samples, t_coarse,
         n_rows / t_coarse),
        ("the same draws, exact series (reference)", len(check), args.check_samples, t_exact,
         n_rows / t_exact),
    ]
    out = {"rows": rows, "front": len(params),
           "error_corrected_K": (float(err_corrected.max()), float(np.median(err_corrected))),
           "error_uncorrected_K": (float(err_raw.max()), float(np.median(err_raw))),
           "speedup_vs_exact": (n_rows / t_coarse) / (n_rows / t_exact)}
    if not args.quiet:
        print(f"demo_inverter front: {len(params)} designs; {args.samples} samples each\n")
        print("| what | designs | samples | wall s | rows/s |")
        print("|---|---|---|---|---|")
        for name, m, s, t, rate in rows:
            print(f"| {name} | {m} | {s} | {t:.2f} | {rate:,.0f} |")
        print(f"\n20-term vs exact series, measured side by side in this run: "
              f"{out['speedup_vs_exact']:.0f}x faster")
        print(f"junction temperature error against the exact series over "
              f"{err_corrected.size} sample-device values: corrected max "
              f"{out['error_corrected_K'][0]:.3f} K (median {out['error_corrected_K'][1]:.4f} K); "
              f"uncorrected max {out['error_uncorrected_K'][0]:.3f} K "
              f"(median {out['error_uncorrected_K'][1]:.4f} K)")
    return out


if __name__ == "__main__":
    main(sys.argv[1:])
    sys.exit(0)

"""Worker scaling: trials per second with 1, 2 and 4 local workers (``sinkopt worker``
processes started as ``sinkopt run --workers N`` does) on PostgreSQL and on the journal file,
all measured side by side in one run.

    python benchmarks/scaling.py [--trials 100] [--workers 1,2,4] [--storages journal,postgres]

The PostgreSQL URL comes from ``SINKOPT_TEST_POSTGRES_URL``; when it is unset, ``.ci/postgres``
is run to start (or reuse) a throwaway server on 127.0.0.1. Each cell is a fresh study of the
demo inverter (TPE, batches of 8) run to ``--trials`` finished trials. Two rates are printed:
*wall* counts from starting the workers to the last one exiting (process start-up included),
*active* from the first trial's start to the last trial's end, as stored in the study.
"""
from __future__ import annotations

import argparse
import os
import re
import subprocess
import sys
import tempfile
import time
import uuid
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
DEMO = ROOT / "studies" / "demo_inverter.toml"


def study_copy(folder: Path) -> Path:
    """The demo study under a unique name (one study per cell in a shared database)."""
    name = f"scaling-{uuid.uuid4().hex[:8]}"
    text = DEMO.read_text(encoding="utf-8")
    text = re.sub(r'(?m)^name = "demo inverter"', f'name = "{name}"', text, count=1)
    text = text.replace('"../catalogs/fans/*.csv"',
                        f'"{(ROOT / "catalogs" / "fans").as_posix()}/*.csv"')
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


def postgres_url() -> str:
    url = os.environ.get("SINKOPT_TEST_POSTGRES_URL")
    if url:
        return url
    out = subprocess.run(["bash", str(ROOT / ".ci" / "postgres")], check=True,
                         capture_output=True, text=True).stdout
    return out.strip().splitlines()[-1].split("=", 1)[1]


def one_cell(storage: str, url: str | None, n_workers: int, n_trials: int, sampler: str,
             batch: int) -> dict:
    import optuna
    from optuna.trial import TrialState

    from sinkopt.search.optuna_search import open_study
    from sinkopt.search.storage import storage_for
    from sinkopt.study.reader import load_study
    from sinkopt.search.workers import run_local_workers

    optuna.logging.set_verbosity(optuna.logging.WARNING)
    with tempfile.TemporaryDirectory() as tmp:
        path = study_copy(Path(tmp))
        problem = load_study(path)
        out = Path(tmp) / "results"
        out.mkdir()
        study_url = url if storage == "postgres" else None
        study = open_study(problem, storage_for(out, study_url), 1, sampler)
        start = time.perf_counter()
        outcome = run_local_workers(problem, study, path, n_workers=n_workers,
                                    n_trials=n_trials, seed=1, sampler=sampler, out=out,
                                    storage_url=study_url, batch=batch)
        wall = time.perf_counter() - start
        trials = study.get_trials(deepcopy=False, states=(TrialState.COMPLETE,))
        first = min(t.datetime_start for t in trials)
        last = max(t.datetime_complete for t in trials)
        active = (last - first).total_seconds()
        if study_url:  # leave the shared database as it was
            optuna.delete_study(study_name=study.study_name, storage=storage_for(None, url))
    assert all(c == 0 for c in outcome.exit_codes), outcome.exit_codes
    return {"storage": storage, "workers": n_workers, "trials": len(trials), "wall": wall,
            "active": active}


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--trials", type=int, default=100)
    ap.add_argument("--workers", default="1,2,4")
    ap.add_argument("--storages", default="journal,postgres")
    ap.add_argument("--sampler", default="tpe")
    ap.add_argument("--batch", type=int, default=8)
    args = ap.parse_args(argv)
    counts = [int(w) for w in args.workers.split(",")]
    storages = args.storages.split(",")
    url = postgres_url() if "postgres" in storages else None
    rows = []
    for storage in storages:
        for n in counts:
            row = one_cell(storage, url, n, args.trials, args.sampler, args.batch)
            rows.append(row)
            print(f"  {storage:8s} {n} worker(s): {row['trials']} trials, "
                  f"wall {row['wall']:.1f} s, active {row['active']:.1f} s",
                  file=sys.stderr, flush=True)
    load = os.getloadavg()
    print(f"\n{args.trials} trials of the demo study, sampler {args.sampler}, batch {args.batch}, "
          f"{os.cpu_count()} cores, load average before/after "
          f"{load[2]:.1f}/{load[0]:.1f}\n")
    print("| storage | workers | trials | wall s | trials/s (wall) | ratio | "
          "trials/s (active) | ratio |")
    print("|---|---|---|---|---|---|---|---|")
    for storage in storages:
        base = next(r for r in rows if r["storage"] == storage and r["workers"] == counts[0])
        for r in (r for r in rows if r["storage"] == storage):
            w_rate = r["trials"] / r["wall"]
            a_rate = r["trials"] / r["active"]
            print(f"| {storage} | {r['workers']} | {r['trials']} | {r['wall']:.1f} | "
                  f"{w_rate:.1f} | {w_rate / (base['trials'] / base['wall']):.2f} | "
                  f"{a_rate:.1f} | {a_rate / (base['trials'] / base['active']):.2f} |")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

"""``sinkopt report``: rebuild ``report.html`` of a results folder from its stored study."""
from __future__ import annotations

import argparse
import datetime as _dt
import json
import sys
from pathlib import Path

from sinkopt.errors import InputError

__all__ = ["register", "cmd_report", "find_study_file"]


def register(sub) -> None:
    rep = sub.add_parser(
        "report", help="rebuild report.html of a results folder",
        description="Rebuild the interactive report (report.html) of a results folder from its "
                    "stored trials and the run's own copy of its inputs (RESULTS_DIR/inputs/tree/"
                    "), however the originals were edited since (or give --study).",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    rep.add_argument("results_dir", type=Path, metavar="RESULTS_DIR",
                     help="results folder written by 'sinkopt run'")
    rep.add_argument("--storage", default=None,
                     help="Optuna storage URL the run used (default: the folder's study.journal)")
    rep.add_argument("--study", type=Path, default=None,
                     help="study file to use instead of the one recorded in run.json")
    rep.add_argument("--out", type=Path, default=None,
                     help="where to write the page (default: RESULTS_DIR/report.html)")
    rep.add_argument("--force", action="store_true",
                     help="rebuild even though the study or its inputs changed since the run "
                          "(the report then describes the files as they are now)")
    rep.set_defaults(func=cmd_report)


def _read_info(out_dir: Path) -> dict:
    path = out_dir / "run.json"
    try:
        return json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("no run.json: not a results folder written by 'sinkopt run'",
                         str(out_dir)) from None
    except (OSError, ValueError) as exc:
        raise InputError(f"cannot read run.json: {exc}", str(path)) from None


def find_study_file(out_dir: Path, info: dict) -> list[Path]:
    """Candidate study files, best first: the run's own copy in ``inputs/tree/`` (with its fan
    files in their relative layout: what the trials were run with), then the original recorded
    in run.json, then the flat copy in ``inputs/``."""
    from sinkopt.results.files import INPUT_TREE, input_tree

    recorded = [Path(p) for p in (info.get("inputs") or {}) if str(p).endswith(".toml")]
    out: list[Path] = []
    every = [Path(p) for p in (info.get("inputs") or {})]
    if recorded and every:
        rel = dict(zip(every, input_tree(every)))
        copy = out_dir / "inputs" / INPUT_TREE / rel[recorded[0]]
        if copy.is_file():
            out.append(copy)
    for p in recorded[:1]:
        if p.is_file():
            out.append(p)
        copy = out_dir / "inputs" / p.name
        if copy.is_file():
            out.append(copy)
    if not out:
        out += sorted((out_dir / "inputs").glob("*.toml"))
    return out


def cmd_report(args) -> int:
    import optuna

    from sinkopt.results.report import write_report
    from sinkopt.results.collect import collect_results
    from sinkopt.search.storage import STUDY_JOURNAL, storage_for
    from sinkopt.study.reader import load_study

    out_dir: Path = args.results_dir
    if not out_dir.is_dir():
        raise InputError("results folder not found", str(out_dir))
    info = _read_info(out_dir)
    candidates = [args.study] if args.study else find_study_file(out_dir, info)
    if not candidates:
        raise InputError("run.json records no study file and inputs/ holds none; give --study",
                         str(out_dir))
    problem, errors = None, []
    for path in candidates:
        try:
            problem = load_study(path)
            break
        except InputError as exc:
            errors.append(str(exc))
    if problem is None:
        raise InputError("cannot load the study (tried " + ", ".join(map(str, candidates)) +
                         "); give --study with the original file. First error: " + errors[0],
                         str(out_dir))
    from sinkopt.cli.study import changed_inputs

    changes = changed_inputs(problem, info)
    if changes and not (args.force or args.study):
        raise InputError("the study or its inputs changed since the run: " + ", ".join(changes)
                         + "; the report would describe other inputs than the trials'. Restore "
                         "them, give --study with the run's study file, or --force",
                         str(out_dir))
    if changes:
        print("sinkopt: warning: inputs changed since the run (" + ", ".join(changes) + "); "
              "the report uses the files as they are now", file=sys.stderr)
    if not args.storage and not (out_dir / STUDY_JOURNAL).is_file():
        raise InputError(f"no {STUDY_JOURNAL} in the results folder; give --storage with the "
                         "URL the run used", str(out_dir))
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    storage = storage_for(out_dir, args.storage)
    name = info.get("study") or problem.name
    try:
        study = optuna.load_study(study_name=name, storage=storage)
    except KeyError:
        raise InputError(f"the storage holds no study named {name!r}", str(out_dir)) from None
    results = collect_results(problem, study)
    info = dict(info, report_rebuilt_utc=_dt.datetime.now(_dt.timezone.utc)
                .isoformat(timespec="seconds"))
    target = args.out or out_dir / "report.html"
    write_report(results, target, info)
    from sinkopt.results.files import write_json

    write_json(out_dir / "shortlist.json", {"study": problem.name, "picks": results.short_list()})
    print(f"{len(results.trial_numbers)} trials, {len(results.pareto_trials)} Pareto designs "
          f"-> {target}")
    return 0

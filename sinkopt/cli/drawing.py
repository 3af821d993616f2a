"""``sinkopt drawing RESULTS_DIR --trial N [--out DIR]``: a design's dimensioned drawing (SVG
and DXF: section across the fins, plan view with the device footprints) and its one-page
design sheet (HTML, prints on A4); docs/drawings.md."""
from __future__ import annotations

import argparse
import json
import math
from pathlib import Path

from sinkopt.errors import InputError

__all__ = ["register", "cmd_drawing", "load_design"]


def register(sub) -> None:
    p = sub.add_parser(
        "drawing", help="write a design's drawing (SVG, DXF) and design sheet",
        description="Write design-N.svg and design-N.dxf (a dimensioned section across the fins "
                    "and a plan view with each device's footprint; mounting holes are left to "
                    "you) and design-N-sheet.html (one printable A4 page: geometry, material, "
                    "fan and speed, operating point, junction temperatures and margins, "
                    "cautions) for any trial of a results folder. See docs/drawings.md.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="example:\n  sinkopt drawing results/demo --trial 186")
    p.add_argument("results_dir", type=Path, metavar="RESULTS_DIR",
                   help="results folder written by 'sinkopt run'")
    p.add_argument("--trial", type=int, required=True, metavar="N",
                   help="trial number (pareto.csv or trials.csv)")
    p.add_argument("--out", type=Path, default=None, metavar="DIR",
                   help="folder to write into (default: RESULTS_DIR/drawings)")
    p.set_defaults(func=cmd_drawing)


def _load_problem(out_dir: Path, info: dict):
    from sinkopt.cli.report import find_study_file
    from sinkopt.study.reader import load_study

    candidates = find_study_file(out_dir, info)
    if not candidates:
        raise InputError("run.json records no study file and inputs/ holds none",
                         str(out_dir))
    first = None
    for path in candidates:
        try:
            return load_study(path)
        except InputError as exc:
            first = first or exc
    raise InputError(f"cannot load the run's study (tried {', '.join(map(str, candidates))}): "
                     f"{first}", str(out_dir))


def load_design(out_dir: Path, trial: int, problem) -> tuple[dict, bool]:
    """The record of ``trial``: its Pareto record (designs/), or, for any other trial of
    trials.csv, the design evaluated again with the exact series. Returns (record, on_front)."""
    path = out_dir / "designs" / f"trial_{trial:06d}.json"
    if path.is_file():
        return json.loads(path.read_text(encoding="utf-8")), True
    import pandas as pd

    from sinkopt.model.system import evaluate_params
    from sinkopt.results.collect import design_record

    trials = pd.read_csv(out_dir / "trials.csv")
    rows = trials[trials["trial"] == trial]
    if rows.empty:
        span = (f"it holds trials {int(trials['trial'].min())} to {int(trials['trial'].max())}"
                if len(trials) else "it holds no trial")
        raise InputError(f"trial {trial} is not in the results ({span}; the Pareto designs are "
                         "listed in pareto.csv)", str(out_dir / "trials.csv"), "--trial")
    row = rows.iloc[0]
    params = {}
    for v in problem.variables:
        if v.is_fixed or v.name not in row.index:
            continue
        value = row[v.name]
        if v.kind == "categorical":
            params[v.name] = str(value)
        else:
            value = float(value)
            if not math.isfinite(value):
                raise InputError(f"trial {trial} has no value for {v.name}",
                                 str(out_dir / "trials.csv"), v.name)
            params[v.name] = int(round(value)) if v.name == "n_fins" else value
    result = evaluate_params(problem, [params], spreading="exact")
    return design_record(problem, result, 0, trial), False


def cmd_drawing(args) -> int:
    from sinkopt.results.drawing import DRAWINGS_DIR, picks_by_trial, write_design_files
    from sinkopt.results.report import SAFETY_HTML

    out_dir: Path = args.results_dir
    if not (out_dir / "trials.csv").is_file():
        raise InputError("not a results folder written by 'sinkopt run' (no trials.csv)",
                         str(out_dir))
    try:
        info = json.loads((out_dir / "run.json").read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise InputError(f"cannot read run.json: {exc}", str(out_dir)) from None
    problem = _load_problem(out_dir, info)
    record, on_front = load_design(out_dir, args.trial, problem)
    picks = []
    short = out_dir / "shortlist.json"
    if short.is_file():
        try:
            picks = json.loads(short.read_text(encoding="utf-8")).get("picks") or []
        except ValueError:
            picks = []
    target = args.out if args.out is not None else out_dir / DRAWINGS_DIR
    if target.exists() and not target.is_dir():
        raise InputError("is a file, not a folder", str(target), "--out")
    paths = write_design_files(target, problem, record, cautions=SAFETY_HTML,
                               picks=picks_by_trial(picks).get(args.trial, ()), info=info,
                               on_front=on_front)
    note = "" if on_front else " (not a Pareto design: evaluated again with the exact series)"
    print(f"trial {args.trial}{note} -> " + ", ".join(str(p) for p in paths.values()))
    return 0

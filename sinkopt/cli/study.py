"""``sinkopt run`` and ``sinkopt evaluate``: search a study, or evaluate one design of it."""
from __future__ import annotations

import argparse
import contextlib
import json
import math
import signal
import sys
import time
from pathlib import Path

from sinkopt.errors import EXIT_INFEASIBLE, EXIT_INTERRUPTED, InputError

__all__ = ["register", "parse_set"]


def register(sub) -> None:
    run = sub.add_parser(
        "run", help="search a study for the Pareto front of sink and fan designs",
        description="Run the multi-objective search of a study file and write a results folder "
                    "(trials.csv, pareto.csv, designs/, run.json, report.html). Running again on "
                    "the same folder resumes the search.",
        formatter_class=argparse.RawDescriptionHelpFormatter)
    run.add_argument("study", type=Path, help="study file (TOML)")
    run.add_argument("--trials", type=int, default=None,
                     help="total finished trials wanted (default: the study's [study].trials)")
    run.add_argument("--timeout", type=float, default=None, help="stop after this many seconds")
    run.add_argument("--seed", type=int, default=None, help="sampler seed (default: the study's, "
                     "else drawn and recorded)")
    run.add_argument("--sampler", choices=("tpe-refine", "tpe", "nsga2", "random", "gp"),
                     default=None, help="search scheme (default: the study's, else tpe-refine)")
    run.add_argument("--out", type=Path, default=None,
                     help="results folder (default: results/<study name as a folder name>)")
    run.add_argument("--storage", default=None,
                     help="Optuna storage URL, e.g. postgresql://user@host/db "
                          "(default: a journal file in the results folder)")
    run.add_argument("--batch", type=int, default=None, help="trials per vectorised batch")
    run.add_argument("--workers", type=int, default=1,
                     help="local worker processes sharing the study (default 1: search in this "
                          "process); see also 'sinkopt worker'")
    run.add_argument("--no-report", action="store_true", help="skip report.html")
    run.add_argument("--no-progress", action="store_true", help="no progress bar")
    fresh = run.add_mutually_exclusive_group()
    fresh.add_argument("--new", action="store_true",
                       help="start afresh in a results folder that holds another run (its "
                            "trials, results and report are deleted)")
    fresh.add_argument("--force", action="store_true",
                       help="resume even though the study or its inputs changed since the "
                            "folder's run (the results then mix both)")
    run.set_defaults(func=cmd_run)

    ev = sub.add_parser(
        "evaluate", help="evaluate one design of a study and print every quantity",
        description="Evaluate one design (exact spreading series). Variables not given take "
                    "their fixed value, or the middle of their range.")
    ev.add_argument("study", type=Path)
    ev.add_argument("--set", dest="sets", action="append", nargs="+", default=[],
                    metavar="NAME=VALUE", help="design variable values, e.g. n_fins=18")
    ev.add_argument("--json", action="store_true", help="print one JSON object on stdout")
    ev.add_argument("--spreading", choices=("exact", "coarse", "fast"), default="exact")
    ev.set_defaults(func=cmd_evaluate)


def _load(path: Path, warnings_out: list[str] | None = None):
    """Load a study; warnings raised while reading it (fan-curve files, ...) are printed and,
    when ``warnings_out`` is given, collected for run.json."""
    import warnings

    from sinkopt.study.reader import load_study

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        problem = load_study(path)
    for w in caught:
        print(f"sinkopt: warning: {w.message}", file=sys.stderr)
        if warnings_out is not None:
            warnings_out.append(str(w.message))
    return problem


def parse_set(problem, items: list[str]) -> dict:
    """``name=value`` strings to a parameter dict, typed and range-checked per variable."""
    params = {}
    known = {v.name: v for v in problem.variables}
    for item in items:
        name, sep, text = item.partition("=")
        if not sep:
            raise InputError(f"expected NAME=VALUE, got {item!r}", field="--set")
        name = name.strip()
        if name not in known:
            import difflib

            close = difflib.get_close_matches(name, known, n=1)
            hint = f"; did you mean {close[0]}?" if close else ""
            raise InputError(f"unknown variable {name!r}{hint} (variables: {', '.join(known)})",
                             field="--set")
        v = known[name]
        try:
            if v.kind == "int":
                number = float(text)
                if not number.is_integer():
                    raise InputError(f"must be a whole number, got {text!r}", field=f"--set {name}")
                value = int(number)
            elif v.kind == "float":
                value = float(text)
                if not math.isfinite(value):
                    raise InputError(f"must be a finite number, got {text!r}", field=f"--set {name}")
            else:
                value = text
                choices = [str(c) for c in v.choices] or ([str(v.fixed)] if v.is_fixed else [])
                if text not in choices:
                    raise InputError(f"{text!r} is not one of {', '.join(choices)}",
                                     field=f"--set {name}")
        except ValueError as exc:
            if isinstance(exc, InputError):
                raise
            raise InputError(f"expected a number, got {text!r}", field=f"--set {name}") from None
        if v.kind in ("int", "float"):
            lo, hi = (v.fixed, v.fixed) if v.is_fixed else (v.low, v.high)
            if not lo <= value <= hi:
                span = (f"fixed at {lo:g} in the study" if v.is_fixed
                        else f"the study's range is {lo:g} … {hi:g}")
                raise InputError(f"{value:g} is outside what the study allows ({span})",
                                 field=f"--set {name}")
        params[name] = value
    for v in problem.variables:
        if v.name in params or v.is_fixed:
            continue
        if v.kind == "categorical":
            params[v.name] = v.choices[0]
        elif v.kind == "int":
            params[v.name] = int(round((v.low + v.high) / 2))
        else:
            params[v.name] = (v.low + v.high) / 2
    return params


def cmd_evaluate(args) -> int:
    from sinkopt.results.collect import design_record
    from sinkopt.model.system import evaluate_params

    problem = _load(args.study)
    params = parse_set(problem, [s for group in args.sets for s in group])
    result = evaluate_params(problem, [params], spreading=args.spreading)
    rec = design_record(problem, result, 0)
    rec["failed_constraints"] = failed_constraints(rec)
    if problem.still_air is not None:
        from sinkopt.model.fans_stopped import fans_stopped_of

        rec["fans_stopped"] = fans_stopped_of(problem, [params], result).record(
            0, [d.name for d in problem.devices])
    if problem.load_profile is not None:
        from sinkopt.model.load_profile import profile_of

        rec["load_profile"] = profile_of(problem, [params], result).record(0, problem.devices)
    if args.json:
        json.dump(rec, sys.stdout, indent=2, allow_nan=False)
        sys.stdout.write("\n")
        return 0
    _print_design(rec)
    return 0


def _fmt(v, unit="", digits=4):
    if v is None:
        return "n/a"
    if isinstance(v, float):
        return f"{v:.{digits}g}{(' ' + unit) if unit else ''}"
    return f"{v}{(' ' + unit) if unit else ''}"


def _print_design(rec: dict) -> None:
    p = rec["params"]
    print("design: " + ", ".join(f"{k}={_fmt(v)}" for k, v in p.items()))
    print(f"  feasible            {rec['feasible']}")
    if rec.get("fan"):
        rpm = rec.get("fan_speed_rpm")
        print(f"  fan                 {rec['fan']} at {_fmt(rec.get('fan_speed_pct'), '%', 3)} of "
              f"rated speed" + (f" ({rpm:.0f} rpm)" if rpm else ""))
    print(f"  airflow             {_fmt(rec['airflow_m3_s'] and rec['airflow_m3_s'] * 3600, 'm3/h')}"
          f"  ({_fmt(rec['airflow_m3_s'], 'm3/s')})")
    print(f"  system pressure     {_fmt(rec['pressure_drop_Pa'], 'Pa')}")
    print(f"  sink resistance     {_fmt(rec['sink_resistance_K_per_W'], 'K/W')} (base to inlet air)")
    print(f"  fan power           {_fmt(rec['fan_power_W'], 'W')}")
    print(f"  sink volume, mass   {_fmt(rec['volume_cm3'], 'cm3')}, {_fmt(rec['mass_kg'], 'kg')}")
    print(f"  air out             {_fmt(rec['air_outlet_C'], '°C')} (rise {_fmt(rec['air_rise_K'], 'K')})")
    print(f"  fin gap, aspect     {_fmt(rec['fin_gap_mm'], 'mm')}, {_fmt(rec['fin_aspect'])}")
    print("  devices:")
    for d in rec["devices"]:
        print(f"    {d['name']:<16} Tj {_fmt(d['junction_C'], '°C')}  margin {_fmt(d['margin_K'], 'K')}"
              f"  (limit {d['tj_max_C']} °C, mounting {d['mounting']})")
    failed = rec.get("failed_fan")
    if failed:
        if failed["applies"]:
            q = failed["airflow_m3_s"]
            print(f"  one fan stopped     airflow {_fmt(q and q * 3600, 'm3/h')}, Tj "
                  + ", ".join(f"{k} {_fmt(v, '°C')}" for k, v in failed["junction_C"].items())
                  + f" (worst margin {_fmt(failed['worst_margin_K'], 'K')})")
        else:
            print(f"  one fan stopped     {failed['note']}")
    still = rec.get("fans_stopped")
    if still:
        t = still["time_to_limit_after_fan_stop_s"]
        print(f"  fans stopped        at {100 * still['load_fraction']:g} % load: Tj "
              + ", ".join(f"{k} {_fmt(v, '°C')}" for k, v in still["steady_junction_C"].items()))
        print(f"                      largest load with no airflow "
              f"{100 * still['largest_load_fraction']:.3g} %; after a fan stop at full load "
              + ("no junction reaches its limit" if t is None else
                 f"{still['first_device_at_limit']} reaches its limit in {t:.4g} s"))
    prof = rec.get("load_profile")
    if prof:
        print(f"  load profile        ({prof['start']} start) peak Tj "
              + ", ".join(f"{k} {_fmt(v, '°C')} at {_fmt(prof['peak_time_s'][k], 's')}"
                          for k, v in prof["peak_junction_C"].items()))
    failing = failed_constraints(rec)
    if failing:
        print("  fails: " + "; ".join(failing))
    for w in rec["warnings"]:
        print(f"  warning: {w}")


_CONSTRAINT_TEXT = {
    "junction_margin_K": ("junction margin", "K short of the required margin"),
    "failed_fan_margin_K": ("junction margin with one fan stopped", "K short"),
    "fin_gap_mm": ("fin gap", "mm below the process minimum"),
    "fin_thickness_mm": ("fin thickness", "mm below the process minimum"),
    "fin_aspect": ("fin height / gap", "above the process maximum"),
    "base_thickness_mm": ("base thickness", "mm below the process minimum"),
    "devices_on_base_mm": ("device footprints", "mm off the base"),
    "airflow": ("airflow", "no fan operating point"),
    "fan_stall": ("fan stall", "operating point in the stall region"),
    "time_to_limit_after_fan_stop_s": ("time to the limit after a fan stop",
                                       "s short of the required time"),
    "profile_margin_K": ("junction margin at the load profile's peak",
                         "K short of the required margin"),
    "air_rise_K": ("air temperature rise", "K over the limit"),
    "noise_dBA": ("fan noise", "dB(A) over the limit"),
    "width_mm": ("sink width", "mm over the limit"),
    "length_mm": ("sink length", "mm over the limit"),
    "height_mm": ("sink height", "mm over the limit"),
    "mass_kg": ("sink mass", "kg over the limit"),
    "fan_power_W": ("fan power", "W over the limit"),
    "pressure_drop_Pa": ("system pressure drop", "Pa over the limit"),
}


def blocking_constraints(constraints: dict, top: int = 6) -> list[str]:
    """What keeps the trials infeasible: each violated constraint with the share of trials it
    rejects and by how much (median and least excess), most rejecting first."""
    import numpy as np

    rows = []
    n = None
    for name, values in constraints.items():
        v = np.asarray(values, dtype=float)
        n = v.size
        bad = v > 0
        if not v.size or not bad.any():
            continue
        what, unit = _CONSTRAINT_TEXT.get(name, (name.replace("_", " "), "over the limit"))
        share = bad.mean()
        excess = v[bad]
        if name in ("airflow", "fan_stall"):
            detail = unit
        elif np.all(excess >= 1e5):  # the stand-in of a design that could not be evaluated
            detail = "not evaluated (no operating point or impossible geometry)"
        else:
            real = excess[excess < 1e5]
            detail = f"{np.median(real):.3g} {unit} (median; {real.min():.3g} at least)"
        rows.append((share, f"{what}: rejects {share:.0%} of {n} trials, {detail}"))
    rows.sort(key=lambda r: -r[0])
    return [text for _, text in rows[:top]]


def failed_constraints(rec: dict) -> list[str]:
    """Each violated constraint of a design record, with by how much."""
    out = []
    constraints = rec.get("constraints", {})
    no_air = (constraints.get("airflow") or 0) > 0
    for name, value in constraints.items():
        if value is None or value <= 0:
            continue
        if no_air and name in ("junction_margin_K", "failed_fan_margin_K"):
            continue  # no temperatures without an operating point
        if name == "failed_fan_margin_K" and not (rec.get("failed_fan") or {}).get("applies", True):
            out.append("one fan stopped: a single fan has no redundancy (use two or more fans, "
                       "or turn failed_fan_check off)")
            continue
        what, unit = _CONSTRAINT_TEXT.get(name, (name.replace("_", " "), "over the limit"))
        if name in ("airflow", "fan_stall"):
            out.append(f"{what}: {unit}")
        else:
            out.append(f"{what}: {value:.3g} {unit}")
    return out


@contextlib.contextmanager
def _graceful_interrupt():
    """The first Ctrl-C (SIGINT) asks the search to stop after its current batch, so no storage
    write is cut in half; a second one interrupts at once."""
    flag = {"stop": False}
    previous = signal.getsignal(signal.SIGINT)

    def handler(signum, frame):
        if flag["stop"]:
            raise KeyboardInterrupt
        flag["stop"] = True
        print("\nsinkopt: stopping after this batch (Ctrl-C again to stop at once)",
              file=sys.stderr)

    try:
        signal.signal(signal.SIGINT, handler)
    except ValueError:  # not the main thread: keep the default behaviour
        yield lambda: False
        return
    try:
        yield lambda: flag["stop"]
    finally:
        signal.signal(signal.SIGINT, previous)


class _Progress:
    def __init__(self, total: int, enabled: bool):
        self.bar = None
        if enabled:
            import shutil

            from tqdm import tqdm

            # A terminal that reports no size (0 x 0: some IDE consoles, a bare pty) made the
            # bar print nothing at all; shutil falls back to 80 x 24 there.
            size = shutil.get_terminal_size(fallback=(80, 24))
            self.bar = tqdm(total=total, unit="trial", disable=None, file=sys.stderr,
                            ncols=min(size.columns, 120), nrows=size.lines)

    def __call__(self, p) -> None:
        if self.bar is None:
            return
        self.bar.n = min(p.done, self.bar.total)
        margin = "n/a" if p.best_margin == float("-inf") else f"{p.best_margin:.1f} K"
        self.bar.set_postfix_str(f"feasible {p.feasible}, pareto {p.pareto}, best margin {margin}",
                                 refresh=False)
        self.bar.refresh()

    def close(self) -> None:
        if self.bar is not None:
            self.bar.close()


#: What a results folder holds from a run (deleted by ``run --new``).
RUN_FILES = ("run.json", "trials.csv", "pareto.csv", "report.html", "study.journal")
RUN_FOLDERS = ("designs", "inputs")


def changed_inputs(problem, info: dict) -> list[str]:
    """The inputs recorded in a folder's run.json whose SHA-256 differs from the files now (or
    that are gone), and the current inputs the run did not have; by file name."""
    from sinkopt.results.files import sha256_file

    recorded = {Path(p).name: h for p, h in (info.get("inputs") or {}).items()}
    now = {Path(p).name: sha256_file(Path(p)) for p in problem.inputs if Path(p).is_file()}
    out = [f"{name} (changed)" for name, h in recorded.items() if name in now and now[name] != h]
    out += [f"{name} (no longer an input)" for name in recorded if name not in now]
    out += [f"{name} (new input)" for name in now if name not in recorded]
    return out


def _check_results_folder(problem, out: Path, storage_url, fresh: bool) -> None:
    """Refuse to mix runs in one results folder: another study, or this study with inputs
    changed since, needs ``--new`` (start afresh) or ``--force`` (resume anyway)."""
    import shutil

    info_path = out / "run.json"
    if not info_path.is_file():
        return
    try:
        info = json.loads(info_path.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        info = {}
    if fresh:
        for name in RUN_FILES:
            (out / name).unlink(missing_ok=True)
        for name in RUN_FOLDERS:
            shutil.rmtree(out / name, ignore_errors=True)
        if storage_url:
            import optuna

            from sinkopt.search.storage import storage_for

            try:
                optuna.delete_study(study_name=problem.name,
                                    storage=storage_for(out, storage_url))
            except KeyError:
                pass
        print(f"sinkopt: started afresh in {out} (--new)", file=sys.stderr)
        return
    other = info.get("study")
    if other is not None and other != problem.name:
        raise InputError(f"holds the results of another study ({other!r}, not "
                         f"{problem.name!r}); give another --out, or --new to start afresh "
                         "there", str(out), "--out")
    changes = changed_inputs(problem, info)
    if changes:
        raise InputError("the study or its inputs changed since this folder's run: "
                         + ", ".join(changes) + "; resuming would mix both. Give --new to "
                         "start afresh, another --out, or --force to resume anyway",
                         str(out), "--out")


def cmd_run(args) -> int:
    import random

    import optuna

    from sinkopt.results.collect import collect_results
    from sinkopt.results.files import run_info, write_results
    from sinkopt.search.optuna_search import DEFAULT_BATCH, fail_stale_trials, open_study, run_search
    from sinkopt.search.storage import storage_for

    input_warnings: list[str] = []
    problem = _load(args.study, input_warnings)
    out = args.out or problem.default_results_dir()
    if out.exists() and not out.is_dir():
        raise InputError(f"{out} is a file, not a folder: give a results folder", field="--out")
    if args.trials is not None and args.trials < 1:
        raise InputError(f"must be 1 or more, got {args.trials}", field="--trials")
    if args.workers < 1:
        raise InputError(f"must be 1 or more, got {args.workers}", field="--workers")
    if not args.force:
        _check_results_folder(problem, out, args.storage, fresh=args.new)
    out.mkdir(parents=True, exist_ok=True)
    n_trials = problem.trials if args.trials is None else args.trials
    seed = args.seed if args.seed is not None else problem.seed
    if seed is None:
        seed = random.SystemRandom().randrange(2**31)
    sampler = args.sampler or problem.sampler
    optuna.logging.set_verbosity(optuna.logging.WARNING)
    storage = storage_for(out, args.storage)
    study = open_study(problem, storage, seed, sampler)
    stale = fail_stale_trials(study, exclusive=args.storage is None)
    if stale:
        print(f"sinkopt: {stale} trial(s) left running by a stopped run were failed and queued "
              "again", file=sys.stderr)
    progress = _Progress(n_trials, not args.no_progress)
    interactive = progress.bar is not None and not progress.bar.disable  # a terminal
    start = time.monotonic()
    interrupted = False
    try:
        if args.workers > 1:
            from sinkopt.search.workers import run_local_workers
            run_local_workers(problem, study, args.study, n_workers=args.workers,
                              n_trials=n_trials, seed=seed, sampler=sampler, out=out,
                              storage_url=args.storage, batch=args.batch, timeout=args.timeout,
                              progress=progress)
        else:
            with _graceful_interrupt() as stop:
                run_search(problem, study, n_trials, timeout=args.timeout,
                           batch_size=args.batch or DEFAULT_BATCH, progress=progress,
                           scheme=sampler, seed=seed, should_stop=stop)
            interrupted = stop()
    except KeyboardInterrupt:
        interrupted = True
    finally:
        progress.close()
    if interactive:
        print("sinkopt: reviewing the front (exact series, uncertainty band"
              + (", fans-stopped checks" if problem.still_air is not None else "")
              + (", load profile" if problem.load_profile is not None else "") + ")...",
              file=sys.stderr)
    results = collect_results(problem, study)
    info = run_info(problem, seed=seed, sampler=sampler, n_trials=n_trials,
                    command=sys.argv, storage_url=args.storage,
                    elapsed_s=time.monotonic() - start, states=results.states,
                    warnings=input_warnings)
    write_results(results, out, info)
    if not args.no_report:
        try:
            from sinkopt.results.report import write_report
        except ImportError:
            write_report = None
        if write_report is not None:
            write_report(results, out / "report.html", info)
    n_front = len(results.pareto_trials)
    print(f"{len(results.trial_numbers)} trials, {int(results.search.feasible.sum())} feasible "
          f"(search model), {n_front} designs on the Pareto front -> {out}")
    picks = results.short_list()
    if picks:
        from sinkopt.cli.pick import format_picks

        print("short list (sinkopt pick " + str(out) + "):")
        print("\n".join(format_picks(picks)))
    if len(results.trial_numbers) > n_trials:
        print(f"sinkopt: {len(results.trial_numbers) - n_trials} trials more than the {n_trials} "
              "asked for: parallel workers each finish the batch in hand (at most "
              "(workers − 1) × batch extra)", file=sys.stderr)
    if interrupted:
        print("sinkopt: interrupted; results saved, run again to resume", file=sys.stderr)
        return EXIT_INTERRUPTED
    if n_front == 0:
        print("sinkopt: no feasible design found; see trials.csv for the closest ones",
              file=sys.stderr)
        for line in blocking_constraints(results.search.constraints):
            print(f"  {line}", file=sys.stderr)
        return EXIT_INFEASIBLE
    return 0

"""The Python API, the one documented home of sinkopt's entry points: read a study, evaluate
designs, run a study and read a results folder as pandas DataFrames::

    import sinkopt.api as so
    problem = so.load_study("studies/demo_inverter.toml")
    design = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
              "n_fins": 18, "base_thickness_mm": 6, "fan": "demo-axial-80-stall", "fan_speed": 1.0}
    batch = so.evaluate_params(problem, [design])
    batch.objectives, batch.feasible
    res = so.run_study("studies/demo_inverter.toml", trials=200, seed=1, out="results/demo")
    res.pareto_df()[["trial", "volume_cm3", "fan_power_W", "worst_margin_K"]]
    res.design(int(res.pareto_df()["trial"][0]))["devices"]
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

__all__ = ["ResultsFolder", "load_study", "evaluate_params", "load_results", "run_study"]


@dataclass(frozen=True)
class ResultsFolder:
    """A results folder written by ``sinkopt run``."""

    path: Path

    def trials_df(self):
        """Every finished trial (search model), one row each, units in the column names."""
        import pandas as pd

        return pd.read_csv(self.path / "trials.csv")

    def pareto_df(self):
        """The Pareto designs re-evaluated with the exact spreading series."""
        import pandas as pd

        return pd.read_csv(self.path / "pareto.csv")

    def design(self, trial: int) -> dict[str, Any]:
        """The full record of one Pareto design (per-device junctions, breakdown, warnings)."""
        return json.loads((self.path / "designs" / f"trial_{int(trial):06d}.json").read_text())

    @property
    def run_info(self) -> dict[str, Any]:
        return json.loads((self.path / "run.json").read_text())


def load_study(path):
    """Read and check a study file; returns the resolved problem (SI units inside).

    Bad input raises :class:`sinkopt.errors.InputError` naming the file, the field and the rule.
    """
    from sinkopt.study.reader import load_study as _load

    return _load(path)


def evaluate_params(problem, params, spreading: str | None = None):
    """Evaluate designs of a problem: a list of parameter dicts, or a dict of columns (one array
    per variable, the fast path). Each design gives every free variable of the study, by the
    names and units of its ``[variables]`` (``width_mm``, ``n_fins``, ``fan``, ``fan_speed``...);
    fixed variables may be left out. Returns a batch result with objectives, constraints and the
    per-device evaluation."""
    from sinkopt.model.system import evaluate_params as _evaluate

    return _evaluate(problem, params, spreading=spreading)


def load_results(folder) -> ResultsFolder:
    path = Path(folder)
    if not (path / "trials.csv").is_file():
        raise FileNotFoundError(f"{path}: not a sinkopt results folder (no trials.csv)")
    return ResultsFolder(path)


def run_study(study, trials: int | None = None, seed: int | None = None, out=None,
              sampler: str | None = None, report: bool = True) -> ResultsFolder:
    """Run (or resume) a study exactly as ``sinkopt run`` does and return its results folder.

    Raises ``RuntimeError`` with the exit code when the run does not end normally (2: bad input,
    3: no feasible design, 130: interrupted).
    """
    from sinkopt.cli.main import main
    from sinkopt.study.reader import load_study

    out = Path(out) if out is not None else load_study(study).default_results_dir()
    argv = ["run", str(study), "--out", str(out), "--no-progress"]
    if trials is not None:
        argv += ["--trials", str(trials)]
    if seed is not None:
        argv += ["--seed", str(seed)]
    if sampler is not None:
        argv += ["--sampler", sampler]
    if not report:
        argv.append("--no-report")
    code = main(argv)
    if code not in (0, 3):
        raise RuntimeError(f"sinkopt run ended with exit code {code}")
    return ResultsFolder(out)

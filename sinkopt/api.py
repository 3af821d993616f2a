"""Notebook API: run a study and read a results folder as pandas DataFrames::

    import sinkopt.api as so
    res = so.run_study("studies/demo_inverter.toml", trials=200, seed=1, out="results/demo")
    res.pareto_df()[["trial", "volume_cm3", "fan_power_W", "worst_margin_K"]]
    res.design(int(res.pareto_df()["trial"][0]))["devices"]
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from pathlib import Path
from typing import Any

__all__ = ["ResultsFolder", "load_results", "run_study"]


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
    from sinkopt.cli import main
    from sinkopt.study_file import load_study

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

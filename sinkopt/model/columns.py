"""Design parameters as columns: one array per search variable (fixed ones filled in), and the
sink geometry and mounting choice they describe. Shared by the evaluator and the checks built on
it (uncertainty, fans stopped, load profiles)."""
from __future__ import annotations

from typing import Any

import numpy as np

from sinkopt.model.design import SinkGeometry
from sinkopt.model.problem import GEOMETRY_VARIABLES, Problem

__all__ = ["full_params", "to_columns", "geometry_of", "stack_choice"]


def full_params(problem: Problem, params: dict[str, Any]) -> dict[str, Any]:
    """The trial's parameters plus every fixed variable's value."""
    out = {v.name: v.fixed for v in problem.variables if v.is_fixed}
    out.update(params)
    return out


def to_columns(problem: Problem, params) -> dict[str, np.ndarray]:
    """Parameters as one array per variable, fixed variables filled in.

    ``params`` is a sequence of dicts (one per design) or a dict of equal-length sequences.
    """
    if isinstance(params, dict):
        cols = {k: np.asarray(v) for k, v in params.items()}
        n = len(next(iter(cols.values()))) if cols else 0
    else:
        params = list(params)
        n = len(params)
        names = {k for p in params for k in p}
        cols = {k: np.array([p[k] for p in params]) for k in names}
    for v in problem.variables:
        if v.is_fixed and v.name not in cols:
            cols[v.name] = np.full(n, v.fixed, dtype=object if isinstance(v.fixed, str) else None)
        elif n == 0 and v.name not in cols:
            cols[v.name] = np.array([], dtype=object if v.kind == "categorical" else float)
    return cols


def geometry_of(problem: Problem, cols: dict[str, np.ndarray]) -> SinkGeometry:
    values = {}
    for name, (_, factor) in GEOMETRY_VARIABLES.items():
        values[name] = np.asarray(cols[name], dtype=float) * factor
    n = len(values["width_mm"])
    if any(v.shape != (n,) for v in values.values()):
        return SinkGeometry.of(width=values["width_mm"], length=values["length_mm"],
                               fin_height=values["fin_height_mm"],
                               fin_thickness=values["fin_thickness_mm"],
                               n_fins=np.round(values["n_fins"]),
                               base_thickness=values["base_thickness_mm"])
    return SinkGeometry(width=values["width_mm"], length=values["length_mm"],
                        fin_height=values["fin_height_mm"],
                        fin_thickness=values["fin_thickness_mm"],
                        n_fins=np.round(values["n_fins"]),
                        base_thickness=values["base_thickness_mm"])


def stack_choice(problem: Problem, cols, n: int) -> np.ndarray | None:
    """(n, s) index of each device's mounting stack; None: the first stack everywhere."""
    keys = [f"mount_{d.name}" for d in problem.devices]
    if not any(k in cols for k in keys):
        return None
    out = np.zeros((n, len(problem.devices)), dtype=int)
    for j, d in enumerate(problem.devices):
        key = keys[j]
        if key in cols:
            names = np.array([s.name for s in d.stacks], dtype=object)
            chosen = cols[key].astype(object)
            for k, name in enumerate(names):
                out[chosen == name, j] = k
    return out

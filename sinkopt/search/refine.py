"""Vectorised front refinement: the cheap model searched by the thousand, its best designs fed
to the Optuna study as trials.

The model evaluates ~10^4–10^5 designs per second while a Bayesian sampler proposes a few per
second, so the default scheme (``tpe-refine``) lets numpy do the bulk of the searching:

1. a scrambled Sobol sweep of the whole design space (warm start);
2. rounds of refinement: children of the current feasible Pareto set (blend crossover between
   two front members, Gaussian steps shrinking as rounds go on, occasional re-draws of
   categorical choices), evaluated in one vectorised call, merged into an archive that keeps the
   feasible non-dominated designs;
3. each Optuna batch is mostly filled with archive designs not yet told, picked for spread
   (farthest-point in normalised objective space), the rest proposed by multivariate TPE, which
   keeps exploring where the archive has not been.

Every design told to Optuna is evaluated again in its trial (same model, same numbers), so the
study, its storage and resume behave exactly as with any other sampler.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
from scipy.stats import qmc

from sinkopt.search.pareto import nondominated_mask, to_minimization
from sinkopt.model.problem import OBJECTIVES, Problem
from sinkopt.model.system import evaluate_params

__all__ = ["Encoder", "FrontRefiner"]


@dataclass
class Encoder:
    """Maps the searched variables to [0, 1] coordinates and back (categoricals by index)."""

    problem: Problem
    names: list[str] = field(init=False)
    kinds: list[str] = field(init=False)

    def __post_init__(self) -> None:
        self.vars = [v for v in self.problem.variables if not v.is_fixed]
        self.names = [v.name for v in self.vars]
        self.kinds = [v.kind for v in self.vars]

    @property
    def dim(self) -> int:
        return len(self.vars)

    def decode(self, x: np.ndarray) -> dict[str, np.ndarray]:
        """Columns of parameter values for unit-cube points x (n, dim)."""
        cols: dict[str, np.ndarray] = {}
        for j, v in enumerate(self.vars):
            u = np.clip(x[:, j], 0.0, 1.0)
            if v.kind == "float" and v.step:  # the dimension grid: what a drawing carries
                n_steps = round((v.high - v.low) / v.step)
                cols[v.name] = np.round(v.low + np.round(u * n_steps) * v.step, 9)
            elif v.kind == "float":
                cols[v.name] = v.low + u * (v.high - v.low)
            elif v.kind == "int":
                span = int(v.high) - int(v.low) + 1
                cols[v.name] = np.minimum(int(v.low) + np.floor(u * span), int(v.high)).astype(int)
            else:
                k = len(v.choices)
                idx = np.minimum(np.floor(u * k), k - 1).astype(int)
                cols[v.name] = np.array(v.choices, dtype=object)[idx]
        return cols

    def encode(self, params: list[dict[str, Any]]) -> np.ndarray:
        """Unit-cube points (centres of int and categorical cells) for parameter dicts."""
        x = np.empty((len(params), self.dim))
        for j, v in enumerate(self.vars):
            vals = [p[v.name] for p in params]
            if v.kind == "float":
                x[:, j] = (np.asarray(vals, float) - v.low) / (v.high - v.low or 1.0)
            elif v.kind == "int":
                span = int(v.high) - int(v.low) + 1
                x[:, j] = (np.asarray(vals, float) - v.low + 0.5) / span
            else:
                index = {c: i for i, c in enumerate(v.choices)}
                x[:, j] = (np.array([index[c] for c in vals]) + 0.5) / len(v.choices)
        return x

    def params(self, cols: dict[str, np.ndarray], i: int) -> dict[str, Any]:
        out = {}
        for v in self.vars:
            value = cols[v.name][i]
            out[v.name] = (float(value) if v.kind == "float" else
                           int(value) if v.kind == "int" else value)
        return out


class FrontRefiner:
    """An archive of the best designs found by vectorised sweeping and refinement.

    Parameters
    ----------
    problem : Problem
    seed : int or None
    sweep : int
        Designs in the initial Sobol sweep (rounded up to a power of two).
    children : int
        Designs evaluated per refinement round.
    """

    def __init__(self, problem: Problem, seed: int | None = None, sweep: int = 8192,
                 children: int = 4096):
        self.problem = problem
        self.enc = Encoder(problem)
        self.rng = np.random.default_rng(seed)
        self.seed = seed
        self.sweep_size = sweep
        self.children = children
        self.directions = [OBJECTIVES[o][1] for o in problem.objectives]
        self.x = np.empty((0, self.enc.dim))  # archive: feasible non-dominated designs
        self.f = np.empty((0, len(self.directions)))
        self.closest_x = np.empty((0, self.enc.dim))  # least-violating, while nothing is feasible
        self.closest_v = np.empty(0)
        self.told: list[np.ndarray] = []  # objective vectors (min form) already given to Optuna
        self.rounds = 0
        self.evaluated = 0

    # -- archive ---------------------------------------------------------------------------
    def _evaluate(self, x: np.ndarray) -> None:
        result = evaluate_params(self.problem, self.enc.decode(x))
        self.evaluated += len(x)
        f = to_minimization(result.objectives, self.directions)
        ok = result.feasible
        if ok.any():
            xs = np.vstack([self.x, x[ok]])
            fs = np.vstack([self.f, f[ok]])
            keep = nondominated_mask(fs)
            # Drop exact duplicates in objective space; they add nothing to the front.
            _, first = np.unique(np.round(fs[keep], 12), axis=0, return_index=True)
            idx = np.flatnonzero(keep)[np.sort(first)]
            self.x, self.f = xs[idx], fs[idx]
        elif not len(self.x):
            viol = sum(np.maximum(v, 0.0) for v in result.constraints.values())
            xs = np.vstack([self.closest_x, x])
            vs = np.concatenate([self.closest_v, viol])
            order = np.argsort(vs)[:64]
            self.closest_x, self.closest_v = xs[order], vs[order]

    def add_known(self, params: list[dict[str, Any]]) -> None:
        """Seed the archive with designs already in the study (resume)."""
        if params:
            self._evaluate(self.enc.encode(params))

    def sweep(self) -> None:
        m = int(np.ceil(np.log2(max(self.sweep_size, 2))))
        sampler = qmc.Sobol(self.enc.dim, scramble=True, seed=self.rng)
        self._evaluate(sampler.random_base2(m))

    def refine(self, rounds: int = 1) -> None:
        """Children of the archive's front: blend crossover + shrinking Gaussian steps."""
        for _ in range(rounds):
            parents = self.x if len(self.x) else self.closest_x
            if not len(parents):
                self.sweep()
                continue
            n, d = self.children, self.enc.dim
            a = parents[self.rng.integers(len(parents), size=n)]
            b = parents[self.rng.integers(len(parents), size=n)]
            w = self.rng.uniform(-0.25, 1.25, size=(n, 1))
            cross = self.rng.random(n) < 0.5
            child = np.where(cross[:, None], a + w * (b - a), a)
            sigma = max(0.15 * 0.7 ** self.rounds, 0.01)
            scale = sigma * np.exp(self.rng.normal(0.0, 0.7, size=(n, 1)))  # mixed step sizes
            child = child + scale * self.rng.normal(size=(n, d))
            for j, kind in enumerate(self.enc.kinds):
                if kind == "categorical":
                    # Categories have no order: keep a parent's, or redraw one sometimes.
                    keep = np.where(self.rng.random(n) < 0.5, a[:, j], b[:, j])
                    redraw = self.rng.random(n) < 0.15
                    child[:, j] = np.where(redraw, self.rng.random(n), keep)
            # Reflect at the bounds instead of clipping, so the edges are not over-sampled.
            child = np.abs(child)
            child = 1.0 - np.abs(1.0 - child)
            self._evaluate(np.clip(child, 0.0, 1.0))
            self.rounds += 1

    # -- proposals -------------------------------------------------------------------------
    def mark_told(self, objectives_min: np.ndarray) -> None:
        if len(objectives_min):
            self.told.append(np.atleast_2d(objectives_min))

    def propose(self, k: int) -> list[dict[str, Any]]:
        """Up to k archive designs not yet told, spread out in normalised objective space
        (farthest-point selection against everything told so far)."""
        if k <= 0 or not len(self.x):
            return []
        from scipy.spatial import cKDTree

        lo, hi = self.f.min(axis=0), self.f.max(axis=0)
        span = np.where(hi > lo, hi - lo, 1.0)
        fz = (self.f - lo) / span
        chosen: list[int] = []
        if self.told:
            tz = (np.vstack(self.told) - lo) / span
            d = cKDTree(tz).query(fz, k=1)[0] ** 2
        else:
            # Start from the extremes of each objective, then fill in between.
            d = np.full(len(fz), np.inf)
            for j in range(fz.shape[1]):
                i = int(np.argmin(fz[:, j]))
                if i not in chosen and len(chosen) < k:
                    chosen.append(i)
            for i in chosen:
                d = np.minimum(d, ((fz - fz[i]) ** 2).sum(-1))
        while len(chosen) < k:
            i = int(np.argmax(d))
            if d[i] <= 1e-18:
                break
            chosen.append(i)
            d = np.minimum(d, ((fz - fz[i]) ** 2).sum(-1))
        cols = self.enc.decode(self.x[chosen])
        return [self.enc.params(cols, i) for i in range(len(chosen))]

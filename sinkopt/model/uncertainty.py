"""The uncertainty band of a design's junction temperatures: every uncertain input carried
through the whole chain (fan operating point re-solved), as a pessimistic corner and as a
seeded, vectorised Monte-Carlo, with first-order variance-based sensitivity indices.

Theory, defaults and their sources: docs/theory.md#uncertainty-band-and-sensitivity.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from typing import Sequence

import numpy as np

from sinkopt.model.design import Perturbation
from sinkopt.model.problem import Problem
from sinkopt.model.system import BatchResult, evaluate_params, to_columns
from sinkopt.model.uncertainty_spec import (CLIP_SIGMAS, DEFAULT_UNCERTAINTY, MARGIN_BASES,
                                            InputUncertainty, UncertaintySpec, corner)

__all__ = ["InputUncertainty", "UncertaintySpec", "DEFAULT_UNCERTAINTY", "MARGIN_BASES",
           "Band", "corner", "sample", "junction_band", "first_order_indices",
           "pessimistic_margin"]

def _draw(u: InputUncertainty, z: np.ndarray) -> np.ndarray:
    """Relative deviation from standard normal draws ``z`` (uniform through the normal CDF)."""
    from scipy.special import ndtr

    if u.size == 0:
        return np.zeros_like(z)
    if u.distribution == "uniform":
        return u.size * (2.0 * ndtr(z) - 1.0)
    return u.size * np.clip(z, -CLIP_SIGMAS, CLIP_SIGMAS)


def sample(spec: UncertaintySpec, n_samples: int, n_devices: int,
           rng: np.random.Generator) -> tuple[Perturbation, dict[str, np.ndarray]]:
    """``n_samples`` draws of every input; returns the perturbation (n_samples rows) and the raw
    deviations per named input (for the sensitivity indices)."""
    z = {k: rng.standard_normal(n_samples) for k in ("heat_transfer", "pressure_drop",
                                                      "fan_flow", "ambient")}
    rho = float(np.clip(spec.power_correlation, 0.0, 1.0))
    common = rng.standard_normal((n_samples, 1))
    own = rng.standard_normal((n_samples, n_devices))
    z_power = np.sqrt(rho) * common + np.sqrt(1.0 - rho) * own
    z_rjc = rng.standard_normal((n_samples, n_devices))
    z_if = rng.standard_normal((n_samples, n_devices))
    dev = {k: _draw(getattr(spec, k), z[k]) for k in z}
    d_power = _draw(spec.power, z_power)
    d_rjc = _draw(spec.r_jc, z_rjc)
    d_if = _draw(spec.interface, z_if)
    pert = Perturbation(heat_transfer=1.0 + dev["heat_transfer"],
                        pressure_drop=1.0 + dev["pressure_drop"],
                        fan_flow=1.0 + dev["fan_flow"], power=1.0 + d_power, r_jc=1.0 + d_rjc,
                        r_stack=1.0 + d_if, ambient_K=dev["ambient"])
    raw = {"heat_transfer": dev["heat_transfer"], "pressure_drop": dev["pressure_drop"],
           "fan_flow": dev["fan_flow"], "ambient": dev["ambient"]}
    if rho >= 1.0:
        raw["power"] = d_power[:, 0]
    for j in range(n_devices):
        if rho < 1.0:
            raw[f"power[{j}]"] = d_power[:, j]
        raw[f"r_jc[{j}]"] = d_rjc[:, j]
        raw[f"interface[{j}]"] = d_if[:, j]
    return pert, raw


def first_order_indices(y: np.ndarray, inputs: dict[str, np.ndarray],
                        bins: int = 20) -> dict[str, float]:
    """First-order variance-based (Sobol) indices S_k = Var(E[Y | X_k]) / Var(Y), estimated from
    one Monte-Carlo sample by equal-count binning of each input (the correlation-ratio
    estimator). Inputs that do not vary get 0.

    >>> rng = np.random.default_rng(1)
    >>> a, b = rng.uniform(-1, 1, 20000), rng.uniform(-1, 1, 20000)
    >>> s = first_order_indices(3 * a + b, {"a": a, "b": b})
    >>> round(s["a"], 2), round(s["b"], 2)   # analytic: 9/10 and 1/10
    (0.9, 0.1)
    """
    y = np.asarray(y, dtype=float)
    ok = np.isfinite(y)
    var = float(np.var(y[ok])) if ok.sum() > 1 else 0.0
    out = {}
    for name, x in inputs.items():
        x = np.asarray(x, dtype=float)[ok]
        if var <= 0 or np.ptp(x) == 0:
            out[name] = 0.0
            continue
        order = np.argsort(x, kind="stable")
        groups = np.array_split(y[ok][order], bins)
        means = np.array([g.mean() for g in groups])
        sizes = np.array([len(g) for g in groups])
        between = float(np.sum(sizes * (means - y[ok].mean()) ** 2) / sizes.sum())
        # remove the binning estimator's bias (within-bin noise averaged into the means)
        within = float(np.mean([g.var() for g in groups]))
        out[name] = float(np.clip((between - within * bins / ok.sum()) / var, 0.0, 1.0))
    return out


@dataclass
class Band:
    """The band of m designs with s devices (temperatures in °C)."""

    device_names: list[str]
    nominal_C: np.ndarray  #: (m, s) exact series, nominal inputs
    pessimistic_C: np.ndarray  #: (m, s) every input at its hot-side bound (exact series)
    median_C: np.ndarray  #: (m, s)
    p95_C: np.ndarray  #: (m, s)
    p99_C: np.ndarray  #: (m, s)
    p_exceed: np.ndarray  #: (m,) probability that any junction exceeds its tj_max
    pessimistic_margin: np.ndarray  #: (m,) worst device, pessimistic corner [K]
    p95_margin: np.ndarray  #: (m,) the 5th percentile of the worst margin [K]
    sensitivity: list[dict[str, float]] = field(default_factory=list)  #: per design
    critical_device: list[str] = field(default_factory=list)  #: the device ranked on
    samples: int = 0
    seed: int = 0
    series_correction_C: np.ndarray | None = None  #: (m, s) exact − coarse at nominal

    def record(self, i: int) -> dict:
        """Design ``i``'s band as a JSON-ready dict."""
        r = lambda a: [round(float(v), 3) for v in a]  # noqa: E731
        return {"samples": self.samples, "seed": self.seed,
                "p_exceed": float(self.p_exceed[i]),
                "pessimistic_margin_K": round(float(self.pessimistic_margin[i]), 3),
                "p95_margin_K": round(float(self.p95_margin[i]), 3),
                "devices": {name: {"nominal_C": r([self.nominal_C[i, j]])[0],
                                   "median_C": r([self.median_C[i, j]])[0],
                                   "p95_C": r([self.p95_C[i, j]])[0],
                                   "p99_C": r([self.p99_C[i, j]])[0],
                                   "pessimistic_C": r([self.pessimistic_C[i, j]])[0]}
                            for j, name in enumerate(self.device_names)},
                "critical_device": self.critical_device[i] if self.critical_device else None,
                "sensitivity": dict(sorted(self.sensitivity[i].items(),
                                           key=lambda kv: -kv[1])) if self.sensitivity else {}}


def _names(problem: Problem, raw_key: str) -> str:
    """A sensitivity input's readable name (``r_jc[1]`` -> ``R_jc Q2``)."""
    labels = {"heat_transfer": "heat transfer coefficient", "pressure_drop": "sink pressure drop",
              "fan_flow": "fan curve", "ambient": "ambient", "power": "device losses"}
    if raw_key in labels:
        return labels[raw_key]
    kind, j = raw_key[:-1].split("[")
    device = problem.devices[int(j)].name
    return {"power": f"loss of {device}", "r_jc": f"R_jc of {device}",
            "interface": f"mounting stack of {device}"}[kind] + ""


def pessimistic_margin(problem: Problem, params, spec: UncertaintySpec,
                       spreading: str | None = None) -> BatchResult:
    """The designs evaluated at the pessimistic corner (fan operating point re-solved)."""
    cols = to_columns(problem, params)
    n = len(next(iter(cols.values())))
    return evaluate_params(problem, cols, spreading=spreading,
                           perturb=corner(spec, n, len(problem.devices)))


def junction_band(problem: Problem, params: Sequence[dict] | dict, spec: UncertaintySpec,
                  samples: int | None = None, seed: int | None = None,
                  nominal: BatchResult | None = None) -> Band:
    """Monte-Carlo band, pessimistic corner and sensitivity of each design in ``params``.

    The samples run on the 20-term spreading series, corrected per design and device by the
    difference between the exact series and the 20-term series at the nominal point (the
    truncation error depends little on the film coefficient; benchmarks/uncertainty.py
    measures what the correction leaves). Seeded: the same seed gives the same band.
    """
    s_count = int(samples or spec.samples)
    rng = np.random.default_rng(spec.seed if seed is None else seed)
    cols = to_columns(problem, params)
    m = len(next(iter(cols.values())))
    n_dev = len(problem.devices)
    if nominal is None:
        nominal = evaluate_params(problem, cols, spreading="exact")
    coarse = evaluate_params(problem, cols, spreading="coarse")
    correction = np.nan_to_num(nominal.evaluation.junction_C - coarse.evaluation.junction_C)
    pert, raw = sample(spec, s_count, n_dev, rng)
    # one batch of m × S rows: design i's samples are rows i*S … (i+1)*S − 1; the same draws
    # for every design (common random numbers: differences between designs are not noise)
    rep = {k: np.repeat(np.asarray(v), s_count, axis=0) for k, v in cols.items()}
    tile = Perturbation(**{f: None if getattr(pert, f) is None else
                           np.tile(getattr(pert, f), (m, 1) if np.ndim(getattr(pert, f)) == 2
                                   else m) for f in pert.__dataclass_fields__})
    mc = evaluate_params(problem, rep, spreading="coarse", perturb=tile)
    tj = mc.evaluation.junction_C.reshape(m, s_count, n_dev) + correction[:, None, :]
    no_air = (mc.no_airflow | ~mc.valid_geometry).reshape(m, s_count)
    tj = np.where(no_air[:, :, None], np.inf, tj)
    tj_max = np.array([d.tj_max for d in problem.devices], dtype=float)
    margin = (tj_max[None, None, :] - tj).min(axis=2)  # (m, S)
    with np.errstate(invalid="ignore"):
        q = np.percentile(tj, [50, 95, 99], axis=1)
    hot = pessimistic_margin(problem, cols, spec, spreading="exact")
    sens, critical = [], []
    for i in range(m):
        j = int(np.argmin(tj_max - nominal.evaluation.junction_C[i])) if n_dev else 0
        critical.append(problem.devices[j].name if n_dev else "")
        y = tj[i, :, j] if n_dev else np.zeros(s_count)
        idx = first_order_indices(np.where(np.isfinite(y), y, np.nan), raw)
        sens.append({_names(problem, k): v for k, v in idx.items()
                     if getattr(spec, k.split("[")[0], None) is None
                     or getattr(spec, k.split("[")[0]).size > 0})
    return Band(device_names=[d.name for d in problem.devices],
                nominal_C=nominal.evaluation.junction_C, pessimistic_C=hot.evaluation.junction_C,
                median_C=q[0], p95_C=q[1], p99_C=q[2],
                p_exceed=np.mean(margin < 0, axis=1),
                pessimistic_margin=np.where(hot.no_airflow | ~hot.valid_geometry, -np.inf,
                                            hot.evaluation.worst_margin),
                p95_margin=np.percentile(margin, 5, axis=1),
                sensitivity=sens, critical_device=critical, samples=s_count,
                seed=spec.seed if seed is None else seed, series_correction_C=correction)


def spec_with(spec: UncertaintySpec, **changes) -> UncertaintySpec:
    return dataclasses.replace(spec, **changes)

"""The uncertain inputs of a study (its ``[uncertainty]`` table) and their defaults, with the
source of each default, and the deterministic perturbations built from them (the pessimistic
corner, the one-input steps of a first-order propagation). :mod:`sinkopt.model.uncertainty`
samples them; :mod:`sinkopt.model.system` uses the corner and the steps for a robust margin.
Theory: docs/theory.md#uncertainty-band-and-sensitivity.
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sinkopt.model.design import Perturbation

__all__ = ["InputUncertainty", "UncertaintySpec", "DEFAULT_UNCERTAINTY", "MARGIN_BASES",
           "CLIP_SIGMAS", "DISTRIBUTIONS", "corner", "first_order_steps", "Z_95"]

#: One-sided 95 % point of the normal distribution (the p95 margin = nominal − Z_95 σ).
Z_95 = 1.6448536269514722

#: What the search's junction-margin constraint and objective use: the nominal margin, the
#: margin at the pessimistic corner, or the 5th percentile of the margin (first order).
MARGIN_BASES = ("nominal", "pessimistic", "p95")
#: A normal input is clipped at this many standard deviations; the pessimistic corner sits there.
CLIP_SIGMAS = 2.0
DISTRIBUTIONS = ("normal", "uniform")


@dataclass(frozen=True)
class InputUncertainty:
    """One uncertain input: ``size`` is the relative standard uncertainty (normal) or the
    relative half-width (uniform); for the ambient it is in kelvin."""

    size: float
    distribution: str = "normal"  #: "normal" (clipped at ±2σ) or "uniform"
    source: str = ""

    def bound(self) -> float:
        """The largest deviation a sample takes (the pessimistic corner's)."""
        return self.size * (CLIP_SIGMAS if self.distribution == "normal" else 1.0)

    def std(self) -> float:
        """Standard deviation of the (unclipped) distribution, same unit as ``size``."""
        return self.size if self.distribution == "normal" else self.size / np.sqrt(3.0)


@dataclass(frozen=True)
class UncertaintySpec:
    """The study's ``[uncertainty]`` table, resolved (defaults: DEFAULT_UNCERTAINTY)."""

    heat_transfer: InputUncertainty
    pressure_drop: InputUncertainty
    fan_flow: InputUncertainty
    power: InputUncertainty
    r_jc: InputUncertainty
    interface: InputUncertainty
    ambient: InputUncertainty
    power_correlation: float = 1.0  #: between the devices' losses, 0…1
    samples: int = 1000
    seed: int = 0

    def inputs(self) -> dict[str, InputUncertainty]:
        return {k: getattr(self, k) for k in ("heat_transfer", "pressure_drop", "fan_flow",
                                              "power", "r_jc", "interface", "ambient")}


DEFAULT_UNCERTAINTY = UncertaintySpec(
    heat_transfer=InputUncertainty(
        0.10, "normal", "measured validation: the default model is -12.6 … -4.3 % off measured "
        "thermal resistance (docs/validation.md); ±15-25 % is the usual claim for such "
        "correlations (common practice, no source)"),
    pressure_drop=InputUncertainty(
        0.15, "normal", "measured validation: +1.4 … +32.7 % off measured pressure drop "
        "(docs/validation.md); ±10-30 % usual (common practice, no source)"),
    fan_flow=InputUncertainty(
        0.10, "uniform", "datasheet fan curves are typical values, ±10 % in flow (common "
        "practice, no source)"),
    power=InputUncertainty(
        0.10, "uniform", "loss estimates from datasheets and simulation, ±10 % (common "
        "practice, no source)"),
    r_jc=InputUncertainty(
        0.15, "uniform", "datasheet junction-to-case resistance, typical vs maximum (common "
        "practice, no source)"),
    interface=InputUncertainty(
        0.30, "uniform", "interface and mounting layers: bond line, pressure, flatness, ±30 % "
        "(common practice, no source)"),
    ambient=InputUncertainty(
        0.0, "uniform", "the study's ambient is already the worst case; add an allowance [K] "
        "for a hot spot in the box"),
)


#: Which way each input raises the junction temperature (factor above or below 1).
_HOT_SIDE = {"heat_transfer": -1, "pressure_drop": +1, "fan_flow": -1, "power": +1,
             "r_jc": +1, "interface": +1, "ambient": +1}


def corner(spec: UncertaintySpec, n: int, n_devices: int) -> Perturbation:
    """Every input at the side that raises the junction temperatures, at its bound.

    The model is monotone in each input (less h, more pressure drop, less fan flow, more loss,
    more resistance, warmer air: all raise every junction), so the corner bounds every sample.
    """
    f = {k: 1.0 + _HOT_SIDE[k] * u.bound() for k, u in spec.inputs().items() if k != "ambient"}
    return Perturbation(heat_transfer=np.full(n, f["heat_transfer"]),
                        pressure_drop=np.full(n, f["pressure_drop"]),
                        fan_flow=np.full(n, f["fan_flow"]),
                        power=np.full((n, n_devices), f["power"]),
                        r_jc=np.full((n, n_devices), f["r_jc"]),
                        r_stack=np.full((n, n_devices), f["interface"]),
                        ambient_K=np.full(n, spec.ambient.bound()))


def first_order_steps(spec: UncertaintySpec, n: int, n_devices: int) -> list[tuple[str, Perturbation]]:
    """One perturbation per uncertain input, moved one standard deviation to its hot side, for
    a first-order (linear) propagation: σ_T² = Σ_k ΔT_k² (the law of propagation of
    uncertainty, JCGM 100:2008 (GUM), eq. 10, with independent inputs). The devices' losses are
    stepped together (full correlation: the conservative side for any correlation ≥ 0); each
    device's R_jc and stack step affects only its own junction, so one step serves them all."""
    steps = []
    for k, u in spec.inputs().items():
        if u.size == 0:
            continue
        f = 1.0 + _HOT_SIDE[k] * u.std()
        if k == "ambient":
            steps.append((k, Perturbation(ambient_K=np.full(n, u.std()))))
        elif k in ("power", "r_jc", "interface"):
            field = {"power": "power", "r_jc": "r_jc", "interface": "r_stack"}[k]
            steps.append((k, Perturbation(**{field: np.full((n, n_devices), f)})))
        else:
            steps.append((k, Perturbation(**{k: np.full(n, f)})))
    return steps

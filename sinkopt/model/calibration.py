"""Calibration of the sink model from a prototype's measurements: least-squares multipliers on
the heat transfer coefficient, the channel friction factor and the entrance + exit loss
coefficients, with confidence intervals, and refusal of a fit the data cannot support.

Pure numerics (numpy, scipy): reading the measured file and writing the calibration file are
the study and command-line layers' work. Theory: docs/theory.md#calibration-from-measurements.
"""
from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from sinkopt.model.design import ModelOptions, SinkGeometry
from sinkopt.physics import heatsink as hs
from sinkopt.physics.air import AirProperties

__all__ = ["Calibration", "Measurements", "CalibrationFit", "CalibrationRefused", "PRESSURE_FITS",
           "MULTIPLIERS", "fit_calibration", "model_at", "apply_multipliers"]

#: How the pressure-drop points are fitted: ``split``, one multiplier on the channel friction
#: and one on the entrance + exit losses (they scale differently with flow, so a wide flow range
#: separates them); ``total``, one multiplier on both.
PRESSURE_FITS = ("split", "total")
#: The multipliers, as ModelOptions field names.
MULTIPLIERS = {"heat_transfer": "heat_transfer_multiplier", "friction": "friction_multiplier",
               "losses": "loss_multiplier"}
#: Largest correlation between two fitted multipliers (log space) the fit accepts.
MAX_CORRELATION = 0.98
#: Fewest points beyond the number of fitted multipliers (so the residual spread, and with it
#: the interval, rests on at least this many degrees of freedom).
MIN_DOF = 2


@dataclass(frozen=True)
class Calibration:
    """A calibration a study runs on: the multipliers and the record of the fit behind them."""

    path: Path
    multipliers: dict[str, float]
    intervals: dict[str, tuple[float, float]] = field(default_factory=dict)
    points: tuple[dict, ...] = ()  #: measured points with the model before and after
    info: dict = field(default_factory=dict)  #: source file, checksum, fit statistics


class CalibrationRefused(ValueError):
    """The measurements cannot support the fit asked for (the message says why and what to do)."""


@dataclass(frozen=True)
class Measurements:
    """A prototype's measured points, SI units; NaN where a point has no value of that kind.

    ``flow`` is the volume flow through the fin channels [m^3/s] at the air state of the test
    (a ducted test: all the air passes between the fins).
    """

    flow: np.ndarray  #: [m^3/s]
    pressure_drop: np.ndarray  #: [Pa] sink static pressure drop
    thermal_resistance: np.ndarray  #: [K/W] mean base to inlet air

    def __post_init__(self):
        for f in dataclasses.fields(self):
            object.__setattr__(self, f.name, np.asarray(getattr(self, f.name), dtype=float))

    @property
    def has_pressure(self) -> np.ndarray:
        return np.isfinite(self.pressure_drop)

    @property
    def has_thermal(self) -> np.ndarray:
        return np.isfinite(self.thermal_resistance)


@dataclass
class CalibrationFit:
    """The fitted multipliers (1 for those not fitted) and how well they are known."""

    multipliers: dict[str, float]
    intervals: dict[str, tuple[float, float]]  #: 95 % confidence interval of each fitted one
    fitted: tuple[str, ...]
    correlation: np.ndarray  #: of the fitted multipliers (log space)
    dof: int
    pressure_before: np.ndarray  #: model [Pa] at each point with the published correlations
    pressure_after: np.ndarray
    thermal_before: np.ndarray  #: model [K/W]
    thermal_after: np.ndarray
    warnings: list[str] = field(default_factory=list)

    def options(self, base: ModelOptions) -> ModelOptions:
        """``base`` with this fit's multipliers."""
        return apply_multipliers(base, self.multipliers)


def apply_multipliers(options: ModelOptions, multipliers: dict[str, float]) -> ModelOptions:
    return dataclasses.replace(options, **{MULTIPLIERS[k]: float(v) for k, v in multipliers.items()})


def model_at(geometry: SinkGeometry, conductivity: float, air: AirProperties,
             options: ModelOptions, flow) -> tuple[np.ndarray, np.ndarray]:
    """(pressure drop [Pa], base-to-inlet thermal resistance [K/W]) of one sink at ``flow``.

    The resistance is the inlet-referenced sink resistance plus the 1-D conduction through the
    base (a heater spread over the base; temperatures measured at the base's heated face).
    """
    g = geometry
    q = np.asarray(flow, dtype=float)
    one = {k: float(np.asarray(getattr(g, k)).reshape(-1)[0])
           for k in ("width", "length", "fin_height", "fin_thickness", "n_fins", "base_thickness")}
    hyd = hs.sink_hydraulics(one["width"], one["length"], one["fin_height"], one["fin_thickness"],
                             one["n_fins"], q, air, options.hydraulic_diameter, options.exit_loss,
                             options.friction_multiplier, options.loss_multiplier)
    th = hs.sink_thermal(one["width"], one["length"], one["fin_height"], one["fin_thickness"],
                         one["n_fins"], q, air, conductivity, options.heat_transfer,
                         options.fin_tip, options.hydraulic_diameter,
                         options.heat_transfer_multiplier)
    base_1d = one["base_thickness"] / (conductivity * one["width"] * one["length"])
    return np.asarray(hyd.pressure_drop, dtype=float), np.asarray(th.resistance + base_1d)


def fit_calibration(geometry: SinkGeometry, conductivity: float, air: AirProperties,
                    options: ModelOptions, measured: Measurements,
                    pressure_fit: str = "split") -> CalibrationFit:
    """Fit the multipliers the measurements can determine, by least squares on log(model /
    measured) (relative errors, symmetric in over- and under-prediction).

    Thermal points fit ``heat_transfer``; pressure points fit ``friction`` and ``losses``
    (``pressure_fit="split"``) or one multiplier on both (``"total"``). The 95 % intervals come
    from the Jacobian at the optimum, cov = s² (JᵀJ)⁻¹ with s² the residual variance, and
    Student's t. Raises :class:`CalibrationRefused` when there are too few points for the
    multipliers (fewer than their number + 2), when two multipliers cannot be told apart
    (|correlation| > 0.98), or when the problem is singular.

    Examples
    --------
    Measurements made from the model itself with h × 1.2 and friction × 0.9 are recovered:

    >>> from sinkopt.physics.air import air_properties
    >>> g = SinkGeometry.of(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001,
    ...                     n_fins=20, base_thickness=0.005)
    >>> air = air_properties(298.15, 101325.0)
    >>> q = np.linspace(2e-3, 1.2e-2, 8)
    >>> truth = apply_multipliers(ModelOptions(), {"heat_transfer": 1.2, "friction": 0.9})
    >>> dp, r = model_at(g, 200.0, air, truth, q)
    >>> fit = fit_calibration(g, 200.0, air, ModelOptions(), Measurements(q, dp, r))
    >>> {k: round(v, 4) for k, v in fit.multipliers.items()}
    {'heat_transfer': 1.2, 'friction': 0.9, 'losses': 1.0}
    """
    from scipy import optimize, stats

    if pressure_fit not in PRESSURE_FITS:
        raise ValueError(f"pressure_fit must be one of {PRESSURE_FITS}, got {pressure_fit!r}")
    m = measured
    n_dp, n_th = int(m.has_pressure.sum()), int(m.has_thermal.sum())
    names: list[str] = []
    if n_th:
        names.append("heat_transfer")
    if n_dp:
        names += ["friction", "losses"] if pressure_fit == "split" else ["pressure_total"]
    if not names:
        raise CalibrationRefused("no measured pressure drop or thermal resistance to fit")
    for kind, count, fitted in (("thermal", n_th, ["heat_transfer"]),
                                ("pressure-drop", n_dp, [k for k in names if k != "heat_transfer"])):
        if count and count < len(fitted) + MIN_DOF:
            more = ("; or fit one pressure multiplier (--pressure-fit total)"
                    if len(fitted) == 2 else "")
            raise CalibrationRefused(
                f"{count} {kind} point(s) cannot support {len(fitted)} multiplier(s) "
                f"({', '.join(fitted)}): give at least {len(fitted) + MIN_DOF} points{more}")

    q_dp, q_th = m.flow[m.has_pressure], m.flow[m.has_thermal]
    dp_meas, r_meas = m.pressure_drop[m.has_pressure], m.thermal_resistance[m.has_thermal]

    def multipliers_of(theta) -> dict[str, float]:
        c = dict(zip(names, np.exp(theta)))
        out = {"heat_transfer": float(c.get("heat_transfer", 1.0)),
               "friction": float(c.get("friction", c.get("pressure_total", 1.0))),
               "losses": float(c.get("losses", c.get("pressure_total", 1.0)))}
        return out

    def predict(theta):
        opts = apply_multipliers(options, multipliers_of(theta))
        dp = model_at(geometry, conductivity, air, opts, q_dp)[0] if n_dp else np.empty(0)
        r = model_at(geometry, conductivity, air, opts, q_th)[1] if n_th else np.empty(0)
        return dp, r

    def residuals(theta):
        dp, r = predict(theta)
        return np.concatenate([np.log(dp / dp_meas), np.log(r / r_meas)])

    x0 = np.zeros(len(names))
    sol = optimize.least_squares(residuals, x0, method="lm", x_scale=1.0)
    jac = sol.jac
    n = jac.shape[0]
    dof = n - len(names)
    jtj = jac.T @ jac
    try:
        inv = np.linalg.inv(jtj)
    except np.linalg.LinAlgError:
        raise CalibrationRefused("the measurements do not determine the multipliers "
                                 "(singular fit)") from None
    if not np.all(np.isfinite(inv)) or np.any(np.diag(inv) <= 0):
        raise CalibrationRefused("the measurements do not determine the multipliers "
                                 "(singular fit)")
    sd = np.sqrt(np.diag(inv))
    corr = inv / np.outer(sd, sd)
    if len(names) > 1:
        off = np.abs(corr - np.eye(len(names)))
        i, j = np.unravel_index(np.argmax(off), off.shape)
        if off[i, j] > MAX_CORRELATION:
            raise CalibrationRefused(
                f"the points cannot tell {names[i]} from {names[j]} apart (correlation "
                f"{corr[i, j]:+.3f}): measure over a wider flow range, or fit one pressure "
                "multiplier (--pressure-fit total)")
    s2 = float(sol.fun @ sol.fun) / dof
    cov = s2 * inv
    t = float(stats.t.ppf(0.975, dof))
    theta = sol.x
    half = t * np.sqrt(np.diag(cov))
    intervals = {}
    for k, name in enumerate(names):
        lo, hi = float(np.exp(theta[k] - half[k])), float(np.exp(theta[k] + half[k]))
        if name == "pressure_total":
            intervals["friction"] = intervals["losses"] = (lo, hi)
        else:
            intervals[name] = (lo, hi)
    mult = multipliers_of(theta)
    fitted = tuple(k for k in ("heat_transfer", "friction", "losses") if k in intervals)
    warnings = [f"{k} multiplier {v:.3g} is far from 1: check the geometry, the units and what "
                "the flow column measures before trusting it"
                for k, v in mult.items() if k in fitted and not 0.5 <= v <= 2.0]
    before = {"dp": np.full(len(m.flow), np.nan), "r": np.full(len(m.flow), np.nan)}
    after = {"dp": np.full(len(m.flow), np.nan), "r": np.full(len(m.flow), np.nan)}
    for store, opts in ((before, options), (after, apply_multipliers(options, mult))):
        dp, r = model_at(geometry, conductivity, air, opts, m.flow)
        store["dp"], store["r"] = dp, r
    return CalibrationFit(mult, intervals, fitted, corr, dof, before["dp"], after["dp"],
                          before["r"], after["r"], warnings)

"""Fan curve model: monotone interpolation, stall region, fan laws, and arrays of identical fans.

A :class:`FanCurve` holds the measured static-pressure curve of one fan at its rated speed and at
the air density it was measured at, in SI. Interpolation is PCHIP (Fritsch & Carlson 1980,
shape-preserving piecewise cubic Hermite), so between two data points the curve never leaves the
range of those two points: no overshoot. Nothing is extrapolated: outside the data the pressure
is NaN.

Scaling of one fan (fan laws, e.g. Bleier 1998, *Fan Handbook*, ch. 3; docs/theory.md#fan-operating-point):

.. math::

    Q_2 = Q_1 s,\\qquad \\Delta p_2 = \\Delta p_1 s^2 \\rho_2/\\rho_1,\\qquad
    P_2 = P_1 s^3 \\rho_2/\\rho_1,\\qquad L_2 = L_1 + 50\\log_{10} s

with speed ratio :math:`s = n_2/n_1`, density :math:`\\rho` and A-weighted noise :math:`L` [dB(A)].

>>> import numpy as np
>>> fan = FanCurve([0.0, 0.005, 0.010], [80.0, 60.0, 0.0], name="demo")
>>> float(fan.pressure(0.005))
60.0
>>> float(fan.pressure(0.004, speed_ratio=0.8))  # fan laws: 0.64 * p(0.004 / 0.8)
38.4
>>> bool(np.isnan(fan.pressure(0.011)))           # no extrapolation
True
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Mapping, NamedTuple

import numpy as np

from sinkopt.errors import InputError

__all__ = [
    "FanCurve",
    "FanArray",
    "ArrayState",
    "DEFAULT_AIR_DENSITY_kg_m3",
    "DEFAULT_LEAK_K",
    "DEFAULT_STOPPED_LOSS_K",
    "pchip_coefficients",
    "pchip_evaluate",
]

#: Reference density of fan curves when the file does not state one [kg/m3]: "standard air",
#: 1.2 kg/m3 (20 °C, 101.325 kPa, 50 % RH; AMCA 210 / ISO 5801 standard air).
DEFAULT_AIR_DENSITY_kg_m3 = 1.2

#: Loss coefficient of a stopped fan in a parallel array, flow reversed, referred to the full
#: circle of the frame side [-]. K = 1 is the Borda-Carnot exit loss alone (the leak jet's whole
#: dynamic head is lost in the plenum); any real passage adds entry, blade and vena-contracta
#: losses, so K >= 1 and K = 1 over-predicts the leak: conservative. See docs/fan-curves.md.
DEFAULT_LEAK_K = 1.0

#: Loss coefficient of a stopped (windmilling or locked) fan in a series array, referred to the
#: full circle of the frame side [-]. Our estimate, not a published value: a locked rotor whose
#: blades turn the flow by ~60° loses the swirl head, tan²60° = 3 dynamic heads; a windmilling
#: rotor loses less, so 3 is meant to be pessimistic. Override it with a measured value.
DEFAULT_STOPPED_LOSS_K = 3.0

_REL_EDGE = 1e-12  # relative slack at the data ends for round-off in q/s·s


def pchip_coefficients(x: np.ndarray, y: np.ndarray) -> np.ndarray:
    """Coefficients of the PCHIP interpolant of (x, y), shape (4, m-1), highest power first.

    Uses :class:`scipy.interpolate.PchipInterpolator` once (imported here, lazily) and keeps its
    local power-basis coefficients, so evaluation is plain numpy (:func:`pchip_evaluate`).

    Parameters
    ----------
    x : ndarray
        Strictly increasing abscissae, m >= 2 [any unit].
    y : ndarray
        Ordinates [any unit].
    """
    from scipy.interpolate import PchipInterpolator

    return np.ascontiguousarray(PchipInterpolator(x, y, extrapolate=False).c)


class _IntervalFinder:
    """Index of the knot interval holding each query, faster than ``np.searchsorted``.

    A uniform grid of cells over [x0, xm], at least twice as fine as the closest knots, maps a
    query to the interval of its cell in O(1); one step up or down then corrects for a knot
    inside the cell or round-off at a cell edge (repeated ``self.steps`` times if the grid had to
    be capped). Same result as ``clip(searchsorted(x, u, 'right') - 1, 0, m - 2)`` on [x0, xm].
    """

    MAX_CELLS = 1 << 16

    def __init__(self, x: np.ndarray):
        self.x = x
        span = x[-1] - x[0]
        cells = int(min(self.MAX_CELLS, np.ceil(2.0 * span / np.diff(x).min()) + 1))
        self.x0, self.inv_h, self.cells = x[0], cells / span, cells
        edges = x[0] + np.arange(cells) * (span / cells)
        self.lut = np.clip(np.searchsorted(x, edges, side="right") - 1, 0, x.size - 2)
        per_cell = np.bincount(np.clip(((x - x[0]) * self.inv_h).astype(np.int64), 0, cells - 1))
        self.steps = int(per_cell.max())

    def __call__(self, u: np.ndarray) -> np.ndarray:
        x = self.x
        j = ((u - self.x0) * self.inv_h).astype(np.intp)
        i = self.lut[np.minimum(np.maximum(j, 0), self.cells - 1)]
        top = x.size - 2
        for _ in range(self.steps):
            i += (u >= x[np.minimum(i + 1, top)]) & (i < top)
        i -= (u < x[i]) & (i > 0)
        return i


def pchip_evaluate(x: np.ndarray, c: np.ndarray, u: np.ndarray, finder=None) -> np.ndarray:
    """Evaluate a piecewise cubic (knots ``x``, coefficients ``c``) at ``u``; NaN outside [x0, xm].

    Vectorised: ``u`` of any shape; an interval search and a Horner step. ``finder`` is an
    optional precomputed interval finder for ``x``.
    """
    u = np.asarray(u, dtype=float)
    if finder is None:
        i = np.clip(np.searchsorted(x, u, side="right") - 1, 0, x.size - 2)
    else:
        with np.errstate(invalid="ignore"):
            i = finder(np.where(np.isnan(u), x[0], u))
    d = u - x[i]
    out = ((c[0][i] * d + c[1][i]) * d + c[2][i]) * d + c[3][i]
    return np.where((u >= x[0]) & (u <= x[-1]), out, np.nan)


def _stall_index(p: np.ndarray) -> int:
    """Index of the stall limit: walk back from free delivery while the pressure strictly rises."""
    k = p.size - 1
    while k > 0 and p[k - 1] > p[k]:
        k -= 1
    return k


def _opt_float(v) -> float | None:
    return None if v is None else float(v)


@dataclass(frozen=True, eq=False)
class FanCurve:
    """Static-pressure curve of one fan at rated speed and reference density, in SI.

    Parameters
    ----------
    flow_m3_s : array_like
        Volume flow of the data points [m3/s], >= 0, distinct; sorted on construction.
    pressure_Pa : array_like
        Static pressure rise at each point [Pa], >= 0.
    name : str
        Display name.
    air_density_kg_m3 : float
        Density the curve was measured at [kg/m3]; default 1.2 (standard air).
    speed_rpm : float, optional
        Rated speed [rpm]; informative (scaling uses speed *ratios*).
    power_W : array_like, optional
        Electrical power at each data point [W] at rated speed.
    rated_power_W : float, optional
        Electrical power at rated speed [W] when no per-point power is given.
    voltage_V : float, optional
        Rated voltage [V]; informative.
    noise_dBA : float, optional
        Noise at rated speed [dB(A)], as the datasheet states it (usually sound pressure at 1 m).
    size_mm : float, optional
        Frame side [mm]; gives the flow area of a stopped fan in an array.
    source : str, optional
        File the curve came from.
    flow_unit, pressure_unit : str
        Units the file used (for display only).
    lines : tuple of int, optional
        Source line of each point (0 for a point added by end extension), in input order.
    metadata : mapping
        All ``# key: value`` lines of the file, as text.

    Attributes
    ----------
    stall_index : int
        Index (into the sorted arrays) of the stall limit; points left of it are unstable.
    """

    flow_m3_s: np.ndarray
    pressure_Pa: np.ndarray
    name: str = "fan"
    air_density_kg_m3: float = DEFAULT_AIR_DENSITY_kg_m3
    speed_rpm: float | None = None
    power_W: np.ndarray | None = None
    rated_power_W: float | None = None
    voltage_V: float | None = None
    noise_dBA: float | None = None
    size_mm: float | None = None
    source: str | None = None
    flow_unit: str = "m3/s"
    pressure_unit: str = "Pa"
    lines: tuple[int, ...] | None = None
    metadata: Mapping[str, str] = field(default_factory=dict)
    stall_index: int = field(init=False)
    _coef: np.ndarray = field(init=False, repr=False)
    _finder: _IntervalFinder = field(init=False, repr=False)

    def __post_init__(self) -> None:
        q = np.asarray(self.flow_m3_s, dtype=float).ravel()
        p = np.asarray(self.pressure_Pa, dtype=float).ravel()
        pw = None if self.power_W is None else np.asarray(self.power_W, dtype=float).ravel()
        if q.shape != p.shape or (pw is not None and pw.shape != q.shape):
            raise InputError("flow, pressure (and power) must have the same length, but got "
                             f"{q.size}, {p.size}" + ("" if pw is None else f", {pw.size}"))
        if q.size < 3:
            raise InputError(f"a fan curve needs at least 3 points, but got {q.size}")
        for label, a in (("flow_m3_s", q), ("pressure_Pa", p), ("power_W", pw)):
            if a is not None and not (np.all(np.isfinite(a)) and np.all(a >= 0)):
                raise InputError(f"`{label} >= 0` and finite must hold, but got {a.tolist()}")
        order = np.argsort(q, kind="stable")
        q, p = q[order], p[order]
        pw = None if pw is None else pw[order]
        lines = None if self.lines is None else tuple(int(self.lines[i]) for i in order)
        if np.any(np.diff(q) <= 0):
            dup = q[1:][np.diff(q) <= 0]
            raise InputError(f"flows must be distinct, but got repeated flow {dup.tolist()} m3/s")
        k = _stall_index(p)
        if k == q.size - 1:
            raise InputError("the pressure must fall toward free delivery (highest flow), but "
                             f"p = {p[-2]:.6g} Pa then {p[-1]:.6g} Pa at the two highest flows")
        rho = float(self.air_density_kg_m3)
        if not (math.isfinite(rho) and rho > 0):
            raise InputError(f"`air_density_kg_m3 > 0` must hold, but got {rho}")
        for name, v in (("flow_m3_s", q), ("pressure_Pa", p), ("power_W", pw)):
            if v is not None:
                v.setflags(write=False)
        set_ = object.__setattr__
        set_(self, "flow_m3_s", q)
        set_(self, "pressure_Pa", p)
        set_(self, "power_W", pw)
        set_(self, "lines", lines)
        set_(self, "air_density_kg_m3", rho)
        for name in ("speed_rpm", "rated_power_W", "voltage_V", "noise_dBA", "size_mm"):
            set_(self, name, _opt_float(getattr(self, name)))
        set_(self, "metadata", dict(self.metadata))
        set_(self, "stall_index", int(k))
        set_(self, "_coef", pchip_coefficients(q, p))
        set_(self, "_finder", _IntervalFinder(q))

    # ---- data summaries ------------------------------------------------------------------------
    @property
    def q_free_m3_s(self) -> float:
        """Highest flow of the data [m3/s] (free delivery if the last point is at 0 Pa)."""
        return float(self.flow_m3_s[-1])

    @property
    def q_stall_limit_m3_s(self) -> float:
        """Lowest flow of the stable branch [m3/s]; below it the fan is in its stall region."""
        return float(self.flow_m3_s[self.stall_index])

    @property
    def has_stall_region(self) -> bool:
        """True if some data lie left of the stall limit."""
        return self.stall_index > 0

    @property
    def p_max_Pa(self) -> float:
        """Largest pressure of the data [Pa]."""
        return float(self.pressure_Pa.max())

    # ---- evaluation ----------------------------------------------------------------------------
    def _ratio(self, speed_ratio, air_density_kg_m3):
        s = np.asarray(speed_ratio, dtype=float)
        rho = self.air_density_kg_m3 if air_density_kg_m3 is None else air_density_kg_m3
        return s, np.asarray(rho, dtype=float) / self.air_density_kg_m3

    def _snap(self, u: np.ndarray) -> np.ndarray:
        """Move flows that miss the data range by round-off only (q/s·s) onto its ends."""
        x = self.flow_m3_s
        tol = _REL_EDGE * x[-1]
        return np.where((u >= x[0] - tol) & (u <= x[-1] + tol), np.clip(u, x[0], x[-1]), u)

    def base_pressure(self, u: np.ndarray, clip: bool = False) -> np.ndarray:
        """Pressure at rated speed and reference density at flow ``u`` [m3/s] -> [Pa].

        With ``clip=True`` ``u`` is clipped to the data range first (for callers that stay
        inside it up to round-off); otherwise NaN outside the data.
        """
        x = self.flow_m3_s
        u = np.asarray(u, dtype=float)
        if clip:
            u = np.clip(u, x[0], x[-1])
        return pchip_evaluate(x, self._coef, u, self._finder)

    def pressure(self, q, speed_ratio=1.0, air_density_kg_m3=None):
        """Fan static pressure [Pa] at flow ``q`` [m3/s], with the fan laws applied.

        Parameters
        ----------
        q : float or ndarray
            Volume flow through the fan [m3/s].
        speed_ratio : float or ndarray
            n/n_rated [-].
        air_density_kg_m3 : float or ndarray, optional
            Air density [kg/m3]; default the curve's reference density.

        Returns NaN outside the (scaled) data range.
        """
        s, r = self._ratio(speed_ratio, air_density_kg_m3)
        with np.errstate(divide="ignore", invalid="ignore"):
            u = self._snap(np.asarray(q, dtype=float) / s)
            out = s * s * r * pchip_evaluate(self.flow_m3_s, self._coef, u, self._finder)
        return out[()] if out.ndim == 0 else out

    def electrical_power(self, q, speed_ratio=1.0, air_density_kg_m3=None):
        """Electrical power of one fan [W] at flow ``q`` [m3/s] from its power data (fan laws).

        A power column is interpolated linearly in flow; a ``rated_power_W`` is taken as flow
        independent. Both scale with s³·ρ/ρ_ref. NaN if the curve has no power data or ``q`` is
        outside the data.
        """
        s, r = self._ratio(speed_ratio, air_density_kg_m3)
        q = np.asarray(q, dtype=float)
        scale = s**3 * r
        if self.power_W is not None:
            x = self.flow_m3_s
            with np.errstate(divide="ignore", invalid="ignore"):
                u = self._snap(q / s)
            inside = (u >= x[0]) & (u <= x[-1])
            out = np.where(inside, scale * np.interp(u, x, self.power_W), np.nan)
        elif self.rated_power_W is not None:
            out = np.broadcast_to(scale * self.rated_power_W, np.broadcast(q, scale).shape) * 1.0
        else:
            out = np.full(np.broadcast(q, scale).shape, np.nan)
        return out[()] if out.ndim == 0 else out

    def noise(self, speed_ratio=1.0):
        """Noise [dB(A)] at ``speed_ratio``: rated value + 50·log10(s); NaN if unknown."""
        s = np.asarray(speed_ratio, dtype=float)
        base = np.nan if self.noise_dBA is None else self.noise_dBA
        with np.errstate(divide="ignore", invalid="ignore"):
            out = base + 50.0 * np.log10(s)
        return out[()] if np.ndim(out) == 0 else out

    def scaled(self, speed_ratio: float = 1.0,
               air_density_kg_m3: float | None = None) -> "FanCurve":
        """A new curve at another speed and density (fan laws applied to every data point)."""
        s = float(speed_ratio)
        if not (math.isfinite(s) and s > 0):
            raise InputError(f"`speed_ratio > 0` must hold, but got speed_ratio={speed_ratio}")
        rho = self.air_density_kg_m3 if air_density_kg_m3 is None else float(air_density_kg_m3)
        r = rho / self.air_density_kg_m3
        return FanCurve(
            self.flow_m3_s * s, self.pressure_Pa * s * s * r, name=self.name,
            air_density_kg_m3=rho,
            speed_rpm=None if self.speed_rpm is None else self.speed_rpm * s,
            power_W=None if self.power_W is None else self.power_W * s**3 * r,
            rated_power_W=None if self.rated_power_W is None else self.rated_power_W * s**3 * r,
            voltage_V=self.voltage_V,
            noise_dBA=None if self.noise_dBA is None else self.noise_dBA + 50 * math.log10(s),
            size_mm=self.size_mm, source=self.source, flow_unit=self.flow_unit,
            pressure_unit=self.pressure_unit, lines=self.lines, metadata=self.metadata,
        )

    def sample(self, n_points: int = 200, speed_ratio: float = 1.0,
               air_density_kg_m3: float | None = None) -> tuple[np.ndarray, np.ndarray]:
        """(q [m3/s], p [Pa]) on a fine grid through the data, including every data point."""
        x = self.flow_m3_s
        u = np.union1d(np.linspace(x[0], x[-1], n_points), x)
        return u * speed_ratio, self.pressure(u * speed_ratio, speed_ratio, air_density_kg_m3)


class ArrayState(NamedTuple):
    """State of a fan array when each running fan moves ``fan_flow`` (all arrays, SI)."""

    flow_m3_s: np.ndarray  # net flow into the system [m3/s]
    pressure_Pa: np.ndarray  # static pressure rise of the array [Pa]
    fan_pressure_Pa: np.ndarray  # pressure rise of one running fan [Pa]
    leak_flow_m3_s: np.ndarray  # back-flow through the stopped fans of a parallel array [m3/s]


@dataclass(frozen=True)
class FanArray:
    """``count`` identical fans in parallel or in series, ``failed`` of them stopped.

    Parameters
    ----------
    curve : FanCurve
        The fan.
    count : int
        Number of fans, >= 1.
    arrangement : {'parallel', 'series'}
        Parallel fans share the pressure rise and add flows; series fans share the flow and add
        pressures.
    failed : int
        Number of stopped fans, 0 <= failed < count.
    shuttered : bool
        Parallel only: a back-draft shutter closes a stopped fan, so it leaks nothing.
    leak_K : float
        Loss coefficient of the reversed flow through a stopped parallel fan [-]; default
        :data:`DEFAULT_LEAK_K` (1, conservative).
    stopped_loss_K : float
        Loss coefficient of a stopped series fan [-]; default :data:`DEFAULT_STOPPED_LOSS_K`.
    fan_area_m2 : float, optional
        Flow area of one fan [m2] for those losses; default π/4·size² from the curve's
        ``size_mm`` (the full circle of the frame side: no hub deducted, the larger leak).

    Notes
    -----
    With per-fan flow q of each running fan and its pressure p₁(q) (docs/theory.md#fan-operating-point; derivation in
    docs/fan-curves.md):

    - parallel: Δp = p₁(q), Q = (N−f)·q − f·A·√(2Δp/(K_leak·ρ));
    - series:   Q = q, Δp = (N−f)·p₁(q) − f·K_stop·ρ/2·(q/A)².
    """

    curve: FanCurve
    count: int = 1
    arrangement: str = "parallel"
    failed: int = 0
    shuttered: bool = False
    leak_K: float = DEFAULT_LEAK_K
    stopped_loss_K: float = DEFAULT_STOPPED_LOSS_K
    fan_area_m2: float | None = None

    def __post_init__(self) -> None:
        if not isinstance(self.curve, FanCurve):
            raise InputError(f"curve must be a FanCurve, but got {type(self.curve).__name__}")
        if int(self.count) != self.count or self.count < 1:
            raise InputError(f"`count >= 1` (an integer) must hold, but got count={self.count}")
        if self.arrangement not in ("parallel", "series"):
            raise InputError("arrangement must be one of 'parallel', 'series', but got "
                             f"{self.arrangement!r}")
        if int(self.failed) != self.failed or not 0 <= self.failed < self.count:
            raise InputError(f"`0 <= failed < count` must hold, but got failed={self.failed}, "
                             f"count={self.count}")
        for name in ("leak_K", "stopped_loss_K"):
            v = getattr(self, name)
            if not (math.isfinite(v) and v > 0):
                raise InputError(f"`{name} > 0` must hold, but got {name}={v}")
        if self.fan_area_m2 is None and self.curve.size_mm is not None:
            object.__setattr__(self, "fan_area_m2", math.pi / 4 * (self.curve.size_mm * 1e-3) ** 2)
        if self.needs_area and not (self.fan_area_m2 and self.fan_area_m2 > 0):
            raise InputError(
                f"a failed fan in a {self.arrangement} array needs the fan's flow area: give "
                "'# size_mm: ...' in the fan file or fan_area_m2= (got neither)",
                source=self.curve.source, field="size_mm")

    @property
    def running(self) -> int:
        """Number of running fans."""
        return self.count - self.failed

    @property
    def needs_area(self) -> bool:
        """True if the stopped fans are modelled as a flow path (needs ``fan_area_m2``)."""
        return self.failed > 0 and not (self.arrangement == "parallel" and self.shuttered)

    def evaluate(self, fan_flow, speed_ratio=1.0, air_density_kg_m3=None, clip=False) -> ArrayState:
        """Array state when each running fan moves ``fan_flow`` [m3/s] (arrays broadcast).

        ``clip=True`` clips the per-fan flow into the scaled data range (solver use).
        """
        c = self.curve
        s = np.asarray(speed_ratio, dtype=float)
        rho = np.asarray(c.air_density_kg_m3 if air_density_kg_m3 is None else air_density_kg_m3,
                         dtype=float)
        q = np.asarray(fan_flow, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            if clip:
                p1 = s * s * (rho / c.air_density_kg_m3) * c.base_pressure(q / s, clip=True)
            else:
                p1 = c.pressure(q, s, rho)
            zero = np.zeros(np.broadcast(q, p1).shape)
            if self.arrangement == "parallel":
                leak = zero
                if self.failed and not self.shuttered:
                    leak = self.failed * self.fan_area_m2 * np.sqrt(
                        2.0 * np.maximum(p1, 0.0) / (self.leak_K * rho))
                return ArrayState(self.running * q - leak, p1, p1, leak)
            loss = 0.0
            if self.failed:
                loss = self.failed * self.stopped_loss_K * rho / 2.0 * (q / self.fan_area_m2) ** 2
            return ArrayState(q + zero, self.running * p1 - loss, p1, zero)

    def noise(self, speed_ratio=1.0):
        """Noise of the running fans [dB(A)]: + 10·log10(running) for incoherent equal sources."""
        return self.curve.noise(speed_ratio) + 10.0 * math.log10(self.running)

    def sample(self, n_points: int = 200, speed_ratio: float = 1.0,
               air_density_kg_m3: float | None = None) -> ArrayState:
        """Array curve on a grid of per-fan flows through the data (for plots)."""
        x = self.curve.flow_m3_s
        u = np.union1d(np.linspace(x[0], x[-1], n_points), x) * speed_ratio
        return self.evaluate(u, speed_ratio, air_density_kg_m3)

"""Operating point of a fan array on a system curve, for a whole batch of designs at once.

Solves Δp_fan(Q) = Δp_sys(Q) (physics.md §7) for n designs in one vectorised pass: every step is
a numpy operation on arrays of shape (n,), and ``system_dp`` is called with one flow per design.

Method. The unknown is the flow ``q`` of one running fan. On the fan's stable branch
[s·q_stall, s·q_max] the fan curve falls and the system curve rises, so the residual
g(q) = Δp_array(q) − Δp_sys(Q(q)) is strictly decreasing and has at most one root. It is found by
Chandrupatla's bracketed method (Chandrupatla 1997, *Adv. Eng. Softw.* 28(3), 145-149,
doi:10.1016/S0965-9978(96)00051-8): inverse quadratic interpolation when safe, bisection
otherwise, never leaving the bracket; ~5-10 iterations to a relative 1e-10. If the system
already exceeds the fan at the stall limit, the data segments left of it are scanned for a sign
change of g and the largest-flow root is taken (``in_stall``). If there is no root inside the
data, ``no_intersection`` is set and the flow is NaN: never an exception, never extrapolation.

>>> import numpy as np
>>> from sinkopt.fans import FanCurve
>>> q = np.linspace(0, 0.01, 41)
>>> fan = FanCurve(q, 80 * (1 - (q / 0.01) ** 2))
>>> op = solve_operating_point(fan, lambda Q: 4e5 * Q**2)
>>> round(float(op.flow_m3_s[0]), 7), round(float(op.pressure_Pa[0]), 4)
(0.008165, 26.6667)
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from sinkopt.errors import InputError
from sinkopt.fans.curve import FanArray, FanCurve

__all__ = ["OperatingPoint", "solve_operating_point", "DEFAULT_FAN_EFFICIENCY"]

#: Total fan efficiency (air power / electrical power) used when the fan file gives no power
#: data [-]. Mid-range of the 10-35 % typical of small axial fans (physics.md §9, rule of thumb,
#: no source). Pass ``efficiency=`` to override.
DEFAULT_FAN_EFFICIENCY = 0.20

_EPS = np.finfo(float).eps


@dataclass(frozen=True)
class OperatingPoint:
    """Operating points of n designs; every attribute is an array of shape (n,).

    Attributes
    ----------
    flow_m3_s : ndarray
        Net volume flow through the system [m3/s]; NaN if ``no_intersection``.
    pressure_Pa : ndarray
        Static pressure rise of the array = system pressure drop [Pa].
    air_power_W : ndarray
        Air power delivered to the system, Δp·Q [W].
    electrical_power_W : ndarray
        Electrical power of all running fans [W] (power data, else Σ air power of the running
        fans / efficiency).
    noise_dBA : ndarray
        Noise of the running fans [dB(A)], NaN if the fan file gives none.
    no_intersection : ndarray of bool
        No operating point inside the fan data (the design cannot be evaluated: infeasible).
    in_stall : ndarray of bool
        The operating point lies in the fan's stall region (below the stall limit).
    fan_flow_m3_s : ndarray
        Flow through each running fan [m3/s].
    leak_flow_m3_s : ndarray
        Back-flow through the stopped fans of a parallel array [m3/s].
    speed_ratio, air_density_kg_m3 : ndarray
        The inputs, broadcast to (n,) [-], [kg/m3].
    """

    flow_m3_s: np.ndarray
    pressure_Pa: np.ndarray
    air_power_W: np.ndarray
    electrical_power_W: np.ndarray
    noise_dBA: np.ndarray
    no_intersection: np.ndarray
    in_stall: np.ndarray
    fan_flow_m3_s: np.ndarray
    leak_flow_m3_s: np.ndarray
    speed_ratio: np.ndarray
    air_density_kg_m3: np.ndarray

    def feasible(self, allow_stall: bool = False) -> np.ndarray:
        """Designs with an operating point (and, unless ``allow_stall``, not in stall)."""
        ok = ~self.no_intersection
        return ok if allow_stall else ok & ~self.in_stall

    def __len__(self) -> int:
        return self.flow_m3_s.shape[0]


def _chandrupatla(g, x1, x2, f1, f2, todo, xatol, xrtol=4 * _EPS, maxiter=100):
    """Vectorised Chandrupatla root finder on brackets [x1, x2] with f1·f2 <= 0.

    ``g(x)`` must accept and return arrays of shape (n,); entries where ``todo`` is False get the
    finite dummy abscissa ``x1`` and are ignored. Follows SciPy's implementation
    (``scipy.optimize.elementwise.find_root``), which cannot be used here because it passes only
    the unconverged subset to the function, while ``system_dp`` needs one flow per design.
    Converged entries are not frozen: once their bracket is below tolerance they bisect inside
    it, which is harmless and cheaper than masking every update.
    """
    x1, x2, f1, f2 = (np.array(a, dtype=float) for a in (x1, x2, f1, f2))
    dummy = x1.copy()
    x3, f3 = x2.copy(), f2.copy()
    t = np.full(x1.shape, 0.5)
    skip = ~todo
    any_skip = bool(skip.any())
    with np.errstate(divide="ignore", invalid="ignore"):
        for _ in range(maxiter):
            x = x1 + t * (x2 - x1)
            if any_skip:
                x = np.where(todo, x, dummy)
            f = g(x)
            same = np.signbit(f) == np.signbit(f1)
            x3 = np.where(same, x1, x2)
            f3 = np.where(same, f1, f2)
            x2 = np.where(same, x2, x1)
            f2 = np.where(same, f2, f1)
            x1, f1 = x, f
            dx = np.abs(x2 - x1)
            tol = np.maximum(np.abs(x1), np.abs(x2)) * xrtol + xatol
            done = (dx < tol) | (f1 == 0) | (f2 == 0) | ~np.isfinite(f1)
            if any_skip:
                done |= skip
            if done.all():
                break
            xi = (x1 - x2) / (x3 - x2)
            phi = (f1 - f2) / (f3 - f2)
            alpha = (x3 - x1) / (x2 - x1)
            iqi = ((1 - np.sqrt(1 - xi)) < phi) & (phi < np.sqrt(xi))
            t = f1 / (f1 - f2) * f3 / (f3 - f2) - alpha * f1 / (f3 - f1) * f2 / (f2 - f3)
            t = np.where(iqi, t, 0.5)
            tl = np.minimum(0.5 * tol / dx, 0.5)
            t = np.minimum(np.maximum(t, tl), 1 - tl)
    return np.where(np.abs(f1) < np.abs(f2), x1, x2)


def _as_array(fan) -> FanArray:
    if isinstance(fan, FanArray):
        return fan
    if isinstance(fan, FanCurve):
        return FanArray(fan)
    raise InputError(f"fan must be a FanArray or FanCurve, but got {type(fan).__name__}")


def solve_operating_point(
    fan: FanArray | FanCurve,
    system_dp: Callable[[np.ndarray], np.ndarray],
    speed_ratio=1.0,
    air_density=None,
    n: int | None = None,
    *,
    efficiency: float = DEFAULT_FAN_EFFICIENCY,
    xrtol: float = 1e-10,
    maxiter: int = 100,
) -> OperatingPoint:
    """Operating points of a fan array on n system curves at once.

    Parameters
    ----------
    fan : FanArray or FanCurve
        The fan array (a bare curve means one fan).
    system_dp : callable
        ``system_dp(Q) -> dp``: Q of shape (n,) [m3/s], one per design, to the system static
        pressure drop [Pa], shape (n,); increasing in Q, >= 0, ``system_dp(0) = 0``.
    speed_ratio : float or ndarray
        Fan speed / rated speed per design [-] (fan laws); <= 0 means the fan cannot move air.
    air_density : float or ndarray, optional
        Air density per design [kg/m3]; default the curve's reference density.
    n : int, optional
        Number of designs; default from the shapes of ``speed_ratio`` and ``air_density`` (1 if
        both are scalars).
    efficiency : float
        Total efficiency used for the electrical power when the curve has no power data [-];
        default :data:`DEFAULT_FAN_EFFICIENCY`.
    xrtol : float
        Relative tolerance on the per-fan flow, relative to the scaled free-delivery flow [-].
    maxiter : int
        Iteration cap of the root finder.

    Returns
    -------
    OperatingPoint
        Arrays of shape (n,).
    """
    arr = _as_array(fan)
    curve = arr.curve
    if not 0 < efficiency <= 1:
        raise InputError(f"`0 < efficiency <= 1` must hold, but got efficiency={efficiency}")
    rho_in = curve.air_density_kg_m3 if air_density is None else air_density
    s, rho = np.broadcast_arrays(np.asarray(speed_ratio, dtype=float),
                                 np.asarray(rho_in, dtype=float))
    if s.ndim > 1:
        raise InputError(f"speed_ratio and air_density must be scalars or 1-d, got shape {s.shape}")
    if n is None:
        n = 1 if s.ndim == 0 else s.shape[0]
    if s.ndim == 1 and s.shape[0] != n:
        raise InputError(f"speed_ratio/air_density have {s.shape[0]} entries but n={n}")
    s = np.broadcast_to(s, (n,)).astype(float)
    rho = np.broadcast_to(rho, (n,)).astype(float)

    valid = np.isfinite(s) & (s > 0) & np.isfinite(rho) & (rho > 0)
    ss = np.where(valid, s, 1.0)
    rr = np.where(valid, rho, curve.air_density_kg_m3)
    x = curve.flow_m3_s
    k = curve.stall_index

    def state(qf):
        return arr.evaluate(qf, ss, rr, clip=True)

    def residual(qf):
        st = state(qf)
        dp_sys = np.asarray(system_dp(np.maximum(st.flow_m3_s, 0.0)), dtype=float)
        if dp_sys.shape not in ((n,), ()):
            raise InputError(f"system_dp returned shape {dp_sys.shape} for n={n} designs; pass "
                             "n= (or per-design speed_ratio/air_density arrays)")
        return st.pressure_Pa - dp_sys

    q_hi = ss * x[-1]
    q_lo = ss * x[k]
    with np.errstate(invalid="ignore"):
        g_hi = residual(q_hi)
        g_lo = residual(q_lo)
    finite = valid & np.isfinite(g_hi) & np.isfinite(g_lo)
    stable = finite & (g_lo >= 0) & (g_hi <= 0)
    unstable = finite & (g_lo < 0)

    a, b, fa, fb = q_lo.copy(), q_hi.copy(), g_lo.copy(), g_hi.copy()
    found = stable.copy()
    if unstable.any():
        # largest-flow sign change of g left of the stall limit: scan knots downwards
        g_right = g_lo.copy()
        pending = unstable.copy()
        for i in range(k - 1, -1, -1):
            if not pending.any():
                break
            with np.errstate(invalid="ignore"):
                g_i = residual(ss * x[i])
            hit = pending & np.isfinite(g_i) & (g_i >= 0)
            a = np.where(hit, ss * x[i], a)
            b = np.where(hit, ss * x[i + 1], b)
            fa = np.where(hit, g_i, fa)
            fb = np.where(hit, g_right, fb)
            found |= hit
            pending &= ~hit
            g_right = g_i
    in_stall = found & ~stable

    q_root = _chandrupatla(residual, a, b, fa, fb, found, xatol=xrtol * q_hi, maxiter=maxiter)
    q_root = np.where(found, q_root, np.nan)
    st = arr.evaluate(q_root, ss, rr)
    no_int = ~found
    nan = np.where(no_int, np.nan, 1.0)
    flow = st.flow_m3_s * nan
    dp = st.pressure_Pa * nan
    air_power = flow * dp
    p_el = curve.electrical_power(q_root, ss, rr)
    fan_air_power = st.fan_pressure_Pa * q_root  # one running fan [W]
    p_el = np.where(np.isnan(p_el), fan_air_power / efficiency, p_el) * arr.running * nan
    noise = np.broadcast_to(arr.noise(ss), (n,)) * nan
    return OperatingPoint(
        flow_m3_s=flow, pressure_Pa=dp, air_power_W=air_power, electrical_power_W=p_el,
        noise_dBA=noise, no_intersection=no_int, in_stall=in_stall & ~no_int,
        fan_flow_m3_s=q_root * nan, leak_flow_m3_s=st.leak_flow_m3_s * nan,
        speed_ratio=s, air_density_kg_m3=rho,
    )

"""Operating point of a fan array on a system curve, for a whole batch of designs at once.

Solves Δp_fan(Q) = Δp_sys(Q) (docs/theory.md#fan-operating-point) for n designs in one vectorised pass: every step is
a numpy operation on arrays of shape (n,). :func:`solve_operating_point` solves one fan array
for every design; :func:`solve_operating_points` gives each design its own fan array out of a
list (the search's batches mix fans), in the same single pass.

Method. The unknown is the flow ``q`` of one running fan. On the fan's stable branch
[s·q_stall, s·q_max] the fan curve falls and the system curve rises, so the residual
g(q) = Δp_array(q) − Δp_sys(Q(q)) is strictly decreasing and has at most one root. The data
points (knots) of the stable branch are bisected first, down to the one PCHIP segment that holds
the root; inside it the fan pressure is a single cubic in q. The root is then found by
Chandrupatla's bracketed method (Chandrupatla 1997, *Adv. Eng. Softw.* 28(3), 145-149,
doi:10.1016/S0965-9978(96)00051-8): inverse quadratic interpolation when safe, bisection
otherwise, never leaving the bracket, started from the last knot dropped by the bisection;
~4-7 iterations to a relative 1e-10. If the system already exceeds the fan at the stall limit,
the data segments left of it are scanned for a sign change of g and the largest-flow root is
taken (``in_stall``). If there is no root inside the data, ``no_intersection`` is set and the
flow is NaN: never an exception, never extrapolation. Each design's iterates depend on its own
data only (converged designs are set aside), so a design gets the same result in any batch.

>>> import numpy as np
>>> from sinkopt.fans import FanCurve
>>> q = np.linspace(0, 0.01, 41)
>>> fan = FanCurve(q, 80 * (1 - (q / 0.01) ** 2))
>>> op = solve_operating_point(fan, lambda Q: 4e5 * Q**2)
>>> round(float(op.flow_m3_s[0]), 7), round(float(op.pressure_Pa[0]), 4)
(0.008165, 26.6667)
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from sinkopt.errors import InputError
from sinkopt.fans.curve import FanArray, FanCurve

__all__ = ["OperatingPoint", "solve_operating_point", "solve_operating_points",
           "DEFAULT_FAN_EFFICIENCY"]

#: Total fan efficiency (air power / electrical power) used when the fan file gives no power
#: data [-]. Mid-range of the 10-35 % typical of small axial fans (docs/theory.md#common-practice, rule of thumb,
#: no source). Pass ``efficiency=`` to override.
DEFAULT_FAN_EFFICIENCY = 0.20

_EPS = np.finfo(float).eps
#: Relative part of the root finder's stopping tolerance (round-off level); the absolute part is
#: ``xrtol`` times the scaled free-delivery flow of one fan.
_XRTOL_ROUNDOFF = 4 * _EPS
#: Converged designs are dropped from the working arrays once they are this fraction of them
#: (until then they stay, frozen: cheaper than compacting ~15 arrays for a few designs).
_COMPACT_FRACTION = 0.25


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


def _as_array(fan) -> FanArray:
    if isinstance(fan, FanArray):
        return fan
    if isinstance(fan, FanCurve):
        return FanArray(fan)
    raise InputError(f"fan must be a FanArray or FanCurve, but got {type(fan).__name__}")


class _FanTable:
    """The data of several fan arrays in flat arrays, so designs with different fans are solved
    in one vectorised pass.

    Knot ``j`` of array ``a`` is entry ``first[a] + j`` of ``x`` (flow) and ``p`` (pressure);
    the PCHIP coefficients ``c0..c3`` of the segment right of a knot are stored at that knot's
    entry (zeros at each curve's last knot). Per-array constants are indexed by array.
    """

    def __init__(self, arrays: Sequence[FanArray | FanCurve], efficiency):
        arrays = [_as_array(a) for a in arrays]
        if not arrays:
            raise InputError("at least one fan array is needed, but got none")
        if isinstance(efficiency, (list, tuple, np.ndarray)):
            eff = list(efficiency)
        else:
            eff = [efficiency] * len(arrays)
        if len(eff) != len(arrays):
            raise InputError(f"efficiency has {len(eff)} entries for {len(arrays)} fan arrays")
        eff = [DEFAULT_FAN_EFFICIENCY if e is None else float(e) for e in eff]
        for e in eff:
            if not 0 < e <= 1:
                raise InputError(f"`0 < efficiency <= 1` must hold, but got efficiency={e}")
        curves = [a.curve for a in arrays]
        m = np.array([c.flow_m3_s.size for c in curves])
        first = np.concatenate([[0], np.cumsum(m)[:-1]]).astype(np.intp)
        self.x = np.concatenate([c.flow_m3_s for c in curves])
        self.p = np.concatenate([c.pressure_Pa for c in curves])
        coef = np.zeros((4, self.x.size))
        power = np.full(self.x.size, np.nan)
        for c, f, k in zip(curves, first, m):
            coef[:, f:f + k - 1] = c._coef
            if c.power_W is not None:
                power[f:f + k] = c.power_W
        self.c0, self.c1, self.c2, self.c3 = (np.ascontiguousarray(r) for r in coef)
        self.power = power
        self.first = first
        self.last = first + m - 1
        self.stall = first + np.array([c.stall_index for c in curves], dtype=np.intp)
        self.rho_ref = np.array([c.air_density_kg_m3 for c in curves])
        self.running = np.array([a.running for a in arrays], dtype=float)
        series = np.array([a.arrangement == "series" for a in arrays])
        # net flow Q = q_mult·q − leak·√(max(p1, 0)/ρ)  (parallel: leak through stopped fans)
        # array pressure Δp = p_mult·p1 − loss·ρ·q²      (series: loss of the stopped fans)
        self.q_mult = np.where(series, 1.0, self.running)
        self.p_mult = np.where(series, self.running, 1.0)
        self.leak = np.array([a.failed * a.fan_area_m2 * math.sqrt(2.0 / a.leak_K)
                              if a.arrangement == "parallel" and a.needs_area else 0.0
                              for a in arrays])
        self.loss = np.array([a.failed * a.stopped_loss_K / (2.0 * a.fan_area_m2**2)
                              if a.arrangement == "series" and a.failed else 0.0
                              for a in arrays])
        self.has_column = np.array([c.power_W is not None for c in curves])
        self.rated = np.array([np.nan if c.rated_power_W is None else c.rated_power_W
                               for c in curves])
        self.efficiency = np.array(eff)
        self.noise = np.array([np.nan if c.noise_dBA is None else c.noise_dBA for c in curves])
        self.noise = self.noise + 10.0 * np.log10(self.running)
        self.any_q_mult = bool(np.any(self.q_mult != 1.0))
        self.any_p_mult = bool(np.any(self.p_mult != 1.0))
        self.any_leak = bool(np.any(self.leak > 0))
        self.any_loss = bool(np.any(self.loss > 0))
        self.any_column = bool(self.has_column.any())


def _take(a, idx):
    return a if (idx is None or a is None) else a[idx]


def _mask(m):
    """Bool mask (n,) -> int64 mask of all-ones / zero words for :func:`_swap_select`."""
    return np.negative(m.view(np.int8), dtype=np.int64)


def _swap_select(mask, a, b):
    """``(where(m, a, b), where(m, b, a))`` for float arrays, exactly, by bit operations on the
    int64 views (no branches: a random mask makes np.where several times slower)."""
    ai, bi = a.view(np.int64), b.view(np.int64)
    ab = ai ^ bi
    first = ab & mask
    first ^= bi
    ab ^= first
    return first.view(np.float64), ab.view(np.float64)


def _move_select(mask, a, b, new):
    """Bisection step on brackets [a, b] (float or int64 arrays): where ``mask``, ``new``
    replaces ``a``, else ``b``. Returns (the end replaced, new a, new b), by bit selects."""
    dt = a.dtype
    ai, bi, ni = a.view(np.int64), b.view(np.int64), new.view(np.int64)
    ab = ai ^ bi
    gone = ab & mask
    gone ^= bi  # where(mask, a, b)
    ab ^= gone  # the end that stays
    na = ni ^ ab
    na &= mask
    na ^= ab  # where(mask, new, stays)
    nb = ni ^ ab
    nb ^= na  # the other one
    return gone.view(dt), na.view(dt), nb.view(dt)


def _best(x1, x2, f1, f2):
    """Root estimate from a final bracket: linear interpolation between its ends (inside the
    bracket, error ~ curvature × width², far below the width), or the end with the smaller
    |f| if the ends do not have opposite signs (an exact zero, or NaN)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        lin = x1 - f1 * ((x2 - x1) / (f2 - f1))
    return np.where(f1 * f2 < 0, lin, np.where(np.abs(f1) < np.abs(f2), x1, x2))


class _Solve:
    """One multi-curve solve: per-design constants and the residual (see
    :func:`solve_operating_points`, whose ``system_dp(Q, index)`` contract is used)."""

    def __init__(self, table: _FanTable, group, s, rho, system_dp, xrtol, maxiter):
        t = table
        self.t, self.system_dp, self.maxiter = t, system_dp, maxiter
        self.n = group.size
        self.group = group
        self.valid = np.isfinite(s) & (s > 0) & np.isfinite(rho) & (rho > 0)
        rho_ref = t.rho_ref[group]
        self.ss = ss = np.where(self.valid, s, 1.0)
        self.rr = rr = np.where(self.valid, rho, rho_ref)
        self.psc = ss * ss * (rr / rho_ref)  # fan laws: p1(q) = s² ρ/ρ_ref p_ref(q/s)
        # per-design array constants, None where no design needs them
        self.q_mult = t.q_mult[group] if t.any_q_mult else None
        self.p_mult = t.p_mult[group] if t.any_p_mult else None
        self.leak = t.leak[group] / np.sqrt(rr) if t.any_leak else None
        self.loss = t.loss[group] * rr if t.any_loss else None
        self.xatol = xrtol * (ss * t.x[t.last[group]])

    @staticmethod
    def _array(q, p1, q_mult, p_mult, leak, loss):
        """Net flow, array pressure and leak of one running fan's flow q and pressure p1."""
        flow = q if q_mult is None else q_mult * q
        dp = p1 if p_mult is None else p_mult * p1
        lk = None
        if leak is not None:
            lk = leak * np.sqrt(np.maximum(p1, 0.0))
            flow = flow - lk
        if loss is not None:
            dp = dp - loss * (q * q)
        return flow, dp, lk

    def _residual(self, q, p1, idx, extra):
        flow, dp, lk = self._array(q, p1, *extra)
        if lk is not None:
            flow = np.maximum(flow, 0.0)
        return dp - np.asarray(self.system_dp(flow, idx), dtype=float)

    def _extra(self, idx):
        return [_take(a, idx) for a in (self.q_mult, self.p_mult, self.leak, self.loss)]

    def knot_residual(self, knot, idx):
        """g at flat-table knots ``knot`` for designs ``idx`` (None: all designs)."""
        t = self.t
        q = _take(self.ss, idx) * t.x[knot]
        p1 = _take(self.psc, idx) * t.p[knot]
        return self._residual(q, p1, idx, self._extra(idx))

    # ---- bracketing --------------------------------------------------------------------------
    def solve(self):
        """Returns (per-fan flow at the root (NaN: none), segment knot, found, on stable branch)."""
        t, n, grp = self.t, self.n, self.group
        lo = t.stall[grp]
        hi = t.last[grp]
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            g_lo = self.knot_residual(lo, None)
            g_hi = self.knot_residual(hi, None)
        finite = self.valid & np.isfinite(g_lo) & np.isfinite(g_hi)
        stable = finite & (g_lo >= 0) & (g_hi <= 0)
        unstable = finite & (g_lo < 0)
        # Per design: bracket of knots a < b with g(a) >= 0 >= g(b); c: the knot dropped last
        # (-1: none), the third point of the first interpolation step; a_newest: a was found
        # after b (Chandrupatla's x1).
        a, b, fa, fb = lo.copy(), hi.copy(), g_lo.copy(), g_hi.copy()
        c = np.full(n, -1, dtype=np.intp)
        fc = np.full(n, np.nan)
        a_newest = np.zeros(n, dtype=bool)
        found = stable.copy()
        if unstable.any():
            self._scan_stall(np.flatnonzero(unstable), lo, hi, g_lo, g_hi, a, b, fa, fb, c, fc,
                             a_newest, found)
        wide = np.flatnonzero(stable & (b - a > 1))
        if wide.size:
            self._bisect_knots(wide, a, b, fa, fb, c, fc, a_newest)
        q_root = np.full(n, np.nan)
        act = np.flatnonzero(found)
        if act.size:
            q_root[act] = self._segment_roots(act, a[act], b[act], fa[act], fb[act], c[act],
                                              fc[act], a_newest[act])
        return q_root, a, found, stable

    def _scan_stall(self, pend, lo, hi, g_lo, g_hi, a, b, fa, fb, c, fc, a_newest, found):
        """Largest-flow sign change of g left of the stall limit: scan knots downwards."""
        first = self.t.first[self.group[pend]]
        right, g_right = lo[pend], g_lo[pend]
        c[pend], fc[pend] = hi[pend], g_hi[pend]
        while pend.size:
            more = right > first
            if not more.all():
                pend, right, g_right, first = (v[more] for v in (pend, right, g_right, first))
                if not pend.size:
                    break
            k = right - 1
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                g_k = self.knot_residual(k, pend)
            hit = g_k >= 0
            h = pend[hit]
            a[h], b[h], fa[h], fb[h] = k[hit], right[hit], g_k[hit], g_right[hit]
            a_newest[h] = True
            found[h] = True
            miss = ~hit
            pend, k, g_k, first, right, g_right = (
                v[miss] for v in (pend, k, g_k, first, right, g_right))
            c[pend], fc[pend] = right, g_right  # dropped: the old right end
            right, g_right = k, g_k

    def _bisect_knots(self, idx, a, b, fa, fb, c, fc, a_newest):
        """Stable branch (g decreasing): bisect over the knots down to one segment."""
        ai, bi, fai, fbi, ci, fci, newi = (v[idx] for v in (a, b, fa, fb, c, fc, a_newest))
        while True:
            wide = bi - ai > 1
            if not wide.all():
                d = ~wide
                j = idx[d]
                a[j], b[j], fa[j], fb[j] = ai[d], bi[d], fai[d], fbi[d]
                c[j], fc[j], a_newest[j] = ci[d], fci[d], newi[d]
                if not wide.any():
                    return
                idx, ai, bi, fai, fbi, ci, fci = (v[wide] for v in (idx, ai, bi, fai, fbi, ci, fci))
            mid = (ai + bi) >> 1
            with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
                gm = self.knot_residual(mid, idx)
            newi = gm >= 0  # then a moves to mid, else b does; the end left behind is c
            m = _mask(newi)
            ci, ai, bi = _move_select(m, ai, bi, mid)
            fci, fai, fbi = _move_select(m, fai, fbi, gm)

    # ---- root inside one segment -------------------------------------------------------------
    def _segment_roots(self, act, ka, kb, fa, fb, kc, fc, a_newest):
        """Chandrupatla's method (as SciPy's ``elementwise.find_root``) on [q(ka), q(kb)], one
        PCHIP segment per design, where the fan pressure is one cubic in q. Converged designs are
        frozen (x = x1 again) and, once they are a quarter of the working arrays, dropped."""
        t = self.t
        ss = self.ss[act]
        qa = ss * t.x[ka]
        qb = ss * t.x[kb]
        # p1(q) = ((d0 e + d1) e + d2) e + d3, e = q − q_a: the segment's cubic with the fan laws
        psc = self.psc[act]
        inv_s = 1.0 / ss
        d3 = psc * t.c3[ka]
        d2 = psc * t.c2[ka] * inv_s
        d1 = psc * t.c1[ka] * (inv_s * inv_s)
        d0 = psc * t.c0[ka] * (inv_s * inv_s * inv_s)
        m = _mask(a_newest)  # x1: the end found last
        x1, x2 = _swap_select(m, qa, qb)
        f1, f2 = _swap_select(m, fa, fb)
        # no third point: x3 = x2 makes the interpolation test fail, so the first step bisects
        seeded = kc >= 0
        x3 = np.where(seeded, ss * t.x[np.where(seeded, kc, 0)], x2)
        f3 = np.where(seeded, fc, f2)
        # stopping tolerance: 4 eps·max(|x1|, |x2|) + xatol, with the bracket's upper end for
        # max(|x1|, |x2|) (flows >= 0; the difference, <= 4 eps·q, is 1e-5 of xatol)
        tol = qb * _XRTOL_ROUNDOFF + self.xatol[act]
        consts = [qa, d0, d1, d2, d3, tol, *self._extra(act)]
        out = np.empty(act.size)
        pos = np.arange(act.size)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            for it in range(self.maxiter + 1):
                dx = np.abs(x2 - x1)
                tol = consts[5]
                # done: bracket below tolerance, an exact zero, or a NaN residual
                done = dx < tol
                done |= ~(f1 * f2 < 0)
                n_done = int(np.count_nonzero(done))
                if n_done == x1.size or it == self.maxiter:
                    out[pos] = _best(x1, x2, f1, f2)
                    break
                if n_done >= _COMPACT_FRACTION * x1.size:
                    out[pos[done]] = _best(x1[done], x2[done], f1[done], f2[done])
                    keep = np.flatnonzero(~done)
                    pos, act, x1, x2, x3, f1, f2, f3, dx = (
                        v[keep] for v in (pos, act, x1, x2, x3, f1, f2, f3, dx))
                    consts = [None if v is None else v[keep] for v in consts]
                    tol = consts[5]
                    n_done = 0
                # inverse quadratic interpolation when safe, else bisection
                f21 = f1 - f2
                f32 = f3 - f2
                xi = (x1 - x2) / (x3 - x2)
                phi = f21 / f32
                alpha = (x3 - x1) / (x2 - x1)
                iqi = np.sqrt(xi) > phi
                iqi &= (1.0 - np.sqrt(1.0 - xi)) < phi
                tt = f1 / f32 * (f3 / f21 + alpha * f2 / (f3 - f1))
                tt[~iqi] = 0.5
                tl = 0.5 * tol / dx
                np.minimum(tl, 0.5, out=tl)
                np.maximum(tt, tl, out=tt)
                np.minimum(tt, 1.0 - tl, out=tt)
                if n_done:
                    tt[done] = 0.0  # converged: evaluate x1 again, the bracket stays
                x = x2 - x1
                x *= tt
                x += x1
                qa_, d0_, d1_, d2_, d3_ = consts[:5]
                e = x - qa_
                p1 = d0_ * e
                p1 += d1_
                p1 *= e
                p1 += d2_
                p1 *= e
                p1 += d3_
                f = self._residual(x, p1, act, consts[6:])
                # Chandrupatla's update, as bit selects (a random-mask np.where is ~10 x slower):
                # same sign as f1: x3 = x1 (x2 stays), else x3 = x2 and x2 = x1
                m = _mask(np.signbit(f) == np.signbit(f1))
                x3, x2 = _swap_select(m, x1, x2)
                f3, f2 = _swap_select(m, f1, f2)
                x1, f1 = x, f
        return out

    # ---- results -----------------------------------------------------------------------------
    def result(self, s, rho) -> OperatingPoint:
        t, n = self.t, self.n
        q_root, seg, found, stable = self.solve()
        nan = np.where(found, 1.0, np.nan)
        grp = self.group
        ss, rr, psc = self.ss, self.rr, self.psc
        with np.errstate(invalid="ignore", divide="ignore", over="ignore"):
            # fan pressure at the root from its segment's cubic (PCHIP, fan laws)
            u = q_root / ss
            seg = np.where(found, seg, t.first[grp])
            d = u - t.x[seg]
            p1 = psc * (((t.c0[seg] * d + t.c1[seg]) * d + t.c2[seg]) * d + t.c3[seg])
            flow, dp, lk = self._array(q_root, p1, *self._extra(None))
            flow = flow * nan
            dp = dp * nan
            leak = nan * 0.0 if lk is None else lk * nan
            scale = ss * ss * ss * (rr / t.rho_ref[grp])
            fan_air = p1 * q_root  # one running fan [W]
            p_el = fan_air / t.efficiency[grp]
            rated = t.rated[grp]
            p_el = np.where(np.isnan(rated), p_el, scale * rated)
            if t.any_column:
                col = t.has_column[grp]
                seg1 = np.minimum(seg + 1, t.last[grp])
                x0, x1 = t.x[seg], t.x[seg1]
                w0, w1 = t.power[seg], t.power[seg1]
                slope = (w1 - w0) / (x1 - x0)
                per_fan = np.where(u >= x1, w1, slope * (u - x0) + w0)
                p_el = np.where(col, scale * per_fan, p_el)
            p_el = p_el * t.running[grp] * nan
            noise = (t.noise[grp] + 50.0 * np.log10(ss)) * nan
        return OperatingPoint(
            flow_m3_s=flow, pressure_Pa=dp, air_power_W=flow * dp, electrical_power_W=p_el,
            noise_dBA=noise, no_intersection=~found, in_stall=found & ~stable,
            fan_flow_m3_s=q_root * nan, leak_flow_m3_s=leak, speed_ratio=s,
            air_density_kg_m3=rho,
        )


def _per_design(name, value, n):
    a = np.asarray(value, dtype=float)
    if a.ndim > 1 or (a.ndim == 1 and a.shape[0] != n):
        raise InputError(f"{name} must be a scalar or have shape ({n},), but got shape {a.shape}")
    return np.broadcast_to(a, (n,)).astype(float)


def solve_operating_points(
    arrays: Sequence[FanArray | FanCurve],
    group_index,
    system_dp: Callable[[np.ndarray, np.ndarray | None], np.ndarray],
    speed_ratio=1.0,
    air_density=None,
    *,
    efficiency=DEFAULT_FAN_EFFICIENCY,
    xrtol: float = 1e-10,
    maxiter: int = 100,
) -> OperatingPoint:
    """Operating points of n designs, each with its own fan array, in one vectorised pass.

    Same method and results as :func:`solve_operating_point` called once per fan array on the
    designs that use it (a design's result does not depend on the rest of the batch), but one
    set of numpy calls for the whole batch.

    Parameters
    ----------
    arrays : sequence of FanArray or FanCurve
        The fan arrays (a bare curve means one fan).
    group_index : array_like of int, shape (n,)
        Index into ``arrays`` of each design's fan array.
    system_dp : callable
        ``system_dp(Q, index) -> dp``: system static pressure drop [Pa] at total flows Q [m3/s]
        of the designs ``index`` (an int array; ``Q`` has its shape), or of all n designs when
        ``index`` is None. Increasing in Q, >= 0, ``system_dp(0) = 0``. The solver passes the
        same ``index`` object for many calls in a row (the callable may cache per-design
        constants gathered for it).
    speed_ratio : float or ndarray
        Fan speed / rated speed per design [-]; <= 0 or NaN: the fan cannot move air.
    air_density : float or ndarray, optional
        Air density per design [kg/m3]; default each curve's reference density.
    efficiency : float or sequence of float
        Total efficiency for the electrical power of curves without power data, one for all or
        one per array (None: :data:`DEFAULT_FAN_EFFICIENCY`) [-].
    xrtol : float
        Tolerance on the per-fan flow, relative to the scaled free-delivery flow [-].
    maxiter : int
        Iteration cap of the root finder (after the knot bisection).

    Returns
    -------
    OperatingPoint
        Arrays of shape (n,).

    Examples
    --------
    >>> import numpy as np
    >>> from sinkopt.fans import FanArray, FanCurve
    >>> q = np.linspace(0, 0.01, 41)
    >>> fan = FanCurve(q, 80 * (1 - (q / 0.01) ** 2))
    >>> k = np.array([4e5, 4e5])
    >>> op = solve_operating_points([fan, FanArray(fan, count=2)], [0, 1],
    ...                             lambda Q, i: (k if i is None else k[i]) * Q**2)
    >>> np.round(op.flow_m3_s, 7).tolist()
    [0.008165, 0.011547]
    """
    table = _FanTable(arrays, efficiency)
    group = np.asarray(group_index)
    if group.ndim != 1 or (group.size and not np.issubdtype(group.dtype, np.integer)):
        raise InputError(f"group_index must be a 1-d integer array, but got {group.dtype} "
                         f"of shape {group.shape}")
    group = group.astype(np.intp, copy=False)
    if group.size and (group.min() < 0 or group.max() >= len(table.first)):
        raise InputError(f"group_index must lie in [0, {len(table.first) - 1}], but got "
                         f"{group.min()}..{group.max()}")
    n = group.size
    s = _per_design("speed_ratio", speed_ratio, n)
    rho = (table.rho_ref[group] if air_density is None
           else _per_design("air_density", air_density, n))
    return _Solve(table, group, s, rho, system_dp, xrtol, maxiter).result(s, rho)


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

    def system(q, index):
        # system_dp takes one flow per design: subsets are padded with zero flow
        if index is None:
            full = q
        else:
            full = np.zeros(n)
            full[index] = q
        dp = np.asarray(system_dp(full), dtype=float)
        if dp.shape not in ((n,), ()):
            raise InputError(f"system_dp returned shape {dp.shape} for n={n} designs; pass "
                             "n= (or per-design speed_ratio/air_density arrays)")
        dp = np.broadcast_to(dp, (n,))
        return dp if index is None else dp[index]

    table = _FanTable([arr], efficiency)
    group = np.zeros(n, dtype=np.intp)
    return _Solve(table, group, s, rho, system, xrtol, maxiter).result(s, rho)

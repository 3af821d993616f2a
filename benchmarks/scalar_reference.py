"""Scalar reference of one design's evaluation, written the plain way: one design at a time,
Python floats and ``math``, ``scipy.optimize.brentq`` for the fan operating point, and the
reference libraries' correlations where one exists (ht, fluids).

It is an independent re-implementation of what :func:`sinkopt.model.system.evaluate_params` computes
for a ducted sink (no bypass, no extra losses, no failed-fan check), used by
``benchmarks/throughput.py`` as a cross-check of the vectorised model and as the speed baseline.
It never calls sinkopt's physics or fan functions: from sinkopt it takes only *data* (the
problem's devices, fan-curve points in SI, limits) and the formulas of
docs/theory.md (sections named below).

Where the libraries are used, and where not:

* air: pressure from ``fluids.atmosphere.ATMOSPHERE_1976``; density, viscosity and conductivity
  from the dependency-free formulas of docs/theory.md#air-properties (the model's choice; CoolProp differs
  by up to 1.1 %, so it cannot be the reference for agreement to 1e-8).
* fan curve: ``scipy.interpolate.PchipInterpolator`` on the datasheet points, built once per fan;
  power column by linear interpolation.
* operating point: ``scipy.optimize.brentq`` on the stable branch, else a knot scan into the
  stall region (docs/theory.md#fan-operating-point).
* friction: the laminar apparent friction (Muzychka-Yovanovich composite with the Shah-London
  f Re) and the turbulent Petukhov factor are written out: fluids has neither form (its
  ``friction_factor`` is Clamond's Colebrook solution, 1.9 % off Petukhov at Re = 1e4, which
  would break agreement in the transition blend). ``fluids.core.K_from_f`` and
  ``fluids.core.dP_from_K`` turn the friction into a pressure drop.
* turbulent heat transfer: ``ht.conv_internal.turbulent_Gnielinski`` (with the Petukhov factor);
  effectiveness: ``ht.hx.effectiveness_from_NTU(NTU, Cr=0)``.
* Teertstra's Nusselt number, K_c, K_e, fin efficiency, Song-Lee-Au and the eccentric-source
  series have no library form: written scalar from docs/theory.md (Teertstra Nusselt, pressure drop, fin efficiency, spreading sections). The
  series is written with the paper's A_m, A_n, A_mn coefficients (docs/theory.md#multiple-and-eccentric-sources), not with the
  factorised form the vectorised code uses, so the identity between the two is checked too.
"""
from __future__ import annotations

import math
from bisect import bisect_right
from dataclasses import dataclass

import fluids.atmosphere
import fluids.core
import ht.conv_internal
import ht.hx
from scipy.interpolate import PchipInterpolator
from scipy.optimize import brentq

__all__ = ["ScalarReference", "ScalarResult"]

ZERO_C = 273.15
RE_LAM_END, RE_TURB_START = 2300.0, 4000.0  # transition blend interval (model convention)
DEFAULT_EFFICIENCY = 0.20  # fan total efficiency when the file gives no power (model default)


@dataclass
class ScalarResult:
    """One design's results (NaN where the quantity does not exist)."""

    valid: bool
    no_airflow: bool
    in_stall: bool
    flow: float  # total flow [m^3/s]
    pressure: float  # system pressure drop [Pa]
    fan_power: float  # electrical [W]
    noise: float  # [dB(A)]
    r_sink: float  # base to inlet air [K/W]
    junction: tuple  # [°C] per device
    worst_margin: float  # [K]
    volume_cm3: float
    feasible: bool
    flow_free: float = float("nan")  # the array's free-delivery flow at this speed [m^3/s]


class _Fan:
    """One fan file: PCHIP through its points, stall limit, power data (built once)."""

    def __init__(self, option):
        c = option.curve
        self.x = [float(v) for v in c.flow_m3_s]
        self.p = [float(v) for v in c.pressure_Pa]
        self.rho_ref = float(c.air_density_kg_m3)
        self.size = None if c.size_mm is None else c.size_mm * 1e-3  # [m]
        self.pchip = PchipInterpolator(self.x, self.p, extrapolate=False)
        k = len(self.p) - 1  # stall limit: walk back from free delivery while p rises
        while k > 0 and self.p[k - 1] > self.p[k]:
            k -= 1
        self.k = k
        self.power = None if c.power_W is None else [float(v) for v in c.power_W]
        self.rated_power = c.rated_power_W
        self.noise = c.noise_dBA
        self.efficiency = DEFAULT_EFFICIENCY if option.efficiency is None else option.efficiency
        self.speed_min, self.speed_max = option.speed_min, option.speed_max

    def pressure(self, q, s, r):
        """One fan's static pressure [Pa] at per-fan flow q (clipped into the data), fan laws."""
        u = min(max(q / s, self.x[0]), self.x[-1])
        return s * s * r * float(self.pchip(u))

    def power_at(self, q, s, r):
        x = self.x
        if self.power is not None:
            u = min(max(q / s, x[0]), x[-1])
            i = min(max(bisect_right(x, u) - 1, 0), len(x) - 2)
            p = self.power[i] + (self.power[i + 1] - self.power[i]) * (u - x[i]) / (x[i + 1] - x[i])
            return s**3 * r * p
        if self.rated_power is not None:
            return s**3 * r * self.rated_power
        return None


def _smoothstep(re):
    s = min(max((re - RE_LAM_END) / (RE_TURB_START - RE_LAM_END), 0.0), 1.0)
    return s * s * (3.0 - 2.0 * s)


def _darcy_petukhov(re):
    """Petukhov (1970) smooth-duct Darcy friction factor, (0.790 ln Re - 1.64)^-2."""
    return (0.790 * math.log(re) - 1.64) ** -2


def _phi(zeta, t, k, h):
    """Spreading function of docs/theory.md#spreading-check-cases (tanh form)."""
    th = math.tanh(zeta * t)
    return (zeta + h / k * th) / (zeta * th + h / k)


class ScalarReference:
    """Evaluate designs of a ducted :class:`~sinkopt.model.problem.Problem` one at a time."""

    def __init__(self, problem, spreading="coarse"):
        if not problem.air.ducted or problem.air.extra_loss_coefficient or \
                problem.air.extra_impedance is not None or problem.air.failed_fan_check:
            raise ValueError("the scalar reference covers ducted sinks without extra losses")
        opts = problem.options
        if (opts.heat_transfer, opts.hydraulic_diameter, opts.exit_loss, opts.fin_tip,
                opts.air_heating) != ("teertstra", "parallel_plates", "culham_muzychka",
                                      "adiabatic", "local"):
            raise ValueError(f"the scalar reference covers the default options only: {opts}")
        if spreading not in ("fast", "coarse", "exact"):
            raise ValueError(f"spreading must be fast, coarse or exact; got {spreading!r}")
        self.problem = problem
        self.spreading = spreading
        self.terms = opts.coarse_terms if spreading == "coarse" else opts.series_terms
        cond = problem.conditions
        self.t_in = cond.ambient_C
        t = cond.ambient_C + ZERO_C
        p = fluids.atmosphere.ATMOSPHERE_1976(cond.altitude_m).P
        self.rho = p / (287.05 * t)
        self.mu = 1.716e-5 * (t / 273.15) ** 1.5 * (273.15 + 110.4) / (t + 110.4)
        self.k_air = 0.0241 * (t / 273.15) ** 1.5 * (273.15 + 194.0) / (t + 194.0)
        self.cp = 1006.0
        self.pr = self.cp * self.mu / self.k_air
        self.fans = {}
        for f in problem.air.fans:
            fan = _Fan(f)
            for count in f.counts:
                label = f.key if count == 1 else f"{f.key} x{count}"
                self.fans[label] = (fan, count, f.arrangement)
        self.k_s = problem.conductivity
        self.devices = list(problem.devices)
        self.r_case_base = []
        for d in self.devices:
            st = d.stacks[0] if d.stacks else None
            r = 0.0
            if st is not None:
                for layer in st.layers:
                    r += layer.thickness / (layer.conductivity * layer.area)
                r += st.interface_specific_resistance / st.contact_area
            self.r_case_base.append(r)

    # ---- sink hydraulics (docs/theory.md#heat-sink-pressure-drop) ------------------
    def sink_dp(self, W, L, H, t, N, Q):
        rho, mu = self.rho, self.mu
        b = (W - N * t) / (N - 1)
        V = Q / ((N - 1) * b * H)
        dh = 2.0 * b
        re = max(rho * V * dh / mu, 1e-12)
        a = min(b, H) / max(b, H)
        fre = 24.0 * (1 - 1.3553 * a + 1.9467 * a**2 - 1.7012 * a**3 + 0.9564 * a**4
                      - 0.2537 * a**5)
        l_plus = L / (dh * re)
        f_lam = math.sqrt((3.44 / math.sqrt(l_plus)) ** 2 + fre**2) / re  # Fanning
        f_turb = _darcy_petukhov(max(re, RE_LAM_END)) / 4.0
        sigma = 1.0 - N * t / W
        kc = 0.42 * (1.0 - sigma**2)
        ke = (1.0 - sigma**2) ** 2
        dp_lam = fluids.core.dP_from_K(kc + fluids.core.K_from_f(4 * f_lam, L, dh) + ke, rho, V)
        dp_turb = fluids.core.dP_from_K(kc + fluids.core.K_from_f(4 * f_turb, L, dh) + ke, rho, V)
        w = _smoothstep(re)
        if w == 0.0:
            return dp_lam
        return (1.0 - w) * dp_lam + w * (dp_lam**5 + dp_turb**5) ** 0.2

    # ---- sink thermal (docs/theory.md#teertstra-composite-nusselt-number) ------------
    def sink_resistance(self, W, L, H, t, N, Q):
        """(R base->inlet air, R without bulk air heating, m cp)."""
        nu, pr, k_air = self.mu / self.rho, self.pr, self.k_air
        b = (W - N * t) / (N - 1)
        V = Q / ((N - 1) * b * H)
        mcp = self.rho * Q * self.cp
        a_base = (N - 1) * b * L
        a_fin = 2.0 * H * L

        def conductance(h):
            mh = math.sqrt(2.0 * h / (self.k_s * t)) * H
            eta = math.tanh(mh) / mh if mh > 1e-12 else 1.0
            return h * (a_base + N * eta * a_fin)

        re_star = V * b / nu * b / L  # Teertstra, Yovanovich & Culham (2000)
        nu_b = ((0.5 * re_star * pr) ** -3 + (0.664 * math.sqrt(re_star) * pr ** (1 / 3)
                                              * math.sqrt(1 + 3.65 / math.sqrt(re_star))) ** -3
                ) ** (-1 / 3)
        g_lam = conductance(nu_b * k_air / b)
        dh = 2.0 * b
        re = V * dh / nu
        w = _smoothstep(re)
        if w > 0.0:
            re_t = max(re, RE_LAM_END)
            nu_t = ht.conv_internal.turbulent_Gnielinski(re_t, pr, _darcy_petukhov(re_t))
            ua = conductance(nu_t * k_air / dh)
            g_turb = ht.hx.effectiveness_from_NTU(ua / mcp, Cr=0.0, subtype="counterflow") * mcp
            g = (1.0 - w) * g_lam + w * (g_lam**5 + g_turb**5) ** 0.2
        else:
            g = g_lam
        r = 1.0 / g
        return r, max(r - 0.5 / mcp, 0.5 * r), mcp

    # ---- base spreading (docs/theory.md#spreading-resistance) -------------------------
    def base_rise_song_lee_au(self, W, L, tb, h):
        k = self.k_s
        q_tot = sum(d.power for d in self.devices)
        uniform = q_tot * (tb / k + 1.0 / h) / (W * L)
        out = []
        for d in self.devices:
            a = math.sqrt(d.size_x * d.size_y / math.pi)
            b = math.sqrt(W * L / math.pi)
            eps, tau, bi = a / b, tb / b, h * b / k
            lam = math.pi + 1.0 / (math.sqrt(math.pi) * eps)
            th = math.tanh(lam * tau)
            phi = (th + lam / bi) / (1.0 + lam / bi * th)
            psi = 0.5 * (1.0 - eps) ** 1.5 * phi
            out.append(uniform + d.power * psi / (math.sqrt(math.pi) * k * a))
        return out

    def base_rise_series(self, c, dd, tb, h):
        """Muzychka, Culham & Yovanovich (2003) eccentric sources, superposed (docs/theory.md#multiple-and-eccentric-sources)."""
        k, M = self.k_s, self.terms
        devs = self.devices
        q_tot = sum(d.power for d in devs)
        theta = [q_tot * (tb / k + 1.0 / h) / (c * dd)] * len(devs)
        lam = [m * math.pi / c for m in range(1, M + 1)]
        dlt = [n * math.pi / dd for n in range(1, M + 1)]
        phi_l = [_phi(x, tb, k, h) for x in lam]
        phi_d = [_phi(x, tb, k, h) for x in dlt]

        def S(x):
            return math.sin(x) / x

        # Response factors of each receiving source j: cos(lam X_j) S(lam a_j / 2).
        rx = [[math.cos(l * d.center_x) * S(l * d.size_x / 2) for l in lam] for d in devs]
        ry = [[math.cos(e * d.center_y) * S(e * d.size_y / 2) for e in dlt] for d in devs]
        # Strip coefficients A_m, A_n, summed over the heating sources i.
        am = [0.0] * M
        an = [0.0] * M
        for d in devs:
            X, Y, a, b, Q = d.center_x, d.center_y, d.size_x, d.size_y, d.power
            for m, l in enumerate(lam):
                am[m] += (2 * Q * (math.sin((2 * X + a) * l / 2) - math.sin((2 * X - a) * l / 2))
                          * phi_l[m] / (c * dd * a * k * l * l))
            for n, e in enumerate(dlt):
                an[n] += (2 * Q * (math.sin((2 * Y + b) * e / 2) - math.sin((2 * Y - b) * e / 2))
                          * phi_d[n] / (c * dd * b * k * e * e))
        # Double-sum coefficients A_mn, summed over the heating sources.
        src_x = [[math.cos(l * d.center_x) * math.sin(l * d.size_x / 2) for l in lam] for d in devs]
        src_y = [[math.cos(e * d.center_y) * math.sin(e * d.size_y / 2) for e in dlt] for d in devs]
        for m, l in enumerate(lam):
            for n, e in enumerate(dlt):
                beta = math.sqrt(l * l + e * e)
                coef = 16 * _phi(beta, tb, k, h) / (c * dd * k * beta * l * e)
                amn = 0.0
                for i, d in enumerate(devs):
                    amn += d.power * src_x[i][m] * src_y[i][n] / (d.size_x * d.size_y)
                amn *= coef
                for j in range(len(devs)):
                    theta[j] += amn * rx[j][m] * ry[j][n]
        for j in range(len(devs)):
            theta[j] += sum(am[m] * rx[j][m] for m in range(M))
            theta[j] += sum(an[n] * ry[j][n] for n in range(M))
        return theta

    # ---- fans to fins and discharge (docs/theory.md#fan-to-sink-air-path) -----------------
    def path_dp(self, fan, count, W, H, Q):
        air = self.problem.air
        face = W * H
        dp = fluids.core.dP_from_K(1.0, self.rho, Q / face) if air.discharge_loss else 0.0
        if air.fan_to_sink == "none" or fan.size is None:
            return dp
        a_fan = count * math.pi / 4.0 * fan.size ** 2
        if air.fan_to_sink == "plenum":
            return dp + fluids.core.dP_from_K(1.0, self.rho, Q / a_fan)
        if a_fan < face:  # Borda–Carnot by the fluids library: sharp diffuser, equal-area diameters
            k = fluids.fittings.diffuser_sharp(math.sqrt(a_fan), math.sqrt(face))
            return dp + fluids.core.dP_from_K(k, self.rho, Q / a_fan)
        return dp + fluids.core.dP_from_K(0.5 * (1.0 - face / a_fan), self.rho, Q / face)

    # ---- fan operating point (docs/theory.md#fan-operating-point) ----------------------------------------
    def operating_point(self, fan, count, s, W, L, H, t, N):
        r = self.rho / fan.rho_ref

        def g(q):  # fan minus system, per-fan flow q of the parallel array
            Q = count * max(q, 0.0)
            return (fan.pressure(q, s, r) - self.sink_dp(W, L, H, t, N, Q)
                    - self.path_dp(fan, count, W, H, Q))

        q_lo, q_hi = s * fan.x[fan.k], s * fan.x[-1]
        g_lo, g_hi = g(q_lo), g(q_hi)
        stall = False
        if g_lo >= 0.0 and g_hi <= 0.0:
            a, b = q_lo, q_hi
        elif g_lo < 0.0:
            for i in range(fan.k - 1, -1, -1):  # largest-flow root left of the stall limit
                if g(s * fan.x[i]) >= 0.0:
                    a, b, stall = s * fan.x[i], s * fan.x[i + 1], True
                    break
            else:
                return None
        else:
            return None
        q = brentq(g, a, b, xtol=1e-13 * q_hi, rtol=1e-15, maxiter=200)
        return q, stall

    # ---- one design -----------------------------------------------------------------------
    def evaluate(self, W, L, H, t, N, tb, fan_label, fan_speed):
        """One design in SI (N a whole number); ``fan_speed`` is the search's 0..1 fraction."""
        lim, proc = self.problem.limits, self.problem.process
        N = float(round(N))
        nan = float("nan")
        volume = W * L * (H + tb) * 1e6
        if not (N >= 2 and N * t < W):
            return ScalarResult(False, True, False, nan, nan, nan, nan, nan,
                                (nan,) * len(self.devices), nan, volume, False)
        fan, count, arrangement = self.fans[fan_label]
        if arrangement != "parallel":
            raise ValueError("the scalar reference covers parallel fan arrays")
        s = fan.speed_min + fan_speed * (fan.speed_max - fan.speed_min)
        op = self.operating_point(fan, count, s, W, L, H, t, N)
        if op is None:
            return ScalarResult(True, True, False, nan, nan, nan, nan, nan,
                                (nan,) * len(self.devices), nan, volume, False)
        q, stall = op
        Q = count * q
        q_free = count * s * fan.x[-1]
        r = self.rho / fan.rho_ref
        p_fan = fan.pressure(q, s, r)
        p_one = fan.power_at(q, s, r)
        power = count * (p_fan * q / fan.efficiency if p_one is None else p_one)
        noise = (nan if fan.noise is None
                 else fan.noise + 50.0 * math.log10(s) + 10.0 * math.log10(count))
        r_hs, r_film, mcp = self.sink_resistance(W, L, H, t, N, Q)
        h_eff = 1.0 / (r_film * W * L)
        if self.spreading == "fast":
            rise = self.base_rise_song_lee_au(W, L, tb, h_eff)
        else:
            rise = self.base_rise_series(W, L, tb, h_eff)
        tj = []
        for j, d in enumerate(self.devices):
            upstream = 0.0  # heat picked up by the air before device j's centre
            for e in self.devices:
                frac = min(max((d.center_y - (e.center_y - e.size_y / 2)) / e.size_y, 0.0), 1.0)
                upstream += frac * e.power
            tj.append(self.t_in + upstream / mcp + rise[j]
                      + d.power * (d.r_jc + self.r_case_base[j]))
        worst = min(d.tj_max - x for d, x in zip(self.devices, tj))
        b = (W - N * t) / (N - 1)
        overhang = max(0.0, *(max(d.center_x + d.size_x / 2 - W, d.center_y + d.size_y / 2 - L)
                              for d in self.devices))
        constraints = [
            lim.min_junction_margin_K - worst,
            proc.min_gap_m - b,
            proc.min_fin_thickness_m - t,
            H / b - proc.max_fin_aspect,
            proc.min_base_thickness_m - tb,
            overhang,
        ]
        feasible = all(v <= 0 for v in constraints) and (lim.allow_stall or not stall)
        return ScalarResult(True, False, stall, Q, fan.pressure(q, s, r), power, noise, r_hs,
                            tuple(tj), worst, volume, feasible, q_free)

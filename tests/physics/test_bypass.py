"""Lossless-bypass model against the worked check of docs/theory.md#flow-bypass."""
import numpy as np
import pytest

from sinkopt.model.design import SinkGeometry
from sinkopt.physics.air import AirProperties
from sinkopt.physics.bypass import flow_fraction_lossless_bypass
from sinkopt.physics.heatsink import sink_hydraulics, sink_thermal

AIR = AirProperties(1.184318, 1.844808e-5, 0.026247, 1006.308, 298.15, 101325.0)  # CoolProp, 25 °C
G = SinkGeometry.of(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001, n_fins=20,
                    base_thickness=0.005)


def sink_dp(q):
    return sink_hydraulics(G.width, G.length, G.fin_height, G.fin_thickness, G.n_fins, q, AIR).pressure_drop


def test_bypass_check_values():
    # docs/theory.md#flow-bypass [N]: REF-1 fins in a 60 x 35 mm duct at 3 m/s (Q = 6.3e-3 m^3/s,
    # A_f = 7.5e-4, A_b = 8.5e-4): V_f = 2.27482 m/s, V_b = 5.40457 m/s, fin flow fraction
    # 0.27081, dp_hs = 14.2323 Pa, R_hs = 0.625309 K/W.
    q = 6.3e-3
    x = flow_fraction_lossless_bypass(sink_dp, G, q, 0.060 * 0.035, AIR.density)[0]
    assert x == pytest.approx(0.27081, abs=1e-5)
    v_f, v_b = x * q / 7.5e-4, (1 - x) * q / 8.5e-4
    assert v_f == pytest.approx(2.27482, rel=1e-5)
    assert v_b == pytest.approx(5.40457, rel=1e-5)
    assert sink_dp(x * q)[0] == pytest.approx(14.2323, rel=1e-5)
    th = sink_thermal(G.width, G.length, G.fin_height, G.fin_thickness, G.n_fins, x * q, AIR, 200.0)
    assert th.resistance[0] == pytest.approx(0.625309, rel=1e-5)
    # The two streams re-merge at equal static pressure (the model's energy equation).
    assert sink_dp(x * q)[0] == pytest.approx(0.5 * AIR.density * (v_b**2 - v_f**2), rel=1e-9)


def test_bypass_reduces_to_ducted_when_the_duct_fits_the_fins():
    q = np.array([2e-3, 6e-3])
    assert np.all(flow_fraction_lossless_bypass(sink_dp, G, q, 0.05 * 0.025, AIR.density) == 1.0)
    # A tiny bypass area leaves almost all the flow in the fins.
    x = flow_fraction_lossless_bypass(sink_dp, G, q, 0.05 * 0.025 + 1e-6, AIR.density)
    assert np.all(x > 0.95)


def test_more_bypass_area_less_fin_flow():
    areas = [1.5e-3, 2.1e-3, 4e-3, 1e-2]
    xs = [flow_fraction_lossless_bypass(sink_dp, G, 6.3e-3, a, AIR.density)[0] for a in areas]
    assert all(a > b for a, b in zip(xs, xs[1:]))

"""Tests of sinkopt.physics.stack: hand calculations (arithmetic written out), limits, shapes.

Formulas used by hand: Fourier's law for a plane layer, R = t/(k A); parallel paths add
conductances, series layers add resistances; annulus area pi*(r_o^2 - r_i^2) = pi*p*(d - p) for
outer diameter d and wall p. Material values are the module defaults (copper 385, FR-4 0.3
W/(m K): common practice, no source). REF-1 numbers are from docs/theory.md#ref-1-golden-case [N].
"""
import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from sinkopt.physics.stack import (
    resistance_interface,
    resistance_slab,
    resistance_stack,
    resistance_via_array,
)


def test_slab_hand_calculation():
    # Fourier's law: 2 mm copper (k = 385) over 10 x 10 mm:
    # R = 0.002 / (385 * 1e-4) = 0.002 / 0.0385 = 0.051948052 K/W
    assert resistance_slab(0.002, 385.0, 1e-4) == pytest.approx(0.051948052, rel=1e-9)
    # docs/theory.md#ref-1-golden-case, REF-1 base 1-D: 0.005/(200 * 0.0025) = 0.010 K/W
    assert resistance_slab(0.005, 200.0, 0.0025) == pytest.approx(0.010, rel=1e-12)


def test_interface_hand_calculation():
    # docs/theory.md#ref-1-golden-case, REF-1 TIM: 0.1 K cm^2/W = 0.1e-4 K m^2/W over 4 cm^2 = 4e-4 m^2
    # R = 0.1e-4 / 4e-4 = 0.025 K/W
    assert resistance_interface(0.1e-4, 4e-4) == pytest.approx(0.025, rel=1e-12)


def test_stack_ref1_junction_total():
    # docs/theory.md#ref-1-golden-case, REF-1: R_total = R_jc 0.30 + TIM 0.025 + base 1-D 0.010 + R_s(series)
    # 0.090111 + R_hs 0.369348 = 0.794459 K/W, T_j = 25 + 50 * 0.794459 = 64.7230 degC.
    layers = [0.30, resistance_interface(0.1e-4, 4e-4), resistance_slab(0.005, 200.0, 0.0025),
              0.090111, 0.369348]
    total = resistance_stack(layers)
    assert total == pytest.approx(0.794459, rel=1e-6)
    assert 25.0 + 50.0 * total == pytest.approx(64.7230, rel=1e-6)


def test_via_array_hand_calculation():
    # 16 vias, drill d = 0.3 mm, plating p = 25 um, board t = 1.6 mm, pad 5 x 5 mm = 25e-6 m^2.
    # Barrel annulus: A_v = pi*p*(d - p) = pi * 25e-6 * 275e-6 = 2.1598449e-8 m^2
    #   (same as pi/4*(d^2 - (d - 2p)^2) = pi/4 * (9e-8 - 6.25e-8) = pi/4 * 2.75e-8).
    # One via: G = k A_v / t = 385 * 2.1598449e-8 / 1.6e-3 = 5.1971269e-3 W/K (R = 192.414 K/W).
    # 16 vias: G_v = 16 * 5.1971269e-3 = 8.3154031e-2 W/K.
    # Laminate: A_lam = 25e-6 - 16 * pi * (0.3e-3)^2 / 4 = 25e-6 - 16 * 7.0685835e-8
    #         = 2.3869027e-5 m^2; G_b = 0.3 * 2.3869027e-5 / 1.6e-3 = 4.4754425e-3 W/K.
    # R = 1 / (8.3154031e-2 + 4.4754425e-3) = 1 / 8.7629473e-2 = 11.411686 K/W.
    got = resistance_via_array(16, 0.3e-3, 25e-6, 1.6e-3, 25e-6)
    assert got == pytest.approx(11.411686, rel=1e-6)
    # A single via is about 192 K/W; a common rule of thumb says "~100-200 K/W per via"
    # (from memory, no source) - consistent.
    one = resistance_via_array(1, 0.3e-3, 25e-6, 1.6e-3, math.pi * 0.3e-3**2 / 4)
    assert one == pytest.approx(192.414004, rel=1e-6)


def test_via_array_zero_vias_is_laminate_only():
    # No vias: R = t/(k_b A_pad) = 1.6e-3 / (0.3 * 25e-6) = 1.6e-3 / 7.5e-6 = 213.3333 K/W
    got = resistance_via_array(0, 0.3e-3, 25e-6, 1.6e-3, 25e-6)
    assert got == pytest.approx(640.0 / 3.0, rel=1e-12)  # 213.3333...
    assert got == pytest.approx(resistance_slab(1.6e-3, 0.3, 25e-6), rel=1e-12)


def test_via_array_full_plating_is_solid_copper_cylinders():
    # p = d/2: annulus -> disc pi d^2/4. 16 solid copper pins, d = 0.3 mm:
    # G_cu = 16 * 385 * 7.0685835e-8 / 1.6e-3 = 0.27214046 W/K; laminate as above 4.4754425e-3.
    # R = 1 / 0.27661590 = 3.6151211 K/W
    got = resistance_via_array(16, 0.3e-3, 0.15e-3, 1.6e-3, 25e-6)
    assert got == pytest.approx(3.6151211, rel=1e-7)
    pins = resistance_slab(1.6e-3, 385.0, 16 * math.pi * 0.3e-3**2 / 4)
    laminate = resistance_slab(1.6e-3, 0.3, 25e-6 - 16 * math.pi * 0.3e-3**2 / 4)
    assert got == pytest.approx(1 / (1 / pins + 1 / laminate), rel=1e-12)


def test_via_array_impossible_geometry_is_nan():
    # 400 holes of 0.3 mm need 400 * 7.07e-8 = 2.83e-5 m^2 > 25e-6 m^2 pad.
    assert np.isnan(resistance_via_array(400, 0.3e-3, 25e-6, 1.6e-3, 25e-6))
    # plating thicker than the radius
    assert np.isnan(resistance_via_array(4, 0.3e-3, 0.2e-3, 1.6e-3, 25e-6))


def test_via_array_material_overrides():
    # Same 16-via case with plated copper k = 300 and a higher-k laminate 1.0:
    # G_v = 16 * 300 * 2.1598449e-8 / 1.6e-3 = 6.4795348e-2; G_b = 1.0 * 2.3869027e-5 / 1.6e-3
    # = 1.4918142e-2; R = 1 / 7.9713490e-2 = 12.544928 K/W
    got = resistance_via_array(16, 0.3e-3, 25e-6, 1.6e-3, 25e-6,
                               copper_conductivity=300.0, board_conductivity=1.0)
    assert got == pytest.approx(12.544928, rel=1e-6)


def test_vectorised_inputs_match_scalars():
    counts = np.array([0, 4, 16, 36])
    batch = resistance_via_array(counts, 0.3e-3, 25e-6, 1.6e-3, 25e-6)
    assert batch.shape == (4,)
    for i, n in enumerate(counts):
        assert batch[i] == pytest.approx(resistance_via_array(int(n), 0.3e-3, 25e-6, 1.6e-3,
                                                              25e-6), rel=1e-14)
    assert np.all(np.diff(batch) < 0)  # more vias, lower resistance
    thick = np.array([0.001, 0.002, 0.004])
    np.testing.assert_allclose(resistance_slab(thick, 200.0, 1e-4), thick / (200.0 * 1e-4),
                               rtol=1e-14)
    np.testing.assert_allclose(resistance_interface([1e-5, 2e-5], 4e-4), [0.025, 0.05],
                               rtol=1e-14)
    assert isinstance(resistance_slab(0.001, 200.0, 1e-4), np.floating)


def test_stack_broadcasts_layers():
    per_design = np.array([0.1, 0.2, 0.3])
    total = resistance_stack([0.30, per_design, np.float64(0.025)])
    np.testing.assert_allclose(total, [0.425, 0.525, 0.625], rtol=1e-14)
    assert resistance_stack([]) == 0.0
    assert isinstance(resistance_stack([0.1, 0.2]), np.floating)


@settings(max_examples=50, deadline=None)
@given(n=st.integers(0, 50), d=st.floats(0.2e-3, 0.6e-3), wall=st.floats(0.05, 0.5),
       t=st.floats(0.4e-3, 3.2e-3))
def test_via_array_between_laminate_and_solid_copper(n, d, wall, t):
    # Any plating lies between the two limits: laminate only (upper) and solid pins (lower).
    pad = 1e-4
    got = resistance_via_array(n, d, wall * d, t, pad)
    assert np.isfinite(got) and got > 0
    assert got <= resistance_via_array(0, d, wall * d, t, pad) * (1 + 1e-12)
    assert got >= resistance_via_array(n, d, d / 2, t, pad) * (1 - 1e-12)

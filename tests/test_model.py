"""The model layer: batch evaluation, property-based checks over the design space, geometry
errors, scalar/array agreement."""
import numpy as np
import pytest
from hypothesis import assume, given, settings
from hypothesis import strategies as st

from sinkopt.model.design import (Conditions, Device, ModelOptions, MountingStack, SinkGeometry,
                            check_geometry)
from sinkopt.errors import GeometryError
from sinkopt.model.known_flow import evaluate

GREASE = MountingStack("grease", (), "grease", 0.1e-4, 4e-4)


def one_device(x=0.025, y=0.025, power=50.0):
    return Device("Q1", power, 150.0, 0.30, x, y, 0.02, 0.02, (GREASE,))


def ref1(**over):
    base = dict(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001, n_fins=20,
                base_thickness=0.005)
    base.update(over)
    return SinkGeometry.of(**base)


def test_ref1_junction_temperature_through_the_model():
    # docs/theory.md#ref-1-golden-case REF-1: T_j = 64.7230 °C with CoolProp air; the model uses its in-tool air
    # properties (within 1.5 %, docs/theory.md#air-properties), so 0.5 % on the 39.7 K rise, lumped air heating.
    ev = evaluate(ref1(), 0.005, [one_device()], 200.0, 2700.0, Conditions(25.0),
                  ModelOptions(spreading="exact", air_heating="lumped"))
    assert ev.junction_C[0, 0] - 25 == pytest.approx(64.7230 - 25, rel=5e-3)
    assert ev.pressure_drop[0] == pytest.approx(65.6113, rel=5e-3)


def test_downstream_device_sees_warmer_air():
    # Two equal devices in line along the flow: the downstream one sees the upstream one's heat
    # (energy balance: its local air is warmer by Q/(m cp)).
    devs = [Device("up", 30.0, 150, 0.3, 0.025, 0.012, 0.015, 0.015, (GREASE,)),
            Device("down", 30.0, 150, 0.3, 0.025, 0.038, 0.015, 0.015, (GREASE,))]
    ev = evaluate(ref1(), 0.003, devs, 200.0, 2700.0, Conditions(25.0), ModelOptions(spreading="exact"))
    mcp = ev.air_density[0] * 0.003 * 1006.0
    assert ev.air_local_rise[0, 1] - ev.air_local_rise[0, 0] == pytest.approx(30.0 / mcp, rel=1e-9)
    assert ev.junction_C[0, 1] > ev.junction_C[0, 0]
    # Energy balance: the outlet air carries all the heat.
    assert ev.air_rise[0] == pytest.approx(60.0 / mcp, rel=1e-9)


def test_geometry_that_cannot_exist_raises_one_clear_error():
    with pytest.raises(GeometryError, match=r"design\[0\]\.n_fins: the fins must fit on the base"):
        check_geometry(ref1(n_fins=30, fin_thickness=0.002))
    with pytest.raises(GeometryError, match=r"`n_fins` must be a whole number >= 2"):
        check_geometry(ref1(n_fins=0))
    with pytest.raises(GeometryError, match=r"design\[0\]\.fin_thickness: `fin_thickness > 0`"):
        check_geometry(ref1(fin_thickness=-0.001))
    with pytest.raises(GeometryError, match=r"device 'Q1'\.center_x: device footprint must lie on the base"):
        check_geometry(ref1(), [one_device(x=0.045)])
    check_geometry(ref1(), [one_device()])  # a valid one passes


def test_scalar_and_array_inputs_give_the_same_numbers():
    flows = np.array([0.002, 0.005, 0.01])
    g = SinkGeometry.of(width=0.05, length=0.05, fin_height=0.025, fin_thickness=0.001,
                        n_fins=np.array([10, 20, 25]), base_thickness=0.005)
    batch = evaluate(g, flows, [one_device()], 200.0, 2700.0, Conditions(25.0))
    for i in range(3):
        one = evaluate(g.take([i]), flows[i], [one_device()], 200.0, 2700.0, Conditions(25.0))
        assert one.junction_C[0, 0] == pytest.approx(batch.junction_C[i, 0], rel=1e-12)
        assert one.pressure_drop[0] == pytest.approx(batch.pressure_drop[i], rel=1e-12)


# The valid design space of the property tests: sizes an extruded or bonded sink might have.
geometries = st.fixed_dictionaries({
    "width": st.floats(0.03, 0.2), "length": st.floats(0.03, 0.2),
    "fin_height": st.floats(0.005, 0.08), "fin_thickness": st.floats(0.0004, 0.004),
    "n_fins": st.integers(3, 40), "base_thickness": st.floats(0.002, 0.015),
}).filter(lambda d: (d["width"] - d["n_fins"] * d["fin_thickness"]) / (d["n_fins"] - 1) > 0.0005)


@settings(max_examples=150, deadline=None)
@given(geom=geometries, flow=st.floats(1e-4, 0.05), k=st.sampled_from([96.0, 205.0, 390.0]),
       ambient=st.floats(-20.0, 60.0), altitude=st.floats(0.0, 4000.0))
def test_properties_over_the_design_space(geom, flow, k, ambient, altitude):
    g = SinkGeometry.of(**geom)
    dev = one_device(x=geom["width"] / 2, y=geom["length"] / 2, power=20.0)
    dev = Device("Q1", 20.0, 150, 0.3, geom["width"] / 2, geom["length"] / 2,
                 min(0.01, geom["width"]), min(0.01, geom["length"]), (GREASE,))
    cond = Conditions(ambient, altitude)
    flows = np.array([flow, flow * 1.3])
    gg = SinkGeometry.of(**{f: np.repeat(getattr(g, f), 2) for f in g.__dataclass_fields__})
    ev = evaluate(gg, flows, [dev], k, 2700.0, cond)
    for arr in (ev.r_sink, ev.pressure_drop, ev.junction_C, ev.base_rise, ev.r_convective):
        assert np.all(np.isfinite(arr))
    assert np.all(ev.r_sink > 0) and np.all(ev.r_convective > 0) and np.all(ev.base_rise > 0)
    # More airflow: lower sink resistance, higher pressure drop.
    assert ev.r_sink[1] < ev.r_sink[0]
    assert ev.pressure_drop[1] > ev.pressure_drop[0]
    assert ev.junction_C[0, 0] > ambient


@settings(max_examples=60, deadline=None)
@given(geom=geometries, flow=st.floats(5e-4, 0.03))
def test_two_sources_far_apart_run_cooler_than_side_by_side(geom, flow):
    # Equal powers (helper finding: with unequal powers the weaker source may run hotter apart).
    w, l = geom["width"], geom["length"]
    size = 0.2 * min(w, l)
    assume(w > 4 * size)  # otherwise "far apart" is not farther than side by side
    g = SinkGeometry.of(**geom)

    def devices(x1, x2):
        return [Device(n, 15.0, 150, 0.3, x, l / 2, size, size, (GREASE,))
                for n, x in (("a", x1), ("b", x2))]

    near = evaluate(g, flow, devices(w / 2 - size / 2, w / 2 + size / 2), 205.0, 2700.0,
                    Conditions(25.0), ModelOptions(spreading="exact", series_terms=100))
    # "Far apart" = each at the centre of its half of the base. (Not at the edges: an adiabatic
    # edge mirrors a source, so two sources at opposite edges equal two side by side, exactly.)
    far = evaluate(g, flow, devices(w / 4, 3 * w / 4), 205.0, 2700.0,
                   Conditions(25.0), ModelOptions(spreading="exact", series_terms=100))
    assert far.junction_C.max() < near.junction_C.max()


def test_thicker_base_lowers_spreading_of_a_small_source():
    # A 10 x 10 mm source on a 100 x 100 mm base: thickening from 2 to 8 mm lowers its
    # temperature (the base spreads heat; Bi small, see tests/physics/test_spreading.py).
    dev = Device("Q1", 20.0, 150, 0.3, 0.05, 0.05, 0.01, 0.01, (GREASE,))
    temps = []
    for tb in (0.002, 0.004, 0.008):
        g = SinkGeometry.of(width=0.1, length=0.1, fin_height=0.03, fin_thickness=0.0015,
                            n_fins=20, base_thickness=tb)
        temps.append(evaluate(g, 0.01, [dev], 205.0, 2700.0, Conditions(25.0),
                              ModelOptions(spreading="exact")).junction_C[0, 0])
    assert temps[0] > temps[1] > temps[2]


def test_out_of_range_correlations_are_reported():
    # A very slow flow puts Re_b* below Teertstra's 0.1 (range from memory): reported.
    ev = evaluate(ref1(), 1e-6, [one_device()], 200.0, 2700.0, Conditions(25.0))
    assert ev.out_of_range["nu_plate_fin_teertstra_2000"][0]
    assert any("nu_plate_fin_teertstra_2000" in w for w in ev.warnings(0))
    ok = evaluate(ref1(), 0.005, [one_device()], 200.0, 2700.0, Conditions(25.0))
    assert ok.warnings(0) == []


def test_coarse_series_is_close_to_exact():
    devs = [Device(f"Q{i}", 20.0, 150, 0.3, 0.015 + 0.03 * i, 0.03, 0.016, 0.02, (GREASE,))
            for i in range(3)]
    g = SinkGeometry.of(width=0.1, length=0.08, fin_height=0.03, fin_thickness=0.0015,
                        n_fins=18, base_thickness=0.005)
    coarse = evaluate(g, 0.01, devs, 205.0, 2700.0, Conditions(40.0), ModelOptions(spreading="coarse"))
    exact = evaluate(g, 0.01, devs, 205.0, 2700.0, Conditions(40.0), ModelOptions(spreading="exact"))
    np.testing.assert_allclose(coarse.junction_C, exact.junction_C, atol=0.3)

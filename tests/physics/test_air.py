"""Air properties and the standard atmosphere against CoolProp and fluids (docs/theory.md#air-properties)."""
import numpy as np
import pytest

from sinkopt.physics import air

CoolProp = pytest.importorskip("CoolProp.CoolProp")
fluids_atm = pytest.importorskip("fluids.atmosphere")

TEMPS_C = [0.0, 20.0, 25.0, 40.0, 60.0, 80.0]


@pytest.mark.parametrize("t_c", TEMPS_C)
@pytest.mark.parametrize("p", [101325.0, 70121.162])
def test_in_tool_air_model_against_coolprop(t_c, p):
    # Oracle: CoolProp PropsSI 'Air' (Lemmon et al. 2000 EOS, Lemmon & Jacobsen 2004 transport).
    # Tolerances are the in-tool model's measured error band, docs/theory.md#air-properties: rho 0.1 %, mu 1 %,
    # k 1.5 %, cp 0.5 %.
    t = t_c + 273.15
    props = air.air_properties(t, p)
    ref = {q: CoolProp.PropsSI(q, "T", t, "P", p, "Air") for q in ("D", "V", "L", "C")}
    assert props.density == pytest.approx(ref["D"], rel=1e-3)
    assert props.viscosity == pytest.approx(ref["V"], rel=1e-2)
    assert props.conductivity == pytest.approx(ref["L"], rel=1.5e-2)
    assert props.heat_capacity == pytest.approx(ref["C"], rel=5e-3)


def test_coolprop_table_of_physics_note():
    # docs/theory.md#air-properties table, 25 °C / 101325 Pa (CoolProp 8.0.0): keeps the oracle itself honest.
    assert CoolProp.PropsSI("D", "T", 298.15, "P", 101325, "Air") == pytest.approx(1.184318, rel=1e-5)
    assert CoolProp.PropsSI("V", "T", 298.15, "P", 101325, "Air") == pytest.approx(1.844808e-5, rel=1e-5)


@pytest.mark.parametrize("z", [0.0, 500.0, 1000.0, 2000.0, 3000.0, 4500.0, 11000.0, 15000.0, 25000.0])
def test_pressure_against_fluids_atmosphere_1976(z):
    # Oracle: fluids.atmosphere.ATMOSPHERE_1976 (U.S. Standard Atmosphere 1976).
    assert air.pressure_standard_atmosphere_1976(z) == pytest.approx(fluids_atm.ATMOSPHERE_1976(z).P, rel=1e-9)


def test_standard_atmosphere_table():
    # docs/theory.md#air-properties [O]: P at 1000 / 2000 / 3000 m = 89876.285 / 79501.425 / 70121.162 Pa.
    got = air.pressure_standard_atmosphere_1976(np.array([1000.0, 2000.0, 3000.0]))
    np.testing.assert_allclose(got, [89876.285, 79501.425, 70121.162], rtol=1e-7)
    # Density at the standard's own temperature: fluids gives 1.1116590 kg/m^3 at 1000 m.
    rho = air.air_density_ideal_gas(281.65102, got[0])
    assert rho == pytest.approx(1.1116590, rel=2e-4)


def test_scalar_and_array_agree():
    ts = np.array([273.15, 298.15, 333.15])
    arr = air.air_properties(ts, 101325.0)
    for i, t in enumerate(ts):
        one = air.air_properties(float(t), 101325.0)
        assert np.ndim(one.viscosity) == 0
        assert one.viscosity == arr.viscosity[i]
        assert one.density == arr.density[i]

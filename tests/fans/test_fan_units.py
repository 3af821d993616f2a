"""Unit factors against their exact definitions, and column-name parsing."""
from __future__ import annotations

from fractions import Fraction as F

import numpy as np
import pytest

from sinkopt.fans import parse_fan_curve
from sinkopt.fans.units import (FLOW_UNITS, PRESSURE_UNITS, flow_unit, lookup_unit, parse_column,
                                pressure_unit)

# Exact definitions, in exact rational arithmetic:
FOOT = F("0.3048")  # international foot, exact (international yard and pound agreement, 1959)
INCH = F("0.0254")  # international inch, exact (same agreement)
G_N = F("9.80665")  # standard gravity, exact (3rd CGPM, 1901)
RHO_W = F(1000)  # conventional water density of "water gauge" units [kg/m3]


def test_cfm_is_cubic_foot_per_minute_exactly():
    # 1 cfm = 0.3048^3 m3 / 60 s = 4.719474432e-4 m3/s exactly (international foot, 1959)
    exact = FOOT**3 / 60
    assert exact == F("4.719474432e-4")
    assert flow_unit("cfm").factor == float(exact)
    assert flow_unit("ft3/min").factor == float(exact)


def test_inch_of_water_conventional_exactly():
    # 1 inH2O = 25.4 mm * 9.80665 m/s2 * 1000 kg/m3 = 249.08891 Pa exactly (conventional)
    exact = INCH * G_N * RHO_W
    assert exact == F("249.08891")
    for alias in ("inH2O", "in H2O", "inWG", "in. W.G.", "inAq"):
        assert pressure_unit(alias).factor == float(exact)


def test_mm_of_water_exactly():
    # 1 mmH2O = 1 mm * 9.80665 m/s2 * 1000 kg/m3 = 9.80665 Pa exactly
    exact = F(1, 1000) * G_N * RHO_W
    assert exact == G_N
    for alias in ("mmH2O", "mmAq", "mm H2O", "mmWG"):
        assert pressure_unit(alias).factor == float(exact)


@pytest.mark.parametrize("unit, exact", [
    # SI definitions: 1 min = 60 s, 1 h = 3600 s, 1 l = 1e-3 m3 (CGPM 1964), 1 kPa = 1000 Pa
    ("m3/s", F(1)), ("m3/min", F(1, 60)), ("m3/h", F(1, 3600)), ("l/s", F(1, 1000)),
    ("l/min", F(1, 60000)), ("m³/h", F(1, 3600)), ("m^3/min", F(1, 60)), ("L/min", F(1, 60000)),
    ("m3_h", F(1, 3600)), ("CFM", FOOT**3 / 60),
])
def test_flow_factors(unit, exact):
    assert flow_unit(unit).factor == float(exact)


@pytest.mark.parametrize("unit, exact", [("Pa", F(1)), ("kPa", F(1000)), ("PA", F(1))])
def test_pressure_factors(unit, exact):
    assert pressure_unit(unit).factor == float(exact)


def test_tables_hold_only_known_units():
    names = [u.name for u in FLOW_UNITS.values()]
    assert names == ["m3/s", "m3/min", "m3/h", "l/s", "l/min", "cfm"]
    assert [u.name for u in PRESSURE_UNITS.values()] == ["Pa", "kPa", "inH2O", "mmH2O"]


@pytest.mark.parametrize("text", ["ft3min", "cfh", "gpm", "m3", "scfm", "psi", "bar", "inHg", ""])
def test_unknown_units_are_not_guessed(text):
    assert lookup_unit("flow", text) is None
    assert lookup_unit("pressure", text) is None
    with pytest.raises(KeyError, match="unknown flow unit"):
        flow_unit(text)


@pytest.mark.parametrize("name, expected", [
    ("flow_cfm", ("flow", "cfm")),
    ("flow_m3_h", ("flow", "m3_h")),
    ("Flow [m³/h]", ("flow", "m³/h")),
    ("flow (l/s)", ("flow", "l/s")),
    ("Airflow [CFM]", ("flow", "CFM")),
    ("pressure_inH2O", ("pressure", "inH2O")),
    ("Static pressure (mmAq)", ("pressure", "mmAq")),
    ("static_pressure_Pa", ("pressure", "Pa")),
    ("power_W", ("power", "W")),
    ("flow", ("flow", "")),
    ("pressure []", ("pressure", "")),
    ("current_A", None),
    ("noise_dBA", None),
])
def test_parse_column(name, expected):
    assert parse_column(name) == expected


def test_values_converted_to_si_on_load():
    text = "flow_cfm,pressure_inH2O\n0,1\n1,0.5\n2,0\n"
    fan = parse_fan_curve(text, "u.csv")
    # 1 cfm -> 0.3048^3/60 m3/s; 1 inH2O -> 249.08891 Pa (exact definitions above)
    cfm = FOOT**3 / 60
    np.testing.assert_array_equal(fan.flow_m3_s, [0.0, float(cfm), float(2 * cfm)])
    np.testing.assert_array_equal(fan.pressure_Pa, [float(INCH * G_N * RHO_W),
                                                   float(INCH * G_N * RHO_W / 2), 0.0])
    text = "Flow [m3/min],Pressure [mmH2O]\n0,10\n0.6,5\n1.2,0\n"
    fan = parse_fan_curve(text, "u.csv")
    np.testing.assert_allclose(fan.flow_m3_s, [0.0, 0.01, 0.02], rtol=1e-15)  # 1 min = 60 s
    np.testing.assert_allclose(fan.pressure_Pa, [98.0665, 49.03325, 0.0], rtol=1e-15)

"""Flow, pressure and power units of fan-curve files, with exact factors to SI.

Every factor is an exact definition (no rounding), so a converted value is as good as the file:

- international foot = 0.3048 m exactly (international yard and pound agreement, 1959), hence
  1 cfm = 0.3048³ m³ / 60 s = 4.719474432e-4 m³/s;
- inch of water, conventional = 25.4 mm × g_n × 1000 kg/m³ with g_n = 9.80665 m/s² (3rd CGPM, 1901),
  hence 1 inH2O = 249.08891 Pa; millimetre of water = 9.80665 Pa.

A unit that is not in these tables is an error: units are never guessed.

>>> flow_unit("m³/h").factor * 3600
1.0
>>> pressure_unit("in. W.G.").name, pressure_unit("in. W.G.").factor
('inH2O', 249.08891)
>>> parse_column("Flow [CFM]")
('flow', 'CFM')
>>> parse_column("pressure_Pa")
('pressure', 'Pa')
"""
from __future__ import annotations

import re
from typing import NamedTuple

__all__ = [
    "Unit",
    "FOOT_m",
    "INCH_m",
    "G_N_m_s2",
    "RHO_WATER_CONVENTIONAL_kg_m3",
    "FLOW_UNITS",
    "PRESSURE_UNITS",
    "POWER_UNITS",
    "QUANTITY_UNITS",
    "normalise_unit",
    "flow_unit",
    "pressure_unit",
    "power_unit",
    "lookup_unit",
    "parse_column",
    "unit_choices",
]

FOOT_m = 0.3048  # international foot, exact by definition (1959)
INCH_m = 0.0254  # international inch, exact by definition (1959)
G_N_m_s2 = 9.80665  # standard acceleration of gravity, exact (3rd CGPM 1901)
RHO_WATER_CONVENTIONAL_kg_m3 = 1000.0  # conventional water density used for "water gauge"


class Unit(NamedTuple):
    """A unit: canonical display name and the factor that converts it to SI (value_SI = v·factor)."""

    name: str
    factor: float


# The products below are written out as decimal literals: computing them in floating point
# (e.g. 0.0254*9.80665*1000 = 249.08890999999997) would lose the last bit of an exact value.
# tests/fans/test_units.py re-derives each one in exact rational arithmetic.
_CFM = Unit("cfm", 4.719474432e-4)  # [m3/s] per ft3/min = 0.3048**3 / 60 exactly
_IN_H2O = Unit("inH2O", 249.08891)  # [Pa] = 0.0254 m * 9.80665 m/s2 * 1000 kg/m3 exactly
_MM_H2O = Unit("mmH2O", 9.80665)  # [Pa] = 0.001 m * 9.80665 m/s2 * 1000 kg/m3 exactly

# Canonical units first; aliases map (after normalise_unit) onto them.
FLOW_UNITS: dict[str, Unit] = {
    "m3/s": Unit("m3/s", 1.0),
    "m3/min": Unit("m3/min", 1.0 / 60.0),
    "m3/h": Unit("m3/h", 1.0 / 3600.0),
    "l/s": Unit("l/s", 1e-3),
    "l/min": Unit("l/min", 1e-3 / 60.0),
    "cfm": _CFM,
}
_FLOW_ALIASES = {
    "m3_s": "m3/s", "m3/sec": "m3/s", "cms": "m3/s",
    "m3_min": "m3/min", "cmm": "m3/min",
    "m3_h": "m3/h", "m3/hr": "m3/h", "cmh": "m3/h",
    "l_s": "l/s", "lps": "l/s",
    "l_min": "l/min", "lpm": "l/min",
    "ft3/min": "cfm", "ft3_min": "cfm",
}
PRESSURE_UNITS: dict[str, Unit] = {
    "pa": Unit("Pa", 1.0),
    "kpa": Unit("kPa", 1e3),
    "inh2o": _IN_H2O,
    "mmh2o": _MM_H2O,
}
_PRESSURE_ALIASES = {
    "inwg": "inh2o", "inaq": "inh2o", "inwc": "inh2o", "in_h2o": "inh2o",
    "mmaq": "mmh2o", "mmwg": "mmh2o", "mmwc": "mmh2o", "mm_h2o": "mmh2o",
}
POWER_UNITS: dict[str, Unit] = {"w": Unit("W", 1.0), "mw": Unit("mW", 1e-3)}

QUANTITY_UNITS = {"flow": FLOW_UNITS, "pressure": PRESSURE_UNITS, "power": POWER_UNITS}
_ALIASES = {"flow": _FLOW_ALIASES, "pressure": _PRESSURE_ALIASES, "power": {}}

# Column names: "<quantity>_<unit>", "<quantity> [<unit>]" or "<quantity> (<unit>)".
_QUANTITY_WORDS = {
    "flow": "flow", "airflow": "flow", "air flow": "flow", "air_flow": "flow",
    "volume flow": "flow", "volume_flow": "flow",
    "pressure": "pressure", "static pressure": "pressure", "static_pressure": "pressure",
    "power": "power", "electrical power": "power", "electrical_power": "power",
}
_COLUMN_RE = re.compile(
    r"^\s*(?P<q>" + "|".join(sorted((re.escape(w) for w in _QUANTITY_WORDS), key=len, reverse=True))
    + r")\s*(?:(?:_|\[|\()\s*(?P<u>[^\])]*?)\s*[\])]?)?\s*$",
    re.IGNORECASE,
)


def normalise_unit(text: str) -> str:
    """Lower-case a unit and drop decoration: spaces, dots, ``^``, ``**``; ``³`` becomes ``3``.

    >>> normalise_unit(" M^3/H ")
    'm3/h'
    >>> normalise_unit("in. W.G.")
    'inwg'
    """
    s = text.strip().lower().replace("³", "3").replace("**", "").replace("^", "")
    return s.replace(" ", "").replace(".", "")


def unit_choices(quantity: str) -> str:
    """Canonical unit names of ``quantity`` ('flow', 'pressure', 'power') as a readable list."""
    return ", ".join(u.name for u in QUANTITY_UNITS[quantity].values())


def lookup_unit(quantity: str, text: str) -> Unit | None:
    """The :class:`Unit` of ``quantity`` spelled ``text``, or None if unknown."""
    key = normalise_unit(text)
    table = QUANTITY_UNITS[quantity]
    key = _ALIASES[quantity].get(key, key)
    return table.get(key)


def _checked(quantity: str, text: str) -> Unit:
    unit = lookup_unit(quantity, text)
    if unit is None:
        raise KeyError(f"unknown {quantity} unit {text!r}; use one of {unit_choices(quantity)}")
    return unit


def flow_unit(text: str) -> Unit:
    """Flow unit named ``text`` (factor to [m3/s]); KeyError listing the choices if unknown."""
    return _checked("flow", text)


def pressure_unit(text: str) -> Unit:
    """Pressure unit named ``text`` (factor to [Pa]); KeyError listing the choices if unknown."""
    return _checked("pressure", text)


def power_unit(text: str) -> Unit:
    """Power unit named ``text`` (factor to [W]); KeyError listing the choices if unknown."""
    return _checked("power", text)


def parse_column(name: str) -> tuple[str, str] | None:
    """Split a column name into (quantity, unit text as written).

    Returns None if the column is not a flow, pressure or power column; the unit text is ``''``
    when the column names a quantity but no unit (the caller reports that as an error).

    >>> parse_column("flow")
    ('flow', '')
    >>> parse_column("Static pressure (mmH2O)")
    ('pressure', 'mmH2O')
    >>> parse_column("current_A") is None
    True
    """
    m = _COLUMN_RE.match(name)
    if not m:
        return None
    quantity = _QUANTITY_WORDS[re.sub(r"\s+", " ", m.group("q").lower())]
    return quantity, (m.group("u") or "").strip()

"""The built-in catalogs (materials, interface materials, the invented demo fans).

They ship inside the package (``sinkopt/study/builtin/``) and are read with
:mod:`importlib.resources`, so an installed wheel finds them without the source tree. The
repository's top-level ``catalogs/`` folder is the user-visible copy of the same files (a test
keeps the two identical). Each file is a CSV with ``#`` comment lines on top saying where the
numbers come from.
"""
from __future__ import annotations

import csv
import difflib
from dataclasses import dataclass
from functools import lru_cache
from importlib import resources
from importlib.resources.abc import Traversable

from sinkopt.errors import InputError

__all__ = ["builtin_catalog", "Material", "Interface", "materials", "interfaces", "material",
           "interface"]


def builtin_catalog() -> Traversable:
    """The folder of built-in catalog files inside the installed package."""
    return resources.files("sinkopt.study").joinpath("builtin")


@dataclass(frozen=True)
class Material:
    name: str
    conductivity: float  #: [W/(m K)]
    density: float  #: [kg/m^3]
    note: str = ""
    specific_heat: float = 900.0  #: [J/(kg K)]


@dataclass(frozen=True)
class Interface:
    name: str
    specific_resistance: float  #: [K m^2/W]
    note: str = ""


def _rows(path: Traversable):
    with path.open(encoding="utf-8-sig") as fh:
        lines = [ln for ln in fh if not ln.lstrip().startswith("#") and ln.strip()]
    return list(csv.DictReader(lines))


@lru_cache(maxsize=None)
def materials() -> dict[str, Material]:
    """All sink materials by name."""
    return {r["name"]: Material(r["name"], float(r["conductivity_W_per_mK"]),
                                float(r["density_kg_per_m3"]), r.get("note", ""),
                                float(r.get("specific_heat_J_per_kgK") or 900.0))
            for r in _rows(builtin_catalog() / "materials.csv")}


@lru_cache(maxsize=None)
def interfaces() -> dict[str, Interface]:
    """All interface materials by name (specific resistance converted from K cm^2/W to SI)."""
    return {r["name"]: Interface(r["name"], float(r["specific_resistance_K_cm2_per_W"]) * 1e-4,
                                 r.get("note", ""))
            for r in _rows(builtin_catalog() / "interfaces.csv")}


def _lookup(table: dict, name: str, kind: str, field: str | None):
    try:
        return table[name]
    except KeyError:
        close = difflib.get_close_matches(name, table, n=1)
        hint = f"; did you mean {close[0]!r}?" if close else ""
        raise InputError(f"unknown {kind} {name!r}{hint} (known: {', '.join(sorted(table))})",
                         field=field) from None


def material(name: str, field: str | None = None) -> Material:
    """One material by name; an :class:`InputError` lists the known names otherwise.

    >>> material("cu-c11000").conductivity
    390.0
    """
    return _lookup(materials(), name, "material", field)


def interface(name: str, field: str | None = None) -> Interface:
    """One interface material by name.

    >>> round(interface("grease").specific_resistance, 8)
    1.5e-05
    """
    return _lookup(interfaces(), name, "interface material", field)

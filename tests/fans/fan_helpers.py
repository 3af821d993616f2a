"""Shared helpers of the fan tests: the closed-form quadratic fan of docs/theory.md#fan-operating-point.

(Not named conftest.py: a second conftest module would clash with tests/study/conftest.py
under --doctest-modules.)
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from sinkopt.fans import FanCurve

REPO = Path(__file__).resolve().parents[2]
CATALOG = REPO / "catalogs" / "fans"

# docs/theory.md#fan-operating-point: fan dp = p0 (1 - (Q/Qmax)^2), p0 = 80 Pa, Qmax = 0.010 m3/s; system dp = k Q^2
P0_Pa = 80.0
QMAX_m3_s = 0.010
K_SYS = 4e5  # [Pa s2/m6]


def quadratic_fan(n_points: int = 40, size_mm: float | None = None, **kw) -> FanCurve:
    """The closed-form fan sampled at ``n_points`` equally spaced flows (both axes included)."""
    q = np.linspace(0.0, QMAX_m3_s, n_points)
    return FanCurve(q, P0_Pa * (1.0 - (q / QMAX_m3_s) ** 2), name="quadratic", size_mm=size_mm,
                    **kw)


def write(tmp_path: Path, text: str, name: str = "fan.csv") -> Path:
    """Write ``text`` to ``tmp_path/name`` and return the path."""
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path

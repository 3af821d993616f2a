"""Fans: curve files, the curve model with fan laws, fan arrays, and the operating point.

>>> from sinkopt.fans import FanCurve, FanArray, solve_operating_point
>>> fan = FanCurve([0.0, 0.004, 0.008, 0.010], [80.0, 67.2, 28.8, 0.0])
>>> FanArray(fan, count=2, arrangement="series").running
2

Nothing here imports optuna, pandas or plotly (physics purity rule; tests/fans/test_purity.py).
"""
from __future__ import annotations

from sinkopt.fans.curve import FanArray, FanCurve
from sinkopt.fans.curve_file import FanCurveWarning, load_fan_curve, parse_fan_curve
from sinkopt.fans.operating_point import OperatingPoint, solve_operating_point

__all__ = [
    "FanCurve",
    "FanArray",
    "FanCurveWarning",
    "load_fan_curve",
    "parse_fan_curve",
    "OperatingPoint",
    "solve_operating_point",
]

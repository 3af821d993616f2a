"""Layering rule: sinkopt.fans never imports optuna, pandas or plotly at module level."""
from __future__ import annotations

import subprocess
import sys

CODE = """
import sys
import sinkopt.fans, sinkopt.fans.units, sinkopt.fans.curve, sinkopt.fans.curve_file
import sinkopt.fans.operating_point, sinkopt.cli.fan
heavy = [m for m in ("optuna", "pandas", "plotly") if m in sys.modules]
print(",".join(heavy))
"""


def test_no_heavy_imports():
    out = subprocess.run([sys.executable, "-c", CODE], capture_output=True, text=True, check=True)
    assert out.stdout.strip() == ""

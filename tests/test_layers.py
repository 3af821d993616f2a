"""Layering rule: physics (and the model below the edge) never import optuna, plotly or pandas."""
import subprocess
import sys

import pytest

PURE = ["sinkopt.physics.air", "sinkopt.physics.convection", "sinkopt.physics.fin",
        "sinkopt.physics.geometry", "sinkopt.physics.heatsink", "sinkopt.physics.pressure_drop",
        "sinkopt.physics.spreading", "sinkopt.physics.stack", "sinkopt.physics.bypass",
        "sinkopt.model", "sinkopt.fans"]


@pytest.mark.parametrize("module", PURE)
def test_pure_modules_do_not_import_heavy_libraries(module):
    code = (f"import sys, {module}; bad = [m for m in ('optuna', 'plotly', 'pandas') if m in sys.modules];"
            "print(','.join(bad)); sys.exit(1 if bad else 0)")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert res.returncode == 0, f"{module} imports {res.stdout.strip()}"

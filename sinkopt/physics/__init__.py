"""Pure, vectorised physics: numpy arrays in, arrays out, SI units, no I/O.

Modules here must never import optuna, plotly or pandas (tests/test_layers.py enforces it).
"""

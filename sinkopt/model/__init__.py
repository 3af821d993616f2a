"""The model: a batch of designs (geometry, devices, stacks) evaluated at a known airflow, and the
system with its fans. Imports only :mod:`sinkopt.physics` and :mod:`sinkopt.fans` below it."""

"""sinkopt: choose a plate-fin heatsink and fan for forced-air cooling of power devices."""
from __future__ import annotations

from sinkopt.errors import GeometryError, InputError, SinkoptError

__version__ = "0.1.0"
__all__ = ["__version__", "SinkoptError", "InputError", "GeometryError"]

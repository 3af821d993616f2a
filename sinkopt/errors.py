"""The one error family sinkopt raises for bad input.

Input errors name *where* (file, line, field) and *which rule* was broken, so the command line can
print one clear message and exit 2 without a traceback.
"""
from __future__ import annotations

__all__ = ["SinkoptError", "InputError", "GeometryError", "EXIT_OK", "EXIT_INTERNAL",
           "EXIT_INPUT", "EXIT_INFEASIBLE", "EXIT_INTERRUPTED"]

# Exit codes of every sinkopt command.
EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_INPUT = 2  #: bad input (study file, fan curve, option value)
EXIT_INFEASIBLE = 3  #: the search found no feasible design
EXIT_INTERRUPTED = 130  #: stopped by Ctrl-C / a signal, results saved


class SinkoptError(Exception):
    """Base class of every error sinkopt raises on purpose."""


class InputError(SinkoptError, ValueError):
    """Bad user input: a study file, a fan curve file, a command-line value.

    Parameters
    ----------
    message : str
        The rule that was broken and the offending value.
    source : str, optional
        File name (and line, as ``file:line``) the bad value came from.
    field : str, optional
        Dotted path or column name of the offending field.
    """

    exit_code = EXIT_INPUT

    def __init__(self, message: str, source: str | None = None, field: str | None = None):
        self.message = message
        self.source = source
        self.field = field
        super().__init__(self.__str__())

    def __str__(self) -> str:
        where = ": ".join(p for p in (self.source, self.field) if p)
        return f"{where}: {self.message}" if where else self.message


class GeometryError(InputError):
    """A heatsink geometry that cannot exist (negative gap, fins wider than the base, ...)."""

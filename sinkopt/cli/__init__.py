"""The command line: ``sinkopt <command> ...`` (one module per command group)."""
from sinkopt.cli.main import main

__all__ = ["main"]

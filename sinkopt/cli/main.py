"""Command line: ``sinkopt <command> ...`` (also ``python -m sinkopt``).

Each command lives in its own module under :mod:`sinkopt.cli` and exposes
``register(subparsers)``; heavy libraries are imported inside the command functions so that
``--help`` stays fast.

Exit codes: 0 ok, 1 internal error, 2 bad input, 3 no feasible design, 130 interrupted.
"""
from __future__ import annotations

import argparse
import importlib
import logging
import sys

from sinkopt import __version__
from sinkopt.errors import (EXIT_INFEASIBLE, EXIT_INPUT, EXIT_INTERNAL, EXIT_INTERRUPTED, EXIT_OK,
                            InputError)

__all__ = ["main", "build_parser", "EXIT_OK", "EXIT_INTERNAL", "EXIT_INPUT", "EXIT_INFEASIBLE",
           "EXIT_INTERRUPTED"]


# Modules under sinkopt.cli that provide ``register(subparsers)``.
COMMAND_MODULES = ("fan", "study", "setup", "calibrate", "worker", "report", "pick", "drawing")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="sinkopt",
        description="Choose a plate-fin heatsink and fan so every junction stays below its limit.",
        formatter_class=argparse.RawDescriptionHelpFormatter,
        epilog="example:\n  sinkopt run studies/demo_inverter.toml --trials 300 --seed 1",
    )
    parser.add_argument("--version", action="version", version=f"sinkopt {__version__}")
    parser.add_argument("-v", "--verbose", action="count", default=0,
                        help="more log output (-vv shows tracebacks)")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name in COMMAND_MODULES:
        try:
            module = importlib.import_module(f"sinkopt.cli.{name}")
        except ModuleNotFoundError as exc:  # a command module not written yet
            if exc.name != f"sinkopt.cli.{name}":
                raise
            continue
        module.register(sub)
    return parser


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    logging.basicConfig(level=logging.WARNING - 10 * min(args.verbose, 2),
                        format="%(levelname)s: %(message)s")
    if not getattr(args, "func", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        return int(args.func(args) or EXIT_OK)
    except InputError as exc:
        print(f"sinkopt: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("sinkopt: interrupted", file=sys.stderr)
        return EXIT_INTERRUPTED
    except BrokenPipeError:
        # the reader of our output went away (``sinkopt evaluate --json | head``): not an error
        import os

        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        return EXIT_OK
    except Exception as exc:  # noqa: BLE001 - the last line of defence for a CLI
        if args.verbose >= 2:
            raise
        print(f"sinkopt: internal error: {type(exc).__name__}: {exc} (run with -vv for details)",
              file=sys.stderr)
        return EXIT_INTERNAL

"""The calibration file written by ``sinkopt calibrate`` and read through a study's
``[model] calibration = "FILE"``: TOML holding the fitted multipliers, their 95 % intervals, the
measured points with the model before and after, and where they came from.

The format is ours and versioned (``schema = 1``); only ``[multipliers]`` changes the model, the
rest is the record a design review reads (and the report shows).
"""
from __future__ import annotations

import math
import tomllib
from pathlib import Path

from sinkopt.errors import InputError
from sinkopt.model.calibration import MULTIPLIERS, Calibration

__all__ = ["Calibration", "read_calibration", "calibration_toml", "SCHEMA"]

SCHEMA = 1


def _q(text: str) -> str:
    return '"' + str(text).replace("\\", "\\\\").replace('"', '\\"') + '"'


def _v(x) -> str:
    if isinstance(x, str):
        return _q(x)
    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, int):
        return str(x)
    x = float(x)
    return repr(x) if math.isfinite(x) else "nan"


def calibration_toml(multipliers: dict[str, float], intervals: dict[str, tuple[float, float]],
                     info: dict, points: list[dict]) -> str:
    """The file's text (written by hand: TOML writing is not in the standard library).

    >>> text = calibration_toml({"heat_transfer": 0.9}, {"heat_transfer": (0.85, 0.95)},
    ...                         {"measured_file": "proto.csv"}, [{"flow_m3_s": 1e-3}])
    >>> tomllib.loads(text)["multipliers"]
    {'heat_transfer': 0.9}
    """
    out = ["# sinkopt calibration: multipliers fitted to a prototype's measurements.",
           "# Reference it from a study: [model] calibration = \"this file\".",
           "# Only [multipliers] changes the model; the rest records the fit.",
           f"schema = {SCHEMA}", "", "[multipliers]"]
    out += [f"{k} = {_v(v)}" for k, v in multipliers.items()]
    out += ["", "[intervals_95]"]
    out += [f"{k} = [{_v(lo)}, {_v(hi)}]" for k, (lo, hi) in intervals.items()]
    out += ["", "[info]"]
    out += [f"{k} = {_v(v)}" for k, v in info.items()]
    for p in points:
        out += ["", "[[points]]"] + [f"{k} = {_v(v)}" for k, v in p.items()]
    return "\n".join(out) + "\n"


def read_calibration(path, field_name: str = "model.calibration") -> Calibration:
    """Read and check a calibration file; :class:`InputError` names the file and the key."""
    path = Path(path)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except OSError as exc:
        raise InputError(f"cannot read the calibration file {path}: {exc.strerror or exc}",
                         field=field_name) from None
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"invalid TOML: {exc}", str(path)) from None
    if data.get("schema") != SCHEMA:
        raise InputError(f"schema must be {SCHEMA} (a file written by sinkopt calibrate), got "
                         f"{data.get('schema')!r}", str(path), "schema")
    mult = data.get("multipliers")
    if not isinstance(mult, dict) or not mult:
        raise InputError("no [multipliers] table", str(path), "multipliers")
    out = {}
    for k, v in mult.items():
        if k not in MULTIPLIERS:
            raise InputError(f"unknown multiplier {k!r} (known: {', '.join(MULTIPLIERS)})",
                             str(path), f"multipliers.{k}")
        if isinstance(v, bool) or not isinstance(v, (int, float)) or not 0.1 <= v <= 10:
            raise InputError(f"must be a number in [0.1, 10], got {v!r}", str(path),
                             f"multipliers.{k}")
        out[k] = float(v)
    intervals = {k: (float(v[0]), float(v[1])) for k, v in data.get("intervals_95", {}).items()}
    return Calibration(path.resolve(), out, intervals, tuple(data.get("points", ())),
                       dict(data.get("info", {})))

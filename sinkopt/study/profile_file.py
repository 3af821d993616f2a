"""A load profile: a CSV of time against power, with the units in the column names (the
convention of fan-curve and measurement files), for the study's ``[load_profile]``.

::

    # motor-drive cycle of our own demo: start-up surge, run, brake
    time_s,Q1_W,Q2_W,B1_W
    0,40,40,20
    2,18,18,10
    50,30,30,25
    55,0,0,0
    60,0,0,0

Time: one column ``time_s``, ``time_ms``, ``time_min`` or ``time_h``; the first row's time is
the profile's start (times are counted from it) and the times must increase. Power, per device
of the study, by its name: ``<device>_W``, ``<device>_kW``, ``<device>_mW``, or
``<device>_pct`` (percent of the device's ``power_W`` in the study); or a single
``load_pct`` / ``load_fraction`` column for every device without its own column. Each row's
powers hold until the next row's time; the last row ends the profile (its powers are not used).
Every device of the study must get a column (its own or the load column), so that no device
silently keeps a power the file did not state.

Every rule broken raises :class:`InputError` naming the file, line and column.
"""
from __future__ import annotations

import csv
from pathlib import Path

from sinkopt.errors import InputError
from sinkopt.model.problem import LoadProfile
from sinkopt.study.measured_file import finite_number as _number

__all__ = ["read_profile", "TIME_UNITS", "POWER_UNITS"]

TIME_UNITS = {"s": 1.0, "ms": 1e-3, "min": 60.0, "h": 3600.0}
#: Power suffix -> factor to W, or None: relative to the device's study power.
POWER_UNITS = {"W": 1.0, "kW": 1e3, "mW": 1e-3, "pct": None}
_LOAD_COLUMNS = {"load_pct": 0.01, "load_fraction": 1.0}
#: A profile this long has no business in a thermal time scale of seconds to hours (one week).
MAX_DURATION_S = 7 * 24 * 3600.0
MAX_ROWS = 100_000


def _column_role(name: str, devices) -> tuple[str, str | None, float | None]:
    """(role, device name, factor): role "time", "load", "device" or "" (not recognised)."""
    if name.startswith("time"):
        unit = name[4:].lstrip("_")
        if unit in TIME_UNITS:
            return "time", None, TIME_UNITS[unit]
        return "", None, None
    if name in _LOAD_COLUMNS:
        return "load", None, _LOAD_COLUMNS[name]
    for d in devices:
        if name.startswith(d.name + "_") and name[len(d.name) + 1:] in POWER_UNITS:
            return "device", d.name, POWER_UNITS[name[len(d.name) + 1:]]
    return "", None, None


def read_profile(path, devices, start: str = "periodic", constrain: bool = True) -> LoadProfile:
    """Read and check a load-profile CSV against the study's devices (module docstring)."""
    path = Path(path)
    source = str(path)
    try:
        text = path.read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(f"cannot read the load profile: {exc.strerror or exc}", source) from None
    header: list[str] | None = None
    header_line = 0
    rows: list[tuple[int, list[str]]] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line or line.startswith("#"):
            continue
        cells = [c.strip() for c in next(csv.reader([line]))]
        if header is None:
            header, header_line = cells, lineno
        else:
            rows.append((lineno, cells))
    names = [d.name for d in devices]
    example = f"time_s,{names[0]}_W" if names else "time_s,load_pct"
    if header is None:
        raise InputError(f"no header line (e.g. {example})", source)
    where = f"{source}:{header_line}"
    roles = {}
    for j, name in enumerate(header):
        role, device, factor = _column_role(name, devices)
        if not role:
            if name.startswith("time") or name == "time":
                hint = f"the time needs its unit: time_<unit> with one of {', '.join(TIME_UNITS)}"
            elif name in names:
                hint = (f"a power needs its unit: {name}_<unit> with one of "
                        f"{', '.join(POWER_UNITS)} (pct: percent of its power_W in the study)")
            else:
                hint = (f"not a column of a load profile; use time_<unit>, <device>_<unit> for "
                        f"the devices {', '.join(names)} (units {', '.join(POWER_UNITS)}), or "
                        "load_pct / load_fraction")
            raise InputError(hint, where, name)
        key = role if role != "device" else device
        if key in roles:
            raise InputError(f"a second column for {'the ' + key if role != 'device' else key}",
                             where, name)
        roles[key] = (j, factor)
    if "time" not in roles:
        raise InputError(f"no time column; add time_<unit> with one of {', '.join(TIME_UNITS)}",
                         where)
    missing = [n for n in names if n not in roles]
    if missing and "load" not in roles:
        raise InputError(f"no power column for {', '.join(missing)}; give each device a "
                         f"<device>_W column, or one load_pct column for the rest", where)
    if len(rows) < 2:
        raise InputError("a profile needs at least two rows: a start and an end time", source)
    if len(rows) > MAX_ROWS:
        raise InputError(f"{len(rows)} rows; at most {MAX_ROWS} (resample the profile)", source)
    times: list[float] = []
    powers: list[tuple[float, ...]] = []
    for lineno, cells in rows:
        at = f"{source}:{lineno}"
        if len(cells) != len(header):
            raise InputError(f"{len(cells)} cells, but the header has {len(header)}", at)
        j, factor = roles["time"]
        t = _number(cells[j], at, header[j]) * factor
        if times and not t > times[-1]:
            raise InputError(f"time must increase from row to row; {cells[j]} follows "
                             f"{times[-1] / factor:g}", at, header[j])
        times.append(t)
        row = []
        for d in devices:
            j, factor = roles[d.name] if d.name in roles else roles["load"]
            v = _number(cells[j], at, header[j])
            if v < 0:
                raise InputError(f"a power cannot be negative, got {cells[j]}", at, header[j])
            row.append(v * (factor if factor is not None else 0.01 * d.power)
                       if header[j] not in _LOAD_COLUMNS else v * factor * d.power)
        powers.append(tuple(row))
    t0 = times[0]
    times = [t - t0 for t in times]
    if times[-1] > MAX_DURATION_S:
        raise InputError(f"the profile lasts {times[-1]:g} s; at most {MAX_DURATION_S:g} s",
                         source)
    return LoadProfile(tuple(times), tuple(powers[:-1]), start, path.resolve(), constrain)

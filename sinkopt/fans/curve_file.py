"""Read and validate a fan-curve CSV file ("sinkopt fan curve v1", docs/fan-curves.md).

::

    # sinkopt-fan-curve: 1
    # name: Demo axial 60 mm 12 V
    # speed_rpm: 4800
    flow_m3_h,pressure_Pa
    0,52
    ...

Units are mandatory in the column names and converted to SI on load with the exact factors of
:mod:`sinkopt.fans.units`. Every problem raises :class:`sinkopt.errors.InputError` naming the file,
the line and the column; nothing is guessed. Recoverable oddities (an exact duplicate row, an
unknown metadata key, an end point extended to its axis) give a :class:`FanCurveWarning`.

>>> text = "# name: demo\\nflow_l/s,pressure_Pa\\n10,0\\n0,80\\n2,76\\n4,68\\n6,52\\n8,30\\n"
>>> fan = parse_fan_curve(text, source="demo.csv")
>>> fan.flow_m3_s.tolist()
[0.0, 0.002, 0.004, 0.006, 0.008, 0.01]
>>> fan.pressure_Pa.tolist(), fan.lines
([80.0, 76.0, 68.0, 52.0, 30.0, 0.0], (4, 5, 6, 7, 8, 3))
>>> parse_fan_curve("flow,pressure_Pa\\n0,1\\n", source="bad.csv")  # doctest: +ELLIPSIS
Traceback (most recent call last):
...
sinkopt.errors.InputError: bad.csv:1: flow: column 'flow' has no unit; ...
"""
from __future__ import annotations

import csv
import difflib
import math
import sys
import warnings
from pathlib import Path

import numpy as np

from sinkopt.errors import InputError
from sinkopt.fans.curve import DEFAULT_AIR_DENSITY_kg_m3, FanCurve, _stall_index
from sinkopt.fans.units import lookup_unit, parse_column, unit_choices

__all__ = ["FanCurveWarning", "load_fan_curve", "parse_fan_curve", "METADATA_KEYS",
           "FORMAT_VERSION", "END_EXTENSION_LIMIT", "RECOMMENDED_POINTS"]

FORMAT_VERSION = "1"

#: Recommended number of data points (3 is the hard minimum); ``fan check`` notes fewer.
RECOMMENDED_POINTS = 6

#: An end point may be extended to its axis when it is off that axis by at most this fraction of
#: the data range (docs/fan-curves.md) [-].
END_EXTENSION_LIMIT = 0.10

# key -> (kind, unit for messages); kind: "text", "number", "positive"
METADATA_KEYS: dict[str, tuple[str, str]] = {
    "sinkopt-fan-curve": ("text", ""),
    "name": ("text", ""),
    "note": ("text", ""),
    "source": ("text", ""),
    "date": ("text", ""),
    "description": ("text", ""),
    "speed_rpm": ("positive", "rpm"),
    "voltage_V": ("positive", "V"),
    "power_W": ("positive", "W"),
    "noise_dBA": ("number", "dB(A)"),
    "air_density_kg_m3": ("positive", "kg/m3"),
    "size_mm": ("positive", "mm"),
}

_USAGE = ("name the columns with their units, e.g. 'flow_cfm,pressure_inH2O' or "
          "'Flow [m3/h],Pressure [Pa]'")


class FanCurveWarning(UserWarning):
    """Something in a fan-curve file was accepted but deserves a look."""


def _where(source: str, line: int) -> str:
    return f"{source}:{line}"


def _warn(message: str, source: str, line: int | None = None) -> None:
    where = source if line is None else _where(source, line)
    level, frame = 1, sys._getframe(0)
    while frame is not None and frame.f_globals.get("__name__", "").startswith("sinkopt.fans"):
        level, frame = level + 1, frame.f_back  # point the warning at the first caller outside
    warnings.warn(f"{where}: {message}", FanCurveWarning, stacklevel=level)


def _parse_metadata(meta_lines: dict[str, tuple[int, str]], source: str) -> dict:
    out: dict = {}
    for key, (line, value) in meta_lines.items():
        if key not in METADATA_KEYS:
            near = difflib.get_close_matches(key, METADATA_KEYS, n=1)
            hint = f"; did you mean '{near[0]}'?" if near else ""
            _warn(f"unknown metadata key '{key}' ignored{hint} (keys carry their unit, e.g. "
                  "speed_rpm)", source, line)
            continue
        kind, unit = METADATA_KEYS[key]
        if kind == "text":
            out[key] = value
            continue
        try:
            v = float(value)
        except ValueError:
            raise InputError(f"expected a number in {unit}, got {value!r} (the unit belongs in "
                             "the key name)", _where(source, line), key) from None
        if not math.isfinite(v) or (kind == "positive" and v <= 0):
            rule = "a finite number" if kind == "number" else "a number > 0"
            raise InputError(f"must be {rule} in {unit}, but got {value!r}",
                             _where(source, line), key)
        out[key] = v
    version = out.get("sinkopt-fan-curve")
    if version is not None and version != FORMAT_VERSION:
        raise InputError(f"unsupported format version {version!r}; this sinkopt reads version "
                         f"{FORMAT_VERSION}", _where(source, meta_lines["sinkopt-fan-curve"][0]),
                         "sinkopt-fan-curve")
    return out


def _parse_header(cells: list[str], line: int, source: str) -> dict:
    """Map quantity -> (column index, column name, Unit) from the header cells."""
    cols: dict = {}
    for j, cell in enumerate(cells):
        name = cell.strip()
        parsed = parse_column(name)
        if parsed is None:
            try:
                float(name)
            except ValueError:
                _warn(f"column '{name}' ignored (only flow, pressure and power columns are "
                      "read)", source, line)
                continue
            raise InputError(f"the first line that is not a comment must be the header, but it "
                             f"holds numbers; {_USAGE}", _where(source, line), f"column {j + 1}")
        quantity, unit_text = parsed
        if not unit_text:
            raise InputError(f"column '{name}' has no unit; {_USAGE} ({quantity} units: "
                             f"{unit_choices(quantity)})", _where(source, line), name)
        unit = lookup_unit(quantity, unit_text)
        if unit is None:
            raise InputError(f"unknown {quantity} unit '{unit_text}' in column '{name}'; use one "
                             f"of {unit_choices(quantity)}", _where(source, line), name)
        if quantity in cols:
            raise InputError(f"two {quantity} columns, '{cols[quantity][1]}' and '{name}'; a "
                             "file holds one curve (other speeds via the fan laws)",
                             _where(source, line), name)
        cols[quantity] = (j, name, unit)
    for quantity in ("flow", "pressure"):
        if quantity not in cols:
            raise InputError(f"no {quantity} column in the header {cells!r}; {_USAGE}",
                             _where(source, line), "header")
    return cols


def _parse_value(cell: str, name: str, line: int, source: str) -> float:
    text = cell.strip()
    if not text:
        raise InputError("empty value", _where(source, line), name)
    try:
        v = float(text)
    except ValueError:
        hint = " (use '.' as the decimal mark)" if "," in text else ""
        raise InputError(f"not a number: {text!r}{hint}", _where(source, line), name) from None
    if not math.isfinite(v):
        raise InputError(f"not a finite number: {text!r}", _where(source, line), name)
    if v < 0:
        raise InputError(f"negative value {text}; flow, pressure and power are >= 0",
                         _where(source, line), name)
    return v


def _semicolon_error(line: int, source: str, cell: str) -> InputError:
    return InputError("semicolon-separated file: separate columns with ',' and write decimals "
                      "with '.' (re-export the spreadsheet with a comma separator)",
                      _where(source, line), f"column '{cell.strip()}'")


def _extend_ends(q, p, pw, lines, source, units):
    """Extend an end point that is < 10 % of the range off its axis (docs/fan-curves.md), warning."""
    fu, pu = units
    q_span, p_max = q[-1] - q[0], p.max()
    if p[-1] > 0:
        slope = (p[-1] - p[-2]) / (q[-1] - q[-2])  # < 0: the stable branch falls
        dq = p[-1] / -slope
        msg = f"the curve ends at {p[-1] / pu.factor:.6g} {pu.name} above 0"
        if p[-1] <= END_EXTENSION_LIMIT * p_max and dq <= END_EXTENSION_LIMIT * q_span:
            q, p = np.append(q, q[-1] + dq), np.append(p, 0.0)
            pw = None if pw is None else np.append(pw, pw[-1])
            lines = lines + [0]
            _warn(f"{msg}; its last segment was extended linearly to free delivery at "
                  f"{q[-1] / fu.factor:.6g} {fu.name} (add that point to silence this)",
                  source, lines[-2])
        else:
            _warn(f"{msg}; not extended (more than {END_EXTENSION_LIMIT:.0%} of the range "
                  "off the axis): designs needing more flow have no operating point", source,
                  lines[-1])
    if q[0] > 0:
        slope = (p[1] - p[0]) / (q[1] - q[0])
        p0 = p[0] - slope * q[0]
        msg = f"the curve starts at {q[0] / fu.factor:.6g} {fu.name} above 0"
        if (q[0] <= END_EXTENSION_LIMIT * q_span and p0 >= 0
                and abs(p0 - p[0]) <= END_EXTENSION_LIMIT * p_max):
            q, p = np.insert(q, 0, 0.0), np.insert(p, 0, p0)
            pw = None if pw is None else np.insert(pw, 0, pw[0])
            lines = [0] + lines
            _warn(f"{msg}; its first segment was extended linearly to shut-off at "
                  f"{p0 / pu.factor:.6g} {pu.name}", source, lines[1])
        else:
            _warn(f"{msg}; not extended: designs needing less flow have no operating point",
                  source, lines[0])
    return q, p, pw, lines


def parse_fan_curve(text: str, source: str = "<text>", *, extend_ends: bool = True) -> FanCurve:
    """Parse the text of a fan-curve file into a :class:`FanCurve` (SI units).

    Parameters
    ----------
    text : str
        File contents.
    source : str
        File name used in messages.
    extend_ends : bool
        Extend an end point that is within 10 % of its axis to the axis, with a warning.

    Raises
    ------
    sinkopt.errors.InputError
        Naming ``source:line`` and the column, for every violation of the format.
    """
    meta_lines: dict[str, tuple[int, str]] = {}
    header = None
    rows: list[tuple[int, list[str]]] = []
    for lineno, raw in enumerate(text.lstrip("\ufeff").splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            if header is None and ":" in line:
                key, value = (s.strip() for s in line[1:].split(":", 1))
                if key in meta_lines:
                    raise InputError(f"metadata key given twice (lines {meta_lines[key][0]} "
                                     f"and {lineno})", _where(source, lineno), key)
                meta_lines[key] = (lineno, value)
            continue
        cells = next(csv.reader([line]))
        if header is None:
            if ";" in line:
                raise _semicolon_error(lineno, source, cells[0])
            header = (lineno, cells)
        else:
            rows.append((lineno, cells))
    if header is None:
        raise InputError(f"no header line and no data; {_USAGE}", source)
    meta = _parse_metadata(meta_lines, source)
    hline, hcells = header
    cols = _parse_header(hcells, hline, source)
    used = [q for q in ("flow", "pressure", "power") if q in cols]

    values: dict[str, list[float]] = {q: [] for q in used}
    lines: list[int] = []
    seen: dict[float, int] = {}
    for lineno, cells in rows:
        if len(cells) != len(hcells):
            if ";" in ",".join(cells):
                raise _semicolon_error(lineno, source, cells[0])
            extra = len(cells) > len(hcells)
            field = (f"column {len(hcells) + 1}" if extra
                     else f"column '{hcells[len(cells)].strip()}'")
            hint = " (a decimal comma? use '.')" if extra else ""
            raise InputError(f"expected {len(hcells)} values (as in the header), got "
                             f"{len(cells)}{hint}", _where(source, lineno), field)
        row = {q: _parse_value(cells[cols[q][0]], cols[q][1], lineno, source) for q in used}
        q_val = row["flow"]
        if q_val in seen:
            i = seen[q_val]
            prev = {q: values[q][i] for q in used}
            if prev == row:
                _warn(f"exact duplicate of line {lines[i]} dropped", source, lineno)
                continue
            what = "pressures" if prev["pressure"] != row["pressure"] else "powers"
            col = cols["pressure" if what == "pressures" else "power"][1]
            raise InputError(
                f"the same flow {cells[cols['flow'][0]].strip()} appears with two {what}: line "
                f"{lines[i]} has {prev['pressure' if what == 'pressures' else 'power']:g}, line "
                f"{lineno} has {row['pressure' if what == 'pressures' else 'power']:g}",
                _where(source, lineno), col)
        seen[q_val] = len(lines)
        for q in used:
            values[q].append(row[q])
        lines.append(lineno)

    flow_name = cols["flow"][1]
    if len(lines) < 3:
        where = lines[-1] if lines else hline
        raise InputError(f"only {len(lines)} data point(s); a fan curve needs at least 3 "
                         "(6 or more recommended)", _where(source, where), flow_name)

    fu, pu = cols["flow"][2], cols["pressure"][2]
    order = np.argsort(values["flow"], kind="stable")
    q = np.asarray(values["flow"])[order] * fu.factor
    p = np.asarray(values["pressure"])[order] * pu.factor
    pw = None
    if "power" in cols:
        pw = np.asarray(values["power"])[order] * cols["power"][2].factor
    lines = [lines[i] for i in order]
    pname = cols["pressure"][1]
    if not np.any(p > 0):
        raise InputError("every pressure is 0; a fan curve needs a positive pressure",
                         _where(source, lines[-1]), pname)
    if _stall_index(p) == p.size - 1:
        raise InputError(
            f"the pressure does not fall toward free delivery: line {lines[-2]} has "
            f"{p[-2] / pu.factor:g}, line {lines[-1]} (highest flow) has {p[-1] / pu.factor:g} "
            f"{pu.name}; are the columns and their units right?", _where(source, lines[-1]),
            pname)
    if extend_ends:
        q, p, pw, lines = _extend_ends(q, p, pw, lines, source, (fu, pu))

    if pw is not None and "power_W" in meta:
        _warn("metadata power_W ignored: the power column is used", source,
              meta_lines["power_W"][0])
    _check_plausible(q, p, meta, source, (fu, pu), lines)
    return FanCurve(
        q, p,
        name=meta.get("name") or Path(source).stem,
        air_density_kg_m3=meta.get("air_density_kg_m3", DEFAULT_AIR_DENSITY_kg_m3),
        speed_rpm=meta.get("speed_rpm"),
        power_W=pw,
        rated_power_W=None if pw is not None else meta.get("power_W"),
        voltage_V=meta.get("voltage_V"),
        noise_dBA=meta.get("noise_dBA"),
        size_mm=meta.get("size_mm"),
        source=source,
        flow_unit=fu.name,
        pressure_unit=pu.name,
        lines=tuple(lines),
        metadata={k: v for k, (_, v) in meta_lines.items()},
    )


#: Highest blade-tip speed of electronics-cooling fans [m/s]: about 40 mm at 30,000 rpm (common
#: practice, no source). A rotor makes at most about ρ u_tip² of static pressure (a pressure
#: coefficient ψ = Δp/(ρ u²/2) of 2; real fans stay below about 1.2, from memory), and no
#: mean velocity through its face above u_tip.
TIP_SPEED_MAX_M_S = 70.0


def _check_plausible(q, p, meta, source, units, lines) -> None:
    """Warn when a curve's pressures or flows are beyond what a fan of its size and speed can
    make: the usual cause is a wrong unit in a column name (Pa values under an inH2O header)."""
    fu, pu = units
    rho = meta.get("air_density_kg_m3", DEFAULT_AIR_DENSITY_kg_m3)
    size, rpm = meta.get("size_mm"), meta.get("speed_rpm")
    if size and rpm:
        u_tip = np.pi * size * 1e-3 * rpm / 60.0
        basis = f"its {size:g} mm rotor at {rpm:g} rpm (tip speed {u_tip:.3g} m/s)"
    else:
        u_tip = TIP_SPEED_MAX_M_S
        basis = (f"an electronics-cooling fan (tip speed up to about {u_tip:g} m/s; give "
                 "'# size_mm:' and '# speed_rpm:' for a sharper check)")
    p_cap = rho * u_tip ** 2
    hint = "; are the column units right (e.g. Pa values under an inH2O header)?"
    if p.max() > p_cap:
        _warn(f"shut-off pressure {p.max():.4g} Pa ({p.max() / pu.factor:.4g} {pu.name}) is "
              f"above the {p_cap:.3g} Pa that {basis} can make{hint}", source,
              lines[int(np.argmax(p))])
    if size:
        face = np.pi / 4.0 * (size * 1e-3) ** 2
        v = q.max() / face
        if v > u_tip:
            _warn(f"free delivery {q.max():.4g} m3/s ({q.max() / fu.factor:.4g} {fu.name}) is "
                  f"{v:.3g} m/s through the {size:g} mm face, above the tip speed of {basis}"
                  f"{hint.replace('Pa values under an inH2O header', 'm3/h values under a cfm header')}",
                  source, lines[-1])


def load_fan_curve(path, *, extend_ends: bool = True) -> FanCurve:
    """Load a fan-curve CSV file (UTF-8, with or without BOM) into a :class:`FanCurve`.

    Parameters
    ----------
    path : str or os.PathLike
        The file.
    extend_ends : bool
        See :func:`parse_fan_curve`.

    Raises
    ------
    sinkopt.errors.InputError
        If the file cannot be read or breaks a rule of the format (docs/fan-curves.md).
    """
    source = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except UnicodeDecodeError as exc:
        raise InputError(f"not UTF-8 text (byte {exc.start}); save the file as UTF-8",
                         source) from None
    except OSError as exc:
        raise InputError(f"cannot read fan curve file: {exc.strerror or exc}", source) from None
    return parse_fan_curve(text, source, extend_ends=extend_ends)

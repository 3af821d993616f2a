"""Building blocks of the study-file check: the problem list, dotted paths, typed key readers,
process presets and the reader of measured impedance curves. :mod:`sinkopt.study.reader` uses them.

Every reader records what is wrong in a :class:`Problems` list and returns ``None`` instead of
raising, so that one pass over the file reports every problem at once (docs/study-file.md).

>>> problems = Problems("study.toml")
>>> t = Table({"power_W": "12 W", "temperature_F": 40}, 'device[1] (name "D1")', problems,
...           allowed=("power_W", "temperature_C"))
>>> t.number("power_W", "W") is None
True
>>> print(problems.error())
study.toml: 2 problems
  device[1] (name "D1").temperature_F: unknown key; did you mean temperature_C? (keys are <quantity>_<unit>)
  device[1] (name "D1").power_W: expected a number in W, got "12 W" (units belong in the key name)
"""
from __future__ import annotations

import csv
import difflib
import glob
import json
import math
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Iterable

from sinkopt.errors import InputError
from sinkopt.fans.units import lookup_unit, parse_column, unit_choices
from sinkopt.model.problem import OBJECTIVES

__all__ = [
    "Problems",
    "Table",
    "show",
    "item_path",
    "join_path",
    "ProcessPreset",
    "PROCESS_PRESETS",
    "PROCESS_KEYS",
    "read_impedance_curve",
    "resolve_files",
    "span",
    "cross_check",
]


def show(value: Any) -> str:
    """A TOML value as the user wrote it, for messages."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, dict):
        return "a table"
    if isinstance(value, list):
        return "[" + ", ".join(show(v) for v in value) + "]"
    return repr(value)


def join_path(base: str, key: str) -> str:
    """``base.key`` (or ``key`` at the top level)."""
    return f"{base}.{key}" if base else key


def item_path(base: str, section: str, index: int, name: Any = None) -> str:
    """Path of the ``index``-th (0-based) table of an array, shown counted from 1 with its name.

    >>> item_path("", "device", 0, "D1")
    'device[1] (name "D1")'
    """
    label = f"{section}[{index + 1}]"
    if isinstance(name, str) and name:
        label += f" (name {json.dumps(name, ensure_ascii=False)})"
    return join_path(base, label)


class Problems:
    """Every problem found in one study file, each as (dotted path, message)."""

    def __init__(self, source: str):
        self.source = source
        self.items: list[tuple[str, str]] = []

    def add(self, path: str, message: str) -> None:
        self.items.append((path, message))

    def __len__(self) -> int:
        return len(self.items)

    def lines(self) -> list[str]:
        return [f"{path}: {msg}" if path else msg for path, msg in self.items]

    def error(self) -> InputError:
        """One :class:`InputError` listing every problem (its ``problems`` attribute too)."""
        n = len(self.items)
        text = f"{n} problem{'s' if n != 1 else ''}\n" + "\n".join("  " + ln for ln in self.lines())
        exc = InputError(text, source=self.source)
        exc.problems = list(self.items)  # type: ignore[attr-defined]
        return exc

    def raise_if_any(self) -> None:
        if self.items:
            raise self.error()


def _unknown_key_message(key: str, allowed: Iterable[str], what: str) -> str:
    allowed = list(allowed)
    close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
    if close:
        msg = f"unknown {what}; did you mean {close[0]}?"
        same_quantity = "_" in key and key.rsplit("_", 1)[0] == close[0].rsplit("_", 1)[0]
        if same_quantity:
            msg += " (keys are <quantity>_<unit>)"
        return msg
    return f"unknown {what}; known {what}s: {', '.join(allowed)}"


class Table:
    """One TOML table being checked: typed readers that record problems and return ``None``.

    Parameters
    ----------
    data : dict
        The table as ``tomllib`` read it.
    path : str
        Its dotted path for messages (``""`` at the top level).
    problems : Problems
        Where problems go.
    allowed : iterable of str
        The keys this table may hold; any other key is reported with a did-you-mean.
    what : str
        ``"key"`` or ``"section"``, for the unknown-key message.
    """

    def __init__(self, data: dict, path: str, problems: Problems, allowed: Iterable[str],
                 what: str = "key"):
        self.data = data
        self.path = path
        self.problems = problems
        allowed = tuple(allowed)
        for key in data:
            if key not in allowed:
                problems.add(join_path(path, key), _unknown_key_message(key, allowed, what))

    # ---- helpers -------------------------------------------------------------------------------
    def at(self, key: str) -> str:
        return join_path(self.path, key)

    def has(self, key: str) -> bool:
        return key in self.data

    def add(self, key: str | None, message: str) -> None:
        self.problems.add(self.at(key) if key else self.path, message)

    def _get(self, key: str, required: bool, hint: str, brackets: str = "") -> Any:
        if key in self.data:
            return self.data[key]
        if required:
            self._missing(key, hint, brackets)
        return None

    def _missing(self, key: str, hint: str, brackets: str = "") -> None:
        tail = f" ({hint})" if hint else ""
        if not self.path and brackets:  # a top-level section
            self.problems.add(key, f"missing required section {brackets[0]}{key}{brackets[1]}{tail}")
        else:
            self.problems.add(self.path, f"missing required key {key}{tail}")

    def _bad_number(self, key: str, value: Any, unit: str, integer: bool = False) -> None:
        what = "a whole number" if integer else "a number"
        in_unit = f" in {unit}" if unit and unit != "-" else ""
        if isinstance(value, str):
            try:
                float(value)
                tail = " (write numbers without quotes)"
            except ValueError:
                tail = " (units belong in the key name)" if in_unit or any(
                    c.isalpha() for c in value) else ""
            self.add(key, f"expected {what}{in_unit}, got {show(value)}{tail}")
        else:
            self.add(key, f"expected {what}{in_unit}, got {show(value)}")

    def _bounds(self, key: str, v: float, unit: str, minimum: float | None, exclusive: bool,
                maximum: float | None) -> bool:
        u = f" {unit}" if unit and unit != "-" else ""
        if minimum is not None and (v <= minimum if exclusive else v < minimum):
            op = ">" if exclusive else ">="
            self.add(key, f"must be {op} {minimum:g}{u}, but got {v:g}")
            return False
        if maximum is not None and v > maximum:
            self.add(key, f"must be <= {maximum:g}{u}, but got {v:g}")
            return False
        return True

    # ---- scalar readers ------------------------------------------------------------------------
    def check_number(self, key: str, value: Any, unit: str, minimum: float | None = None,
                     exclusive: bool = False, maximum: float | None = None,
                     integer: bool = False):
        """Check one value already taken from the table (``key`` names it in messages)."""
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            self._bad_number(key, value, unit, integer)
            return None
        if integer and not isinstance(value, int):
            self._bad_number(key, value, unit, integer)
            return None
        if not math.isfinite(value):
            self.add(key, f"must be a finite number, but got {value!r}")
            return None
        if not self._bounds(key, float(value), unit, minimum, exclusive, maximum):
            return None
        return int(value) if integer else float(value)

    def number(self, key: str, unit: str, *, required: bool = False, default: Any = None,
               hint: str = "", minimum: float | None = None, exclusive: bool = False,
               maximum: float | None = None) -> float | None:
        """A float in ``unit``; ``default`` if absent and not required."""
        value = self._get(key, required, hint)
        if value is None:
            return default
        return self.check_number(key, value, unit, minimum, exclusive, maximum)

    def integer(self, key: str, *, required: bool = False, default: Any = None, hint: str = "",
                minimum: int | None = None, unit: str = "-") -> int | None:
        value = self._get(key, required, hint)
        if value is None:
            return default
        return self.check_number(key, value, unit, minimum, False, None, integer=True)

    def text(self, key: str, *, required: bool = False, default: Any = None, hint: str = "",
             choices: Iterable[str] | None = None) -> str | None:
        value = self._get(key, required, hint)
        if value is None:
            return default
        if not isinstance(value, str):
            self.add(key, f"expected text in quotes, got {show(value)}")
            return None
        if choices is not None:
            choices = tuple(choices)
            if value not in choices:
                close = difflib.get_close_matches(value, choices, n=1)
                near = f"did you mean {show(close[0])}? " if close else ""
                self.add(key, f"unknown value {show(value)}; {near}(choices: "
                              f"{', '.join(show(c) for c in choices)})")
                return None
        return value

    def boolean(self, key: str, *, default: bool) -> bool | None:
        value = self.data.get(key)
        if value is None:
            return default
        if not isinstance(value, bool):
            self.add(key, f"expected true or false, got {show(value)}")
            return None
        return value

    def number_or_range(self, key: str, unit: str, *, integer: bool = False,
                        required: bool = False, hint: str = "", minimum: float | None = None,
                        exclusive: bool = False, maximum: float | None = None):
        """A fixed number ``("fixed", v)`` or a search range ``("range", low, high)``."""
        value = self._get(key, required, hint)
        if value is None:
            return None
        kind = "whole number" if integer else "number"
        if isinstance(value, list):
            if len(value) != 2:
                self.add(key, f"a range is [low, high] (two {kind}s), but got {show(value)}")
                return None
            lo, hi = (self.check_number(f"{key}[{i + 1}]", v, unit, minimum, exclusive, maximum,
                                        integer) for i, v in enumerate(value))
            if lo is None or hi is None:
                return None
            if lo > hi:
                self.add(key, f"impossible range: low {lo:g} > high {hi:g} (write [low, high])")
                return None
            return ("fixed", lo) if lo == hi else ("range", lo, hi)
        if isinstance(value, (int, float)) and not isinstance(value, bool) or isinstance(value, str):
            v = self.check_number(key, value, unit, minimum, exclusive, maximum, integer)
            return None if v is None else ("fixed", v)
        self.add(key, f"expected a {kind} (fixed) or [low, high] (searched) in {unit}, got "
                      f"{show(value)}")
        return None

    # ---- nested tables -------------------------------------------------------------------------
    def table(self, key: str, *, required: bool = False, hint: str = "") -> dict | None:
        value = self._get(key, required, hint, ("[", "]"))
        if value is None:
            return None
        if not isinstance(value, dict):
            self.add(key, f"expected a [{self.at(key)}] table, got {show(value)}")
            return None
        return value

    def tables(self, key: str, *, required: bool = False, hint: str = "") -> list[dict]:
        """An array of tables (``[[key]]``); [] if absent."""
        value = self._get(key, required, hint, ("[[", "]]"))
        if value is None:
            return []
        header = f"[[{self.at(key)}]]"
        if isinstance(value, dict):
            self.add(key, f"expected one or more {header} tables (write {header} even for one)")
            return []
        if not isinstance(value, list) or not all(isinstance(v, dict) for v in value):
            self.add(key, f"expected one or more {header} tables, got {show(value)}")
            return []
        if not value and required:
            self._missing(key, hint, ("[[", "]]"))
        return value


# ---- process presets -----------------------------------------------------------------------------
@dataclass(frozen=True)
class ProcessPreset:
    """Manufacturing limits of one process, in the study file's units (mm, -)."""

    min_fin_thickness_mm: float | None
    min_gap_mm: float | None
    max_fin_aspect: float | None  #: fin height / gap
    min_base_thickness_mm: float | None


#: Typical limits per process (common practice, no source; common practice, no source). Each value is the
#: conservative end of the usual range; explicit keys in [sink] override them. ``custom`` has no
#: preset: all four keys must be given.
PROCESS_PRESETS: dict[str, ProcessPreset] = {
    # fins >= 0.8-1 mm, height/gap <= ~10:1, gap >= ~2.5-3 mm, base >= 3-5 mm
    "extruded": ProcessPreset(1.0, 2.5, 10.0, 3.0),
    # fins 0.3-1.5 mm bonded into a grooved base, height/gap 30-50:1
    "bonded": ProcessPreset(0.3, 1.5, 30.0, 4.0),
    # fins 0.3-1 mm cut from the base block, height/gap 25-50:1
    "skived": ProcessPreset(0.3, 1.0, 25.0, 3.0),
    # 0.1-0.5 mm sheet, pitch 1-3 mm, brazed onto a base plate
    "folded": ProcessPreset(0.1, 0.8, 40.0, 2.0),
    "custom": ProcessPreset(None, None, None, None),
}
#: [sink] keys that override the preset -> (unit, strictly positive).
PROCESS_KEYS = {
    "min_fin_thickness_mm": "mm",
    "min_gap_mm": "mm",
    "max_fin_aspect": "-",
    "min_base_thickness_mm": "mm",
}


# ---- files and checks across sections ------------------------------------------------------------
def span(spec):
    """(low, high) of a fixed value or range spec."""
    return (spec[1], spec[1]) if spec[0] == "fixed" else (spec[1], spec[2])


def resolve_files(pattern: str, base_dir: Path) -> tuple[list[Path], str | None]:
    full = os.path.normpath(pattern if os.path.isabs(pattern) else os.path.join(base_dir, pattern))
    if glob.has_magic(pattern):
        found = sorted(Path(p) for p in glob.glob(full) if os.path.isfile(p))
        return found, (None if found else f"{show(pattern)} matches no file (looked for "
                                          f"{os.path.abspath(full)})")
    if not os.path.isfile(full):
        return [], f"file not found: {full} (looked for {os.path.abspath(full)})"
    return [Path(full)], None


def cross_check(problems: Problems, sink, devices, air, objectives, limits, ambient) -> None:
    geo = sink["geometry"] if sink else {}
    spans = {k: span(v) for k, v in geo.items() if v is not None}
    if {"n_fins", "fin_thickness_mm", "width_mm"} <= spans.keys():
        n_lo, t_lo, w_hi = spans["n_fins"][0], spans["fin_thickness_mm"][0], spans["width_mm"][1]
        if n_lo * t_lo >= w_hi:
            problems.add("sink.n_fins", f"the fins cannot fit: the fewest fins {n_lo} x the "
                         f"thinnest {t_lo:g} mm = {n_lo * t_lo:g} mm >= the largest width "
                         f"{w_hi:g} mm (n_fins * fin_thickness < width must leave a gap)")
        elif sink["process"] is not None:
            gap = sink["process"].min_gap_m * 1e3
            need = n_lo * t_lo + (n_lo - 1) * gap
            if need > w_hi:
                problems.add("sink.n_fins", f"the fins cannot keep the {sink['process'].name} "
                             f"process's minimum gap {gap:g} mm: {n_lo} fins x {t_lo:g} mm + "
                             f"{n_lo - 1} gaps = {need:g} mm > the largest width {w_hi:g} mm")
            elif "fin_height_mm" in spans:
                widest_gap = (w_hi - n_lo * t_lo) / (n_lo - 1)
                aspect = spans["fin_height_mm"][0] / widest_gap
                if aspect > sink["process"].max_fin_aspect:
                    problems.add("sink.fin_height_mm", f"no design meets the {sink['process'].name} "
                                 f"process's fin height/gap <= {sink['process'].max_fin_aspect:g}: "
                                 f"the lowest fin {spans['fin_height_mm'][0]:g} mm over the widest "
                                 f"gap {widest_gap:.3g} mm gives {aspect:.3g}")
    if sink and sink["process"] is not None:
        pl = sink["process"]
        for key, lim in (("fin_thickness_mm", pl.min_fin_thickness_m),
                         ("base_thickness_mm", pl.min_base_thickness_m)):
            if key in spans and spans[key][1] < lim * 1e3 - 1e-12:
                problems.add(f"sink.{key}", f"the {pl.name} process needs >= {lim * 1e3:g} mm, "
                             f"but the largest value is {spans[key][1]:g} mm (set "
                             f"min_{key} in [sink] to override the preset)")
    for i, d in enumerate(devices):
        if d is None:
            continue
        path = item_path("", "device", i, d.name)
        for axis, key, size, extent in (("x", "width_mm", d.size_x, "width"),
                                        ("y", "length_mm", d.size_y, "length")):
            if key not in spans:
                continue
            centre = getattr(d, f"center_{axis}")
            hi = spans[key][1] * 1e-3
            if centre - size / 2 < -1e-12 or centre + size / 2 > hi + 1e-12:
                problems.add(f"{path}.center_{axis}_mm", f"the footprint "
                             f"{(centre - size / 2) * 1e3:g}..{(centre + size / 2) * 1e3:g} mm "
                             f"leaves the base even at the largest {extent} {hi * 1e3:g} mm")
        if ambient is not None and limits is not None:
            need = ambient + limits.min_junction_margin_K
            if d.tj_max <= need:
                problems.add(f"{path}.tj_max_C", f"no design can work: tj_max {d.tj_max:g} °C <= "
                             f"ambient {ambient:g} °C + required margin "
                             f"{limits.min_junction_margin_K:g} K")
    placed = [(i, d) for i, d in enumerate(devices) if d is not None]
    for a, (i, d) in enumerate(placed):
        for j, e in placed[a + 1:]:
            dx = (d.size_x + e.size_x) / 2 - abs(d.center_x - e.center_x)
            dy = (d.size_y + e.size_y) / 2 - abs(d.center_y - e.center_y)
            if dx > 1e-9 and dy > 1e-9:  # touching edges are fine; an overlap is not
                problems.add(f"{item_path('', 'device', j, e.name)}.center_x_mm",
                             f"the footprint overlaps that of device {d.name} by {dx * 1e3:.3g} mm "
                             f"across and {dy * 1e3:.3g} mm along the flow; two packages cannot "
                             "share the base")
    if limits is not None:
        for lim, key in (("max_width_m", "width_mm"), ("max_length_m", "length_mm")):
            v = getattr(limits, lim)
            if v is not None and key in spans and spans[key][0] > v * 1e3 + 1e-9:
                problems.add(f"constraints.max_{key}", f"no design can meet it: sink.{key} is at "
                             f"least {spans[key][0]:g} mm")
        if (limits.max_height_m is not None and "fin_height_mm" in spans
                and "base_thickness_mm" in spans):
            low = spans["fin_height_mm"][0] + spans["base_thickness_mm"][0]
            if low > limits.max_height_m * 1e3 + 1e-9:
                problems.add("constraints.max_height_mm", f"no design can meet it: fins + base "
                             f"are at least {low:g} mm")
    if air is not None and air.duct_area_m2 is not None and "width_mm" in spans:
        if "fin_height_mm" in spans and "base_thickness_mm" in spans:
            front = spans["width_mm"][0] * (spans["fin_height_mm"][0] + spans["base_thickness_mm"][0])
            if front * 1e-6 >= air.duct_area_m2:
                problems.add("air.duct_width_mm", f"no sink fits the duct: the smallest front "
                             f"{front:g} mm² >= duct {air.duct_area_m2 * 1e6:g} mm²")
    if air is not None and objectives is not None:
        uses = set(objectives)
        if limits is not None and limits.max_noise_dBA is not None:
            uses.add("max_noise_dBA")
        if limits is not None and limits.max_fan_power_W is not None:
            uses.add("max_fan_power_W")
        for need in ("fan_power", "noise", "max_fan_power_W", "max_noise_dBA"):
            where = "objectives.use" if need in OBJECTIVES else f"constraints.{need}"
            if need not in uses:
                continue
            if not air.uses_fans:
                problems.add(where, f"{need} needs [[air.fan]] entries (the air supply is a "
                             "known flow)")
                continue
            for f in air.fans:
                if "noise" in need and f.curve.noise_dBA is None:
                    problems.add(where, f"{need} needs noise data in every fan file, but "
                                 f"{f.curve.source} has no '# noise_dBA: ...' line")
                if "power" in need and f.curve.power_W is None and f.curve.rated_power_W is None \
                        and f.efficiency is None:
                    problems.add(where, f"{need} needs fan power: {f.curve.source} has neither a power "
                                 "column nor '# power_W: ...'; add one or give efficiency in "
                                 "its [[air.fan]] entry")


# ---- measured system impedance -------------------------------------------------------------------
def read_impedance_curve(path: Path, source: str):
    """Read a system-impedance CSV: columns ``flow_<unit>`` and ``pressure_<unit>`` as in a
    fan-curve file, pressure rising with flow, optional ``# air_density_kg_m3: ...`` line.

    Returns ``((flows [m3/s], ...), (pressures [Pa], ...), density [kg/m3])``; raises
    :class:`InputError` naming ``source:line``.
    """
    try:
        text = Path(path).read_text(encoding="utf-8-sig")
    except OSError as exc:
        raise InputError(f"cannot read impedance curve file: {exc.strerror or exc}", source) from None
    density = 1.2
    header = None
    points: list[tuple[float, float, int]] = []
    for lineno, raw in enumerate(text.splitlines(), start=1):
        line = raw.strip()
        if not line:
            continue
        if line.startswith("#"):
            key, _, value = line[1:].partition(":")
            if key.strip() == "air_density_kg_m3":
                try:
                    density = float(value)
                except ValueError:
                    density = float("nan")
                if not (math.isfinite(density) and density > 0):
                    raise InputError(f"air_density_kg_m3 must be a number > 0, got "
                                     f"{value.strip()!r}", f"{source}:{lineno}")
            continue
        cells = [c.strip() for c in next(csv.reader([line]))]
        if header is None:
            cols = {}
            for j, cell in enumerate(cells):
                parsed = parse_column(cell)
                if parsed is None or parsed[0] == "power":
                    continue
                quantity, unit_text = parsed
                unit = lookup_unit(quantity, unit_text) if unit_text else None
                if unit is None:
                    raise InputError(f"column {cell!r}: missing or unknown {quantity} unit; use "
                                     f"one of {unit_choices(quantity)}", f"{source}:{lineno}")
                cols[quantity] = (j, unit.factor)
            missing = [q for q in ("flow", "pressure") if q not in cols]
            if missing:
                raise InputError(f"no {' and no '.join(missing)} column in the header; name the "
                                 "columns with units, e.g. 'flow_m3_h,pressure_Pa'",
                                 f"{source}:{lineno}")
            header = cols
            continue
        try:
            q = float(cells[header["flow"][0]]) * header["flow"][1]
            p = float(cells[header["pressure"][0]]) * header["pressure"][1]
        except (ValueError, IndexError):
            raise InputError(f"expected numbers in the flow and pressure columns, got {line!r}",
                             f"{source}:{lineno}") from None
        if not (math.isfinite(q) and math.isfinite(p) and q >= 0 and p >= 0):
            raise InputError(f"flow and pressure must be finite and >= 0, got {line!r}",
                             f"{source}:{lineno}")
        points.append((q, p, lineno))
    if header is None or len(points) < 2:
        raise InputError("an impedance curve needs a header and at least 2 points", source)
    points.sort()
    for (q0, p0, l0), (q1, p1, l1) in zip(points, points[1:]):
        if q1 == q0:
            raise InputError(f"the same flow appears on lines {l0} and {l1}", f"{source}:{l1}")
        if p1 < p0:
            raise InputError(f"a system's pressure drop rises with flow, but line {l1} is below "
                             f"line {l0}", f"{source}:{l1}")
    return tuple(q for q, _, _ in points), tuple(p for _, p, _ in points), density

"""The model against published measurements of real heatsinks; writes docs/validation.md.

    python benchmarks/validation.py            # rewrite docs/validation.md
    python benchmarks/validation.py --check    # exit 1 if docs/validation.md is out of date

Each data set in ``tests/data/*.json`` (citation, figure, how it was read, reading uncertainty,
geometry, points) is evaluated point by point with the default model and with each model option
changed alone. A second part shows what calibration buys on held-out points: multipliers fitted
on every other point (``sinkopt.model.calibration``) predict the remaining ones.

Deterministic: the same data and code give the same file, so a test can pin it.
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
DATA = ROOT / "tests" / "data"
DOC = ROOT / "docs" / "validation.md"

from sinkopt.model.calibration import Measurements, fit_calibration, model_at  # noqa: E402
from sinkopt.model.design import ModelOptions, SinkGeometry  # noqa: E402
from sinkopt.physics.air import air_properties  # noqa: E402
from sinkopt.physics.heatsink import FIN_TIPS, HEAT_TRANSFER_MODELS, HYDRAULIC_DIAMETERS  # noqa: E402
from sinkopt.physics.pressure_drop import EXIT_LOSS_MODELS  # noqa: E402

#: Model variants: the default, then each option changed alone.
VARIANTS = [("default", {})] + [
    (f"{key} = {value}", {key: value})
    for key, values in (("heat_transfer", HEAT_TRANSFER_MODELS),
                        ("hydraulic_diameter", HYDRAULIC_DIAMETERS),
                        ("exit_loss", tuple(EXIT_LOSS_MODELS)), ("fin_tip", FIN_TIPS))
    for value in values if value != getattr(ModelOptions(), key)]
#: Which options can change which quantity (the others leave it unchanged).
AFFECTS = {"pressure_drop": {"hydraulic_diameter", "exit_loss"},
           "thermal_resistance": {"heat_transfer", "hydraulic_diameter", "fin_tip"}}


@dataclass
class SinkCase:
    """One measured sink, resolved into what the model needs (SI), with the assumptions made."""

    set_name: str
    citation: str
    sink_id: str
    geometry: SinkGeometry
    conductivity: float
    air_temperature_K: float
    air_pressure_Pa: float
    flow_rule: str
    velocity: np.ndarray  #: as published
    flow: np.ndarray  #: through the fin channels [m^3/s], as given to the model
    pressure_drop: np.ndarray  #: measured [Pa] (NaN where the point has none)
    thermal_resistance: np.ndarray  #: measured [K/W]
    assumptions: list[str]

    @property
    def air(self):
        return air_properties(self.air_temperature_K, self.air_pressure_Pa)


def _pires_fonseca_2024(d: dict) -> list[SinkCase]:
    s = d["sinks"][0]
    g = SinkGeometry.of(width=s["base_width_m"], length=s["base_length_m"],
                        fin_height=s["fin_height_m"], fin_thickness=s["fin_thickness_m"],
                        n_fins=s["n_fins"], base_thickness=s["base_thickness_m"])
    pts = s["points"]
    v = np.array([p["velocity_m_per_s"] for p in pts])
    gap = (s["base_width_m"] - s["n_fins"] * s["fin_thickness_m"]) / (s["n_fins"] - 1)
    flow = v * (s["n_fins"] - 1) * gap * s["fin_height_m"]

    def col(key):
        return np.array([np.nan if p.get(key) is None else p[key] for p in pts], dtype=float)

    return [SinkCase(
        "pires-fonseca_2024", d["citation"], s["id"], g, 200.0, 293.15, 101325.0,
        "published velocity = mean velocity between the fins; the model is given the flow "
        "that makes its own channel velocity equal to it, V (N − 1) b H with b = (W − N t)/(N − 1)",
        v, flow, col("pressure_drop_Pa"), col("thermal_resistance_K_per_W"),
        ["aluminium conductivity 200 W/(m K) (alloy not stated; 6063 is common practice, no "
         "source)",
         "air at 20 °C and 101 325 Pa (not reported per run; the paper's own simulations take "
         "18–20 °C inlet air at sea-level density)",
         "base thickness 2.7 mm = overall height 14 mm − fin height 11.3 mm (not printed as such)",
         "heater spread over the whole base (\"almost the same dimensions\" as the base): the "
         "model's base-to-inlet resistance is R_hs + t_b/(k W L), no spreading",
         "measured Δp is the sink's increment over the empty duct from the room to a tap 30 mm "
         "downstream: entrance contraction, channel friction and the part of the exit "
         "expansion recovered within 30 mm; the model's K_c + friction + K_e is compared with "
         "it as it is"])]


READERS = {"pires-fonseca_2024": _pires_fonseca_2024}


def load_cases() -> list[SinkCase]:
    cases = []
    for path in sorted(DATA.glob("*.json")):
        reader = READERS.get(path.stem)
        if reader is None:
            raise SystemExit(f"{path}: no reader for this data set in benchmarks/validation.py")
        cases += reader(json.loads(path.read_text(encoding="utf-8")))
    return cases


def predict(case: SinkCase, options: ModelOptions) -> tuple[np.ndarray, np.ndarray]:
    return model_at(case.geometry, case.conductivity, case.air, options, case.flow)


def errors(case: SinkCase, options: ModelOptions) -> dict[str, np.ndarray]:
    """Model error in % at each measured point, per quantity (NaN where not measured)."""
    dp, r = predict(case, options)
    return {"pressure_drop": 100 * (dp / case.pressure_drop - 1),
            "thermal_resistance": 100 * (r / case.thermal_resistance - 1)}


def band(err: np.ndarray) -> tuple[float, float, float]:
    """(lowest, highest, mean absolute) error of the measured points [%]."""
    e = err[np.isfinite(err)]
    return float(e.min()), float(e.max()), float(np.mean(np.abs(e)))


def held_out(case: SinkCase) -> dict:
    """Fit on the points of even index, predict the odd ones: RMS error before and after."""
    out = {}
    for kind in ("pressure_drop", "thermal_resistance"):
        measured = getattr(case, kind)
        idx = np.flatnonzero(np.isfinite(measured))
        if len(idx) < 6:
            continue
        train, test = idx[::2], idx[1::2]

        def subset(i):
            nan = np.full(len(i), np.nan)
            return Measurements(case.flow[i], measured[i] if kind == "pressure_drop" else nan,
                                measured[i] if kind == "thermal_resistance" else nan)

        fit = fit_calibration(case.geometry, case.conductivity, case.air, ModelOptions(),
                              subset(train))
        k = 0 if kind == "pressure_drop" else 1
        before = predict(case, ModelOptions())[k][test]
        after = predict(case, fit.options(ModelOptions()))[k][test]
        rms = lambda m: float(np.sqrt(np.mean((m / measured[test] - 1) ** 2)) * 100)  # noqa: E731
        out[kind] = {"train": len(train), "test": len(test), "fit": fit,
                     "rms_before": rms(before), "rms_after": rms(after)}
    return out


def _f(x: float, digits: int = 4) -> str:
    return f"{x:.{digits}g}"


QUANTITY = {"pressure_drop": ("pressure drop", "Pa"),
            "thermal_resistance": ("thermal resistance (base to inlet air)", "K/W")}


def markdown(cases: list[SinkCase]) -> str:
    out = ["# Validation against measured heatsinks", "",
           "Generated by `python benchmarks/validation.py` from the data sets in `tests/data/`; "
           "do not edit by hand (a test fails when this file and the data disagree). The model "
           "and its options are described in [theory.md](theory.md); what calibration does in "
           "[theory.md](theory.md#calibration-from-measurements).", "",
           "Error = (model − measured)/measured. A band is the lowest and highest error over the "
           "set's points; |e| is the mean absolute error.", ""]
    out += ["## Summary", "",
            "| data set | sink | quantity | points | default model band | mean abs. error |",
            "|---|---|---|---|---|---|"]
    for c in cases:
        e = errors(c, ModelOptions())
        for q, (name, _) in QUANTITY.items():
            if np.isfinite(getattr(c, q)).any():
                lo, hi, mae = band(e[q])
                out.append(f"| {c.set_name} | {c.sink_id} | {name} | "
                           f"{int(np.isfinite(getattr(c, q)).sum())} | {lo:+.1f} … {hi:+.1f} % | "
                           f"{mae:.1f} % |")
    out += ["", "What is not covered yet: no measured set with **bypass** (an unducted sink with "
            "tip or side clearance) and only one sink geometry, so the bands below say nothing "
            "about other fin gaps, aspect ratios or the bypass model (labelled ±30 %, from "
            "memory). More sets are wanted; see `tests/data/README.md` for the leads.", ""]
    for c in cases:
        out += [f"## {c.set_name}: {c.sink_id}", "", c.citation, "",
                f"Geometry: W {_f(float(c.geometry.width[0]) * 1e3)} mm × L "
                f"{_f(float(c.geometry.length[0]) * 1e3)} mm, {int(c.geometry.n_fins[0])} fins "
                f"{_f(float(c.geometry.fin_height[0]) * 1e3)} mm high and "
                f"{_f(float(c.geometry.fin_thickness[0]) * 1e3)} mm thick, base "
                f"{_f(float(c.geometry.base_thickness[0]) * 1e3)} mm. Flow: {c.flow_rule}.", "",
                "Assumptions (the paper does not state these):", ""]
        out += [f"- {a}" for a in c.assumptions]
        out.append("")
        for q, (name, unit) in QUANTITY.items():
            measured = getattr(c, q)
            keep = np.isfinite(measured)
            if not keep.any():
                continue
            variants = [(label, dataclasses.replace(ModelOptions(), **kw)) for label, kw in VARIANTS
                        if not kw or set(kw) & AFFECTS[q]]
            errs = {label: errors(c, o)[q] for label, o in variants}
            model = predict(c, ModelOptions())[0 if q == "pressure_drop" else 1]
            out += [f"### Measured {name}", "",
                    "| velocity m/s | flow m³/h | measured " + unit + " | default model " + unit
                    + " | " + " | ".join(f"error: {label}" for label, _ in variants) + " |",
                    "|---" * (4 + len(variants)) + "|"]
            for i in np.flatnonzero(keep):
                out.append(f"| {c.velocity[i]:.2f} | {c.flow[i] * 3600:.4g} | "
                           f"{_f(measured[i])} | {_f(model[i])} | "
                           + " | ".join(f"{errs[label][i]:+.1f} %" for label, _ in variants) + " |")
            out += ["", "| model | band | mean abs. error |", "|---|---|---|"]
            for label, _ in variants:
                lo, hi, mae = band(errs[label])
                out.append(f"| {label} | {lo:+.1f} … {hi:+.1f} % | {mae:.1f} % |")
            out.append("")
        out += _where_it_fails(c)
        ho = held_out(c)
        if ho:
            out += ["### Calibration on held-out points", "",
                    "Multipliers fitted on the points of even index (`sinkopt calibrate`'s fit), "
                    "the points of odd index predicted:", "",
                    "| quantity | fitted on | predicted | multipliers (95 % interval) | "
                    "RMS error before | RMS error after |", "|---|---|---|---|---|---|"]
            for q, r in ho.items():
                fit = r["fit"]
                mult = ", ".join(f"{k} {fit.multipliers[k]:.3f} ({fit.intervals[k][0]:.3f}…"
                                 f"{fit.intervals[k][1]:.3f})" for k in fit.fitted)
                out.append(f"| {QUANTITY[q][0]} | {r['train']} | {r['test']} | {mult} | "
                           f"{r['rms_before']:.1f} % | {r['rms_after']:.1f} % |")
            out.append("")
    return "\n".join(out).rstrip() + "\n"


def _where_it_fails(c: SinkCase) -> list[str]:
    """A plain statement, computed from the errors, of where the default model fails."""
    e = errors(c, ModelOptions())
    lines = ["### Where the default model fails", ""]
    for q, (name, _) in QUANTITY.items():
        err = e[q]
        keep = np.isfinite(err)
        if not keep.any():
            continue
        v = c.velocity[keep]
        err = err[keep]
        worst = int(np.argmax(np.abs(err)))
        low, high = v < np.median(v), v >= np.median(v)
        trend = ("over-predicts" if err.mean() > 0 else "under-predicts")
        effect = {("pressure_drop", True): "conservative: a fan is matched to a higher system "
                                           "curve than the real one, so it delivers more air "
                                           "than predicted",
                  ("pressure_drop", False): "optimistic: the fan delivers less air than "
                                            "predicted",
                  ("thermal_resistance", True): "conservative: the real sink runs cooler",
                  ("thermal_resistance", False): "optimistic: the real sink runs hotter than "
                                                 "predicted, so keep the margin or calibrate"}
        lines.append(f"- {name.capitalize()}: {trend} on average ({err.mean():+.1f} %), "
                     f"{effect[q, bool(err.mean() > 0)]}; "
                     f"mean error {err[low].mean():+.1f} % at the lower half of the velocities, "
                     f"{err[high].mean():+.1f} % at the upper half; the worst point is "
                     f"{err[worst]:+.1f} % at {v[worst]:.2f} m/s.")
    lines.append("")
    return lines


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--check", action="store_true", help="exit 1 if docs/validation.md is stale")
    args = ap.parse_args(argv)
    text = markdown(load_cases())
    if args.check:
        current = DOC.read_text(encoding="utf-8") if DOC.is_file() else ""
        if current != text:
            print("docs/validation.md is out of date: run python benchmarks/validation.py")
            return 1
        print("docs/validation.md is up to date")
        return 0
    DOC.write_text(text, encoding="utf-8")
    print(f"wrote {DOC.relative_to(ROOT)}")
    return 0


if __name__ == "__main__":
    sys.exit(main())

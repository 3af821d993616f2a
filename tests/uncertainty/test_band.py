"""The uncertainty band (sinkopt.model.uncertainty) against first-order error propagation, its
bounds, its reproducibility, and the robust search it enables.

Outside reference: the law of propagation of uncertainty, JCGM 100:2008 (GUM), eq. 10, for
independent inputs; the standard deviation of a uniform distribution of half-width a is a/√3
(GUM 4.3.7).
"""
import dataclasses
import json
from pathlib import Path

import numpy as np
import pytest

from sinkopt.cli.main import main
from sinkopt.model.design import Perturbation
from sinkopt.model.system import evaluate_params
from sinkopt.model.uncertainty import junction_band
from sinkopt.model.uncertainty_spec import DEFAULT_UNCERTAINTY, InputUncertainty
from sinkopt.study.reader import load_study

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "studies" / "demo_inverter.toml"
DESIGN = {"width_mm": 100, "length_mm": 100, "fin_height_mm": 30, "fin_thickness_mm": 1.5,
          "n_fins": 18, "base_thickness_mm": 6, "fan": "demo-axial-80-stall", "fan_speed": 1.0}
NONE = InputUncertainty(0.0, "uniform")


@pytest.fixture(scope="module")
def demo():
    return load_study(DEMO)


def _only(**inputs):
    base = {k: NONE for k in DEFAULT_UNCERTAINTY.inputs()}
    base.update(inputs)
    return dataclasses.replace(DEFAULT_UNCERTAINTY, **base)


def test_monte_carlo_matches_first_order_propagation_on_one_resistance(demo):
    """One device; only its loss P (±10 % uniform) and R_jc (±15 % uniform) uncertain. At a
    fixed flow the junction rise is P (R_jc + R_o): first order, σ² = (ΔT σ_P/P)² +
    (P R_jc σ_R/R_jc)²; the mean is the nominal rise (both inputs symmetric, independent)."""
    one = dataclasses.replace(demo, devices=demo.devices[:1])
    spec = _only(power=InputUncertainty(0.10, "uniform"), r_jc=InputUncertainty(0.15, "uniform"))
    band = junction_band(one, [DESIGN], spec, samples=4000, seed=7)
    nominal = evaluate_params(one, [DESIGN], spreading="exact").evaluation
    rise = float(nominal.junction_C[0, 0]) - one.conditions.ambient_C
    p = one.devices[0].power
    r_jc = one.devices[0].r_jc
    sigma = np.hypot(rise * 0.10 / np.sqrt(3), p * r_jc * 0.15 / np.sqrt(3))
    # the band's samples, rebuilt: median and percentiles of a symmetric, nearly normal sum
    assert band.median_C[0, 0] - one.conditions.ambient_C == pytest.approx(rise, rel=0.01)
    p95_rise = band.p95_C[0, 0] - float(nominal.junction_C[0, 0])
    # the sum of two uniforms is close to normal: P95 ≈ 1.645 σ (within 5 %)
    assert p95_rise == pytest.approx(1.645 * sigma, rel=0.05)
    # and the pessimistic corner is at P +10 %, R_jc +15 % exactly
    corner = one.conditions.ambient_C + 1.10 * (rise + p * r_jc * 0.15)
    assert band.pessimistic_C[0, 0] == pytest.approx(corner, rel=1e-6)
    # sensitivity: the two inputs share the variance as their first-order terms say
    s = band.sensitivity[0]
    expected_power = (rise * 0.10) ** 2 / ((rise * 0.10) ** 2 + (p * r_jc * 0.15) ** 2)
    assert s["device losses"] == pytest.approx(expected_power, abs=0.05)


def test_the_pessimistic_corner_bounds_the_monte_carlo_p99(demo):
    rng = np.random.default_rng(3)
    designs = [dict(DESIGN, width_mm=float(w), fin_height_mm=float(h), n_fins=int(n),
                    fan=str(f), fan_speed=float(s))
               for w, h, n, f, s in zip(rng.uniform(80, 140, 20), rng.uniform(20, 50, 20),
                                        rng.integers(10, 26, 20),
                                        rng.choice(["demo-axial-80-stall", "demo-axial-60 x2",
                                                    "demo-axial-120"], 20),
                                        rng.uniform(0, 1, 20))]
    band = junction_band(demo, designs, DEFAULT_UNCERTAINTY, samples=1000)
    ok = np.isfinite(band.p99_C)
    assert ok.any()
    assert np.all(band.p99_C[ok] <= band.pessimistic_C[ok] + 1e-9)
    assert np.all(band.median_C[ok] <= band.p95_C[ok]) and np.all(band.p95_C[ok] <= band.p99_C[ok])


def test_a_seeded_band_is_reproducible(demo):
    a = junction_band(demo, [DESIGN], DEFAULT_UNCERTAINTY, samples=500, seed=11)
    b = junction_band(demo, [DESIGN], DEFAULT_UNCERTAINTY, samples=500, seed=11)
    c = junction_band(demo, [DESIGN], DEFAULT_UNCERTAINTY, samples=500, seed=12)
    np.testing.assert_array_equal(a.p95_C, b.p95_C)
    assert a.sensitivity == b.sensitivity
    assert not np.array_equal(a.p95_C, c.p95_C)


def test_fan_flow_uncertainty_equals_a_fan_curve_scaled_in_flow(tmp_path):
    """Fan laws: the curve's flow × c at every pressure is the fan at speed c·s in air of
    density ρ/c². Checked against the same fan file with its flow column multiplied by 1.1."""
    fan = (ROOT / "catalogs" / "fans" / "demo-axial-60.csv").read_text().splitlines()
    scaled, header_seen = [], False
    for line in fan:
        if line.startswith("#") or not line.strip():
            scaled.append(line)
        elif not header_seen:
            scaled.append(line)
            header_seen = True
        else:
            q, *rest = line.split(",")
            scaled.append(",".join([repr(float(q) * 1.1), *rest]))
    fans = tmp_path / "fans"
    fans.mkdir()
    (fans / "base.csv").write_text("\n".join(fan) + "\n")
    (fans / "scaled.csv").write_text("\n".join(scaled) + "\n")
    text = DEMO.read_text().replace('"../catalogs/fans/*.csv"', '"fans/*.csv"')
    (tmp_path / "s.toml").write_text(text)
    problem = load_study(tmp_path / "s.toml")
    d = dict(DESIGN, fan="base", fan_speed=0.7)
    perturbed = evaluate_params(problem, [d], perturb=Perturbation(fan_flow=np.array([1.1])))
    reference = evaluate_params(problem, [dict(d, fan="scaled")])
    assert perturbed.flow_total[0] == pytest.approx(reference.flow_total[0], rel=1e-8)
    assert perturbed.evaluation.junction_C == pytest.approx(reference.evaluation.junction_C,
                                                            rel=1e-8)


def _robust_study(tmp_path, basis: str) -> Path:
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    text = text.replace("[constraints]\n", f'[constraints]\nmargin_basis = "{basis}"\n', 1)
    path = tmp_path / f"{basis}.toml"
    path.write_text(text)
    return path


def test_a_robust_front_keeps_its_margin_at_the_pessimistic_corner(tmp_path):
    out = tmp_path / "res"
    assert main(["run", str(_robust_study(tmp_path, "pessimistic")), "--trials", "80",
                 "--seed", "2", "--out", str(out), "--no-report", "--no-progress"]) == 0
    import pandas as pd

    front = pd.read_csv(out / "pareto.csv")
    assert len(front) > 0
    limit = 10.0  # the demo's min_junction_margin_K
    assert (front["pessimistic_margin_K"] >= limit - 1e-9).all()
    # the band's own corner (exact series) says the same
    assert (front["corner_margin_K"] >= limit - 1e-3).all()
    rec = json.loads(next((out / "designs").glob("*.json")).read_text())
    assert rec["margin_basis"] == "pessimistic" and "uncertainty" in rec


def test_p95_basis_is_close_to_the_monte_carlo(demo):
    """First-order p95 margin against the Monte-Carlo 5th percentile of the margin: the same
    quantity by two methods (within 1.5 K on the demo design)."""
    study = dataclasses.replace(demo, limits=dataclasses.replace(demo.limits, margin_basis="p95"))
    first_order = evaluate_params(study, [DESIGN], spreading="exact").basis_margin[0]
    band = junction_band(demo, [DESIGN], DEFAULT_UNCERTAINTY, samples=2000)
    assert first_order == pytest.approx(band.p95_margin[0], abs=1.5)


@pytest.mark.parametrize("table,message", [
    ('heat_transfer = { size = 0.1, distribution = "lognormal" }', 'unknown value "lognormal"'),
    ("pressure_drop = 1.5", "must be <= 0.9"),
    ("power_correlation = 2", "must be <= 1"),
    ("samples = 10", "must be >= 100"),
    ("spread = 0.1", "unknown key"),
])
def test_bad_uncertainty_tables_are_named(tmp_path, capsys, table, message):
    text = DEMO.read_text().replace("../catalogs/", str(ROOT / "catalogs") + "/")
    path = tmp_path / "u.toml"
    path.write_text(text + f"\n[uncertainty]\n{table}\n")
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert "uncertainty." in err and message in err


def test_bad_margin_basis_is_named(tmp_path, capsys):
    assert main(["check", str(_robust_study(tmp_path, "p99"))]) == 2
    assert "constraints.margin_basis" in capsys.readouterr().err

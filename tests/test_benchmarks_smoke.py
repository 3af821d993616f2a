"""Smoke runs of the benchmarks, so they cannot rot. They check agreement, not speed."""
import importlib.util
import sys
from pathlib import Path

import pytest

BENCHMARKS = Path(__file__).resolve().parents[1] / "benchmarks"


def _load(name):
    sys.path.insert(0, str(BENCHMARKS))
    try:
        spec = importlib.util.spec_from_file_location(f"_bench_{name}", BENCHMARKS / f"{name}.py")
        module = importlib.util.module_from_spec(spec)
        spec.loader.exec_module(module)
        return module
    finally:
        sys.path.remove(str(BENCHMARKS))


def test_throughput_smoke():
    pytest.importorskip("ht")
    pytest.importorskip("fluids")
    throughput = _load("throughput")
    out = throughput.main(["--designs", "2000", "--scalar", "50", "--chunk", "1000",
                           "--cpu", "-1", "--quiet"])
    paths = {(r["path"], r["spreading"]) for r in out["rows"]}
    assert paths == {(p, s) for p in ("vectorised", "scalar reference") for s in ("fast", "coarse")}
    for spreading, errors in out["errors"].items():
        assert errors["compared"] >= 40, spreading  # designs with an operating point compared
        assert errors["flow rel"] <= throughput.RTOL_FLOW
    assert out["peak_rss_mib"] < throughput.PEAK_RSS_LIMIT_MiB


def test_search_quality_smoke(capsys):
    """The search-quality benchmark end to end on tiny budgets: tables printed, fractions sane."""
    pytest.importorskip("moocore")
    import re

    search_quality = _load("search_quality")
    code = search_quality.main(["--studies", "demo_inverter", "--schemes", "tpe-refine", "random",
                                "--seeds", "1", "--budgets", "16", "32", "--sweep", "11",
                                "--times", "5"])
    out = capsys.readouterr().out
    assert code == 0
    rows = re.findall(r"^\| (tpe-refine|random) \| ([0-9.]+) \| ([0-9.]+) \|", out, re.M)
    assert len(rows) == 2
    for _, a, b in rows:
        assert 0.0 <= float(a) <= float(b) <= 1.0 + 1e-12  # HV can only grow with evaluations


def test_uncertainty_benchmark_smoke():
    """The band's fast form agrees with the exact series on the same draws (a check of
    agreement, not of speed)."""
    bench = _load("uncertainty")
    out = bench.main(["--trials", "40", "--samples", "100", "--check-designs", "3",
                      "--check-samples", "20", "--quiet"])
    assert out["front"] > 0
    assert out["error_corrected_K"][0] < 0.05  # K: the correction leaves a few mK
    assert out["error_corrected_K"][0] <= out["error_uncorrected_K"][0]

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

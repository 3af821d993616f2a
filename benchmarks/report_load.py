"""Size and load time of the demo's ``report.html`` in headless Chromium.

Builds the 300-trial demo report (``sinkopt run studies/demo_inverter.toml --out DIR --seed 1``)
unless ``--report`` names an existing page, then opens it ``--loads`` times, each in a fresh
Chromium (own profile: no cache or code cache shared between loads), and prints the file size and
the median time to the page's ready state (``<body data-ready>``: plotly.js loaded, the 2-D front
and the table drawn).

Times per load: ``wall`` from the navigation request to the ready attribute seen by the driver
(includes playwright's round trips); ``page`` the page's own ``performance.now()`` at ready
(``data-ready-ms``; from the navigation start), when the page records it; ``first paint`` the
browser's first-contentful-paint time (the header, inputs and, once the script has run, the
Pareto table show before the plots).

Chromium is Debian's (``/usr/bin/chromium``; never ``playwright install``), driven by playwright's
Python API, with the flags of ``tests/report/test_report_browser.py`` (no GPU, WebGL off: the 3-D
view and the parallel coordinates are drawn after ready and are not timed).

    python benchmarks/report_load.py                    # build the demo in a temp folder
    python benchmarks/report_load.py --out /tmp/demo    # keep the results folder
    python benchmarks/report_load.py --report /tmp/demo/report.html --loads 9
"""
from __future__ import annotations

import argparse
import shutil
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
FLAGS = ["--no-sandbox", "--headless", "--disable-gpu", "--disable-dev-shm-usage",
         "--disable-background-networking", "--disable-component-update", "--no-first-run",
         "--disable-software-rasterizer"]


def build_demo(out: Path, trials: int | None = None, seed: int = 1) -> Path:
    """Run the demo study into ``out``; return the path of its report.html."""
    from sinkopt.cli.main import main

    args = ["run", str(DEMO), "--out", str(out), "--seed", str(seed), "--no-progress"]
    if trials:
        args += ["--trials", str(trials)]
    code = main(args)
    if code != 0:
        raise SystemExit(f"sinkopt {' '.join(args)} exited {code}")
    return out / "report.html"


def load_times(report: Path, loads: int = 5, chromium: str | None = None,
               timeout_ms: float = 60000) -> list[dict[str, float | None]]:
    """Open ``report`` ``loads`` times, each in a fresh browser; per load the wall and in-page
    times to ready and the first contentful paint [ms]."""
    from playwright.sync_api import sync_playwright

    chromium = chromium or shutil.which("chromium") or "/usr/bin/chromium"
    out = []
    with sync_playwright() as p, tempfile.TemporaryDirectory() as tmp:
        for k in range(loads):
            ctx = p.chromium.launch_persistent_context(
                str(Path(tmp) / f"profile{k}"), executable_path=chromium, headless=True,
                args=FLAGS, viewport={"width": 1280, "height": 900})
            try:
                page = ctx.new_page()
                t0 = time.perf_counter()
                page.goto(report.resolve().as_uri(), wait_until="commit")
                page.wait_for_selector("body[data-ready]", state="attached", timeout=timeout_ms)
                wall = (time.perf_counter() - t0) * 1e3
                own = page.evaluate("document.body.getAttribute('data-ready-ms')")
                fcp = page.evaluate("""() => {
                    const e = performance.getEntriesByName('first-contentful-paint')[0];
                    return e ? e.startTime : null; }""")
                out.append({"wall_ms": wall, "page_ms": None if own is None else float(own),
                            "paint_ms": fcp})
            finally:
                ctx.close()
    return out


def summary(report: Path, times: list[dict[str, float | None]]) -> str:
    size = report.stat().st_size
    wall = statistics.median(t["wall_ms"] for t in times)
    own = [t["page_ms"] for t in times if t["page_ms"] is not None]
    lines = [f"report: {report}",
             f"size: {size} bytes ({size / 1e6:.2f} MB)",
             f"loads: {len(times)}",
             f"ready, wall (median): {wall:.0f} ms   all: "
             + ", ".join(f"{t['wall_ms']:.0f}" for t in times)]
    if own:
        lines.append(f"ready, in page (median): {statistics.median(own):.0f} ms   all: "
                     + ", ".join(f"{v:.0f}" for v in own))
    paint = [t["paint_ms"] for t in times if t["paint_ms"] is not None]
    if paint:
        lines.append(f"first contentful paint (median): {statistics.median(paint):.0f} ms   all: "
                     + ", ".join(f"{v:.0f}" for v in paint))
    return "\n".join(lines)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--report", type=Path, help="an existing report.html (default: build the demo)")
    ap.add_argument("--out", type=Path, help="results folder of the demo run (default: temp)")
    ap.add_argument("--trials", type=int, help="trials of the demo run (default: the study's)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--loads", type=int, default=5)
    ap.add_argument("--chromium", help="Chromium executable (default: chromium on PATH)")
    a = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        report = a.report
        if report is None:
            out = a.out or Path(tmp) / "demo"
            t0 = time.perf_counter()
            report = build_demo(out, a.trials, a.seed)
            print(f"demo run and report: {time.perf_counter() - t0:.1f} s", file=sys.stderr)
        print(summary(report, load_times(report, a.loads, a.chromium)))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())

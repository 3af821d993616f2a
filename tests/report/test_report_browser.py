"""report.html in a real browser: headless Chromium driven by playwright (never
``playwright install``: the system Chromium from ``.ci/install-browser`` is used).

Screenshots go to ``<repo>/ci-artifacts/`` and their paths are printed (CI keeps them).
Most checks run with WebGL turned off (software WebGL takes ~10 s per page for the 3-D and
parallel-coordinates views); one test draws those views with software WebGL.
"""
import json
import os
import shutil
from pathlib import Path

import pandas as pd
import pytest

from report_cases import HOSTILE_DEVICE, HOSTILE_FAN, HOSTILE_STUDY, ROOT

pytestmark = pytest.mark.browser

CHROMIUM = shutil.which("chromium") or ("/usr/bin/chromium" if os.access("/usr/bin/chromium",
                                                                        os.X_OK) else None)
if CHROMIUM is None:
    pytest.skip("chromium is not installed (run `bash .ci/install-browser`; CI installs it)",
                allow_module_level=True)
sync_api = pytest.importorskip(
    "playwright.sync_api", reason="playwright is not installed (pip install -e '.[test]')")

ARTIFACTS = ROOT / "ci-artifacts"
#: Chromium flags: root needs --no-sandbox; no GPU, no shared-memory limits, no background
#: traffic, no first-run work.
FLAGS = ["--no-sandbox", "--headless", "--disable-gpu", "--disable-dev-shm-usage",
         "--disable-background-networking", "--disable-component-update", "--no-first-run"]
NO_WEBGL = ["--disable-software-rasterizer"]
LOCAL = ("file:", "data:", "blob:", "about:")


@pytest.fixture(scope="module")
def playwright():
    with sync_api.sync_playwright() as p:
        yield p


class Page:
    """A fresh browser (own user-data-dir) with one page that records errors, dialogs and every
    request leaving the file."""

    def __init__(self, playwright, user_dir: Path, webgl: bool, width: int = 1280):
        self.ctx = playwright.chromium.launch_persistent_context(
            str(user_dir), executable_path=CHROMIUM, headless=True,
            args=FLAGS + ([] if webgl else NO_WEBGL), viewport={"width": width, "height": 900})
        self.page = self.ctx.new_page()
        self.errors, self.dialogs, self.remote = [], [], []
        self.page.on("pageerror", lambda e: self.errors.append(f"pageerror: {e}"))
        self.page.on("console", lambda m: self.errors.append(f"console: {m.text}")
                     if m.type == "error" else None)
        self.page.on("dialog", self._dialog)
        self.page.on("request", lambda r: None if r.url.startswith(LOCAL)
                     else self.remote.append(r.url))

    def _dialog(self, d):
        self.dialogs.append(d.message)
        d.dismiss()

    def open(self, path: Path):
        self.page.goto(path.resolve().as_uri())
        self.page.wait_for_selector("body[data-ready]", state="attached", timeout=30000)
        return self.page

    def assert_clean(self):
        assert self.dialogs == [], f"the page opened dialogs: {self.dialogs}"
        assert self.remote == [], f"the page made network requests: {self.remote}"
        assert self.errors == [], self.errors

    def close(self):
        self.ctx.close()


@pytest.fixture
def browser(playwright, tmp_path):
    pages = []

    def make(webgl=False, width=1280):
        p = Page(playwright, tmp_path / f"profile{len(pages)}", webgl, width)
        pages.append(p)
        return p

    yield make
    for p in pages:
        p.close()


def _shot(page, name, element=None):
    ARTIFACTS.mkdir(exist_ok=True)
    path = ARTIFACTS / name
    if element:
        page.locator(element).screenshot(path=str(path))
    else:
        page.screenshot(path=str(path), full_page=True)
    print("screenshot:", path)
    return path


def _click_pareto_point(page, k=0):
    """Click the k-th drawn Pareto point of the 2-D plot; return its trial number."""
    traces = page.evaluate("""() => document.getElementById('pareto2d')._fullData
        .map((t, i) => [i, t.meta]).filter(x => x[1] === 'pareto').map(x => x[0])""")
    assert traces, "no Pareto trace drawn"
    groups = page.locator("#pareto2d .scatterlayer .trace")
    points = []
    for i in traces:
        n = groups.nth(i).locator(".point").count()
        points += [(i, j) for j in range(n)]
    i, j = points[k % len(points)]
    trial = page.evaluate(f"document.getElementById('pareto2d')._fullData[{i}].customdata[{j}]")
    box = groups.nth(i).locator(".point").nth(j).bounding_box()
    page.mouse.move(box["x"] + box["width"] / 2, box["y"] + box["height"] / 2)
    page.mouse.click(box["x"] + box["width"] / 2, box["y"] + box["height"] / 2)
    page.wait_for_selector(f"#design-panel[data-trial='{int(trial)}'] #design-title")
    return int(trial)


def test_demo_report_in_browser(browser, demo_dir):
    b = browser()
    page = b.open(demo_dir / "report.html")
    data = json.loads(page.text_content("#sinkopt-data"))
    pareto = pd.read_csv(demo_dir / "pareto.csv").set_index("trial")

    # every plotted trial is an SVG point of the 2-D plot (Scatter, not Scattergl)
    n_points = page.locator("#pareto2d .point").count()
    assert n_points > 0
    assert n_points == data["summary"]["trials"] - data["summary"]["not_plotted"]

    # click a Pareto point: the panel shows that design's numbers, as in pareto.csv
    trial = _click_pareto_point(page, k=1)
    assert trial in pareto.index
    assert page.text_content("#design-title") == f"Trial {trial}"
    row = pareto.loc[trial]
    for key, column, factor in (("volume_cm3", "volume_cm3", 1), ("fan_power_W", "fan_power_W", 1),
                                ("worst_margin_K", "worst_margin_K", 1),
                                ("airflow_m3_s", "airflow_m3_s", 3600),
                                ("width_mm", "width_mm", 1), ("n_fins", "n_fins", 1)):
        shown = float(page.text_content(f"#design-panel [data-key={key}] .v"))
        assert shown == pytest.approx(row[column] * factor, rel=1e-3), key
    assert f"fan: {row['fan']}" in page.text_content("#design-panel .dhead")
    # per-device table, drawings, fan/system curves and breakdown are there
    names = page.locator("#design-devices tbody tr td:first-child").all_text_contents()
    assert names == [d["name"] for d in data["inputs"]["devices"]]
    svgs = page.locator("#design-panel svg.sink")
    assert svgs.count() == 2
    front = data["designs"][str(trial)]["drawing"]["front"]
    assert float(svgs.nth(0).get_attribute("width")) == pytest.approx(front["width_px"], abs=0.1)
    assert page.locator("#fan-system .scatterlayer .trace").count() >= 3
    assert page.locator("#breakdown .barlayer .point").count() >= len(names)
    assert page.text_content("#evaluate-command").startswith("sinkopt evaluate ")
    page.click("#design-panel button.copy")
    page.wait_for_function(
        "document.querySelector('#design-panel .copied').textContent.length > 0")
    _shot(page, "report-design-panel.png", "#design")

    # sortable table: a header click sorts, a second reverses; a row opens its design
    header = page.locator("#pareto-table thead th", has_text="sink volume")
    col = page.evaluate("""() => [...document.querySelectorAll('#pareto-table thead th')]
        .findIndex(th => th.textContent.includes('sink volume'))""")

    def column():
        return [float(v) for v in page.evaluate(
            f"""() => [...document.querySelectorAll('#pareto-table tbody tr')]
            .map(tr => tr.cells[{col}].getAttribute('data-v'))""")]

    header.locator("button").click()
    assert header.get_attribute("aria-sort") == "ascending"
    assert column() == sorted(column())
    header.locator("button").click()
    assert header.get_attribute("aria-sort") == "descending"
    assert column() == sorted(column(), reverse=True)
    first = page.locator("#pareto-table tbody tr").first
    other = int(first.get_attribute("data-trial"))
    first.click()
    page.wait_for_selector(f"#design-panel[data-trial='{other}']")
    assert page.text_content("#design-title") == f"Trial {other}"

    # the infeasible switch removes the grey points
    before = page.locator("#pareto2d .point").count()
    page.uncheck("#chk-infeasible")
    assert page.locator("#pareto2d .point").count() == before - sum(
        1 for s, t in zip(data["pareto"]["points"]["status"], data["pareto"]["points"]["trial"])
        if s == "infeasible" and all(v[data["pareto"]["points"]["trial"].index(t)] is not None
                                     for v in list(data["pareto"]["points"]["objectives"]
                                                   .values())[:2]))
    page.check("#chk-infeasible")
    # the WebGL views say they need WebGL (turned off here) instead of failing
    page.wait_for_selector("#pareto3d[data-drawn]", state="attached")
    page.locator("#parcoords").scroll_into_view_if_needed()
    page.wait_for_selector("#parcoords[data-drawn]", state="attached")
    page.evaluate("window.scrollTo(0, 0)")
    _shot(page, "report-demo.png")
    b.assert_clean()


def test_hostile_names_stay_text_in_browser(browser, hostile_dir):
    b = browser()
    page = b.open(hostile_dir / "report.html")
    assert page.title() == f"sinkopt report: {HOSTILE_STUDY}"
    assert page.text_content("h1 .study") == HOSTILE_STUDY
    cells = page.locator("table.devices td").all_text_contents()
    assert HOSTILE_DEVICE in cells
    legend = page.locator("#pareto2d .legendtext").all_text_contents()
    assert HOSTILE_FAN in legend  # plotly shows the escaped label as the text it is
    page.locator("#pareto-table tbody tr").first.click()
    page.wait_for_selector("#design-title")
    names = page.locator("#design-devices tbody tr td:first-child").all_text_contents()
    assert names[-1] == HOSTILE_DEVICE
    plan = page.locator("#design-panel svg.sink").nth(1).text_content()
    assert HOSTILE_DEVICE in plan
    # hover labels (plotly's pseudo-HTML) show the hostile fan label as text
    hovers = []
    page.locator("#pareto2d").scroll_into_view_if_needed()
    points = page.locator("#pareto2d .scatterlayer .point")
    for k in range(min(points.count(), 40)):
        box = points.nth(k).bounding_box()
        page.mouse.move(box["x"] + box["width"] / 2, box["y"] + box["height"] / 2)
        page.wait_for_timeout(30)
        label = page.locator("#pareto2d .hoverlayer .hovertext")
        if label.count():
            hovers.append(label.first.text_content())
        if any(HOSTILE_FAN in h for h in hovers):
            break
    assert any(f"fan {HOSTILE_FAN}" in h for h in hovers), hovers[:3]
    page.wait_for_timeout(200)
    # nothing the names carry became an element
    assert page.evaluate("document.querySelectorAll('script').length") == 4
    assert page.evaluate("document.querySelectorAll('img, iframe, object, embed').length") == 0
    _shot(page, "report-hostile-names.png")
    b.assert_clean()


@pytest.mark.slow
def test_webgl_views_draw(browser, demo_dir):
    """3-D Pareto view and parallel coordinates with software WebGL (a narrow window: software
    rendering time grows with the pixels drawn)."""
    b = browser(webgl=True, width=900)
    page = b.open(demo_dir / "report.html")
    if page.evaluate("document.body.getAttribute('data-webgl')") == "no" or page.evaluate(
            "!document.createElement('canvas').getContext('webgl')"):
        pytest.skip("this Chromium has no WebGL, not even software")
    page.wait_for_selector("#pareto3d[data-drawn]", state="attached", timeout=60000)
    assert page.get_attribute("#pareto3d", "data-drawn") == "yes"
    assert page.locator("#pareto3d .gl-container canvas").count() >= 1
    page.locator("#parcoords").scroll_into_view_if_needed()
    page.wait_for_selector("#parcoords[data-drawn]", state="attached", timeout=60000)
    assert page.get_attribute("#parcoords", "data-drawn") == "yes"
    data = json.loads(page.text_content("#sinkopt-data"))
    n_dims = len(data["parcoords"]["dimensions"])
    assert page.locator("#parcoords .axis-title").count() == n_dims
    _shot(page, "report-webgl-views.png", "#all-trials")
    b.errors = [e for e in b.errors if "GL Driver Message" not in e and "WebGL" not in e]
    b.assert_clean()

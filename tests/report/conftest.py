"""Fixtures of the report tests: a short demo run and a run of a study whose names are hostile
HTML, each a results folder with report.html written by ``sinkopt run``."""
import json
import shutil

import optuna
import pytest

from sinkopt.cli.main import main
from sinkopt.results.collect import collect_results
from sinkopt.search.storage import storage_for
from sinkopt.study.reader import load_study

from report_cases import (DEMO, FANS, HOSTILE_DEVICE, HOSTILE_FAN, HOSTILE_FAN_NAME,
                          HOSTILE_STUDY)


def _run(args):
    code = main(["run", *args, "--no-progress"])
    assert code == 0, f"sinkopt run {' '.join(args)} exited {code}"


@pytest.fixture(scope="session")
def demo_dir(tmp_path_factory):
    """The demo study, 60 trials of the random sampler (fast, and independent of the search
    algorithm's tuning), seed 2: results folder with report.html."""
    out = tmp_path_factory.mktemp("report_demo")
    _run([str(DEMO), "--out", str(out), "--trials", "60", "--seed", "2", "--sampler", "random"])
    return out


@pytest.fixture(scope="session")
def demo_results(demo_dir):
    problem = load_study(DEMO)
    study = optuna.load_study(study_name=problem.name, storage=storage_for(demo_dir))
    return collect_results(problem, study)


@pytest.fixture(scope="session")
def demo_info(demo_dir):
    return json.loads((demo_dir / "run.json").read_text())


@pytest.fixture(scope="session")
def hostile_dir(tmp_path_factory):
    """The demo study with a device, the study and a fan named as HTML/script, 30 trials."""
    base = tmp_path_factory.mktemp("report_hostile")
    fans = base / "fans"
    fans.mkdir()
    shutil.copy(FANS / "demo-axial-60.csv", fans / "demo-axial-60.csv")
    text = (FANS / "demo-axial-120.csv").read_text(encoding="utf-8")
    lines = [f"# name: {HOSTILE_FAN_NAME}" if ln.startswith("# name:") else ln
             for ln in text.splitlines()]
    (fans / f"{HOSTILE_FAN}.csv").write_text("\n".join(lines) + "\n", encoding="utf-8")
    study = DEMO.read_text(encoding="utf-8")
    for old, new in (('name = "demo inverter"', f"name = '{HOSTILE_STUDY}'"),
                     ('name = "B1"', f'name = "{HOSTILE_DEVICE}"'),
                     ('file = "../catalogs/fans/*.csv"', 'file = "fans/*.csv"')):
        assert old in study, old
        study = study.replace(old, new)
    path = base / "study.toml"
    path.write_text(study, encoding="utf-8")
    out = base / "out"
    _run([str(path), "--out", str(out), "--trials", "30", "--seed", "1", "--sampler", "random"])
    return out


@pytest.fixture(scope="session")
def demo300_dir(tmp_path_factory):
    """The demo study as its users first run it: 300 trials of the default sampler, seed 1
    (~10 s); results folder with report.html."""
    out = tmp_path_factory.mktemp("report_demo300")
    _run([str(DEMO), "--out", str(out), "--seed", "1"])
    return out


@pytest.fixture(scope="session")
def given_flow_dir(tmp_path_factory):
    """The demo study with a given airflow instead of fans (no fan curves, no fan power), 20
    trials: results folder with report.html."""
    base = tmp_path_factory.mktemp("report_given_flow")
    text = DEMO.read_text(encoding="utf-8")
    text = (text[:text.index("[air]")] + "[air]\nducted = true\nflow_m3_per_h = 60\n\n"
            + text[text.index("[objectives]"):])
    old = 'use = ["sink_volume", "fan_power", "junction_margin"]'
    assert old in text
    text = text.replace(old, 'use = ["sink_volume", "junction_margin"]')
    path = base / "given_flow.toml"
    path.write_text(text, encoding="utf-8")
    out = base / "out"
    _run([str(path), "--out", str(out), "--trials", "20", "--seed", "1", "--sampler", "random"])
    return out

"""Issue 16 item 4: a results folder holds one run. Resuming after the study changed, or running
another study into the folder, is refused (exit 2, naming what changed) unless asked: --new
starts afresh, --force resumes anyway; `sinkopt report` refuses to describe inputs other than
the run's. Rules of our own (common practice for reproducible results, no source)."""
import json
import shutil
from pathlib import Path

import pytest

from sinkopt.cli.main import main

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture()
def study(tmp_path):
    shutil.copytree(ROOT / "catalogs", tmp_path / "catalogs")
    shutil.copytree(ROOT / "studies", tmp_path / "studies")
    return tmp_path / "studies" / "demo_inverter.toml"


def _run(study, out, *extra):
    return main(["run", str(study), "--trials", "12", "--no-report", "--no-progress",
                 "--out", str(out), *extra])


def test_resuming_after_the_study_changed_is_refused(study, tmp_path, capsys):
    out = tmp_path / "res"
    assert _run(study, out) == 0
    assert _run(study, out, "--trials", "20") == 0  # unchanged: resumes
    study.write_text(study.read_text().replace("temperature_C = 45", "temperature_C = 50"))
    capsys.readouterr()
    assert _run(study, out, "--trials", "24") == 2
    err = capsys.readouterr().err
    assert "demo_inverter.toml (changed)" in err and "--new" in err and "--force" in err
    assert json.loads((out / "run.json").read_text())["n_trials"] == 20  # nothing written
    # the report rebuilds from the run's own copy of its inputs, not from the edited study
    assert main(["report", str(out)]) == 0
    page = (out / "report.html").read_text(encoding="utf-8")
    assert '"ambient_C":45' in page and '"ambient_C":50' not in page
    assert main(["report", str(out), "--study", str(study)]) == 0  # explicit: the user's choice
    assert _run(study, out, "--trials", "24", "--force") == 0


def test_another_study_into_the_folder_needs_new(study, tmp_path, capsys):
    out = tmp_path / "res"
    assert _run(study, out) == 0
    other = study.with_name("demo_mounting.toml")
    capsys.readouterr()
    assert _run(other, out) == 2
    assert "holds the results of another study" in capsys.readouterr().err
    assert _run(other, out, "--new") == 0
    info = json.loads((out / "run.json").read_text())
    assert info["study"] != "demo inverter"
    trials = (out / "trials.csv").read_text().splitlines()
    assert len(trials) - 1 == 12  # afresh: only the new study's trials

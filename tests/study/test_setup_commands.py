"""`sinkopt init` writes a starter study that `sinkopt check` accepts, and never overwrites."""
from __future__ import annotations

from sinkopt.cli.main import main


def test_init_then_check_passes(tmp_path, capsys):
    folder = tmp_path / "new"
    assert main(["init", str(folder)]) == 0
    assert (folder / "study.toml").is_file() and (folder / "fan_example.csv").is_file()
    assert "invented" in (folder / "fan_example.csv").read_text(encoding="utf-8")
    capsys.readouterr()
    assert main(["check", str(folder / "study.toml")]) == 0
    out = capsys.readouterr().out
    assert "study 'starter': valid" in out
    assert "fan_example, fan_example x2" in out
    assert "air density" in out and "R_cs" in out


def test_init_refuses_to_overwrite(tmp_path, capsys):
    (tmp_path / "study.toml").write_text("# mine\n", encoding="utf-8")
    assert main(["init", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert "refusing to overwrite" in err and "study.toml" in err
    assert (tmp_path / "study.toml").read_text(encoding="utf-8") == "# mine\n"
    assert not (tmp_path / "fan_example.csv").exists()


def test_check_prints_the_resolved_problem_in_si(study_dir, capsys):
    assert main(["check", str(study_dir / "study.toml")]) == 0
    out = capsys.readouterr().out
    assert "altitude 2000 m" in out
    assert "mounting 'pad': R_cs 0.6 K/W" in out
    assert "width_mm           float        50 .. 120 (0.05 m .. 0.12 m)" in out
    assert "free delivery 0.02778 m³/s" in out
    assert "maximize junction_margin" in out
    assert "junction margin >= 10 K" in out

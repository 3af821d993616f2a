"""``sinkopt fan check``: output in SI and file units, offline HTML plot, exit codes."""
from __future__ import annotations

import shutil

import pytest
from fan_helpers import CATALOG, write

from sinkopt.cli.main import main
from sinkopt.cli.fan import curve_plot_data, fan_curve_figure, format_curve
from sinkopt.fans import load_fan_curve


@pytest.fixture
def stall_csv(tmp_path):
    dst = tmp_path / "stall.csv"
    shutil.copy(CATALOG / "demo-axial-80-stall.csv", dst)
    return dst


def test_check_writes_no_plot_unless_asked(stall_csv, capsys):
    # issue 16 item 9: nothing is written beside the user's CSV by default
    assert main(["fan", "check", str(stall_csv)]) == 0
    assert sorted(p.name for p in stall_csv.parent.iterdir()) == ["stall.csv"]
    assert "plot written" not in capsys.readouterr().out


def test_check_writes_offline_html_where_asked(stall_csv, tmp_path, capsys):
    html = tmp_path / "plot.html"
    assert main(["fan", "check", str(stall_csv), "--plot", str(html)]) == 0
    assert html.exists() and not list(stall_csv.parent.glob("*.tmp"))
    text = html.read_text(encoding="utf-8")
    found = ["Demo axial 80 mm 12 V, stall dip" in text, "stall region" in text]
    assert found == [True, True]
    no_cdn = 'src="https://cdn.plot.ly' not in text
    assert no_cdn and len(text) > 1_000_000  # plotly.js embedded: works offline
    out = capsys.readouterr().out
    assert "stall region: below 0.0116667 m3/s (0.7 m3/min)" in out
    assert "flow [m3/s]" in out and "pressure [mmH2O]" in out and "flow [m3/min]" in out
    assert f"plot written to {html}" in out


def test_check_out_option_and_no_plot(stall_csv, tmp_path, capsys):
    out = tmp_path / "sub" / "p.html"
    out.parent.mkdir()
    assert main(["fan", "check", str(stall_csv), "--out", str(out)]) == 0
    assert out.exists() and not stall_csv.with_suffix(".html").exists()
    out.unlink()
    assert main(["fan", "check", str(stall_csv), "--no-plot"]) == 0
    assert sorted(p.name for p in tmp_path.rglob("*.html")) == []


def test_check_missing_output_folder_is_input_error(stall_csv, tmp_path, capsys):
    assert main(["fan", "check", str(stall_csv), "--out", str(tmp_path / "no" / "p.html")]) == 2
    assert "does not exist" in capsys.readouterr().err


def test_fan_without_subcommand_prints_help(capsys):
    assert main(["fan"]) == 2
    assert "check" in capsys.readouterr().err


@pytest.mark.parametrize("name", sorted(p.name for p in CATALOG.glob("*.csv")))
def test_check_every_catalog_file(name, tmp_path, capsys):
    src = tmp_path / name
    shutil.copy(CATALOG / name, src)
    assert main(["fan", "check", str(src), "--plot", str(tmp_path / "p.html")]) == 0
    assert (tmp_path / "p.html").exists()
    assert "invented demo data, not a real product" in capsys.readouterr().out


def test_table_prints_si_and_file_units(tmp_path):
    path = write(tmp_path, "# name: t\nflow_cfm,pressure_inH2O\n0,1\n2,0.5\n4,0\n")
    text = format_curve(load_fan_curve(path))
    # 2 cfm = 2 * 0.3048^3/60 m3/s = 9.438948864e-4; 0.5 inH2O = 124.544455 Pa (exact factors)
    assert "0.000943895" in text and "124.544" in text
    assert "flow [cfm]" in text and "pressure [inH2O]" in text
    assert "note: only 3 data points; 6 or more are recommended" in text


def test_plot_data_is_in_file_units():
    fan = load_fan_curve(CATALOG / "demo-axial-80-stall.csv")
    data = curve_plot_data(fan)
    assert data.flow_unit == "m3/min" and data.pressure_unit == "mmH2O"
    assert data.q_points[-1] == pytest.approx(1.4, rel=1e-14)
    assert data.p_points[0] == pytest.approx(6.0, rel=1e-14)
    assert data.q_stall == pytest.approx(0.7, rel=1e-14)
    fig = fan_curve_figure(data)
    assert len(fig.layout.shapes) == 1  # the stall band
    assert fig.layout.shapes[0].x1 == pytest.approx(0.7)


def test_plot_never_overwrites_the_input(tmp_path):
    src = tmp_path / "fan.html"  # a fan file with an unlucky name
    shutil.copy(CATALOG / "demo-axial-40.csv", src)
    before = src.read_bytes()
    assert main(["fan", "check", str(src), "--plot", str(src)]) == 2
    assert src.read_bytes() == before


def test_check_takes_several_files_and_plots_into_a_folder(tmp_path, capsys):
    files = sorted(CATALOG.glob("*.csv"))[:3]
    out = tmp_path / "plots"
    out.mkdir()
    assert main(["fan", "check", *map(str, files), "--plot", str(out)]) == 0
    assert sorted(p.name for p in out.iterdir()) == sorted(f.stem + ".html" for f in files)
    text = capsys.readouterr().out
    assert all(f"({f})" in text for f in files)


def test_several_files_are_all_checked_before_any_plot(tmp_path, capsys):
    bad = write(tmp_path, "flow_cfm,pressure\n0,1\n2,0\n")
    out = tmp_path / "plots"
    out.mkdir()
    good = CATALOG / "demo-axial-40.csv"
    assert main(["fan", "check", str(good), str(bad), "--plot", str(out)]) == 2
    assert list(out.iterdir()) == []

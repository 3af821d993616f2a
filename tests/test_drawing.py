"""Drawings of a design (sinkopt.results.drawing, `sinkopt drawing`): the DXF reopens with ezdxf
and its outlines measure the design; the SVG is XML carrying the dimension texts; the design
sheet carries every device's junction temperature; the report writes and links the short
list's drawings; a trial not in the results is one clear error, exit 2."""
from __future__ import annotations

import json
import xml.etree.ElementTree as ET
from pathlib import Path

import ezdxf
import pandas as pd
import pytest
from ezdxf import bbox

from sinkopt.cli.main import main
from sinkopt.errors import InputError
from sinkopt.results.drawing import (LAYERS, Footprint, SinkShape, design_drawing, drawing_dxf,
                                     drawing_svg, fmt_mm)

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"
SVG = "{http://www.w3.org/2000/svg}"

PARAMS = {"width_mm": 69.0, "length_mm": 66.5, "fin_height_mm": 25.5, "fin_thickness_mm": 1.1,
          "n_fins": 19, "base_thickness_mm": 4.0}
FOOTPRINTS = [Footprint("Q1", 12.0, 14.0, 16.0, 21.0), Footprint("B<1>&", 50.0, 26.0, 20.0, 30.0)]


@pytest.fixture(scope="module")
def run_dir(tmp_path_factory):
    out = tmp_path_factory.mktemp("drawing") / "run"
    assert main(["run", str(DEMO), "--trials", "40", "--seed", "3", "--out", str(out),
                 "--no-progress"]) == 0
    return out


def _outline_size(doc, group):
    entities = [e for e in doc.groups.get(group) if e.dxf.layer == "OUTLINE"]
    assert entities
    return bbox.extents(entities).size


def test_section_outline_is_the_profile():
    s = SinkShape.from_params(PARAMS)
    pts = s.section_outline()
    assert len(pts) == 4 * s.n_fins
    xs, ys = zip(*pts)
    assert (min(xs), max(xs), min(ys), max(ys)) == (0.0, 69.0, 0.0, 29.5)
    assert s.gap == pytest.approx((69 - 19 * 1.1) / 18)
    assert s.pitch == pytest.approx(s.gap + 1.1)


def test_dxf_reopens_and_outlines_measure_the_design(tmp_path):
    s = SinkShape.from_params(PARAMS)
    doc = drawing_dxf(design_drawing(s, FOOTPRINTS, "test"))
    path = tmp_path / "d.dxf"
    doc.saveas(path)
    back = ezdxf.readfile(path)
    assert not back.audit().has_errors
    assert {"OUTLINE", "DIMENSIONS", "FOOTPRINTS", "TEXT"} <= {layer.dxf.name
                                                              for layer in back.layers}
    assert back.units == ezdxf.units.MM
    w, h, _ = _outline_size(back, "SECTION_A_A")
    assert abs(w - 69.0) < 1e-6 and abs(h - 29.5) < 1e-6  # width, base + fin height
    w, length, _ = _outline_size(back, "PLAN")
    assert abs(w - 69.0) < 1e-6 and abs(length - 66.5) < 1e-6
    # real dimension entities that measure the design
    measured = sorted(round(d.get_measurement(), 6)
                      for d in back.modelspace().query("DIMENSION"))
    for v in (69.0, 66.5, 29.5, 25.5, 4.0, 1.1, round(s.gap, 6), round(s.pitch, 6)):
        assert v in measured, v
    # footprints at their positions (plan view offset along x only)
    fp = [e for e in back.groups.get("PLAN") if e.dxf.layer == "FOOTPRINTS"
          and e.dxftype() == "LWPOLYLINE"]
    sizes = sorted(tuple(round(v, 6) for v in bbox.extents([e]).size)[:2] for e in fp)
    assert sizes == [(16.0, 21.0), (20.0, 30.0)]
    names = {t.dxf.text for t in back.modelspace().query("TEXT")}
    assert {"Q1", "B<1>&"} <= names
    assert any("Mounting holes are not shown" in t for t in names)


def test_svg_is_xml_with_the_dimension_texts():
    s = SinkShape.from_params(PARAMS)
    text = drawing_svg(design_drawing(s, FOOTPRINTS))
    root = ET.fromstring(text)  # hostile-looking names are escaped: still XML
    assert root.get("width").endswith("mm")
    texts = [t.text for t in root.iter(f"{SVG}text")]
    for want in ("W 69", "L 66.5", "29.5", "fin H 25.5", "base 4", "t 1.1",
                 f"gap {fmt_mm(s.gap)}", f"pitch {fmt_mm(s.pitch)}", "Q1", "B<1>&"):
        assert want in texts, want
    assert any("Mounting holes are not shown" in t for t in texts)
    classes = {g.get("class") for g in root.iter(f"{SVG}g")}
    assert {"OUTLINE", "DIMENSIONS", "FOOTPRINTS", "TEXT"} <= classes
    assert set(LAYERS) >= classes - {None}


def test_bad_geometry_is_a_clear_error():
    with pytest.raises(InputError, match="fins do not fit"):
        SinkShape.from_params(dict(PARAMS, n_fins=70))


def test_cli_writes_svg_dxf_and_sheet(run_dir, tmp_path):
    front = pd.read_csv(run_dir / "pareto.csv")
    trial = int(front["trial"].iloc[0])
    out = tmp_path / "out"
    assert main(["drawing", str(run_dir), "--trial", str(trial), "--out", str(out)]) == 0
    assert sorted(p.name for p in out.iterdir()) == sorted(
        [f"design-{trial}.svg", f"design-{trial}.dxf", f"design-{trial}-sheet.html"])
    rec = json.loads((run_dir / "designs" / f"trial_{trial:06d}.json").read_text())
    p = rec["params"]
    doc = ezdxf.readfile(out / f"design-{trial}.dxf")
    w, h, _ = _outline_size(doc, "SECTION_A_A")
    assert abs(w - p["width_mm"]) < 1e-6
    assert abs(h - p["fin_height_mm"] - p["base_thickness_mm"]) < 1e-6
    w, length, _ = _outline_size(doc, "PLAN")
    assert abs(w - p["width_mm"]) < 1e-6 and abs(length - p["length_mm"]) < 1e-6
    ET.fromstring((out / f"design-{trial}.svg").read_text(encoding="utf-8"))
    sheet = (out / f"design-{trial}-sheet.html").read_text(encoding="utf-8")
    assert "@page { size: A4 portrait" in sheet
    for d in rec["devices"]:
        assert f">{d['junction_C']:.4g}</td>" in sheet, d["name"]
        assert f">{d['name']}</td>" in sheet
    for words in ("Hot surfaces", "finger guards", "Mains voltage", "licensed professional",
                  "Mounting holes are not shown", "static pressure", "airflow", "finish"):
        assert words in sheet, words


def test_cli_draws_a_trial_off_the_front(run_dir, tmp_path):
    trials = pd.read_csv(run_dir / "trials.csv")
    off = trials[~trials["pareto"]]
    if off.empty:
        pytest.skip("every trial is on the front")
    trial = int(off["trial"].iloc[0])
    assert main(["drawing", str(run_dir), "--trial", str(trial), "--out", str(tmp_path)]) == 0
    sheet = (tmp_path / f"design-{trial}-sheet.html").read_text(encoding="utf-8")
    assert "not a Pareto design" in sheet


def test_cli_trial_not_in_results_is_exit_2(run_dir, tmp_path, capsys):
    assert main(["drawing", str(run_dir), "--trial", "99999", "--out", str(tmp_path)]) == 2
    err = capsys.readouterr().err
    assert err.count("error") == 1
    assert "trial 99999 is not in the results" in err and "trials.csv" in err
    assert not list(tmp_path.iterdir())


def test_report_writes_and_links_the_short_lists_drawings(run_dir):
    picks = json.loads((run_dir / "shortlist.json").read_text())["picks"]
    assert picks
    for t in {p["trial"] for p in picks}:
        for name in (f"design-{t}.svg", f"design-{t}.dxf", f"design-{t}-sheet.html"):
            assert (run_dir / "drawings" / name).is_file(), name
    page = (run_dir / "report.html").read_text(encoding="utf-8")
    assert '"drawings":{"folder":"drawings","trials":[' in page
    assert "drawing-files" in page  # the design panel's links

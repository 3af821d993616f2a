"""The built-in catalogs ship inside the package; the top-level ``catalogs/`` folder is the
user-visible copy. One source of truth: the two must hold the same files, byte for byte."""
from pathlib import Path

from sinkopt.study.catalogs import builtin_catalog, interface, material

ROOT = Path(__file__).resolve().parents[2]


def _files(folder) -> dict[str, bytes]:
    out = {}

    def walk(node, prefix=""):
        for child in node.iterdir():
            name = f"{prefix}{child.name}"
            if child.is_dir():
                walk(child, name + "/")
            elif not child.name.startswith("."):
                out[name] = child.read_bytes()

    walk(folder)
    return out


def test_top_level_catalogs_are_a_copy_of_the_package_catalogs():
    shipped = _files(builtin_catalog())
    visible = _files(ROOT / "catalogs")
    assert shipped, "no built-in catalog files found in the package"
    assert sorted(shipped) == sorted(visible), (
        "catalogs/ and sinkopt/study/builtin/ hold different files: "
        "edit sinkopt/study/builtin/ and run `cp -r sinkopt/study/builtin/* catalogs/`")
    differ = [name for name in shipped if shipped[name] != visible[name]]
    assert not differ, f"catalogs/ differs from sinkopt/study/builtin/ in {differ}"


def test_catalogs_are_read_from_the_package():
    # The value written in the shipped file (copper C11000, 390 W/m/K: common practice, no source).
    assert material("cu-c11000").conductivity == 390.0
    assert interface("grease").specific_resistance > 0
    assert (builtin_catalog() / "fans").is_dir()

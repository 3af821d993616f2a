"""Every reference to a document points into this repository: each ``something.md`` named in
code, tests, catalogs, studies and docs exists here, and each ``#anchor`` after it is a heading
of that file (GitHub's anchor rule). Nothing points at a machine path or at notes kept outside."""
import re
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
TEXT = re.compile(r"\.(py|md|toml|csv|js|html|css|txt|cfg|json)$|^\.ci/")
DOC_REF = re.compile(r"(?<![\w./-])((?:[\w.-]+/)*[\w-]+\.md)(#[\w-]+)?")
OUTSIDE = re.compile(r"/work/|shared/design|\.\./shared")


def _tracked() -> list[Path]:
    out = subprocess.run(["git", "ls-files"], cwd=ROOT, capture_output=True, text=True)
    if out.returncode != 0:  # not a git checkout (an sdist): read the tree
        return [p for p in ROOT.rglob("*") if p.is_file() and ".git" not in p.parts]
    return [ROOT / f for f in out.stdout.split()]


def slug(heading: str) -> str:
    """GitHub's anchor of a Markdown heading.

    >>> slug("### REF-1 golden case")
    'ref-1-golden-case'
    >>> slug("## Approach velocity and duct section")
    'approach-velocity-and-duct-section'
    """
    text = heading.lstrip("#").strip().lower()
    return re.sub(r"[^\w\- ]", "", text).replace(" ", "-")


def _anchors(md: Path) -> set[str]:
    anchors, fence = set(), False
    for line in md.read_text(encoding="utf-8").splitlines():
        if line.startswith("```"):
            fence = not fence
        elif not fence and re.match(r"#{1,6} ", line):
            anchors.add(slug(line))
    return anchors


def broken_references(path: Path, text: str) -> list[str]:
    bad = []
    for n, line in enumerate(text.splitlines(), 1):
        if OUTSIDE.search(line):
            bad.append(f"{path.name}:{n}: points outside the repository: {line.strip()[:100]}")
        for m in DOC_REF.finditer(line):
            name, anchor = m.group(1), m.group(2)
            candidates = [ROOT / name, path.parent / name, ROOT / "docs" / name]
            target = next((c for c in candidates if c.is_file()), None)
            if target is None:
                bad.append(f"{path.name}:{n}: {name} is not in the repository")
            elif anchor and anchor[1:] not in _anchors(target):
                bad.append(f"{path.name}:{n}: {name} has no heading for {anchor}")
    return bad


def test_every_document_reference_resolves():
    bad = []
    for path in _tracked():
        if not TEXT.search(path.relative_to(ROOT).as_posix()) or not path.is_file():
            continue
        if path == Path(__file__).resolve():
            continue  # the test's own examples of bad references
        try:
            text = path.read_text(encoding="utf-8")
        except UnicodeDecodeError:
            continue
        bad += broken_references(path, text)
    assert not bad, "\n".join(bad)


@pytest.mark.parametrize("line", [
    "see design-notes.md §2a for the polynomial",
    "Check values: docs/theory.md#no-such-heading",
    "notes in /work/elsewhere/notes.md",
])
def test_a_reference_outside_the_repository_is_caught(line):
    assert broken_references(ROOT / "sinkopt" / "x.py", line)


def test_a_good_reference_passes():
    assert not broken_references(ROOT / "sinkopt" / "x.py",
                                 "REF-1 (docs/theory.md#ref-1-golden-case), DEVELOPERS.md")

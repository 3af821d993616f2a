"""Issue 16 item 1: every snippet of the README works as written. Python blocks run in a copy of
the repository's studies and catalogs (so results land in a temporary folder); every shell
command starting with `sinkopt` parses with the real command line (and the main job's demo
command runs in tests/test_end_to_end.py); `sinkopt <command>` in the commands table is a real
command. A snippet that names an API that does not exist fails here."""
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from sinkopt.cli.main import build_parser

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")
BLOCK = re.compile(r"```(\w*)\n(.*?)```", re.S)


def _blocks(lang):
    return [body for kind, body in BLOCK.findall(README) if kind == lang]


def test_the_readme_has_python_and_shell_snippets():
    assert _blocks("python") and _blocks("sh")


@pytest.mark.parametrize("k", range(len(_blocks("python"))))
def test_python_snippet_runs(tmp_path, k):
    shutil.copytree(ROOT / "studies", tmp_path / "studies")
    shutil.copytree(ROOT / "catalogs", tmp_path / "catalogs")
    script = tmp_path / "snippet.py"
    script.write_text(_blocks("python")[k], encoding="utf-8")
    run = subprocess.run([sys.executable, str(script)], cwd=tmp_path, capture_output=True,
                         text=True, timeout=600)
    assert run.returncode == 0, run.stderr[-2000:]
    assert "AttributeError" not in run.stderr


def _sinkopt_commands():
    out = []
    for body in _blocks("sh"):
        for part in re.split(r"&&|\n", body):
            words = shlex.split(part.strip())
            if words and words[0] == "sinkopt":
                out.append(words[1:])
    for row in re.findall(r"^\| `sinkopt ([a-z]+(?: [a-z]+)?)", README, re.M):
        out.append(row.split())
    return out


def test_every_sinkopt_command_of_the_readme_exists():
    commands = _sinkopt_commands()
    assert commands
    parser = build_parser()
    sub = next(a for a in parser._actions if a.dest == "command")
    for words in commands:
        assert words[0] in sub.choices, f"README names `sinkopt {words[0]}`, which does not exist"


def test_the_shell_commands_parse(tmp_path):
    parser = build_parser()
    for body in _blocks("sh"):
        for part in re.split(r"&&|\n", body):
            words = shlex.split(part.strip())
            if words and words[0] == "sinkopt":
                args = parser.parse_args(words[1:])
                assert args.func

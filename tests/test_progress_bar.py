"""Issue 16 item 10 (its last point): a progress bar shows on a terminal, also one that reports
no size (a fresh pseudo-terminal is 0 x 0: before the fix tqdm printed nothing there), and the
slow review after the search says what it is doing; piped output has no bar."""
import os
import pty
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "studies" / "demo_inverter.toml"


def _run(tmp_path, on_terminal: bool) -> str:
    cmd = [sys.executable, "-m", "sinkopt", "run", str(DEMO), "--trials", "40", "--no-report",
           "--out", str(tmp_path / ("tty" if on_terminal else "pipe"))]
    if not on_terminal:
        run = subprocess.run(cmd, capture_output=True, text=True, timeout=300)
        assert run.returncode == 0, run.stderr
        return run.stderr
    leader, follower = pty.openpty()  # 0 x 0 until someone sets its size
    proc = subprocess.Popen(cmd, stdin=subprocess.DEVNULL, stdout=follower, stderr=follower)
    os.close(follower)
    chunks = []
    while True:
        try:
            data = os.read(leader, 65536)
        except OSError:  # the child closed the terminal
            break
        if not data:
            break
        chunks.append(data)
    assert proc.wait(timeout=300) == 0
    os.close(leader)
    return b"".join(chunks).decode("utf-8", "replace")


def test_a_terminal_gets_a_bar_and_the_review_step(tmp_path):
    out = _run(tmp_path, on_terminal=True)
    assert "40/40" in out and "trial/s" in out and "pareto" in out
    assert "reviewing the front" in out


def test_a_pipe_gets_no_bar(tmp_path):
    err = _run(tmp_path, on_terminal=False)
    assert "trial/s" not in err and "reviewing the front" not in err

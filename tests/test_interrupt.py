"""Interrupting a real run: SIGTERM or SIGINT mid-run leaves no partial file, keeps the
previous outputs whole and exits 130 with a clear message."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"


@pytest.mark.parametrize("sig", [signal.SIGTERM, signal.SIGINT])
def test_signal_mid_run_leaves_outputs_whole(tmp_path, sig):
    out = tmp_path / "demo"
    out.mkdir()
    previous = {}
    for rev in "AB":
        for ext in ("pdf", "json"):
            path = out / f"thistle_comet_rev{rev}.{ext}"
            path.write_text(f"previous {rev} {ext}\n")
            previous[path] = path.read_text()
    proc = subprocess.Popen([sys.executable, "-m", "checker", "demo", "--out", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(4.0)  # imports done, simulation or rendering under way
    assert proc.poll() is None, "the demo finished before it could be interrupted"
    os.kill(proc.pid, sig)
    _, err = proc.communicate(timeout=120)
    assert proc.returncode == 130
    assert "interrupted" in err and "Traceback" not in err
    assert not list(out.glob("*.part")) and not list(out.glob(".*.part"))
    for path, text in previous.items():
        current = path.read_bytes()
        # either untouched, or replaced whole by a finished report (written atomically)
        assert current == text.encode() or (path.suffix == ".pdf"
                                            and current.startswith(b"%PDF")
                                            and current.rstrip().endswith(b"%%EOF"))

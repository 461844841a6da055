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
    proc = subprocess.Popen([sys.executable, "-u", "-m", "checker", "demo", "--out", str(out)],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    # the first line is printed once the command runs (its signal handlers are in place):
    # a fixed sleep could land in the interpreter's start-up on a loaded machine
    first = proc.stdout.readline()
    assert first.startswith("demo:"), first
    time.sleep(0.5)  # simulation under way
    assert proc.poll() is None, "the demo finished before it could be interrupted"
    os.kill(proc.pid, sig)
    rest, err = proc.communicate(timeout=120)
    assert proc.returncode == 130, (rest, err)
    assert "interrupted" in err and "Traceback" not in err
    # the message is true: it names the reports written before the signal, or none
    line = next(x for x in err.splitlines() if "interrupted" in x)
    written = [p for p in previous if p.read_bytes() != previous[p].encode()]
    assert all(str(p) in line for p in written), (line, written)
    if not written:
        assert "no output was written or changed" in line
    assert not list(out.glob("*.part")) and not list(out.glob(".*.part"))
    for path, text in previous.items():
        current = path.read_bytes()
        # either untouched, or replaced whole by a finished report (written atomically)
        assert current == text.encode() or (path.suffix == ".json"
                                            and current.startswith(b"{")) or (
            current.startswith(b"%PDF") and current.rstrip().endswith(b"%%EOF"))
    for rev in "AB":  # a report and its sidecar are both new or both old
        pair = [out / f"thistle_comet_rev{rev}.{ext}" for ext in ("pdf", "json")]
        assert len({p.read_bytes() == previous[p].encode() for p in pair}) == 1


def test_ctrl_c_to_the_whole_group_during_load_cases_stops_at_once(tmp_path):
    # Ctrl-C reaches every process of the terminal's group, the sweep's workers included. A
    # worker interrupted while holding its pool's queue lock once left the command hanging
    # for ever after printing "interrupted", and an interrupted sweep ran its queued cases to
    # the end first. The timeout below only catches a hang (no speed is asserted).
    keep = tmp_path / "keep.pdf"
    keep.write_text("previous\n")
    proc = subprocess.Popen(
        [sys.executable, "-u", "-m", "checker", "check", str(SAMPLES / "thistle_comet_revA.csv"),
         "--train", str(SAMPLES / "thistle_comet_train.toml"), "--operation",
         str(SAMPLES / "thistle_comet_revA.operation.toml"), "--cases", "standard",
         "--workers", "2", "--pdf", str(keep)],
        stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, start_new_session=True)
    first = proc.stdout.readline()  # printed once the command runs
    assert first.startswith("limits:"), first
    time.sleep(1.5)  # the sweep's workers are running cases
    assert proc.poll() is None, "the sweep finished before it could be interrupted"
    os.killpg(proc.pid, signal.SIGINT)
    try:
        _, err = proc.communicate(timeout=60)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        proc.communicate()
        raise AssertionError("the command hung after Ctrl-C") from None
    assert proc.returncode == 130 and "interrupted" in err and "Traceback" not in err
    assert keep.read_text() == "previous\n"
    time.sleep(1.0)  # the workers end with their parent
    with pytest.raises(ProcessLookupError):
        os.killpg(proc.pid, 0)  # nothing of the group is left

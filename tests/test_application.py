"""The application layer: one frozen result per operation, the same from Python and the
command line, and a command line that starts without the numerical libraries."""

from __future__ import annotations

import dataclasses
import hashlib
import json
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import checker
from checker.cli import main
from checker.resources import bundled_limits

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("pandas", "scipy", "matplotlib", "weasyprint")
SAMPLES = ROOT / "sample_tracks"


def hill_track(folder: Path) -> Path:
    """A level run-in, then a smooth 10 m hill. Energy (common practice): from 5 m/s a
    frictionless rider climbs v^2 / (2 g0) = 1.3 m, so it cannot crest and stalls."""
    x = np.arange(0.0, 120.0, 1.0)
    z = 10.0 * np.exp(-(((x - 60.0) / 15.0) ** 2))
    path = folder / "hill.csv"
    path.write_text("x,y,z\n" + "\n".join(f"{a:.6f},0,{c:.6f}" for a, c in zip(x, z)) + "\n")
    return path


def digest(path) -> str:
    return hashlib.sha256(Path(path).read_bytes()).hexdigest()


def test_operations_are_importable_from_the_package():
    from checker import application

    for name in ("check_layout", "check_history", "compare_layouts", "run_demo", "simulate"):
        assert callable(getattr(checker, name))
    assert checker.check_layout is application.check_layout
    with pytest.raises(AttributeError):
        checker.no_such_operation  # noqa: B018


def test_stall_fails_the_verdict_everywhere(tmp_path):
    track = hill_track(tmp_path)
    result = checker.check_layout(track, ideal=True, start_speed_m_s=5.0)
    assert result.stall is not None and "cannot crest" in result.stall
    assert result.verdict == "fail"  # a stall fails the check
    assert [f.kind for f in result.findings] == ["stall"]  # and nothing else fails here
    out = tmp_path / "hill.json"
    assert main(["check", str(track), "--ideal", "--start-speed", "5", "--json",
                 str(out)]) == 1
    doc = json.loads(out.read_text())
    assert doc["verdict"] == "fail" and doc["stall"]


def test_python_result_records_inputs_parameters_and_call(tmp_path):
    track = hill_track(tmp_path)
    result = checker.check_layout(track, ideal=True, start_speed_m_s=5.0)
    record = result.provenance
    assert record.call == (f"checker.check_layout({str(track)!r}, ideal=True, "
                           "start_speed_m_s=5.0)")
    limits_folder = bundled_limits().parent
    assert [(f.path, f.sha256) for f in record.inputs] == [
        (str(track), digest(track)), (str(bundled_limits()), digest(bundled_limits())),
        (str(limits_folder / "illustrative_yz.csv"),
         digest(limits_folder / "illustrative_yz.csv"))]  # the table the limits name
    names = dict(record.parameters)
    assert names["start speed"] == "5 m/s" and "filter" in names
    assert record.version == checker.__version__


def test_results_are_frozen(tmp_path):
    result = checker.check_layout(hill_track(tmp_path), ideal=True, start_speed_m_s=5.0)
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.evaluation = None
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.evaluation.warnings = ()
    with pytest.raises(dataclasses.FrozenInstanceError):
        result.evaluation.seats[0].findings = ()
    with pytest.raises(TypeError):
        result.signals[("x", "y")] = None  # read-only mapping


def test_check_history_from_python_writes_pdf_and_sidecar(tmp_path):
    t = np.arange(0, 2000) / 100.0
    gz = np.where((t > 5) & (t < 8), 3.0, 1.0)
    record = tmp_path / "record.csv"
    record.write_text("t,gx,gy,gz\n" + "\n".join(f"{a:.2f},0,0,{c:.2f}" for a, c in zip(t, gz)))
    result = checker.check_history(record, project="P")
    pdf, sidecar = result.write_pdf(tmp_path / "r.pdf")
    assert pdf.read_bytes().startswith(b"%PDF") and sidecar == tmp_path / "r.json"
    doc = json.loads(sidecar.read_text())
    assert doc["command"].startswith("checker.check_history(")
    assert {"file": str(record), "sha256": digest(record)} in doc["inputs"]
    assert doc["verdict"] == result.verdict


def run_python(code: str) -> str:
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          cwd=ROOT, env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin"},
                          timeout=60)
    assert done.returncode == 0, done.stderr
    return done.stdout.strip()


@pytest.mark.parametrize("argv", [["--help"], ["check", "--help"], ["check"],
                                  ["check", "t.csv", "--rate", "-1"]])
def test_help_and_usage_errors_load_no_numerical_library(argv):
    heavy = run_python(
        "import sys\n"
        "from checker.cli import main\n"
        "try:\n"
        f"    main({argv!r})\n"
        "except SystemExit:\n"
        "    pass\n"
        f"print(sorted(m for m in sys.modules if m.split('.')[0] in {HEAVY!r}))")
    assert heavy.splitlines()[-1] == "[]"


def test_a_command_loads_them(tmp_path):
    # the test above can fail: the same probe sees them once a command runs
    heavy = run_python(
        "import sys\n"
        "from checker.cli import main\n"
        f"main(['check', {str(hill_track(tmp_path))!r}, '--ideal', '--start-speed', '5'])\n"
        f"print(sorted(m for m in sys.modules if m in {HEAVY[:2]!r}))")
    assert heavy.splitlines()[-1] == "['pandas', 'scipy']"


def test_a_result_never_writes_over_its_inputs(tmp_path):
    # The command line checks outputs against inputs before the run; from Python the
    # result's own writers refuse too, and leave the input whole.
    import shutil

    from checker import check_layout
    from checker.errors import InputError

    track = tmp_path / "track.csv"
    shutil.copy(SAMPLES / "thistle_comet_revB.csv", track)
    before = track.read_bytes()
    result = check_layout(track, train=SAMPLES / "thistle_comet_train.toml",
                          operation=SAMPLES / "thistle_comet_revB.operation.toml")
    with pytest.raises(InputError, match="same file as the input"):
        result.write_json(track)
    with pytest.raises(InputError, match="same file as the input"):
        result.write_pdf(tmp_path / "report.pdf", json_path=track)
    assert track.read_bytes() == before
    assert not (tmp_path / "report.pdf").exists()

"""Bad centerline and train input through the command line: exit 2, one line, no output."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
from shapes import straight

from checker.cli import main

GOOD_ROWS = "\n".join(f"{x},0,0" for x in range(10))


def run_cli(args, capsys):
    code = main(args)
    captured = capsys.readouterr()
    return code, captured.err


def write(tmp_path: Path, name: str, text: str) -> Path:
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


BAD_TRACKS = {
    "missing column": ("x,y\n" + "\n".join(f"{i},0" for i in range(6)), ["'z'"]),
    "misspelt column": ("x,y,zz\n" + GOOD_ROWS, ["'zz'", "did you mean 'z'"]),
    "non-numeric cell": ("x,y,z\n0,0,0\n1,0,0\n2,abc,0\n3,0,0\n4,0,0", ["row 4", "'y'", "abc"]),
    "nan": ("x,y,z\n0,0,0\n1,0,0\n2,0,nan\n3,0,0\n4,0,0", ["row 4", "'z'", "not finite"]),
    "infinite": ("x,y,z\n0,0,0\n1,0,inf\n2,0,0\n3,0,0", ["row 3", "not finite"]),
    # beyond reach: named at its own column, before any arithmetic on it (numpy's overflow
    # warnings once came first, and the error named column 'x')
    "huge coordinate": ("x,y,z\n0,0,0\n1,0,0\n2,0,1e308\n3,0,0\n4,0,0",
                        ["row 4", "column 'z'", "beyond"]),
    "three samples": ("x,y,z\n0,0,0\n1,0,0\n2,0,0", ["at least 4"]),
    "repeated point": ("x,y,z\n0,0,0\n1,0,0\n1,0,0\n2,0,0\n3,0,0", ["row 4", "repeats"]),
    "kink": ("x,y,z\n0,0,0\n1,0,0\n2,0,0\n2,1,0\n2,2,0", ["kink of 90 deg", "station 2.00",
                                                            "row 4"]),
    "roll and up": ("x,y,z,roll_deg,up_x,up_y,up_z\n" + "\n".join(
        f"{i},0,0,0,0,0,1" for i in range(6)), ["both roll_deg and up"]),
    "zero up": ("x,y,z,up_x,up_y,up_z\n0,0,0,0,0,1\n1,0,0,0,0,0\n2,0,0,0,0,1\n3,0,0,0,0,1",
                ["row 3", "up vector is zero"]),
    "up along tangent": ("x,y,z,up_x,up_y,up_z\n0,0,0,0,0,1\n1,0,0,1,0,0\n2,0,0,0,0,1\n"
                         "3,0,0,0,0,1", ["row 3", "parallel"]),
    "empty": ("", ["empty"]),
    "header only": ("x,y,z\n", ["no data rows"]),
    "semicolons": ("x;y;z\n" + GOOD_ROWS.replace(",", ";"), ["not comma-separated"]),
    "decimal comma": ("x,y,z\n0,0,0\n1,5,0,0\n2,0,0\n3,0,0", ["row 3", "decimal commas"]),
    "duplicated column": ("x,y,z,z\n" + "\n".join(f"{i},0,0,0" for i in range(6)),
                          ["twice", "'z'"]),
}


@pytest.mark.parametrize("case", sorted(BAD_TRACKS))
def test_bad_track_is_refused_with_location(case, tmp_path, capsys):
    text, expected = BAD_TRACKS[case]
    track = write(tmp_path, "track.csv", text)
    out = tmp_path / "history.csv"
    out.write_text("previous output\n")
    code, err = run_cli(["simulate", str(track), "--ideal", "-o", str(out)], capsys)
    assert code == 2
    assert err.count("\n") == 1 and "Traceback" not in err
    assert "track.csv" in err
    for piece in expected:
        assert piece in err, (piece, err)
    assert out.read_text() == "previous output\n"  # untouched


BAD_TRAINS = {
    "unknown key": ("[cars]\ncount = 2\nspacing_m = 2\nempty_mass_kg = 400\nmas = 1\n"
                    "[[seats]]\nup_m = 1\n", ["cars.mas", "not a known key"]),
    "negative mass": ("[cars]\ncount = 1\nempty_mass_kg = -5\n[[seats]]\n",
                      ["cars.empty_mass_kg", "greater than zero"]),
    "zero spacing": ("[cars]\ncount = 3\nspacing_m = 0\nempty_mass_kg = 400\n[[seats]]\n",
                     ["cars.spacing_m"]),
    "no seats": ("[cars]\ncount = 1\nempty_mass_kg = 400\n", ["no seats"]),
    "text for number": ("[cars]\ncount = 1\nempty_mass_kg = \"heavy\"\n[[seats]]\n",
                        ["must be a number"]),
    "bad toml": ("[cars\ncount = 1\n", ["not valid TOML", "row 1"]),
    "occupancy above one": ("[cars]\ncount = 1\nempty_mass_kg = 400\n[[seats]]\n"
                            "[riders]\noccupancy = 1.5\n", ["riders.occupancy"]),
}


@pytest.mark.parametrize("case", sorted(BAD_TRAINS))
def test_bad_train_is_refused_with_key(case, tmp_path, capsys):
    text, expected = BAD_TRAINS[case]
    track = write(tmp_path, "track.csv", "x,y,z\n" + GOOD_ROWS)
    train = write(tmp_path, "train.toml", text)
    out = tmp_path / "history.csv"
    code, err = run_cli(["simulate", str(track), "--train", str(train), "--start-speed", "5",
                         "-o", str(out)], capsys)
    assert code == 2 and err.count("\n") == 1
    assert "train.toml" in err
    for piece in expected:
        assert piece in err, (piece, err)
    assert not out.exists()


def test_simulate_writes_history_with_required_columns(tmp_path, capsys):
    pts = straight(50.0)
    track = write(tmp_path, "t.csv", "x,y,z\n" + "\n".join(f"{a},{b},{c}" for a, b, c in pts))
    out = tmp_path / "h.csv"
    code, _ = run_cli(["simulate", str(track), "--ideal", "--start-speed", "10", "--rate", "50",
                       "-o", str(out)], capsys)
    assert code == 0
    header = out.read_text().splitlines()[0].split(",")
    for column in ("seat", "t", "s", "v", "gx", "gy", "gz"):
        assert column in header
    import pandas as pd
    frame = pd.read_csv(out)
    assert np.allclose(np.diff(frame["t"]), 1 / 50)  # 50 Hz output
    assert np.allclose(frame["gz"], 1.0, atol=1e-9)  # level, frictionless, constant speed


def test_feet_are_converted_at_the_edge(tmp_path, capsys):
    # 1 ft = 0.3048 m exactly (international yard and pound agreement, 1959).
    track = write(tmp_path, "t.csv", "x,y,z\n" + "\n".join(f"{x},0,0" for x in range(0, 101,
                                                                                    10)))
    out = tmp_path / "h.csv"
    code, _ = run_cli(["simulate", str(track), "--ideal", "--start-speed", "3.048", "--units",
                       "ft", "--rate", "10", "-o", str(out)], capsys)
    assert code == 0
    import pandas as pd
    frame = pd.read_csv(out)
    assert frame["t"].iloc[-1] == pytest.approx(10.0, abs=0.1)  # 30.48 m at 3.048 m/s


def test_stall_is_reported_not_crashed(tmp_path, capsys):
    x = np.linspace(0, 100, 201)
    z = 10 * np.exp(-((x - 50) / 10) ** 2)
    track = write(tmp_path, "hill.csv", "x,y,z\n" + "\n".join(f"{a},0,{c}" for a, c in
                                                             zip(x, z)))
    out = tmp_path / "h.csv"
    code, err = run_cli(["simulate", str(track), "--ideal", "--start-speed", "5", "-o",
                         str(out)], capsys)
    assert code == 1
    assert "cannot crest a hill" in err and err.count("station") == 1  # one station, once


def test_no_traceback_from_a_real_process(tmp_path):
    track = write(tmp_path, "track.csv", "x,y,q\n1,2,3\n")
    proc = subprocess.run([sys.executable, "-m", "checker", "simulate", str(track), "--ideal",
                           "-o", str(tmp_path / "o.csv")], capture_output=True, text=True)
    assert proc.returncode == 2
    assert "Traceback" not in proc.stderr
    assert proc.stderr.strip().count("\n") == 0


def test_python_api_returns_a_dataframe():
    # The documented API: checker.simulate returns one row per seat and sample.
    import checker

    samples = Path(__file__).resolve().parents[1] / "sample_tracks"
    frame = checker.simulate(samples / "thistle_comet_revB.csv",
                             samples / "thistle_comet_train.toml",
                             operation=samples / "thistle_comet_revB.operation.toml",
                             rate_hz=50)
    assert list(frame.columns[:7]) == ["seat", "car", "t", "s", "v", "gx", "gy"]
    assert frame["seat"].nunique() == 24
    first = frame[frame["seat"] == "car1-r1L"]
    assert np.allclose(first["gz"].iloc[:10], 1.0, atol=1e-6)  # at rest in the station

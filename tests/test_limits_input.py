"""Bad limit sets and recorded histories through the command line: exit 2, one line."""

from __future__ import annotations

import json
import shlex
from pathlib import Path

import numpy as np
import pytest

from checker.cli import main
from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits

HEAD = '[meta]\ntitle = "t"\n'
GZ = '[[duration]]\naxis = "gz"\ndirection = "positive"\npoints = [[0.0, 5.0], [2.0, 4.0]]\n'


def history_csv(path: Path, t: np.ndarray, gz: np.ndarray) -> Path:
    rows = "\n".join(f"{a:.6f},0,0,{b:.6f}" for a, b in zip(t, gz))
    path.write_text("t,gx,gy,gz\n" + rows + "\n")
    return path


BAD_LIMITS = {
    "unknown key": (HEAD + GZ.replace("points", "pionts"), ["duration[1].pionts"]),
    "misspelt top table": (HEAD + GZ + "[filtr]\norder = 4\n", ["'filtr'", "not a known key"]),
    "durations not increasing": (HEAD + GZ.replace("[2.0, 4.0]", "[0.0, 4.0]"),
                                 ["durations must increase"]),
    "level grows with duration": (HEAD + GZ.replace("[2.0, 4.0]", "[2.0, 6.0]"),
                                  ["grows with duration"]),
    "wrong sign": (HEAD + GZ.replace('"positive"', '"negative"'), ["negative levels"]),
    "two vertices": (HEAD + '[[combined]]\naxes = ["gy", "gz"]\nvertices = [[0, 0], [1, 2]]\n',
                     ["at least 3"]),
    "self-intersecting": (HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                          'vertices = [[-1, 0], [1, 3], [1, 0], [-1, 3]]\n',
                          ["self-intersecting"]),
    "rest point outside": (HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                           'vertices = [[-1, 2], [1, 2], [0, 4]]\n', ["rest point"]),
    "bad axes": (HEAD + '[[combined]]\naxes = ["gz", "gq"]\nvertices = [[0, 0]]\n',
                 ["combined[1].axes"]),
    "no limits": (HEAD, ["holds no limits"]),
    "missing title": ('[meta]\n' + GZ, ["meta.title", "missing"]),
    "missing table file": (HEAD + '[[combined]]\naxes = ["gy", "gz"]\ntable = "none.csv"\n',
                           ["not found"]),
}


@pytest.mark.parametrize("case", sorted(BAD_LIMITS))
def test_bad_limits_refused(case, tmp_path, capsys):
    text, expected = BAD_LIMITS[case]
    limits = tmp_path / "limits.toml"
    limits.write_text(text)
    hist = history_csv(tmp_path / "h.csv", np.arange(100) / 200, np.ones(100))
    out = tmp_path / "f.json"
    code = main(["check-history", str(hist), "--limits", str(limits), "--json", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "limits.toml" in err
    for piece in expected:
        assert piece in err, (piece, err)
    assert not out.exists()


def test_corner_at_nyquist_is_refused_and_low_rate_warned(tmp_path, capsys):
    limits = tmp_path / "l.toml"
    limits.write_text(HEAD + "[filter]\ncorner_hz = 5.0\n" + GZ)
    hist = history_csv(tmp_path / "h.csv", np.arange(100) / 8.0, np.ones(100))  # 8 Hz
    assert main(["check-history", str(hist), "--limits", str(limits)]) == 2
    assert "filter.corner_hz" in capsys.readouterr().err
    hist = history_csv(tmp_path / "h2.csv", np.arange(100) / 20.0, np.ones(100))  # 20 Hz
    assert main(["check-history", str(hist), "--limits", str(limits)]) == 0
    assert "below 10 x the filter corner" in capsys.readouterr().err


def test_history_time_problems_are_reported(tmp_path, capsys):
    t = np.arange(50) / 100.0
    back = t.copy()
    back[10] = back[8]
    gap = np.delete(t, 20)
    for name, stamps, row, words in (("back.csv", back, 12, "does not increase"),
                                     ("gap.csv", gap, 22, "missing samples")):
        path = history_csv(tmp_path / name, stamps, np.ones(len(stamps)))
        assert main(["check-history", str(path)]) == 2
        err = capsys.readouterr().err
        assert words in err and f"row {row}" in err and "'t'" in err


def test_history_in_metres_per_second_squared(tmp_path, capsys):
    # 1 g0 = 9.80665 m/s^2 (3rd CGPM, 1901): 4.5 g sustained 3 s fails the bundled +Gz table.
    t = np.arange(2000) / 200.0
    gz = np.where((t > 3) & (t < 6), 4.5, 1.0) * 9.80665
    path = history_csv(tmp_path / "ms2.csv", t, gz)
    out = tmp_path / "f.json"
    assert main(["check-history", str(path), "--units", "m/s2", "--json", str(out)]) == 1
    doc = json.loads(out.read_text())
    assert doc["verdict"] == "fail"
    assert doc["limits"]["illustrative"] is True and "ILLUSTRATIVE" in doc["caution"]
    assert doc["limits"]["sha256"] == load_limits(BUNDLED_LIMITS).sha256
    kinds = {f["kind"] for f in doc["findings"]}
    assert "duration" in kinds
    for f in doc["findings"]:
        for key in ("rule", "kind", "axis", "seat", "t_start", "t_end", "duration_s", "peak_g",
                    "limit_g"):
            assert key in f


def test_bundled_limits_are_marked_illustrative():
    limits = load_limits(BUNDLED_LIMITS)
    assert limits.illustrative
    assert "ILLUSTRATIVE" in BUNDLED_LIMITS.read_text()
    assert "illustrative" in limits.title.lower()


def test_check_json_carries_station_and_is_deterministic(tmp_path, capsys):
    import sys
    sys.path.insert(0, str(Path(__file__).parent))
    from shapes import vertical_loop

    pts = np.vstack([np.column_stack([np.linspace(-30, -1, 30), np.zeros(30), np.zeros(30)]),
                     vertical_loop(10.0, 1.0, 360)])
    track = tmp_path / "loop.csv"
    track.write_text("x,y,z\n" + "\n".join(f"{a:.6f},{b:.6f},{c:.6f}" for a, b, c in pts))
    outs = []
    out = tmp_path / "a.json"
    argv = ["check", str(track), "--ideal", "--start-speed", "22", "--json", str(out)]
    for _ in range(2):
        assert main(argv) == 1
        outs.append(out.read_bytes())
    assert outs[0] == outs[1]  # the same command, byte for byte the same record
    doc = json.loads(outs[0])
    assert doc["command"] == shlex.join(["checker", *argv])  # the call that reproduces it
    gz = [f for f in doc["findings"] if f["rule"] == "duration +Gz"]
    assert gz and all(f["s_start_m"] is not None for f in gz)
    # the +Gz exceedance is at the loop's bottom half: the track station 29 m to 60 m
    assert 29.0 < gz[0]["s_worst_m"] < 62.0


def test_a_table_polygon_missing_the_rest_point_names_its_table(tmp_path, capsys):
    # the points come from a CSV table: the error names the key that gives the table and the
    # table's file, not a 'vertices' key the user never wrote
    (tmp_path / "far.csv").write_text("gy,gz\n-1,2\n1,2\n0,4\n")
    limits = tmp_path / "limits.toml"
    limits.write_text(HEAD + '[[combined]]\naxes = ["gy", "gz"]\ntable = "far.csv"\n')
    hist = history_csv(tmp_path / "h.csv", np.arange(100) / 200, np.ones(100))
    code = main(["check-history", str(hist), "--limits", str(limits)])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1
    assert "combined[1].table" in err and "far.csv" in err and "rest point" in err
    assert "vertices" not in err

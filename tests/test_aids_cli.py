"""The design aids through the command line: keys in the JSON, lines in the summary, files
written (or not, on bad input)."""

from __future__ import annotations

import json

import numpy as np
from shapes import from_pitch_profile
from test_bank import clothoid_s_curve

from checker.cli import main


def write_track(path, pts, roll=None):
    head = "x,y,z" + (",roll_deg" if roll is not None else "")
    rows = [",".join(f"{v:.6f}" for v in p) + (f",{r:.3f}" if roll is not None else "")
            for p, r in zip(pts, roll if roll is not None else [None] * len(pts))]
    path.write_text(head + "\n" + "\n".join(rows) + "\n")
    return path


def crest(tmp_path):
    s = np.arange(0.0, 80.0, 0.5)
    pitch = np.clip((s - 20.0) / 20.0, 0.0, np.radians(40.0))
    return write_track(tmp_path / "crest.csv", from_pitch_profile(s, -pitch))


def test_check_with_sensitivity_reports_every_aid(tmp_path, capsys):
    track = crest(tmp_path)
    out = tmp_path / "f.json"
    code = main(["check", str(track), "--ideal", "--start-speed", "12", "--sensitivity",
                 "--workers", "1", "--quiet", "--json", str(out)])
    text = capsys.readouterr().out
    assert code in (0, 1)
    doc = json.loads(out.read_text())
    assert {"uplift", "zones", "sustained", "sensitivity"} <= set(doc)
    assert doc["uplift"]["worst"]["peak_m"] > 0  # 12 m/s over a 20 m crest: airtime
    assert doc["zones"]["highest"]["zone"].startswith("zone")
    rows = doc["sensitivity"]["rows"]
    assert rows and all("start_speed_m_s" in r["derivative"] for r in rows)
    assert "uplift: highest" in text and "sensitivity:" in text and "zones: highest" in text


def test_sensitivity_with_cases_is_refused(tmp_path, capsys):
    code = main(["check", str(crest(tmp_path)), "--ideal", "--sensitivity", "--cases",
                 "standard"])
    err = capsys.readouterr().err
    assert code == 2 and "--sensitivity" in err and "Traceback" not in err


def test_advise_bank_writes_track_plot_and_json(tmp_path, capsys):
    track = write_track(tmp_path / "s.csv", clothoid_s_curve())
    out = tmp_path / "banked.csv"
    code = main(["advise-bank", str(track), "--ideal", "--start-speed", "15", "-o", str(out),
                 "--json", str(tmp_path / "a.json"), "--pdf", str(tmp_path / "a.pdf")])
    assert code == 0
    assert (tmp_path / "a.pdf").read_bytes().startswith(b"%PDF")
    lines = out.read_text().splitlines()
    assert lines[0].startswith("#") and lines[1] == "x,y,z,roll_deg"
    assert len(lines) - 2 == len(clothoid_s_curve())
    assert max(abs(float(r.split(",")[3])) for r in lines[2:]) > 20.0  # it banks the turns
    assert (tmp_path / "banked.svg").read_text().lstrip().startswith("<svg")
    assert json.loads((tmp_path / "a.json").read_text())["advice"]["max_roll_rate_deg_s"] <= 60.0
    # --pdf alone writes its JSON sidecar beside it, as every other command does
    assert main(["advise-bank", str(track), "--ideal", "--start-speed", "15", "-o",
                 str(tmp_path / "b.csv"), "--pdf", str(tmp_path / "b.pdf")]) == 0
    assert "advice" in json.loads((tmp_path / "b.json").read_text())


def test_advise_bank_bad_track_writes_nothing(tmp_path, capsys):
    bad = tmp_path / "bad.csv"
    bad.write_text("x,y,z\n0,0,0\n1,0,0\n")
    out = tmp_path / "banked.csv"
    out.write_text("previous\n")
    code = main(["advise-bank", str(bad), "--ideal", "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and "bad.csv" in err and len(err.strip().splitlines()) == 1
    assert out.read_text() == "previous\n" and not (tmp_path / "banked.svg").exists()


def test_advise_bank_refuses_a_ride_that_stalls(tmp_path, capsys):
    # a hill too high for the start speed: beyond the stall there is nothing to bank for,
    # and the advice once wrote a track with roll 0 through turns the train never reaches
    from test_stalls import write_hill

    track = write_hill(tmp_path)
    out = tmp_path / "banked.csv"
    code = main(["advise-bank", track, "--ideal", "--start-speed", "10", "-o", str(out)])
    err = capsys.readouterr().err
    assert code == 2 and len(err.strip().splitlines()) == 1 and "comes to rest" in err
    assert not out.exists() and not (tmp_path / "banked.svg").exists()

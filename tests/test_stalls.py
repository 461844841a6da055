"""A stall is a finding: it fails the seat, the case, the run and the JSON verdict.

Expected stations come from conservation of mechanical energy on a frictionless track (the
ideal rider): the train comes to rest where z(s) - z0 = v0^2 / (2 g0).
"""

from __future__ import annotations

import json

import numpy as np
import pytest
from pypdf import PdfReader
from shapes import G0, straight, vertical_loop

from checker.cli import main
from checker.documents import BUNDLED_LIMITS
from checker.events import events_of_run
from checker.limits import load_limits
from checker.operation import Operation
from checker.ride import run_check
from checker.track import Centerline
from checker.train import ideal_rider

HILL_HEIGHT = 8.0  # [m]
HILL_START, HILL_LENGTH = 20.0, 80.0  # [m]


def hill_points(spacing: float = 0.5) -> np.ndarray:
    """Level straight, a cosine hill of HILL_HEIGHT, level straight."""
    x = np.arange(0.0, HILL_START + HILL_LENGTH + 40.0 + spacing / 2, spacing)
    inside = (x > HILL_START) & (x < HILL_START + HILL_LENGTH)
    z = np.where(inside, 0.5 * HILL_HEIGHT * (1 - np.cos(2 * np.pi * (x - HILL_START)
                                                            / HILL_LENGTH)), 0.0)
    return np.column_stack([x, np.zeros_like(x), z])


def hill_station_at_height(h: float) -> float:
    """Arc length along the hill's rising side to height h (dense quadrature of the curve)."""
    x_h = HILL_START + HILL_LENGTH / (2 * np.pi) * np.arccos(1 - 2 * h / HILL_HEIGHT)
    x = np.linspace(0.0, x_h, 200001)
    z = np.where(x > HILL_START, 0.5 * HILL_HEIGHT * (1 - np.cos(2 * np.pi * (x - HILL_START)
                                                                 / HILL_LENGTH)), 0.0)
    return float(np.sum(np.hypot(np.diff(x), np.diff(z))))


def write_hill(tmp_path) -> str:
    path = tmp_path / "hill.csv"
    rows = ["x,y,z"] + [f"{a:.6f},{b:.6f},{c:.6f}" for a, b, c in hill_points()]
    path.write_text("\n".join(rows) + "\n")
    return str(path)


def test_hill_too_high_is_a_stall_finding_at_the_energy_station(tmp_path, capsys):
    v0 = 10.0
    expected = hill_station_at_height(v0**2 / (2 * G0))  # energy equation
    out = tmp_path / "hill.json"
    code = main(["check", write_hill(tmp_path), "--ideal", "--start-speed", str(v0),
                 "--json", str(out)])
    printed = capsys.readouterr().out
    assert code == 1
    doc = json.loads(out.read_text())
    assert doc["verdict"] == "fail"
    (stall,) = [f for f in doc["findings"] if f["kind"] == "stall"]
    assert stall["s_worst_m"] == pytest.approx(expected, abs=0.3)
    assert stall["attitude"] == "upright"
    assert all(s["verdict"] == "fail" for s in doc["seats"])
    (event,) = [e for e in doc["events"] if e["kind"] == "stall"]
    assert "cannot crest a hill" in event["message"]
    assert "FAIL" in printed and "cannot crest a hill" in printed
    # one station, printed once
    assert printed.count("cannot crest a hill") == 1
    assert printed.count(f"station {stall['s_worst_m']:.1f} m") == 1


@pytest.mark.parametrize("height, attitude", [(18.0, "inverted"), (10.0, "upright")])
def test_loop_entered_too_slowly_stalls_with_riders_hanging(height, attitude):
    # energy: the rider stops at height h; on a circle of radius R from its bottom, at the
    # angle theta with R (1 - cos theta) = h, i.e. station R theta; rider z axis at theta
    # from world up: inverted beyond 135 degrees; at the vertical (h = R) the riders lie on
    # their backs, pitched, not rolled: the train cannot get over the top and rolls back,
    # nobody hangs in the restraints
    radius = 10.0
    v0 = float(np.sqrt(2 * G0 * height))
    run = run_check(Centerline(vertical_loop(radius, turns=1.0)), ideal_rider(),
                    Operation(start_speed_m_s=v0), load_limits(BUNDLED_LIMITS))
    assert run.evaluation.verdict == "fail"
    stalls = [f for f in run.evaluation.findings if f.kind == "stall"]
    assert len(stalls) == 1
    theta = np.arccos(1 - height / radius)
    assert stalls[0].s_worst_m == pytest.approx(radius * theta, abs=0.3)
    assert stalls[0].attitude == attitude
    if attitude == "upright":
        assert "cannot crest" in stalls[0].detail and "hang" not in stalls[0].detail
    else:
        assert f"stalls {attitude}" in stalls[0].detail
        assert "riders would hang there" in stalls[0].detail
    (event,) = [e for e in events_of_run(run.evaluation, run.ride) if e.kind == "stall"]
    if attitude == "inverted":
        # energy to the top (2R) plus v_top^2 >= g0 R there (the car stays on the track only
        # while v^2 / r >= g0 at the top: common practice)
        need = np.sqrt(G0 * radius + 2 * G0 * (2 * radius - height))
        assert event.remedy.value == pytest.approx(need, rel=0.03)


def test_no_speed_at_the_start_says_what_to_give():
    run = run_check(Centerline(straight(60.0)), ideal_rider(), Operation(start_speed_m_s=0.0),
                    load_limits(BUNDLED_LIMITS))
    (stall,) = [f for f in run.evaluation.findings if f.kind == "stall"]
    assert "no speed at the start" in stall.detail
    assert "start speed" in stall.detail and "lift" in stall.detail and "launch" in stall.detail
    assert run.evaluation.verdict == "fail"
    # its remedy asks for speed, not for "at least 0.0 m/s to reach the top ahead"
    from checker.events import events_of_run

    (event,) = [e for e in events_of_run(run.evaluation, run.ride) if e.kind == "stall"]
    assert "0.0 m/s" not in event.remedy.text and "give it speed" in event.remedy.text


def test_case_file_with_one_stalling_case_fails_and_marks_the_matrix(tmp_path, capsys):
    cases = tmp_path / "cases.toml"
    cases.write_text('[[case]]\nname = "fast"\nstart_speed_m_s = 13.0\n\n'
                     '[[case]]\nname = "slow"\nstart_speed_m_s = 10.0\n')
    pdf = tmp_path / "cases.pdf"
    code = main(["check", write_hill(tmp_path), "--ideal", "--cases", str(cases),
                 "--workers", "1", "--quiet", "--pdf", str(pdf), "--seat-pages", "none"])
    printed = capsys.readouterr().out
    assert code == 1
    doc = json.loads(pdf.with_suffix(".json").read_text())
    assert doc["verdict"] == "fail"
    assert doc["matrix"]["car1-rider"] == {"fast": "pass", "slow": "stall"}
    (stall,) = [f for f in doc["findings"] if f["kind"] == "stall"]
    assert stall["case"] == "slow"
    assert stall["s_worst_m"] == pytest.approx(hill_station_at_height(10.0**2 / (2 * G0)),
                                               abs=0.3)
    assert " S" in printed.split("verdicts, seat by case")[1]
    pages = [page.extract_text() for page in PdfReader(str(pdf)).pages]
    assert "Overall: FAIL" in pages[0] and "STALL" in pages[0]
    assert pages[0].count("cannot crest a hill") == 1  # one message, printed once
    assert "car1-rider P S" in "".join(pages)  # the matrix row: case 1 passes, 2 stalls


def test_a_speed_march_that_does_not_settle_is_reported(monkeypatch):
    # with one Newton pass the march cannot settle on a ride with rolling resistance (the
    # wheel loads are linearised about the gravity-only guess): the ride must say so, and the
    # same ride with the full passes must settle and stay quiet
    from checker import dynamics
    from checker.resources import demo_folder
    from checker.ride import load_inputs, run_ride

    demo = demo_folder()
    inputs = load_inputs(demo / "thistle_comet_revB.csv", demo / "thistle_comet_train.toml",
                         operation=demo / "thistle_comet_revB.operation.toml")
    settled = run_ride(*inputs)
    assert settled.motion.unsettled_e == 0.0
    assert not any("did not settle" in w for w in settled.warnings)
    monkeypatch.setattr(dynamics, "MARCH_PASSES", 1)
    rough = run_ride(*inputs)
    assert rough.motion.unsettled_e > 0.0
    assert any("speed march did not settle" in w for w in rough.warnings)


def test_a_stalling_case_comes_back_from_parallel_workers(tmp_path):
    # the default runs cases in worker processes: the stall recorded there must travel back
    # (an exception pickles by its args; TrainStalled is rebuilt from its fields), and the
    # run must end with the same verdict and stall as one worker gives
    import pickle
    import subprocess
    import sys

    from checker.errors import TrainStalled

    stall = TrainStalled(12.5, 3.0, 0.0, cause="inverted", attitude="inverted")
    back = pickle.loads(pickle.dumps(stall))
    assert (back.station_m, back.cause, back.attitude, str(back)) == (12.5, "inverted",
                                                                      "inverted", str(stall))
    cases = tmp_path / "cases.toml"
    cases.write_text('[[case]]\nname = "fast"\nstart_speed_m_s = 13.0\n\n'
                     '[[case]]\nname = "slow"\nstart_speed_m_s = 10.0\n')
    track = write_hill(tmp_path)
    docs = {}
    for workers in ("1", "2"):
        out = tmp_path / f"w{workers}.json"
        done = subprocess.run([sys.executable, "-m", "checker", "check", str(track), "--ideal",
                               "--cases", str(cases), "--workers", workers, "--quiet",
                               "--json", str(out)], capture_output=True, text=True,
                              timeout=240)
        assert done.returncode == 1, done.stderr
        assert "Traceback" not in done.stderr
        docs[workers] = json.loads(out.read_text())
    assert docs["2"]["matrix"] == docs["1"]["matrix"] == {"car1-rider": {"fast": "pass",
                                                                         "slow": "stall"}}


def test_two_stalling_cases_each_named_with_its_own_station(tmp_path):
    # page 1 once gave both stalling cases the first one's station; each stops where the
    # energy equation puts it, v0^2 / (2 g0) up the hill (no losses in the ideal run)
    import re

    cases = tmp_path / "cases.toml"
    cases.write_text('[[case]]\nname = "fast"\nstart_speed_m_s = 13.0\n\n'
                     '[[case]]\nname = "slow"\nstart_speed_m_s = 10.0\n\n'
                     '[[case]]\nname = "slower"\nstart_speed_m_s = 9.0\n')
    pdf = tmp_path / "cases.pdf"
    assert main(["check", write_hill(tmp_path), "--ideal", "--cases", str(cases),
                 "--workers", "1", "--quiet", "--pdf", str(pdf), "--seat-pages", "none"]) == 1
    first = " ".join(PdfReader(str(pdf)).pages[0].extract_text().split())
    stations = dict(re.findall(r"case (slow|slower): the train \w+ .*? at station ([\d.]+) m",
                               first))
    assert stations.keys() == {"slow", "slower"}
    for name, speed in (("slow", 10.0), ("slower", 9.0)):
        assert float(stations[name]) == pytest.approx(
            hill_station_at_height(speed**2 / (2 * G0)), abs=0.3)
    # the parameters are the inputs as given (no start speed), not one case's; the ride
    # statistics say which case they describe
    doc = json.loads(pdf.with_suffix(".json").read_text())
    given = {p["name"]: p["value"] for p in doc["parameters"]}
    assert given["start speed"] == "0 m/s"
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(str(pdf)).pages).split())
    assert "Track, speed and ride time of load case fast (the first case)" in text


@pytest.mark.parametrize("pitch_deg, roll_deg, expected", [
    (60.0, 0.0, "upright"),      # a steep climb: on their backs, not on their side
    (0.0, 90.0, "on its side"),  # rolled a quarter turn
    (0.0, 50.0, "on its side"),
    (0.0, 30.0, "upright"),
    (150.0, 0.0, "inverted"),    # past the top of a loop
    (0.0, 180.0, "inverted"),    # a zero-g roll, upside down
])
def test_stall_attitude_comes_from_roll_and_inversion_not_pitch(pitch_deg, roll_deg, expected):
    # rider axes for a pitch (about the left axis) then a roll (about the track tangent):
    # up_z = cos(pitch) cos(roll), left_z = sin(roll) (rotation matrices, from memory)
    from checker.dynamics import attitude

    p, r = np.radians(pitch_deg), np.radians(roll_deg)
    assert attitude(float(np.cos(p) * np.cos(r)), float(np.sin(r))) == expected


def test_compare_names_a_stall_both_revisions_share(tmp_path, capsys):
    # the old revision stalled too, so it is no regression, but the new one still fails:
    # the terminal says so (it once never mentioned the stall)
    hill = write_hill(tmp_path)
    code = main(["compare", hill, hill, "--ideal", "--start-speed", "10", "--workers", "1",
                 "--quiet"])
    err = capsys.readouterr().err
    assert code == 0  # not worse than before
    assert "new revision, case nominal, stalls as the old one did" in err


def test_recorded_events_name_no_element_beyond_the_terminal_column():
    # recorded data have no track: the element reads "recorded data" (the terminal's
    # 20-character column once cut a longer text to "recorded data (no tr")
    from checker.events import explain_events, group_findings
    from checker.rules import Finding

    finding = Finding("duration +Gz", "duration", "gz", "seatA", "nominal", 5.0, 5.5, 0.5,
                      4.5, 4.0, -0.5, 5.2)
    (event,) = explain_events(group_findings([finding]))
    assert event.place == "recorded data" and len(event.place) <= 20


def test_a_train_at_rest_on_a_track_level_to_its_last_digits_stalls_at_the_start():
    # a fall of 1e-12 m per metre (rounding's last bit): with no losses (the ideal rider)
    # the train once crept along at microns a second and "reached the end" after days,
    # which the memory check then refused (a trial's S-curve: 5e14 s); at 1 mm/s and below
    # it is at rest: no speed at the start
    x = np.arange(0.0, 80.0, 0.5)
    points = np.column_stack([x, 0 * x, -1e-12 * x])
    run = run_check(Centerline(points), ideal_rider(), Operation(start_speed_m_s=0.0),
                    load_limits(BUNDLED_LIMITS))
    (stall,) = [f for f in run.evaluation.findings if f.kind == "stall"]
    assert "no speed at the start" in stall.detail
    assert run.ride.motion.duration_s < 10.0

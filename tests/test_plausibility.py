"""Plausibility warnings: the run goes on; the warnings reach the output and the report."""

from __future__ import annotations

import numpy as np
from pypdf import PdfReader
from shapes import straight, vertical_loop

from checker.cli import main
from checker.operation import Operation
from checker.ride import RideOptions, run_ride
from checker.track import Centerline
from checker.train import ideal_rider


def warnings_for(points, roll=None, start=5.0):
    result = run_ride(Centerline(np.asarray(points, dtype=float), roll), ideal_rider(),
                      Operation(start_speed_m_s=start), RideOptions(rate_hz=50))
    return " | ".join(result.warnings)


def test_heights_in_feet_read_as_metres_are_flagged():
    # a 60 m tall hill written in feet is a 197 m height range read as metres
    x = np.linspace(0, 1200, 601)
    z = 197.0 * np.exp(-((x - 600) / 150) ** 2)
    text = warnings_for(np.column_stack([x, 0 * x, z]), start=63.0)
    assert "feet or millimetres read as metres" in text


def test_coarse_sampling_is_flagged():
    coarse = vertical_loop(10.0, 1.0, per_turn=20)  # 18 deg between samples
    assert "sampling is coarse" in warnings_for(coarse, start=23.0)
    fine = vertical_loop(10.0, 1.0, per_turn=360)
    assert "sampling is coarse" not in warnings_for(fine, start=23.0)


def test_fast_bank_change_is_flagged():
    pts = straight(100.0, 1.0)
    roll = np.where(pts[:, 0] > 50, 90.0, 0.0)  # 90 deg within one metre
    assert "bank angle changes at" in warnings_for(pts, roll, start=20.0)


def test_speed_beyond_the_layouts_height_is_flagged():
    pts = straight(100.0, 1.0)
    assert "energy check" in warnings_for(pts, start=30.0)  # level track, no launch


def test_curvature_spike_between_uneven_samples_is_flagged():
    x = np.array([0, 10, 20, 20.2, 30, 40, 50, 60], dtype=float)
    y = np.array([0, 0, 0, 0.05, 0, 0, 0, 0], dtype=float)
    text = warnings_for(np.column_stack([x, y, 0 * x]), start=10.0)
    assert "curvature spike between samples" in text


def test_warnings_are_listed_in_the_report(tmp_path, capsys):
    track = tmp_path / "level.csv"
    track.write_text("x,y,z\n" + "".join(f"{x},0,0\n" for x in range(0, 101, 2)))
    pdf = tmp_path / "r.pdf"
    assert main(["check", str(track), "--ideal", "--start-speed", "30", "--pdf",
                 str(pdf)]) in (0, 1)
    assert "energy check" in capsys.readouterr().err
    text = " ".join(p.extract_text() for p in PdfReader(str(pdf)).pages)
    text = " ".join(text.split())
    assert "Review items" in text and "energy check" in text


def _gerono(height_m: float) -> np.ndarray:
    """Gerono's lemniscate (x = R sin t, y = R sin t cos t), R = 30 m: a figure-eight whose
    two passes meet at the origin (t = 0 and t = pi); the second pass is ``height_m``
    higher, the height changing smoothly as (1 - cos t) / 2."""
    t = np.linspace(-0.5, np.pi + 0.5, 800)
    return np.column_stack([30 * np.sin(t), 30 * np.sin(t) * np.cos(t),
                            height_m * (1 - np.cos(t)) / 2])


def test_track_crossing_itself_is_flagged_and_a_flyover_is_not():
    from shapely.geometry import LineString

    level = _gerono(0.0)
    flyover = _gerono(6.0)
    # shapely: both figure-eights cross themselves in plan (outside reference)
    assert not LineString(level[:, :2]).is_simple and not LineString(flyover[:, :2]).is_simple
    text = warnings_for(level, start=12.0)
    assert "passes within 0.0" in text and "crosses or clashes" in text
    # 6 m apart in height at the crossing: more than the 1 m clearance of one rider
    assert "passes within" not in warnings_for(flyover, start=12.0)
    assert "passes within" not in warnings_for(straight(200.0, 1.0), start=12.0)


def test_clearance_grows_with_the_seat_offset():
    from checker.plausibility import MIN_CLEARANCE_M, train_clearance_m
    from checker.train import Seat, Train

    assert train_clearance_m(ideal_rider()) == MIN_CLEARANCE_M
    high = Train(seats=(Seat("a", left_m=0.3, up_m=1.2),))
    assert np.isclose(train_clearance_m(high), np.hypot(0.3, 1.2) + 0.5)


def _record(path, gz: float) -> str:
    rows = "".join(f"{i / 100:.2f},0,0,{gz}\n" for i in range(300))
    path.write_text("t,gx,gy,gz\n" + rows)
    return str(path)


def test_record_rest_level_far_from_one_g_is_flagged(tmp_path, capsys):
    # a seated rider at rest reads +1 g; 1 g = 9.80665 m/s^2 (3rd CGPM, 1901)
    in_g = _record(tmp_path / "g.csv", 1.0)
    assert main(["check-history", in_g, "--units", "m/s2"]) == 0
    assert "median of 0.10 g" in capsys.readouterr().err
    assert main(["check-history", in_g]) == 0
    assert "median" not in capsys.readouterr().err
    in_si = _record(tmp_path / "si.csv", 9.80665)
    assert main(["check-history", in_si]) in (0, 1)
    assert "median of 9.81 g" in capsys.readouterr().err
    assert main(["check-history", in_si, "--units", "m/s2"]) == 0
    assert "median" not in capsys.readouterr().err
    upside_down = _record(tmp_path / "down.csv", -1.0)
    main(["check-history", upside_down])
    assert "median of -1.00 g" in capsys.readouterr().err


def test_filter_corner_outside_the_usual_range_is_flagged(tmp_path, capsys):
    from checker.resources import bundled_limits

    record = _record(tmp_path / "g.csv", 1.0)
    text = bundled_limits().read_text()
    for corner, flagged in ((0.05, True), (5.0, False), (45.0, True)):
        limits = tmp_path / f"limits_{corner}.toml"
        limits.write_text(text.replace("corner_hz = 5.0", f"corner_hz = {corner}"))
        (tmp_path / "illustrative_yz.csv").write_bytes(
            (bundled_limits().parent / "illustrative_yz.csv").read_bytes())
        main(["check-history", record, "--limits", str(limits)])
        err = capsys.readouterr().err
        assert ("outside the usual 1 to 30 Hz" in err) == flagged, (corner, err)


def test_running_off_the_end_of_the_track_is_flagged():
    # a level straight without a stopping brake: the train still rolls at the last sample,
    # so whatever follows is unchecked; with a brake that stops it, nothing is said
    from checker.operation import Brake

    pts = straight(150.0, 1.0)
    assert "reaches the end of the track at" in warnings_for(pts, start=8.0)
    braked = run_ride(Centerline(pts), ideal_rider(),
                      Operation(start_speed_m_s=8.0,
                                sections=(Brake(start_m=-60.0, end_m=-2.0, speed_m_s=0.0),)),
                      RideOptions(rate_hz=50))
    assert braked.motion.end_reason.startswith("stopped by a brake")
    assert not any("end of the track" in w for w in braked.warnings)

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

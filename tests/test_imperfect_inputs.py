"""Right answers from imperfect inputs: rounded and uneven track samples, a start from rest,
the filter's start and the sign of Gy as the README words it (sources named in each test)."""

from __future__ import annotations

import re
from dataclasses import replace
from pathlib import Path

import numpy as np
import pytest
from scipy import signal
from scipy.integrate import cumulative_simpson
from shapes import G0, straight

from checker.conditioning import START_WINDOW_S, FilterSpec, lowpass
from checker.documents import BUNDLED_LIMITS
from checker.geometry import build_geometry
from checker.limits import load_limits
from checker.operation import Operation
from checker.ride import RideOptions, run_ride
from checker.rules import evaluate
from checker.track import FOOT_M, Centerline, coordinate_resolution, load_centerline
from checker.train import Seat, ideal_rider

README = Path(__file__).resolve().parent.parent / "README.md"
HEART = replace(ideal_rider(), seats=(Seat("heart", 0.0, 0.0, 1.05),))  # 1.05 m above rails
LIMITS = load_limits(BUNDLED_LIMITS)


def loop_points(stations: np.ndarray, radius: float = 10.0, drift: float = 0.5) -> np.ndarray:
    """Points of a vertical loop (with a small sideways drift per turn) at given arc lengths
    of its circle: x = R sin(s/R), z = R (1 - cos(s/R))."""
    theta = stations / radius
    return np.column_stack([radius * np.sin(theta), drift * theta / (2 * np.pi),
                            radius * (1 - np.cos(theta))])


def loop_ride(line: Centerline, options: RideOptions | None = None):
    # Released from 5R/2 above the bottom of a frictionless loop: v^2 = 5 g R at the bottom
    # (energy conservation, Halliday, Resnick and Walker, work-energy chapter, from memory).
    ops = Operation(start_speed_m_s=float(np.sqrt(5 * G0 * 10.0)))
    return run_ride(line, HEART, ops, options or RideOptions())


def write_track(path: Path, points_in_file_units: np.ndarray, decimals: int) -> Path:
    rows = ["x,y,z"] + [",".join(f"{v:.{decimals}f}" for v in p) for p in points_in_file_units]
    path.write_text("\n".join(rows) + "\n")
    return path


@pytest.mark.parametrize("spacing, grid, units", [
    (0.25, 0.001, "m"), (0.1, 0.001, "m"), (0.25, 0.0001, "m"), (0.1, 0.0001, "m"),
    (0.25, 0.01, "ft"), (0.1, 0.01, "ft")])
def test_rounded_loop_agrees_with_unrounded(tmp_path, spacing, grid, units):
    # The reference is the same loop from unrounded samples (full double precision) through
    # the exact interpolating fit; the rounded file (a CAD export writing 3 or 4 decimals of
    # a metre, or 2 decimals of a foot) must give the same filtered Gz and seat Gx within
    # 0.05 g and the same findings. Without the fit within the rounding, 1 mm rounding gives
    # errors of several g (measured while building this: 36 g of seat Gx at 0.25 m spacing).
    stations = np.arange(0.0, 2.5 * np.pi * 10.0, spacing)
    exact = loop_points(stations)
    scale = FOOT_M if units == "ft" else 1.0
    decimals = int(round(-np.log10(grid)))
    path = write_track(tmp_path / "loop.csv", exact / scale, decimals)
    rounded = load_centerline(path, units)
    assert rounded.resolution_m == pytest.approx(grid * scale)
    reference = loop_ride(Centerline(exact))
    result = loop_ride(rounded)
    assert any(f"{grid:g} {units} grid" in w for w in result.warnings)
    gz_error, gx_error = filtered_errors(reference, result)
    assert gz_error < 0.05
    assert gx_error < 0.05
    rules = {(f.rule, f.seat) for f in evaluate(result.histories, LIMITS).findings}
    assert rules == {(f.rule, f.seat) for f in evaluate(reference.histories, LIMITS).findings}


def filtered_errors(reference, result) -> tuple[float, float]:
    """Largest difference [g] of filtered Gz and of filtered Gx between two rides' first seat."""
    ref_h, got_h = reference.histories[0], result.histories[0]
    n = min(len(ref_h.t), len(got_h.t)) - 10  # the rounded layout may differ in length
    ref_f = lowpass(ref_h.g, 200.0, LIMITS.filter)[:n]
    got_f = lowpass(got_h.g, 200.0, LIMITS.filter)[:n]
    return (float(np.max(np.abs(got_f[:, 2] - ref_f[:, 2]))),
            float(np.max(np.abs(got_f[:, 0] - ref_f[:, 0]))))


def clothoid_loop_points(stations: np.ndarray) -> np.ndarray:
    """A vertical loop of clothoids: 5 m straight, curvature rising linearly to 1/8 m^-1 over
    15 m, an 8 m arc, falling back over 15 m, 5 m straight (one full turn), drifting 0.02 m
    sideways per radian. The pitch is the integral of the curvature (closed form, piecewise
    quadratic); x and z integrate its cosine and sine (scipy's cumulative Simpson rule on a
    1 mm grid, far finer than any grid tested)."""
    k, spiral, straight_m = 1.0 / 8.0, 15.0, 5.0
    arc = (2 * np.pi - k * spiral) / k
    fine = np.linspace(0.0, 2 * straight_m + 2 * spiral + arc,
                       int(round((2 * straight_m + 2 * spiral + arc) / 0.001)) + 1)
    a = np.clip(fine - straight_m, 0.0, spiral)  # along the entry spiral
    b = np.clip(fine - straight_m - spiral, 0.0, arc)  # along the arc
    c = np.clip(fine - straight_m - spiral - arc, 0.0, spiral)  # along the exit spiral
    pitch = k * a**2 / (2 * spiral) + k * b + k * c - k * c**2 / (2 * spiral)
    x = cumulative_simpson(np.cos(pitch), x=fine, initial=0.0)
    z = cumulative_simpson(np.sin(pitch), x=fine, initial=0.0)
    return np.column_stack([np.interp(stations, fine, x), 0.02 * np.interp(stations, fine, pitch),
                            np.interp(stations, fine, z)])


BLURRED = "open: the fit blurs the steps of the rate of curvature change at the clothoid ends"


@pytest.mark.parametrize("spacing, grid, units", [
    (0.25, 0.0001, "m"), (0.1, 0.0001, "m"),
    pytest.param(0.25, 0.001, "m", marks=pytest.mark.xfail(
        strict=True, reason=f"{BLURRED}: measured 0.062 g of filtered seat Gx")),
    pytest.param(0.25, 0.01, "ft", marks=pytest.mark.xfail(
        strict=True, reason=f"{BLURRED}: measured 0.088 g of filtered seat Gx, 0.085 g of Gz"))])
def test_rounded_clothoid_loop_agrees_with_unrounded(tmp_path, spacing, grid, units):
    # As above, on a loop whose curvature changes linearly (clothoids) between straights and
    # an arc: at each end of a clothoid the rate of curvature change steps, and seat Gx (1.05 m
    # above the rails) steps with it by h v^2 dk/ds / g = 1.05 * 400 / 120 / 9.81 = 0.36 g at
    # 20 m/s. The reference is the unrounded samples through the exact interpolating fit.
    # Open at 1 mm and 0.01 ft: leaving the level bottom, the entry clothoid rises k' s^3 / 6,
    # under half a 3 mm grid for its first metre, so the rounded file cannot place the step.
    total = 2 * 5.0 + 2 * 15.0 + (2 * np.pi - 15.0 / 8.0) * 8.0
    exact = clothoid_loop_points(np.arange(0.0, total, spacing))
    scale = FOOT_M if units == "ft" else 1.0
    decimals = int(round(-np.log10(grid)))
    rounded = load_centerline(write_track(tmp_path / "loop.csv", exact / scale, decimals), units)
    assert rounded.resolution_m == pytest.approx(grid * scale)
    ops = Operation(start_speed_m_s=20.0)
    reference = run_ride(Centerline(exact), HEART, ops)
    result = run_ride(rounded, HEART, ops)
    assert reference.geometry.curvature.max() == pytest.approx(1 / 8.0, rel=1e-3)
    gz_error, gx_error = filtered_errors(reference, result)
    assert gz_error < 0.05
    assert gx_error < 0.05
    rules = {(f.rule, f.seat) for f in evaluate(result.histories, LIMITS).findings}
    assert rules == {(f.rule, f.seat) for f in evaluate(reference.histories, LIMITS).findings}


def test_fit_reaches_its_end_continuations_whatever_the_offset():
    # Shifted by 0.2 m before rounding to 1 mm, this loop once put its first continued sample a
    # last bit outside the fit's knots and scipy refused the design matrix (ValueError).
    pts = np.round(loop_points(np.arange(0.0, 2.5 * np.pi * 10.0, 0.25)) + [0.2, 0.0, 0.0], 3)
    geometry = build_geometry(pts, smoothing_m=0.0005)
    assert geometry.smoothing.max_deviation_m < 0.002


def test_denser_rounded_sampling_is_not_worse():
    # The same loop rounded to 1 mm at 0.25, 0.1 and 0.05 m spacing: the error of the
    # filtered seat Gx against the unrounded answer stays within 0.05 g at every density
    # (an interpolating fit's error grows like rounding / spacing^2 instead).
    stations = np.arange(0.0, 2.5 * np.pi * 10.0, 0.05)
    reference = loop_ride(Centerline(loop_points(stations)))
    ref_f = lowpass(reference.histories[0].g, 200.0, LIMITS.filter)
    for spacing in (0.25, 0.1, 0.05):
        pts = np.round(loop_points(np.arange(0.0, 2.5 * np.pi * 10.0, spacing)), 3)
        got = loop_ride(Centerline(pts, resolution_m=0.001, resolution_text="0.001 m"))
        got_f = lowpass(got.histories[0].g, 200.0, LIMITS.filter)
        n = min(len(ref_f), len(got_f)) - 10
        assert np.max(np.abs(got_f[:n] - ref_f[:n])[:, [0, 2]]) < 0.05, spacing


def test_smoothing_zero_asks_for_the_exact_interpolating_fit(tmp_path):
    pts = np.round(loop_points(np.arange(0.0, 20.0, 0.25)), 3)
    line = load_centerline(write_track(tmp_path / "loop.csv", pts, 3))
    exact = loop_ride(line, RideOptions(smoothing_m=0.0))
    assert exact.geometry.smoothing is None
    assert not any("grid" in w for w in exact.warnings)
    (at_samples,) = exact.geometry.sample(exact.geometry.sample_stations, "position")
    assert np.max(np.abs(at_samples - pts)) < 2e-3  # through the samples (grid-limited)
    fitted = loop_ride(line)
    assert fitted.geometry.smoothing.tolerance_m == pytest.approx(0.0005)


def test_coordinate_resolution_finds_the_decimal_grid():
    # A value printed with d decimals is a multiple of 10^-d (decimal notation).
    assert coordinate_resolution(np.array([1.234, -2.5, 3.0])) == pytest.approx(0.001)
    assert coordinate_resolution(np.array([0.1 + 0.2, 7.0])) == pytest.approx(0.1)
    assert coordinate_resolution(np.array([np.pi, 1.0])) is None


def test_curvature_noise_is_reported():
    # CAD noise (3 mm, normal) on a circle of radius 20 m at 0.5 m spacing: curvature noise a
    # fit within 2 mm removes; the same circle without noise gives no such item.
    rng = np.random.default_rng(3)
    theta = np.arange(0.0, np.pi, 0.5 / 20.0)
    circle = np.column_stack([20 * np.sin(theta), 20 * (1 - np.cos(theta)),
                              np.zeros_like(theta)])
    noisy = circle + np.column_stack([rng.normal(0, 0.003, (len(theta), 2)),
                                      np.zeros_like(theta)])
    ops = Operation(start_speed_m_s=10.0)
    noisy_run = run_ride(Centerline(noisy), ideal_rider(), ops)
    clean_run = run_ride(Centerline(circle), ideal_rider(), ops)
    assert any("curvature noise" in w for w in noisy_run.warnings)
    assert not any("curvature noise" in w for w in clean_run.warnings)


def test_alternating_spacing_matches_even_spacing():
    # The same loop sampled at alternating 0.1 m / 1.9 m and at an even 1 m: the curve
    # (a circle, so the answer is known to be smooth) must not ring between the uneven
    # samples: filtered and raw Gx, Gz agree within 0.02 g.
    length = 2.5 * np.pi * 10.0
    even = np.arange(0.0, length, 1.0)
    uneven = np.cumsum(np.concatenate([[0.0], np.tile([0.1, 1.9], int(length / 2))]))
    uneven = uneven[uneven <= even[-1] + 1e-9]
    a = loop_ride(Centerline(loop_points(even)))
    b = loop_ride(Centerline(loop_points(uneven)))
    ha, hb = a.histories[0], b.histories[0]
    n = min(len(ha.t), len(hb.t)) - 10
    assert np.max(np.abs(ha.g[:n] - hb.g[:n])[:, [0, 2]]) < 0.02
    fa, fb = lowpass(ha.g, 200.0, LIMITS.filter), lowpass(hb.g, 200.0, LIMITS.filter)
    assert np.max(np.abs(fa[:n] - fb[:n])[:, [0, 2]]) < 0.02


def test_start_from_rest_down_a_slope_matches_energy_conservation():
    # Frictionless constant slope of angle a from rest: v(s) = sqrt(2 g0 s sin a) at every
    # output sample (conservation of mechanical energy); v grows like sqrt(s), which a
    # linear interpolation of v between grid stations gets wrong near the start.
    angle = np.radians(20.0)
    along = straight(60.0, 0.5)
    pts = np.column_stack([along[:, 0] * np.cos(angle), along[:, 1],
                           -along[:, 0] * np.sin(angle)])
    result = run_ride(Centerline(pts), ideal_rider(), Operation(), RideOptions())
    h = result.histories[0]
    expected = np.sqrt(2 * G0 * (h.s - h.s[0]) * np.sin(angle))
    assert h.v[1] > 0
    assert np.max(np.abs(h.v - expected)) < 1e-6 * expected.max()
    near_start = h.s - h.s[0] < 0.2
    assert near_start.sum() > 3
    assert np.allclose(h.v[near_start], expected[near_start], rtol=1e-6, atol=1e-9)


def test_filter_starts_from_a_representative_level():
    # A constant 1 g signal whose first sample is 4 g (a glitch): the output differs from 1 g
    # by no more than the glitch through the filter's own impulse response (scipy's design
    # of the same filter as the reference), i.e. no start-up transient is invented. Started
    # at the first sample instead, the output would begin at 4 g.
    rate = 200.0
    spec = FilterSpec()
    x = np.ones(400)
    x[0] = 4.0
    out = lowpass(x, rate, spec)
    sos = signal.butter(spec.order, spec.corner_hz, fs=rate, output="sos")
    impulse = np.zeros(400)
    impulse[0] = 1.0
    bound = 3.0 * np.max(np.abs(signal.sosfilt(sos, impulse)))
    assert np.max(np.abs(out - 1.0)) <= bound + 1e-12
    assert bound < 0.2
    assert f"{START_WINDOW_S:g} s" in spec.describe()


def test_left_turn_gives_positive_gy_and_the_readme_says_what_the_rider_feels():
    # Circular motion: on a flat left-hand turn the seat pushes the rider toward the centre
    # (the left, +y), so the specific force is Gy = +v^2 / (g R); the rider feels pressed the
    # other way, toward the right. The README's axis table must say exactly that.
    radius, speed = 30.0, 12.0
    theta = np.linspace(0.0, np.pi, 400)
    left_turn = np.column_stack([radius * np.sin(theta), radius * (1 - np.cos(theta)),
                                 np.zeros_like(theta)])  # counter-clockwise seen from above
    result = run_ride(Centerline(left_turn), ideal_rider(), Operation(start_speed_m_s=speed))
    h = result.histories[0]
    inside = (h.s > 5) & (h.s < result.geometry.length - 5)
    assert np.allclose(h.g[inside, 1], speed**2 / (G0 * radius), atol=2e-3)
    text = README.read_text()
    row = re.search(r"^\| Gy > 0 \|(.*)$", text, re.MULTILINE)
    assert row is not None
    cells = [c.strip() for c in row.group(1).split("|")]
    assert cells[0] == "toward the rider's left"  # the push of the seat (sign of Gy)
    assert cells[1].startswith("pressed toward the rider's right")  # the sensation
    assert "left turn" in cells[2]
    for axis in ("Gx > 0", "Gx < 0", "Gy < 0", "Gz > 0", "Gz < 0"):
        assert f"| {axis} |" in text


def straight_hill_and_turn(stations: np.ndarray, radius: float = 30.0,
                           lead: float = 60.0) -> np.ndarray:
    """A straight with a 2 m cosine hill (20 m to 50 m), then a flat right turn of
    ``radius`` entered at ``lead`` with no transition, at the given stations [m]."""
    theta = np.clip(stations - lead, 0.0, None) / radius
    x = np.where(stations < lead, stations, lead + radius * np.sin(theta))
    y = np.where(stations < lead, 0.0, -radius * (1 - np.cos(theta)))
    z = 1.0 - np.cos(2 * np.pi * np.clip(stations - 20.0, 0.0, 30.0) / 30.0)
    return np.column_stack([x, y, z])


@pytest.mark.parametrize("decimals", [5, 6])
def test_unevenly_spaced_finely_rounded_track_passes_through_its_samples(tmp_path, decimals):
    # Gaps of 0.1 m to 2.4 m, written with 5 or 6 decimals: the smoothing fit's evenly spaced
    # knots cannot follow the dense parts within the tiny tolerance (an internal error once)
    # or swing between the sparse samples (10 g of error once with 4 decimals). The curve
    # then passes through every sample and says why; the filtered signals agree with the
    # same samples at full precision within 0.01 g.
    rng = np.random.default_rng(1)
    fine = np.arange(0.0, 210.0, 0.1)
    picks = [0]
    while picks[-1] < len(fine) - 1:
        picks.append(min(len(fine) - 1, picks[-1] + int(rng.integers(1, 25))))
    stations = fine[picks]
    ops = Operation(start_speed_m_s=15.0)
    exact = run_ride(Centerline(straight_hill_and_turn(stations)), HEART, ops)
    path = write_track(tmp_path / "uneven.csv", straight_hill_and_turn(stations), decimals)
    result = run_ride(load_centerline(path, "m"), HEART, ops)
    assert result.geometry.smoothing is not None and result.geometry.smoothing.refused
    a, b = (lowpass(r.histories[0].g, 200.0, LIMITS.filter) for r in (exact, result))
    n = min(len(a), len(b)) - 10
    assert np.max(np.abs(a[:n] - b[:n])) < 0.01


def test_a_rule_the_fit_decides_is_named_with_its_place():
    # A flat turn entered with no transition: the lateral onset at the step is what the
    # smoothing of a 1 mm export rounds off. With the onset limit set between the smoothed
    # and the exact curve's worst Gy onset, the check passes with the smoothed curve and
    # must name the rule and the step's station as decided by the fit (a 1 mm export once
    # turned FAIL into PASS without a word).
    from checker.limits import LimitSet, OnsetLimit
    from checker.ride import fit_dependence

    lead = 60.0
    points = straight_hill_and_turn(np.arange(0.0, 210.0, 0.5), lead=lead)
    rounded = Centerline(np.round(points, 3), resolution_m=0.001)
    ops = Operation(start_speed_m_s=18.0)
    worst = []
    for smoothing in (None, 0.0):
        ride = run_ride(rounded, HEART, ops, RideOptions(smoothing_m=smoothing))
        gy = lowpass(ride.histories[0].g, 200.0, LIMITS.filter)[:, 1]
        worst.append(np.max(np.abs(np.gradient(gy, ride.histories[0].t))))
    assert worst[1] > 1.2 * worst[0]  # the fit lowers the onset at the step
    limits = LimitSet("onset only", "tests", "1", True, LIMITS.filter, (), (),
                      (OnsetLimit("gy", 0.5 * (worst[0] + worst[1])),))
    options = RideOptions()
    ride = run_ride(rounded, HEART, ops, options)
    smoothed = evaluate(ride.histories, limits)
    assert not smoothed.findings  # passes with the smoothed curve
    notes = fit_dependence(rounded, HEART, ops, limits, options, "nominal", smoothed)
    (note,) = notes
    assert note.startswith("onset gy passes with the rounded coordinates smoothed but fails")
    station = float(re.search(r"at station ([\d.]+) m", note).group(1))
    assert abs(station - lead) < 5.0  # at the turn's entry

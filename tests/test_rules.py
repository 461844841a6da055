"""The rule engine against known answers and reference libraries (sources named)."""

from __future__ import annotations

from dataclasses import replace

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from scipy import signal
from shapely.geometry import LineString, Point, Polygon

from checker.conditioning import FilterSpec, design_sos, lowpass
from checker.history import RecordedSignal
from checker.limits import (
    CombinedEnvelope,
    DurationLimit,
    LimitSet,
    OnsetLimit,
    contains,
    outside_fraction,
    polygon_problem,
)
from checker.rules import evaluate, exposure_curve

RATE = 200.0


DEFAULT_FILTER = FilterSpec()


def exposure_brute_force(x: np.ndarray) -> np.ndarray:
    """O(N^2) reference: for each length k, the max over windows of the window minimum."""
    n = len(x)
    return np.array([max(x[i:i + k].min() for i in range(n - k + 1)) for k in range(1, n + 1)])


def limit_set(duration=(), combined=(), onset=(), spec=DEFAULT_FILTER):
    return LimitSet("test", "", "", False, spec, tuple(duration), tuple(combined), tuple(onset))


def rest_signal(n: int) -> np.ndarray:
    g = np.zeros((n, 3))
    g[:, 2] = 1.0
    return g


def pulse(level: float, width_s: float, total_s: float = 20.0, axis: int = 2):
    t = np.arange(int(total_s * RATE)) / RATE
    g = rest_signal(len(t))
    on = (t >= 5.0) & (t < 5.0 + width_s)
    g[on, axis] = level
    return RecordedSignal("s1", t, g)


GZ_LIMIT = DurationLimit("gz", 1, np.array([0.0, 1.0, 4.0]), np.array([5.0, 4.0, 3.0]))
NO_FILTER_EFFECT = FilterSpec(kind="none")  # the rules alone, on the signal as given


# Synthetic signals with known answers: a 3.5 g plateau is allowed for up to 2.5 s by the
# linear table (4.0 at 1 s, 3.0 at 4 s): 3.5 = 4 - (d - 1) / 3  ->  d = 2.5 s.
def test_rectangular_pulse_longer_than_allowed_fails():
    ev = evaluate([pulse(3.5, 3.0)], limit_set([GZ_LIMIT], spec=NO_FILTER_EFFECT))
    assert ev.verdict == "fail"
    (f,) = ev.findings
    assert f.kind == "duration" and f.axis == "gz"
    assert f.t_start == pytest.approx(5.0, abs=0.05) and f.t_end == pytest.approx(8.0, abs=0.05)
    assert f.duration_s == pytest.approx(3.0, abs=0.01)
    assert f.limit_g == pytest.approx(4.0 - (3.0 - 1.0) / 3.0, abs=0.02)
    assert f.margin < 0


def test_same_pulse_shorter_passes():
    ev = evaluate([pulse(3.5, 2.0)], limit_set([GZ_LIMIT], spec=NO_FILTER_EFFECT))
    assert ev.verdict == "pass" and not ev.findings


def test_negative_direction_pulse():
    # -Gz (eyes up): -1.0 g for 2 s against an allowed -1.2 g at 0 s and -0.5 g at 2 s.
    neg = DurationLimit("gz", -1, np.array([0.0, 2.0]), np.array([-1.2, -0.5]))
    ev = evaluate([pulse(-1.0, 2.0)], limit_set([neg], spec=NO_FILTER_EFFECT))
    assert ev.verdict == "fail" and ev.findings[0].peak_g == pytest.approx(-1.0, abs=0.02)
    ok = evaluate([pulse(-0.4, 2.0)], limit_set([neg], spec=NO_FILTER_EFFECT))
    assert ok.verdict == "pass"


SQUARE = np.array([[-1.0, 0.0], [1.0, 0.0], [1.0, 3.0], [-1.0, 3.0]])  # y-z, contains (0, 1)


def test_point_just_inside_polygon_passes_just_outside_fails():
    env = CombinedEnvelope("box", ("gy", "gz"), SQUARE)
    inside = evaluate([pulse(0.99, 1.0, axis=1)], limit_set(combined=[env],
                                                            spec=NO_FILTER_EFFECT))
    outside = evaluate([pulse(1.01, 1.0, axis=1)], limit_set(combined=[env],
                                                             spec=NO_FILTER_EFFECT))
    assert inside.verdict == "pass"
    assert outside.verdict == "fail"
    (f,) = outside.findings
    # ray from the rest point (0, 1) along +gy meets the edge gy = 1: 1 % outside
    assert f.unit == "%" and -f.margin == pytest.approx(1.0, abs=0.2)


def test_onset_ramp_with_known_slope():
    # A ramp of 10 g/s in gz lasting 0.3 s; limit 8 g/s fails, 12 g/s passes.
    t = np.arange(int(10 * RATE)) / RATE
    g = rest_signal(len(t))
    g[:, 2] += np.clip((t - 4.0) * 10.0, 0.0, 3.0)
    sig = RecordedSignal("s1", t, g)
    spec = NO_FILTER_EFFECT
    fail = evaluate([sig], limit_set(onset=[OnsetLimit("gz", 8.0)], spec=spec))
    assert fail.verdict == "fail"
    assert fail.findings[0].peak_g == pytest.approx(10.0, rel=0.03)
    assert fail.findings[0].duration_s == pytest.approx(0.3, abs=0.05)
    assert evaluate([sig], limit_set(onset=[OnsetLimit("gz", 12.0)], spec=spec)).verdict == "pass"


def test_butterworth_minus_3db_at_corner():
    # Butterworth (1930): |H(fc)| = 1/sqrt(2) for any order; here the filter as applied.
    fs, fc = 1000.0, 5.0
    t = np.arange(int(40 * fs)) / fs
    x = np.sin(2 * np.pi * fc * t)
    y = lowpass(x, fs, FilterSpec(order=4, corner_hz=fc))
    amplitude = np.sqrt(2) * np.std(y[len(y) // 2:])  # steady state
    assert 20 * np.log10(amplitude) == pytest.approx(-3.0103, abs=0.02)


def test_four_pole_rolloff_80_db_per_decade():
    # Any DSP text: an n-pole Butterworth falls 20 n dB per decade far above the corner.
    fs, fc = 50_000.0, 5.0
    sos = design_sos(FilterSpec(order=4, corner_hz=fc), fs)
    _, h = signal.sosfreqz(sos, worN=[100.0, 1000.0], fs=fs)
    assert 20 * np.log10(abs(h[0]) / abs(h[1])) == pytest.approx(80.0, abs=0.5)


def test_filter_matches_scipy_design():
    # scipy.signal butter + sosfilt as the reference library, started in steady state at
    # the median of the first 0.1 s (the start the method text states).
    rng = np.random.default_rng(3)
    x = 1.0 + rng.normal(size=2000)
    sos = signal.butter(4, 5.0, fs=RATE, output="sos")
    level = np.median(x[: int(round(0.1 * RATE))])
    expected, _ = signal.sosfilt(sos, x, zi=signal.sosfilt_zi(sos) * level)
    assert np.max(np.abs(lowpass(x, RATE, FilterSpec()) - expected)) < 1e-9


def test_filter_starts_at_rest_without_transient():
    y = lowpass(rest_signal(400), RATE, FilterSpec())
    assert np.allclose(y, rest_signal(400), atol=1e-12)


@settings(max_examples=200, deadline=None)
@given(st.lists(st.floats(-5, 5, allow_nan=False), min_size=1, max_size=60))
def test_exposure_curve_matches_brute_force(values):
    x = np.asarray(values)
    assert np.allclose(exposure_curve(x, 1.0).levels_g, exposure_brute_force(x))


def vertex_edge_gap(v: np.ndarray) -> float:
    """Smallest distance from a vertex to an edge it does not belong to (shapely)."""
    m = len(v)
    gaps = [LineString([v[i], v[(i + 1) % m]]).distance(Point(v[k]))
            for k in range(m) for i in range(m) if k not in (i, (i + 1) % m)]
    return min(gaps) if gaps else np.inf


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.floats(-3, 3), st.floats(-3, 3)), min_size=3, max_size=7),
       st.lists(st.tuples(st.floats(-4, 4), st.floats(-4, 4)), min_size=1, max_size=20))
def test_polygon_validity_and_containment_agree_with_shapely(vertices, points):
    v = np.asarray(vertices)
    shape = Polygon(v)
    problem = polygon_problem(v)
    if problem is not None:
        if "zero area" not in problem and "distinct" not in problem and shape.is_valid:
            # ours is stricter only where a vertex (nearly) touches a non-adjacent edge
            assert vertex_edge_gap(v) < 1e-9
        return
    if not shape.is_valid:  # shapely also refuses touching rings our check allows
        return
    p = np.asarray(points)
    ours = contains(v, p)
    for pt, inside in zip(p, ours):
        d = shape.exterior.distance(Point(pt))
        if d > 1e-6:
            assert inside == shape.contains(Point(pt))


def test_outside_fraction_on_a_square():
    # From the centre (0, 1) of the square, (2, 1) is twice the reach of the edge at gy = 1.
    frac = outside_fraction(SQUARE, np.array([0.0, 1.0]), np.array([[2.0, 1.0], [0.0, 4.5]]))
    assert frac == pytest.approx([1.0, 0.75])


def test_log_and_step_interpolation():
    lim = DurationLimit("gz", 1, np.array([0.1, 10.0]), np.array([4.0, 2.0]), "log")
    assert lim.allowed(np.array([1.0]))[0] == pytest.approx(3.0)  # halfway in log duration
    step = replace(lim, interpolation="step")
    assert step.allowed(np.array([5.0, 10.0, 20.0])) == pytest.approx([4.0, 2.0, 2.0])


@settings(max_examples=150, deadline=None)
@given(st.lists(st.floats(-3, 6, allow_nan=False), min_size=1, max_size=80),
       st.floats(-2, 4))
def test_windows_above_floor_match_full_windows(values, floor):
    # The fast path (only samples above the floor) must give the same sustained windows as
    # the full computation for those samples; checked against the brute-force definition.
    from checker.rules import sustained_windows, windows_above

    x = np.asarray(values)
    idx, left, right = windows_above(x, floor)
    full_left, full_right = sustained_windows(x)
    assert np.array_equal(idx, np.flatnonzero(x > floor))
    assert np.array_equal(left, full_left[idx]) and np.array_equal(right, full_right[idx])
    for i, a, b in zip(idx, left, right):  # brute force: maximal run of samples >= x[i]
        assert np.all(x[a:b + 1] >= x[i])
        assert a == 0 or x[a - 1] < x[i]
        assert b == len(x) - 1 or x[b + 1] < x[i]


@settings(max_examples=100, deadline=None)
@given(st.lists(st.tuples(st.floats(-3, 3), st.floats(-3, 3)), min_size=3, max_size=7),
       st.lists(st.tuples(st.integers(0, 6), st.floats(0, 1)), min_size=1, max_size=20),
       st.sampled_from([0.0, 1e-12, 1e-6, 1e-3]))
@example([(-0.5, -3.8052923369544945e-166), (0.0, 0.0), (-1.0, 0.0), (0.0, 1.0), (1.0, -1.0)],
         [(0, 0.0)], 0.0)  # a point on a zero-width spike of the outline
def test_points_on_or_near_the_boundary_are_classified_by_their_distance(vertices, places,
                                                                         push):
    # Points on an edge (and pushed off it along the edge's normal by `push`) count as inside
    # exactly when shapely's distance to the outline is within the relative 1e-9 tolerance
    # or shapely puts them inside.
    v = np.asarray(vertices)
    if polygon_problem(v) is not None or not Polygon(v).is_valid:
        return
    shape = Polygon(v)
    tol = 1e-9 * max(1.0, float(np.abs(v).max()))
    pts = []
    for edge, u in places:
        a, b = v[edge % len(v)], v[(edge + 1) % len(v)]
        normal = np.array([b[1] - a[1], a[0] - b[0]])
        normal /= np.hypot(*normal)
        for side in (1.0, -1.0):
            pts.append(a + u * (b - a) + side * push * normal)
    p = np.asarray(pts)
    for pt, inside in zip(p, contains(v, p)):
        d = shape.exterior.distance(Point(pt))
        if d <= 0.5 * tol:
            assert inside
        elif d > 2 * tol:
            assert inside == shape.contains(Point(pt))


@settings(max_examples=60, deadline=None)
@given(st.integers(17, 200), st.integers(0, 2**32 - 1))
def test_containment_of_many_vertex_polygons_agrees_with_shapely(count, seed):
    # above 16 vertices every edge is tested at once (checker.limits._crossing_parity_matrix);
    # reference: shapely, with points within the relative 1e-9 of the outline counted inside
    from checker.limits import contains

    rng = np.random.default_rng(seed)
    angle = np.sort(rng.uniform(0.0, 2 * np.pi, count))
    radius = rng.uniform(0.3, 3.0, count)
    vertices = np.column_stack([radius * np.cos(angle), radius * np.sin(angle)])
    if seed % 2:
        vertices = np.round(vertices, 1)  # shared heights: level edges, rays through vertices
    shape = Polygon(vertices)
    if not shape.is_valid:
        return
    points = np.vstack([rng.uniform(-3.5, 3.5, (300, 2)), vertices[:20],
                        0.5 * (vertices[:20] + np.roll(vertices, -1, axis=0)[:20]),
                        # level with a vertex: the ray passes through it
                        np.column_stack([rng.uniform(-3.5, 3.5, count), vertices[:, 1]])])
    got = contains(vertices, points)
    tol = 1e-9 * max(1.0, float(np.abs(vertices).max()))
    for p, inside in zip(points, got):
        on = shape.exterior.distance(Point(p)) <= tol
        assert inside == (shape.contains(Point(p)) or on)

"""The fast paths of the rule engine against brute force and reference libraries.

The block-by-block scan, the inscribed-ellipse pre-test of the combined envelopes and the
exposure curve at chosen durations must give exactly what the plain definitions give.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from shapely.geometry import Point, Polygon

from checker import rules
from checker.conditioning import FilterSpec
from checker.history import RecordedSignal
from checker.limits import (
    CombinedEnvelope,
    DurationLimit,
    LimitSet,
    OnsetLimit,
    contains,
    polygon_problem,
)
from checker.rules import evaluate, exposure_curve, inscribed_ellipse

RATE = 200.0
SQUARE = np.array([[-1.0, 0.0], [1.0, 0.0], [1.0, 3.0], [-1.0, 3.0]])
L_SHAPE = np.array([[-1.0, -1.0], [2.0, -1.0], [2.0, 0.5], [0.0, 0.5], [0.0, 3.0],
                    [-1.0, 3.0]])  # non-convex: the bounding-box centre (0.5, 1) is outside


def limits_for_scan() -> LimitSet:
    duration = (
        DurationLimit("gz", 1, np.array([0.0, 0.02, 0.05]), np.array([2.5, 2.0, 1.5])),
        DurationLimit("gz", -1, np.array([0.0, 0.03]), np.array([-1.0, -0.2]), "step"),
        DurationLimit("gy", 1, np.array([0.0, 0.04]), np.array([1.2, 0.6])),
    )
    combined = (CombinedEnvelope("box", ("gy", "gz"), SQUARE),
                CombinedEnvelope("ell", ("gx", "gz"), L_SHAPE))
    onset = (OnsetLimit("gz", 155.0), OnsetLimit("gx", 85.0))  # no ties with the rates
    return LimitSet("scan", "", "", False, FilterSpec(kind="none"), duration, combined, onset)


def exposure_brute_force(x: np.ndarray, k: int) -> float:
    """Definition: the largest window minimum over windows of k samples (-inf if none)."""
    if k > len(x):
        return -np.inf
    return max(x[i:i + k].min() for i in range(len(x) - k + 1))


@settings(max_examples=150, deadline=None)
@given(st.lists(st.floats(-5, 5, allow_nan=False), min_size=1, max_size=70),
       st.lists(st.integers(1, 90), min_size=1, max_size=12))
def test_exposure_at_durations_matches_definition(values, ks):
    # O(N) per duration (window doubling, van Herk/Gil-Werman jumps) against the O(N^2)
    # definition, durations in any order and longer than the signal.
    x = np.asarray(values)
    dt = 0.005
    curve = exposure_curve(x, dt, np.asarray(ks) * dt)
    expected = [exposure_brute_force(x, k) for k in ks]
    assert np.array_equal(curve.levels_g, expected)


def test_exposure_at_durations_matches_full_curve_on_a_ride_like_signal():
    rng = np.random.default_rng(3)
    x = np.cumsum(rng.normal(0, 0.05, 3000)) + np.sin(np.arange(3000) / 80.0)
    full = exposure_curve(x, 0.005)
    durations = rules.exposure_durations(len(x), 0.005)
    at = exposure_curve(x, 0.005, durations)
    k = np.rint(durations / 0.005).astype(int)
    assert np.array_equal(at.levels_g, full.levels_g[k - 1])
    assert k[0] == 1 and k[-1] == len(x) and len(k) <= rules.EXPOSURE_POINTS


@settings(max_examples=120, deadline=None)
@given(st.lists(st.tuples(st.floats(-3, 3), st.floats(-3, 3)), min_size=3, max_size=8),
       st.lists(st.tuples(st.floats(-4, 4), st.floats(-4, 4)), min_size=1, max_size=40),
       st.tuples(st.floats(-2, 2), st.floats(-2, 2)))
def test_inscribed_ellipse_lies_inside_the_polygon(vertices, points, rest):
    # Every point the cheap test accepts must be inside the polygon (shapely as reference).
    v = np.asarray(vertices)
    if polygon_problem(v) is not None or not Polygon(v).is_valid:
        return
    ell = inscribed_ellipse(v, np.asarray(rest))
    p = np.asarray(points)
    accepted = ell.holds(p[:, 0].copy(), p[:, 1].copy())
    shape = Polygon(v)
    for pt in p[accepted]:
        assert shape.buffer(1e-9).covers(Point(pt))


def test_inscribed_ellipse_of_known_shapes():
    # Square 2 x 3 centred at (0, 1.5): the ellipse through the edge midpoints (radius 1 in
    # half-extent units). The L shape's box centre is outside, so the rest point is used.
    square = inscribed_ellipse(SQUARE, np.array([0.0, 1.0]))
    assert square.center == pytest.approx([0.0, 1.5]) and square.radius == pytest.approx(1.0)
    ell = inscribed_ellipse(L_SHAPE, np.array([-0.5, 1.0]))
    assert ell.center == pytest.approx([-0.5, 1.0]) and ell.radius > 0
    assert inscribed_ellipse(L_SHAPE, np.array([1.0, 2.0])).radius == 0.0  # nothing inside


def _signal(values: list[float], jitter: bool) -> RecordedSignal:
    n = len(values) // 3
    g = np.asarray(values[:3 * n]).reshape(n, 3)
    t = np.arange(n) / RATE
    if jitter:  # irregular stamps: the onset rate must use the real time differences
        t = t + 0.3 / RATE * np.sin(np.arange(n))
    return RecordedSignal("s", t, g)


@settings(max_examples=120, deadline=None)
@given(st.lists(st.sampled_from([-1.5, -0.5, 0.0, 0.4, 1.0, 1.3, 1.8, 2.2, 2.7, 3.5]),
                min_size=24, max_size=240),
       st.integers(1, 17), st.booleans())
def test_block_scan_equals_one_pass(values, block, jitter):
    # Block boundaries anywhere (even one sample per block) must not change a finding.
    sig = _signal(values, jitter)
    limits = limits_for_scan()
    old = rules.BLOCK
    try:
        rules.BLOCK = 1 << 30
        whole = [f.to_dict() for f in evaluate([sig], limits).findings]
        rules.BLOCK = block
        blocked = [f.to_dict() for f in evaluate([sig], limits).findings]
    finally:
        rules.BLOCK = old
    assert blocked == whole


@settings(max_examples=80, deadline=None)
@given(st.lists(st.sampled_from([-1.5, -0.5, 0.0, 0.4, 1.0, 1.3, 1.8, 2.2, 2.7, 3.5]),
                min_size=24, max_size=240), st.integers(1, 17))
def test_combined_and_onset_findings_match_brute_force(values, block):
    # Combined: the runs of samples outside each polygon (matplotlib.path over every sample);
    # onset: the runs where |np.gradient(x, t)| exceeds the limit.
    sig = _signal(values, False)
    limits = limits_for_scan()
    old = rules.BLOCK
    try:
        rules.BLOCK = block
        ev = evaluate([sig], limits)
    finally:
        rules.BLOCK = old
    t = sig.t
    for env in limits.combined:
        ia, ib = ("gx", "gy", "gz").index(env.axes[0]), ("gx", "gy", "gz").index(env.axes[1])
        outside = ~contains(env.vertices, sig.g[:, [ia, ib]])
        got = [(f.t_start, f.t_worst) for f in ev.findings if f.rule == f"combined {env.name}"]
        assert [a for a, _ in sorted(got)] == [t[a] for a, _ in _runs(outside)]
    for onset in limits.onset:
        i = ("gx", "gy", "gz").index(onset.axis)
        rate = np.gradient(sig.g[:, i], t)
        got = sorted(f.t_start for f in ev.findings if f.rule == f"onset {onset.axis}")
        assert got == [t[a] for a, _ in _runs(np.abs(rate) > onset.limit_g_per_s)]


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return list(zip(edges[::2], edges[1::2] - 1))


def test_exposures_only_on_request_at_plotted_durations():
    t = np.arange(2000) / RATE
    g = np.zeros((2000, 3))
    g[:, 2] = 1.0 + 2.0 * ((t > 3) & (t < 5))  # 3 g for 2 s
    limits = limits_for_scan()
    result = evaluate([RecordedSignal("s", t, g)], limits).seats[0]
    curves = rules.seat_exposures(result, limits)
    up = curves[limits.duration[0].name]
    # 3 g held for 2 s (400 samples, minus the open ends of the interval): level 3 up to
    # 1.99 s, rest level 1 beyond it (closed form of the definition).
    assert up.levels_g[up.durations_s <= 1.99] == pytest.approx(3.0)
    assert up.levels_g[(up.durations_s > 2.0)] == pytest.approx(1.0)
    lean = evaluate([RecordedSignal("s", t, g)], limits, keep_signals=False).seats[0]
    assert rules.seat_exposures(lean, limits) == {}


@settings(max_examples=120, deadline=None)
@given(st.lists(st.sampled_from([-1.5, -0.5, 0.0, 0.4, 1.0, 1.3, 1.8, 2.2, 2.7, 3.5]),
                min_size=24, max_size=240), st.booleans())
def test_skipping_samples_that_cannot_fail_changes_no_finding(values, jitter):
    # Duration rules answer only the samples above the level allowed for their whole run
    # above the floor; answering every sample above the floor must give the same findings.
    sig = _signal(values, jitter)
    limits = limits_for_scan()
    pruned = [f.to_dict() for f in evaluate([sig], limits, aids=False).findings]
    original = rules._positive
    try:
        rules._positive = lambda rule: None
        every = [f.to_dict() for f in evaluate([sig], limits, aids=False).findings]
    finally:
        rules._positive = original
    assert pruned == every


def _margin_brute_force(x: np.ndarray, dt: float, rule: DurationLimit) -> float:
    """Definition: min over samples of allowed(held) - level, each sample's window grown
    one sample at a time while the neighbours are at least its level."""
    signed = rule.sign * x
    best = np.inf
    for i, v in enumerate(signed):
        lo, hi = i, i
        while lo > 0 and signed[lo - 1] >= v:
            lo -= 1
        while hi < len(signed) - 1 and signed[hi + 1] >= v:
            hi += 1
        allowed = rule.sign * rule.allowed(np.array([(hi - lo + 1) * dt]))[0]
        best = min(best, allowed - v)
    return float(best)


@settings(max_examples=150, deadline=None)
@given(st.lists(st.floats(-3, 4, allow_nan=False), min_size=1, max_size=120),
       st.sampled_from([0, 1, 2]))
def test_duration_margin_equals_its_definition(values, which):
    rule = limits_for_scan().duration[which]
    x = np.asarray(values)
    assert rules.duration_margin(x, 1 / RATE, rule) == pytest.approx(
        _margin_brute_force(x, 1 / RATE, rule), abs=1e-12)

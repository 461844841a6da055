"""Sustained combined rule: (a/A)^2 + (b/B)^2 <= 1 with A, B the single-axis admissible
levels for the duration each axis is held (the combined-acceleration form of the
international ride standards, as described for ISO 17842-1 data by a 2025 published
framework; from memory of its abstract). Checked against an O(N^2) brute force (hypothesis)
and a two-pulse example worked by hand below."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.conditioning import FilterSpec
from checker.errors import InputError
from checker.history import RecordedSignal
from checker.limits import CombinedEnvelope, DurationLimit, LimitSet, load_limits
from checker.rules import evaluate
from checker.sustained import sustained_combined

GX = (DurationLimit("gx", 1, np.array([0.0, 1.0]), np.array([2.0, 1.0])),
      DurationLimit("gx", -1, np.array([0.0, 1.0]), np.array([-2.0, -1.0])))
GZ = (DurationLimit("gz", 1, np.array([0.0, 1.0]), np.array([4.0, 2.0])),
      DurationLimit("gz", -1, np.array([0.0, 1.0]), np.array([-1.0, -0.5])))


def brute_force_ratio(a, b, dt, limits_a, limits_b):
    """Direct reading of the rule: walk out from each sample while the axis stays at or
    beyond the sample's value, look the admissible level up at that duration."""
    def admissible(x, i, pos, neg):
        v = x[i]
        beyond = (lambda y: y >= v) if v >= 0 else (lambda y: y <= v)
        lo = i
        while lo > 0 and beyond(x[lo - 1]):
            lo -= 1
        hi = i
        while hi < len(x) - 1 and beyond(x[hi + 1]):
            hi += 1
        rule = pos if v >= 0 else neg
        return float(rule.allowed(np.array([(hi - lo + 1) * dt]))[0])

    out = []
    for i in range(len(a)):
        A, B = admissible(a, i, *limits_a), admissible(b, i, *limits_b)
        out.append((a[i] / A) ** 2 + (b[i] / B) ** 2)
    return np.array(out)


levels = st.floats(-2.0, 4.0, allow_nan=False).map(lambda v: round(v, 1))  # ties are common


@settings(max_examples=80, deadline=None)
@given(st.lists(st.tuples(levels, levels), min_size=1, max_size=50))
def test_sustained_ratio_equals_brute_force(pairs):
    a = np.array([p[0] for p in pairs])
    b = np.array([p[1] for p in pairs])
    got = sustained_combined(a, b, 0.05, GX, GZ).ratio
    np.testing.assert_allclose(got, brute_force_ratio(a, b, 0.05, GX, GZ), rtol=1e-12)


def two_pulses():
    """dt 0.1 s, 4 s at rest (Gx 0, Gz 1), then:
    pulse 1, t 0.5..0.9 s: Gx 1.0 for 0.5 s -> A = 2 - 0.5 = 1.5; Gz 1 is held the whole 4 s
      (Gz never drops below 1) -> B = 2.0; ratio (1/1.5)^2 + (1/2)^2 = 0.694: holds.
    pulse 2, t 2.0..2.7 s: Gx 1.0 for 0.8 s -> A = 1.2; inside it t 2.2..2.4 s Gz 2.5 for
      0.3 s -> B = 4 - 0.6 = 3.4; ratio (1/1.2)^2 + (2.5/3.4)^2 = 1.235: exceeded.
      The rest of pulse 2: (1/1.2)^2 + (1/2)^2 = 0.944: holds.
    Alone, each axis holds (1.0 < 1.2 g for 0.8 s; 2.5 < 3.4 g for 0.3 s); the fixed ellipse
    at 0 s gives (1/2)^2 + (2.5/4)^2 = 0.64 and holds too."""
    t = np.arange(40) * 0.1
    g = np.zeros((40, 3))
    g[:, 2] = 1.0
    g[5:10, 0] = 1.0
    g[20:28, 0] = 1.0
    g[22:25, 2] = 2.5
    return RecordedSignal("seat", t, g)


def test_two_pulse_example_worked_by_hand():
    sig = two_pulses()
    res = sustained_combined(sig.g[:, 0], sig.g[:, 2], 0.1, GX, GZ)
    assert res.ratio[7] == pytest.approx((1 / 1.5) ** 2 + 0.25)
    assert res.ratio[23] == pytest.approx((1 / 1.2) ** 2 + (2.5 / 3.4) ** 2)
    assert res.ratio[21] == pytest.approx((1 / 1.2) ** 2 + 0.25)
    env = CombinedEnvelope("x-z sustained", ("gx", "gz"), np.array([[2, 1], [-2, 1], [0, 4]]),
                           "sustained")
    limits = LimitSet("t", "", "", False, FilterSpec(kind="none"), GX + GZ, (env,), ())
    ev = evaluate([sig], limits)
    (f,) = ev.findings
    assert f.kind == "combined" and f.rule == "combined x-z sustained"
    assert (f.t_start, f.t_end) == pytest.approx((2.2, 2.5))
    assert f.ratio == pytest.approx(1.2351, abs=1e-4)
    assert f.admissible_g == pytest.approx((1.2, 3.4))
    assert f.margin == pytest.approx(100 * (1 - np.sqrt(f.ratio)))  # % of the ellipse
    assert ev.seats[0].margins["combined x-z sustained"] == pytest.approx(f.margin)


LIMITS = """
[meta]
title = "t"
[[duration]]
axis = "gx"
direction = "positive"
points = [[0.0, 2.0], [1.0, 1.0]]
[[duration]]
axis = "gx"
direction = "negative"
points = [[0.0, -2.0], [1.0, -1.0]]
[[duration]]
axis = "gz"
direction = "positive"
points = [[0.0, 4.0], [1.0, 2.0]]
[[duration]]
axis = "gz"
direction = "negative"
points = [[0.0, -1.0], [1.0, -0.5]]
[[combined]]
name = "xz"
axes = ["gx", "gz"]
shape = "ellipse"
at_duration_s = {at}
"""


def test_limits_file_option_and_its_errors(tmp_path):
    path = tmp_path / "l.toml"
    path.write_text(LIMITS.format(at='"sustained"'))
    env = load_limits(path).combined[0]
    assert env.source == "sustained"
    path.write_text(LIMITS.format(at='"sustaned"'))
    with pytest.raises(InputError, match="at_duration_s"):
        load_limits(path)
    path.write_text(LIMITS.format(at='"sustained"').split("[[duration]]\naxis = \"gz\"\n"
                                                          "direction = \"negative\"")[0]
                    + LIMITS.split("points = [[0.0, -1.0], [1.0, -0.5]]")[1]
                    .format(at='"sustained"'))
    with pytest.raises(InputError, match="both directions"):
        load_limits(path)

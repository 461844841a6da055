"""Events (findings grouped by rule and place) and remedies computed from the physics.

Remedies are checked against the closed forms of /work/shared/check-values.md ("Design
aids"): valley/crest radius from uniform circular motion (Halliday, Resnick and Walker,
from memory), bank angle tan(theta) = v^2 / (g0 R) (Serway and Jewett, from memory),
transition length L >= v^3 k / (g0 onset) (Shortt's railway transition formula, 1909, from
memory).
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import signal
from shapes import G0, flat_circle_clockwise, straight

from checker.conditioning import FilterSpec, group_delay_s
from checker.events import RECORD_GAP_S, event_of_finding, events_of_run, group_findings
from checker.limits import DurationLimit, LimitSet, OnsetLimit
from checker.operation import Operation
from checker.remedies import bank_angle_deg, crest_radius, transition_length, valley_radius
from checker.ride import run_check
from checker.rules import Finding
from checker.track import Centerline
from checker.train import ideal_rider


def finding(rule="duration +Gz", seat="car1-a", case="c1", s0=100.0, s1=101.0, t0=10.0,
            margin=-0.5, stations=True) -> Finding:
    return Finding(rule, "duration", "gz", seat, case, t0, t0 + 0.2, 0.2, 4.5, 4.0, margin,
                   t0 + 0.1, s_start_m=s0 if stations else None,
                   s_worst_m=s0 + 0.5 if stations else None,
                   s_end_m=s1 if stations else None)


def test_same_rule_within_a_train_length_is_one_event_in_any_seat_and_case():
    fs = [finding(seat="car1-a", s0=100.0, s1=101.0),
          finding(seat="car6-b", case="c2", s0=110.0, s1=111.0, margin=-0.9),  # 9 m gap
          finding(seat="car3-a", s0=140.0, s1=141.0),  # 29 m on: another place
          finding(rule="onset gz", s0=100.0, s1=101.0)]  # another rule: another event
    events = group_findings(fs, train_length_m=11.5)
    assert len(events) == 3
    first = next(e for e in events if 0 in e.members)
    assert first.members == (0, 1)
    assert first.seats == ("car1-a", "car6-b") and first.cases == ("c1", "c2")
    assert first.governing is fs[1] and first.margin == -0.9  # the worst governs
    assert (first.s_start_m, first.s_end_m) == (100.0, 111.0)
    assert events[0] is first  # worst first
    assert sorted(i for e in events for i in e.members) == [0, 1, 2, 3]  # each in one event
    assert event_of_finding(events, len(fs))[:2] == [first.id, first.id]
    assert group_findings(fs, train_length_m=5.0)[0].members == (1,)  # 9 m > 5 m: apart


def test_recorded_findings_group_by_time():
    fs = [finding(t0=10.0, stations=False), finding(t0=10.1, seat="b", stations=False),
          finding(t0=10.2 + RECORD_GAP_S + 0.3, stations=False)]
    events = group_findings(fs)
    assert sorted(len(e.members) for e in events) == [1, 2]
    assert all(e.s_start_m is None and e.where.startswith("t ") for e in events)


def test_filter_group_delay_matches_scipy_and_the_butterworth_closed_form():
    # analog Butterworth of order n: poles wc exp(i theta_k) in the left half plane; DC group
    # delay sum_k -Re(p_k) / |p_k|^2 = sum_k sin((2k - 1) pi / (2n)) / wc = 1 / (wc sin(pi / 2n))
    # (Butterworth 1930; any filter text); the digital design at 200 Hz is within 1 %
    n, fc = 4, 5.0
    analog = sum(np.sin((2 * k - 1) * np.pi / (2 * n)) for k in range(1, n + 1)) / (
        2 * np.pi * fc)
    assert analog == pytest.approx(1 / (2 * np.pi * fc * np.sin(np.pi / (2 * n))))
    delay = group_delay_s(FilterSpec(), 200.0)
    assert delay == pytest.approx(analog, rel=0.01)
    assert delay == pytest.approx(0.083, abs=0.002)
    b, a = signal.butter(n, fc, fs=200.0)
    _, ref = signal.group_delay((b, a), w=[0.01], fs=200.0)
    assert delay == pytest.approx(ref[0] / 200.0, rel=1e-3)
    assert group_delay_s(FilterSpec(passes="zero-phase"), 200.0) == 0.0


def test_closed_forms():
    v = 20.0
    # valley: Gz = 1 + v^2 / (g0 R); crest: Gz = 1 - v^2 / (g0 R)
    assert 1 + v**2 / (G0 * valley_radius(v, 4.0)) == pytest.approx(4.0)
    assert 1 - v**2 / (G0 * crest_radius(v, -0.5)) == pytest.approx(-0.5)
    assert np.tan(np.radians(bank_angle_deg(v, 50.0))) == pytest.approx(v**2 / (G0 * 50.0))
    assert transition_length(v, 0.05, 20.0) == pytest.approx(v**3 * 0.05 / (G0 * 20.0))


def turn_limits(onset=1.0) -> LimitSet:
    """Tight lateral and -Gz limits (test values) so that the shapes below exceed them."""
    return LimitSet(
        "test", "tests", "1", True, FilterSpec(),
        (DurationLimit("gy", 1, np.array([0.0]), np.array([0.3])),
         DurationLimit("gy", -1, np.array([0.0]), np.array([-0.3])),
         DurationLimit("gz", -1, np.array([0.0]), np.array([-0.1]))),
        (), (OnsetLimit("gy", onset),))


def turn_points(radius: float, roll_deg: float = 0.0):
    lead = straight(40.0)[:-1] - [40.0, 0.0, 0.0]
    pts = np.vstack([lead, flat_circle_clockwise(radius, 0.5)])
    roll = np.where(np.arange(len(pts)) < len(lead), 0.0, roll_deg)
    return pts, roll


def test_turn_remedies_equal_the_closed_forms_and_the_bank_cancels_gy():
    radius, v = 30.0, 15.0
    pts, _ = turn_points(radius)
    run = run_check(Centerline(pts), ideal_rider(), Operation(start_speed_m_s=v), turn_limits())
    events = events_of_run(run.evaluation, run.ride)
    lateral = next(e for e in events if e.kind == "duration" and e.axis == "gy")
    assert "right turn" in lateral.place
    expected_bank = np.degrees(np.arctan(v**2 / (G0 * radius)))  # level, frictionless: v const
    assert lateral.remedy.value == pytest.approx(expected_bank, abs=0.2)
    assert lateral.remedy.unit == "deg" and "not a design" in lateral.remedy.text
    onset = next(e for e in events if e.kind == "onset")
    assert onset.s_start_m == pytest.approx(40.0, abs=3.0)  # the straight-to-circle step
    assert onset.remedy.value == pytest.approx(v**3 / radius / (G0 * 1.0), rel=0.05)
    # banked-curve check: the suggested bank gives Gy = 0 on the circle
    pts, roll = turn_points(radius, lateral.remedy.value)
    banked = run_check(Centerline(pts, roll_deg=roll), ideal_rider(),
                       Operation(start_speed_m_s=v), turn_limits(onset=1e3))
    assert not [f for f in banked.evaluation.findings if f.axis == "gy"
                and f.kind == "duration" and f.t_start > 4.0]


def test_crest_remedy_radius_equals_the_closed_form_at_the_energy_speed():
    radius, v0, half_angle = 20.0, 17.0, np.radians(12.0)
    theta = np.linspace(-half_angle, half_angle, 241)
    pts = np.column_stack([radius * np.sin(theta), np.zeros_like(theta),
                           radius * (np.cos(theta) - np.cos(half_angle))])
    run = run_check(Centerline(pts), ideal_rider(), Operation(start_speed_m_s=v0),
                    turn_limits())
    (crest,) = [e for e in events_of_run(run.evaluation, run.ride) if e.axis == "gz"]
    assert crest.place == "crest"
    g = crest.governing
    ang = (g.s_worst_m - radius * half_angle) / radius
    z = radius * (np.cos(ang) - np.cos(half_angle))
    v = np.sqrt(v0**2 - 2 * G0 * z)  # energy equation
    assert g.v_m_s == pytest.approx(v, rel=0.005)
    # Gz = cos(ang) - v^2 / (g0 R) at the rider: radius that meets Gz_min
    assert crest.remedy.value == pytest.approx(v**2 / (G0 * (np.cos(ang) - g.limit_g)),
                                               rel=0.01)
    present = float(crest.remedy.text.split("now about ")[1].split(" m")[0])
    assert present == pytest.approx(radius, rel=0.05)  # the crest's own radius, from its Gz

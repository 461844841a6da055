"""Sensitivity of rule margins against closed forms.

Crest: on a frictionless track v^2 = v0^2 + 2 g0 (z0 - z) (energy conservation), so on a
crest arc of radius R the vertical specific force Gz = cos(pitch) - v^2 / (g0 R) (uniform
circular motion; at the top Gz = 1 - v^2 / (g0 R), Halliday, Resnick & Walker, from memory)
changes with the start speed at d Gz / d v0 = -2 v0 / (g0 R) everywhere on the arc.
Drag straight: a level straight with quadratic drag only decelerates at rho CdA v^2 / (2 m)
(drag equation), so at the start Gx = -rho CdA (v0 + w)^2 / (2 m g0) with head wind w.
"""

from __future__ import annotations

import numpy as np
import pytest
from shapes import G0, from_pitch_profile, straight

from checker.conditioning import FilterSpec
from checker.limits import DurationLimit, LimitSet
from checker.operation import Operation
from checker.ride import RideOptions
from checker.sensitivity import run_sensitivity, sensitivity_table
from checker.track import Centerline
from checker.train import Seat, Train, ideal_rider


def limits_with(rule: DurationLimit) -> LimitSet:
    return LimitSet("test", "", "", False, FilterSpec(kind="none"), (rule,), (), ())


def test_crest_margin_moves_with_start_speed_as_the_closed_form():
    radius, v0 = 20.0, 12.0
    s = np.arange(0.0, 20.0 + radius * np.radians(40.0) + 20.0, 0.25)
    pitch = np.clip((s - 20.0) / radius, 0.0, np.radians(40.0))  # level, then over the top
    pts = from_pitch_profile(s, -pitch)
    # -0.3 g: exceeded over the crest (Gz falls to about -0.4 g), so the row names its event
    rule = DurationLimit("gz", -1, np.array([0.0]), np.array([-0.3]))
    sens = run_sensitivity(Centerline(pts), ideal_rider(), Operation(start_speed_m_s=v0),
                           limits_with(rule), RideOptions(rate_hz=400.0), workers=1)
    (row,) = sens.rows
    assert row.rule == "duration -Gz" and row.margin < 0 and row.events == ("E1",)
    assert row.derivative["start_speed_m_s"] == pytest.approx(-2 * v0 / (G0 * radius),
                                                              rel=0.02)
    assert row.derivative["rider_mass_kg"] == pytest.approx(0.0, abs=1e-9)  # no losses
    assert row.derivative["air_density_kg_m3"] == pytest.approx(0.0, abs=1e-9)  # CdA = 0
    assert row.derivative["drag_area_m2"] > 0  # drag slows the train: less airtime
    assert row.dominant == "start_speed_m_s"
    assert "lift_speed_pct" in sens.skipped  # no lift on this layout
    assert "start speed" in sensitivity_table(sens)


def test_drag_straight_margin_derivatives_match_the_drag_equation():
    v0, rho, area, empty, rider = 20.0, 1.225, 1.5, 500.0, 75.0
    train = Train(car_count=1, empty_mass_kg=empty, seats=(Seat("r"),), rider_mass_kg=rider,
                  drag_area_m2=area, air_density_kg_m3=rho)
    m = empty + rider
    rule = DurationLimit("gx", -1, np.array([0.0]), np.array([-0.5]))
    sens = run_sensitivity(Centerline(straight(200.0, 1.0)), train,
                           Operation(start_speed_m_s=v0), limits_with(rule), RideOptions(),
                           workers=1)
    (row,) = sens.rows
    gx0 = rho * area * v0 ** 2 / (2 * m * G0)
    assert row.margin == pytest.approx(0.5 - gx0, rel=1e-3)
    d = row.derivative
    assert d["drag_area_m2"] == pytest.approx(-rho * v0 ** 2 / (2 * m * G0), rel=1e-3)
    assert d["air_density_kg_m3"] == pytest.approx(-area * v0 ** 2 / (2 * m * G0), rel=1e-3)
    assert d["head_wind_m_s"] == pytest.approx(-rho * area * v0 / (m * G0), rel=1e-3)
    assert d["start_speed_m_s"] == pytest.approx(-rho * area * v0 / (m * G0), rel=1e-3)
    assert d["rider_mass_kg"] == pytest.approx(gx0 / m, rel=1e-2)
    assert d["occupancy"] == pytest.approx(gx0 / m * rider, rel=1e-2)  # one-sided at 1
    assert d["rolling_coefficient"] == pytest.approx(-1.0, rel=1e-3)  # Gx = -mu, one-sided
    assert set(row.one_sided) == {"occupancy", "rolling_coefficient"}


def test_fast_ray_fraction_equals_the_general_routine():
    """The O(n log m) star-shaped path against checker.limits.outside_fraction (itself
    checked against shapely in test_rules)."""
    from checker.limits import outside_fraction
    from checker.sensitivity import ray_fraction

    rng = np.random.default_rng(5)
    theta = np.linspace(0, 2 * np.pi, 40, endpoint=False)
    radius = rng.uniform(0.8, 2.0, 40)
    star = np.column_stack([radius * np.cos(theta), 1.0 + radius * np.sin(theta)])
    pts = rng.uniform(-3, 3, (500, 2)) + [0, 1]
    for poly in (star, star[::-1]):
        np.testing.assert_allclose(ray_fraction(poly, np.array([0.0, 1.0]), pts),
                                   outside_fraction(poly, np.array([0.0, 1.0]), pts),
                                   rtol=1e-9, atol=1e-12)
    notched = np.array([[-1, 0], [1, 0], [1, 2], [0.1, 2], [0.1, 0.5], [-0.1, 0.5],
                        [-0.1, 2], [-1, 2]], dtype=float)  # not star-shaped about (0, 1.5)
    c = np.array([0.0, 1.5])
    np.testing.assert_allclose(ray_fraction(notched, c, pts), outside_fraction(notched, c, pts))


@pytest.mark.parametrize("chunk", [7, 1 << 16])
def test_polygon_margin_skips_only_samples_that_cannot_be_the_worst(monkeypatch, chunk):
    """The distance pre-test of the envelope margin against every sample traced through
    checker.limits.outside_fraction (checked against shapely in test_rules)."""
    from checker import sensitivity
    from checker.limits import CombinedEnvelope, outside_fraction
    from checker.sensitivity import _polygon_margin

    monkeypatch.setattr(sensitivity, "CHUNK", chunk)  # several chunks, or one
    rng = np.random.default_rng(11)
    theta = np.linspace(0, 2 * np.pi, 40, endpoint=False)
    for _ in range(40):
        radius = rng.uniform(0.3, 3.0, 40)
        star = np.column_stack([radius * np.cos(theta), 1.0 + radius * np.sin(theta)])
        pts = rng.normal(0, rng.uniform(0.1, 2.0), (300, 2)) + [0, 1]
        env = CombinedEnvelope("star", ("gy", "gz"), star)
        expected = -100.0 * np.max(outside_fraction(star, np.array([0.0, 1.0]), pts))
        assert _polygon_margin(pts, env) == pytest.approx(expected, rel=1e-9, abs=1e-9)


def test_margins_agree_with_the_findings_they_summarize():
    """A rule's margin is the worst over the ride: where a rule is exceeded it equals the
    most negative finding margin (same definition, computed another way)."""
    from checker.history import RecordedSignal
    from checker.limits import load_limits
    from checker.resources import bundled_limits
    from checker.rules import evaluate

    t = np.arange(0, 20, 0.005)
    g = np.column_stack([1.2 * np.sin(0.7 * t), 0.9 * np.sin(1.3 * t),
                         1.0 + 4.5 * np.exp(-((t - 8) / 0.6) ** 2)
                         - 1.8 * np.exp(-((t - 14) / 0.4) ** 2)])
    ev = evaluate([RecordedSignal("s", t, g)], load_limits(bundled_limits()))
    margins = ev.seats[0].margins
    assert ev.findings
    for f in ev.findings:
        assert margins[f.rule] <= f.margin + 1e-9
    for rule in {f.rule for f in ev.findings}:
        assert margins[rule] == pytest.approx(min(f.margin for f in ev.findings
                                                  if f.rule == rule), abs=1e-9)


def test_margins_read_on_demand_equal_the_eager_ones_and_travel_as_a_dict():
    import pickle
    from types import SimpleNamespace

    from checker.limits import load_limits
    from checker.resources import bundled_limits
    from checker.rules import evaluate_seat
    from checker.sensitivity import rule_margins

    limits = load_limits(bundled_limits())
    t = np.arange(4000) / 200.0
    g = np.column_stack([0.5 * np.sin(t), 0.8 * np.sin(t / 2), 1.0 + 2.5 * np.sin(t / 3)])
    seat = SimpleNamespace(seat="s", t=t, g=g)
    kept = evaluate_seat(seat, limits)  # margins computed when first read
    eager = evaluate_seat(seat, limits, keep_signals=False)
    # the definition: rule_margins on the filtered signal (checker.sensitivity)
    direct = rule_margins(kept.filtered, 1 / 200.0, limits, t, kept.uplift)
    assert dict(kept.margins) == dict(eager.margins) == direct
    assert any(m < 0 for m in direct.values())  # the signal breaks some rule
    assert type(pickle.loads(pickle.dumps(kept)).margins) is dict
    assert type(kept.without_signals().margins) is dict

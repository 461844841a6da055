"""Bank advisor against the banked-curve design speed, tan(theta) = v^2 / (g0 R)
(Serway & Jewett, Physics for Scientists and Engineers, circular motion chapter; from memory),
and its promise: the advised track, simulated again, leaves |Gy| < 0.05 g wherever the
roll-rate limit lets the bank follow."""

from __future__ import annotations

import numpy as np
import pytest
from shapes import G0, flat_circle_clockwise, straight

from checker.bank import advise_bank, banked_table, rate_limited
from checker.operation import Operation
from checker.ride import RideOptions, run_ride
from checker.track import Centerline, load_centerline
from checker.train import Seat, Train, ideal_rider


def test_flat_circular_turn_gets_the_design_speed_bank():
    radius, v = 40.0, 15.0
    lead = straight(30.0, 1.0)
    lead[:, 0] -= 30.0
    pts = np.vstack([lead[:-1], flat_circle_clockwise(radius, turns=0.75)])
    adv = advise_bank(Centerline(pts), ideal_rider(), Operation(start_speed_m_s=v),
                      RideOptions(), ideal=True)
    theta = np.degrees(np.arctan(v ** 2 / (G0 * radius)))  # right-hand turn: positive roll
    middle = (adv.s > 60.0) & (adv.s < adv.s[-1] - 10.0)
    np.testing.assert_allclose(adv.advised_deg[middle], theta, atol=0.05)
    assert adv.max_roll_rate_deg_s <= 60.0 + 1e-6
    assert adv.max_abs_gy_where_allowed < 0.05
    # at the turn's entry the curvature jumps: no rate limit lets the bank follow a step
    # (30 deg at <= 60 deg/s and 15 m/s takes at least 7.5 m, half of it on either side)
    bound = adv.s[adv.rate_bound]
    assert bound.min() < 30.0 - 3.0 and bound.max() > 30.0 + 3.0 and bound.max() < 45.0


def clothoid_s_curve(radius: float = 35.0, spiral: float = 35.0, arc: float = 40.0,
                     step: float = 0.5) -> np.ndarray:
    """Level: straight, clothoid into a right-hand arc, clothoid out, then the same to the
    left. Heading is the integral of curvature (linear in the spirals)."""
    k = 1.0 / radius
    parts = [(20.0, 0, 0), (spiral, 0, -k), (arc, -k, -k), (spiral, -k, 0), (15.0, 0, 0),
             (spiral, 0, k), (arc, k, k), (spiral, k, 0), (20.0, 0, 0)]
    curv = np.concatenate([np.linspace(a, b, int(round(length / step)), endpoint=False)
                           for length, a, b in parts] + [[0.0]])
    heading = np.concatenate([[0.0], np.cumsum(0.5 * (curv[1:] + curv[:-1]) * step)])
    mid = 0.5 * (heading[1:] + heading[:-1])
    x = np.concatenate([[0.0], np.cumsum(step * np.cos(mid))])
    y = np.concatenate([[0.0], np.cumsum(step * np.sin(mid))])
    return np.column_stack([x, y, np.zeros_like(x)])


def test_banked_track_simulated_again_has_little_lateral_force(tmp_path):
    train = Train(car_count=3, spacing_m=2.4, empty_mass_kg=500.0,
                  seats=(Seat("L", 0.3, 0.28, 1.1), Seat("R", 0.3, -0.28, 1.1)),
                  rolling_coefficient=0.01, drag_area_m2=1.2)
    ops = Operation(start_speed_m_s=16.0)
    line = Centerline(clothoid_s_curve())
    before = run_ride(line, train, ops)
    assert max(np.abs(h.g[:, 1]).max() for h in before.histories) > 0.5  # flat: it needs bank
    adv = advise_bank(line, train, ops, RideOptions(), roll_rate_limit_deg_s=45.0)
    assert adv.max_roll_rate_deg_s <= 45.0 + 1e-6
    path = tmp_path / "banked.csv"
    path.write_text(banked_table(line.points, adv.advised_at_samples, "advised"))
    again = run_ride(load_centerline(path), train, ops)
    worst = 0.0
    for h in again.histories:  # stations where the bank meets every seat
        free = ~adv.rate_bound[np.clip(np.searchsorted(adv.s, h.s), 0, len(adv.s) - 1)]
        worst = max(worst, float(np.abs(h.g[free, 1]).max()))
    assert worst < 0.05
    assert adv.rate_bound.mean() < 0.1  # and that is nearly everywhere on this layout


def test_rate_limited_midpoint_keeps_the_rate_and_the_bounds():
    """Lipschitz envelopes (McShane 1934, from memory): the midpoint is R-Lipschitz and stays
    within bounds that an R-Lipschitz function can meet."""
    rng = np.random.default_rng(3)
    tau = np.cumsum(rng.uniform(0.01, 0.1, 300))
    truth = np.cumsum(rng.uniform(-1, 1, 300) * np.diff(np.concatenate([[0], tau]))) * 20
    lower, upper = truth - rng.uniform(0, 2, 300), truth + rng.uniform(0, 2, 300)
    lower[::7], upper[::7] = -np.inf, np.inf  # free stations
    mid = rate_limited(lower, upper, tau, 20.0)
    assert np.all(np.abs(np.diff(mid)) <= 20.0 * np.diff(tau) + 1e-9)
    assert np.all(mid >= lower - 1e-9) and np.all(mid <= upper + 1e-9)
    assert np.all(np.isnan(rate_limited(np.full(5, -np.inf), np.full(5, np.inf),
                                        np.arange(5.0), 1.0)))
    with pytest.raises(AssertionError):  # a bound no 20-Lipschitz function can meet
        step = np.where(tau > tau[150], 50.0, 0.0)
        m = rate_limited(step, step, tau, 20.0)
        assert np.all(np.abs(m - step) < 1e-6)

"""Section types and enums: each kind of powered section is its own type, and the enums keep
the strings the documents always had."""

from __future__ import annotations

import json

import numpy as np
import pytest
from shapes import straight

from checker.compare import ChangeState
from checker.dynamics import simulate_motion
from checker.geometry import build_geometry
from checker.operation import Brake, Launch, Lift, Operation
from checker.rules import FindingKind, Verdict, verdict_of
from checker.train import ideal_rider


def test_a_launch_takes_exactly_one_of_force_and_exit_speed():
    with pytest.raises(ValueError):
        Launch(0.0, 10.0)
    with pytest.raises(ValueError):
        Launch(0.0, 10.0, force_n=1000.0, exit_speed_m_s=20.0)
    assert Launch(0.0, 10.0, exit_speed_m_s=20.0).describe() == "exit 20 m/s"
    assert Lift(0.0, 5.0, speed_m_s=3.0).kind == "lift" and Brake(0.0, 5.0).kind == "brake"


def test_force_launch_on_a_level_straight_follows_work_energy():
    # Work-energy theorem (any mechanics text, from memory): F d = m (v^2 - v0^2) / 2 on a
    # level, frictionless straight; with a cap the force stops pushing at the cap.
    train = ideal_rider()
    mass = float(train.car_masses().sum())
    force, distance, v0 = 2.0 * mass, 40.0, 5.0
    geometry = build_geometry(straight(200.0), step_m=0.1)
    free = simulate_motion(geometry, train, Operation(v0, (Launch(0.0, distance,
                                                                  force_n=force),)))
    after = free.s > distance + 1.0
    expected = np.sqrt(v0**2 + 2.0 * force / mass * distance)
    assert np.allclose(free.v[after], expected, rtol=2e-3)
    capped = simulate_motion(geometry, train, Operation(v0, (Launch(
        0.0, distance, force_n=force, max_speed_m_s=8.0),)))
    assert 8.0 <= capped.v.max() < 8.05


def test_enums_read_and_serialize_as_their_strings():
    assert verdict_of(False, False) is Verdict.PASS and verdict_of(False, True) is Verdict.FAIL
    doc = json.dumps({"verdict": Verdict.FAIL, "kind": FindingKind.ONSET,
                      "status": ChangeState.WORSE})
    assert json.loads(doc) == {"verdict": "fail", "kind": "onset", "status": "worse"}
    assert f"{Verdict.PASS:>6}" == "  pass" and str(ChangeState.GONE) == "gone"
    assert {"fail": 1}[Verdict.FAIL] == 1  # same hash as the string
    assert [s.value for s in ChangeState] == ["new", "worse", "gone", "better", "same"]

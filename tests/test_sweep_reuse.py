"""Sweeps do each piece of work once: geometry per layout, one ride per distinct train and
operation, and the documents' signals kept from that pass (nothing run again)."""

from __future__ import annotations

import numpy as np
from shapes import vertical_loop

from checker import sweep as sweep_module
from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits
from checker.loadcases import LoadCase
from checker.operation import Operation
from checker.ride import RideOptions, run_check
from checker.sweep import run_cases, sweep_check_run
from checker.track import Centerline
from checker.train import Seat, Train

TRAIN = Train(car_count=3, spacing_m=2.0, seats=(Seat("a", up_m=1.0), Seat("b", up_m=0.5)),
              rolling_coefficient=0.02, drag_area_m2=1.0)


def loop_layout() -> Centerline:
    lead = np.column_stack([np.linspace(-60, -1, 60), np.zeros(60), np.zeros(60)])
    return Centerline(np.vstack([lead, vertical_loop(9.0, 1.0, 360)]))


def counting(monkeypatch, name):
    calls = []
    original = getattr(sweep_module, name)

    def wrapped(*args, **kwargs):
        calls.append(args)
        return original(*args, **kwargs)

    monkeypatch.setattr(sweep_module, name, wrapped)
    return calls


def test_each_piece_of_work_once_and_documents_without_a_rerun(monkeypatch):
    limits = load_limits(BUNDLED_LIMITS)
    # "again" differs from "slick" only by its name: one ride serves both
    cases = [LoadCase("sticky", rolling_coefficient_factor=2.0),
             LoadCase("slick", rolling_coefficient_factor=0.25),
             LoadCase("again", rolling_coefficient_factor=0.25)]
    geometries = counting(monkeypatch, "layout_geometry")
    rides = counting(monkeypatch, "run_check")
    line, ops = loop_layout(), Operation(start_speed_m_s=23.0)
    sweep = run_cases(line, TRAIN, ops, limits, RideOptions(), cases, workers=1)
    assert len(geometries) == 1 and len(rides) == 2
    assert [o.case for o in sweep.outcomes] == ["sticky", "slick", "again"]
    slick, again = sweep.outcomes[1], sweep.outcomes[2]
    assert [f.case for f in again.evaluation.findings] == ["again"] * len(
        again.evaluation.findings)
    strip = [(f.rule, f.seat, f.t_start, f.margin) for f in slick.evaluation.findings]
    assert strip == [(f.rule, f.seat, f.t_start, f.margin) for f in again.evaluation.findings]

    run = sweep_check_run(sweep, line, TRAIN, ops, limits, RideOptions(), cases)
    assert len(rides) == 2 and len(geometries) == 1  # the documents ran nothing again
    governing = {(f.seat, f.case) for f in sweep.governing()}
    assert governing and set(run.signals) == governing
    drawn = {(s.seat, s.case) for s in run.evaluation.seats if s.filtered is not None}
    assert drawn == governing
    # the kept signals are those of a fresh single check of that case
    seat, case = sorted(governing)[0]
    factor = {"sticky": 2.0, "slick": 0.25, "again": 0.25}[case]
    fresh = run_check(line, TRAIN.__class__(**{**TRAIN.__dict__, "rolling_coefficient":
                                               0.02 * factor}), ops, limits, RideOptions(),
                      case)
    mine = next(s for s in run.evaluation.seats if (s.seat, s.case) == (seat, case))
    theirs = next(s for s in fresh.evaluation.seats if s.seat == seat)
    assert np.array_equal(mine.filtered, theirs.filtered)
    assert [f.to_dict() for f in mine.findings] == [f.to_dict() for f in theirs.findings]
    assert run.ride is not None and run.ride.geometry is sweep.geometry

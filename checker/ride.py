"""The one entry that wires the rooms: (track, train, operation, options) -> ride result.

The command line, the load-case sweeps and the Python API all call :func:`run_ride`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

from .dynamics import RideMotion, simulate_motion
from .geometry import TrackGeometry, build_geometry
from .kinematics import SeatHistory, rider_histories
from .operation import Operation, load_operation
from .track import Centerline, load_centerline
from .train import Train, ideal_rider, load_train

HISTORY_COLUMNS = ["seat", "car", "t", "s", "v", "gx", "gy", "gz", "x", "y", "z"]


@dataclass(frozen=True)
class RideOptions:
    """Numerical options of a run."""

    rate_hz: float = 200.0
    smoothing_m: float = 0.0
    step_m: float = 0.1
    head_wind_m_s: float = 0.0


@dataclass(frozen=True)
class RideResult:
    geometry: TrackGeometry
    motion: RideMotion
    histories: list[SeatHistory]
    train: Train
    operation: Operation
    options: RideOptions


def run_ride(centerline: Centerline, train: Train, operation: Operation,
             options: RideOptions = RideOptions()) -> RideResult:
    """Geometry, dynamics and every seat's history for one layout and one train."""
    geometry = build_geometry(centerline.points, centerline.roll_deg, centerline.up,
                              smoothing_m=options.smoothing_m, step_m=options.step_m)
    motion = simulate_motion(geometry, train, operation, head_wind_m_s=options.head_wind_m_s)
    histories = rider_histories(geometry, motion, train.seats, options.rate_hz)
    return RideResult(geometry, motion, histories, train, operation, options)


def histories_frame(histories: list[SeatHistory]) -> pd.DataFrame:
    """One row per seat and sample with the columns of :data:`HISTORY_COLUMNS`."""
    parts = []
    for h in histories:
        parts.append(pd.DataFrame({
            "seat": h.seat, "car": h.car, "t": h.t, "s": h.s, "v": h.v,
            "gx": h.g[:, 0], "gy": h.g[:, 1], "gz": h.g[:, 2],
            "x": h.position[:, 0], "y": h.position[:, 1], "z": h.position[:, 2],
        }))
    return pd.concat(parts, ignore_index=True)[HISTORY_COLUMNS]


def load_inputs(track: str | Path, train: str | Path | None = None, *, ideal: bool = False,
                operation: str | Path | None = None, start_speed_m_s: float | None = None,
                units: str = "m") -> tuple[Centerline, Train, Operation]:
    """Load and validate the files of a run (the edge where files become objects)."""
    line = load_centerline(track, units)
    the_train = ideal_rider() if ideal or train is None else load_train(train)
    ops = load_operation(operation) if operation is not None else Operation()
    if start_speed_m_s is not None:
        ops = replace(ops, start_speed_m_s=float(start_speed_m_s))
    return line, the_train, ops


def simulate(track: str | Path, train: str | Path | None = None, *, ideal: bool = False,
             operation: str | Path | None = None, start_speed_m_s: float | None = None,
             rate_hz: float = 200.0, units: str = "m", smoothing_m: float = 0.0) -> pd.DataFrame:
    """Simulate a ride and return every seat's unfiltered history as a DataFrame.

    Parameters
    ----------
    track : centerline CSV (columns x, y, z [m], optional roll_deg or up_x, up_y, up_z).
    train : train TOML; None or ``ideal=True`` gives one rider on the centerline, no losses.
    operation : operation TOML (start speed, lift, launch, brakes); None = free rolling.
    start_speed_m_s : overrides the operation's start speed [m/s].
    rate_hz : output sample rate [Hz].
    units : ``"m"`` or ``"ft"`` for the track's lengths.
    smoothing_m : RMS tolerance [m] for smoothing noisy samples (0 = interpolate).

    Returns
    -------
    DataFrame with columns seat, car, t [s], s [m], v [m/s], gx, gy, gz [g0], x, y, z [m].
    Raises :class:`checker.errors.InputError` for bad input and
    :class:`checker.errors.TrainStalled` when the train cannot crest a hill.
    """
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    result = run_ride(line, the_train, ops, RideOptions(rate_hz=rate_hz,
                                                        smoothing_m=smoothing_m))
    return histories_frame(result.histories)


def peak_table(histories: list[SeatHistory]) -> pd.DataFrame:
    """Extremes per seat [g0], unfiltered."""
    rows = []
    for h in histories:
        rows.append({"seat": h.seat, **{f"{name}_{kind}": float(fn(h.g[:, i]))
                                        for i, name in enumerate(("gx", "gy", "gz"))
                                        for kind, fn in (("min", np.min), ("max", np.max))}})
    return pd.DataFrame(rows)

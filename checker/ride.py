"""The one entry that wires the rooms: (track, train, operation, options) -> ride result.

The command line, the load-case sweeps and the Python API all call :func:`run_ride`.
"""

from __future__ import annotations

from dataclasses import dataclass, replace
from pathlib import Path

import numpy as np
import pandas as pd

from .bounds import MIN_TRACK_M, check_memory
from .dynamics import RideMotion, simulate_motion
from .errors import InputError
from .geometry import STATION_STEP_M, TrackGeometry, build_geometry
from .kinematics import SeatHistory, rider_histories
from .limits import LimitSet
from .operation import Operation, load_operation
from .plausibility import (
    crossing_warnings,
    fitting_warnings,
    motion_warnings,
    track_warnings,
    train_clearance_m,
)
from .rules import Evaluation, Finding, evaluate
from .stalls import stall_findings
from .track import Centerline, load_centerline, smoothing_for
from .train import Train, ideal_rider, load_train

HISTORY_COLUMNS = ["seat", "car", "t", "s", "v", "gx", "gy", "gz", "x", "y", "z"]


@dataclass(frozen=True)
class RideOptions:
    """Numerical options of a run.

    Attributes
    ----------
    rate_hz : float
        Output sample rate of the rider histories [Hz].
    smoothing_m : float or None
        RMS distance the fitted centerline may keep from the samples [m]; 0 interpolates;
        None takes half the grid a rounded track file sits on (0 for unrounded files).
    step_m : float
        Station grid step of the geometry and of the speed integration [m].
    head_wind_m_s : float
        Wind against the direction of travel, for the aerodynamic drag [m/s].
    """

    rate_hz: float = 200.0
    smoothing_m: float | None = None  # None: half the grid a rounded track file sits on
    step_m: float = STATION_STEP_M
    head_wind_m_s: float = 0.0


@dataclass(frozen=True)
class RideResult:
    """A simulated ride: geometry, motion, every seat's unfiltered history and the inputs.

    Attributes
    ----------
    geometry : TrackGeometry
        Track geometry and rider frame on the station grid.
    motion : RideMotion
        The train's speed and time along the track.
    histories : list of SeatHistory
        Every seat of every car, sampled at ``options.rate_hz``; specific force [g0].
    train : Train
        The train simulated.
    operation : Operation
        Start speed and powered sections.
    options : RideOptions
        Numerical options of the run.
    warnings : tuple of str
        Plausibility warnings (the run went on).
    """

    geometry: TrackGeometry
    motion: RideMotion
    histories: list[SeatHistory]
    train: Train
    operation: Operation
    options: RideOptions
    warnings: tuple[str, ...] = ()  # plausibility warnings (the run went on)


def layout_geometry(centerline: Centerline, options: RideOptions = RideOptions()
                    ) -> TrackGeometry:
    """The track geometry of a layout.

    It depends only on the centerline, the smoothing and the station step: sweeps build it
    once for every case.

    Parameters
    ----------
    centerline : Centerline
        Validated centerline samples.
    options : RideOptions
        Its ``smoothing_m`` [m] (None: from the file's grid) and ``step_m`` [m] are used.

    Returns
    -------
    geometry : TrackGeometry
        See :func:`checker.geometry.build_geometry`.

    Raises
    ------
    InputError
        The polyline through the samples is shorter than ``bounds.MIN_TRACK_M`` (a unit
        mistake).
    """
    polyline_m = float(np.linalg.norm(np.diff(centerline.points, axis=0), axis=1).sum())
    if polyline_m < MIN_TRACK_M:
        raise InputError(centerline.source, f"the track is only {polyline_m:.3g} m long",
                         "lengths are read in metres (or feet with --units ft): check the "
                         "file's units")
    return build_geometry(centerline.points, centerline.roll_deg, centerline.up,
                          smoothing_m=smoothing_for(centerline, options.smoothing_m),
                          step_m=options.step_m)


def run_ride(centerline: Centerline, train: Train, operation: Operation,
             options: RideOptions = RideOptions(),
             geometry: TrackGeometry | None = None) -> RideResult:
    """Geometry, dynamics and every seat's history for one layout and one train.

    Parameters
    ----------
    centerline : Centerline
        Validated centerline samples.
    train : Train
        Cars, seats, masses and resistances.
    operation : Operation
        Start speed and powered sections.
    options : RideOptions
        Sample rate [Hz], smoothing [m], station step [m], head wind [m/s].
    geometry : TrackGeometry or None
        The layout's geometry when already built (:func:`layout_geometry`); None builds it.

    Returns
    -------
    result : RideResult
        A stall is not raised: it is in ``result.motion.stall`` and the histories end there.

    Raises
    ------
    InputError
        The track is too short (:func:`layout_geometry`) or not longer than the train; a
        powered section lies off the track or overlaps another; the histories would exceed
        the memory cap (``bounds.check_memory``).
    """
    if geometry is None:
        geometry = layout_geometry(centerline, options)
    if train.length_m >= geometry.length:
        raise InputError(centerline.source, f"the track ({geometry.length:.1f} m) is shorter "
                         f"than the train ({train.length_m:.1f} m from first to last car)",
                         "check the track's units and the train's car spacing")
    motion = simulate_motion(geometry, train, operation, head_wind_m_s=options.head_wind_m_s)
    check_memory(len(train.seats) * train.car_count, train.car_count, motion.duration_s,
                 options.rate_hz, centerline.source)
    histories = rider_histories(geometry, motion, train.seats, options.rate_hz)
    warnings = (fitting_warnings(geometry, centerline, options.smoothing_m is None)
                + track_warnings(geometry, centerline.points)
                + crossing_warnings(geometry, train_clearance_m(train))
                + motion_warnings(geometry, motion, operation))
    return RideResult(geometry, motion, histories, train, operation, options, tuple(warnings))


def histories_frame(histories: list[SeatHistory]) -> pd.DataFrame:
    """One row per seat and sample with the columns of :data:`HISTORY_COLUMNS`.

    Parameters
    ----------
    histories : list of SeatHistory
        Seat histories, e.g. ``RideResult.histories``; at least one.

    Returns
    -------
    frame : pandas.DataFrame
        Columns seat, car, t [s], s [m], v [m/s], gx, gy, gz [g0], x, y, z [m], the seats
        one after the other.
    """
    parts = []
    for h in histories:
        parts.append(pd.DataFrame({
            "seat": h.seat, "car": h.car, "t": h.t, "s": h.s, "v": h.v,
            "gx": h.g[:, 0], "gy": h.g[:, 1], "gz": h.g[:, 2],
            "x": h.position[:, 0], "y": h.position[:, 1], "z": h.position[:, 2],
        }))
    return pd.concat(parts, ignore_index=True)[HISTORY_COLUMNS]


# decimals written per column of a simulated history: time 1 us, lengths and speed 0.1 mm
# (per s), specific force 1e-6 g0
HISTORY_DECIMALS = {"car": 0, "t": 6, "s": 4, "v": 4, "gx": 6, "gy": 6, "gz": 6, "x": 4,
                    "y": 4, "z": 4}


def histories_csv(histories: list[SeatHistory]) -> bytes:
    """Every seat's history as CSV at fixed decimals.

    Written by a vectorized formatter (:func:`checker.csvformat.fixed_csv`) with the decimals
    of :data:`HISTORY_DECIMALS`.

    Parameters
    ----------
    histories : list of SeatHistory
        Seat histories; at least one.

    Returns
    -------
    text : bytes
        UTF-8 CSV with a header row and the columns of :data:`HISTORY_COLUMNS`: t [s],
        s [m], v [m/s], gx, gy, gz [g0], x, y, z [m].
    """
    import numpy as np

    from .csvformat import fixed_csv

    def joined(get) -> np.ndarray:
        return np.concatenate([np.asarray(get(h)) for h in histories])

    values = {
        "seat": np.repeat(np.array([h.seat.encode("utf-8") for h in histories], dtype=bytes),
                          [len(h.t) for h in histories]),
        "car": joined(lambda h: np.full(len(h.t), h.car, dtype=float)),
        "t": joined(lambda h: h.t), "s": joined(lambda h: h.s), "v": joined(lambda h: h.v),
        **{name: joined(lambda h, i=i: h.g[:, i]) for i, name in enumerate(("gx", "gy", "gz"))},
        **{name: joined(lambda h, i=i: h.position[:, i]) for i, name in enumerate("xyz")},
    }
    return fixed_csv(HISTORY_COLUMNS, [(values[name], HISTORY_DECIMALS.get(name))
                                       for name in HISTORY_COLUMNS])


def load_inputs(track: str | Path, train: str | Path | None = None, *, ideal: bool = False,
                operation: str | Path | None = None, start_speed_m_s: float | None = None,
                units: str = "m") -> tuple[Centerline, Train, Operation]:
    """Load and validate the files of a run (the edge where files become objects).

    Parameters
    ----------
    track : str or Path
        Centerline CSV.
    train : str or Path or None
        Train TOML; None (or ``ideal=True``) gives :func:`checker.train.ideal_rider`.
    ideal : bool
        Use the ideal point rider even when a train file is given.
    operation : str or Path or None
        Operation TOML; None gives free rolling from rest.
    start_speed_m_s : float or None
        Overrides the operation's start speed [m/s].
    units : {"m", "ft"}
        Length unit of the track file.

    Returns
    -------
    centerline : Centerline
    train : Train
    operation : Operation

    Raises
    ------
    InputError
        For a bad or missing input file (from the loaders).
    """
    line = load_centerline(track, units)
    the_train = ideal_rider() if ideal or train is None else load_train(train)
    ops = load_operation(operation) if operation is not None else Operation()
    if start_speed_m_s is not None:
        ops = replace(ops, start_speed_m_s=float(start_speed_m_s))
    return line, the_train, ops


def simulate(track: str | Path, train: str | Path | None = None, *, ideal: bool = False,
             operation: str | Path | None = None, start_speed_m_s: float | None = None,
             rate_hz: float = 200.0, units: str = "m",
             smoothing_m: float | None = None) -> pd.DataFrame:
    """Simulate a ride and return every seat's unfiltered history as a DataFrame.

    Parameters
    ----------
    track : str or Path
        Centerline CSV (columns x, y, z [m], optional roll_deg or up_x, up_y, up_z).
    train : str or Path or None
        Train TOML; None or ``ideal=True`` gives one rider on the centerline, no losses.
    ideal : bool
        Use the ideal point rider even when a train file is given.
    operation : str or Path or None
        Operation TOML (start speed, lift, launch, brakes); None = free rolling.
    start_speed_m_s : float or None
        Overrides the operation's start speed [m/s].
    rate_hz : float
        Output sample rate [Hz].
    units : {"m", "ft"}
        Length unit of the track file.
    smoothing_m : float or None
        RMS tolerance for smoothing noisy samples (0 = interpolate; None = half the grid a
        rounded track file's coordinates sit on, 0 for unrounded files) [m].

    Returns
    -------
    frame : pandas.DataFrame
        Columns seat, car, t [s], s [m], v [m/s], gx, gy, gz [g0], x, y, z [m]. Where the
        train stalls the histories end there (no error is raised).

    Raises
    ------
    InputError
        For a bad or missing input file, a track too short for the train, or a ride over
        the memory cap.
    """
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    result = run_ride(line, the_train, ops, RideOptions(rate_hz=rate_hz,
                                                        smoothing_m=smoothing_m))
    return histories_frame(result.histories)


@dataclass(frozen=True, eq=False)
class CheckRun:
    """One ride checked against a limit set: the evaluation, the ride and the raw signals.

    Attributes
    ----------
    evaluation : Evaluation
        The rules' outcome (its warnings include the ride's plausibility warnings, its
        stalls the ride's stall).
    ride : RideResult
        The simulated ride.
    signals : dict
        {(seat, case): :class:`checker.kinematics.SeatHistory`}, unfiltered signals [g0].
    """

    evaluation: Evaluation
    ride: RideResult
    signals: dict

    @property
    def stall(self) -> str | None:
        """Where the train stopped short of the end (the stall texts joined by "; "), or
        None."""
        return "; ".join(self.evaluation.stalls) or None


def run_check(centerline: Centerline, train: Train, operation: Operation, limits: LimitSet,
              options: RideOptions = RideOptions(), case: str = "nominal",
              keep_signals: bool = True, geometry: TrackGeometry | None = None) -> CheckRun:
    """Simulate and evaluate every seat: the one entry for checks and sweeps.

    Parameters
    ----------
    centerline : Centerline
        Validated centerline samples.
    train : Train
        Cars, seats, masses and resistances.
    operation : Operation
        Start speed and powered sections.
    limits : LimitSet
        The limit set to check against.
    options : RideOptions
        Numerical options (sample rate [Hz], smoothing [m], station step [m], head wind
        [m/s]).
    case : str
        Name of the load case, carried into every finding.
    keep_signals : bool
        False skips what only documents need (filtered signals, exposure curves); sweeps
        pass False.
    geometry : TrackGeometry or None
        The layout's geometry when already built (:func:`layout_geometry`); sweeps build it
        once per layout.

    Returns
    -------
    run : CheckRun
        A stall is not an error: it is carried in ``evaluation.stalls`` and fails the
        verdict.

    Raises
    ------
    InputError
        As :func:`run_ride`.
    """
    result = run_ride(centerline, train, operation, options, geometry)
    evaluation = evaluate_ride(result, limits, case, keep_signals)
    signals = {(h.seat, case): h for h in result.histories}
    return CheckRun(evaluation, result, signals)


def evaluate_ride(result: RideResult, limits: LimitSet, case: str = "nominal",
                  keep_signals: bool = True) -> Evaluation:
    """Evaluate a simulated ride: every seat's rules, the ride's warnings and its stall.

    Parameters
    ----------
    result : RideResult
        The simulated ride (:func:`run_ride`).
    limits : LimitSet
        The limit set to check against.
    case : str
        Name of the load case, carried into every finding.
    keep_signals : bool
        False skips what only documents need (filtered signals, exposure curves).

    Returns
    -------
    evaluation : Evaluation
        A stall is a finding of every seat and is carried in ``stalls``; the ride's
        plausibility warnings come first in ``warnings``.
    """
    evaluation = evaluate(result.histories, limits, case, keep_signals)
    stalls: tuple[str, ...] = ()
    seats = evaluation.seats
    if result.motion.stall is not None:  # a finding of every seat, not a warning
        stalls = (str(result.motion.stall),)
        found = {f.seat: f for f in stall_findings(result.motion.stall, result.histories,
                                                   result.geometry, case,
                                                   result.train.spacing_m)}
        seats = tuple(replace(s, findings=s.findings + (found[s.seat],)) for s in seats)
    return replace(evaluation, seats=seats,
                   warnings=tuple(result.warnings) + tuple(evaluation.warnings), stalls=stalls)


def _smoothing_text(result: RideResult) -> str:
    used = result.geometry.smoothing.tolerance_m if result.geometry.smoothing else 0.0
    if result.options.smoothing_m is None:
        return (f"{used:g} m (automatic: half the coordinate grid)" if used
                else "0 m (automatic: coordinates not rounded)")
    return f"{used:g} m (given)"


def fit_dependence(centerline: Centerline, train: Train, operation: Operation,
                   limits: LimitSet, options: RideOptions, case: str,
                   evaluation: Evaluation) -> list[str]:
    """Rules whose outcome depends on smoothing a rounded track file: the ride run again with
    the curve through every sample, each rule that fails one way only named.

    Smoothing within half the file's grid takes the rounding's false curvature out, but it
    also rounds off a true curvature step (a turn entered without a transition) over its
    width, and lowers the onset there: a layout exported at 1 mm passed where its exact
    points failed. Neither curve is the truth, so the verdict stays the smoothed one's, and
    the reviewer is told which rule the fit decides, where, and by how much.

    Parameters
    ----------
    centerline, train, operation, limits, options, case
        As for :func:`run_check` (``options`` as used: automatic smoothing).
    evaluation : Evaluation
        The check with the smoothed curve.

    Returns
    -------
    list of str
        One review item per rule that fails one way only (empty when the fit decides none).
    """
    # only the findings are read: no design aids, the margins left uncomputed
    ride = run_ride(centerline, train, operation, replace(options, smoothing_m=0.0))
    exact = evaluate(ride.histories, limits, case, keep_signals=True, aids=False)
    smoothed = {f.rule for f in evaluation.findings if f.kind != "stall"}
    worst: dict[str, Finding] = {}  # each rule's most severe finding through every sample
    for f in exact.findings:
        worst.setdefault(f.rule, f)
    decides = "the fit decides this rule; check it with a finer export of the track"
    notes = []
    for rule, f in worst.items():
        if rule not in smoothed:
            where = f" at station {f.s_worst_m:.1f} m" if f.s_worst_m is not None else ""
            notes.append(f"{rule} passes with the rounded coordinates smoothed but fails with "
                         f"the curve through every sample (margin {f.margin:.3g} {f.unit}, "
                         f"seat {f.seat}{where}): {decides}")
    notes += [f"{rule} fails with the rounded coordinates smoothed but passes with the curve "
              f"through every sample: {decides}" for rule in sorted(smoothed - worst.keys())]
    return notes


def ride_parameters(result: RideResult) -> list[tuple[str, str]]:
    """Every parameter of a simulated run, for the record.

    Parameters
    ----------
    result : RideResult
        The simulated ride.

    Returns
    -------
    rows : list of tuple of (str, str)
        (name, value with its unit), e.g. ``("car spacing", "2.4 m")``; train, options, seat
        offsets and powered sections (stations resolved on the track).
    """
    tr, ops, opt = result.train, result.operation, result.options
    rows = [
        ("train", tr.name), ("cars", str(tr.car_count)), ("car spacing", f"{tr.spacing_m:g} m"),
        ("empty car mass", f"{tr.empty_mass_kg:g} kg"), ("seats per car", str(len(tr.seats))),
        ("rider mass", f"{tr.rider_mass_kg:g} kg"),
        ("occupancy", ", ".join(f"{o:g}" for o in tr.occupancy_by_car)
         if tr.occupancy_by_car else f"{tr.occupancy:g}"),
        ("rolling resistance coefficient", f"{tr.rolling_coefficient:g}"),
        ("drag area CdA", f"{tr.drag_area_m2:g} m^2"),
        ("air density", f"{tr.air_density_kg_m3:g} kg/m^3"),
        ("head wind", f"{opt.head_wind_m_s:g} m/s"),
        ("start speed", f"{ops.start_speed_m_s:g} m/s"),
        ("output sample rate", f"{opt.rate_hz:g} Hz"),
        ("station grid step", f"{opt.step_m:g} m"),
        ("smoothing tolerance", _smoothing_text(result)),
    ]
    for seat in tr.seats:
        rows.append((f"seat {seat.name} offset (forward, left, up)",
                     f"({seat.forward_m:g}, {seat.left_m:g}, {seat.up_m:g}) m"))
    for i, sec in enumerate(ops.sections):
        a, b = sec.resolved(result.geometry.length)
        rows.append((f"section {i + 1}: {sec.kind}",
                     f"{a:.1f} m to {b:.1f} m, {sec.describe()}"))
    return rows

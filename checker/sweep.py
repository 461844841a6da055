"""Sweeps: every load case for every seat, on local cores or a Dask cluster.

:func:`run_cases` evaluates every case through the same orchestration entry as a single check
(:func:`checker.ride.run_check`), in a process pool by default; results are the same whichever
executor runs them. Work is not repeated: the geometry is built once per layout, the train's
motion once per distinct (train, operation, options) after the cases are applied, every seat
is evaluated once, and what the documents draw (the filtered and raw signals of the seats that
can govern) is kept from that one pass.
"""

from __future__ import annotations

import os
import pickle
import sys
from collections.abc import Callable
from dataclasses import dataclass, field, replace

import numpy as np

from .bounds import share_memory
from .errors import InputError
from .events import group_findings
from .limits import AXES, REST, LimitSet
from .loadcases import LoadCase, apply_case
from .operation import Operation
from .parentwatch import stop_pool, watch_parent
from .ride import CheckRun, RideOptions, RideResult, evaluate_ride, layout_geometry, run_check
from .rules import Evaluation, Finding, verdict_of
from .terminal import shorten
from .track import Centerline
from .train import Train


@dataclass(frozen=True, eq=False)
class CaseOutcome:
    """One load case of a sweep.

    Attributes
    ----------
    case : str
        The load case's name.
    evaluation : Evaluation
        Its evaluation; only the seats in ``kept`` carry their signals (small enough to
        travel between processes).
    stall : str or None
        Where the train stopped short of the end, or None.
    peaks : dict
        Seat -> {axis: (min, max)} of the filtered signal [g0].
    top_speed_m_s : float
        Highest speed of the ride [m/s].
    duration_s : float
        Ride time [s].
    track_length_m : float
        Length of the track [m].
    motion : RideMotion or None
        The case's simulated motion (:class:`checker.dynamics.RideMotion`).
    kept : dict
        Seat -> (SeatResult with its filtered signal, raw SeatHistory) for the seats that can
        govern an event or a rule across cases (every seat of the sweep's first case).
    """

    case: str
    evaluation: Evaluation  # without signals (small enough to travel between processes)
    stall: str | None
    peaks: dict  # seat -> {axis: (min, max)} of the filtered signal [g0]
    top_speed_m_s: float
    duration_s: float
    track_length_m: float = 0.0
    motion: object | None = None  # checker.dynamics.RideMotion of this case
    # seat -> (SeatResult with filtered signal, raw history): the seats that can govern
    kept: dict = field(default_factory=dict)

    @property
    def verdict(self) -> str:
        """The case's verdict (its evaluation counts the stall)."""
        return self.evaluation.verdict


@dataclass(frozen=True, eq=False)
class Sweep:
    """Every case of one layout.

    Attributes
    ----------
    outcomes : tuple of CaseOutcome
        One per load case, in the order the cases were given.
    limits : LimitSet
        The limit set used.
    geometry : TrackGeometry or None
        The layout's geometry (:class:`checker.geometry.TrackGeometry`), built once for
        every case.
    """

    outcomes: tuple[CaseOutcome, ...]
    limits: LimitSet
    geometry: object | None = None  # checker.geometry.TrackGeometry, built once per layout

    @property
    def findings(self) -> list[Finding]:
        """Every finding of every case, the most severe first (ties: seat, case, start time)."""
        return sorted((f for o in self.outcomes for f in o.evaluation.findings),
                      key=lambda f: (-f.severity, f.seat, f.case, f.t_start))

    @property
    def ride_case(self) -> str | None:
        """The case whose ride the documents show (track, speed, ride time): the first case
        with a simulated motion, or None."""
        return next((o.case for o in self.outcomes if o.motion is not None), None)

    @property
    def verdict(self) -> str:
        """``"fail"`` when any case fails (a stall included), else ``"pass"``."""
        return verdict_of(*(o.verdict == "fail" for o in self.outcomes))

    def governing(self) -> list[Finding]:
        """For each rule, the most severe finding (its seat and case govern).

        Returns
        -------
        list of Finding
            One per rule that has findings, in the order of :attr:`findings`.
        """
        best: dict[str, Finding] = {}
        for f in self.findings:
            best.setdefault(f.rule, f)
        return list(best.values())

    def matrix(self) -> tuple[list[str], list[str], dict]:
        """The seat-by-case verdict matrix.

        Returns
        -------
        seats : list of str
            The seats of the first case, in their order.
        cases : list of str
            The cases, in their order.
        cells : dict
            ``(seat, case) -> "pass"``, ``"fail"`` or ``"stall"`` (a stall finding at that seat).
        """
        cases = [o.case for o in self.outcomes]
        seats = [s.seat for s in self.outcomes[0].evaluation.seats] if self.outcomes else []
        cells = {(s.seat, o.case): s.outcome for o in self.outcomes for s in o.evaluation.seats}
        return seats, cases, cells


def _run_one(job) -> list[CaseOutcome]:
    """One ride (one distinct train, operation and options) and the cases that share it."""
    centerline, geometry, train, operation, limits, options, names, keep_all = job
    run = run_check(centerline, train, operation, limits, options, names[0],
                    keep_signals=True, geometry=geometry)
    ride = run.ride
    history = {h.seat: h for h in ride.histories}
    outcomes = []
    for k, name in enumerate(names):
        # same ride, same signals: only the case name differs
        ev = run.evaluation if k == 0 else evaluate_ride(ride, limits, name, keep_signals=True)
        keep = ({s.seat for s in ev.seats} if keep_all and k == 0
                else _candidates(ev, train.length_m))
        kept = {s.seat: (s, history[s.seat]) for s in ev.seats if s.seat in keep}
        peaks = {s.seat: dict(s.worst) for s in ev.seats}
        # the record travels between processes: the signals of the other seats go
        ev = replace(ev, seats=tuple(s if s.seat in keep else s.without_signals()
                                     for s in ev.seats))
        outcomes.append(CaseOutcome(name, ev, run.stall, peaks, float(ride.motion.v.max()),
                                    ride.motion.duration_s, ride.geometry.length,
                                    ride.motion, kept))
    return outcomes


def _candidates(ev: Evaluation, train_length_m: float) -> set[str]:
    """Seats of one case that can govern across cases: the governor of each of its events
    (an event across cases restricted to one case is a union of that case's events, and its
    governor governs there too) and its most severe finding of each rule (ties broken as
    :meth:`Sweep.governing` does); its most stressed seat when it has no finding."""
    best: dict[str, tuple] = {}
    for f in ev.findings:
        key = (-f.severity, f.seat, f.t_start)
        if f.rule not in best or key < best[f.rule]:
            best[f.rule] = key
    if best:
        governors = {e.governing.seat for e in group_findings(ev.findings, train_length_m)}
        return governors | {key[1] for key in best.values()}
    if not ev.seats:
        return set()
    stressed = max(ev.seats, key=lambda s: max(abs(s.worst[a][k] - REST[a])
                                               for a in AXES for k in (0, 1)))
    return {stressed.seat}


def run_cases(centerline: Centerline, train: Train, operation: Operation, limits: LimitSet,
              options: RideOptions, cases: list[LoadCase], *, workers: int | None = None,
              scheduler: str | None = None,
              progress: Callable[[int, int], None] | None = None,
              scheduler_timeout_s: float = 30.0) -> Sweep:
    """Evaluate every load case of one layout, in parallel.

    Parameters
    ----------
    centerline : Centerline
        The layout.
    train : Train
        The train as loaded (each case overrides it).
    operation : Operation
        The operation as loaded (each case overrides it).
    limits : LimitSet
        The limit set.
    options : RideOptions
        Numerical options (each case may set the head wind).
    cases : list of LoadCase
        The load cases (names distinct).
    workers : int or None, optional
        Local processes; None (or 0) uses every core, 1 runs in this process.
    scheduler : str or None, optional
        A Dask scheduler address (``tcp://host:port``) to run on instead of local processes.
    progress : callable or None, optional
        Called as ``progress(done, total)`` in cases after each ride finishes.
    scheduler_timeout_s : float, optional
        How long to wait for the scheduler and its first worker [s] (default 30).

    Returns
    -------
    Sweep
        Every case's outcome; the same whichever executor ran them.

    Raises
    ------
    InputError
        When a case does not fit the train (per-car occupancy), a ride is refused (track too
        short, memory cap), or the Dask scheduler is missing, unreachable, malformed or has
        no worker in time.
    """
    return run_layouts([(centerline, train, operation)], limits, options, cases,
                       workers=workers, scheduler=scheduler, progress=progress,
                       scheduler_timeout_s=scheduler_timeout_s)[0]


def run_layouts(layouts: list[tuple[Centerline, Train, Operation]], limits: LimitSet,
                options: RideOptions, cases: list[LoadCase], *, workers: int | None = None,
                scheduler: str | None = None,
                progress: Callable[[int, int], None] | None = None,
                scheduler_timeout_s: float = 30.0) -> list[Sweep]:
    """Every case of every layout in one pool (layouts and rides run in parallel).

    Each layout's geometry is built once; cases whose train, operation and options come out
    the same share one ride.

    Parameters
    ----------
    layouts : list of (Centerline, Train, Operation)
        The layouts with their train and operation.
    limits : LimitSet
        The limit set.
    options : RideOptions
        Numerical options.
    cases : list of LoadCase
        The load cases (names distinct), applied to every layout.
    workers, scheduler, progress, scheduler_timeout_s
        As for :func:`run_cases` (``progress`` counts cases of all layouts).

    Returns
    -------
    list of Sweep
        One per layout, in the order given.

    Raises
    ------
    InputError
        As :func:`run_cases`.
    """
    jobs, places, geometries = [], [], []
    for i, (line, train, ops) in enumerate(layouts):
        geometry = layout_geometry(line, options)
        geometries.append(geometry)
        groups: dict[bytes, list[str]] = {}
        for case in cases:
            key = pickle.dumps(apply_case(train, ops, options, case))
            groups.setdefault(key, []).append(case.name)
        by_name = {c.name: c for c in cases}
        for names in groups.values():
            tr, op, opt = apply_case(train, ops, options, by_name[names[0]])
            keep_all = bool(cases) and names[0] == cases[0].name
            jobs.append((line, geometry, tr, op, limits, opt, names, keep_all))
            places.append(i)
    results = _execute(jobs, workers, scheduler, progress, scheduler_timeout_s,
                       sum(len(job[6]) for job in jobs))
    order = {c.name: k for k, c in enumerate(cases)}
    sweeps = []
    for i in range(len(layouts)):
        outcomes = [o for place, found in zip(places, results) if place == i for o in found]
        sweeps.append(Sweep(sorted(outcomes, key=lambda o: order[o.case]), limits,
                            geometries[i]))
    return sweeps


def _execute(jobs: list, workers: int | None, scheduler: str | None,
             progress: Callable[[int, int], None] | None,
             scheduler_timeout_s: float = 30.0,
             cases_total: int | None = None) -> list[list[CaseOutcome]]:
    total = len(jobs)
    outcomes: list = [None] * total
    done = 0
    shown_total = cases_total if cases_total is not None else total

    def tick(found=None):
        nonlocal done
        done += len(found) if isinstance(found, list) else 1
        if progress:
            progress(done, shown_total)

    if scheduler:
        try:
            from dask.distributed import Client, as_completed
        except ImportError:
            raise InputError("--scheduler", "needs dask.distributed",
                             "install the extra: pip install -e \".[dask]\"") from None
        client = _dask_client(Client, scheduler, scheduler_timeout_s)
        with client:
            futures = client.map(_run_one, jobs, pure=False)
            index = {f.key: i for i, f in enumerate(futures)}
            for fut in as_completed(futures):
                outcomes[index[fut.key]] = fut.result()
                tick(outcomes[index[fut.key]])
        return outcomes
    workers = workers or os.cpu_count() or 1
    if workers <= 1 or total <= 1:
        for i, job in enumerate(jobs):
            outcomes[i] = _run_one(job)
            tick(outcomes[i])
        return outcomes
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor
    from concurrent.futures import as_completed as first_done

    context = multiprocessing.get_context("fork" if sys.platform != "win32" else "spawn")
    pool = ProcessPoolExecutor(min(workers, total), mp_context=context,
                               initializer=_start_worker,
                               initargs=(os.getpid(), min(workers, total)))
    try:
        futures = {pool.submit(_run_one, job): i for i, job in enumerate(jobs)}
        for fut in first_done(futures):
            outcomes[futures[fut]] = fut.result()
            tick(outcomes[futures[fut]])
    except BaseException:  # interrupted or failed: the other cases are not wanted
        stop_pool(pool)
        raise
    pool.shutdown()
    return outcomes


def _start_worker(parent_pid: int, parallel: int) -> None:
    """Pool initializer: exit with the parent; take a share of the memory cap."""
    watch_parent(parent_pid)
    share_memory(parallel)


def _dask_client(client_class, scheduler: str, timeout_s: float):
    """A connected Dask client with at least one worker, or a one-line error in time."""
    shown = shorten(scheduler, 80)
    hint = "give the scheduler's address as tcp://HOST:PORT and check that it runs"
    try:
        client = client_class(scheduler, timeout=timeout_s)
    except (OSError, TimeoutError) as exc:
        raise InputError("--scheduler", f"cannot reach the Dask scheduler at {shown} within "
                         f"{timeout_s:g} s ({shorten(str(exc), 120)})", hint) from None
    except (ValueError, TypeError) as exc:
        raise InputError("--scheduler", f"{shown} is not a Dask scheduler address "
                         f"({shorten(str(exc), 120)})", hint) from None
    try:
        client.wait_for_workers(1, timeout=timeout_s)
    except (OSError, TimeoutError):
        client.close()
        raise InputError("--scheduler", f"the Dask scheduler at {shown} has no worker after "
                         f"{timeout_s:g} s", "start workers for it (dask worker ADDRESS) or "
                         "raise --scheduler-timeout") from None
    return client


def peak_summary(sweep: Sweep) -> dict:
    """The filtered extremes of every seat over all cases.

    Parameters
    ----------
    sweep : Sweep
        A sweep.

    Returns
    -------
    dict
        ``{seat: {axis: (min, max)}}`` [g0].
    """
    out: dict = {}
    for o in sweep.outcomes:
        for seat, axes in o.peaks.items():
            slot = out.setdefault(seat, {})
            for axis, (lo, hi) in axes.items():
                old = slot.get(axis, (np.inf, -np.inf))
                slot[axis] = (min(old[0], lo), max(old[1], hi))
    return out


def sweep_check_run(sweep: Sweep, centerline: Centerline, train: Train, operation: Operation,
                    limits: LimitSet, options: RideOptions, cases: list[LoadCase]):
    """A CheckRun of the whole sweep for documents: every seat x case result, with the kept
    signals of the governing (seat, case) pairs so that their figures can be drawn.

    Nothing is simulated again: the signals are those kept by the sweep
    (:attr:`CaseOutcome.kept`); a governing pair whose signals were not kept is drawn without
    them. The ride is that of :attr:`Sweep.ride_case` (the first case with a motion), with
    that case's train and operation.

    Parameters
    ----------
    sweep : Sweep
        The sweep.
    centerline : Centerline
        The layout (its geometry is built again only when the sweep has none).
    train, operation : Train, Operation
        As loaded (before the cases).
    limits : LimitSet
        The limit set.
    options : RideOptions
        Numerical options.
    cases : list of LoadCase
        The sweep's cases.

    Returns
    -------
    CheckRun
        The evaluation of every seat and case (warnings and stalls prefixed with their case),
        the ride (None when no case kept a motion) and the raw signals by (seat, case).
    """

    by_name = {c.name: c for c in cases}
    outcome_of = {o.case: o for o in sweep.outcomes}
    wanted: dict[str, set[str]] = {}
    for event in group_findings(sweep.findings, train.length_m):  # every event's governor
        wanted.setdefault(event.governing.case, set()).add(event.governing.seat)
    if not wanted and sweep.outcomes:  # all pass: the first case's seats
        wanted[sweep.outcomes[0].case] = set(sweep.outcomes[0].kept)
    full, signals = {}, {}
    ride = None
    shown = sweep.ride_case
    if shown is not None:
        geometry = sweep.geometry
        if geometry is None:
            geometry = layout_geometry(centerline, options)
        tr, ops, opt = apply_case(train, operation, options, by_name[shown])
        ride = RideResult(geometry, outcome_of[shown].motion, [], tr, ops, opt)
    for name, seats in wanted.items():
        outcome = outcome_of[name]
        for seat in seats:
            if seat in outcome.kept:
                result, history = outcome.kept[seat]
                full[(seat, name)] = result
                signals[(seat, name)] = history
    seats_all = []
    warned: dict[str, list[str]] = {}  # a warning of the track comes from every case
    for o in sweep.outcomes:
        for w in o.evaluation.warnings:
            warned.setdefault(w, []).append(o.case)
        for s in o.evaluation.seats:
            seats_all.append(full.get((s.seat, o.case), s.without_signals()))
    warnings = [("every case" if len(names) == len(sweep.outcomes) > 1
                 else f"case{'s' if len(names) > 1 else ''} {', '.join(names)}") + f": {w}"
                for w, names in warned.items()]
    stalls = tuple(f"case {o.case}: {s}" for o in sweep.outcomes for s in o.evaluation.stalls)
    evaluation = Evaluation(limits, tuple(seats_all), tuple(warnings), stalls)
    return CheckRun(evaluation, ride, signals)

"""Sweeps: every load case for every seat, on local cores or a Dask cluster.

:func:`run_cases` evaluates every case through the same orchestration entry as a single check
(:func:`checker.ride.run_check`), in a process pool by default; results are the same whichever
executor runs them.
"""

from __future__ import annotations

import os
import sys
from collections.abc import Callable
from dataclasses import dataclass, replace

import numpy as np

from .errors import InputError
from .events import group_findings
from .limits import LimitSet
from .loadcases import LoadCase, apply_case
from .operation import Operation
from .parentwatch import watch_parent
from .ride import CheckRun, RideOptions, run_check
from .rules import Evaluation, Finding, verdict_of
from .terminal import shorten
from .track import Centerline
from .train import Train


@dataclass(frozen=True, eq=False)
class CaseOutcome:
    """One load case of a sweep: its evaluation (without signals), stall, peaks [g0],
    top speed [m/s], ride time [s] and track length [m]."""

    case: str
    evaluation: Evaluation  # without signals (small enough to travel between processes)
    stall: str | None
    peaks: dict  # seat -> {axis: (min, max)} of the filtered signal [g0]
    top_speed_m_s: float
    duration_s: float
    track_length_m: float = 0.0

    @property
    def verdict(self) -> str:
        """The case's verdict (its evaluation counts the stall)."""
        return self.evaluation.verdict


@dataclass(frozen=True, eq=False)
class Sweep:
    """Every case of one layout."""

    outcomes: tuple[CaseOutcome, ...]
    limits: LimitSet

    @property
    def findings(self) -> list[Finding]:
        return sorted((f for o in self.outcomes for f in o.evaluation.findings),
                      key=lambda f: (-f.severity, f.seat, f.case, f.t_start))

    @property
    def verdict(self) -> str:
        return verdict_of(*(o.verdict == "fail" for o in self.outcomes))

    def governing(self) -> list[Finding]:
        """For each rule, the most severe finding (its seat and case govern)."""
        best: dict[str, Finding] = {}
        for f in self.findings:
            best.setdefault(f.rule, f)
        return list(best.values())

    def matrix(self) -> tuple[list[str], list[str], dict]:
        """Seats, cases and {(seat, case): "pass", "fail" or "stall"}."""
        cases = [o.case for o in self.outcomes]
        seats = [s.seat for s in self.outcomes[0].evaluation.seats] if self.outcomes else []
        cells = {(s.seat, o.case): ("stall" if any(f.kind == "stall" for f in s.findings)
                                    else s.verdict)
                 for o in self.outcomes for s in o.evaluation.seats}
        return seats, cases, cells


def _run_one(job) -> CaseOutcome:
    centerline, train, operation, limits, options, case = job
    tr, ops, opt = apply_case(train, operation, options, case)
    run = run_check(centerline, tr, ops, limits, opt, case.name, keep_signals=False)
    ev = run.evaluation
    peaks = {s.seat: dict(s.worst) for s in ev.seats}
    # keep the record small: signals are recomputed where a report needs them
    ev = replace(ev, seats=tuple(s.without_signals() for s in ev.seats))
    return CaseOutcome(case.name, ev, run.stall, peaks, float(run.ride.motion.v.max()),
                       run.ride.motion.duration_s, run.ride.geometry.length)


def run_cases(centerline: Centerline, train: Train, operation: Operation, limits: LimitSet,
              options: RideOptions, cases: list[LoadCase], *, workers: int | None = None,
              scheduler: str | None = None,
              progress: Callable[[int, int], None] | None = None,
              scheduler_timeout_s: float = 30.0) -> Sweep:
    """Evaluate every case; ``workers`` local processes (default: all cores), or the Dask
    cluster at ``scheduler`` (``tcp://host:port``), waiting at most ``scheduler_timeout_s``
    [s] for it and its first worker."""
    return run_layouts([(centerline, train, operation)], limits, options, cases,
                       workers=workers, scheduler=scheduler, progress=progress,
                       scheduler_timeout_s=scheduler_timeout_s)[0]


def run_layouts(layouts: list[tuple[Centerline, Train, Operation]], limits: LimitSet,
                options: RideOptions, cases: list[LoadCase], *, workers: int | None = None,
                scheduler: str | None = None,
                progress: Callable[[int, int], None] | None = None,
                scheduler_timeout_s: float = 30.0) -> list[Sweep]:
    """Every case of every layout in one pool (layouts and cases run in parallel)."""
    jobs = [(line, train, ops, limits, options, case)
            for line, train, ops in layouts for case in cases]
    outcomes = _execute(jobs, workers, scheduler, progress, scheduler_timeout_s)
    n = len(cases)
    return [Sweep(tuple(outcomes[i * n:(i + 1) * n]), limits) for i in range(len(layouts))]


def _execute(jobs: list, workers: int | None, scheduler: str | None,
             progress: Callable[[int, int], None] | None,
             scheduler_timeout_s: float = 30.0) -> list[CaseOutcome]:
    total = len(jobs)
    outcomes: list = [None] * total
    done = 0

    def tick():
        nonlocal done
        done += 1
        if progress:
            progress(done, total)

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
                tick()
        return outcomes
    workers = workers or os.cpu_count() or 1
    if workers <= 1 or total <= 1:
        for i, job in enumerate(jobs):
            outcomes[i] = _run_one(job)
            tick()
        return outcomes
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor
    from concurrent.futures import as_completed as first_done

    context = multiprocessing.get_context("fork" if sys.platform != "win32" else "spawn")
    with ProcessPoolExecutor(min(workers, total), mp_context=context,
                             initializer=watch_parent, initargs=(os.getpid(),)) as pool:
        futures = {pool.submit(_run_one, job): i for i, job in enumerate(jobs)}
        for fut in first_done(futures):
            outcomes[futures[fut]] = fut.result()
            tick()
    return outcomes


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
    """{seat: {axis: (min, max)}} over all cases."""
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
    """A CheckRun of the whole sweep for documents: every seat x case result, with signals
    recomputed for the governing (seat, case) pairs so that their figures can be drawn."""

    by_name = {c.name: c for c in cases}
    wanted: dict[str, set[str]] = {}
    for event in group_findings(sweep.findings, train.length_m):  # every event's governor
        wanted.setdefault(event.governing.case, set()).add(event.governing.seat)
    if not wanted and sweep.outcomes:  # all pass: the first case's most stressed seat
        wanted[sweep.outcomes[0].case] = set()
    full = {}
    signals = {}
    ride = None
    for name, seats in wanted.items():
        tr, ops, opt = apply_case(train, operation, options, by_name[name])
        run = run_check(centerline, tr, ops, limits, opt, name)
        ride = ride or run.ride
        for s in run.evaluation.seats:
            if s.seat in seats or not seats:
                full[(s.seat, name)] = s
                signals[(s.seat, name)] = run.signals[(s.seat, name)]
    seats_all = []
    warnings: list[str] = []
    for o in sweep.outcomes:
        warnings += [f"case {o.case}: {w}" for w in o.evaluation.warnings]
        for s in o.evaluation.seats:
            seats_all.append(full.get((s.seat, o.case), s))
    stalls = tuple(f"case {o.case}: {s}" for o in sweep.outcomes for s in o.evaluation.stalls)
    evaluation = Evaluation(limits, tuple(seats_all), tuple(warnings), stalls)
    return CheckRun(evaluation, ride, signals)

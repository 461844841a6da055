"""Benchmark of a load-case sweep (issue 6 target: 12 cases x 24 seats on the demo layout in
under 5 s with 2 workers, and at least 1.7 times faster than 1 worker).

Prints the wall time with 1 and with 2 local worker processes, measured in this process, and
the speed-up; checks that both give the same findings.

Run: python bench/bench_cases.py
"""

from __future__ import annotations

import time
from pathlib import Path

from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits
from checker.loadcases import STANDARD_CASES, load_cases
from checker.ride import RideOptions, load_inputs
from checker.sweep import run_cases

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"


def main() -> None:
    line, train, ops = load_inputs(SAMPLES / "thistle_comet_revB.csv",
                                   SAMPLES / "thistle_comet_train.toml",
                                   operation=SAMPLES / "thistle_comet_revB.operation.toml")
    limits = load_limits(BUNDLED_LIMITS)
    cases = load_cases(STANDARD_CASES)
    seats = train.car_count * len(train.seats)
    times, results = {}, {}
    for workers in (1, 2):
        best = None
        for _ in range(2):
            t0 = time.perf_counter()
            sweep = run_cases(line, train, ops, limits, RideOptions(), cases, workers=workers)
            elapsed = time.perf_counter() - t0
            best = elapsed if best is None else min(best, elapsed)
        times[workers] = best
        results[workers] = [f.to_dict() for f in sweep.findings]
        print(f"{len(cases)} cases x {seats} seats, {workers} worker(s): {best:.2f} s")
    print(f"speed-up 1 -> 2 workers: {times[1] / times[2]:.2f}x (target >= 1.7x); "
          f"2 workers {times[2]:.2f} s (target < 5 s); same findings: "
          f"{results[1] == results[2]}")


if __name__ == "__main__":
    main()

"""Benchmark of the rule engine (issue 15 targets: >= 10 M samples/s per axis at 1e6 and 1e7
samples, growth linear within 15 %, peak memory <= 10 x the input signal).

The signal is a real ride: the first seat of the demo layout (revision B with its train and
operation, 200 Hz, unfiltered), repeated end to end up to each length; it is evaluated against
the bundled illustrative limits (6 duration rules, 2 combined envelopes, 2 onset rules). The
lengths run interleaved, round after round, in this one process, and the figures are medians
with their spread (min-max) over the rounds. "Samples/s per axis" is samples of the record
(each holding Gx, Gy and Gz) per second of `evaluate`; the reference is one `sosfilt` pass
over the three axes (`checker.conditioning.lowpass`), the least any rule engine must do.
Peak memory is traced with tracemalloc in a separate pass (numpy reports its buffers to it)
and compared with the input signal's size (n x 3 float64).

Also printed: the cost of the exposure curves a report draws (one seat, up to 160 durations,
every duration rule) and, as a stress case, slow waves that stay above some rule's floor about
half of the time (the windows then cover most samples: O(N log W) for the longest run W).

"evaluate" is the rule engine: every finding of every rule (``evaluate(..., aids=False)``).
The design aids' per-seat summaries that the documents add (each rule's worst margin, the
rider's flights, the restraint zones) are timed beside it, as "with aids"
(``evaluate(...)``, the default, with every seat's margins read: they are computed when
first read); their findings are the same.

Run: python bench/bench_rules.py [--rounds 5] [--max 1e7]
"""

from __future__ import annotations

import argparse
import statistics
import time
import tracemalloc
from pathlib import Path

import numpy as np

from checker.conditioning import lowpass
from checker.documents import BUNDLED_LIMITS
from checker.history import RecordedSignal
from checker.limits import load_limits
from checker.ride import load_inputs, run_ride
from checker.rules import evaluate, seat_exposures

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"
RATE = 200.0


def ride_signal() -> np.ndarray:
    line, train, ops = load_inputs(SAMPLES / "thistle_comet_revB.csv",
                                   SAMPLES / "thistle_comet_train.toml",
                                   operation=SAMPLES / "thistle_comet_revB.operation.toml")
    return run_ride(line, train, ops).histories[0].g


def repeated(g: np.ndarray, n: int) -> RecordedSignal:
    reps = -(-n // len(g))
    return RecordedSignal("bench", np.arange(n) / RATE, np.tile(g, (reps, 1))[:n].copy())


def spread(values: list[float]) -> str:
    return (f"median {statistics.median(values):.3f} s (min {min(values):.3f}, "
            f"max {max(values):.3f})")


def read_margins(evaluation):
    """Read every seat's margins: they are computed when first read, and "with aids" times
    every aid."""
    for seat in evaluation.seats:
        dict(seat.margins)
    return evaluation


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--max", type=float, default=1e7)
    args = parser.parse_args()
    limits = load_limits(BUNDLED_LIMITS)
    base = ride_signal()
    sizes = [n for n in (10**5, 10**6, 10**7) if n <= args.max]
    signals = {n: repeated(base, n) for n in sizes}
    floors = {r.name: float(np.mean(r.sign * base[:, "xyz".index(r.axis[1])]
                                    > np.min(r.sign * r.levels_g))) for r in limits.duration}
    print(f"signal: demo seat, {len(base)} samples ({len(base) / RATE:.1f} s) repeated; share "
          "of samples above each duration rule's floor: "
          + ", ".join(f"{k} {100 * v:.2f} %" for k, v in floors.items()))
    evaluate([signals[sizes[0]]], limits)  # warm-up (imports, caches)
    times = {n: [] for n in sizes}
    filt = {n: [] for n in sizes}
    aided = {n: [] for n in sizes}
    findings = {}
    for _ in range(args.rounds):
        for n in sizes:  # interleaved: every length in every round
            sig = signals[n]
            t0 = time.perf_counter()
            ev = evaluate([sig], limits, aids=False)
            t1 = time.perf_counter()
            lowpass(sig.g, RATE, limits.filter)
            t2 = time.perf_counter()
            with_aids = evaluate([sig], limits)
            read_margins(with_aids)
            t3 = time.perf_counter()
            times[n].append(t1 - t0)
            filt[n].append(t2 - t1)
            aided[n].append(t3 - t2)
            findings[n] = len(ev.findings)
            assert len(with_aids.findings) == findings[n]
    print(f"rounds: {args.rounds}, interleaved; machine shared (timings are noisy)")
    rate = {}
    for n in sizes:
        med = statistics.median(times[n])
        rate[n] = n / med / 1e6
        print(f"n = {n:>9,}: evaluate {spread(times[n])}; {rate[n]:.1f} M samples/s per axis "
              f"({3 * rate[n]:.1f} M values/s); sosfilt pass {statistics.median(filt[n]):.3f} s "
              f"(evaluate / filter {med / statistics.median(filt[n]):.1f}x); "
              f"{findings[n]} findings; with aids {spread(aided[n])}, "
              f"{n / statistics.median(aided[n]) / 1e6:.1f} M samples/s")
    for a, b in zip(sizes, sizes[1:]):
        grow = statistics.median(times[b]) / statistics.median(times[a])
        print(f"growth {a:,} -> {b:,}: time x {grow:.2f} "
              f"for x {b / a:.0f} samples (per-sample cost x {rate[a] / rate[b]:.2f}; "
              "linear = 1.00, target within 1.15)")
    for n in sizes[1:]:
        size = signals[n].g.nbytes
        for label, aids in (("", False), (" with aids", True)):
            tracemalloc.start()
            read_margins(evaluate([signals[n]], limits, aids=aids))
            peak = tracemalloc.get_traced_memory()[1]
            tracemalloc.stop()
            print(f"peak traced memory at n = {n:,}{label}: {peak / 2**20:.0f} MiB = "
                  f"{peak / size:.2f} x the input signal ({size / 2**20:.0f} MiB; "
                  "target <= 10 x)")

    one = repeated(base, len(base))
    seat = evaluate([one], limits).seats[0]
    big = evaluate([signals[sizes[min(1, len(sizes) - 1)]]], limits).seats[0]
    for label, res in (("demo seat", seat), (f"{len(big.t):,} samples", big)):
        ts = []
        for _ in range(args.rounds):
            t0 = time.perf_counter()
            curves = seat_exposures(res, limits)
            ts.append(time.perf_counter() - t0)
        points = len(next(iter(curves.values())).durations_s)
        print(f"report exposure curves, {label}: {len(curves)} rules x {points} durations, "
              f"{spread(ts)}")

    n = sizes[min(1, len(sizes) - 1)]
    t = np.arange(n) / RATE
    wave = np.column_stack([2.2 * np.sin(2 * np.pi * t / 7.0), 1.6 * np.sin(2 * np.pi * t / 5.0),
                            1.0 + 3.2 * np.sin(2 * np.pi * t / 11.0)])
    hostile = RecordedSignal("stress", t, wave)  # above some floor about half of the time
    ts = []
    for _ in range(max(1, args.rounds // 2)):
        t0 = time.perf_counter()
        read_margins(evaluate([hostile], limits))
        ts.append(time.perf_counter() - t0)
    tracemalloc.start()
    ev = read_margins(evaluate([hostile], limits))
    peak = tracemalloc.get_traced_memory()[1]
    tracemalloc.stop()
    print(f"stress (slow waves of 2.2, 1.6 and 3.2 g on every axis, n = {n:,}): {spread(ts)}, "
          f"{n / statistics.median(ts) / 1e6:.1f} M samples/s, {len(ev.findings)} findings, "
          f"peak {peak / hostile.g.nbytes:.1f} x the input")


if __name__ == "__main__":
    main()

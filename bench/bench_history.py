"""Benchmark of reading a recorded history (issue 15 targets: `check-history` on a 1e6-row
record within 3 x a bare `pandas.read_csv` of the same file, process start included for both;
a 5 M-row record under 1 GB peak).

Writes a synthetic record (t, gx, gy, gz at 200 Hz, slow waves with a little noise, 6 decimal
places; made here, not the demo scenario) to a temporary folder, then times, interleaved round
after round, fresh processes: `python -c "import pandas; pandas.read_csv(file)"`,
`python -m checker check-history file` and the same with `--json`. The figures are the
medians and the spread (min-max) of the wall time. The peak memory of a `check-history`
process on the 5 M-row record is its maximum resident set size (getrusage of the child).

Run: python bench/bench_history.py [--rounds 5] [--rows 1000000] [--big 5000000]
"""

from __future__ import annotations

import argparse
import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

from checker.csvtable import read_numeric_csv
from checker.history import load_history

ROOT = Path(__file__).resolve().parents[1]


def write_record(path: Path, rows: int) -> None:
    t = np.arange(rows) / 200.0
    rng = np.random.default_rng(0)
    g = np.column_stack([0.4 * np.sin(t / 3.0), 0.6 * np.sin(t / 5.0),
                         1.0 + 1.2 * np.sin(t / 7.0)]) + rng.normal(0, 0.01, (rows, 3))
    frame = pd.DataFrame({"t": t, "gx": g[:, 0], "gy": g[:, 1], "gz": g[:, 2]})
    frame.to_csv(path, index=False, float_format="%.6f")


def run(cmd: list[str]) -> tuple[float, float, int]:
    """Wall time [s], peak RSS of the child [MiB] and exit code of one fresh process."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    before = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    t0 = time.perf_counter()
    done = subprocess.run(cmd, env=env, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                          text=True)
    wall = time.perf_counter() - t0
    peak = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    if done.returncode not in (0, 1):
        raise SystemExit(f"{' '.join(cmd)} failed: {done.stderr.strip()}")
    return wall, max(peak, before) / 1024, done.returncode


def spread(values: list[float]) -> str:
    med = statistics.median(values)
    return f"median {med:.2f} s (min {min(values):.2f}, max {max(values):.2f})"


def main() -> None:
    parser = argparse.ArgumentParser()
    parser.add_argument("--rounds", type=int, default=5)
    parser.add_argument("--rows", type=int, default=1_000_000)
    parser.add_argument("--big", type=int, default=5_000_000)
    args = parser.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        record = Path(tmp) / "record.csv"
        write_record(record, args.rows)
        size = record.stat().st_size / 2**20
        bare = [sys.executable, "-c", f"import pandas; pandas.read_csv({str(record)!r})"]
        ours = [sys.executable, "-m", "checker", "check-history", str(record)]
        # with the JSON record as well (every finding, flights, zones, the audit record)
        with_json = ours + ["--json", str(Path(tmp) / "findings.json")]
        times: dict[str, list[float]] = {"bare": [], "ours": [], "json": []}
        for _ in range(args.rounds):  # interleaved
            times["bare"].append(run(bare)[0])
            times["ours"].append(run(ours)[0])
            times["json"].append(run(with_json)[0])
        ratio = statistics.median(times["ours"]) / statistics.median(times["bare"])
        ratios = [o / b for o, b in zip(times["ours"], times["bare"])]
        print(f"record: {args.rows:,} rows, {size:.0f} MiB; {args.rounds} interleaved rounds; "
              "machine shared (timings are noisy)")
        print(f"bare pandas.read_csv process: {spread(times['bare'])}")
        print(f"checker check-history process: {spread(times['ours'])}")
        print(f"ratio of medians {ratio:.2f} (per round {min(ratios):.2f} to {max(ratios):.2f}; "
              "target <= 3)")
        print(f"checker check-history --json process: {spread(times['json'])} (ratio of "
              f"medians {statistics.median(times['json']) / statistics.median(times['bare']):.2f})")
        inside = {"pandas.read_csv": [], "read_numeric_csv": [], "load_history": []}
        for _ in range(args.rounds):  # the reading alone, in this process, interleaved
            for label, job in (("pandas.read_csv", lambda: pd.read_csv(record)),
                               ("read_numeric_csv", lambda: read_numeric_csv(
                                   record, ["t", "gx", "gy", "gz"], text=["seat"])),
                               ("load_history", lambda: load_history(record))):
                t0 = time.perf_counter()
                job()
                inside[label].append(time.perf_counter() - t0)
        base = statistics.median(inside["pandas.read_csv"])
        for label, values in inside.items():
            print(f"in process, {label}: {spread(values)} "
                  f"({statistics.median(values) / base:.2f} x pandas.read_csv)")
        record.unlink()
        if args.big:
            write_record(record, args.big)
            size = record.stat().st_size / 2**20
            # the RSS of children is a running maximum: measure the big one in a fresh parent
            code = (f"import resource, subprocess, sys; subprocess.run({ours[:-1]!r} + "
                    f"[{str(record)!r}], stdout=subprocess.DEVNULL); print(resource.getrusage("
                    "resource.RUSAGE_CHILDREN).ru_maxrss)")
            t0 = time.perf_counter()
            out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                                 env={**os.environ, "PYTHONPATH": str(ROOT)})
            wall = time.perf_counter() - t0
            peak = int(out.stdout.strip().splitlines()[-1]) / 1024
            print(f"check-history on {args.big:,} rows ({size:.0f} MiB): {wall:.1f} s, peak RSS "
                  f"{peak:.0f} MiB (target < 1024 MiB)")


if __name__ == "__main__":
    main()

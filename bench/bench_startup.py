"""Start-up of the command line: ``checker --help`` now, against the path it took before the
application layer (the package import pulled the ride room: numpy, pandas, scipy).

Both run as fresh interpreters in this one process, interleaved, median of the rounds.

Run: python bench/bench_startup.py [ROUNDS]
"""

from __future__ import annotations

import os
import statistics
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HELP = "import sys; from checker.cli import main; main(['--help'])"
CASES = {
    "checker --help (now)": HELP,
    "old path: ride room loaded first, then --help": "import checker.ride; " + HELP,
    "bare interpreter": "pass",
}


def once(code: str) -> float:
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    start = time.perf_counter()
    subprocess.run([sys.executable, "-c", code], check=False, env=env,
                   stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    return time.perf_counter() - start


def main() -> None:
    rounds = int(sys.argv[1]) if len(sys.argv) > 1 else 7
    times: dict[str, list[float]] = {name: [] for name in CASES}
    for _ in range(rounds):
        for name, code in CASES.items():
            times[name].append(once(code))
    medians = {name: statistics.median(v) for name, v in times.items()}
    for name, value in medians.items():
        print(f"{name:<48} {value * 1000:7.0f} ms (median of {rounds})")
    now, old = medians["checker --help (now)"], medians[
        "old path: ride room loaded first, then --help"]
    print(f"ratio now / old: {now / old:.2f} (target under 0.33)")


if __name__ == "__main__":
    main()

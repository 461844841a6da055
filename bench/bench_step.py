"""Convergence of the station grid step (`--step`): answers at 0.4, 0.2, 0.1 and 0.05 m.

Prints, for each step, the largest error of Gz against the closed form in a frictionless
circular loop released from 5R/2 (Gz = 6 - 3 z / R; energy conservation and a = v^2 / R),
and, for the demo's revision A, the peak filtered Gz over all seats and the largest filtered
difference from the 0.05 m answer at the same car station, with the compute time.
"""

from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "tests"))

from shapes import G0, vertical_loop  # noqa: E402

from checker.conditioning import lowpass  # noqa: E402
from checker.documents import BUNDLED_LIMITS  # noqa: E402
from checker.limits import load_limits  # noqa: E402
from checker.operation import Operation  # noqa: E402
from checker.ride import RideOptions, load_inputs, run_ride  # noqa: E402
from checker.track import Centerline  # noqa: E402
from checker.train import ideal_rider  # noqa: E402

STEPS = (0.4, 0.2, 0.1, 0.05)
SAMPLES = HERE.parent / "sample_tracks"


def main() -> None:
    spec = load_limits(BUNDLED_LIMITS).filter
    print("step [m]  loop Gz error [g]  demo A peak Gz [g]  demo A max diff vs 0.05 m [g]"
          "  demo A time [s]")
    line, train, ops = load_inputs(SAMPLES / "thistle_comet_revA.csv",
                                   SAMPLES / "thistle_comet_train.toml",
                                   operation=SAMPLES / "thistle_comet_revA.operation.toml")
    runs = {}
    for step in STEPS:
        loop = run_ride(Centerline(vertical_loop(10.0)), ideal_rider(),
                        Operation(start_speed_m_s=float(np.sqrt(5 * G0 * 10.0))),
                        RideOptions(step_m=step))
        h = loop.histories[0]
        inside = (h.s > 2) & (h.s < loop.geometry.length - 2)
        err = np.max(np.abs(h.g[inside, 2] - (6 - 3 * h.position[inside, 2] / 10.0)))
        started = time.perf_counter()
        demo = run_ride(line, train, ops, RideOptions(step_m=step))
        took = time.perf_counter() - started
        runs[step] = [(x.s, lowpass(x.g, 200.0, spec)) for x in demo.histories]
        runs[step + 1] = (err, took)
    ref = runs[STEPS[-1]]
    for step in STEPS:
        got = runs[step]
        diff = 0.0
        for (s_a, a), (s_b, b) in zip(got, ref):  # compared at the same car station
            at = np.column_stack([np.interp(s_b, s_a, a[:, i]) for i in range(3)])
            diff = max(diff, float(np.max(np.abs(at - b))))
        peak = max(float(a[:, 2].max()) for _, a in got)
        err, took = runs[step + 1]
        print(f"{step:8.2f}  {err:17.4f}  {peak:18.3f}  {diff:29.3f}  {took:15.2f}")


if __name__ == "__main__":
    main()

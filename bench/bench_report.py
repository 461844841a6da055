"""Benchmark of the PDF report for the demo layout, both revisions measured in one run.

Targets (issue 10): revision A's report (24 failing seats) costs at most 1.5 times revision
B's (all passing), and `checker demo` runs in under 10 s.

Prints, for each demo revision, the time split between simulation, rule engine, events,
figures and HTML, and PDF rendering (measured in this process after imports), the ratio A/B,
and the wall time of `checker demo` in a fresh process.

Run: python bench/bench_report.py [--no-demo]
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
from pathlib import Path

from checker.documents import BUNDLED_LIMITS
from checker.events import events_of_run
from checker.limits import load_limits
from checker.report import ReportMeta, TemplatesOnlyFetcher, build_html, render_pdf
from checker.ride import load_inputs, run_ride
from checker.rules import evaluate

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"


def one_report(rev: str, limits) -> float:
    t0 = time.perf_counter()
    line, train, ops = load_inputs(SAMPLES / f"thistle_comet_rev{rev}.csv",
                                   SAMPLES / "thistle_comet_train.toml",
                                   operation=SAMPLES / f"thistle_comet_rev{rev}.operation.toml")
    ride = run_ride(line, train, ops)
    t1 = time.perf_counter()
    evaluation = evaluate(ride.histories, limits)
    t2 = time.perf_counter()
    events = events_of_run(evaluation, ride)
    t3 = time.perf_counter()
    signals = {(h.seat, "nominal"): h for h in ride.histories}
    html, assets = build_html(evaluation, signals, ride, ReportMeta(), events)
    t4 = time.perf_counter()
    pdf = render_pdf(html, TemplatesOnlyFetcher(assets=assets))
    t5 = time.perf_counter()
    print(f"revision {rev}: {evaluation.verdict}, {len(evaluation.findings)} findings in "
          f"{len(events)} events, {len(assets)} figures, {len(pdf) / 1024:.0f} KiB")
    print(f"  simulation {t1 - t0:.2f} s, rule engine {t2 - t1:.2f} s, events {t3 - t2:.2f} s, "
          f"figures and HTML {t4 - t3:.2f} s, PDF {t5 - t4:.2f} s; total {t5 - t0:.2f} s")
    return t5 - t0


def main() -> None:
    limits = load_limits(BUNDLED_LIMITS)
    one_report("B", limits)  # warm-up: imports, font cache, matplotlib's first figure
    times = {rev: one_report(rev, limits) for rev in "BA"}
    print(f"ratio A/B: {times['A'] / times['B']:.2f} (target <= 1.5)")
    if "--no-demo" in sys.argv:
        return
    with tempfile.TemporaryDirectory() as out:
        t0 = time.perf_counter()
        subprocess.run([sys.executable, "-m", "checker", "demo", "--out", out], check=True,
                       capture_output=True)
        print(f"checker demo: {time.perf_counter() - t0:.1f} s wall (target < 10 s)")


if __name__ == "__main__":
    main()

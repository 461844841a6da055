"""Benchmark of the PDF report for the demo layout (issue 4 target: under 5 s).

Prints, for each demo revision, the time split between simulation, rule engine, plotting
(figures and HTML) and PDF rendering, measured in this process after imports.

Run: python bench/bench_report.py
"""

from __future__ import annotations

import time
from pathlib import Path

from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits
from checker.report import ReportMeta, TemplatesOnlyFetcher, build_html, render_pdf
from checker.ride import load_inputs, run_ride
from checker.rules import evaluate

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"


def main() -> None:
    limits = load_limits(BUNDLED_LIMITS)
    for rev in "BA":
        t0 = time.perf_counter()
        line, train, ops = load_inputs(SAMPLES / f"thistle_comet_rev{rev}.csv",
                                       SAMPLES / "thistle_comet_train.toml",
                                       operation=SAMPLES / f"thistle_comet_rev{rev}"
                                       ".operation.toml")
        ride = run_ride(line, train, ops)
        t1 = time.perf_counter()
        evaluation = evaluate(ride.histories, limits)
        t2 = time.perf_counter()
        signals = {(h.seat, "nominal"): h for h in ride.histories}
        html, assets = build_html(evaluation, signals, ride, ReportMeta())
        t3 = time.perf_counter()
        pdf = render_pdf(html, TemplatesOnlyFetcher(assets=assets))
        t4 = time.perf_counter()
        sections = sum(1 for s in evaluation.seats if s.findings) or 1
        print(f"revision {rev}: {evaluation.verdict}, {len(evaluation.findings)} findings, "
              f"{sections} seat section(s), {len(pdf) / 1024:.0f} KiB")
        print(f"  simulation {t1 - t0:.2f} s, rule engine {t2 - t1:.2f} s, plotting "
              f"{t3 - t2:.2f} s, PDF {t4 - t3:.2f} s; total {t4 - t0:.2f} s"
              + (" (target < 5 s)" if rev == "B" else ""))


if __name__ == "__main__":
    main()

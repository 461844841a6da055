"""Benchmark of the PDF report for the demo layout, both revisions measured in one run.

Targets (issue 10): revision A's report (24 failing seats) costs at most 1.5 times revision
B's (all passing), and `checker demo` runs in under 10 s.

Prints, for each demo revision, the time split between simulation, rule engine, events,
HTML (the figures' drawing starts in worker processes) and PDF (weasyprint's layout while the
figures are drawn, then placing them), measured in this process after imports; the CPU time
of this process and of its figure workers; the ratio A/B; and the wall time of
`checker demo` in a fresh process.

Run: python bench/bench_report.py [--no-demo]
"""

from __future__ import annotations

import multiprocessing
import resource
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


def cpu_s() -> float:
    """CPU time of this process and its finished children (figure workers) [s]: a measure
    that a busy machine does not inflate as much as wall time."""
    own, kids = (resource.getrusage(w) for w in (resource.RUSAGE_SELF,
                                                 resource.RUSAGE_CHILDREN))
    return own.ru_utime + own.ru_stime + kids.ru_utime + kids.ru_stime


def one_report(rev: str, limits) -> tuple[float, float]:
    c0 = cpu_s()
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
    while multiprocessing.active_children():  # the figure workers, done, are ending: their
        time.sleep(0.01)                       # CPU counts once they are waited for
    cpu = cpu_s() - c0
    print(f"revision {rev}: {evaluation.verdict}, {len(evaluation.findings)} findings in "
          f"{len(events)} events, {len(assets)} figures, {len(pdf) / 1024:.0f} KiB")
    print(f"  simulation {t1 - t0:.2f} s, rule engine {t2 - t1:.2f} s, events {t3 - t2:.2f} s, "
          f"HTML {t4 - t3:.2f} s, PDF with the figures {t5 - t4:.2f} s; total {t5 - t0:.2f} s "
          f"wall, {cpu:.2f} s CPU")
    return t5 - t0, cpu


def main() -> None:
    limits = load_limits(BUNDLED_LIMITS)
    one_report("B", limits)  # warm-up: imports, font cache, matplotlib's first figure
    times = {rev: one_report(rev, limits) for rev in "BA"}
    print(f"ratio A/B: {times['A'][0] / times['B'][0]:.2f} wall, "
          f"{times['A'][1] / times['B'][1]:.2f} CPU (target <= 1.5)")
    if "--no-demo" in sys.argv:
        return
    with tempfile.TemporaryDirectory() as out:
        t0 = time.perf_counter()
        c0 = cpu_s()
        subprocess.run([sys.executable, "-m", "checker", "demo", "--out", out], check=True,
                       capture_output=True)
        print(f"checker demo: {time.perf_counter() - t0:.1f} s wall, {cpu_s() - c0:.1f} s CPU "
              "(target < 10 s wall)")


if __name__ == "__main__":
    main()

"""Command line: argument parsing, exit codes and error printing. No numerics here.

Exit codes: 0 every rule holds (or the command ran), 1 at least one finding (or a stall),
2 bad input or usage (or an output that cannot be written), 3 internal error (a bug: one line,
the traceback with ``--debug``), 130 interrupted.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Sequence
from concurrent.futures.process import BrokenProcessPool

from . import __version__
from .bounds import (
    RATE_HZ,
    SCHEDULER_TIMEOUT_S,
    SMOOTHING_M,
    START_SPEED_M_S,
    STEP_M,
    WORKERS,
    name_option,
    number_option,
)
from .errors import InputError, TrainStalled
from .terminal import write_raw

EXIT_OK, EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130


def _add_ride_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("track", help="centerline CSV (x, y, z [m]; optional roll_deg or up_*)")
    p.add_argument("--operation", help="operation TOML (start speed, lift, launch, brakes)")
    _add_ride_settings(p)


def _add_ride_settings(p: argparse.ArgumentParser) -> None:
    """Train and numerical options shared by every command that simulates."""
    group = p.add_mutually_exclusive_group()
    group.add_argument("--train", help="train TOML (cars, seats, masses, resistances)")
    group.add_argument("--ideal", action="store_true",
                       help="one rider on the centerline, no rolling resistance, no drag")
    p.add_argument("--start-speed", type=number_option(*START_SPEED_M_S, " m/s"),
                   metavar="M_PER_S",
                   help="speed at the start [m/s]; overrides the operation file")
    p.add_argument("--rate", type=number_option(*RATE_HZ, " Hz"), default=200.0, metavar="HZ",
                   help="output sample rate [Hz] (default 200)")
    p.add_argument("--units", choices=("m", "ft"), default="m",
                   help="length unit of the track file (default m)")
    p.add_argument("--smoothing", type=number_option(*SMOOTHING_M, " m"), default=None,
                   metavar="METRES",
                   help="RMS tolerance for fitting noisy CAD samples; 0 fits through every "
                        "sample (default: half the grid a rounded file's coordinates sit on)")
    p.add_argument("--step", type=number_option(*STEP_M, " m"), default=0.2, metavar="METRES",
                   help="station grid step of the simulation [m] (default 0.2)")


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="checker",
        description="Acceleration-envelope self-check for roller coaster layouts. A self-check, "
                    "not a certification: the governing code, the authority having "
                    "jurisdiction and licensed engineering review decide.")
    parser.add_argument("--version", action="version", version=f"checker {__version__}")
    parser.add_argument("--debug", action="store_true",
                        help="show the traceback of an internal error")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    sim = sub.add_parser("simulate", help="simulate a ride; write every seat's history (CSV)")
    _add_ride_options(sim)
    sim.add_argument("-o", "--output", required=True, metavar="HISTORY.csv",
                     help="where to write the history")
    chk = sub.add_parser("check", help="simulate and check every seat against a limit set")
    _add_ride_options(chk)
    _add_check_options(chk)
    _add_case_options(chk)
    chk.add_argument("--sensitivity", action="store_true",
                     help="also rank how rider mass, occupancy, rolling coefficient, drag "
                          "area, air density, head wind, start speed and lift speed move "
                          "each rule's margin (16 more runs)")
    bank = sub.add_parser("advise-bank", help="advise the bank angle that cancels the riders' "
                          "lateral force within a roll-rate limit; write the banked track")
    _add_ride_options(bank)
    bank.add_argument("-o", "--output", required=True, metavar="BANKED.csv",
                      help="where to write the track with the advised roll_deg (a plot of "
                           "given and advised bank goes beside it as .svg)")
    bank.add_argument("--roll-rate", type=number_option(1.0, 1000.0, " deg/s"), default=60.0,
                      metavar="DEG_PER_S",
                      help="highest roll rate any car may see [deg/s] (default 60)")
    bank.add_argument("--tolerance", type=number_option(0.001, 1.0, " g"), default=0.02,
                      metavar="G",
                      help="|Gy| accepted at each seat when choosing the bank [g] "
                           "(default 0.02)")
    bank.add_argument("--roll-smoothing", type=number_option(0.0, 10.0, " s"), default=0.6,
                      metavar="SECONDS",
                      help="moving-average window that softens the roll acceleration [s] "
                           "(default 0.6)")
    bank.add_argument("--json", metavar="ADVICE.json", help="write the advice's figures as JSON")
    bank.add_argument("--pdf", metavar="ADVICE.pdf", help="write a short PDF of the advice")
    bank.add_argument("--page-size", choices=("a4", "letter"), default="a4")
    hist = sub.add_parser("check-history",
                          help="check a recorded or exported history against a limit set")
    hist.add_argument("history", help="CSV with t, gx, gy, gz (optional seat)")
    hist.add_argument("--units", choices=("g", "m/s2"), default="g",
                      help="unit of gx, gy, gz in the file (default g)")
    _add_record_options(hist)
    _add_check_options(hist)
    cmp_ = sub.add_parser("compare", help="compare two revisions of a layout: what got "
                          "better and what got worse")
    cmp_.add_argument("old", help="the old revision's centerline CSV")
    cmp_.add_argument("new", help="the new revision's centerline CSV")
    _add_ride_settings(cmp_)
    cmp_.add_argument("--operation", help="operation TOML for both layouts")
    cmp_.add_argument("--old-operation", help="operation TOML for the old layout only")
    cmp_.add_argument("--new-operation", help="operation TOML for the new layout only")
    cmp_.add_argument("--limits", help="limits TOML (default: the bundled ILLUSTRATIVE set)")
    cmp_.add_argument("--json", metavar="CHANGES.json", help="write the comparison as JSON")
    cmp_.add_argument("--pdf", metavar="COMPARISON.pdf", help="write the comparison PDF")
    cmp_.add_argument("--page-size", choices=("a4", "letter"), default="a4")
    cmp_.add_argument("--project", default="(not given)")
    _add_case_options(cmp_)
    cor = sub.add_parser("correlate", help="line a recorded ride up with the simulation of "
                         "the same layout; per-axis RMS and largest differences, time offset")
    cor.add_argument("record", help="recorded history CSV (plain format or --instrument)")
    _add_ride_options(cor)
    cor.add_argument("--record-units", choices=("g", "m/s2"), default="g",
                     help="unit of gx, gy, gz in a plain-format record (default g)")
    _add_record_options(cor)
    cor.add_argument("--seat", help="simulated seat to compare every recorded seat with "
                     "(default: the seat of the same name, e.g. car1-r1L)")
    cor.add_argument("--limits", help="limits TOML whose filter is applied to both signals "
                     "(default: the bundled set's filter)")
    cor.add_argument("--json", metavar="CORRELATION.json", help="write the result as JSON")
    cor.add_argument("--pdf", metavar="CORRELATION.pdf", help="write the PDF with figures")
    cor.add_argument("--page-size", choices=("a4", "letter"), default="a4")
    cor.add_argument("--project", type=name_option(), default="(not given)")
    demo = sub.add_parser("demo", help="check both revisions of the bundled demo layout and "
                          "write their PDF and JSON reports")
    demo.add_argument("--out", default="demo-output", metavar="FOLDER",
                      help="folder for the reports (default ./demo-output)")
    demo.add_argument("--page-size", choices=("a4", "letter"), default="a4")
    demo.add_argument("--seat-pages", choices=("all", "governing", "none"),
                      default="governing", help="seat pages of figures (default governing)")
    for command in sub.choices.values():  # --debug after the command too
        command.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                             help="show the traceback of an internal error")
    return parser


def _add_record_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--instrument", metavar="INSTRUMENT.toml",
                   help="logger layout: time and acceleration columns, units, mounting, seats")
    p.add_argument("--resample", type=number_option(*RATE_HZ, " Hz"), default=None,
                   metavar="HZ", help="re-sample irregular time stamps onto a uniform grid "
                   "at HZ (default: refuse them, naming the rows)")


def _add_check_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--limits", help="limits TOML (default: the bundled ILLUSTRATIVE set)")
    p.add_argument("--json", metavar="FINDINGS.json", help="write the findings as JSON")
    p.add_argument("--pdf", metavar="REPORT.pdf",
                   help="write the PDF report (and a JSON sidecar beside it)")
    p.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                   help="paper size of the PDF (default a4)")
    p.add_argument("--project", default="(not given)", help="project name for the report")
    p.add_argument("--layout-name", default=None, help="layout name (default: file name)")
    p.add_argument("--revision", default="(not given)", help="layout revision for the report")
    p.add_argument("--case", default="nominal", type=name_option(),
                   help="name of the load case (default nominal)")
    p.add_argument("--seat-pages", choices=("all", "governing", "none"), default="governing",
                   help="seat pages of figures in the PDF: the governing seat of each event "
                   "and seats whose findings differ (default), every seat with a finding, "
                   "or none")


def _add_case_options(p: argparse.ArgumentParser) -> None:
    p.add_argument("--cases", metavar="CASES.toml",
                   help="load cases to run for every seat ('standard' for the shipped set)")
    p.add_argument("--workers", type=number_option(*WORKERS, integer=True), default=None,
                   metavar="N",
                   help="local worker processes for the cases (default: all cores)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run the cases on a Dask cluster, e.g. tcp://10.0.0.5:8786")
    p.add_argument("--scheduler-timeout", type=number_option(*SCHEDULER_TIMEOUT_S, " s"),
                   default=30.0, metavar="SECONDS",
                   help="how long to wait for the Dask scheduler and its first worker "
                        "(default 30)")
    p.add_argument("--quiet", action="store_true", help="no progress bar")


def _limits(args: argparse.Namespace):
    from .documents import BUNDLED_LIMITS
    from .limits import load_limits

    if args.limits is None:
        print(f"limits: none given, using the bundled ILLUSTRATIVE set {BUNDLED_LIMITS.name} "
              "(invented example values, not from any standard)")
        return load_limits(BUNDLED_LIMITS)
    return load_limits(args.limits)


def _command_line(args: argparse.Namespace | None = None) -> str:
    """The command that reproduces this run, quoted for a POSIX shell (shlex.join): the
    arguments given to :func:`main`, or the process's own."""
    import shlex

    argv = getattr(args, "argv", None)
    return shlex.join(["checker", *(sys.argv[1:] if argv is None else argv)])


def _finish(args, run, source: str, parameters: list, sensitivity=None) -> int:
    """Print the summary; write JSON and PDF as asked. Returns the exit code."""
    from .documents import CAUTION, evaluation_document, summary_table, to_json
    from .events import events_of_run
    from .outputs import atomic_write_text
    from .plausibility import filter_warnings

    evaluation = run.evaluation
    evaluation.warnings[:0] = filter_warnings(evaluation.limits.filter)
    for warning in evaluation.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    events = events_of_run(evaluation, run.ride)
    print(summary_table(evaluation, events))
    from .aids import aids_summary

    print(aids_summary(evaluation, sensitivity))
    if run.sweep is not None:
        from .documents import sweep_document, sweep_tables

        print(sweep_tables(run.sweep))
        extra_sweep = sweep_document(run.sweep)
    else:
        extra_sweep = {}
    if evaluation.limits.illustrative:
        print("note: the limit set is ILLUSTRATIVE; the verdict says nothing about compliance")
    print("caution: " + CAUTION)
    command = _command_line(args)
    extra = {"stall": run.stall, **extra_sweep}
    if sensitivity is not None:
        extra["sensitivity"] = sensitivity.to_dict()
    if args.pdf:
        from .report import ReportMeta, write_report

        meta = ReportMeta(project=args.project, layout=args.layout_name or source,
                          revision=args.revision, page_size=args.page_size, command=command,
                          inputs=run.inputs, parameters=parameters, stall=run.stall,
                          sweep=run.sweep, seat_pages=args.seat_pages,
                          recorded=run.ride is None, sensitivity=sensitivity)
        pdf, sidecar = write_report(run, args.pdf, meta, args.json, extra)
        print(f"wrote {pdf} and {sidecar}")
    elif args.json:
        doc = evaluation_document(evaluation, run.inputs, command, extra, events)
        atomic_write_text(args.json, to_json(doc))
        print(f"wrote {args.json}")
    return EXIT_FINDINGS if evaluation.verdict == "fail" or run.stall else EXIT_OK


def _inputs(*paths) -> list[tuple[str, str]]:
    from .limits import sha256_of

    return [(str(p), sha256_of(p)) for p in paths if p is not None]


def _check_outputs(args, *inputs) -> None:
    """Before any work: no output may be an input or another output (checker.paths)."""
    from .paths import check_run_paths, report_sidecar

    if getattr(args, "scheduler", None) and not getattr(args, "cases", None) and (
            args.command == "check"):
        raise InputError("--scheduler", "runs load cases on a cluster but no --cases was "
                         "given", "add --cases standard (or a cases file), or drop --scheduler")
    cases = getattr(args, "cases", None)
    inputs += (getattr(args, "limits", None), cases if cases != "standard" else None)
    sidecar = args.json
    if args.pdf and args.command != "compare":  # a report's JSON sidecar
        sidecar = report_sidecar(args.pdf, args.json)
    check_run_paths(inputs, [("--pdf", args.pdf), ("--json", sidecar)])


def _cmd_check(args: argparse.Namespace) -> int:
    from pathlib import Path

    from .ride import RideOptions, load_inputs, ride_parameters, run_check

    _check_outputs(args, args.track, args.train, args.operation)
    if args.sensitivity and args.cases:
        raise InputError(None, "--sensitivity works about one ride's parameters, not a set of "
                         "load cases", "run it without --cases (or with --case NAME only)")
    limits = _limits(args)
    _check_outputs(args, *(f for f, _ in limits.files))
    line, train, ops = load_inputs(args.track, args.train, ideal=args.ideal,
                                   operation=args.operation, start_speed_m_s=args.start_speed,
                                   units=args.units)
    options = RideOptions(rate_hz=args.rate, smoothing_m=args.smoothing,
                          step_m=args.step)
    extra_inputs: list = []
    case_names: list[str] = []
    if args.cases:
        run, cases_file, case_names = _run_sweep(args, line, train, ops, limits, options)
        extra_inputs = [cases_file]
    else:
        run = run_check(line, train, ops, limits, options, args.case)
    run.inputs = (_inputs(args.track, args.train, args.operation, *extra_inputs)
                  + list(limits.files))
    params = ride_parameters(run.ride) + [("track length unit", args.units),
                                          ("filter", limits.filter.describe())]
    if args.cases:
        params.append(("load cases", f"{args.cases} ({len(case_names)} cases: "
                       + ", ".join(case_names) + ")"))
    sensitivity = None
    if args.sensitivity:
        from .sensitivity import run_sensitivity

        sensitivity = run_sensitivity(line, train, ops, limits, options, workers=args.workers,
                                      scheduler=args.scheduler,
                                      progress=Progress("sensitivity", args.quiet))
    return _finish(args, run, Path(args.track).stem, params, sensitivity)


class Progress:
    """A one-line progress bar on stderr, only on a terminal."""

    def __init__(self, label: str, quiet: bool) -> None:
        self.label = label
        self.active = not quiet and sys.stderr.isatty()

    def __call__(self, done: int, total: int) -> None:
        if not self.active:
            return
        width = 30
        filled = int(width * done / total)
        write_raw(sys.stderr, f"\r{self.label} [{'#' * filled}{'.' * (width - filled)}] "
                  f"{done}/{total}")
        if done == total:
            sys.stderr.write("\n")
        sys.stderr.flush()


def _check_cases_fit(cases, cases_file, train, ops, options) -> None:
    """Fail early, naming the cases file, on a case that does not fit the train."""
    from .loadcases import apply_case

    for i, case in enumerate(cases):
        try:
            apply_case(train, ops, options, case)
        except InputError as exc:
            raise InputError(cases_file, exc.problem, exc.hint,
                             key=f"case[{i + 1}].occupancy") from None


def _run_sweep(args, line, train, ops, limits, options):
    from .loadcases import STANDARD_CASES, load_cases
    from .sweep import run_cases, sweep_check_run

    cases_file = STANDARD_CASES if args.cases == "standard" else args.cases
    cases = load_cases(cases_file)
    _check_cases_fit(cases, cases_file, train, ops, options)
    sweep = run_cases(line, train, ops, limits, options, cases, workers=args.workers,
                      scheduler=args.scheduler, progress=Progress("cases", args.quiet),
                      scheduler_timeout_s=args.scheduler_timeout)
    run = sweep_check_run(sweep, line, train, ops, limits, options, cases)
    run.sweep = sweep
    return run, cases_file, [c.name for c in cases]


def _cmd_check_history(args: argparse.Namespace) -> int:
    from pathlib import Path

    from .history import load_record
    from .instrument import load_instrument
    from .plausibility import history_warnings
    from .ride import CheckRun
    from .rules import evaluate

    _check_outputs(args, args.history)
    limits = _limits(args)
    _check_outputs(args, *(f for f, _ in limits.files))
    instrument = load_instrument(args.instrument) if args.instrument else None
    record = load_record(args.history, args.units, instrument, args.resample)
    signals = record.signals
    evaluation = evaluate(signals, limits, args.case)
    evaluation.warnings[:0] = list(record.notes) + history_warnings(signals)
    run = CheckRun(evaluation, None, {(s.seat, args.case): s for s in signals},
                   _inputs(args.history, args.instrument) + list(limits.files))
    params = [("history units", args.units if instrument is None else "from the instrument"),
              ("filter", limits.filter.describe())]
    if record.method:
        params.append(("record conditioning", record.method))
    return _finish(args, run, Path(args.history).stem, params)


def _cmd_simulate(args: argparse.Namespace) -> int:
    from .outputs import atomic_write_bytes
    from .paths import check_run_paths
    from .ride import RideOptions, histories_csv, load_inputs, run_ride

    check_run_paths([args.track, args.train, args.operation], [("--output", args.output)])
    line, train, ops = load_inputs(args.track, args.train, ideal=args.ideal,
                                   operation=args.operation, start_speed_m_s=args.start_speed,
                                   units=args.units)
    result = run_ride(line, train, ops, RideOptions(rate_hz=args.rate, step_m=args.step,
                                                    smoothing_m=args.smoothing))
    for warning in result.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    atomic_write_bytes(args.output, histories_csv(result.histories))
    rows = sum(len(h.t) for h in result.histories)
    print(f"wrote {args.output}: {len(result.histories)} seats, {rows} rows, "
          f"ride time {result.motion.duration_s:.1f} s, {result.motion.end_reason}")
    if result.geometry.smoothing is not None:
        sm = result.geometry.smoothing
        print(f"smoothing {sm.tolerance_m:g} m: samples moved up to {sm.max_deviation_m:.3f} m; "
              f"curvature removed rms {sm.rms_curvature_removed:.4f} 1/m, max "
              f"{sm.max_curvature_removed:.4f} 1/m at station {sm.station_of_max_removed_m:.1f} m")
    if result.motion.stall is not None:
        print(f"checker: {result.motion.stall}; the history ends there", file=sys.stderr)
        return EXIT_FINDINGS
    return EXIT_OK


def _cmd_advise_bank(args: argparse.Namespace) -> int:
    from pathlib import Path

    from .bank import advise_bank, banked_table
    from .documents import CAUTION, to_json
    from .outputs import commit
    from .paths import check_run_paths
    from .report.aids_figures import bank_figure
    from .ride import RideOptions, load_inputs
    from .track import FOOT_M

    out = Path(args.output)
    plot = out.with_suffix(".svg")
    if out.suffix.lower() == ".svg":
        raise InputError(out, "-o names the track CSV; its plot goes beside it as .svg",
                         "give the output a .csv name")
    check_run_paths([args.track, args.train, args.operation],
                    [("-o", out), ("plot", plot), ("--json", args.json), ("--pdf", args.pdf)])
    line, train, ops = load_inputs(args.track, args.train, ideal=args.ideal,
                                   operation=args.operation, start_speed_m_s=args.start_speed,
                                   units=args.units)
    advice = advise_bank(line, train, ops, RideOptions(rate_hz=args.rate, step_m=args.step,
                                                       smoothing_m=args.smoothing),
                         roll_rate_limit_deg_s=args.roll_rate, tolerance_g=args.tolerance,
                         smoothing_s=args.roll_smoothing, ideal=args.ideal or args.train is None)
    scale = FOOT_M if args.units == "ft" else 1.0
    note = (f"bank advised by checker advise-bank from {Path(args.track).name}: roll rate <= "
            f"{args.roll_rate:g} deg/s, |Gy| tolerance {args.tolerance:g} g, "
            + ("centerline rider" if advice.ideal else "every seat of the train"))
    text = banked_table(line.points / scale, advice.advised_at_samples, note)
    svg = bank_figure(advice.s, advice.given_deg, advice.advised_deg, advice.target_deg,
                      advice.rate_bound, "Bank: given, advised, and the target")
    d = advice.to_dict()
    print(f"advised bank for {Path(args.track).name} ("
          + ("centerline rider" if advice.ideal else f"{len(train.seats) * train.car_count} "
             "seats") + f"), roll rate <= {args.roll_rate:g} deg/s:")
    print(f"  largest change from the given bank {d['max_change_deg']:.1f} deg; fastest roll "
          f"{d['max_roll_rate_deg_s']:.1f} deg/s")
    print(f"  worst |Gy| (unfiltered, any seat): given {d['max_abs_gy_given_g']:.3f} g, "
          f"advised {d['max_abs_gy_advised_g']:.3f} g; where every seat can be met "
          f"{d['max_abs_gy_where_rate_allows_g']:.3f} g")
    print(f"  stations where the bank cannot meet every seat (rate limit or seats needing "
          f"different banks): {d['rate_bound_length_m']:.1f} m")
    files = {out: text.encode(), plot: svg.encode()}
    if args.json:
        files[args.json] = to_json({"advice": d, "track": str(args.track), "output": str(out),
                                    "caution": CAUTION,
                                    "command": _command_line(args)}).encode()
    if args.pdf:
        from .report.aids_figures import bank_pdf

        files[args.pdf] = bank_pdf(advice, svg, {
            "track": str(args.track), "output": str(out),
            "riders": "centerline rider" if advice.ideal else "every seat of the train",
            "inputs": _inputs(args.track, args.train, args.operation),
            "command": _command_line(args), "page_size": args.page_size,
            "roll_rate": args.roll_rate, "tolerance": args.tolerance,
            "smoothing": args.roll_smoothing})
    commit(files)  # the banked track, its plot, JSON and PDF together, or none of them
    print("wrote " + ", ".join(str(f) for f in files))
    print("caution: advice for a designer to review, not a verified design; " + CAUTION)
    return EXIT_OK


def _cmd_compare(args: argparse.Namespace) -> int:
    from pathlib import Path

    from .compare import compare_sweeps
    from .documents import CAUTION, change_text, comparison_document, to_json
    from .loadcases import STANDARD_CASES, LoadCase, apply_case, load_cases
    from .outputs import commit
    from .paths import report_sidecar
    from .ride import RideOptions, load_inputs, run_check
    from .sweep import run_layouts
    from .terminal import shorten

    _check_outputs(args, args.old, args.new, args.train, args.operation, args.old_operation,
                   args.new_operation)
    limits = _limits(args)
    _check_outputs(args, *(f for f, _ in limits.files))
    old_ops_file = args.old_operation or args.operation
    new_ops_file = args.new_operation or args.operation
    old_line, train, old_ops = load_inputs(args.old, args.train, ideal=args.ideal,
                                           operation=old_ops_file,
                                           start_speed_m_s=args.start_speed, units=args.units)
    new_line, _, new_ops = load_inputs(args.new, args.train, ideal=args.ideal,
                                       operation=new_ops_file,
                                       start_speed_m_s=args.start_speed, units=args.units)
    options = RideOptions(rate_hz=args.rate, smoothing_m=args.smoothing,
                          step_m=args.step)
    cases_file = None
    if args.cases:
        cases_file = STANDARD_CASES if args.cases == "standard" else args.cases
        cases = load_cases(cases_file)
    else:
        cases = [LoadCase("nominal")]
    if cases_file is not None:
        _check_cases_fit(cases, cases_file, train, old_ops, options)
    old, new = run_layouts([(old_line, train, old_ops), (new_line, train, new_ops)], limits,
                           options, cases, workers=args.workers, scheduler=args.scheduler,
                           scheduler_timeout_s=args.scheduler_timeout,
                           progress=Progress("layouts x cases", args.quiet))
    comparison = compare_sweeps(old, new, old.outcomes[0].track_length_m,
                                new.outcomes[0].track_length_m)
    old_stalls = {o.case for o in old.outcomes if o.stall}
    new_stalls = [f"new revision, case {o.case}: {o.stall}" for o in new.outcomes
                  if o.stall and o.case not in old_stalls]
    regressed = comparison.regressed or bool(new_stalls)
    old_name, new_name = Path(args.old).stem, Path(args.new).stem
    print(f"old {old_name}: {comparison.old_verdict.upper()} ({len(old.findings)} findings); "
          f"new {new_name}: {comparison.new_verdict.upper()} ({len(new.findings)} findings)")
    print("findings: " + ", ".join(f"{comparison.count(k)} {k}" for k in
                                   ("new", "worse", "gone", "better", "same")))
    for c in comparison.changes:
        if c.status == "same":
            continue
        print("  " + change_text(c))
    print(f"{'seat':<14}" + "".join(f"{a + ' ' + k:>16}" for a in ("gx", "gy", "gz")
                                    for k in ("min", "max")))
    by_seat: dict = {}
    for p in comparison.peaks:
        by_seat.setdefault(p["seat"], []).append(f"{p['old']:6.2f}>{p['new']:6.2f}")
    for seat, cells in by_seat.items():
        print(f"{seat:<14}" + "".join(f"{c:>16}" for c in cells))
    for s in new_stalls:
        print(f"warning: {s}", file=sys.stderr)
    print("regression: " + ("YES (a new or worse finding)" if regressed else "no"))
    print("caution: " + CAUTION)
    inputs = _inputs(args.old, args.new, args.train, old_ops_file,
                     new_ops_file if new_ops_file != old_ops_file else None,
                     cases_file) + list(limits.files)
    command = _command_line(args)
    record: dict = {}  # rendered in memory, then written together (both or neither)
    json_path = report_sidecar(args.pdf, args.json) if args.pdf else args.json
    if json_path:  # --pdf always brings its JSON sidecar
        doc = comparison_document(comparison, limits, args.old, args.new, len(old.findings),
                                  len(new.findings), regressed, new_stalls,
                                  [c.name for c in cases], inputs, command)
        record[json_path] = to_json(doc).encode("utf-8")
    if args.pdf:
        from .report.comparison import comparison_pdf

        governing = (new.governing() or old.governing())
        focus_case = governing[0].case if governing else cases[0].name
        focus_seat = governing[0].seat if governing else None
        by_name = {c.name: c for c in cases}
        focus = {"case": focus_case}
        for label, line, ops in (("old", old_line, old_ops), ("new", new_line, new_ops)):
            tr, op, opt = apply_case(train, ops, options, by_name[focus_case])
            run = run_check(line, tr, op, limits, opt, focus_case)
            seat = focus_seat or run.evaluation.seats[0].seat
            result = next(s for s in run.evaluation.seats if s.seat == seat)
            focus[label] = (result, run.signals[(seat, focus_case)], run.ride)
            focus["seat"] = seat
        pdf = comparison_pdf(comparison, focus, {
            "project": shorten(args.project, 200), "old_name": old_name, "new_name": new_name,
            "limits": limits, "cases": ", ".join(c.name for c in cases), "inputs": inputs,
            "command": shorten(command, 4000), "page_size": args.page_size,
            "stalls": new_stalls})
        record[args.pdf] = pdf
    if record:
        print("wrote " + " and ".join(str(p) for p in commit(record)))
    return EXIT_FINDINGS if regressed else EXIT_OK


def _cmd_demo(args: argparse.Namespace) -> int:
    import shlex
    import time
    from pathlib import Path

    from .documents import BUNDLED_LIMITS
    from .limits import load_limits
    from .report import ReportMeta, write_report
    from .resources import demo_folder
    from .ride import RideOptions, load_inputs, ride_parameters, run_check

    started = time.perf_counter()
    here = demo_folder()
    out = Path(args.out)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(out, f"cannot create the output folder ({exc.strerror})",
                         "choose another --out folder") from None
    limits = load_limits(BUNDLED_LIMITS)
    train_file = here / "thistle_comet_train.toml"
    print("demo: Marrowvale Pleasure Gardens (a fictional park), 'Thistle Comet' (a fictional "
          "layout), against the bundled ILLUSTRATIVE limits")
    for rev, what in (("A", "circular loop"), ("B", "teardrop loop")):
        track = here / f"thistle_comet_rev{rev}.csv"
        ops_file = here / f"thistle_comet_rev{rev}.operation.toml"
        line, train, ops = load_inputs(track, train_file, operation=ops_file)
        run = run_check(line, train, ops, limits, RideOptions())
        run.inputs = _inputs(track, train_file, ops_file) + list(limits.files)
        project = "Marrowvale Pleasure Gardens (fictional demo park)"
        layout = "Thistle Comet (fictional demo layout)"
        pdf_path = out / f"thistle_comet_rev{rev}.pdf"
        command = shlex.join(["checker", "check", str(track), "--train", str(train_file),
                              "--operation", str(ops_file), "--project", project,
                              "--layout-name", layout, "--revision", f"{rev} ({what})",
                              "--pdf", str(pdf_path)])
        meta = ReportMeta(project=project, layout=layout, revision=f"{rev} ({what})",
                          page_size=args.page_size, command=command, inputs=run.inputs,
                          stall=run.stall, seat_pages=args.seat_pages,
                          parameters=ride_parameters(run.ride) + [
                              ("track length unit", "m"),
                              ("filter", limits.filter.describe())])
        pdf, sidecar = write_report(run, pdf_path, meta, None, {"stall": run.stall})
        ev = run.evaluation
        print(f"  revision {rev} ({what}): {ev.verdict.upper()} with {len(ev.findings)} "
              f"findings -> {pdf}, {sidecar}")
    print(f"done in {time.perf_counter() - started:.1f} s. The failing revision A is expected: "
          "its circular loop exceeds the illustrative +Gz and onset limits at the bottom.")
    print("caution: a self-check, not a certification; the limits are illustrative.")
    return EXIT_OK


def _cmd_correlate(args: argparse.Namespace) -> int:
    from pathlib import Path

    from .correlate import correlate_record
    from .documents import CAUTION, to_json
    from .history import load_record
    from .instrument import load_instrument
    from .outputs import atomic_write_bytes, atomic_write_text
    from .paths import check_run_paths
    from .ride import RideOptions, load_inputs, run_ride

    check_run_paths([args.record, args.track, args.train, args.operation, args.limits,
                     args.instrument], [("--pdf", args.pdf), ("--json", args.json)])
    limits = _limits(args)
    instrument = load_instrument(args.instrument) if args.instrument else None
    record = load_record(args.record, args.record_units, instrument, args.resample)
    line, train, ops = load_inputs(args.track, args.train, ideal=args.ideal,
                                   operation=args.operation, start_speed_m_s=args.start_speed,
                                   units=args.units)
    result = run_ride(line, train, ops, RideOptions(rate_hz=args.rate, step_m=args.step,
                                                    smoothing_m=args.smoothing))
    notes = list(record.notes) + list(result.warnings)
    for note in notes:
        print(f"warning: {note}", file=sys.stderr)
    try:
        found = correlate_record(record.signals, result.histories, limits.filter, args.seat)
    except KeyError as exc:
        names = ", ".join(h.seat for h in result.histories[:8])
        raise InputError(args.record, f"no simulated seat named {exc.args[0]!r}",
                         f"give --seat NAME (simulated seats: {names}, ...)") from None
    except ValueError as exc:
        raise InputError(args.record, str(exc), "check that the record is of this layout "
                         "and operation") from None
    print(f"{'recorded seat':<20}{'aligned by':<34}{'offset [s]':>11}"
          + "".join(f"{a + ' rms':>10}{a + ' max':>10}" for a in ("gx", "gy", "gz")))
    for c in found:
        print(f"{c.recorded_seat:<20}{c.method:<34}{c.offset_s:>11.3f}"
              + "".join(f"{a.rms_g:>10.3f}{a.peak_g:>10.3f}" for a in c.axes))
    print("differences are recorded minus simulated, both filtered: "
          + limits.filter.describe())
    print("caution: " + CAUTION)
    inputs = _inputs(args.record, args.instrument, args.track, args.train, args.operation) \
        + list(limits.files)
    command = _command_line()
    if args.json:
        doc = {"kind": "correlation", "caution": CAUTION, "command": command,
               "filter": limits.filter.describe(), "record_conditioning": record.method,
               "inputs": [{"file": f, "sha256": h} for f, h in inputs],
               "review_items": notes, "correlations": [c.to_dict() for c in found]}
        atomic_write_text(args.json, to_json(doc))
        print(f"wrote {args.json}")
    if args.pdf:
        from .report.correlation import correlation_pdf

        pdf = correlation_pdf(found, {
            "project": args.project, "record_name": Path(args.record).name,
            "track_name": Path(args.track).name, "filter": limits.filter.describe(),
            "record_method": record.method, "notes": notes, "inputs": inputs,
            "command": command, "page_size": args.page_size})
        atomic_write_bytes(args.pdf, pdf)
        print(f"wrote {args.pdf}")
    return EXIT_OK


COMMANDS = {"simulate": _cmd_simulate, "check": _cmd_check, "correlate": _cmd_correlate,
            "check-history": _cmd_check_history, "demo": _cmd_demo,
            "compare": _cmd_compare, "advise-bank": _cmd_advise_bank}


def _interrupted_message() -> str:
    """What an interruption left behind, said truthfully."""
    from .outputs import written

    if not written:
        return "checker: interrupted; no output was written or changed"
    return ("checker: interrupted after writing " + ", ".join(str(p) for p in written)
            + " (each whole); nothing else was written or changed")


def main(argv: Sequence[str] | None = None) -> int:
    from .outputs import interrupt_handling, was_interrupted
    from .terminal import terminal_streams

    parser = build_parser()
    args = parser.parse_args(argv)
    args.argv = list(sys.argv[1:] if argv is None else argv)
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT
    # SIGINT and SIGTERM unwind (no partial output); user text is cleaned on the terminal
    # and a closed reader does not change the exit code
    with interrupt_handling(), terminal_streams():
        try:
            code = COMMANDS[args.command](args)
            if was_interrupted():  # a library swallowed the KeyboardInterrupt
                raise KeyboardInterrupt
            return code
        except InputError as exc:
            print(f"checker: error: {exc.message()}", file=sys.stderr)
            return EXIT_INPUT
        except TrainStalled as exc:
            print(f"checker: {exc}", file=sys.stderr)
            return EXIT_FINDINGS
        except KeyboardInterrupt:
            print(_interrupted_message(), file=sys.stderr)
            return EXIT_INTERRUPTED
        except BrokenProcessPool:  # a worker was stopped (e.g. Ctrl-C reached the whole group)
            if was_interrupted():
                print(_interrupted_message(), file=sys.stderr)
                return EXIT_INTERRUPTED
            print("checker: error: a worker process died (out of memory, or killed?) -- "
                  "run again with fewer --workers", file=sys.stderr)
            return EXIT_INPUT
        except MemoryError:
            print("checker: error: out of memory -- lower --rate, the number of seats or "
                  "of --workers", file=sys.stderr)
            return EXIT_INPUT
        except Exception as exc:  # a bug: one line, the traceback only when asked
            if args.debug:
                import traceback

                traceback.print_exc()
            text = " ".join(str(exc).split())[:300]
            print(f"checker: internal error: {type(exc).__name__}: {text} -- this is a bug in "
                  "checker; please report it with the command line"
                  + ("" if args.debug else " (add --debug for the traceback)"),
                  file=sys.stderr)
            return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())

"""Command line: parse -> call the application layer -> print -> exit code. No numerics here.

Each command is one function ``_cmd_<name>(args, app, call)`` that calls one operation of
:mod:`checker.application` and prints its result; options shared by several commands are
added by one ``_add_*`` function each. The numerical rooms (numpy, pandas, scipy, matplotlib,
weasyprint) load in one place, :func:`main`, after the arguments parse, so ``--help`` and
usage errors answer at once.

Exit codes: 0 every rule holds (or the command ran), 1 at least one finding (or a stall, or a
regression for ``compare``), 2 bad input or usage (or an output that cannot be written),
3 internal error (a bug: one line, the traceback with ``--debug``), 130 interrupted.
"""

from __future__ import annotations

import argparse
import shlex
import sys
from collections.abc import Sequence
from concurrent.futures import BrokenExecutor
from pathlib import Path

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
from .caution import CAUTION
from .errors import InputError
from .outputs import interrupt_handling, was_interrupted, written
from .paths import check_run_paths, report_sidecar
from .terminal import clean, terminal_streams, write_raw

EXIT_OK, EXIT_FINDINGS, EXIT_INPUT, EXIT_INTERNAL, EXIT_INTERRUPTED = 0, 1, 2, 3, 130


# ---------------------------------------------------------------------------------------------
# Parsing


def _add_ride_settings(p: argparse.ArgumentParser) -> None:
    """Train and numerical options of every command that simulates."""
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


def _add_ride_options(p: argparse.ArgumentParser) -> None:
    """The track, its operation and the ride settings, for a command that simulates one
    layout."""
    p.add_argument("track", help="centerline CSV (x, y, z [m]; optional roll_deg or up_*)")
    p.add_argument("--operation", help="operation TOML (start speed, lift, launch, brakes)")
    _add_ride_settings(p)


def _add_record_options(p: argparse.ArgumentParser) -> None:
    """How a recorded history is read: a logger layout and re-sampling."""
    p.add_argument("--instrument", metavar="INSTRUMENT.toml",
                   help="logger layout: time and acceleration columns, units, mounting, seats")
    p.add_argument("--resample", type=number_option(*RATE_HZ, " Hz"), default=None,
                   metavar="HZ", help="re-sample irregular time stamps onto a uniform grid "
                   "at HZ (default: refuse them, naming the rows)")


def _add_limits(p: argparse.ArgumentParser) -> None:
    p.add_argument("--limits", help="limits TOML (default: the bundled ILLUSTRATIVE set)")


def _add_documents(p: argparse.ArgumentParser, json_name: str, pdf_name: str) -> None:
    """--json, --pdf, --page-size and --project."""
    p.add_argument("--json", metavar=json_name, help="write the JSON record")
    p.add_argument("--pdf", metavar=pdf_name,
                   help="write the PDF (and a JSON sidecar beside it, unless --json names one)")
    p.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                   help="paper size of the PDF (default a4)")
    p.add_argument("--project", default="(not given)", help="project name for the documents")


def _add_seat_pages(p: argparse.ArgumentParser) -> None:
    p.add_argument("--seat-pages", choices=("all", "governing", "none"), default="governing",
                   help="seat pages of figures in the PDF: the governing seat of each event "
                   "and seats whose findings differ (default), every seat with a finding, "
                   "or none")


def _add_labels(p: argparse.ArgumentParser) -> None:
    """Layout labels and the single load case's name, for a check."""
    p.add_argument("--layout-name", default=None, help="layout name (default: file name)")
    p.add_argument("--revision", default="(not given)", help="layout revision for the report")
    p.add_argument("--case", default="nominal", type=name_option(),
                   help="name of the load case (default nominal)")
    _add_seat_pages(p)


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


class _OneLineErrors(argparse.ArgumentParser):
    """An argument parser whose usage errors are one line (what was wrong and where to look),
    exit code 2, like every other bad input; the full usage stays in ``--help``."""

    def error(self, message: str):  # noqa: D102 - argparse's hook
        self.exit(2, f"{self.prog}: error: {clean(message)} -- see '{self.prog} --help'\n")


def build_parser() -> argparse.ArgumentParser:
    """The argument parser of every command.

    Adding a command: one ``add_parser`` block here, one ``_cmd_`` function and one entry in
    :data:`COMMANDS`.

    Returns
    -------
    argparse.ArgumentParser
        The ``checker`` parser with its sub-commands (``simulate``, ``check``,
        ``check-history``, ``compare``, ``demo``, ``advise-bank``, ``correlate``); numeric
        options are range-checked by :func:`checker.bounds.number_option`.
    """
    parser = _OneLineErrors(
        prog="checker",
        description=f"Acceleration-envelope self-check for roller coaster layouts. {CAUTION}")
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
    _add_limits(chk)
    _add_documents(chk, "FINDINGS.json", "REPORT.pdf")
    _add_labels(chk)
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
    bank.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                      help="paper size of the PDF (default a4)")

    hist = sub.add_parser("check-history",
                          help="check a recorded or exported history against a limit set")
    hist.add_argument("history", help="CSV with t, gx, gy, gz (optional seat)")
    hist.add_argument("--units", choices=("g", "m/s2"), default="g",
                      help="unit of gx, gy, gz in the file (default g)")
    _add_record_options(hist)
    _add_limits(hist)
    _add_documents(hist, "FINDINGS.json", "REPORT.pdf")
    _add_labels(hist)

    cmp_ = sub.add_parser("compare", help="compare two revisions of a layout: what got "
                          "better and what got worse")
    cmp_.add_argument("old", help="the old revision's centerline CSV")
    cmp_.add_argument("new", help="the new revision's centerline CSV")
    _add_ride_settings(cmp_)
    cmp_.add_argument("--operation", help="operation TOML for both layouts")
    cmp_.add_argument("--old-operation", help="operation TOML for the old layout only")
    cmp_.add_argument("--new-operation", help="operation TOML for the new layout only")
    _add_limits(cmp_)
    _add_documents(cmp_, "CHANGES.json", "COMPARISON.pdf")
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
    cor.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                     help="paper size of the PDF (default a4)")
    cor.add_argument("--project", type=name_option(), default="(not given)",
                     help="project name for the documents")

    demo = sub.add_parser("demo", help="check both revisions of the bundled demo layout and "
                          "write their PDF and JSON reports")
    demo.add_argument("--out", default="demo-output", metavar="FOLDER",
                      help="folder for the reports (default ./demo-output)")
    demo.add_argument("--page-size", choices=("a4", "letter"), default="a4",
                      help="paper size of the PDFs (default a4)")
    _add_seat_pages(demo)
    for command in sub.choices.values():  # --debug after the command too
        command.add_argument("--debug", action="store_true", default=argparse.SUPPRESS,
                             help="show the traceback of an internal error")
    return parser


# ---------------------------------------------------------------------------------------------
# Printing helpers


class Progress:
    """A one-line progress bar on stderr, only on a terminal.

    Called as ``progress(done, total)`` (the ``progress`` callback of
    :func:`checker.sweep.run_cases`); it redraws the bar with a carriage return and ends the
    line when ``done == total``.

    Parameters
    ----------
    label : str
        Text before the bar.
    quiet : bool
        ``--quiet``: draw nothing.

    Attributes
    ----------
    label : str
        As given.
    active : bool
        Whether the bar is drawn (not quiet and stderr is a terminal).
    """

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


def _note_limits(args: argparse.Namespace, app) -> None:
    if args.limits is None:
        print(f"limits: none given, using the bundled ILLUSTRATIVE set "
              f"{app.BUNDLED_LIMITS.name} (invented example values, not from any standard)")


def _outputs(args: argparse.Namespace) -> list[tuple[str, str | Path | None]]:
    """(option, path) of every output of a check or comparison; --pdf brings its sidecar."""
    return [("--pdf", args.pdf), _json_output(args)]


def _json_output(args: argparse.Namespace) -> tuple[str, str | Path | None]:
    """(how an error names it, path) of the JSON a command writes: ``--json``, or the
    sidecar that ``--pdf`` brings."""
    if args.pdf is None:
        return "--json", args.json
    label = "--json" if args.json else "the --pdf report's JSON sidecar"
    return label, report_sidecar(args.pdf, args.json)


def _check_outputs(args: argparse.Namespace, *inputs: str | Path | None) -> None:
    """Before any work: no output may be an input or another output (checker.paths)."""
    if getattr(args, "scheduler", None) and not getattr(args, "cases", None) and (
            args.command == "check"):
        raise InputError("--scheduler", "runs load cases on a cluster but no --cases was "
                         "given", "add --cases standard (or a cases file), or drop --scheduler")
    cases = getattr(args, "cases", None)
    inputs += (getattr(args, "limits", None), cases if cases != "standard" else None)
    check_run_paths(inputs, _outputs(args))


def _write_documents(args: argparse.Namespace, result) -> None:
    """--pdf writes the PDF with its JSON sidecar (at --json when given); --json alone the
    JSON. Every input the run read (the limits' tables too) is checked against the outputs
    first."""
    check_run_paths([f.path for f in result.provenance.inputs], _outputs(args))
    if args.pdf:
        pdf, sidecar = result.write_pdf(args.pdf, args.json)
        print(f"wrote {pdf} and {sidecar}")
    elif args.json:
        print(f"wrote {result.write_json(args.json)}")


def _print_check(args: argparse.Namespace, result) -> int:
    for warning in result.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    print(result.summary())
    _write_documents(args, result)
    return EXIT_FINDINGS if result.verdict == "fail" else EXIT_OK


# ---------------------------------------------------------------------------------------------
# Commands: each parse -> call -> print -> exit code


def _cmd_simulate(args: argparse.Namespace, app, call: str) -> int:
    check_run_paths([args.track, args.train, args.operation], [("--output", args.output)])
    result = app.simulate_ride(args.track, train=args.train, ideal=args.ideal,
                               operation=args.operation, start_speed_m_s=args.start_speed,
                               rate_hz=args.rate, units=args.units,
                               smoothing_m=args.smoothing, step_m=args.step, call=call)
    for warning in result.ride.warnings:
        print(f"warning: {warning}", file=sys.stderr)
    result.write_csv(args.output)
    print(result.summary(args.output))
    if result.stall is not None:
        print(f"checker: {result.stall}; the history ends there", file=sys.stderr)
        return EXIT_FINDINGS
    return EXIT_OK


def _cmd_check(args: argparse.Namespace, app, call: str) -> int:
    _check_outputs(args, args.track, args.train, args.operation)
    _note_limits(args, app)
    result = app.check_layout(
        args.track, train=args.train, ideal=args.ideal, operation=args.operation,
        start_speed_m_s=args.start_speed, limits=args.limits, cases=args.cases,
        case=args.case, rate_hz=args.rate, units=args.units, smoothing_m=args.smoothing,
        step_m=args.step, sensitivity=args.sensitivity, project=args.project,
        layout=args.layout_name, revision=args.revision,
        page_size=args.page_size, seat_pages=args.seat_pages, workers=args.workers,
        scheduler=args.scheduler, scheduler_timeout_s=args.scheduler_timeout,
        progress=Progress("sensitivity" if args.sensitivity else "cases", args.quiet),
        call=call)
    if result.stall:
        print(f"checker: {result.stall}", file=sys.stderr)
    return _print_check(args, result)


def _cmd_check_history(args: argparse.Namespace, app, call: str) -> int:
    _check_outputs(args, args.history, args.instrument)
    _note_limits(args, app)
    result = app.check_history(args.history, units=args.units, limits=args.limits,
                               case=args.case, instrument=args.instrument,
                               resample_hz=args.resample, project=args.project,
                               layout=args.layout_name, revision=args.revision,
                               page_size=args.page_size, seat_pages=args.seat_pages,
                               call=call)
    return _print_check(args, result)


def _cmd_compare(args: argparse.Namespace, app, call: str) -> int:
    _check_outputs(args, args.old, args.new, args.train, args.operation, args.old_operation,
                   args.new_operation)
    _note_limits(args, app)
    result = app.compare_layouts(
        args.old, args.new, train=args.train, ideal=args.ideal, operation=args.operation,
        old_operation=args.old_operation, new_operation=args.new_operation,
        start_speed_m_s=args.start_speed, limits=args.limits, cases=args.cases,
        rate_hz=args.rate, units=args.units, smoothing_m=args.smoothing, step_m=args.step,
        project=args.project, page_size=args.page_size, workers=args.workers,
        scheduler=args.scheduler, scheduler_timeout_s=args.scheduler_timeout,
        progress=Progress("layouts x cases", args.quiet),
        plot_signals=bool(args.pdf), call=call)
    for stall in result.new_stalls:
        print(f"warning: {stall}", file=sys.stderr)
    old_stalls = {o.case for o in result.old.outcomes if o.stall}
    for outcome in result.new.outcomes:  # a stall both revisions share fails the new one too
        if outcome.stall and outcome.case in old_stalls:
            print(f"warning: new revision, case {outcome.case}, stalls as the old one did: "
                  f"{outcome.stall}", file=sys.stderr)
    print(result.summary())
    _write_documents(args, result)
    return EXIT_FINDINGS if result.regressed else EXIT_OK


def _cmd_demo(args: argparse.Namespace, app, call: str) -> int:
    import time

    started = time.perf_counter()
    print("demo: Marrowvale Pleasure Gardens (a fictional park), 'Thistle Comet' (a fictional "
          "layout), against the bundled ILLUSTRATIVE limits")
    for rev, what, verdict, count, pdf, sidecar in app.write_demo(
            args.out, page_size=args.page_size, seat_pages=args.seat_pages):
        print(f"  revision {rev} ({what}): {verdict.upper()} with {count} findings -> "
              f"{pdf}, {sidecar}")
    print(f"done in {time.perf_counter() - started:.1f} s. The failing revision A is expected: "
          "its circular loop exceeds the illustrative +Gz and onset limits at the bottom.")
    print("caution: " + CAUTION + " The demo's limits are illustrative.")
    return EXIT_OK


def _cmd_advise_bank(args: argparse.Namespace, app, call: str) -> int:
    out = Path(args.output)
    plot = out.with_suffix(".svg")
    if out.suffix.lower() == ".svg":
        raise InputError(out, "-o names the track CSV; its plot goes beside it as .svg",
                         "give the output a .csv name")
    json_label, sidecar = _json_output(args)
    check_run_paths([args.track, args.train, args.operation],
                    [("-o", out), ("plot", plot), (json_label, sidecar), ("--pdf", args.pdf)])
    advice = app.advise_bank_angle(
        args.track, train=args.train, ideal=args.ideal, operation=args.operation,
        start_speed_m_s=args.start_speed, rate_hz=args.rate, units=args.units,
        smoothing_m=args.smoothing, step_m=args.step, roll_rate_deg_s=args.roll_rate,
        tolerance_g=args.tolerance, roll_smoothing_s=args.roll_smoothing,
        page_size=args.page_size, call=call)
    print(advice.summary())
    files = advice.write(out, plot, sidecar, args.pdf)
    print("wrote " + ", ".join(str(f) for f in files))
    print("caution: advice for a designer to review, not a verified design; " + CAUTION)
    return EXIT_OK


def _cmd_correlate(args: argparse.Namespace, app, call: str) -> int:
    json_label, sidecar = _json_output(args)
    check_run_paths([args.record, args.track, args.train, args.operation, args.limits,
                     args.instrument], [("--pdf", args.pdf), (json_label, sidecar)])
    _note_limits(args, app)
    result = app.correlate_ride(
        args.record, args.track, record_units=args.record_units, instrument=args.instrument,
        resample_hz=args.resample, train=args.train, ideal=args.ideal,
        operation=args.operation, start_speed_m_s=args.start_speed, rate_hz=args.rate,
        units=args.units, smoothing_m=args.smoothing, step_m=args.step, seat=args.seat,
        limits=args.limits, project=args.project, page_size=args.page_size, call=call)
    for note in result.notes:
        print(f"warning: {note}", file=sys.stderr)
    print(result.summary())
    if args.pdf:
        pdf, sidecar = result.write_pdf(args.pdf, args.json)
        print(f"wrote {pdf} and {sidecar}")
    elif args.json:
        print(f"wrote {result.write_json(args.json)}")
    return EXIT_OK


COMMANDS = {"simulate": _cmd_simulate, "check": _cmd_check, "correlate": _cmd_correlate,
            "check-history": _cmd_check_history, "compare": _cmd_compare,
            "advise-bank": _cmd_advise_bank, "demo": _cmd_demo}


def _interrupted_message() -> str:
    """What an interruption left behind, said truthfully."""
    if not written:
        return "checker: interrupted; no output was written or changed"
    return ("checker: interrupted after writing " + ", ".join(str(p) for p in written)
            + " (each whole); nothing else was written or changed")


def main(argv: Sequence[str] | None = None) -> int:
    """Run one command; returns its exit code.

    The numerical libraries load only after the arguments parse. Errors are printed as one
    line on stderr: bad input, an output that cannot be written, a dead worker or running out
    of memory exit 2; an interruption (SIGINT/SIGTERM) exits 130 naming what was written; any
    other exception is an internal error, exit 3 (the traceback with ``--debug``).

    Parameters
    ----------
    argv : sequence of str or None, optional
        The arguments after the program name; None reads ``sys.argv[1:]``.

    Returns
    -------
    int
        0 every rule holds (or the command ran), 1 at least one finding, stall or (for
        ``compare``) regression, 2 bad input or usage (also without a command, after printing
        the help), 3 internal error, 130 interrupted.

    Raises
    ------
    SystemExit
        From argparse: code 2 for a usage error, 0 for ``--help`` and ``--version``.

    Examples
    --------
    >>> from checker.cli import main
    >>> main(["--version"])
    Traceback (most recent call last):
        ...
    SystemExit: 0
    """
    argv = list(sys.argv[1:] if argv is None else argv)
    parser = build_parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return EXIT_INPUT
    # SIGINT and SIGTERM unwind (no partial output); user text is cleaned on the terminal
    # and a closed reader does not change the exit code
    with interrupt_handling(), terminal_streams():
        try:
            from . import application  # the one place the numerical rooms load

            code = COMMANDS[args.command](args, application, shlex.join(["checker", *argv]))
            if was_interrupted():  # a library swallowed the KeyboardInterrupt
                raise KeyboardInterrupt
            return code
        except InputError as exc:
            print(f"checker: error: {exc.message()}", file=sys.stderr)
            return EXIT_INPUT
        except KeyboardInterrupt:
            print(_interrupted_message(), file=sys.stderr)
            return EXIT_INTERRUPTED
        except BrokenExecutor:  # a worker was stopped (e.g. Ctrl-C reached the whole group)
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

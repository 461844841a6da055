"""The operations a user runs, one function each, for the command line and for Python.

:func:`check_layout`, :func:`check_history`, :func:`compare_layouts`, :func:`run_demo` (and
:func:`simulate_ride`) load and validate their files, run the physics and the rules once, and
return one frozen result carrying everything the documents need: the verdict, the findings
(and the events grouped from them), the signals to plot, the input files with their SHA-256,
every parameter, the tool version and the call that reproduces the result. A result writes
its own JSON and PDF (:meth:`LayoutCheck.write_json`, :meth:`LayoutCheck.write_pdf`); the PDF
always comes with its JSON sidecar. Nothing changes a result after it is made, and the
document stage never runs physics again.

The PDF room (matplotlib, weasyprint) loads on the first PDF written; see :func:`_report`.
"""

from __future__ import annotations

import inspect
import os
import shlex
from collections.abc import Callable, Mapping
from dataclasses import dataclass, replace
from pathlib import Path
from types import MappingProxyType

from . import __version__
from .aids import aids_summary
from .caution import CAUTION
from .compare import ChangeState, Comparison, compare_sweeps
from .documents import (
    BUNDLED_LIMITS,
    comparison_document,
    evaluation_document,
    event_change_text,
    summary_table,
    sweep_document,
    sweep_tables,
    to_json,
)
from .errors import InputError
from .events import events_of_run
from .geometry import STATION_STEP_M, TrackGeometry
from .history import file_notes, load_record
from .instrument import load_instrument
from .limits import LimitSet, load_limits, sha256_of
from .loadcases import STANDARD_CASES, LoadCase, apply_case, load_cases
from .outputs import commit
from .paths import check_distinct, check_output, report_sidecar
from .plausibility import filter_warnings, history_warnings
from .resources import demo_folder
from .ride import (
    CheckRun,
    RideOptions,
    RideResult,
    fit_dependence,
    histories_csv,
    load_inputs,
    ride_parameters,
    run_check,
    run_ride,
)
from .rules import Evaluation, Finding, SeatResult, Verdict, evaluate
from .sweep import Sweep, run_cases, run_layouts, sweep_check_run

Progress = Callable[[int, int], None]

DEMO_PROJECT = "Marrowvale Pleasure Gardens (fictional demo park)"
DEMO_LAYOUT = "Thistle Comet (fictional demo layout)"
DEMO_REVISIONS = (("A", "circular loop"), ("B", "teardrop loop"))


# ---------------------------------------------------------------------------------------------
# What every result carries


@dataclass(frozen=True)
class InputFile:
    """One input file as recorded: its path as given and the SHA-256 of its bytes.

    Attributes
    ----------
    path : str
        The path as given (not resolved).
    sha256 : str
        Hex digest of the file's bytes.
    """

    path: str
    sha256: str


@dataclass(frozen=True)
class Provenance:
    """What made a result, for the record.

    Attributes
    ----------
    inputs : tuple of InputFile
        Every input file with its SHA-256 (track, train, operation, cases, limits and the
        tables the limits name).
    parameters : tuple of (str, str)
        (name, value with unit) of every parameter of the run.
    call : str
        The call that reproduces the result: a shell-quoted command line when made by the
        command line, a Python call (``checker.NAME(...)`` with the arguments that differ
        from their defaults) when made from Python.
    version : str
        The tool's version.
    """

    inputs: tuple[InputFile, ...]
    parameters: tuple[tuple[str, str], ...]
    call: str
    version: str = __version__


@dataclass(frozen=True)
class Labels:
    """Names printed on the documents (they change no number).

    Attributes
    ----------
    project : str
        Project name.
    layout : str
        Layout name.
    revision : str
        Revision label.
    page_size : str
        ``"a4"`` or ``"letter"``.
    seat_pages : str
        Seat pages of figures in a check's PDF: ``"all"``, ``"governing"`` or ``"none"``.
    """

    project: str = "(not given)"
    layout: str = "(not given)"
    revision: str = "(not given)"
    page_size: str = "a4"
    seat_pages: str = "governing"  # seat pages of figures: "all", "governing" or "none"


def _record(*paths: str | Path | None) -> tuple[InputFile, ...]:
    return tuple(InputFile(str(p), sha256_of(p)) for p in paths if p is not None)


def _limit_files(limits: LimitSet) -> tuple[InputFile, ...]:
    return tuple(InputFile(f, h) for f, h in limits.files)


def _python_call(function: Callable, arguments: Mapping) -> str:
    """``checker.NAME(...)`` with the arguments that differ from their defaults."""
    parts = []
    for name, param in inspect.signature(function).parameters.items():
        if name in ("call", "progress") or name not in arguments:
            continue
        value = arguments[name]
        value = str(value) if isinstance(value, Path) else value
        if param.kind is param.POSITIONAL_OR_KEYWORD and param.default is param.empty:
            parts.append(repr(value))
        elif value != param.default:
            parts.append(f"{name}={value!r}")
    return f"checker.{function.__name__}({', '.join(parts)})"


def _write_json(path: str | Path, document: dict, provenance: Provenance) -> Path:
    """Write a result's JSON record atomically (never over one of its inputs); returns the
    path written."""
    (path,) = commit({path: to_json(document).encode("utf-8")}, _input_paths(provenance))
    return path


def _input_paths(provenance: Provenance) -> list[str]:
    return [f.path for f in provenance.inputs]


def _write_pair(pdf_path: str | Path, pdf: Callable[[], bytes], json_path: str | Path | None,
                json_text: str, provenance: Provenance | None) -> tuple[Path, Path]:
    """Render in memory first, then write the PDF and its JSON sidecar together (both or
    neither, :func:`checker.outputs.commit`; never over one of the result's inputs)."""
    pdf_path = check_output(pdf_path)
    json_path = check_output(report_sidecar(pdf_path, json_path))
    inputs = _input_paths(provenance) if provenance is not None else []
    check_distinct([json_path, pdf_path], inputs)  # before rendering
    pdf_bytes = pdf()
    commit({json_path: json_text.encode("utf-8"), pdf_path: pdf_bytes}, inputs)
    return pdf_path, json_path


def _report():
    """The PDF room (matplotlib, jinja2, weasyprint), loaded on the first PDF written."""
    from . import report

    return report


def _limits(limits: str | Path | None) -> LimitSet:
    return load_limits(BUNDLED_LIMITS if limits is None else limits)


def _cases(cases: str | Path | None) -> tuple[Path | None, list[LoadCase]]:
    """The cases file (``"standard"`` names the shipped set) and its cases."""
    if cases is None:
        return None, [LoadCase("nominal")]
    path = STANDARD_CASES if str(cases) == "standard" else Path(cases)
    return path, load_cases(path)


def _check_cases_fit(cases: list[LoadCase], cases_file: Path, train, operation,
                     options: RideOptions) -> None:
    """Fail early, naming the cases file, on a case that does not fit the train."""
    for i, case in enumerate(cases):
        try:
            apply_case(train, operation, options, case)
        except InputError as exc:
            raise InputError(cases_file, exc.problem, exc.hint,
                             key=f"case[{i + 1}].occupancy") from None


def group_events(evaluation: Evaluation, ride: RideResult | None) -> tuple:
    """The events of a check: findings grouped by place and time, explained
    (:func:`checker.events.events_of_run`).

    Parameters
    ----------
    evaluation : Evaluation
        The rules' outcome.
    ride : RideResult or None
        The simulated ride (places and sections), or None for a recorded history.

    Returns
    -------
    tuple of checker.events.Event
        The events, most severe first.
    """
    return tuple(events_of_run(evaluation, ride))


# ---------------------------------------------------------------------------------------------
# check and check-history


@dataclass(frozen=True, eq=False)
class LayoutCheck:
    """A layout (or a recorded history) checked against a limit set: everything the documents
    need, made once.

    Attributes
    ----------
    evaluation : Evaluation
        Every seat (and load case) against every rule, with warnings and stalls.
    events : tuple of checker.events.Event
        Findings grouped into events, most severe first (see :func:`group_events`).
    signals : Mapping
        Read-only ``{(seat, case): raw signal}`` for the figures [g0]: a
        :class:`checker.kinematics.SeatHistory` for a simulated seat, a
        :class:`checker.history.RecordedSignal` for a recorded one.
    ride : RideResult or None
        The simulated ride (geometry, motion) for the layout views, or None for a history.
    sweep : Sweep or None
        Every load case's outcome when load cases were run, else None.
    labels : Labels
        Project, layout, revision, page size and seat pages for the documents.
    provenance : Provenance
        Input files with SHA-256, parameters, tool version, reproducing call.
    sensitivity : checker.sensitivity.Sensitivity or None
        The parameter sensitivity of each rule's margin when asked for, else None.
    """

    evaluation: Evaluation
    events: tuple
    signals: Mapping
    ride: RideResult | None
    sweep: Sweep | None
    labels: Labels
    provenance: Provenance
    sensitivity: object | None = None  # checker.sensitivity.Sensitivity when asked for

    @property
    def verdict(self) -> Verdict:
        """FAIL when any rule is exceeded at any seat in any case, or the train stalls; else
        PASS."""
        return self.evaluation.verdict

    @property
    def findings(self) -> list[Finding]:
        """Every finding, the most severe first."""
        return self.evaluation.findings

    @property
    def warnings(self) -> tuple[str, ...]:
        """Plausibility and sampling warnings (the run went on)."""
        return self.evaluation.warnings

    @property
    def stall(self) -> str | None:
        """Where the train stopped short of the end (every case that stalled), or None."""
        return "; ".join(self.evaluation.stalls) or None

    @property
    def limits(self) -> LimitSet:
        """The limit set checked against."""
        return self.evaluation.limits

    def summary(self) -> str:
        """The terminal summary: events table, aids, load-case tables, notes and caution.

        Returns
        -------
        str
            Newline-separated lines, no trailing newline.
        """
        lines = [summary_table(self.evaluation, list(self.events), self.ride is None),
                 aids_summary(self.evaluation, self.sensitivity)]
        if self.sweep is not None:
            lines.append(sweep_tables(self.sweep))
        if self.limits.illustrative:
            lines.append("note: the limit set is ILLUSTRATIVE; the verdict says nothing about "
                         "compliance")
        lines.append("caution: " + CAUTION)
        return "\n".join(lines)

    def document(self) -> dict:
        """The JSON record (:func:`checker.documents.evaluation_document`).

        Returns
        -------
        dict
            Plain values, floats to 6 significant digits; besides the evaluation's record it
            holds ``stall``, ``parameters``, the sweep's ``cases``/``matrix``/``governing`` when
            load cases were run and ``sensitivity`` when asked for.
        """
        extra = {"stall": self.stall,
                 "parameters": [{"name": n, "value": v} for n, v in self.provenance.parameters]}
        if self.sweep is not None:
            extra.update(sweep_document(self.sweep))
        if self.sensitivity is not None:
            extra["sensitivity"] = self.sensitivity.to_dict()
        return evaluation_document(self.evaluation,
                                   [(f.path, f.sha256) for f in self.provenance.inputs],
                                   self.provenance.call, extra, list(self.events))

    def write_json(self, path: str | Path) -> Path:
        """Write the JSON record atomically.

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write it. Not checked against the inputs here (the command line does that
            with :func:`checker.paths.check_run_paths`).

        Returns
        -------
        pathlib.Path
            The path written.

        Raises
        ------
        InputError
            When the output's folder does not exist or is not writable, the path is a folder or
            another non-regular file, or the write fails (the old file is kept).
        """
        return _write_json(path, self.document(), self.provenance)

    def write_pdf(self, path: str | Path,
                  json_path: str | Path | None = None) -> tuple[Path, Path]:
        """Write the PDF report and its JSON sidecar, as a pair (both or neither).

        The PDF is rendered in memory first (matplotlib, weasyprint load on the first one).

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write the PDF.
        json_path : str or pathlib.Path or None, optional
            Where to write the JSON sidecar (default: beside the PDF, with ``.json``).

        Returns
        -------
        tuple of pathlib.Path
            The PDF and the JSON written.

        Raises
        ------
        InputError
            When an output's folder does not exist or is not writable, a path is a folder, or a
            write fails; nothing is written then.
        """
        return _write_pair(path, lambda: _report().check_report_pdf(self), json_path,
                           to_json(self.document()), self.provenance)


def check_layout(track: str | Path, *, train: str | Path | None = None, ideal: bool = False,
                 operation: str | Path | None = None, start_speed_m_s: float | None = None,
                 limits: str | Path | None = None, cases: str | Path | None = None,
                 case: str = "nominal", rate_hz: float = 200.0, units: str = "m",
                 smoothing_m: float | None = None, step_m: float = STATION_STEP_M,
                 sensitivity: bool = False, project: str = "(not given)",
                 layout: str | None = None, revision: str = "(not given)",
                 page_size: str = "a4", seat_pages: str = "governing",
                 workers: int | None = None, scheduler: str | None = None,
                 scheduler_timeout_s: float = 30.0, progress: Progress | None = None,
                 call: str | None = None) -> LayoutCheck:
    """Simulate a layout and check every seat against a limit set.

    Parameters
    ----------
    track : str or pathlib.Path
        Centerline CSV (x, y, z [m or ft]; optional roll_deg or up_x, up_y, up_z).
    train : str or pathlib.Path or None, optional
        Train TOML; None (or ``ideal=True``) gives one rider on the centerline with no
        rolling resistance and no drag.
    ideal : bool, optional
        Use the ideal single rider even when ``train`` is given.
    operation : str or pathlib.Path or None, optional
        Operation TOML (start speed, lifts, launches, brakes); None: free rolling.
    start_speed_m_s : float or None, optional
        Speed at the start [m/s]; overrides the operation file.
    limits : str or pathlib.Path or None, optional
        Limits TOML; None uses the bundled ILLUSTRATIVE set.
    cases : str or pathlib.Path or None, optional
        Load-case TOML, or ``"standard"`` for the shipped set; None runs one case.
    case : str, optional
        Name of the single load case when ``cases`` is None.
    rate_hz : float, optional
        Output sample rate [Hz] (default 200).
    units : str, optional
        ``"m"`` or ``"ft"``, the track file's length unit.
    smoothing_m : float or None, optional
        RMS tolerance for fitting noisy CAD samples [m]; 0 fits through every sample; None:
        half the grid a rounded file's coordinates sit on.
    step_m : float, optional
        Station grid step of the simulation [m] (default
        :data:`checker.geometry.STATION_STEP_M`, 0.2 m).
    sensitivity : bool, optional
        Also rank how the ride's parameters move each rule's margin (16 more rides; not with
        ``cases``).
    project, revision : str, optional
        Labels for the documents.
    layout : str or None, optional
        Layout name for the documents; None: the track file's name without suffix.
    page_size : str, optional
        ``"a4"`` or ``"letter"``.
    seat_pages : str, optional
        Seat pages of figures in the PDF: ``"governing"`` (the governing seat of each event
        and seats whose events differ), ``"all"`` (every seat with a finding) or ``"none"``.
    workers : int or None, optional
        Local worker processes for the load cases and sensitivity rides (default: all cores).
    scheduler : str or None, optional
        A Dask scheduler address (``tcp://host:port``) to run them on.
    scheduler_timeout_s : float, optional
        How long to wait for the scheduler and its first worker [s] (default 30).
    progress : callable or None, optional
        Called as ``progress(done, total)`` as load cases (or sensitivity rides) finish.
    call : str or None, optional
        The call to record as reproducing the result (the command line passes its own);
        None: this Python call.

    Returns
    -------
    LayoutCheck
        The frozen result; a stall fails the verdict and is carried, not raised.

    Raises
    ------
    InputError
        For a bad or missing input file (naming the file, row or key, and what to do), a
        load case that does not fit the train, ``sensitivity`` together with ``cases``, a
        ride over the memory cap, or an unreachable scheduler.

    Examples
    --------
    >>> from checker import check_layout
    >>> from checker.resources import demo_folder
    >>> demo = demo_folder()
    >>> result = check_layout(demo / "thistle_comet_revA.csv",
    ...                       train=demo / "thistle_comet_train.toml",
    ...                       operation=demo / "thistle_comet_revA.operation.toml")
    >>> str(result.verdict), result.limits.illustrative
    ('fail', True)
    >>> result.events[0].rule
    'onset gz'
    """
    call = call or _python_call(check_layout, locals())
    if sensitivity and cases:
        raise InputError(None, "--sensitivity works about one ride's parameters, not a set of "
                         "load cases", "run it without --cases (or with --case NAME only)")
    limit_set = _limits(limits)
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    options = RideOptions(rate_hz=rate_hz, smoothing_m=smoothing_m, step_m=step_m)
    cases_file, case_list = _cases(cases)
    parameters = [("track length unit", units), ("filter", limit_set.filter.describe())]
    sweep = None
    if cases_file is not None:
        _check_cases_fit(case_list, cases_file, the_train, ops, options)
        sweep = run_cases(line, the_train, ops, limit_set, options, case_list,
                          workers=workers, scheduler=scheduler, progress=progress,
                          scheduler_timeout_s=scheduler_timeout_s)
        run = sweep_check_run(sweep, line, the_train, ops, limit_set, options, case_list)
        parameters.append(("load cases", f"{cases} ({len(case_list)} cases: "
                           + ", ".join(c.name for c in case_list) + ")"))
    fitted: list[str] = []
    if cases_file is None:
        run = run_check(line, the_train, ops, limit_set, options, case)
        smoothed = run.ride.geometry.smoothing
        if options.smoothing_m is None and smoothed is not None and not smoothed.refused:
            fitted = fit_dependence(line, the_train, ops, limit_set, options, case,
                                    run.evaluation)
    # the parameters as given: a sweep's ride is its first case's, whose case may change them
    shown = run.ride if sweep is None or run.ride is None else replace(
        run.ride, train=the_train, operation=ops, options=options)
    inputs = (_record(track, None if ideal else train, operation, cases_file)
              + _limit_files(limit_set))
    evaluation = replace(run.evaluation, warnings=tuple(filter_warnings(limit_set.filter))
                         + run.evaluation.warnings + tuple(fitted))
    ranked = None
    if sensitivity:
        from .sensitivity import run_sensitivity

        ranked = run_sensitivity(line, the_train, ops, limit_set, options, workers=workers,
                                 scheduler=scheduler, progress=progress)
    return _layout_check(evaluation, run.signals, run.ride, sweep,
                         Labels(project, layout or Path(track).stem, revision, page_size,
                                seat_pages),
                         Provenance(inputs, tuple(ride_parameters(shown) + parameters),
                                    call), ranked)


def _layout_check(evaluation: Evaluation, signals: Mapping, ride: RideResult | None,
                  sweep: Sweep | None, labels: Labels, provenance: Provenance,
                  sensitivity: object | None = None) -> LayoutCheck:
    return LayoutCheck(evaluation, group_events(evaluation, ride),
                       MappingProxyType(dict(signals)), ride, sweep, labels, provenance,
                       sensitivity)


def check_history(history: str | Path, *, units: str = "g", limits: str | Path | None = None,
                  case: str = "nominal", instrument: str | Path | None = None,
                  resample_hz: float | None = None, project: str = "(not given)",
                  layout: str | None = None, revision: str = "(not given)",
                  page_size: str = "a4", seat_pages: str = "governing",
                  call: str | None = None) -> LayoutCheck:
    """Check a recorded or exported acceleration history against a limit set.

    Parameters
    ----------
    history : str or pathlib.Path
        CSV with t [s], gx, gy, gz and optionally seat (plain format), or a logger export
        described by ``instrument``.
    units : str, optional
        ``"g"`` (multiples of g0) or ``"m/s2"``, the unit of gx, gy, gz in a plain file.
    limits : str or pathlib.Path or None, optional
        Limits TOML; None uses the bundled ILLUSTRATIVE set.
    case : str, optional
        Name of the load case the record stands for.
    instrument : str or pathlib.Path or None, optional
        Instrument TOML describing a logger export (columns, units, mounting, seats); None
        reads the plain format.
    resample_hz : float or None, optional
        Uniform rate [Hz] to re-sample irregular time stamps onto; None refuses them, naming
        the rows.
    project, revision, page_size, seat_pages : str, optional
        As for :func:`check_layout`.
    layout : str or None, optional
        Layout name; None: the history file's name without suffix.
    call : str or None, optional
        The call to record as reproducing the result; None: this Python call.

    Returns
    -------
    LayoutCheck
        The frozen result (without a ride: a record has no layout to draw); its warnings
        include the record's review items and a rest-level check of Gz.

    Raises
    ------
    InputError
        For a bad or missing input file.

    Examples
    --------
    >>> from checker import check_history
    >>> from checker.resources import demo_folder
    >>> demo = demo_folder()
    >>> result = check_history(demo / "thistle_comet_revB_recorded_synthetic.csv")
    >>> str(result.verdict), result.ride is None
    ('pass', True)
    """
    call = call or _python_call(check_history, locals())
    limit_set = _limits(limits)
    logger = load_instrument(instrument) if instrument is not None else None
    record = load_record(history, units, logger, resample_hz)
    signals = record.signals
    evaluation = evaluate(signals, limit_set, case)
    evaluation = replace(evaluation, warnings=tuple(filter_warnings(limit_set.filter))
                         + tuple(record.notes) + tuple(history_warnings(signals))
                         + tuple(evaluation.warnings))
    parameters = (("history units", units if logger is None else "from the instrument"),
                  ("filter", limit_set.filter.describe()),
                  ("re-sampling", "none (irregular stamps refused)" if resample_hz is None
                   else f"irregular parts at {resample_hz:g} Hz"))
    if record.method:
        parameters += (("record conditioning", record.method),)
    notes = file_notes(history)
    if notes:  # the record's origin as its file states it (instrument, test, synthetic)
        parameters += (("notes in the record file", " / ".join(notes)),)
    return _layout_check(evaluation, {(s.seat, case): s for s in signals}, None, None,
                         Labels(project, layout or Path(history).stem, revision, page_size,
                                seat_pages),
                         Provenance(_record(history, instrument) + _limit_files(limit_set),
                                    parameters, call))


# ---------------------------------------------------------------------------------------------
# compare


@dataclass(frozen=True, eq=False)
class ComparisonFocus:
    """The seat and case the comparison's figures show, with both revisions' signals.

    Attributes
    ----------
    seat : str
        The seat shown (the new revision's governing seat, else the old one's, else the
        first seat).
    case : str
        Its load case.
    old : SeatResult
        The seat's result in the old revision, with its filtered signal.
    old_geometry : TrackGeometry
        The old revision's track geometry (its elevation is drawn).
    new : SeatResult
        The seat's result in the new revision.
    new_signal : checker.kinematics.SeatHistory
        The seat's raw signal in the new revision [g0].
    new_geometry : TrackGeometry
        The new revision's track geometry.
    """

    seat: str
    case: str
    old: SeatResult
    old_geometry: TrackGeometry
    new: SeatResult
    new_signal: object
    new_geometry: TrackGeometry


@dataclass(frozen=True, eq=False)
class LayoutComparison:
    """Two revisions of a layout run with the same train, cases and limits.

    Attributes
    ----------
    comparison : Comparison
        Peaks before and after, and every finding's change.
    old, new : Sweep
        Every load case of each revision.
    old_file, new_file : str
        The centerline files as given.
    old_name, new_name : str
        Short names for the documents (the files' names without suffix).
    cases : tuple of str
        The load cases' names.
    limits : LimitSet
        The limit set.
    new_stalls : tuple of str
        Stalls of the new revision in cases where the old one did not stall.
    focus : ComparisonFocus or None
        The governing seat and case with both revisions' signals for the figures, or None
        when made with ``plot_signals=False``.
    labels : Labels
        Project and page size.
    provenance : Provenance
        As for :class:`LayoutCheck`.
    """

    comparison: Comparison
    old: Sweep
    new: Sweep
    old_file: str
    new_file: str
    old_name: str
    new_name: str
    cases: tuple[str, ...]
    limits: LimitSet
    new_stalls: tuple[str, ...]
    focus: ComparisonFocus | None
    labels: Labels
    provenance: Provenance

    @property
    def regressed(self) -> bool:
        """True when the new revision has a new or worse finding, or a new stall."""
        return self.comparison.regressed or bool(self.new_stalls)

    def summary(self) -> str:
        """The terminal summary: verdicts, finding changes, peaks, regression, caution.

        Returns
        -------
        str
            Newline-separated lines, no trailing newline; peaks as ``old>new`` [g0] per seat.
        """
        c = self.comparison
        lines = [f"old {self.old_name}: {c.old_verdict.upper()} ({len(self.old.findings)} "
                 f"findings); new {self.new_name}: {c.new_verdict.upper()} "
                 f"({len(self.new.findings)} findings)",
                 "events: " + ", ".join(f"{c.count_events(k)} {k}" for k in ChangeState)
                 + "; findings: " + ", ".join(f"{c.count(k)} {k}" for k in ChangeState)]
        for change in c.events:
            if change.status is ChangeState.SAME:
                continue
            lines.append("  " + event_change_text(change))
        lines.append("  (every finding's change: in the JSON (--json) and the PDF's appendix)")
        lines.append(f"{'seat':<14}" + "".join(f"{a + ' ' + k:>16}" for a in ("gx", "gy", "gz")
                                               for k in ("min", "max")))
        by_seat: dict = {}
        for p in c.peaks:
            by_seat.setdefault(p["seat"], []).append(f"{p['old']:6.2f}>{p['new']:6.2f}")
        for seat, cells in by_seat.items():
            lines.append(f"{seat:<14}" + "".join(f"{cell:>16}" for cell in cells))
        lines.append("regression: " + ("YES (a new or worse finding)" if self.regressed
                                       else "no"))
        lines.append("caution: " + CAUTION)
        return "\n".join(lines)

    def document(self) -> dict:
        """The JSON record of the comparison (:func:`checker.documents.comparison_document`).

        Returns
        -------
        dict
            Plain values, floats to 6 significant digits.
        """
        return comparison_document(
            self.comparison, self.limits, self.old_file, self.new_file,
            len(self.old.findings), len(self.new.findings), self.regressed,
            list(self.new_stalls), list(self.cases),
            [(f.path, f.sha256) for f in self.provenance.inputs], self.provenance.call)

    def write_json(self, path: str | Path) -> Path:
        """Write the JSON record atomically (see :meth:`LayoutCheck.write_json`).

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write it.

        Returns
        -------
        pathlib.Path
            The path written.

        Raises
        ------
        InputError
            As :meth:`LayoutCheck.write_json`.
        """
        return _write_json(path, self.document(), self.provenance)

    def write_pdf(self, path: str | Path,
                  json_path: str | Path | None = None) -> tuple[Path, Path]:
        """Write the comparison PDF and its JSON sidecar, as a pair (both or neither).

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write the PDF.
        json_path : str or pathlib.Path or None, optional
            Where to write the JSON sidecar (default: beside the PDF, with ``.json``).

        Returns
        -------
        tuple of pathlib.Path
            The PDF and the JSON written.

        Raises
        ------
        ValueError
            When the comparison was made with ``plot_signals=False``.
        InputError
            As :meth:`LayoutCheck.write_pdf`.
        """
        if self.focus is None:
            raise ValueError("this comparison was made with plot_signals=False; it has no "
                             "signals to draw")
        return _write_pair(path, lambda: _report().comparison_report_pdf(self), json_path,
                           to_json(self.document()), self.provenance)


def compare_layouts(old: str | Path, new: str | Path, *, train: str | Path | None = None,
                    ideal: bool = False, operation: str | Path | None = None,
                    old_operation: str | Path | None = None,
                    new_operation: str | Path | None = None,
                    start_speed_m_s: float | None = None, limits: str | Path | None = None,
                    cases: str | Path | None = None, rate_hz: float = 200.0,
                    units: str = "m", smoothing_m: float | None = None,
                    step_m: float = STATION_STEP_M,
                    project: str = "(not given)", page_size: str = "a4",
                    workers: int | None = None, scheduler: str | None = None,
                    scheduler_timeout_s: float = 30.0, progress: Progress | None = None,
                    plot_signals: bool = True,
                    call: str | None = None) -> LayoutComparison:
    """Run two revisions of a layout with the same train, cases and limits, and compare them.

    Parameters
    ----------
    old, new : str or pathlib.Path
        The two revisions' centerline CSV files.
    train, ideal, start_speed_m_s, limits, cases, rate_hz, units, smoothing_m, step_m
        As for :func:`check_layout`, shared by both revisions.
    workers, scheduler, scheduler_timeout_s, progress
        As for :func:`check_layout`; both revisions' rides share one pool.
    operation : str or pathlib.Path or None, optional
        Operation TOML for both revisions.
    old_operation, new_operation : str or pathlib.Path or None, optional
        Operation TOML for one revision (overrides ``operation``).
    project, page_size : str, optional
        Labels for the documents.
    plot_signals : bool, optional
        Also compute the governing seat's signals in both revisions, which the PDF draws
        (one more ride per revision); False when no PDF will be written.
    call : str or None, optional
        The call to record as reproducing the result; None: this Python call.

    Returns
    -------
    LayoutComparison
        The frozen result; ``regressed`` says whether the new revision got worse (a new or
        worse finding, or a new stall).

    Raises
    ------
    InputError
        For a bad or missing input file, or as :func:`check_layout`.

    Examples
    --------
    >>> from checker import compare_layouts
    >>> from checker.resources import demo_folder
    >>> demo = demo_folder()
    >>> result = compare_layouts(demo / "thistle_comet_revA.csv", demo / "thistle_comet_revB.csv",
    ...                          train=demo / "thistle_comet_train.toml",
    ...                          old_operation=demo / "thistle_comet_revA.operation.toml",
    ...                          new_operation=demo / "thistle_comet_revB.operation.toml",
    ...                          plot_signals=False)
    >>> result.regressed, str(result.comparison.new_verdict)
    (False, 'pass')
    """
    call = call or _python_call(compare_layouts, locals())
    limit_set = _limits(limits)
    old_ops_file = old_operation or operation
    new_ops_file = new_operation or operation
    old_line, the_train, old_ops = load_inputs(old, train, ideal=ideal, operation=old_ops_file,
                                               start_speed_m_s=start_speed_m_s, units=units)
    new_line, _, new_ops = load_inputs(new, train, ideal=ideal, operation=new_ops_file,
                                       start_speed_m_s=start_speed_m_s, units=units)
    options = RideOptions(rate_hz=rate_hz, smoothing_m=smoothing_m, step_m=step_m)
    cases_file, case_list = _cases(cases)
    if cases_file is not None:
        _check_cases_fit(case_list, cases_file, the_train, old_ops, options)
    old_sweep, new_sweep = run_layouts(
        [(old_line, the_train, old_ops), (new_line, the_train, new_ops)], limit_set, options,
        case_list, workers=workers, scheduler=scheduler, progress=progress,
        scheduler_timeout_s=scheduler_timeout_s)
    heights = [seat.up_m for seat in the_train.seats]
    comparison = compare_sweeps(old_sweep, new_sweep, old_sweep.outcomes[0].track_length_m,
                                new_sweep.outcomes[0].track_length_m, the_train.length_m,
                                old_ops.sections, new_ops.sections,
                                max(heights) if heights else None)
    old_stalls = {o.case for o in old_sweep.outcomes if o.stall}
    new_stalls = tuple(f"new revision, case {o.case}: {o.stall}" for o in new_sweep.outcomes
                       if o.stall and o.case not in old_stalls)
    focus = None
    if plot_signals:
        governing = new_sweep.governing() or old_sweep.governing()
        focus_case = governing[0].case if governing else case_list[0].name
        focus_seat = governing[0].seat if governing else None
        # the sweeps keep the signals of every seat of the first case and of each case's
        # governing seats: the rides are run again only for a seat they did not keep
        kept = [next(o.kept for o in sweep.outcomes if o.case == focus_case)
                for sweep in (old_sweep, new_sweep)]
        seat = focus_seat or next(iter(kept[1]), None)
        if seat is not None and all(seat in k for k in kept):
            (old_res, _), (new_res, new_signal) = (k[seat] for k in kept)
        else:
            case_by_name = {c.name: c for c in case_list}
            runs: list[CheckRun] = []
            for line, ops in ((old_line, old_ops), (new_line, new_ops)):
                tr, op, opt = apply_case(the_train, ops, options, case_by_name[focus_case])
                runs.append(run_check(line, tr, op, limit_set, opt, focus_case))
            seat = seat or runs[1].evaluation.seats[0].seat
            old_res, new_res = (next(s for s in r.evaluation.seats if s.seat == seat)
                                for r in runs)
            new_signal = runs[1].signals[(seat, focus_case)]
        focus = ComparisonFocus(seat, focus_case, old_res, old_sweep.geometry, new_res,
                                new_signal, new_sweep.geometry)
    inputs = (_record(old, new, None if ideal else train, old_ops_file,
                      new_ops_file if new_ops_file != old_ops_file else None, cases_file)
              + _limit_files(limit_set))
    parameters = [("track length unit", units), ("filter", limit_set.filter.describe()),
                  ("load cases", ", ".join(c.name for c in case_list)),
                  ("output sample rate", f"{rate_hz:g} Hz"),
                  ("smoothing tolerance", "automatic (half the coordinate grid)"
                   if smoothing_m is None else f"{smoothing_m:g} m"),
                  ("station step", f"{step_m:g} m")]
    if start_speed_m_s is not None:
        parameters.append(("start speed", f"{start_speed_m_s:g} m/s"))
    return LayoutComparison(comparison, old_sweep, new_sweep, str(old), str(new),
                            Path(old).stem, Path(new).stem, tuple(c.name for c in case_list),
                            limit_set, new_stalls, focus, Labels(project, page_size=page_size),
                            Provenance(inputs, tuple(parameters), call))


# ---------------------------------------------------------------------------------------------
# simulate and demo


@dataclass(frozen=True, eq=False)
class Simulation:
    """A simulated ride without a check: every seat's unfiltered history.

    Attributes
    ----------
    ride : RideResult
        Geometry, motion, histories and plausibility warnings.
    provenance : Provenance
        Input files with SHA-256, parameters, tool version, reproducing call.
    """

    ride: RideResult
    provenance: Provenance

    @property
    def stall(self) -> str | None:
        """Where the train stopped short of the end, or None."""
        return None if self.ride.motion.stall is None else str(self.ride.motion.stall)

    def summary(self, path: str | Path) -> str:
        """What was written to ``path``: seats, rows, ride time, smoothing.

        Parameters
        ----------
        path : str or pathlib.Path
            The CSV written (named in the first line only).

        Returns
        -------
        str
            One line, and a second on the smoothing fit when there was one.
        """
        motion, rows = self.ride.motion, sum(len(h.t) for h in self.ride.histories)
        lines = [f"wrote {path}: {len(self.ride.histories)} seats, {rows} rows, "
                 f"ride time {motion.duration_s:.1f} s, {motion.end_reason}"]
        sm = self.ride.geometry.smoothing
        if sm is not None:
            lines.append(f"smoothing {sm.tolerance_m:g} m: samples moved up to "
                         f"{sm.max_deviation_m:.3f} m; curvature removed rms "
                         f"{sm.rms_curvature_removed:.4f} 1/m, max "
                         f"{sm.max_curvature_removed:.4f} 1/m at station "
                         f"{sm.station_of_max_removed_m:.1f} m")
        return "\n".join(lines)

    def write_csv(self, path: str | Path) -> Path:
        """Write every seat's history (one row per seat and sample) atomically.

        Parameters
        ----------
        path : str or pathlib.Path
            The CSV to write (:func:`checker.ride.histories_csv`).

        Returns
        -------
        pathlib.Path
            The path written.

        Raises
        ------
        InputError
            When the path cannot be written or is one of the inputs (see
            :meth:`LayoutCheck.write_json`).
        """
        (written,) = commit({path: histories_csv(self.ride.histories)},
                            _input_paths(self.provenance))
        return written


def simulate_ride(track: str | Path, *, train: str | Path | None = None, ideal: bool = False,
                  operation: str | Path | None = None, start_speed_m_s: float | None = None,
                  rate_hz: float = 200.0, units: str = "m", smoothing_m: float | None = None,
                  step_m: float = STATION_STEP_M, call: str | None = None) -> Simulation:
    """Simulate a ride without checking it.

    Parameters
    ----------
    track, train, ideal, operation, start_speed_m_s, rate_hz, units, smoothing_m, step_m
        As for :func:`check_layout`.
    call : str or None, optional
        The call to record as reproducing the result; None: this Python call.

    Returns
    -------
    Simulation
        The frozen result; a stall ends the histories where the speed reaches zero.

    Raises
    ------
    InputError
        For a bad or missing input file, or a ride over the memory cap.

    Examples
    --------
    >>> from checker import simulate_ride
    >>> from checker.resources import demo_folder
    >>> demo = demo_folder()
    >>> sim = simulate_ride(demo / "thistle_comet_revA.csv", ideal=True,
    ...                     operation=demo / "thistle_comet_revA.operation.toml")
    >>> len(sim.ride.histories), sim.stall
    (1, None)
    """
    call = call or _python_call(simulate_ride, locals())
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    ride = run_ride(line, the_train, ops, RideOptions(rate_hz=rate_hz, smoothing_m=smoothing_m,
                                                      step_m=step_m))
    return Simulation(ride, Provenance(_record(track, None if ideal else train, operation),
                                       tuple(ride_parameters(ride)), call))


@dataclass(frozen=True, eq=False)
class BankAdvisory:
    """A bank advice for a layout, with the banked track text and what reproduces it.

    Attributes
    ----------
    advice : checker.bank.BankAdvice
        Stations [m], given and advised bank [deg], target and where the rate limit binds.
    track_text : str
        The banked track as CSV text (x, y, z in the input's unit, roll_deg).
    track : str
        The track file advised on.
    seats : int
        How many seats the advice serves (seats per car times cars; 1 for the centerline
        rider).
    settings : Mapping
        ``roll_rate`` [deg/s], ``tolerance`` [g], ``smoothing`` [s], ``page_size``.
    provenance : Provenance
        Input files with SHA-256, parameters, tool version, reproducing call.
    """

    advice: object
    track_text: str
    track: str
    seats: int
    settings: Mapping
    provenance: Provenance

    def summary(self) -> str:
        """The terminal summary of the advice.

        Returns
        -------
        str
            Five lines: the roll-rate limit, the largest change [deg] and fastest roll [deg/s],
            the worst unfiltered |Gy| [g] given, advised and where every seat can be met, and the
            length [m] where the bank cannot meet every seat.
        """
        d = self.advice.to_dict()
        name = Path(self.track).name
        riders = "centerline rider" if self.advice.ideal else f"{self.seats} seats"
        return "\n".join([
            f"advised bank for {name} ({riders}), roll rate <= "
            f"{self.settings['roll_rate']:g} deg/s:",
            f"  largest change from the given bank {d['max_change_deg']:.1f} deg; fastest roll "
            f"{d['max_roll_rate_deg_s']:.1f} deg/s",
            f"  worst |Gy| (unfiltered, any seat): given {d['max_abs_gy_given_g']:.3f} g, "
            f"advised {d['max_abs_gy_advised_g']:.3f} g; where every seat can be met "
            f"{d['max_abs_gy_where_rate_allows_g']:.3f} g",
            f"  stations where the bank cannot meet every seat (rate limit or seats needing "
            f"different banks): {d['rate_bound_length_m']:.1f} m"])

    def write(self, output: str | Path, plot: str | Path, json_path: str | Path | None = None,
              pdf_path: str | Path | None = None) -> list[Path]:
        """Write the banked track, its SVG plot and, when named, the JSON and the PDF: all of them
        or none (:func:`checker.outputs.commit`).

        Parameters
        ----------
        output : str or pathlib.Path
            The banked track CSV. Not checked against the input track here (the command line
            does that).
        plot : str or pathlib.Path
            The SVG figure of given, advised and target bank.
        json_path : str or pathlib.Path or None, optional
            The JSON record.
        pdf_path : str or pathlib.Path or None, optional
            The PDF page.

        Returns
        -------
        list of pathlib.Path
            The paths written: output, plot, then JSON and PDF when named.

        Raises
        ------
        InputError
            When a path cannot be written; nothing is written then.
        """
        from .report.aids_figures import bank_figure, bank_pdf

        a = self.advice
        riders = "centerline rider" if a.ideal else "every seat of the train"
        svg = bank_figure(a.s, a.given_deg, a.advised_deg, a.target_deg, a.rate_bound,
                          "Bank: given, advised, and the target")
        files = {Path(output): self.track_text.encode(), Path(plot): svg.encode()}
        if json_path:
            files[Path(json_path)] = to_json({
                "advice": a.to_dict(), "track": self.track, "output": str(output),
                "caution": CAUTION, "command": self.provenance.call}).encode()
        if pdf_path:
            files[Path(pdf_path)] = bank_pdf(a, svg, {
                "track": self.track, "output": str(output), "riders": riders,
                "inputs": [(f.path, f.sha256) for f in self.provenance.inputs],
                "command": self.provenance.call, "page_size": self.settings["page_size"],
                "roll_rate": self.settings["roll_rate"],
                "tolerance": self.settings["tolerance"],
                "smoothing": self.settings["smoothing"]})
        commit(files, _input_paths(self.provenance))
        return list(files)


def advise_bank_angle(track: str | Path, *, train: str | Path | None = None,
                      ideal: bool = False, operation: str | Path | None = None,
                      start_speed_m_s: float | None = None, rate_hz: float = 200.0,
                      units: str = "m", smoothing_m: float | None = None,
                      step_m: float = STATION_STEP_M, roll_rate_deg_s: float = 60.0,
                      tolerance_g: float = 0.02, roll_smoothing_s: float = 0.6,
                      page_size: str = "a4", call: str | None = None) -> BankAdvisory:
    """Advise the bank angle that cancels the riders' lateral force within a roll-rate limit.

    Parameters
    ----------
    track, train, ideal, operation, start_speed_m_s, rate_hz, units, smoothing_m, step_m
        As for :func:`check_layout`.
    roll_rate_deg_s : float, optional
        Highest roll rate any car may see [deg/s] (default 60).
    tolerance_g : float, optional
        |Gy| accepted at each seat when choosing the bank [g0] (default 0.02).
    roll_smoothing_s : float, optional
        Moving-average window that softens the roll acceleration [s] (default 0.6).
    page_size : str, optional
        ``"a4"`` or ``"letter"`` for the PDF.
    call : str or None, optional
        The call to record as reproducing the result; None: this Python call.

    Returns
    -------
    BankAdvisory
        The frozen advice; nothing is written until :meth:`BankAdvisory.write`.

    Raises
    ------
    InputError
        For a bad or missing input file.
    """
    from .bank import advise_bank, banked_table
    from .track import FOOT_M

    call = call or _python_call(advise_bank_angle, locals())
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    advice = advise_bank(line, the_train, ops,
                         RideOptions(rate_hz=rate_hz, step_m=step_m, smoothing_m=smoothing_m),
                         roll_rate_limit_deg_s=roll_rate_deg_s, tolerance_g=tolerance_g,
                         smoothing_s=roll_smoothing_s, ideal=ideal or train is None)
    scale = FOOT_M if units == "ft" else 1.0
    note = (f"bank advised by checker advise-bank from {Path(track).name}: roll rate <= "
            f"{roll_rate_deg_s:g} deg/s, |Gy| tolerance {tolerance_g:g} g, "
            + ("centerline rider" if advice.ideal else "every seat of the train"))
    text = banked_table(line.points / scale, advice.advised_at_samples, note)
    settings = MappingProxyType({"roll_rate": roll_rate_deg_s, "tolerance": tolerance_g,
                                 "smoothing": roll_smoothing_s, "page_size": page_size})
    parameters = (("roll rate limit", f"{roll_rate_deg_s:g} deg/s"),
                  ("|Gy| tolerance", f"{tolerance_g:g} g"),
                  ("roll smoothing", f"{roll_smoothing_s:g} s"))
    return BankAdvisory(advice, text, str(track), len(the_train.seats) * the_train.car_count,
                        settings,
                        Provenance(_record(track, None if ideal else train, operation),
                                   parameters, call))


@dataclass(frozen=True, eq=False)
class RideCorrelation:
    """A recorded ride lined up with the simulation of the same layout.

    Attributes
    ----------
    correlations : tuple of checker.correlate.Correlation
        One per recorded seat.
    notes : tuple of str
        Review items from loading the record and warnings from the simulation.
    filter : str
        The filter applied to both signals, described.
    record_method : str
        How the record was conditioned (time base, re-sampling).
    labels : Labels
        Project and page size for the PDF; layout is the track file's name.
    record_name : str
        The record file's name.
    provenance : Provenance
        Input files with SHA-256, parameters, tool version, reproducing call.
    """

    correlations: tuple
    notes: tuple[str, ...]
    filter: str
    record_method: str
    labels: Labels
    record_name: str
    provenance: Provenance

    def summary(self) -> str:
        """A table of the per-axis differences, the filter note and the caution.

        Returns
        -------
        str
            One line per recorded seat: alignment method, offset [s], RMS and largest
            difference per axis [g0] (recorded minus simulated, both filtered).
        """
        lines = [f"{'recorded seat':<20}{'aligned by':<34}{'offset [s]':>11}"
                 + "".join(f"{a + ' rms':>10}{a + ' max':>10}" for a in ("gx", "gy", "gz"))]
        for c in self.correlations:
            lines.append(f"{c.recorded_seat:<20}{c.method:<34}{c.offset_s:>11.3f}"
                         + "".join(f"{a.rms_g:>10.3f}{a.peak_g:>10.3f}" for a in c.axes))
        lines.append("differences are recorded minus simulated, both filtered: " + self.filter)
        lines.append("caution: " + CAUTION)
        return "\n".join(lines)

    def document(self) -> dict:
        """The JSON record.

        Returns
        -------
        dict
            ``kind``, ``caution``, ``command``, ``filter``, ``record_conditioning``, ``inputs``,
            ``review_items`` and ``correlations`` (floats not rounded here).
        """
        return {"kind": "correlation", "caution": CAUTION, "command": self.provenance.call,
                "filter": self.filter, "record_conditioning": self.record_method,
                "inputs": [{"file": f.path, "sha256": f.sha256}
                           for f in self.provenance.inputs],
                "review_items": list(self.notes),
                "correlations": [c.to_dict() for c in self.correlations]}

    def write_json(self, path: str | Path) -> Path:
        """Write the JSON record atomically.

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write it.

        Returns
        -------
        pathlib.Path
            The path written.

        Raises
        ------
        InputError
            As :meth:`LayoutCheck.write_json`.
        """
        return _write_json(path, self.document(), self.provenance)

    def write_pdf(self, path: str | Path,
                  json_path: str | Path | None = None) -> tuple[Path, Path]:
        """Write the PDF with the figures and its JSON sidecar as a pair (both or neither).

        Parameters
        ----------
        path : str or pathlib.Path
            Where to write the PDF.
        json_path : str or pathlib.Path or None, optional
            Where to write the JSON sidecar (default: beside the PDF, with ``.json``).

        Returns
        -------
        tuple of pathlib.Path
            The PDF and the JSON written.

        Raises
        ------
        InputError
            As :meth:`LayoutCheck.write_pdf`.
        """
        from .report.correlation import correlation_pdf

        def render() -> bytes:
            return correlation_pdf(list(self.correlations), {
                "project": self.labels.project, "record_name": self.record_name,
                "track_name": self.labels.layout, "filter": self.filter,
                "record_method": self.record_method, "notes": list(self.notes),
                "inputs": [(f.path, f.sha256) for f in self.provenance.inputs],
                "command": self.provenance.call, "page_size": self.labels.page_size})

        return _write_pair(path, render, json_path, to_json(self.document()),
                           self.provenance)


def correlate_ride(record: str | Path, track: str | Path, *, record_units: str = "g",
                   instrument: str | Path | None = None, resample_hz: float | None = None,
                   train: str | Path | None = None, ideal: bool = False,
                   operation: str | Path | None = None, start_speed_m_s: float | None = None,
                   rate_hz: float = 200.0, units: str = "m", smoothing_m: float | None = None,
                   step_m: float = STATION_STEP_M, seat: str | None = None,
                   limits: str | Path | None = None, project: str = "(not given)",
                   page_size: str = "a4", call: str | None = None) -> RideCorrelation:
    """Line a recorded ride up with the simulation of the same layout.

    Parameters
    ----------
    record : str or pathlib.Path
        Recorded history CSV (plain format, or described by ``instrument``).
    track : str or pathlib.Path
        The layout's centerline CSV.
    record_units : str, optional
        ``"g"`` or ``"m/s2"`` for a plain-format record.
    instrument, resample_hz
        As for :func:`check_history`.
    train, ideal, operation, start_speed_m_s, rate_hz, units, smoothing_m, step_m
        As for :func:`check_layout`.
    seat : str or None, optional
        Simulated seat to compare every recorded seat with (default: the same name).
    limits : str or pathlib.Path or None, optional
        Limits TOML whose filter is applied to both signals (default: the bundled set).
    project, page_size : str, optional
        Labels for the PDF.
    call : str or None, optional
        The call to record as reproducing the result; None: this Python call.

    Returns
    -------
    RideCorrelation
        Per recorded seat: the time offset and the per-axis RMS and largest differences.

    Raises
    ------
    InputError
        For a bad input file, a recorded seat with no simulated match, or a record that
        cannot be aligned with the simulation.
    """
    from .correlate import correlate_record

    call = call or _python_call(correlate_ride, locals())
    limit_set = _limits(limits)
    logger = load_instrument(instrument) if instrument is not None else None
    loaded = load_record(record, record_units, logger, resample_hz)
    line, the_train, ops = load_inputs(track, train, ideal=ideal, operation=operation,
                                       start_speed_m_s=start_speed_m_s, units=units)
    ride = run_ride(line, the_train, ops, RideOptions(rate_hz=rate_hz, step_m=step_m,
                                                      smoothing_m=smoothing_m))
    notes = tuple(loaded.notes) + tuple(ride.warnings)
    try:
        found = correlate_record(loaded.signals, ride.histories, limit_set.filter, seat)
    except KeyError as exc:
        names = ", ".join(h.seat for h in ride.histories[:8])
        raise InputError(record, f"no simulated seat named {exc.args[0]!r}",
                         f"give --seat NAME (simulated seats: {names}, ...)") from None
    except ValueError as exc:
        raise InputError(record, str(exc), "check that the record is of this layout "
                         "and operation") from None
    inputs = (_record(record, instrument, track, None if ideal else train, operation)
              + _limit_files(limit_set))
    # the filter named with the limit set it comes from (the limit values play no part)
    source = f"from the limit set {limit_set.title!r}" + (
        ", ILLUSTRATIVE: invented example values" if limit_set.illustrative else "")
    return RideCorrelation(tuple(found), notes, f"{limit_set.filter.describe()} ({source})",
                           loaded.method,
                           Labels(project, Path(track).name, page_size=page_size),
                           Path(record).name,
                           Provenance(inputs, tuple(ride_parameters(ride)), call))


@dataclass(frozen=True, eq=False)
class DemoRun:
    """Both revisions of the fictional demo layout checked against the bundled ILLUSTRATIVE
    limits.

    Attributes
    ----------
    revisions : tuple of (str, str, LayoutCheck)
        (revision letter, what changed, its check) for revisions A and B.
    """

    revisions: tuple[tuple[str, str, LayoutCheck], ...]

    def write_reports(self, folder: str | Path) -> list[tuple[Path, Path]]:
        """Write each revision's PDF and JSON into ``folder`` (made when missing).

        Parameters
        ----------
        folder : str or pathlib.Path
            The output folder; files are named ``thistle_comet_rev<letter>.pdf`` and ``.json``.

        Returns
        -------
        list of (pathlib.Path, pathlib.Path)
            The PDF and JSON of each revision.

        Raises
        ------
        InputError
            When the folder cannot be made or a file cannot be written.
        """
        out = _demo_folder_made(folder)
        paths = [check_output(out / f"thistle_comet_rev{rev}.pdf")
                 for rev, _, _ in self.revisions]
        for path in paths:
            check_output(report_sidecar(path, None))
        report = _report()  # imported once, before the fork
        later = [_Forked(report.check_report_pdf, check) for _, _, check in self.revisions[1:]]
        try:
            pdfs = [report.check_report_pdf(self.revisions[0][2])] + [f.result() for f in later]
        finally:  # interrupted or failed: no child is left behind
            for forked in later:
                forked.stop()
        return [_write_pair(path, lambda pdf=pdf: pdf, None, to_json(check.document()),
                            check.provenance)
                for path, pdf, (_, _, check) in zip(paths, pdfs, self.revisions)]


def _forked_child(send, function, args, nice: int = 0) -> None:
    import signal

    from .parentwatch import watch_parent

    # the parent handles interruption and ends this child: no handler of its own here
    signal.signal(signal.SIGINT, signal.SIG_DFL)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    watch_parent(os.getppid())
    if nice:
        os.nice(nice)
    try:
        result = (True, function(*args))
    except Exception as exc:  # handed to the parent, which raises it
        result = (False, exc)
    try:
        send.send(result)
    except Exception as exc:  # an exception that does not pickle: its text then
        try:
            send.send((False, RuntimeError(f"{type(exc).__name__}: {exc}")))
        except OSError:  # the parent stopped listening
            pass
    send.close()


class _Forked:
    """``function(*args)`` running in a forked child process (it shares this process's
    memory, so nothing is pickled on the way in; its result must pickle). Where a process
    cannot fork or there is one core, the call runs when its result is asked for. ``nice``
    lowers the child's priority (and its workers'): a shorter job then runs on what the
    longer one leaves idle instead of slowing it down."""

    def __init__(self, function: Callable, *args, nice: int = 0) -> None:
        self.call = (function, args)
        self.child = None
        if not hasattr(os, "fork") or (os.cpu_count() or 1) < 2:
            return
        import multiprocessing

        context = multiprocessing.get_context("fork")
        self.receive, send = context.Pipe(duplex=False)
        self.child = context.Process(target=_forked_child,
                                     args=(send, function, args, nice))
        self.child.start()
        send.close()

    def result(self):
        """Wait for the result (raising the child's exception)."""
        if self.child is None:
            function, args = self.call
            return function(*args)
        try:
            ok, value = self.receive.recv()
            self.child.join()  # it has sent everything: it ends now
        except EOFError:
            raise RuntimeError("a report worker ended without a result") from None
        finally:
            self.stop()
        if not ok:
            raise value
        return value

    def stop(self) -> None:
        """End the child (at once if it still runs: its result is no longer wanted)."""
        if self.child is None:
            return
        if self.child.is_alive():
            self.child.terminate()
            self.child.join()
        self.receive.close()
        self.child = None


DEMO_CHILD_NICE = 5  # scheduling priority drop of the demo's second revision (Unix nice)


def _demo_check(index: int, page_size: str, seat_pages: str, pdf: Path | None = None):
    here = demo_folder()
    rev, what = DEMO_REVISIONS[index]
    train = here / "thistle_comet_train.toml"
    track = here / f"thistle_comet_rev{rev}.csv"
    ops = here / f"thistle_comet_rev{rev}.operation.toml"
    call = shlex.join(["checker", "check", str(track), "--train", str(train),
                       "--operation", str(ops), "--project", DEMO_PROJECT,
                       "--layout-name", DEMO_LAYOUT, "--revision", f"{rev} ({what})",
                       "--page-size", page_size, "--seat-pages", seat_pages]
                      + (["--pdf", str(pdf)] if pdf is not None else []))
    return rev, what, check_layout(
        track, train=train, operation=ops, project=DEMO_PROJECT, layout=DEMO_LAYOUT,
        revision=f"{rev} ({what})", page_size=page_size, seat_pages=seat_pages, call=call)


def _demo_folder_made(folder: str | Path) -> Path:
    out = Path(folder)
    try:
        out.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise InputError(out, f"cannot create the output folder ({exc.strerror})",
                         "choose another --out folder") from None
    return out


def write_demo(folder: str | Path, *, page_size: str = "a4",
               seat_pages: str = "governing") -> list[tuple[str, str, Verdict, int, Path, Path]]:
    """Check both revisions of the bundled demo layout and write their reports, the two at
    the same time (revision B in a forked process, revision A here).

    Parameters
    ----------
    folder : where the PDFs and their JSON sidecars go (made when missing).
    page_size, seat_pages : as for :func:`check_layout`.

    Returns
    -------
    list of (revision, what changed, verdict, number of findings, PDF path, JSON path)

    Raises
    ------
    InputError
        When the folder cannot be made or an output cannot be written.
    """
    out = _demo_folder_made(folder)
    paths = [check_output(out / f"thistle_comet_rev{rev}.pdf") for rev, _ in DEMO_REVISIONS]
    for path in paths:
        check_output(report_sidecar(path, None))
    _report()  # imported once, before the fork (the child would import it again)
    import scipy.interpolate  # noqa: F401  the simulation's (0.5-0.65 s of CPU), likewise
    # revision A (the failing one, the longer report) is the critical path: revision B
    # runs at a lower priority and fills the core that A's single-threaded PDF leaves idle
    later = [_Forked(_demo_summary, i, page_size, seat_pages, paths[i], nice=DEMO_CHILD_NICE)
             for i in range(1, len(DEMO_REVISIONS))]
    try:
        done = [_demo_summary(0, page_size, seat_pages, paths[0])] + [f.result() for f in later]
    finally:  # interrupted or failed: no child is left behind
        for forked in later:
            forked.stop()
    written = []
    for path, (rev, what, verdict, count, pdf, json_text) in zip(paths, done):
        # the bundled inputs are CSV and TOML files: the PDFs and JSONs cannot be one of them
        pdf_path, json_path = _write_pair(path, lambda pdf=pdf: pdf, None, json_text, None)
        written.append((rev, what, verdict, count, pdf_path, json_path))
    return written


def _demo_summary(index: int, page_size: str, seat_pages: str, pdf: Path):
    """One demo revision checked: (revision, what changed, verdict, number of findings, PDF
    bytes, JSON text), all of which pickle (it may run in a forked process); its call writes
    the report to ``pdf``."""
    rev, what, check = _demo_check(index, page_size, seat_pages, pdf)
    return (rev, what, check.verdict, len(check.findings), _report().check_report_pdf(check),
            to_json(check.document()))


def run_demo(*, page_size: str = "a4", seat_pages: str = "governing") -> DemoRun:
    """Check both revisions of the bundled demo layout (a fictional park and layout).

    Parameters
    ----------
    page_size : str, optional
        ``"a4"`` or ``"letter"`` for the reports.
    seat_pages : str, optional
        Seat pages of figures, as for :func:`check_layout`.

    Returns
    -------
    DemoRun
        Revision A (circular loop) fails at the bottom of its loop; revision B (teardrop
        loop) passes. Each revision's call is the ``checker check`` command that reproduces
        it.

    Examples
    --------
    >>> from checker import run_demo
    >>> demo = run_demo()
    >>> [(rev, str(check.verdict)) for rev, _, check in demo.revisions]
    [('A', 'fail'), ('B', 'pass')]
    """
    revisions = [_demo_check(i, page_size, seat_pages) for i in range(len(DEMO_REVISIONS))]
    return DemoRun(tuple(revisions))

"""The report's HTML: a context built from findings and signals, rendered by jinja2.

All user text goes through jinja2's autoescape. The figures are drawn in worker processes
while weasyprint lays the document out: each figure's size is known before it is drawn, so
the HTML holds its place (:mod:`checker.report.placing`).
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass

import jinja2
import markupsafe
import numpy as np

from .. import __version__
from ..caution import CAUTION, CAUTION_SHORT
from ..conditioning import onset_rate
from ..documents import MARGIN_CONVENTION, STATION_NOTE, margin_text, with_unit
from ..events import RECORD_GAP_S, Event, event_of_finding, explain_events, group_findings
from ..limits import AXES, REST, contains
from ..rules import Evaluation, seat_exposures
from ..terminal import shorten
from . import figures
from .aids_figures import aids_context, aids_jobs, job_height
from .pdf import ASSET_SCHEME, TEMPLATES, frozen_heap
from .placing import PdfFigure, figure_form

PAGE_SIZES = {"a4": "A4", "letter": "letter"}


METHOD = [
    "Geometry: the centerline samples are joined by a degree-5 B-spline (scipy), "
    "parameterized by its own arc length (chord length refined twice), fitted within half "
    "the coordinate grid of a rounded file unless a smoothing tolerance is given, and "
    "re-sampled on a uniform station grid. "
    "Tangent and curvature come from the spline's derivatives. The rider frame follows ISO "
    "8855 (x forward, y left, z up through the spine); roll 0 is world up projected normal "
    "to the tangent, its sign kept continuous, and carried across near-vertical tangents by "
    "a rotation-minimizing frame (double reflection) with a smooth bridge.",
    "Dynamics: all cars share one speed. The specific kinetic energy v^2/2 is integrated "
    "against the lead car's station (Heun's method) with gravity at each car's own station, "
    "rolling resistance proportional to each car's wheel load (including v^2 times "
    "curvature), aerodynamic drag 0.5 rho CdA v^2 on the air speed, and the powered "
    "sections (lift, launch, brakes) as clamps of the speed.",
    "Rider signals: each seat is a fixed offset from its car's reference point; its "
    "acceleration is the second time derivative of that point's path, including the frame's "
    "rotation (rigid-body kinematics). The reported value is specific force a - g in rider "
    "axes, in units of g0 = 9.80665 m/s^2: a rider at rest in a level seat reads Gz = +1.",
    "Rules: signals are filtered as the limit set states. Duration limits compare the "
    "exposure curve (for every duration, the highest level sustained at least that long) "
    "with the limit curve; combined-axis limits test each filtered sample against the "
    "envelope; onset limits compare the rate of change of the filtered signal.",
]


@dataclass(frozen=True)
class ReportMeta:
    """What the report says about the run besides its findings.

    Attributes
    ----------
    project, layout, revision : str
        Labels printed on the title page.
    page_size : str
        ``"a4"`` or ``"letter"``.
    command : str
        The call that reproduces the report.
    inputs : tuple of (str, str)
        (file, SHA-256) of every input file.
    parameters : tuple of (str, str)
        (name, value with unit) of every parameter.
    method : tuple of str
        Paragraphs of the method section (default :data:`METHOD`, the simulation's).
    stall : str or None
        Where the train stopped short, or None.
    date : str
        ISO date printed on the report (empty: today).
    sweep : checker.sweep.Sweep or None
        Adds the governing and matrix tables when given.
    seat_pages : str
        Seat pages of figures: ``"all"``, ``"governing"`` (and seats that differ) or
        ``"none"`` (see :func:`seats_to_show`).
    recorded : bool
        A recorded history: the appendix has no case or station column and the report
        uses the measured-data wording.
    sensitivity : checker.sensitivity.Sensitivity or None
        Adds its table and figure to the design aids when given.
    """

    project: str = "(not given)"
    layout: str = "(not given)"
    revision: str = "(not given)"
    page_size: str = "a4"
    command: str = "checker"
    inputs: tuple[tuple[str, str], ...] = ()
    parameters: tuple[tuple[str, str], ...] = ()
    method: tuple[str, ...] = tuple(METHOD)
    stall: str | None = None
    date: str = ""
    sweep: object | None = None
    seat_pages: str = "governing"  # "all", "governing" (and seats that differ) or "none"
    recorded: bool = False  # a recorded history: measured-data method and caution
    sensitivity: object | None = None  # checker.sensitivity.Sensitivity: its table and figure


def _env() -> jinja2.Environment:
    return jinja2.Environment(loader=jinja2.FileSystemLoader(str(TEMPLATES)),
                              autoescape=True, undefined=jinja2.StrictUndefined)


def _fmt(value, digits: int = 2) -> str:
    if value is None:
        return "-"
    return f"{value:.{digits}f}"


def _limits_context(limits) -> dict:
    return {
        "title": limits.title, "represents": limits.represents or "-",
        "revision": limits.revision or "-", "illustrative": limits.illustrative,
        "filter": limits.filter.describe(),
        "duration": [{"name": d.name, "interpolation": d.interpolation,
                      "points": [(f"{a:g}", f"{b:g}") for a, b in zip(d.durations_s,
                                                                      d.levels_g)]}
                     for d in limits.duration],
        "combined": [{"name": c.name, "axes": " / ".join(c.axes), "source": c.source,
                      "vertices": _describe_vertices(c)} for c in limits.combined],
        "onset": [{"axis": o.axis, "limit": f"{o.limit_g_per_s:g}"} for o in limits.onset],
    }


def _describe_vertices(env) -> str:
    v = env.vertices
    if env.source == "ellipse":
        return (f"quadrant-wise ellipse through the single-axis limits: {env.axes[0]} from "
                f"{v[:, 0].min():.2f} to {v[:, 0].max():.2f} g, {env.axes[1]} from "
                f"{v[:, 1].min():.2f} to {v[:, 1].max():.2f} g ({len(v)} vertices)")
    return "vertices: " + "; ".join(f"({a:.2f}, {b:.2f})" for a, b in v)


# figure titles, printed by the template above each figure (see figures.TITLE_IN)
HISTORIES_CAPTION = "Seat {seat}: filtered (colour) and raw (grey); shaded: findings"
EXPOSURE_CAPTION = "Exposure: highest level sustained for at least each duration, against the limit"
COMBINED_CAPTION = "Combined axes (filtered) against the envelopes; red: outside"


def css_string(text: str, limit: int = 90) -> str:
    """``text`` as the inside of a CSS string (a running header): backslashes and quotes
    escaped, line breaks as spaces, cut to ``limit`` characters.

    Parameters
    ----------
    text : str
        Any text (a layout or file name given by the user).
    limit : int, optional
        Longest text kept [characters].

    Returns
    -------
    markupsafe.Markup
        Safe between the double quotes of a CSS ``content`` value inside the page's
        ``<style>`` element: ``\\``, ``"``, ``<``, ``>`` and ``&`` as CSS escapes (so that
        jinja2 leaves it as it is and no text can close the element).
    """
    flat = " ".join(shorten(text, limit).split())
    for char in "\\\"<>&":
        flat = flat.replace(char, f"\\{ord(char):x} ")
    return markupsafe.Markup(flat)


def limit_name(limits) -> str:
    """What a figure's legend calls a limit: ``"illustrative limit"`` for an example set.

    Parameters
    ----------
    limits : LimitSet
        The limit set drawn.

    Returns
    -------
    str
        ``"illustrative limit"`` or ``"limit"``.
    """
    return "illustrative limit" if limits.illustrative else "limit"


def _seat_section(result, worst: bool, recorded: bool) -> dict:
    """The template context of one seat's page, its figures still to be drawn."""
    who = result.seat if recorded else f"{result.seat}, case {result.case}"
    return {"seat": result.seat, "case": result.case, "count": len(result.findings),
            "verdict": result.outcome, "worst": worst,
            "captions": {"histories": HISTORIES_CAPTION.format(seat=who),
                         "exposure": EXPOSURE_CAPTION, "combined": COMBINED_CAPTION}}


def _seat_figure_jobs(result, signal, limits) -> dict:
    """``{key: (function, args, height [in])}`` of a seat page's figures (time histories,
    exposure curves, combined axes), each only where it has something to draw."""
    spans = [(f.t_start, f.t_end, f.axis) for f in result.findings]
    raw = np.asarray(signal.g) if signal is not None else None
    jobs = {"histories": (figures.time_histories,
                          (result.t, result.filtered, raw, spans, ""),
                          figures.time_histories_height(False))}
    if limits.duration and len(result.t) >= 2:
        jobs["exposure"] = (_exposure_figure, (result, limits),
                            figures.exposure_curves_height(False))
    if limits.combined:
        jobs["combined"] = (_combined_figure, (result.filtered, limits),
                            figures.combined_scatter_height(False))
    return jobs


def _exposure_figure(result, limits) -> bytes:
    """A seat's exposure curves against its duration limits (drawn in a worker)."""
    curves = []
    exposures = seat_exposures(result, limits)  # only for the seats drawn
    for rule in limits.duration:
        exp = exposures[rule.name]
        curves.append({"name": rule.name, "axis": rule.axis, "durations": exp.durations_s,
                       "levels": exp.levels_g,
                       "limit_durations": np.append(rule.durations_s,
                                                    max(exp.durations_s[-1],
                                                        rule.durations_s[-1])),
                       "limit_levels": np.append(rule.levels_g, rule.levels_g[-1]),
                       "step": rule.interpolation == "step",
                       "limit_label": limit_name(limits)})
    return figures.exposure_curves(curves, "")


def _combined_figure(filtered: np.ndarray, limits) -> bytes:
    """A seat's filtered axis pairs against each combined envelope (drawn in a worker)."""
    panels = []
    for env in limits.combined:
        ia, ib = AXES.index(env.axes[0]), AXES.index(env.axes[1])
        pts = filtered[:, [ia, ib]]
        panels.append({"name": env.name, "axes": env.axes, "points": pts,
                       "vertices": env.vertices, "outside": ~contains(env.vertices, pts)})
    return figures.combined_scatter(panels, "")


def ride_statistics(ride, evaluation: Evaluation) -> list[tuple[str, str]]:
    """Length, heights, speed, time and time below 0 g vertical (filtered, worst seat).

    Parameters
    ----------
    ride : RideResult or None
        The simulated ride (geometry and motion), or None for a recorded history.
    evaluation : Evaluation
        The check; only seats with their filtered signal count.

    Returns
    -------
    list of (str, str)
        (label, value with unit): track length [m], height range [m], top speed [m/s and
        km/h] and ride time [s] for a ride; the largest total time any seat spends with
        filtered Gz < 0 [s] (samples below 0 times the median step, not the longest single
        stretch); for a record the sample rates [Hz] and seats checked, for a ride the
        number of seat and case results.
    """
    stats = []
    if ride is not None:
        geo, motion = ride.geometry, ride.motion
        z = geo.position[:, 2]
        stats += [("Track length", f"{geo.length:.1f} m"),
                  ("Height range", f"{z.min():.1f} m to {z.max():.1f} m "
                                   f"({np.ptp(z):.1f} m)"),
                  ("Top speed", f"{motion.v.max():.2f} m/s ({motion.v.max() * 3.6:.1f} km/h)"),
                  ("Ride time", f"{motion.duration_s:.1f} s ({motion.end_reason})")]
    below = [(float(np.sum(s.filtered[:, 2] < 0.0)) * float(np.median(np.diff(s.t))), s.seat,
              s.case) for s in evaluation.seats if s.filtered is not None and len(s.t) > 1]
    if below:
        longest, seat, case = max(below)
        several = len({s.case for s in evaluation.seats}) > 1
        stats.append(("Time below 0 g vertical (filtered Gz < 0)",
                      f"{longest:.2f} s at most (seat {seat}"
                      + (f", case {case})" if several else ")")))
    if ride is None:
        rates = sorted({round(1.0 / float(np.median(np.diff(s.t))), 6) for s in evaluation.seats
                        if s.t is not None and len(s.t) > 1})
        if rates:
            stats.insert(0, ("Sample rate", ", ".join(f"{r:g} Hz" for r in rates)))
        stats.append(("Seats checked", str(len(evaluation.seats))))
    else:
        stats.append(("Seats x load cases checked", str(len(evaluation.seats))))
    return stats


def _worst_rows(evaluation: Evaluation, signals: dict) -> list[dict]:
    rows = []
    for i, axis in enumerate(AXES):
        for label, pick in ((f"{axis.capitalize()} lowest", np.argmin),
                            (f"{axis.capitalize()} highest", np.argmax)):
            best = None
            for s in evaluation.seats:
                if s.filtered is None:
                    continue
                j = int(pick(s.filtered[:, i]))
                v = float(s.filtered[j, i])
                score = -v if pick is np.argmin else v
                if best is None or score > best[0]:
                    best = (score, v, s, j)
            if best is None:
                continue
            _, v, s, j = best
            sig = signals.get((s.seat, s.case))
            station = getattr(sig, "s", None) if sig is not None else None
            rows.append({"label": label, "value": f"{v:.2f}", "seat": s.seat, "case": s.case,
                         "t": f"{s.t[j]:.2f}",
                         "s": f"{station[j]:.1f}" if station is not None else "-"})
    return rows


def _call(job):
    function, args = job
    return function(*args)


def _draw_form(job):
    """A figure job drawn and taken apart for placing, in the worker (see
    :func:`checker.report.placing.figure_form`)."""
    return figure_form(_call(job))


FIGURES_PER_WORKER = 10


def start_figure_jobs(jobs: list) -> list[PdfFigure]:
    """Start drawing figures in worker processes and return each at once with its size.

    A figure's PDF is waited for only when asked for (weasyprint lays the document out
    meanwhile). Workers are forked with the heap frozen (see
    :func:`checker.report.pdf.frozen_heap`); the pool is shut down when the last job ends.
    On a single core the figures are drawn here, at once.

    Parameters
    ----------
    jobs : list of (callable, tuple, float)
        ``(function, args, height)``: ``function(*args)`` draws a figure of the report's
        width (:data:`checker.report.figures.WIDTH_IN`) and ``height`` [in] as PDF bytes.

    Returns
    -------
    list of PdfFigure
        One per job, in order.
    """
    width_pt = figures.WIDTH_IN * 72.0
    # One worker per FIGURES_PER_WORKER figures, at most one per core: a few figures take a
    # single worker less time than weasyprint's layout beside it, and a second worker would
    # only cost its start (about 0.3 s of CPU) and slow the layout down.
    workers = min(-(-len(jobs) // FIGURES_PER_WORKER), os.cpu_count() or 1)
    if workers < 1 or (os.cpu_count() or 1) < 2:
        return [PdfFigure(width_pt, height * 72.0, _call((function, args)))
                for function, args, height in jobs]
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    from ..parentwatch import watch_parent

    with frozen_heap():  # the workers are forked at the first submission
        pool = ProcessPoolExecutor(
            workers, mp_context=multiprocessing.get_context("fork"), initializer=watch_parent,
            initargs=(os.getpid(),))
        futures = [pool.submit(_draw_form, (function, args)) for function, args, _ in jobs]
    pool.shutdown(wait=False)  # the submitted jobs still run to the end
    return [PdfFigure(width_pt, height * 72.0, future.result)
            for future, (_, _, height) in zip(futures, jobs)]


def _sweep_context(sweep) -> dict | None:
    if sweep is None:
        return None
    seats, cases, cells = sweep.matrix()
    return {
        "cases": [{"n": i + 1, "name": o.case, "findings": len(o.evaluation.findings),
                   "verdict": ("stall" if o.stall else o.verdict),
                   "stall": o.stall or "", "top": f"{o.top_speed_m_s:.2f}"}
                  for i, o in enumerate(sweep.outcomes)],
        "matrix": [{"seat": s, "cells": [cells[(s, c)] for c in cases]} for s in seats],
    }


SEAT_PAGE_MODES = ("all", "governing", "none")


def finding_lines(findings, ids: list[str], recorded: bool = False) -> list[str]:
    """The appendix table of every finding as fixed-width text lines, header first (one text
    line per finding lays out far faster than a table of cells; the template sets each line
    as the one cell of a row, the header in the thead so that it repeats on every page).

    Parameters
    ----------
    findings : list of Finding
        The findings in the order listed (most severe first).
    ids : list of str
        The event id of each finding (same order).
    recorded : bool, optional
        Recorded data: leave out the case and station columns.

    Returns
    -------
    list of str
        Header, then one line per finding: number, event, rule, seat, case, start [s],
        station [m], duration [s], peak, limit and margin with their units (long names cut).
    """
    # seat and case columns as wide as their longest name, within what the page holds
    seat_w = min(max([4, *(len(f.seat) for f in findings)]), 14)
    case_w = min(max([4, *(len(f.case) for f in findings)]), 19)
    head = (f"{'#':>4} {'event':<5} {'rule':<22} {'seat':<{seat_w}} "
            + ("" if recorded else f"{'case':<{case_w}} ")
            + f"{'start [s]':>9} " + ("" if recorded else f"{'station [m]':>11} ")
            + f"{'dur. [s]':>8} {'peak':>10} {'limit':>10} {'margin':>10}")
    lines = [head]
    for i, f in enumerate(findings):
        peak = "0 m/s" if f.kind == "stall" else with_unit(f.peak_g, f.peak_unit)
        limit = "-" if f.kind == "stall" else with_unit(f.limit_g, f.peak_unit)
        lines.append(
            f"{i + 1:>4} {ids[i]:<5} {shorten(f.rule, 22):<22} {shorten(f.seat, seat_w):<{seat_w}} "
            + ("" if recorded else f"{shorten(f.case, case_w):<{case_w}} ")
            + f"{f.t_start:>9.2f} " + ("" if recorded else f"{_fmt(f.s_worst_m, 1):>11} ")
            + f"{f.duration_s:>8.3f} {peak:>10} {limit:>10} {margin_text(f):>10}")
    return lines


def seats_to_show(events: list[Event], evaluation: Evaluation, mode: str) -> list:
    """Seat results that get a page of figures.

    Parameters
    ----------
    events : list of Event
        The run's events, most severe first.
    evaluation : Evaluation
        The check; only seats that carry their filtered signal can be shown.
    mode : str
        ``"governing"``: the governing seat of each event, then each other seat whose set of
        events is not contained in that of a seat already shown (its findings differ).
        ``"all"``: every seat with a finding. ``"none"``: no seat page. Any other value is
        taken as ``"governing"``.

    Returns
    -------
    list of SeatResult
        In page order. Without any event (and unless ``"none"``), the most stressed seat
        (largest departure from the rest level on any axis), so that a passing report still
        shows its signals.
    """
    if mode == "none":
        return []
    drawable = [s for s in evaluation.seats if s.filtered is not None]
    if not events:
        if not drawable:
            return []
        return [max(drawable, key=lambda s: max(abs(s.worst[a][k] - REST[a])
                                                 for a in AXES for k in (0, 1)))]
    with_findings = [s for s in drawable if s.findings]
    if mode == "all":
        return with_findings
    ids = event_of_finding(events, len(evaluation.findings))
    signature: dict[tuple, set] = {}
    for f, event_id in zip(evaluation.findings, ids):
        signature.setdefault((f.seat, f.case), set()).add(event_id)
    index = {(s.seat, s.case): s for s in with_findings}
    chosen: list = []
    for e in events:
        seat = index.get((e.governing.seat, e.governing.case))
        if seat is not None and seat not in chosen:
            chosen.append(seat)
    shown = [signature.get((c.seat, c.case), set()) for c in chosen]
    for s in with_findings:
        sig = signature.get((s.seat, s.case), set())
        if s not in chosen and not any(sig <= other for other in shown):
            chosen.append(s)
            shown.append(sig)
    return chosen


def _event_context(event: Event, evaluation: Evaluation, signals: dict, seat_count: int,
                   case_count: int, recorded: bool = False) -> dict:
    g = event.governing
    none = ("no computed remedy: recorded data carry no geometry" if event.s_start_m is None
            else "no computed remedy for this rule")
    if event.kind == "stall":
        where = f"{event.where} (lead car)"
    else:
        where = event.where
    return {
        "id": event.id, "rule": event.rule, "kind": event.kind, "where": where,
        "place": event.place, "seats": f"{len(event.seats)} of {seat_count}",
        "cases": f"{len(event.cases)} of {case_count}",
        "case_names": ", ".join(event.cases),
        "margin": margin_text(event),
        "peak": "speed 0 m/s" if event.kind == "stall" else with_unit(g.peak_g, g.peak_unit),
        # an onset limit holds both ways (|dG/dt|), the peak keeps its sign
        "limit": "-" if event.kind == "stall" else (
            "\u00b1" + with_unit(abs(g.limit_g), g.peak_unit) if event.kind == "onset"
            else with_unit(g.limit_g, g.peak_unit)),
        "governing": g.seat if recorded else f"{g.seat} / {g.case}",
        "findings": len(event.members),
        "t": f"{event.t_start:.2f}-{event.t_end:.2f} s",
        "s_worst": _fmt(g.s_worst_m, 1), "s_motion": _fmt(g.s_motion_m, 1),
        "s_start": _fmt(g.s_start_m, 1),
        "delay": f"{g.group_delay_s:.3f}",
        "remedy": event.remedy.text if event.remedy is not None else none,
        # page 1's table: the column heading and the note above it say "first estimate" once
        "remedy_short": event.remedy.suggestion if event.remedy is not None else none,
        "message": g.detail, "attitude": g.attitude,
        "window": "", "window_caption": _window_caption(event, recorded),
    }


def _window_caption(event: Event, recorded: bool = False) -> str:
    """The title of an event's time window (printed above the figure)."""
    g = event.governing
    return f"{event.id} {event.rule}: seat {g.seat}" + ("" if recorded else f", case {g.case}")


def _event_figure_job(event: Event, evaluation: Evaluation, signals: dict):
    """(function, args, height [in]) drawing the zoomed time window (and dG/dt for onset) of
    the event's governing seat, or None when there is nothing to draw."""
    g = event.governing
    if event.kind == "stall":
        return None
    seat = next((s for s in evaluation.seats if (s.seat, s.case) == (g.seat, g.case)
                 and s.filtered is not None), None)
    if seat is None:
        return None
    raw_signal = signals.get((g.seat, g.case))
    raw = np.asarray(raw_signal.g) if raw_signal is not None else None
    axes = [AXES.index(a) for a in g.axis.split("+") if a in AXES]
    span = (g.t_start, g.t_end)
    name = limit_name(evaluation.limits)
    limits = [(f"{name} {g.limit_g:.2f} g for {g.duration_s:.3g} s", g.limit_g)] \
        if event.kind == "duration" else []
    onset = None
    if event.kind == "onset" and axes:
        onset = (onset_rate(seat.filtered[:, axes[0]], seat.t), abs(g.limit_g))
    window = (seat.t >= span[0] - 2.0) & (seat.t <= span[1] + 2.0)  # only what is drawn
    if onset is not None:
        onset = (onset[0][window], onset[1])
    return (figures.event_window, (seat.t[window], seat.filtered[window],
                                   None if raw is None else raw[window], axes, span, limits,
                                   "", 1.5, onset, name),
            figures.event_window_height(onset is not None, False))


def build_html(evaluation: Evaluation, signals: dict, ride, meta: ReportMeta,
               events: list[Event] | None = None) -> tuple[str, dict[str, PdfFigure]]:
    """The whole report as HTML with inline CSS, and its figures by asset name.

    The figures are drawn in worker processes (see :func:`start_figure_jobs`) and still
    being drawn when this returns: each waits for its drawing only when its PDF is asked for
    (by :func:`checker.report.pdf.render_pdf`, after the layout).

    Parameters
    ----------
    evaluation : Evaluation
        The check.
    signals : dict
        ``{(seat, case): signal}`` with the raw ``g`` (shape (n, 3) [g]) and optionally ``s``
        for the raw traces.
    ride : RideResult or None
        The ride with ``geometry`` and ``motion`` for the layout views, or None.
    meta : ReportMeta
        Labels, provenance and options of the report.
    events : list of Event or None, optional
        The run's events (grouped and explained here from the findings when not given).

    Returns
    -------
    html : str
        The report; figures are referenced as ``checker-asset:NAME`` URLs.
    assets : dict of str to PdfFigure
        The figures by asset name, for :class:`checker.report.pdf.TemplatesOnlyFetcher`.
    """
    env = _env()
    limits = evaluation.limits
    findings = evaluation.findings
    if events is None:
        events = explain_events(group_findings(findings))
    seat_names = sorted({s.seat for s in evaluation.seats})
    case_names = sorted({s.case for s in evaluation.seats})
    seat_rows = [{"seat": s.seat, "case": s.case, "count": len(s.findings),
                  "verdict": s.outcome} for s in evaluation.seats]
    assets: dict[str, PdfFigure] = {}

    def asset(figure: PdfFigure | None) -> str:
        if figure is None:
            return ""
        name = f"figure{len(assets) + 1}.pdf"
        assets[name] = figure
        return f"{ASSET_SCHEME}:{name}"

    event_rows = [_event_context(e, evaluation, signals, len(seat_names), len(case_names),
                                 meta.recorded) for e in events]
    event_jobs = [_event_figure_job(e, evaluation, signals) for e in events]
    chosen = seats_to_show(events, evaluation, meta.seat_pages)
    governs: dict[tuple, list[str]] = {}
    for e in events:
        governs.setdefault((e.governing.seat, e.governing.case), []).append(e.id)
    jobs = []
    if ride is not None:  # the longest figure first, so that the cores finish together
        geo = ride.geometry
        jobs.append((figures.layout_views, (
            geo.position, geo.s, [(e.governing.s_worst_m, e.rule) for e in events
                                  if e.governing.s_worst_m is not None],
            50 if geo.length < 800 else 100, "", (ride.motion.s, ride.motion.v),
            geo.roll_deg), figures.layout_views_height(True, geo.roll_deg is not None)))
    sections, section_jobs = [], []
    for s in chosen:
        sections.append(_seat_section(s, False, meta.recorded))
        section_jobs.append(_seat_figure_jobs(s, signals.get((s.seat, s.case)), limits))
        jobs += section_jobs[-1].values()
    windows_at = len(jobs)
    jobs += [j for j in event_jobs if j is not None]
    aids_at = len(jobs)
    aids, aid_jobs = aids_jobs(evaluation, meta.sensitivity)
    jobs += [(function, args, job_height(function, args)) for function, args in aid_jobs]
    drawn = start_figure_jobs(jobs)  # drawn on every core while the PDF is laid out
    layout_drawn = drawn[0] if ride is not None else None
    windows = iter(drawn[windows_at:aids_at])
    for row, job in zip(event_rows, event_jobs):
        row["window"] = asset(next(windows)) if job is not None else ""
    drawn_sections = iter(drawn[int(ride is not None):windows_at])
    for section, figure_jobs in zip(sections, section_jobs):
        for key in ("histories", "exposure", "combined"):
            section[key] = asset(next(drawn_sections)) if key in figure_jobs else ""
        section["governs"] = ", ".join(governs.get((section["seat"], section["case"]), []))
    layout_svg = asset(layout_drawn)
    station_every = 50 if ride is not None and ride.geometry.length < 800 else 100
    ids = event_of_finding(events, len(findings))
    rows = finding_lines(findings, ids, recorded=meta.recorded)
    delays = [f.group_delay_s for f in findings if f.kind != "stall"]
    css = env.get_template("report.css").render(
        page_size=PAGE_SIZES[meta.page_size],
        footer_left=f"checker: {CAUTION_SHORT}",
        header_left=css_string(meta.layout + ("" if meta.revision in ("", "(not given)")
                                              else f", revision {meta.revision}")))
    stall_messages = []
    for e in events:
        if e.kind == "stall":  # each case where its own train stopped
            where: dict[str, str] = {}
            for m in e.members:
                where.setdefault(findings[m].case, findings[m].detail.split("; this seat")[0])
            stall_messages.append(f"{e.id}: " + "; ".join(f"case {case}: {text}"
                                                          for case, text in where.items()))
    return env.get_template("report.html.j2").render(
        title=f"Self-check {meta.layout}", css=css, project=meta.project, layout=meta.layout,
        revision=meta.revision, date=meta.date or _dt.date.today().isoformat(),
        version=__version__, limits=_limits_context(limits), caution=CAUTION,
        caution_short=CAUTION_SHORT,
        verdict=evaluation.verdict, events=event_rows, findings=rows,
        finding_count=len(findings), seat_count=len(seat_names), case_count=len(case_names),
        seat_rows=seat_rows, review_items=list(evaluation.warnings),
        stats=ride_statistics(ride, evaluation), worst=_worst_rows(evaluation, signals),
        layout_svg=layout_svg, station_every=station_every, seat_sections=sections,
        seat_pages=meta.seat_pages, method=list(meta.method), parameters=list(meta.parameters),
        inputs=[{"file": f, "sha256": h} for f, h in meta.inputs], command=meta.command,
        stalls=stall_messages, sweep=_sweep_context(meta.sweep), recorded=meta.recorded,
        ride_case=meta.sweep.ride_case if meta.sweep is not None else None,
        margin_convention=MARGIN_CONVENTION, station_note=STATION_NOTE,
        record_gap=f"{RECORD_GAP_S:g}",
        group_delay=f"{max(delays):.3f}" if delays else None,
        filter=limits.filter.describe(),
        aids=aids_context(aids, drawn[aids_at:], asset)), assets

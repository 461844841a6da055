"""The report's HTML: a context built from findings and signals, rendered by jinja2.

All user text goes through jinja2's autoescape; only the SVG made here is marked safe.
"""

from __future__ import annotations

import datetime as _dt
import os
from dataclasses import dataclass

import jinja2
import numpy as np

from .. import __version__
from ..caution import CAUTION, CAUTION_SHORT
from ..limits import AXES, REST, contains
from ..rules import Evaluation
from . import figures
from .pdf import ASSET_SCHEME, TEMPLATES

PAGE_SIZES = {"a4": "A4", "letter": "letter"}


METHOD = [
    "Geometry: the centerline samples are joined by a degree-5 B-spline (scipy), "
    "parameterized by chord length and re-sampled by arc length on a uniform station grid. "
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
    project, layout, revision : labels printed on the title page.
    page_size : ``"a4"`` or ``"letter"``.
    command : the call that reproduces the report.
    inputs : (file, SHA-256) of every input file.
    parameters : (name, value with unit) of every parameter.
    method : paragraphs of the method section.
    stall : where the train stopped short, or None.
    date : ISO date printed on the report (default today).
    sweep : :class:`checker.sweep.Sweep` to add the governing and matrix tables, or None.
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


def _seat_section(result, signal, limits, worst: bool) -> dict:
    """Figures of one seat (runs in a worker process when there are several seats)."""
    spans = [(f.t_start, f.t_end, f.axis) for f in result.findings]
    raw = np.asarray(signal.g) if signal is not None else None
    histories = figures.time_histories(result.t, result.filtered, raw, spans,
                                       f"Seat {result.seat}, case {result.case}: filtered "
                                       "(colour) and raw (grey); shaded: findings")
    curves = []
    for rule in limits.duration:
        exp = result.exposures.get(rule.name)
        if exp is None:
            continue
        curves.append({"name": rule.name, "axis": rule.axis, "durations": exp.durations_s,
                       "levels": exp.levels_g,
                       "limit_durations": np.append(rule.durations_s,
                                                    max(exp.durations_s[-1],
                                                        rule.durations_s[-1])),
                       "limit_levels": np.append(rule.levels_g, rule.levels_g[-1]),
                       "step": rule.interpolation == "step"})
    exposure = figures.exposure_curves(curves, "Exposure: highest level sustained for at "
                                       "least each duration, against the limit") if curves else ""
    panels = []
    for env in limits.combined:
        ia, ib = AXES.index(env.axes[0]), AXES.index(env.axes[1])
        pts = result.filtered[:, [ia, ib]]
        panels.append({"name": env.name, "axes": env.axes, "points": pts,
                       "vertices": env.vertices, "outside": ~contains(env.vertices, pts)})
    combined = figures.combined_scatter(panels, "Combined axes (filtered) against the "
                                        "envelopes; red: outside") if panels else ""
    return {"seat": result.seat, "case": result.case, "count": len(result.findings),
            "verdict": result.verdict, "worst": worst, "histories": histories,
            "exposure": exposure, "combined": combined}


def ride_statistics(ride, evaluation: Evaluation) -> list[tuple[str, str]]:
    """Length, heights, speed, time and time below 0 g vertical (filtered, worst seat)."""
    stats = []
    if ride is not None:
        geo, motion = ride.geometry, ride.motion
        z = geo.position[:, 2]
        stats += [("Track length", f"{geo.length:.1f} m"),
                  ("Height range", f"{z.min():.1f} m to {z.max():.1f} m "
                                   f"({np.ptp(z):.1f} m)"),
                  ("Top speed", f"{motion.v.max():.2f} m/s ({motion.v.max() * 3.6:.1f} km/h)"),
                  ("Ride time", f"{motion.duration_s:.1f} s ({motion.end_reason})")]
    below = [(float(np.sum(s.filtered[:, 2] < 0.0)) * float(np.median(np.diff(s.t))), s.seat)
             for s in evaluation.seats if s.filtered is not None and len(s.t) > 1]
    if below:
        longest = max(below)
        stats.append(("Time below 0 g vertical (filtered Gz < 0)",
                      f"{longest[0]:.2f} s at most (seat {longest[1]})"))
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
            rows.append({"label": label, "value": f"{v:.2f}", "seat": s.seat,
                         "t": f"{s.t[j]:.2f}",
                         "s": f"{station[j]:.1f}" if station is not None else "-"})
    return rows


def _section_job(args):
    result, signal, limits, worst = args
    return _seat_section(result, signal, limits, worst)


def _render_sections(jobs, signals: dict, limits) -> list[dict]:
    """Seat figures, on both cores when there are several seats (matplotlib is the cost)."""
    work = [(s, _lean(signals.get((s.seat, s.case))), limits, worst) for s, worst in jobs]
    if len(work) < 3:
        return [_section_job(w) for w in work]
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor

    workers = min(len(work), max(1, (os.cpu_count() or 1)))
    with ProcessPoolExecutor(workers, mp_context=multiprocessing.get_context("fork")) as pool:
        return list(pool.map(_section_job, work, chunksize=max(1, len(work) // (4 * workers))))


@dataclass
class _RawSignal:
    g: np.ndarray


def _lean(signal):
    """Only the raw trace travels to a worker."""
    return None if signal is None else _RawSignal(np.asarray(signal.g))


def _sweep_context(sweep) -> dict | None:
    if sweep is None:
        return None
    seats, cases, cells = sweep.matrix()
    return {
        "cases": [{"n": i + 1, "name": o.case, "findings": len(o.evaluation.findings),
                   "verdict": o.verdict,
                   "stall": o.stall or "", "top": f"{o.top_speed_m_s:.2f}"}
                  for i, o in enumerate(sweep.outcomes)],
        "matrix": [{"seat": s, "cells": [cells[(s, c)] for c in cases]} for s in seats],
        "governing": [{"rule": f.rule, "seat": f.seat, "case": f.case, "peak": _fmt(f.peak_g),
                       "limit": _fmt(f.limit_g), "margin": _fmt(f.margin),
                       "station": _fmt(f.s_start_m, 1)} for f in sweep.governing()],
    }


def build_html(evaluation: Evaluation, signals: dict, ride,
               meta: ReportMeta) -> tuple[str, dict[str, str]]:
    """The whole report as HTML with inline CSS, and its SVG figures by asset name.

    signals: {(seat, case): object with raw ``g``, optional ``s``} for the raw traces.
    ride: a ride result with ``geometry`` and ``motion`` for the layout views, or None.
    """
    env = _env()
    limits = evaluation.limits
    findings = evaluation.findings
    counts: dict[str, int] = {}
    for f in findings:
        counts[f.kind] = counts.get(f.kind, 0) + 1
    seat_rows = [{"seat": s.seat, "case": s.case, "count": len(s.findings),
                  "verdict": s.verdict} for s in evaluation.seats]
    worst_seat = None
    if findings:
        top = findings[0]
        worst_seat = next(s for s in evaluation.seats if (s.seat, s.case) == (top.seat,
                                                                               top.case))
    elif evaluation.seats:
        worst_seat = max(evaluation.seats, key=lambda s: max(
            abs(s.worst[a][k] - REST[a]) for a in AXES for k in (0, 1)))
    jobs = []
    if worst_seat is not None and worst_seat.filtered is not None:
        jobs.append((worst_seat, True))
    jobs += [(s, False) for s in evaluation.seats
             if s.findings and s is not worst_seat and s.filtered is not None]
    sections = _render_sections(jobs, signals, limits)
    assets: dict[str, str] = {}

    def asset(svg: str) -> str:
        if not svg:
            return ""
        name = f"figure{len(assets) + 1}.svg"
        assets[name] = svg
        return f"{ASSET_SCHEME}:{name}"

    for section in sections:
        for key in ("histories", "exposure", "combined"):
            section[key] = asset(section[key])
    layout_svg = ""
    station_every = 100
    if ride is not None:
        geo = ride.geometry
        station_every = 50 if geo.length < 800 else 100
        marks = [(f.s_worst_m, f.rule) for f in findings if f.s_worst_m is not None]
        layout_svg = asset(figures.layout_views(geo.position, geo.s, marks, station_every))
    rows = [{"rule": f.rule, "seat": f.seat, "case": f.case, "t_start": _fmt(f.t_start),
             "station": _fmt(f.s_start_m, 1), "duration": _fmt(f.duration_s, 3),
             "peak": _fmt(f.peak_g), "limit": _fmt(f.limit_g),
             "margin": (f"{100 * f.margin:.1f} %" if f.kind == "combined" else _fmt(f.margin))}
            for f in findings]
    css = env.get_template("report.css").render(
        page_size=PAGE_SIZES[meta.page_size],
        footer_left=f"checker: {CAUTION_SHORT}")
    return env.get_template("report.html.j2").render(
        title=f"Self-check {meta.layout}", css=css, project=meta.project, layout=meta.layout,
        revision=meta.revision, date=meta.date or _dt.date.today().isoformat(),
        version=__version__, limits=_limits_context(limits), caution=CAUTION,
        caution_short=CAUTION_SHORT,
        verdict=evaluation.verdict, findings=rows, counts=sorted(counts.items()),
        seat_rows=seat_rows, review_items=list(evaluation.warnings),
        stats=ride_statistics(ride, evaluation), worst=_worst_rows(evaluation, signals),
        layout_svg=layout_svg, station_every=station_every, seat_sections=sections,
        method=list(meta.method), parameters=list(meta.parameters), inputs=[
            {"file": f, "sha256": h} for f, h in meta.inputs], command=meta.command,
        stall=meta.stall, sweep=_sweep_context(meta.sweep)), assets

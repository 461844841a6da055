"""The comparison PDF: two revisions side by side (HTML by jinja2, PDF by weasyprint)."""

from __future__ import annotations

import datetime as _dt

import numpy as np

from .. import __version__
from ..caution import CAUTION, CAUTION_SHORT
from ..compare import MATCH_DISTANCE_M, MATCH_FRACTION, ChangeState, Comparison
from ..documents import change_head, change_text, margin_text
from ..rules import seat_exposures
from ..terminal import shorten
from . import figures
from .document import PAGE_SIZES, _env, css_string, limit_name, start_figure_jobs
from .pdf import ASSET_SCHEME, TemplatesOnlyFetcher, render_pdf
from .placing import PdfFigure

ELEVATIONS_CAPTION = ("Elevations: height z [m] against station [m], old layout left, new "
                      "layout right.")
FOCUS_CAPTIONS = {
    "histories": "Seat {seat}, case {case}: new filtered (colour) and raw (grey), old filtered "
                 "(dashed); shaded: the new revision's findings",
    "exposure": "Seat {seat}, case {case}, exposure: highest level sustained for at least each "
                "duration; new (solid), old (dotted), limit (black, dashed)",
}


def comparison_pdf(comparison: Comparison, focus: dict, meta: dict) -> bytes:
    """The comparison PDF: both elevations, the focus seat's histories and exposure curves, the
    finding changes and the peaks.

    Parameters
    ----------
    comparison : Comparison
        Peaks and finding changes of the two revisions.
    focus : dict
        ``seat``, ``case``, and for ``"old"`` and ``"new"`` a tuple (SeatResult with its
        filtered signal, raw signal or None, TrackGeometry); the new raw signal is drawn.
    meta : dict
        ``project``, ``old_name``, ``new_name``, ``limits`` (LimitSet), ``cases`` (text),
        ``inputs`` (list of (file, sha256)) and ``command`` are required; ``page_size`` and
        ``stalls`` (list of str) are optional.

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).
    """
    env = _env()
    assets: dict[str, PdfFigure] = {}

    def asset(figure: PdfFigure) -> str:
        name = f"figure{len(assets) + 1}.pdf"
        assets[name] = figure
        return f"{ASSET_SCHEME}:{name}"

    old_res, _, old_geometry = focus["old"]
    new_res, new_raw, new_geometry = focus["new"]
    marks_old = [c.old.s_worst_m for c in comparison.changes
                 if c.old is not None and c.old.s_worst_m is not None]
    marks_new = [c.new.s_worst_m for c in comparison.changes
                 if c.new is not None and c.new.s_worst_m is not None]
    jobs = [(figures.elevation_pair, (
        (old_geometry.s, old_geometry.position[:, 2], marks_old),
        (new_geometry.s, new_geometry.position[:, 2], marks_new),
        (f"old: {meta['old_name']}", f"new: {meta['new_name']}")),
        figures.ELEVATION_PAIR_HEIGHT_IN)]
    elevations_caption = ELEVATIONS_CAPTION + (
        f" Red crosses: the worst point (station of the filtered peak) of each finding of that "
        f"revision ({len(marks_old)} old, {len(marks_new)} new)." if marks_old or marks_new
        else " Neither revision has a finding to mark.")
    spans = [(f.t_start, f.t_end, f.axis) for f in new_res.findings]
    jobs.append((figures.time_histories, (
        new_res.t, new_res.filtered, np.asarray(new_raw.g), spans, "",
        (old_res.t, old_res.filtered, "old")), figures.time_histories_height(False)))
    curves = []
    old_exp = seat_exposures(old_res, meta["limits"])
    new_exp = seat_exposures(new_res, meta["limits"])
    for rule in meta["limits"].duration:
        a, b = old_exp.get(rule.name), new_exp.get(rule.name)
        if a is None or b is None:
            continue
        curves.append({"name": rule.name, "axis": rule.axis, "durations": b.durations_s,
                       "levels": b.levels_g, "overlay_durations": a.durations_s,
                       "overlay_levels": a.levels_g, "overlay_label": "old",
                       "limit_durations": np.append(rule.durations_s,
                                                    max(b.durations_s[-1],
                                                        rule.durations_s[-1])),
                       "limit_levels": np.append(rule.levels_g, rule.levels_g[-1]),
                       "step": rule.interpolation == "step",
                       "limit_label": limit_name(meta["limits"])})
    if curves:
        jobs.append((figures.exposure_curves, (curves, ""), figures.exposure_curves_height(False)))
    # drawn in a worker while weasyprint lays the document out
    elevations, histories, *exposure = (asset(f) for f in start_figure_jobs(jobs))
    exposure = exposure[0] if exposure else ""
    # captions in HTML, naming the seat, so each figure says whose it is on any page
    captions = {key: text.format(seat=focus["seat"], case=focus["case"])
                for key, text in FOCUS_CAPTIONS.items()}
    seat_count = len({p["seat"] for p in comparison.peaks}) or None
    events = [_event_row(c, seat_count) for c in comparison.events]
    changes = [change_text(c) for c in comparison.changes]  # every finding, appendix lines
    rows: dict[str, list] = {}
    for p in comparison.peaks:
        rows.setdefault(p["seat"], []).append(
            f"{p['old']:.2f} &rarr; {p['new']:.2f} ({p['change']:+.2f})")
    peaks = [{"seat": seat, "cells": cells} for seat, cells in rows.items()]
    counts = {k.value: comparison.count(k) for k in ChangeState}
    event_counts = {k.value: comparison.count_events(k) for k in ChangeState}
    css = env.get_template("report.css").render(
        page_size=PAGE_SIZES[meta.get("page_size", "a4")],
        footer_left=f"checker: {CAUTION_SHORT}",
        header_left=css_string(f"{meta['old_name']} against {meta['new_name']}"))
    limits = meta["limits"]
    html = env.get_template("compare.html.j2").render(
        css=css, project=meta["project"], old_name=meta["old_name"],
        new_name=meta["new_name"], date=_dt.date.today().isoformat(), version=__version__,
        limits_title=limits.title, illustrative=limits.illustrative, cases=meta["cases"],
        caution=CAUTION, caution_short=CAUTION_SHORT, old_verdict=comparison.old_verdict,
        new_verdict=comparison.new_verdict, regressed=comparison.regressed, counts=counts,
        stalls=meta.get("stalls", []), changes=changes, events=events,
        event_counts=event_counts, peaks=peaks, elevations=elevations,
        elevations_caption=elevations_caption, captions=captions, changes_head=change_head(),
        focus_seat=focus["seat"], focus_case=focus["case"], histories=histories,
        exposure=exposure, inputs=[{"file": f, "sha256": h} for f, h in meta["inputs"]],
        command=meta["command"], match_distance=f"{MATCH_DISTANCE_M:g}",
        match_fraction=f"{MATCH_FRACTION:g}")
    return render_pdf(html, TemplatesOnlyFetcher(assets=assets))


def _event_side(event) -> dict:
    if event is None:
        return {"id": "", "where": "none", "place": "", "seats": "0"}
    return {"id": event.id, "where": event.where, "place": event.place,
            "seats": str(len(event.seats))}


def _event_row(change, seat_count: int | None) -> dict:
    """A row of the event table: both sides' event, place and seats, and the worst margin
    before and after with its unit (a gone event keeps its old margin and says gone)."""
    old, new = _event_side(change.old), _event_side(change.new)
    seats = f"{old['seats']} &rarr; {new['seats']}" + (f" of {seat_count}" if seat_count
                                                         else "")
    return {"status": change.status, "rule": change.rule, "old": old, "new": new,
            "seats": seats,
            "old_margin": margin_text(change.old) if change.old is not None else "new",
            "new_margin": margin_text(change.new) if change.new is not None else "gone",
            "matched_by": change.matched_by}


def comparison_report_pdf(result) -> bytes:
    """The PDF bytes of a revision comparison.

    Parameters
    ----------
    result : checker.application.LayoutComparison
        A finished comparison made with its focus signals (``plot_signals=True``).

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).

    Raises
    ------
    ValueError
        When the comparison was made without the signals its figures need.
    """
    focus = result.focus
    if focus is None:
        raise ValueError("this comparison was made with plot_signals=False; it has no "
                         "signals to draw")
    return comparison_pdf(result.comparison, {
        "seat": focus.seat, "case": focus.case,
        "old": (focus.old, None, focus.old_geometry),
        "new": (focus.new, focus.new_signal, focus.new_geometry)}, {
        "project": shorten(result.labels.project, 200), "old_name": result.old_name,
        "new_name": result.new_name, "limits": result.limits,
        "cases": ", ".join(result.cases),
        "inputs": [(f.path, f.sha256) for f in result.provenance.inputs],
        "command": shorten(result.provenance.call, 4000), "page_size": result.labels.page_size,
        "stalls": list(result.new_stalls)})

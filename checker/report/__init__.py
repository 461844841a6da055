"""Documents made from results: the check report PDF and the comparison PDF.

This room loads matplotlib, jinja2 and weasyprint; the application layer reaches it only when
a PDF is written.
"""

from __future__ import annotations

from ..rules import sample_rate
from ..terminal import shorten
from .comparison import comparison_report_pdf
from .document import METHOD, ReportMeta, build_html
from .pdf import TemplatesOnlyFetcher, render_pdf

DISPLAY_CHARS = 80  # user text longer than this is cut in the report (the JSON keeps it all)


def recorded_method(rate_hz: float | None, filter_text: str) -> list[str]:
    """Method text of a report on recorded data: what the tool did and did not do.

    Parameters
    ----------
    rate_hz : the record's sample rate [Hz], or None when unknown.
    filter_text : the limit set's filter in words.

    Returns
    -------
    list of str
        The paragraphs of the method section.
    """
    rate = f"{rate_hz:g} Hz" if rate_hz else "the record's own rate"
    return [
        f"Data: instrument data as recorded (or exported) and given to the tool, sampled at "
        f"{rate}, in rider axes as the file states them (x forward, y left, z up through the "
        "spine; specific force in units of g0 = 9.80665 m/s^2). Time stamps were checked "
        "to run forward at a fixed step; irregular or missing stamps are refused, never "
        "resampled.",
        f"Conditioning: {filter_text}, as the limit set states. The tool did not resample, "
        "remove offsets or drift, rotate axes, correct the sensor's mounting or check its "
        "calibration; no simulation and no load case is involved.",
        "Rules: duration limits compare the exposure curve (for every duration, the highest "
        "level sustained at least that long) with the limit curve; combined-axis limits test "
        "each filtered sample against the envelope; onset limits compare the rate of change "
        "of the filtered signal. Recorded data carry no station: places are times.",
    ]


def check_report_pdf(result) -> bytes:
    """The PDF bytes of a check's report.

    Parameters
    ----------
    result : checker.application.LayoutCheck
        A finished check (its evaluation, events, signals, ride, labels and provenance).

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).
    """
    labels, record = result.labels, result.provenance
    recorded = result.ride is None
    if recorded:
        first = next(iter(result.signals.values()), None)
        rate = sample_rate(first.t) if first is not None and len(first.t) > 1 else None
        method = recorded_method(rate, result.limits.filter.describe())
    else:
        method = list(METHOD)
    meta = ReportMeta(project=shorten(labels.project, DISPLAY_CHARS),
                      layout=shorten(labels.layout, DISPLAY_CHARS),
                      revision=shorten(labels.revision, DISPLAY_CHARS),
                      page_size=labels.page_size, command=shorten(record.call,
                                                                  20 * DISPLAY_CHARS),
                      inputs=tuple((f.path, f.sha256) for f in record.inputs),
                      parameters=record.parameters, method=tuple(method), stall=result.stall,
                      sweep=result.sweep, seat_pages=labels.seat_pages, recorded=recorded,
                      sensitivity=result.sensitivity)
    html, assets = build_html(result.evaluation, result.signals, result.ride, meta,
                              list(result.events))
    return render_pdf(html, TemplatesOnlyFetcher(assets=assets))


__all__ = ["METHOD", "ReportMeta", "build_html", "check_report_pdf", "comparison_report_pdf",
           "render_pdf", "TemplatesOnlyFetcher"]

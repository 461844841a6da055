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


def recorded_method(rate_hz: float | None, filter_text: str, conditioning: str = "",
                    instrument: bool = False, resampled: bool = False) -> list[str]:
    """Method text of a report on recorded data: what the tool did and did not do.

    Parameters
    ----------
    rate_hz : float or None
        The record's sample rate [Hz], or None when unknown.
    filter_text : str
        The limit set's filter in words.
    conditioning : str, optional
        What was done to the record on request (instrument mapping, re-sampling), in words.
    instrument : bool, optional
        The record was read through an instrument file (columns, units, mounting).
    resampled : bool, optional
        Irregular stretches were allowed and re-sampled.

    Returns
    -------
    list of str
        The paragraphs of the method section.
    """
    rate = f"{rate_hz:g} Hz" if rate_hz else "the record's own rate"
    axes = ("mapped to rider axes by the instrument file's mounting" if instrument
            else "in rider axes as the file states them")
    stamps = ("irregular stretches were re-sampled as stated under Conditioning (each "
              "seat re-sampled is named in the review items)" if resampled
              else "irregular or missing stamps are refused, never re-sampled")
    not_done = (([] if resampled else ["re-sample"]) + ["remove offsets or drift"]
                + ([] if instrument else ["rotate axes", "correct the sensor's mounting"])
                + ["check the sensor's calibration"])
    not_done = ", ".join(not_done[:-1]) + " or " + not_done[-1]
    asked = f" On request: {conditioning}." if conditioning else ""
    return [
        f"Data: instrument data as recorded (or exported) and given to the tool, sampled at "
        f"{rate}, {axes} (x forward, y left, z up through the spine; specific force in "
        "units of g0 = 9.80665 m/s^2). Time stamps were checked to run forward at a fixed "
        f"step; {stamps}.",
        f"Conditioning: {filter_text}, as the limit set states.{asked} The tool did not "
        f"{not_done}; no simulation and no load case is involved.",
        "Rules: duration limits compare the exposure curve (for every duration, the highest "
        "level sustained at least that long) with the limit curve; combined-axis limits test "
        "each filtered sample against the envelope; onset limits compare the rate of change "
        "of the filtered signal. Recorded data carry no station: places are times.",
    ]


def method_of(result) -> list[str]:
    """The method section of a check's report: the simulation's, or, for recorded data,
    what was and was not done to the record (from the result's parameters).

    Parameters
    ----------
    result : checker.application.LayoutCheck
        A finished check.

    Returns
    -------
    list of str
        The paragraphs of the method section.
    """
    if result.ride is not None:
        return list(METHOD)
    first = next(iter(result.signals.values()), None)
    rate = sample_rate(first.t) if first is not None and len(first.t) > 1 else None
    given = dict(result.provenance.parameters)
    return recorded_method(rate, result.limits.filter.describe(),
                           given.get("record conditioning", ""),
                           instrument=given.get("history units") == "from the instrument",
                           resampled=not str(given.get("re-sampling", "none")).startswith("none"))


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
    method = method_of(result)
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

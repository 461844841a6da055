"""Documents made from results: the check report PDF and the comparison PDF.

This room loads matplotlib, jinja2 and weasyprint; the application layer reaches it only when
a PDF is written.
"""

from __future__ import annotations

from .comparison import comparison_report_pdf
from .document import METHOD, ReportMeta, build_html
from .pdf import TemplatesOnlyFetcher, render_pdf


def check_report_pdf(result) -> bytes:
    """The PDF bytes of a check's report.

    Parameters
    ----------
    result : checker.application.LayoutCheck
        A finished check (its evaluation, signals, ride, labels and provenance).

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).
    """
    labels, record = result.labels, result.provenance
    meta = ReportMeta(project=labels.project, layout=labels.layout, revision=labels.revision,
                      page_size=labels.page_size, command=record.call,
                      inputs=tuple((f.path, f.sha256) for f in record.inputs),
                      parameters=record.parameters, stall=result.stall, sweep=result.sweep)
    html, assets = build_html(result.evaluation, result.signals, result.ride, meta)
    return render_pdf(html, TemplatesOnlyFetcher(assets=assets))


__all__ = ["METHOD", "ReportMeta", "build_html", "check_report_pdf", "comparison_report_pdf",
           "render_pdf", "TemplatesOnlyFetcher"]

"""The correlation PDF: a recorded ride against its simulation (jinja2 + weasyprint)."""

from __future__ import annotations

import datetime as _dt

from .. import __version__
from ..caution import CAUTION, CAUTION_SHORT
from . import figures
from .document import PAGE_SIZES, _env, _fmt, css_string, start_figure_jobs
from .pdf import ASSET_SCHEME, TemplatesOnlyFetcher, render_pdf


def correlation_pdf(correlations, meta: dict) -> bytes:
    """The correlation PDF: a table of per-axis differences and one figure per recorded seat.

    Parameters
    ----------
    correlations : list of checker.correlate.Correlation
        One per recorded seat.
    meta : dict
        ``record_name``, ``track_name``, ``filter``, ``inputs`` (list of (file, sha256)) and
        ``command`` are required; ``project``, ``record_method``, ``notes`` and
        ``page_size`` (``"a4"`` or ``"letter"``) are optional.

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).
    """
    env = _env()
    rows, figs, jobs = [], [], []
    for c in correlations:
        for a in c.axes:
            rows.append({"recorded": c.recorded_seat, "simulated": c.simulated_seat,
                         "method": c.method, "offset": _fmt(c.offset_s, 3),
                         "peak": _fmt(c.peak_correlation, 3), "axis": a.axis,
                         "rms": _fmt(a.rms_g, 3), "largest": _fmt(a.peak_g, 3),
                         "t_peak": _fmt(a.t_peak_s, 2)})
        jobs.append((figures.time_histories, (
            c.t, c.simulated, None, [],
            f"{c.recorded_seat}: simulated (colour) and recorded (dashed), filtered, aligned",
            (c.t, c.recorded, "recorded")), figures.time_histories_height(True)))
        figs.append({"seat": c.recorded_seat, "url": f"{ASSET_SCHEME}:figure{len(jobs)}.pdf"})
    # drawn in a worker while weasyprint lays the document out
    assets = {f"figure{k}.pdf": figure
              for k, figure in enumerate(start_figure_jobs(jobs), start=1)}
    css = env.get_template("report.css").render(
        page_size=PAGE_SIZES[meta.get("page_size", "a4")],
        footer_left=f"checker: {CAUTION_SHORT}",
        header_left=css_string(f"{meta['record_name']} against {meta['track_name']}"))
    html = env.get_template("correlate.html.j2").render(
        css=css, project=meta.get("project", "(not given)"), record_name=meta["record_name"],
        track_name=meta["track_name"], date=_dt.date.today().isoformat(), version=__version__,
        filter=meta["filter"], caution=CAUTION, record_method=meta.get("record_method", ""),
        rows=rows, figures=figs, notes=meta.get("notes", []),
        inputs=[{"file": f, "sha256": h} for f, h in meta["inputs"]], command=meta["command"])
    return render_pdf(html, TemplatesOnlyFetcher(assets=assets))

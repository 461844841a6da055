"""Documents made from findings: the PDF report and its JSON sidecar."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from ..documents import evaluation_document, to_json
from ..outputs import check_writable, commit
from ..paths import report_sidecar
from ..terminal import shorten
from .document import ReportMeta, build_html
from .pdf import TemplatesOnlyFetcher, render_pdf

DISPLAY_CHARS = 80  # user text longer than this is cut in the report (the JSON keeps it all)

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


def write_report(run, pdf_path: str | Path, meta: ReportMeta, json_path: str | Path | None,
                 json_extra: dict | None = None) -> tuple[Path, Path]:
    """Render the PDF and its JSON sidecar in memory, then write both together (both or
    neither, :func:`checker.outputs.commit`)."""
    pdf_path = check_writable(pdf_path)
    json_path = check_writable(report_sidecar(pdf_path, json_path))
    if not meta.method:
        meta.method = list(METHOD)
    doc = evaluation_document(run.evaluation, meta.inputs, meta.command, json_extra)
    shown = replace(meta, project=shorten(meta.project, DISPLAY_CHARS),
                    layout=shorten(meta.layout, DISPLAY_CHARS),
                    revision=shorten(meta.revision, DISPLAY_CHARS),
                    command=shorten(meta.command, 20 * DISPLAY_CHARS))
    html, assets = build_html(run.evaluation, run.signals, run.ride, shown)
    pdf = render_pdf(html, TemplatesOnlyFetcher(assets=assets))
    commit({json_path: to_json(doc).encode("utf-8"), pdf_path: pdf})
    return pdf_path, json_path


__all__ = ["ReportMeta", "write_report", "build_html", "render_pdf", "TemplatesOnlyFetcher"]

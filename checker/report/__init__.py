"""Documents made from findings: the PDF report and its JSON sidecar."""

from __future__ import annotations

from dataclasses import replace
from pathlib import Path

from ..documents import evaluation_document, to_json
from ..events import events_of_run
from ..outputs import check_writable, commit
from ..paths import report_sidecar
from ..rules import sample_rate
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


def recorded_method(rate_hz: float | None, filter_text: str) -> list[str]:
    """Method text of a report on recorded data: what the tool did and did not do."""
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


def write_report(run, pdf_path: str | Path, meta: ReportMeta, json_path: str | Path | None,
                 json_extra: dict | None = None) -> tuple[Path, Path]:
    """Render the PDF and its JSON sidecar in memory, then write both together (both or
    neither, :func:`checker.outputs.commit`)."""
    pdf_path = check_writable(pdf_path)
    json_path = check_writable(report_sidecar(pdf_path, json_path))
    if not meta.method:
        if meta.recorded:
            first = next(iter(run.signals.values()), None)
            rate = sample_rate(first.t) if first is not None and len(first.t) > 1 else None
            meta.method = recorded_method(rate, run.evaluation.limits.filter.describe())
        else:
            meta.method = list(METHOD)
    events = events_of_run(run.evaluation, run.ride)
    doc = evaluation_document(run.evaluation, meta.inputs, meta.command, json_extra, events)
    shown = replace(meta, project=shorten(meta.project, DISPLAY_CHARS),
                    layout=shorten(meta.layout, DISPLAY_CHARS),
                    revision=shorten(meta.revision, DISPLAY_CHARS),
                    command=shorten(meta.command, 20 * DISPLAY_CHARS))
    html, assets = build_html(run.evaluation, run.signals, run.ride, shown, events)
    pdf = render_pdf(html, TemplatesOnlyFetcher(assets=assets))
    commit({json_path: to_json(doc).encode("utf-8"), pdf_path: pdf})
    return pdf_path, json_path


__all__ = ["ReportMeta", "write_report", "build_html", "render_pdf", "TemplatesOnlyFetcher"]

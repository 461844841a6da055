"""The PDF report: content read back with pypdf, safe rendering, atomic writing."""

from __future__ import annotations

import re
from dataclasses import replace

import numpy as np
import pytest
from pypdf import PdfReader

from checker.application import Labels, LayoutCheck, Provenance, _layout_check, _record
from checker.conditioning import FilterSpec
from checker.documents import BUNDLED_LIMITS
from checker.history import RecordedSignal
from checker.limits import DurationLimit, LimitSet, OnsetLimit, sha256_of
from checker.report import pdf as pdf_module
from checker.rules import Finding, evaluate

RATE = 100.0


def pdf_lines(path) -> list[str]:
    return "\n".join(page.extract_text() for page in PdfReader(str(path)).pages).splitlines()


def pdf_text(path) -> str:
    return " ".join(" ".join(pdf_lines(path)).split())


def pulse_run(level: float, inputs=(), labels: Labels | None = None,
              call: str = "checker check x", findings=None) -> LayoutCheck:
    t = np.arange(int(20 * RATE)) / RATE
    g = np.zeros((len(t), 3))
    g[:, 2] = 1.0
    g[(t > 5) & (t < 8), 2] = level
    sig = RecordedSignal("seatA", t, g)
    limits = LimitSet("Test limits", "tests", "1", True, FilterSpec(),
                      (DurationLimit("gz", 1, np.array([0.0, 2.0]), np.array([4.0, 3.0])),),
                      (), (OnsetLimit("gz", 50.0),), path="limits.toml", sha256="ab" * 32)
    ev = evaluate([sig], limits)
    if findings is not None:
        ev = replace(ev, seats=(replace(ev.seats[0], findings=tuple(findings)),))
    return _layout_check(ev, {("seatA", "nominal"): sig}, None, None, labels or Labels(),
                         Provenance(_record(*inputs), (), call))


def test_failing_report_shows_verdict_caution_findings_and_hashes(tmp_path):
    track = tmp_path / "track.csv"
    track.write_text("x,y,z\n0,0,0\n")
    inputs = [(str(track), sha256_of(track)), (str(BUNDLED_LIMITS), sha256_of(BUNDLED_LIMITS))]
    run = pulse_run(3.6, [track, BUNDLED_LIMITS], Labels("Proj", "L1", "R7"))
    assert run.evaluation.verdict == "fail"
    out = tmp_path / "r.pdf"
    run.write_pdf(out)
    text = pdf_text(out)
    assert "FAIL" in text
    assert "not a certification" in text and "authority having" in text
    assert "ILLUSTRATIVE" in text  # the limit set is marked illustrative
    for _, digest in inputs:
        assert digest in text.replace(" ", "")
    for finding in run.evaluation.findings:
        assert finding.rule in text
        assert f"{finding.t_start:.2f}" in text
    assert (tmp_path / "r.json").exists()  # the sidecar


def test_passing_report_has_no_finding_rows(tmp_path):
    run = pulse_run(2.0)
    assert run.evaluation.verdict == "pass"
    out = tmp_path / "ok.pdf"
    run.write_pdf(out)
    text = pdf_text(out)
    assert "PASS" in text and "No finding" in text
    assert "duration +Gz" not in text.split("Appendix A")[0]


def test_five_hundred_findings_all_rendered(tmp_path):
    run = pulse_run(2.0, findings=[
        Finding("duration +Gz", "duration", "gz", "seatA", "nominal", float(i),
                float(i) + 0.5, 0.5, 4.5, 4.0, -0.5 - i * 1e-4, float(i)) for i in range(500)])
    out = tmp_path / "many.pdf"
    run.write_pdf(out)
    lines = [" ".join(line.split()) for line in pdf_lines(out)]
    rows = [line for line in lines if "duration +Gz seatA" in line]  # recorded: no case column
    assert len(rows) == 500
    numbers = sorted(int(line.split()[0]) for line in rows)
    assert numbers == list(range(1, 501))


def test_user_text_cannot_reach_files(tmp_path, monkeypatch):
    seen = []
    original = pdf_module.TemplatesOnlyFetcher.fetch

    def spy(self, url, headers=None):
        seen.append(url)
        return original(self, url, headers)

    monkeypatch.setattr(pdf_module.TemplatesOnlyFetcher, "fetch", spy)
    evil = '<img src="file:///etc/passwd"><link rel=stylesheet href="http://example.com/x.css">'
    run = pulse_run(3.6, labels=Labels(project=evil, layout=evil))
    out = tmp_path / "evil.pdf"
    run.write_pdf(out)
    text = pdf_text(out)
    assert 'src="file:///etc/passwd"' in text.replace(" ", "")  # shown as text
    assert not any("passwd" in u or "example.com" in u for u in seen)
    assert "root:" not in text
    fetcher = pdf_module.TemplatesOnlyFetcher()
    with pytest.raises(ValueError):
        fetcher.fetch("file:///etc/passwd")
    with pytest.raises(ValueError):
        fetcher.fetch("http://example.com/")


def test_failed_rendering_leaves_previous_report_whole(tmp_path, monkeypatch):
    out = tmp_path / "r.pdf"
    out.write_bytes(b"%PDF previous")
    (tmp_path / "r.json").write_text("previous")

    def broken(*args, **kwargs):
        raise RuntimeError("renderer failed")

    monkeypatch.setattr("checker.report.render_pdf", broken)
    with pytest.raises(RuntimeError):
        pulse_run(3.6).write_pdf(out)
    assert out.read_bytes() == b"%PDF previous"
    assert (tmp_path / "r.json").read_text() == "previous"
    assert not list(tmp_path.glob("*.part"))


def test_letter_page_size(tmp_path):
    out = tmp_path / "letter.pdf"
    pulse_run(2.0, labels=Labels(page_size="letter")).write_pdf(out)
    box = PdfReader(str(out)).pages[0].mediabox
    # US Letter is 8.5 x 11 in = 612 x 792 pt (ANSI/ASME Y14.1)
    assert (round(float(box.width)), round(float(box.height))) == (612, 792)


def _pixels(svg: str) -> np.ndarray:
    """The SVG as weasyprint draws it in a PDF, rasterized by PDFium (grey levels)."""
    import pypdfium2

    from checker.report import TemplatesOnlyFetcher, render_pdf

    pdf = render_pdf('<style>@page { size: 7in 5in; margin: 0 }</style>'
                     '<img src="checker-asset:f.svg" style="width: 7in">',
                     TemplatesOnlyFetcher(assets={"f.svg": svg}))
    page = pypdfium2.PdfDocument(pdf)[0]
    return np.asarray(page.render(scale=2).to_pil().convert("L"), dtype=int)


@pytest.mark.parametrize("n", [601, 1000, 17999, 18000, 90001])
def test_plotted_envelope_keeps_every_slice_extreme_and_lean_svg_draws_the_same(n):
    """Figures plot a per-slice minimum and maximum: checked against a brute-force scan of
    each slice (reference: the definition); and the lean SVG draws the same picture as
    matplotlib's own, as weasyprint renders it and PDFium rasterizes it."""
    import re

    import matplotlib.pyplot as plt

    from checker.report.figures import _svg, envelope_decimate, lean_svg

    rng = np.random.default_rng(n)
    x = np.arange(n) * 0.005
    y = np.cumsum(rng.normal(size=n))
    xs, ys = envelope_decimate(x, y)
    assert np.all(np.diff(xs) >= 0) and set(xs) <= set(x)
    width = -(-n // 300)
    for a in range(0, n, width):  # every slice's extremes are among the plotted points
        part = y[a:a + width]
        assert part.max() in ys and part.min() in ys
    fig, axes = plt.subplots(2, 1)  # two panels: the second reuses the first's tick marker
    for ax in axes:
        ax.plot(xs, ys, color="#1f5fa8", lw=0.9, label="filtered")
        ax.plot(xs[::50], ys[::50], "x", color="#d11a1a")  # data markers stay markers
        ax.legend()
    buf = __import__("io").StringIO()
    fig.savefig(buf, format="svg")
    plain = buf.getvalue()
    lean = _svg(fig)
    for tag in ("text", "clipPath"):  # nothing drawn is lost
        assert lean.count(f"<{tag}") == plain.count(f"<{tag}"), tag
    # grid lines and tick marks: one path per axis each instead of one node per tick
    assert lean.count("<path") + lean.count("<use") < plain.count("<path") + plain.count("<use")
    assert lean.count("<use") == len(xs[::50]) * 2  # the data markers, as drawn
    assert "style=" not in lean and 'stroke="#1f5fa8"' in lean
    assert re.findall(r">([^<>]+)</text>", lean) == re.findall(r">([^<>]+)</text>", plain)
    assert lean_svg(plain) == lean
    before, after = _pixels(plain), _pixels(lean)
    assert before.shape == after.shape and before.min() < 128  # something dark was drawn
    assert np.abs(before - after).max() <= 8  # anti-aliasing may round differently


def test_a_reused_figure_draws_what_a_new_one_draws():
    """Figures of one layout reuse this process's last figure (emptied): each kind, drawn
    after another of its kind with other data, gives the PDF a new figure gives."""
    from checker.report import figures

    def signal(n, scale, rng):
        t = np.arange(n) * 0.005
        filtered = np.cumsum(rng.normal(size=(n, 3)), axis=0) * scale + [0.0, 0.0, 1.0]
        return t, filtered, filtered + rng.normal(size=(n, 3)) * 0.05

    def curves(top):
        d = np.geomspace(0.01, 20.0, 40)
        return [{"name": "+Gz", "axis": "gz", "durations": d, "levels": top - 0.1 * np.log(d),
                 "limit_durations": np.array([0.01, 1.0, 20.0]),
                 "limit_levels": np.array([top + 1, top, top - 1])},
                {"name": "-Gx", "axis": "gx", "durations": d, "levels": -top + 0 * d,
                 "limit_durations": np.array([0.01, 20.0]), "limit_levels": np.array([-2.0, -1.5]),
                 "step": True}]

    def scatter(scale, rng):
        pts = rng.normal(size=(500, 2)) * scale
        square = np.array([[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]])
        return [{"name": "x-z", "axes": ("gx", "gz"), "points": pts, "vertices": square,
                 "outside": np.abs(pts).max(axis=1) > 1.0}]

    def drawings(k):  # the same data for the same k
        rng = np.random.default_rng(k)
        t, f, raw = signal(9000 + 1000 * k, 0.01 * (k + 1), rng)
        points = scatter(0.5 + k, rng)
        rate = np.gradient(f[:, 2], t)
        return [
            lambda: figures.time_histories(t, f, raw, [(10.0 + k, 11.0 + k, "gz")], ""),
            lambda: figures.exposure_curves(curves(2.0 + k), ""),
            lambda: figures.combined_scatter(points, ""),
            lambda: figures.event_window(t, f, raw, [2], (20.0, 20.5 + k), [("limit", 3.0)],
                                         "", onset=(rate, 20.0 + k)),
            lambda: figures.event_window(t, f, None, [0, 2], (30.0, 30.2), [], ""),
        ]

    figures._REUSED.clear()
    open_before = figures.plt.get_fignums()
    for draw in drawings(0):
        draw()
    reused = [draw() for draw in drawings(1)]
    assert figures.plt.get_fignums() == open_before  # kept figures are not pyplot's
    for draw, pdf in zip(drawings(1), reused):
        figures._REUSED.clear()
        assert draw() == pdf


def _legend_clear_of_lines(ax) -> bool:
    """Whether the axes' legend box meets none of their lines, by matplotlib's own path
    test (Path.intersects_bbox), not the placement code's clipping."""
    from matplotlib.backends.backend_agg import RendererAgg

    fig = ax.figure
    box = ax.get_legend().get_window_extent(RendererAgg(1, 1, fig.dpi))
    for line in ax.lines:
        path = line.get_transform().transform_path(line.get_path()).cleaned(remove_nans=True)
        if path.intersects_bbox(box, filled=False):
            return False
    return True


def test_free_legend_leaves_every_line_visible():
    """Lines through every corner: no corner is free, so the y range grows and the legend
    sits in a band of its own; with a free corner, the data range is left alone."""
    import matplotlib.figure

    from checker.report.figures import free_legend

    fig = matplotlib.figure.Figure(figsize=(6.7, 1.3))
    ax = fig.subplots()
    t = np.linspace(0.0, 3.0, 600)
    ax.plot(t, 3.0 + 2.5 * np.cos(2 * np.pi * t / 3.0), label="signal")  # high at both ends
    ax.plot(t, 3.0 - 2.5 * np.cos(2 * np.pi * t / 3.0), label="mirror")  # low at both ends
    ax.axhline(5.0, ls="--", label="limit 5.00 g")
    fig.subplots_adjust(bottom=0.3, top=0.95)
    ax.legend(loc="upper right", fontsize=6, ncol=3)
    assert not _legend_clear_of_lines(ax)  # the plain legend hides a line here
    before = ax.get_ylim()
    free_legend(ax, ncol=3)
    assert _legend_clear_of_lines(ax)
    assert ax.get_ylim()[0] <= before[0] and ax.get_ylim()[1] >= before[1]  # data all shown

    fig = matplotlib.figure.Figure(figsize=(6.7, 1.3))
    ax = fig.subplots()
    ax.plot(t, 5.0 - t, label="falling")  # the upper right corner is empty
    fig.subplots_adjust(bottom=0.3, top=0.95)
    before = ax.get_ylim()
    free_legend(ax)
    assert _legend_clear_of_lines(ax) and ax.get_ylim() == before


def test_exposure_and_event_legends_cover_no_line():
    """The demo-like crowded cases of the report: legends clear of limits and curves in
    every exposure panel and event window (the figure drawn last is kept, see _reused)."""
    from checker.report import figures

    d = np.geomspace(0.005, 20.0, 60)
    curves = [{"name": "Gy left", "axis": "gy", "durations": d, "levels": 0.7 - 0.05 * np.log(d),
               "limit_durations": np.array([0.005, 2.0, 5.0, 60.0]),
               "limit_levels": np.array([1.8, 1.4, 1.0, 1.0])},
              {"name": "Gy right", "axis": "gy", "durations": d,
               "levels": -0.6 + 0.1 * np.log(d / 0.005),
               "limit_durations": np.array([0.005, 2.0, 5.0, 60.0]),
               "limit_levels": np.array([-1.8, -1.4, -1.0, -1.0])}]
    figures.exposure_curves(curves, "")
    fig, axes = figures._REUSED[(1, 1, (figures.WIDTH_IN, 1.886 + figures.PANEL_TITLE_IN),
                                 repr([("squeeze", False)]))]
    assert axes[0, 0].get_legend() is not None and _legend_clear_of_lines(axes[0, 0])

    t = np.arange(0.0, 10.0, 0.005)
    gz = 1.0 + 4.58 * np.exp(-((t - 5.0) / 0.3) ** 2)  # a spike past the 5.00 g limit
    signal = np.column_stack([0 * t, 0 * t, gz])
    figures.event_window(t, signal, signal + 0.3 * np.sin(40 * t)[:, None], [2], (4.9, 5.1),
                         [("limit 5.00 g for 0.01 s", 5.0)], "")
    kept = [v for k, v in figures._REUSED.items() if k[:2] == (1, 1) and k != (
        1, 1, (figures.WIDTH_IN, 1.886 + figures.PANEL_TITLE_IN), repr([("squeeze", False)]))]
    ax = kept[-1][1][0, 0]
    assert any(line.get_label().startswith("limit") for line in ax.lines)
    assert ax.get_legend() is not None and _legend_clear_of_lines(ax)


def test_seat_table_of_many_seats_and_cases_runs_on_within_the_pages(tmp_path):
    # 150 seats in 3 cases (450 rows): the appendix's seat table must break over pages
    # with every row inside the page's text area (it once ran off the bottom of one page),
    # and the running head (top left) carries the layout name, escaped for CSS
    import pypdfium2 as pdfium

    t = np.arange(int(3 * RATE)) / RATE
    g = np.zeros((len(t), 3))
    g[:, 2] = 1.0
    limits = LimitSet("Test limits", "tests", "1", True, FilterSpec(),
                      (DurationLimit("gz", 1, np.array([0.0, 2.0]), np.array([4.0, 3.0])),),
                      (), (), path="limits.toml", sha256="ab" * 32)
    seats, signals = [], {}
    for case in ("cold", "warm", "windy"):
        sigs = [RecordedSignal(f"s{k:03d}", t, g) for k in range(150)]
        seats += evaluate(sigs, limits, case).seats
        signals.update({(s.seat, case): s for s in sigs})
    ev = replace(evaluate(sigs[:1], limits), seats=tuple(seats))
    name = 'Loop "A" </style> & B\\C'
    run = _layout_check(ev, signals, None, None, Labels("P", name, "R2"),
                        Provenance((), (), "checker check x"))
    out = tmp_path / "seats.pdf"
    run.write_pdf(out)
    doc = pdfium.PdfDocument(str(out))
    seen, heads = [], set()
    for page in doc:
        width, height = page.get_size()
        box = page.get_textpage()
        # the text area: within the side margins, above the footer, below the head (16-18 mm)
        area = box.get_text_bounded(left=40, bottom=51, right=width - 40, top=height - 51)
        seen += re.findall(r"(s\d{3})\s+0\s+PASS", area)  # recorded data: no case column
        heads.add(box.get_text_bounded(left=0, bottom=height - 51, right=width / 2,
                                       top=height).strip())
    assert sorted(seen) == sorted(s.seat for s in seats)  # each seat once per case
    assert f"{name}, revision R2" in heads


def test_terminal_names_no_load_case_for_recorded_data():
    # a record is one ride as it was: the events table names the governing seat alone
    run = pulse_run(3.6)
    assert run.evaluation.findings
    text = run.summary()
    assert " seatA" in text and "/ nominal" not in text

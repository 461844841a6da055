"""Figures drawn as PDF by matplotlib and placed into the report's PDF after layout.

References: matplotlib's own PDF of a figure, rasterized by PDFium, is what a placed figure
must look like; pypdf reads the page text back.
"""

from __future__ import annotations

import io

import numpy as np
import pydyf
import pytest
from pypdf import PdfReader

from checker.report import TemplatesOnlyFetcher, render_pdf
from checker.report.placing import FigurePlacer, PdfFigure, placeholder_png

PAGE = "<style>@page {{ size: 8in 6in; margin: 0 }} body {{ margin: 0 }}</style>{body}"


def _figure(width_in: float, height_in: float, label: str = "placed label 42") -> bytes:
    """A figure with a red block on its left half, a blue line and a text label."""
    import matplotlib.figure

    fig = matplotlib.figure.Figure(figsize=(width_in, height_in))
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_axis_off()
    ax.set_xlim(0, 1)
    ax.set_ylim(0, 1)
    ax.fill([0, 0.5, 0.5, 0], [0, 0, 1, 1], color="#ff0000", lw=0)
    ax.plot([0.55, 0.95], [0.8, 0.8], color="#0000ff", lw=4)
    ax.text(0.6, 0.3, label, fontsize=14)
    buffer = io.BytesIO()
    fig.savefig(buffer, format="pdf")
    return buffer.getvalue()


def _raster(pdf: bytes, scale: float = 1.0) -> np.ndarray:
    import pypdfium2

    page = pypdfium2.PdfDocument(pdf)[0]
    return np.asarray(page.render(scale=scale).to_pil().convert("RGB"), dtype=int)


def test_a_placed_figure_draws_what_its_own_pdf_draws_where_the_layout_put_it():
    """A 6 x 3 in figure placed by an <img> 1 in from the left and 2 in from the top of an
    8 x 6 in page: the page's pixels there equal the figure's own PDF (PDFium), the page
    elsewhere stays white, and no placeholder grey is left."""
    figure = PdfFigure.of(_figure(6.0, 3.0))
    assert (figure.width_pt, figure.height_pt) == (432.0, 216.0)
    body = ('<div style="height: 2in"></div><img src="checker-asset:f.pdf" '
            'style="margin-left: 1in; width: 6in; display: block">')
    pdf = render_pdf(PAGE.format(body=body), TemplatesOnlyFetcher(assets={"f.pdf": figure}))
    page = _raster(pdf)  # 72 px per inch
    own = _raster(figure.pdf())
    placed = page[144:144 + 216, 72:72 + 432]
    assert own.shape == placed.shape
    # anti-aliased edges may differ by a pixel's blend; the bulk is identical
    assert np.mean(np.abs(placed - own) > 40) < 0.01
    assert (placed[100, 50] == [255, 0, 0]).all()  # the red half, as drawn
    outside = np.concatenate([page[:140].reshape(-1, 3), page[364:].reshape(-1, 3)])
    assert (outside == 255).all()
    assert (placed[190:212, 260:420] == 255).all()  # white as drawn: no placeholder grey
    assert "placed label 42" in PdfReader(io.BytesIO(pdf)).pages[0].extract_text()


def test_figures_of_equal_size_get_their_own_place():
    """Figures of the same size (event windows, say) keep their order and content: each
    placeholder carries its figure's number, and stays small however many there are."""
    count = 40
    assets = {f"f{k}.pdf": PdfFigure.of(_figure(4.0, 1.0, f"placed label {k:03d}"))
              for k in range(count)}
    body = "".join(f'<img src="checker-asset:f{k}.pdf" style="width: 4in; display: block">'
                   for k in range(count))
    pdf = render_pdf(PAGE.format(body=body), TemplatesOnlyFetcher(assets=assets))
    text = "".join(page.extract_text() for page in PdfReader(io.BytesIO(pdf)).pages)
    found = [text.index(f"placed label {k:03d}") for k in range(count)]
    assert found == sorted(found)
    assert placeholder_png(288.0, 144.0, 0)[1] == placeholder_png(288.0, 144.0, 10**6)[1]


def test_a_placeholder_keeps_the_figure_aspect_ratio():
    for width, height in [(482.4, 144.0), (482.4, 500.0), (100.0, 1000.0), (1000.0, 7.0)]:
        for serial in (0, 1, 99):
            png, (w, h) = placeholder_png(width, height, serial)
            assert png.startswith(b"\x89PNG")
            assert abs(w / h - width / height) <= 0.5 / h * max(1.0, width / height)


def test_a_figure_still_being_drawn_is_waited_for():
    calls = []

    def later() -> bytes:
        calls.append(1)
        return _figure(3.0, 1.5)

    figure = PdfFigure(216.0, 108.0, later)
    pdf = render_pdf(PAGE.format(body='<img src="checker-asset:f.pdf" style="width: 3in">'),
                     TemplatesOnlyFetcher(assets={"f.pdf": figure}))
    assert calls == [1]
    assert "placed label 42" in PdfReader(io.BytesIO(pdf)).pages[0].extract_text()


def test_a_figure_whose_placeholder_is_missing_stops_the_pdf():
    placer = FigurePlacer()
    placer.placeholder(PdfFigure.of(_figure(2.0, 1.0)))
    with pytest.raises(RuntimeError, match="could not be placed"):
        placer(None, pydyf.PDF())


@pytest.mark.parametrize("titled", [False, True])
def test_planned_figure_sizes_are_the_drawn_ones(titled):
    """Reports lay out before their figures are drawn: each ``*_height`` must give the
    height the figure function draws."""
    from checker.report import aids_figures, figures

    rng = np.random.default_rng(3)
    t = np.arange(2000) * 0.01
    g = np.cumsum(rng.normal(size=(2000, 3)), axis=0) * 0.01 + [0, 0, 1]
    title = "a title" if titled else ""
    d = np.geomspace(0.01, 10.0, 20)
    curve = [{"name": "+Gz", "axis": "gz", "durations": d, "levels": 2 - 0.1 * np.log(d),
              "limit_durations": np.array([0.01, 10.0]), "limit_levels": np.array([3.0, 2.5])}]
    square = np.array([[-1.0, -1.0], [1.0, -1.0], [1.0, 1.0], [-1.0, 1.0]])
    panels = [{"name": "x-z", "axes": ("gx", "gz"), "points": g[:, [0, 2]],
               "vertices": square, "outside": np.zeros(2000, bool)}]
    xyz = np.column_stack([t, np.sin(t), 0.1 * t])
    cases = [
        (figures.time_histories(t, g, g, [], title), figures.time_histories_height(titled)),
        (figures.exposure_curves(curve, title), figures.exposure_curves_height(titled)),
        (figures.combined_scatter(panels, title), figures.combined_scatter_height(titled)),
        (figures.event_window(t, g, None, [2], (5.0, 6.0), [], title),
         figures.event_window_height(False, titled)),
        (figures.event_window(t, g, g, [2], (5.0, 6.0), [], title,
                              onset=(np.gradient(g[:, 2], t), 5.0)),
         figures.event_window_height(True, titled)),
        (figures.layout_views(xyz, t, [], 5.0, "", (t, 1 + t), 0 * t),
         figures.layout_views_height(True, True)),
        (figures.layout_views(xyz, t, [], 5.0, "", None, None),
         figures.layout_views_height(False, False)),
        (aids_figures.sensitivity_figure(["a", "b", "c"], ["p", "q"], np.ones((3, 2)),
                                         np.ones(3), title),
         aids_figures.sensitivity_height(3)),
        (aids_figures.uplift_figure([(1.0, 0.01, "s")], 0.02, "station [m]", title),
         aids_figures.UPLIFT_HEIGHT_IN),
        (aids_figures.ratio_figure(t, [("s", g[:, 0])], title), aids_figures.RATIO_HEIGHT_IN),
    ]
    for pdf, height_in in cases:
        drawn = PdfFigure.of(pdf)
        assert drawn.width_pt == pytest.approx(figures.WIDTH_IN * 72.0, abs=1e-6)
        assert drawn.height_pt == pytest.approx(height_in * 72.0, abs=1e-6)


def test_both_ways_of_taking_a_figure_apart_place_the_same_drawing(monkeypatch):
    """matplotlib's PDF is cut apart by its cross-reference table; any other goes through
    pypdf. Both must draw the same page (PDFium), the text included."""
    from checker.report import placing

    body = '<img src="checker-asset:f.pdf" style="width: 6in; display: block">'
    pdf = _figure(6.0, 3.0)
    fast = render_pdf(PAGE.format(body=body),
                      TemplatesOnlyFetcher(assets={"f.pdf": PdfFigure.of(pdf)}))

    def refuse(data):
        raise ValueError("not matplotlib's layout")

    monkeypatch.setattr(placing, "_cut_apart", refuse)
    parsed = render_pdf(PAGE.format(body=body),
                        TemplatesOnlyFetcher(assets={"f.pdf": PdfFigure.of(pdf)}))
    assert fast != parsed  # the two ways write different objects...
    assert (_raster(fast) == _raster(parsed)).all()  # ...that draw the same page
    for out in (fast, parsed):
        assert "placed label 42" in PdfReader(io.BytesIO(out)).pages[0].extract_text()


def test_an_asset_of_another_kind_is_refused_not_left_out():
    """weasyprint leaves out an image it cannot fetch without a word; a figure handed over
    as raw bytes must stop the report instead."""
    with pytest.raises(TypeError, match="not a PdfFigure"):
        render_pdf(PAGE.format(body='<img src="checker-asset:f.pdf">'),
                   TemplatesOnlyFetcher(assets={"f.pdf": _figure(2.0, 1.0)}))


def test_a_failed_report_gives_up_the_figures_not_begun():
    """A figure whose drawing failed stops the PDF with its error, and the figures still
    queued for the workers are cancelled rather than drawn for nothing."""
    from concurrent.futures import Future

    failed, queued = Future(), Future()
    failed.set_exception(RuntimeError("matplotlib broke"))
    assets = {"a.pdf": PdfFigure(144.0, 72.0, failed.result),
              "b.pdf": PdfFigure(144.0, 72.0, queued.result)}
    body = '<img src="checker-asset:a.pdf">'  # b is still queued when a fails
    with pytest.raises(RuntimeError, match="matplotlib broke"):
        render_pdf(PAGE.format(body=body), TemplatesOnlyFetcher(assets=assets))
    assert queued.cancelled()


@pytest.mark.parametrize("kind", [0, 1, 2, 3, 4])
def test_a_placeholder_number_is_read_through_every_png_row_filter(kind):
    """The top row of an image as a PDF writer may store it, under each PNG filter type
    (PNG specification, 9.2-9.4: with no row above, Up predicts 0, Sub and Paeth the byte to
    the left, Average half of it)."""
    import zlib

    from checker.report.placing import _MARK, _placeholder_number

    number = 123456
    pixels = list(_MARK + number.to_bytes(3, "big")) + [235] * 20
    raw, left = [], 0
    for value in pixels:
        predicted = {0: 0, 1: left, 2: 0, 3: left // 2, 4: left}[kind]
        raw.append((value - predicted) % 256)
        left = value
    extra = {"Subtype": "/Image", "ColorSpace": "/DeviceGray", "BitsPerComponent": 8,
             "Width": len(pixels), "Height": 1}
    stream = pydyf.Stream([zlib.compress(bytes([kind] + raw))], extra)
    assert _placeholder_number(stream) == number
    other = pydyf.Stream([zlib.compress(bytes([kind] + [235] * len(pixels)))], extra)
    assert _placeholder_number(other) is None  # an image without the mark


def test_a_placed_figure_text_is_found_by_pdfium_down_to_one_character():
    """PDFium (the PDF viewer of Chromium-based browsers) judges a character's size in the
    form that draws it: in one form scaled onto the image's unit square it dropped
    one-character labels (tick labels "0", "2") and ligatures ("fi") of a report's event
    window. The figure's own form is drawn at its own size, inside the one that scales it."""
    import pypdfium2

    from checker.report import figures

    t = np.linspace(0.0, 10.0, 2001)
    g = np.column_stack([np.sin(t), np.cos(t), 1 + 3 * np.sin(2 * t)])
    window = figures.event_window(t, g, g, [2], (5.0, 6.0), [("l", 2.0)], "")
    pdf = render_pdf(PAGE.format(body='<img src="checker-asset:f.pdf" style="width: 6.7in">'),
                     TemplatesOnlyFetcher(assets={"f.pdf": PdfFigure.of(window)}))
    text = pypdfium2.PdfDocument(pdf)[0].get_textpage().get_text_range().split()
    assert {"0", "2", "4", "filtered", "l"} <= set(text), text

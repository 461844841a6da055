"""Figures drawn by matplotlib as PDF, placed as vectors into weasyprint's PDF.

weasyprint draws an SVG image by interpreting it in Python: a Pango layout for every glyph of
its text and every number of its path data parsed one by one. That was over half the PDF time
of a failing report (20 figures). Here matplotlib draws each figure with its own PDF backend
instead, and the HTML holds a small grey placeholder PNG with the figure's aspect ratio, so
weasyprint lays out and paginates exactly as for the figure. Once weasyprint has built its
PDF objects, each placeholder's image XObject becomes a form XObject holding the figure's
page. A form XObject drawn with ``Do`` is mapped by its ``/Matrix`` into the current user
space, where an image fills the unit square (ISO 32000-1:2008, 8.9.5 and 8.10), so the
figure lands where the layout put the image, at its size, still vector, its text still text.

The placeholders are told apart by their pixel size (unique per figure); the figure keeps
its own aspect ratio (within the half pixel of the placeholder's, centred vertically).
"""

from __future__ import annotations

import io
from collections.abc import Callable
from dataclasses import dataclass

import pydyf

# Placeholder heights start here [px]: the n-th figure's is PLACEHOLDER_HEIGHT_PX + n, so
# every placeholder's (width, height) differs, and the width rounds the aspect ratio to
# within 1/(2 * 100 * ratio), under 0.1 mm on a report figure.
PLACEHOLDER_HEIGHT_PX = 100


@dataclass(frozen=True)
class PdfFigure:
    """A figure as a one-page PDF (matplotlib's PDF backend), with its page size.

    Parameters
    ----------
    width_pt, height_pt : float
        The figure's page size [pt] (its figsize times 72).
    source : bytes or callable
        The PDF, or a call without arguments that returns it (a figure still being drawn
        in a worker process: the report lays out meanwhile and waits only to place it).
    """

    width_pt: float
    height_pt: float
    source: bytes | Callable[[], bytes]

    @classmethod
    def of(cls, pdf: bytes) -> PdfFigure:
        """The figure of a one-page PDF already drawn.

        Parameters
        ----------
        pdf : bytes
            The PDF document (its first page is the figure).

        Returns
        -------
        PdfFigure
            With the page's MediaBox size.
        """
        from pypdf import PdfReader

        box = PdfReader(io.BytesIO(pdf)).pages[0].mediabox
        return cls(float(box.width), float(box.height), pdf)

    def pdf(self) -> bytes:
        """The PDF bytes (waiting for the drawing when it is still under way).

        Returns
        -------
        bytes
            The one-page PDF.
        """
        return self.source() if callable(self.source) else self.source


def placeholder_png(width_pt: float, height_pt: float, serial: int) -> tuple[bytes, tuple]:
    """A plain light-grey PNG with a figure's aspect ratio and a pixel size no other
    placeholder of the document has.

    Parameters
    ----------
    width_pt, height_pt : float
        The figure's size [pt]; only the ratio matters.
    serial : int
        The figure's number in the document (0, 1, ...).

    Returns
    -------
    png : bytes
        The PNG file.
    size : (int, int)
        Its (width, height) [px].
    """
    from PIL import Image

    height = PLACEHOLDER_HEIGHT_PX + serial
    width = max(1, round(height * width_pt / height_pt))
    buffer = io.BytesIO()
    Image.new("L", (width, height), 235).save(buffer, format="PNG")
    return buffer.getvalue(), (width, height)


class FigurePlacer:
    """Hands out placeholders for figures and, as weasyprint's ``finisher``, puts each
    figure in its placeholder's place.

    Attributes
    ----------
    figures : dict
        ``{(width_px, height_px): PdfFigure}`` of the placeholders handed out.
    """

    def __init__(self) -> None:
        self.figures: dict[tuple[int, int], PdfFigure] = {}
        self._png: dict[int, bytes] = {}

    def placeholder(self, figure: PdfFigure) -> bytes:
        """The placeholder PNG of a figure (the same one when asked again).

        Parameters
        ----------
        figure : PdfFigure
            The figure to place.

        Returns
        -------
        bytes
            A PNG with the figure's aspect ratio.
        """
        if id(figure) not in self._png:
            png, size = placeholder_png(figure.width_pt, figure.height_pt, len(self.figures))
            self.figures[size] = figure
            self._png[id(figure)] = png
        return self._png[id(figure)]

    def __call__(self, document, pdf: pydyf.PDF) -> None:
        """Turn every placeholder image of the PDF into its figure (weasyprint finisher).

        Parameters
        ----------
        document : weasyprint.document.Document
            The rendered document (unused).
        pdf : pydyf.PDF
            weasyprint's PDF objects, before they are written.

        Raises
        ------
        RuntimeError
            When a figure handed out has no placeholder image in the PDF (a weasyprint that
            writes images otherwise): better no PDF than grey boxes.
        """
        placed = set()
        for obj in pdf.objects:
            extra = getattr(obj, "extra", None)
            if not isinstance(obj, pydyf.Stream) or not extra \
                    or extra.get("Subtype") != "/Image":
                continue
            size = (int(extra.get("Width", 0)), int(extra.get("Height", 0)))
            if size in self.figures and size not in placed:
                _become_form(obj, self.figures[size], size, pdf)
                placed.add(size)
        if len(placed) < len(self.figures):
            raise RuntimeError(f"{len(self.figures) - len(placed)} figure(s) could not be "
                               "placed in the PDF")


def _become_form(obj: pydyf.Stream, figure: PdfFigure, size: tuple[int, int],
                 pdf: pydyf.PDF) -> None:
    """Rewrite a placeholder image XObject, in place, as a form XObject drawing the figure
    scaled to the image's width, centred on its height (references to it stay valid)."""
    from pypdf import PdfReader

    page = PdfReader(io.BytesIO(figure.pdf())).pages[0]
    width, height = float(page.mediabox.width), float(page.mediabox.height)
    contents = page["/Contents"]
    parts = contents if isinstance(contents, list) else [contents]
    content = b"\n".join(part.get_object().get_data() for part in parts)
    ratio = size[0] / size[1]  # the image's, as laid out
    scale_y = ratio / width
    memo: dict[int, object] = {}
    obj.extra = pydyf.Dictionary({
        "Type": "/XObject", "Subtype": "/Form",
        "BBox": pydyf.Array([0, 0, width, height]),
        # figure units -> the unit square of the image: width fills it, height centred
        "Matrix": pydyf.Array([1 / width, 0, 0, scale_y, 0, (1 - height * scale_y) / 2]),
        "Resources": _pydyf(page.get("/Resources", {}), pdf, memo),
    })
    obj.stream = [content]
    obj.compress = True


def _pydyf(value, pdf: pydyf.PDF, memo: dict):
    """A pypdf object as a pydyf one (indirect objects added to ``pdf`` once each)."""
    from pypdf.generic import ArrayObject, DictionaryObject, IndirectObject, StreamObject

    if isinstance(value, IndirectObject):
        if value.idnum not in memo:
            target = _pydyf(value.get_object(), pdf, memo)
            if isinstance(target, pydyf.Object):
                pdf.add_object(target)
                target = target.reference
            memo[value.idnum] = target  # a number or a name: written in place
        return memo[value.idnum]
    if isinstance(value, StreamObject):
        extra = pydyf.Dictionary({
            key[1:]: _pydyf(item, pdf, memo) for key, item in value.items()
            if key not in ("/Length", "/Filter", "/DecodeParms")})
        return pydyf.Stream([value.get_data()], extra, compress=True)
    if isinstance(value, DictionaryObject):
        return pydyf.Dictionary({key[1:]: _pydyf(item, pdf, memo)
                                 for key, item in value.items()})
    if isinstance(value, ArrayObject):
        return pydyf.Array([_pydyf(item, pdf, memo) for item in value])
    out = io.BytesIO()
    value.write_to_stream(out)  # names, numbers, strings, booleans, null: pypdf's own syntax
    return out.getvalue()

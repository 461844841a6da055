"""Figures drawn by matplotlib as PDF, placed as vectors into weasyprint's PDF.

weasyprint draws an SVG image by interpreting it in Python: a Pango layout for every glyph of
its text and every number of its path data parsed one by one. That was over half the PDF time
of a failing report (22 figures). Here matplotlib draws each figure with its own PDF backend
instead, and the HTML holds a small grey placeholder PNG with the figure's aspect ratio, so
weasyprint lays out and paginates exactly as for the figure. Once weasyprint has built its
PDF objects, each placeholder's image XObject becomes a form XObject holding the figure's
page (drawing it as a form of its own). A form XObject drawn with ``Do`` is mapped by its
``/Matrix`` into the current user space, where an image fills the unit square (ISO
32000-1:2008, 8.9.5 and 8.10), so the figure lands where the layout put the image, at its
size, still vector, its text still text.

A placeholder carries its figure's number in the grey levels of its first pixels, read back
from the image data weasyprint writes (PNG rows, ISO 32000-1, 7.4.4.4); the figure keeps its
own aspect ratio (within the half pixel of the placeholder's, centred vertically).
"""

from __future__ import annotations

import io
import re
from collections.abc import Callable
from dataclasses import dataclass

import pydyf

# Placeholder height [px]: the width rounds the aspect ratio to within 1/(2 * 200 * ratio),
# under 0.1 mm on a report figure, and a placeholder stays small however many there are.
PLACEHOLDER_HEIGHT_PX = 200
# The first pixels of a placeholder's top row: a mark, then the figure's number (3 bytes)
_MARK = bytes([17, 230, 71])


@dataclass(frozen=True)
class PdfFigure:
    """A figure as a one-page PDF (matplotlib's PDF backend), with its page size.

    Parameters
    ----------
    width_pt, height_pt : float
        The figure's page size [pt] (its figsize times 72).
    source : bytes, FigureForm or callable
        The PDF (or its :class:`FigureForm`), or a call without arguments that returns
        either (a figure still being drawn in a worker process: the report lays out
        meanwhile and waits only to place it).
    """

    width_pt: float
    height_pt: float
    source: bytes | FigureForm | Callable[[], bytes | FigureForm]

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
            With the page's MediaBox size, taken apart for placing once and for all.
        """
        form = figure_form(pdf)
        return cls(form.width_pt, form.height_pt, form)

    def _drawn(self):
        return self.source() if callable(self.source) else self.source

    def pdf(self) -> bytes:
        """The PDF bytes (waiting for the drawing when it is still under way).

        Returns
        -------
        bytes
            The one-page PDF.
        """
        drawn = self._drawn()
        return drawn.pdf if isinstance(drawn, FigureForm) else drawn

    def cancel(self) -> None:
        """Give up a drawing not begun yet (a worker's queued job); a no-op otherwise."""
        future = getattr(self.source, "__self__", None)  # ``source`` is ``future.result``
        if hasattr(future, "cancel"):
            future.cancel()

    def form(self) -> FigureForm:
        """The figure taken apart for placing (as the worker that drew it left it, or
        taken apart here).

        Returns
        -------
        FigureForm
            See :func:`figure_form`.
        """
        drawn = self._drawn()
        return drawn if isinstance(drawn, FigureForm) else figure_form(drawn)


def placeholder_png(width_pt: float, height_pt: float, serial: int) -> tuple[bytes, tuple]:
    """A light-grey PNG with a figure's aspect ratio whose first pixels carry the figure's
    number.

    Parameters
    ----------
    width_pt, height_pt : float
        The figure's size [pt]; only the ratio matters.
    serial : int
        The figure's number in the document (0 to 2^24 - 1).

    Returns
    -------
    png : bytes
        The PNG file (8-bit grey).
    size : (int, int)
        Its (width, height) [px].
    """
    from PIL import Image

    height = PLACEHOLDER_HEIGHT_PX
    width = max(len(_MARK) + 3, round(height * width_pt / height_pt))
    image = Image.new("L", (width, height), 235)
    image.putdata(list(_MARK + serial.to_bytes(3, "big")))  # the top row's first pixels
    buffer = io.BytesIO()
    image.save(buffer, format="PNG")
    return buffer.getvalue(), (width, height)


def _placeholder_number(obj: pydyf.Stream) -> int | None:
    """The figure number a placeholder image carries, or None for another image.

    weasyprint writes an 8-bit grey PNG's rows Flate-compressed with PNG predictors
    (``/DecodeParms << /Predictor 15 >>``): each row starts with its filter type; on the top
    row, with nothing above, Up leaves a byte as it is and Sub and Paeth add the byte to its
    left, Average half of it (PNG specification, 9.2-9.4)."""
    import zlib

    extra = obj.extra
    if extra.get("ColorSpace") != "/DeviceGray" or extra.get("BitsPerComponent") != 8 \
            or int(extra.get("Width", 0)) < len(_MARK) + 3:
        return None
    try:
        data = b"".join(pydyf._to_bytes(item) for item in obj.stream)
        row = zlib.decompressobj().decompress(data, 1 + len(_MARK) + 3)
    except (zlib.error, TypeError, AttributeError):
        return None
    if len(row) < 1 + len(_MARK) + 3:
        return None
    kind, left, pixels = row[0], 0, []
    for value in row[1:]:
        value = (value + (left if kind in (1, 4) else left // 2 if kind == 3 else 0)) % 256
        pixels.append(value)
        left = value
    if kind > 4 or bytes(pixels[:len(_MARK)]) != _MARK:
        return None
    return int.from_bytes(bytes(pixels[len(_MARK):]), "big")


class FigurePlacer:
    """Hands out placeholders for figures and, as weasyprint's ``finisher``, puts each
    figure in its placeholder's place.

    Attributes
    ----------
    figures : list of PdfFigure
        The figures handed out, by number.
    """

    def __init__(self) -> None:
        self.figures: list[PdfFigure] = []
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
            self._png[id(figure)] = placeholder_png(figure.width_pt, figure.height_pt,
                                                    len(self.figures))[0]
            self.figures.append(figure)
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
            number = _placeholder_number(obj)
            if number is not None and number < len(self.figures) and number not in placed:
                size = (int(extra["Width"]), int(extra["Height"]))
                _become_form(obj, self.figures[number], size, pdf)
                placed.add(number)
        if len(placed) < len(self.figures):
            raise RuntimeError(f"{len(self.figures) - len(placed)} figure(s) could not be "
                               "placed in the PDF")


@dataclass(frozen=True)
class FigureForm:
    """A figure's page taken apart for placing (see :func:`figure_form`).

    Attributes
    ----------
    pdf : bytes
        The figure's one-page PDF, as drawn.
    width_pt, height_pt : float
        Its page size [pt].
    content : bytes
        The page's content stream, Flate-compressed.
    resources : bytes
        Its ``/Resources`` dictionary in PDF syntax; ``NUL k NUL`` stands for a reference to
        the k-th of :attr:`objects`.
    objects : tuple of (bytes, bytes or None)
        Every object the resources reach: its dictionary (or other value) in PDF syntax,
        references written as in :attr:`resources`, and for a stream its Flate-compressed
        data (the dictionary then names the filter and leaves the length out).
    """

    pdf: bytes
    width_pt: float
    height_pt: float
    content: bytes
    resources: bytes
    objects: tuple


def figure_form(pdf: bytes) -> FigureForm:
    """Take a one-page PDF apart into what placing it needs, so that the process that drew
    the figure (a worker) does it, not the one writing the report.

    matplotlib writes a classic cross-reference table and plain object bodies, which are cut
    apart here directly (about 1 ms a figure); any other PDF goes through pypdf (about
    15 ms a figure, most of it reading the Type 3 glyph procedures one object at a time).

    Parameters
    ----------
    pdf : bytes
        A one-page PDF (matplotlib's).

    Returns
    -------
    FigureForm
        Its size, content stream and resources with every object they reach.
    """
    try:
        return _cut_apart(pdf)
    except (ValueError, KeyError, AttributeError, IndexError, TypeError, StopIteration):
        return _parsed_apart(pdf)  # not laid out as matplotlib writes


_REF = re.compile(rb"(?<![\d.])(\d+) 0 R\b")
_LENGTH = re.compile(rb"\s*/Length\s+(?:(\d+) 0 R|(\d+))")


def _cut_apart(pdf: bytes) -> FigureForm:
    """:func:`figure_form` for a PDF with one classic cross-reference section (ISO
    32000-1:2008, 7.5.4), as matplotlib writes it; ValueError for anything else."""
    import zlib

    tail = re.search(rb"startxref\s+(\d+)\s+%%EOF\s*$", pdf[-64:])
    start = int(tail.group(1))
    head = re.compile(rb"xref\s+(\d+) (\d+)\s*?\n").match(pdf, start)
    first, count = int(head.group(1)), int(head.group(2))
    table = pdf[head.end():head.end() + 20 * count]
    offsets = {first + k: int(table[20 * k:20 * k + 10]) for k in range(count)
               if table[20 * k + 17:20 * k + 18] == b"n"}
    starts = sorted(offsets.values()) + [start]
    following = dict(zip(starts, starts[1:]))  # each object runs to the next one's start
    bodies: dict[int, tuple[bytes, bytes | None]] = {}
    for number, offset in offsets.items():
        span = pdf[offset:following[offset]]
        opened = re.compile(rb"(\d+) 0 obj\s*").match(span)
        if int(opened.group(1)) != number:
            raise ValueError("cross-reference offset off its object")
        body = span[opened.end():]
        cut = body.find(b">>\nstream\n")
        if cut < 0:
            bodies[number] = (body[:body.rindex(b"endobj")].strip(), None)
        else:
            bodies[number] = (body[:cut + 2], body[cut + 10:])
    def length(dictionary: bytes) -> int:
        found = _LENGTH.search(dictionary)
        return int(found.group(2) or bodies[int(found.group(1))][0])

    page = next(body for body, stream in bodies.values()
                if stream is None and re.search(rb"/Type\s*/Page(?![a-z])", body))
    resources_number = int(re.search(rb"/Resources (\d+) 0 R", page).group(1))
    contents_number = int(re.search(rb"/Contents (\d+) 0 R", page).group(1))
    box = [float(v) for v in re.search(rb"/MediaBox\s*\[([^\]]*)\]", page).group(1).split()]
    if box[:2] != [0.0, 0.0]:
        raise ValueError("page box not at the origin")
    numbers: dict[int, int] = {}
    objects: list = []

    def tokens(dictionary: bytes) -> bytes:
        return _REF.sub(lambda m: b"\0%d\0" % local(int(m[1])), dictionary)

    def local(number: int) -> int:
        if number not in numbers:
            numbers[number] = len(objects)
            objects.append(None)
            dictionary, stream = bodies[number]
            if stream is None:
                objects[numbers[number]] = (tokens(dictionary), None)
            else:
                data = stream[:length(dictionary)]
                objects[numbers[number]] = (tokens(_LENGTH.sub(b"", dictionary)), data)
        return numbers[number]

    contents_dict, contents_stream = bodies[contents_number]
    content = contents_stream[:length(contents_dict)]
    if b"/FlateDecode" not in contents_dict:
        content = zlib.compress(content)
    elif b"/DecodeParms" in contents_dict or contents_dict.count(b"/Filter") != 1 \
            or b"[" in contents_dict:
        raise ValueError("content stream with more than one filter")
    resources = tokens(bodies[resources_number][0])
    return FigureForm(pdf, box[2] - box[0], box[3] - box[1], content, resources,
                      tuple(objects))


def _parsed_apart(pdf: bytes) -> FigureForm:
    """:func:`figure_form` by pypdf, for any PDF."""
    import zlib

    from pypdf import PdfReader

    page = PdfReader(io.BytesIO(pdf)).pages[0]
    contents = page["/Contents"]
    parts = contents if isinstance(contents, list) else [contents]
    content = b"\n".join(part.get_object().get_data() for part in parts)
    numbers: dict[int, int] = {}
    objects: list = []
    resources = _syntax(page.get("/Resources", {}), numbers, objects)
    return FigureForm(pdf, float(page.mediabox.width), float(page.mediabox.height),
                      zlib.compress(content), resources, tuple(objects))


def _syntax(value, numbers: dict, objects: list) -> bytes:
    """A pypdf value in PDF syntax, each indirect object it reaches appended to ``objects``
    once (by its number in ``numbers``) and referred to as ``NUL k NUL``."""
    import zlib

    from pypdf.generic import ArrayObject, DictionaryObject, IndirectObject, StreamObject

    if isinstance(value, IndirectObject):
        if value.idnum not in numbers:
            numbers[value.idnum] = len(objects)
            objects.append(None)  # its place, kept while what it reaches is numbered
            target = value.get_object()
            if isinstance(target, StreamObject):
                items = {key: item for key, item in target.items()
                         if key not in ("/Length", "/Filter", "/DecodeParms")}
                body = _syntax(DictionaryObject(items), numbers, objects)
                body = body[:-2] + b" /Filter /FlateDecode>>"
                objects[numbers[value.idnum]] = (body, zlib.compress(target.get_data()))
            else:
                objects[numbers[value.idnum]] = (_syntax(target, numbers, objects), None)
        return b"\0%d\0" % numbers[value.idnum]
    if isinstance(value, DictionaryObject):
        return b"<<" + b" ".join(_syntax(key, numbers, objects) + b" "
                                 + _syntax(item, numbers, objects)
                                 for key, item in value.items()) + b">>"
    if isinstance(value, ArrayObject):
        return b"[" + b" ".join(_syntax(item, numbers, objects) for item in value) + b"]"
    out = io.BytesIO()
    value.write_to_stream(out)  # names, numbers, strings, booleans, null: pypdf's own syntax
    return out.getvalue()


_REFERENCE = re.compile(rb"\0(\d+)\0")


def _resolved(body: bytes, placed: list) -> bytes:
    """``body`` with each ``NUL k NUL`` replaced by a reference to the k-th placed object."""
    return _REFERENCE.sub(lambda m: placed[int(m[1])].reference, body)


class _Resolved(pydyf.Object):
    """PDF syntax whose ``NUL k NUL`` marks become references to the k-th placed object
    (resolved when written, once every object has its number)."""

    def __init__(self, body: bytes, placed: list) -> None:
        super().__init__()
        self.body, self.placed = body, placed

    @property
    def data(self) -> bytes:
        return _resolved(self.body, self.placed)


class _ResolvedStream(pydyf.Stream):
    """A stream object of a placed figure (never in an object stream, as PDF requires)."""

    def __init__(self, body: bytes, stream: bytes, placed: list) -> None:
        super().__init__()
        self.body, self.encoded, self.placed = body, stream, placed

    @property
    def data(self) -> bytes:
        body = _resolved(self.body, self.placed)
        return b"".join((body[:-2], b" /Length %d>>\nstream\n" % len(self.encoded),
                         self.encoded, b"\nendstream"))


def _become_form(obj: pydyf.Stream, figure: PdfFigure, size: tuple[int, int],
                 pdf: pydyf.PDF) -> None:
    """Rewrite a placeholder image XObject, in place, as a form XObject drawing the figure
    scaled to the image's width, centred on its height (references to it stay valid).

    The figure's page is a form of its own, at its own size in points, which the rewritten
    one draws scaled: PDFium (Chromium's viewer) judges a character's size in the form that
    draws it, and in a form scaled onto the unit square it dropped one-character labels and
    ligatures from the page's text."""
    form = figure.form()
    placed: list = []
    for body, stream in form.objects:
        placed.append(_Resolved(body, placed) if stream is None
                      else _ResolvedStream(body, stream, placed))
        pdf.add_object(placed[-1])
    width, height = form.width_pt, form.height_pt
    scale_y = size[0] / size[1] / width  # the image's aspect ratio, as laid out
    inner = pydyf.Stream([form.content], pydyf.Dictionary({
        "Type": "/XObject", "Subtype": "/Form", "BBox": pydyf.Array([0, 0, width, height]),
        "Resources": _Resolved(form.resources, placed), "Filter": "/FlateDecode"}))
    pdf.add_object(inner)
    obj.extra = pydyf.Dictionary({
        "Type": "/XObject", "Subtype": "/Form",
        "BBox": pydyf.Array([0, 0, width, height]),
        # figure units -> the unit square of the image: width fills it, height centred
        "Matrix": pydyf.Array([1 / width, 0, 0, scale_y, 0, (1 - height * scale_y) / 2]),
        "Resources": pydyf.Dictionary({"XObject": pydyf.Dictionary({"Fig": inner.reference})}),
    })
    obj.stream = [b"/Fig Do"]
    obj.compress = False

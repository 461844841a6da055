"""PDF rendering with weasyprint, reaching nothing outside the project's templates.

The HTML carries its CSS inline; its figures are held in memory and named by
``checker-asset:`` URLs: one-page PDFs drawn by matplotlib (:class:`PdfFigure`, placed as
vectors after layout, see :mod:`checker.report.placing`) or SVG documents (drawn by
weasyprint). The URL fetcher serves those, and files under ``templates/``, and refuses every
other URL: no local files, no network, no data the user slipped into a name.
"""

from __future__ import annotations

import gc
import logging
import mimetypes
from contextlib import contextmanager
from pathlib import Path
from urllib.parse import unquote, urlparse

from weasyprint import HTML
from weasyprint.urls import URLFetcher, URLFetcherResponse

from ..resources import templates_folder
from .placing import FigurePlacer, PdfFigure

TEMPLATES = templates_folder()


ASSET_SCHEME = "checker-asset"


@contextmanager
def frozen_heap():
    """Objects alive at entry sit out garbage collection until exit (``gc.freeze``).

    Drawing a report allocates millions of short-lived objects, and each full collection
    walks the whole heap (some 230 000 objects of the simulation, the libraries and their
    caches) again: freezing it saved about 8 % of the PDF's CPU time (demo revision A).
    Workers forked inside the block inherit the frozen heap, so their collections neither
    walk nor write to the parent's pages (Python documentation, ``gc.freeze``); that saved
    about 15 % of the figure workers' CPU time. A block nested in another leaves
    the outer one's freeze in place.

    Yields
    ------
    None
        Control, with the heap frozen (thawed again on exit, also on an exception).
    """
    if gc.get_freeze_count():  # an outer block froze the heap: it also thaws it
        yield
        return
    gc.freeze()
    try:
        yield
    finally:
        gc.unfreeze()


class TemplatesOnlyFetcher(URLFetcher):
    """A weasyprint URL fetcher that serves ``file:`` URLs inside the templates folder and the
    figures made for this report (``checker-asset:NAME``); it refuses everything else.

    Parameters
    ----------
    root : pathlib.Path, optional
        The folder whose files may be fetched (default: the shipped templates).
    assets : dict of str to (PdfFigure or str) or None, optional
        The report's figures by name, served as ``checker-asset:NAME``: a PDF figure as the
        placeholder image of :attr:`placer`, an SVG document (str) as itself.

    Attributes
    ----------
    root : pathlib.Path
        ``root`` resolved (links followed).
    assets : dict of str to (PdfFigure or str)
        As given (empty when None).
    placer : FigurePlacer
        The placeholders served; :func:`render_pdf` passes it to weasyprint as finisher.
    """

    def __init__(self, root: Path = TEMPLATES,
                 assets: dict[str, PdfFigure | str] | None = None) -> None:
        super().__init__(allowed_protocols={"file", ASSET_SCHEME}, allow_redirects=False)
        self.root = Path(root).resolve()
        self.assets = assets or {}
        self.placer = FigurePlacer()

    def fetch(self, url, headers=None):  # noqa: D401 - weasyprint's signature
        """Serve one URL, or refuse it.

        Parameters
        ----------
        url : str
            The URL weasyprint asks for.
        headers : object, optional
            Request headers (weasyprint's signature; unused).

        Returns
        -------
        weasyprint.urls.URLFetcherResponse
            A PDF figure's placeholder as ``image/png``, an SVG asset as ``image/svg+xml``, or
            a regular file under :attr:`root` (after resolving links) with its guessed MIME
            type.

        Raises
        ------
        ValueError
            For any other URL (other schemes, files outside the templates, unknown assets);
            weasyprint logs it and leaves the resource out.
        """
        if url.startswith(ASSET_SCHEME + ":") and url[len(ASSET_SCHEME) + 1:] in self.assets:
            asset = self.assets[url[len(ASSET_SCHEME) + 1:]]
            if isinstance(asset, PdfFigure):
                return URLFetcherResponse(url, self.placer.placeholder(asset),
                                          {"Content-Type": "image/png"})
            return URLFetcherResponse(url, asset.encode("utf-8"),
                                      {"Content-Type": "image/svg+xml"})
        parsed = urlparse(url)
        if parsed.scheme == "file":
            path = Path(unquote(parsed.path)).resolve()
            if path.is_file() and self.root in path.parents:
                kind = mimetypes.guess_type(path.name)[0] or "application/octet-stream"
                return URLFetcherResponse(url, path.read_bytes(), {"Content-Type": kind})
        raise ValueError(f"refused to fetch {url!r}: reports use only their own templates")


def render_pdf(html: str, fetcher: TemplatesOnlyFetcher | None = None) -> bytes:
    """The PDF bytes of the report HTML.

    Parameters
    ----------
    html : str
        The whole report, CSS inline; relative URLs resolve against the templates folder.
    fetcher : TemplatesOnlyFetcher or None, optional
        The URL fetcher (with the report's figures as assets); None serves the templates
        only. weasyprint's own log is silenced below CRITICAL (refusals are expected).

    Returns
    -------
    bytes
        The PDF, rendered in memory (nothing is written).

    Raises
    ------
    TypeError
        When an asset is neither a :class:`PdfFigure` nor SVG text (weasyprint would leave
        the figure out without a word).
    """
    fetcher = fetcher or TemplatesOnlyFetcher()
    for name, asset in fetcher.assets.items():  # weasyprint would leave a bad one out, silently
        if not isinstance(asset, (PdfFigure, str)):
            raise TypeError(f"report asset {name!r} is a {type(asset).__name__}, not a "
                            "PdfFigure or SVG text")
    logging.getLogger("weasyprint").setLevel(logging.CRITICAL)  # refusals are expected
    with frozen_heap():
        document = HTML(string=html, base_url=TEMPLATES.as_uri() + "/", url_fetcher=fetcher)
        try:
            return document.write_pdf(finisher=fetcher.placer)
        except BaseException:  # failed or interrupted: figures not begun are not drawn
            for asset in fetcher.assets.values():
                if isinstance(asset, PdfFigure):
                    asset.cancel()
            raise

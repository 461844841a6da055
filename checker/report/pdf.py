"""PDF rendering with weasyprint, reaching nothing outside the project's templates.

The HTML carries its CSS and SVG inline, so a report needs no fetch at all; the URL fetcher
still serves files under ``templates/`` (for assets a template may name) and refuses every
other URL: no local files, no network, no data the user slipped into a name.
"""

from __future__ import annotations

import logging
import mimetypes
from pathlib import Path
from urllib.parse import unquote, urlparse

from weasyprint import HTML
from weasyprint.urls import URLFetcher, URLFetcherResponse

from .document import TEMPLATES


class TemplatesOnlyFetcher(URLFetcher):
    """Serves ``file:`` URLs inside the templates folder; refuses everything else."""

    def __init__(self, root: Path = TEMPLATES) -> None:
        super().__init__(allowed_protocols={"file"}, allow_redirects=False)
        self.root = Path(root).resolve()
        self.refused: list[str] = []

    def fetch(self, url, headers=None):  # noqa: D401 - weasyprint's signature
        parsed = urlparse(url)
        if parsed.scheme == "file":
            path = Path(unquote(parsed.path)).resolve()
            if path.is_file() and self.root in path.parents:
                kind = mimetypes.guess_type(path.name)[0] or "application/octet-stream"
                return URLFetcherResponse(url, path.read_bytes(), {"Content-Type": kind})
        self.refused.append(url)
        raise ValueError(f"refused to fetch {url!r}: reports use only their own templates")


def render_pdf(html: str, fetcher: TemplatesOnlyFetcher | None = None) -> bytes:
    """The PDF bytes of the report HTML."""
    fetcher = fetcher or TemplatesOnlyFetcher()
    logging.getLogger("weasyprint").setLevel(logging.CRITICAL)  # refusals are expected
    document = HTML(string=html, base_url=TEMPLATES.as_uri() + "/", url_fetcher=fetcher)
    return document.write_pdf()

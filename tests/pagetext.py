"""Reading a report PDF back page by page (pypdf): the running head and the section each
page opens in."""

from __future__ import annotations

import os
from pathlib import Path

from pypdf import PdfReader


def page_texts(pdf: Path | bytes) -> list[str]:
    """The text of every page (pypdf extracts the running head just before the footer)."""
    if isinstance(pdf, bytes):
        import io

        pdf = io.BytesIO(pdf)
    return [page.extract_text() for page in PdfReader(pdf).pages]


def running_heads(pages: list[str]) -> list[str]:
    """The running head (top right) of every page: the line of the page heads with the
    top-left head (the layout, the same on every page) taken off the front. That is the
    lines' common start, back to a word's end (sections differ in their first word)."""
    lines = [p.splitlines()[-2] for p in pages]
    common = os.path.commonprefix(lines) if len(set(lines)) > 1 else ""
    cut = common.rfind(" ") + 1
    return [line[cut:] for line in lines]


def opening_sections(pages: list[str], headings: set[str], first: str) -> list[str]:
    """The section each page opens in, as a reader finds it: the heading on the page's first
    line, else the last heading begun on an earlier page (``first`` before any heading)."""
    current, opened = first, []
    for text in pages:
        lines = [line.strip() for line in text.splitlines()[:-2]]
        opened.append(lines[0] if lines and lines[0] in headings else current)
        for line in lines:
            if line in headings:
                current = line
    return opened


def placed_figures(pdf: Path | bytes) -> int:
    """How many figures (form XObjects one report figure wide, 6.7 in) the PDF's pages draw."""
    if isinstance(pdf, bytes):
        import io

        pdf = io.BytesIO(pdf)
    seen = set()
    for page in PdfReader(pdf).pages:
        for ref in page.get("/Resources", {}).get("/XObject", {}).values():
            form = ref.get_object()
            box = form.get("/BBox")
            if form.get("/Subtype") == "/Form" and box is not None \
                    and abs(float(box[2]) - float(box[0]) - 6.7 * 72) < 1e-6:
                seen.add(ref.idnum)
    return len(seen)

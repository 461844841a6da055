"""Reading the project's text inputs: UTF-8 checks and a close-name suggestion.

Every reader raises :class:`checker.errors.InputError` that names the file, so every loader
gives the same kind of one-line message.
"""

from __future__ import annotations

import difflib
from collections.abc import Iterable
from pathlib import Path

from .errors import InputError
from .paths import read_input_bytes


def suggest(name: str, known: Iterable[str]) -> str:
    known = list(known)
    same_letters = [k for k in known if k.lower() == name.lower()]
    close = same_letters or difflib.get_close_matches(name, known, n=1)
    return f"did you mean '{close[0]}'?" if close else ""


def read_text(path: Path) -> str:
    """Read a UTF-8 text file; refuse binary and UTF-16 data with a clear message.

    The file must be a regular file no larger than the input cap (:mod:`checker.paths`).
    """
    path = Path(path)
    raw = read_input_bytes(path)
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")) or b"\x00" in raw:
        raise InputError(
            path, "is binary or UTF-16 encoded, not UTF-8 text", "save it as UTF-8 text"
        )
    if raw.startswith(b"\xef\xbb\xbf"):
        example = " (e.g. 'CSV UTF-8' without signature)" if path.suffix.lower() == ".csv" else ""
        raise InputError(path, "starts with a byte-order mark (BOM)",
                         f"save it as UTF-8 without BOM{example}", row=1)
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(path, "is not valid UTF-8 text", "save it as UTF-8", row=line) from None

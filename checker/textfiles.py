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
    """A "did you mean" hint for a name that is not among the known ones.

    Parameters
    ----------
    name : str
        The name given (a column, key or option value).
    known : iterable of str
        The names accepted.

    Returns
    -------
    str
        ``"did you mean '<name>'?"`` naming a known name that differs only in letter case,
        else the closest match by :func:`difflib.get_close_matches`; empty when none is close.
    """
    known = list(known)
    same_letters = [k for k in known if k.lower() == name.lower()]
    close = same_letters or difflib.get_close_matches(name, known, n=1)
    return f"did you mean '{close[0]}'?" if close else ""


def read_text(path: Path) -> str:
    """Read a UTF-8 text file; refuse binary and UTF-16 data with a clear message.

    The file must be a regular file no larger than the input cap (:mod:`checker.paths`).

    Parameters
    ----------
    path : pathlib.Path or str
        The input file.

    Returns
    -------
    str
        The decoded text.

    Raises
    ------
    InputError
        As :func:`read_checked_bytes`.
    """
    return read_checked_bytes(path).decode("utf-8")


def read_checked_bytes(path: Path) -> bytes:
    """The bytes of a file that is UTF-8 text (checked as :func:`read_text` does).

    Parameters
    ----------
    path : pathlib.Path or str
        The input file.

    Returns
    -------
    bytes
        The raw bytes, valid UTF-8.

    Raises
    ------
    InputError
        When the file cannot be read (:func:`checker.paths.read_input_bytes`), is binary or
        UTF-16 (a NUL byte or a UTF-16 byte-order mark), starts with a UTF-8 byte-order mark
        (row 1) or is not valid UTF-8 (the row of the first bad byte).
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
    if raw.isascii():  # the common case: valid UTF-8 without decoding
        return raw
    try:
        raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(path, "is not valid UTF-8 text", "save it as UTF-8", row=line) from None
    return raw

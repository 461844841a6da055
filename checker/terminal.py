"""Text for the terminal: user text is shown, never obeyed.

Names of seats, cases, files and cells come from user files. Printed raw, an ESC or BEL in
them would move the cursor, clear the screen or retitle the window. :func:`clean` writes every
control character (C0 except newline and tab, DEL, C1, the Unicode line and paragraph
separators and the bidirectional overrides) as a visible escape such as ``\\x1b``.

:class:`TerminalStream` wraps ``sys.stdout`` and ``sys.stderr`` for the length of a command:
it cleans every write, and when the reader has gone away (``checker ... | head -1``) it
drops further output instead of failing, so the run still writes its files and returns its
own exit code.
"""

from __future__ import annotations

import os
import re
import sys
from collections.abc import Iterator
from contextlib import contextmanager
from typing import TextIO

_CONTROL = re.compile("[\x00-\x08\x0b-\x1f\x7f-\x9f\u2028\u2029\u202a-\u202e\u2066-\u2069]")


def _escape(match: re.Match) -> str:
    code = ord(match.group())
    return f"\\x{code:02x}" if code < 0x100 else f"\\u{code:04x}"


def clean(text: str) -> str:
    r"""``text`` with every control character written as a visible escape.

    Parameters
    ----------
    text : str
        Text that may come from user files (names of seats, cases, files, cells).

    Returns
    -------
    str
        The text with C0 controls except newline and tab, DEL, C1, U+2028/U+2029 and the
        bidirectional overrides and isolates written as ``\x1b`` or ``\u202e`` style escapes.
    """
    return _CONTROL.sub(_escape, text)


def shorten(text: str, limit: int = 80) -> str:
    """``text`` cut to at most ``limit`` characters, the cut marked with '...'.

    Parameters
    ----------
    text : object
        Converted with ``str``.
    limit : int, optional
        Longest result [characters] (default 80). Below 4 a cut text keeps one character and
        the marker, so it is 4 characters long.

    Returns
    -------
    str
        ``text`` unchanged when it fits, else its first ``limit - 3`` characters and ``...``.
    """
    text = str(text)
    if len(text) <= limit:
        return text
    return text[: max(limit - 3, 1)] + "..."


class TerminalStream:
    """A text stream that cleans what it is given and survives a closed reader.

    Every write goes through :func:`clean`. A ``BrokenPipeError`` (the reader went away) sets
    :attr:`closed_reader`, points the stream's descriptor at the null device and makes every
    later write and flush a no-op. Other attributes are those of the wrapped stream.

    Parameters
    ----------
    stream : TextIO
        The stream wrapped (``sys.stdout`` or ``sys.stderr``).

    Attributes
    ----------
    stream : TextIO
        As given.
    closed_reader : bool
        True once a write or flush met a closed pipe.
    """

    def __init__(self, stream: TextIO) -> None:
        self.stream = stream
        self.closed_reader = False

    def _guard(self, action, *args):
        if self.closed_reader:
            return None
        try:
            return action(*args)
        except BrokenPipeError:
            self.closed_reader = True
            _silence(self.stream)
            return None

    def write(self, text: str) -> int:
        """Write ``text`` cleaned of control characters.

        Parameters
        ----------
        text : str
            The text.

        Returns
        -------
        int
            ``len(text)`` (the length given, not the length of the escaped text), also when the
            reader has gone.
        """
        self._guard(self.stream.write, clean(text))
        return len(text)

    def write_raw(self, text: str) -> None:
        """Write our own control sequences (the progress bar's carriage return) uncleaned.

        Parameters
        ----------
        text : str
            Text from this program only, never from user files.
        """
        self._guard(self.stream.write, text)

    def flush(self) -> None:
        """Flush the wrapped stream (nothing once the reader has gone)."""
        self._guard(self.stream.flush)

    def isatty(self) -> bool:
        """Whether the wrapped stream is a terminal.

        Returns
        -------
        bool
            ``stream.isatty()``.
        """
        return self.stream.isatty()

    def __getattr__(self, name: str):
        return getattr(self.stream, name)


def _silence(stream: TextIO) -> None:
    """Point the stream's descriptor at the null device so that Python's final flush does
    not report the closed pipe."""
    try:
        fd = stream.fileno()
    except (AttributeError, OSError, ValueError):
        return
    try:
        null = os.open(os.devnull, os.O_WRONLY)
        os.dup2(null, fd)
        os.close(null)
    except OSError:
        pass


def write_raw(stream: TextIO, text: str) -> None:
    r"""Write our own control sequences, past the cleaning of a :class:`TerminalStream`.

    Parameters
    ----------
    stream : TextIO
        A :class:`TerminalStream` or any text stream.
    text : str
        Text from this program only (e.g. ``"\r"``).
    """
    if isinstance(stream, TerminalStream):
        stream.write_raw(text)
    else:
        stream.write(text)


@contextmanager
def terminal_streams() -> Iterator[None]:
    """Clean stdout and stderr (and survive a closed reader) for the length of a command.

    A context manager: ``sys.stdout`` and ``sys.stderr`` are wrapped in
    :class:`TerminalStream` and restored (after a flush) on leaving.

    Yields
    ------
    None
    """
    saved = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = TerminalStream(sys.stdout), TerminalStream(sys.stderr)
    try:
        yield
    finally:
        for wrapper in (sys.stdout, sys.stderr):
            if isinstance(wrapper, TerminalStream):
                wrapper.flush()
        sys.stdout, sys.stderr = saved

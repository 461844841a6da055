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
    """``text`` with every control character written as a visible escape."""
    return _CONTROL.sub(_escape, text)


def shorten(text: str, limit: int = 80) -> str:
    """``text`` cut to at most ``limit`` characters, the cut marked with '...'."""
    text = str(text)
    if len(text) <= limit:
        return text
    return text[: max(limit - 3, 1)] + "..."


class TerminalStream:
    """A text stream that cleans what it is given and survives a closed reader."""

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
        self._guard(self.stream.write, clean(text))
        return len(text)

    def write_raw(self, text: str) -> None:
        """Our own control sequences (the progress bar's carriage return)."""
        self._guard(self.stream.write, text)

    def flush(self) -> None:
        self._guard(self.stream.flush)

    def isatty(self) -> bool:
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
    """Write our own control sequences, past the cleaning of a :class:`TerminalStream`."""
    if isinstance(stream, TerminalStream):
        stream.write_raw(text)
    else:
        stream.write(text)


@contextmanager
def terminal_streams() -> Iterator[None]:
    """Clean stdout and stderr (and survive a closed reader) for the length of a command."""
    saved = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = TerminalStream(sys.stdout), TerminalStream(sys.stderr)
    try:
        yield
    finally:
        for wrapper in (sys.stdout, sys.stderr):
            if isinstance(wrapper, TerminalStream):
                wrapper.flush()
        sys.stdout, sys.stderr = saved

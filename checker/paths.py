"""The files of a run: inputs are read safely, outputs never land on an input.

Before any work the command line calls :func:`check_run_paths` with every input and every
output of the run. Each output path is resolved (following links) and refused when it is the
same file as an input or as another output, when it exists but is not a regular file, or when
it is a new name in a folder that does not exist or cannot be written. Each input must be a
regular file (no folder, device, FIFO or socket) no larger than the input cap.

Inputs are read through :func:`read_input_bytes`: the file is opened without blocking (a FIFO
with no writer cannot hang the run), checked on the open descriptor (so a swap between the
check and the read is caught) and read up to the cap only (``/dev/zero`` cannot exhaust
memory). The cap is :data:`DEFAULT_MAX_INPUT_MB` megabytes; the environment variable
``CHECKER_MAX_INPUT_MB`` raises or lowers it.
"""

from __future__ import annotations

import os
import stat
from collections.abc import Iterable
from pathlib import Path

from .bounds import megabytes_from_env
from .errors import InputError

MAX_INPUT_ENV = "CHECKER_MAX_INPUT_MB"
DEFAULT_MAX_INPUT_MB = 256.0


def max_input_bytes() -> int:
    """The largest input file read [bytes]: ``CHECKER_MAX_INPUT_MB`` or the default.

    Returns
    -------
    int
        The cap in bytes (1 MB = 10**6 bytes); :data:`DEFAULT_MAX_INPUT_MB` when the
        environment variable is unset or empty.

    Raises
    ------
    InputError
        When ``CHECKER_MAX_INPUT_MB`` is set to something that is not a number above 0 and
        below 1e7.
    """
    megabytes = megabytes_from_env(MAX_INPUT_ENV, 1e7, example=500)
    return int((DEFAULT_MAX_INPUT_MB if megabytes is None else megabytes) * 1e6)


def _kind(mode: int) -> str:
    if stat.S_ISDIR(mode):
        return "a folder"
    if stat.S_ISFIFO(mode):
        return "a FIFO (named pipe)"
    if stat.S_ISCHR(mode) or stat.S_ISBLK(mode):
        return "a device"
    if stat.S_ISSOCK(mode):
        return "a socket"
    return "not a regular file"


def _too_large(path: Path, size: int, cap: int) -> InputError:
    return InputError(path, f"is larger than the input limit of {cap / 1e6:g} MB "
                      f"({size / 1e6:.1f} MB or more)",
                      f"check that it is the right file, or raise the limit with the "
                      f"environment variable {MAX_INPUT_ENV}")


def check_input(path: str | Path) -> Path:
    """Refuse an input that is missing, not a regular file or larger than the cap.

    Parameters
    ----------
    path : str or pathlib.Path
        The input file.

    Returns
    -------
    pathlib.Path
        ``path`` as a :class:`~pathlib.Path`.

    Raises
    ------
    InputError
        When the file does not exist or cannot be examined, is a folder, device, FIFO or
        socket, or is larger than :func:`max_input_bytes`.
    """
    path = Path(path)
    try:
        info = os.stat(path)
    except FileNotFoundError:
        raise InputError(path, "file not found", "check the path") from None
    except OSError as exc:
        raise InputError(path, f"cannot be read ({exc.strerror})", "check the path and "
                         "its permissions") from None
    if not stat.S_ISREG(info.st_mode):
        raise InputError(path, f"is {_kind(info.st_mode)}, not a file", "give the path of "
                         "a regular file")
    cap = max_input_bytes()
    if info.st_size > cap:
        raise _too_large(path, info.st_size, cap)
    return path


def read_input_bytes(path: str | Path) -> bytes:
    """The bytes of an input file, read without blocking and at most up to the cap.

    The file is opened with ``O_NONBLOCK`` and checked on the open descriptor, so a FIFO
    with no writer cannot hang the run and a swap between check and read is caught; reading
    stops one byte past the cap.

    Parameters
    ----------
    path : str or pathlib.Path
        The input file.

    Returns
    -------
    bytes
        The whole content.

    Raises
    ------
    InputError
        When the file is missing, a folder or another non-regular file, unreadable, or
        larger than :func:`max_input_bytes` (also when it grows past the cap while read).
    """
    path = Path(path)
    cap = max_input_bytes()
    flags = os.O_RDONLY | getattr(os, "O_NONBLOCK", 0) | getattr(os, "O_BINARY", 0)
    try:
        fd = os.open(path, flags)
    except FileNotFoundError:
        raise InputError(path, "file not found", "check the path") from None
    except IsADirectoryError:
        raise InputError(path, "is a folder, not a file", "give a file path") from None
    except OSError as exc:
        raise InputError(path, f"cannot be read ({exc.strerror})", "check permissions") from None
    try:
        info = os.fstat(fd)
        if not stat.S_ISREG(info.st_mode):
            raise InputError(path, f"is {_kind(info.st_mode)}, not a file",
                             "give the path of a regular file")
        if info.st_size > cap:
            raise _too_large(path, info.st_size, cap)
        chunks = []
        total = 0
        while True:
            chunk = os.read(fd, min(1 << 20, cap + 1 - total))
            if not chunk:
                break
            chunks.append(chunk)
            total += len(chunk)
            if total > cap:  # grew while being read
                raise _too_large(path, total, cap)
        return b"".join(chunks)
    except OSError as exc:
        raise InputError(path, f"cannot be read ({exc.strerror})", "check the file") from None
    finally:
        os.close(fd)


def report_sidecar(pdf: str | Path, json: str | Path | None) -> Path:
    """The JSON written beside a PDF report.

    Parameters
    ----------
    pdf : str or pathlib.Path
        The PDF report's path.
    json : str or pathlib.Path or None
        The ``--json`` path, if given.

    Returns
    -------
    pathlib.Path
        ``json`` when given (not empty), else the PDF's path with the suffix ``.json``.
    """
    return Path(json) if json else Path(pdf).with_suffix(".json")


def _identity(path: Path) -> tuple:
    """What makes two paths the same file: (device, inode) when it exists, else the resolved
    path of the name (links followed)."""
    try:
        info = os.stat(path)
        return ("inode", info.st_dev, info.st_ino)
    except OSError:
        return ("name", os.path.normcase(os.path.realpath(path)))


def check_distinct(outputs: Iterable[str | Path | tuple[str, str | Path]],
                   inputs: Iterable[str | Path] = ()) -> None:
    """Refuse an output that is the same file as an input or as another output.

    Parameters
    ----------
    outputs : iterable of str, pathlib.Path or (str, path)
        The files about to be written, each alone or with the option that named it (for the
        message; default ``"output"``).
    inputs : iterable of str or pathlib.Path, optional
        The files the result was made from (never overwritten).

    Raises
    ------
    InputError
        For the first output that is an input or repeats another output (same device and
        inode, or the same resolved name when it does not exist yet).
    """
    seen: dict[tuple, str] = {}
    for item in inputs:
        seen.setdefault(_identity(Path(item)), f"input {item}")
    for item in outputs:
        option, item = item if isinstance(item, tuple) else ("output", item)
        path = Path(item)
        key = _identity(path)
        if key in seen:
            what = seen[key]
            raise InputError(path, f"{option} is the same file as the {what}",
                             "write the output to another file name; inputs are never "
                             "overwritten" if what.startswith("input") else
                             "give each output its own file name")
        seen[key] = f"{option} {path}" if option == "output" else f"{option} output {path}"


def check_output(path: str | Path, option: str = "output") -> Path:
    """Refuse an output that is not a regular file and not a new name in a writable folder.

    Parameters
    ----------
    path : str or pathlib.Path
        The output path.
    option : str, optional
        The option that named it, for the message (default ``"output"``).

    Returns
    -------
    pathlib.Path
        ``path`` as a :class:`~pathlib.Path`.

    Raises
    ------
    InputError
        When the path is ``-``, has no file name (empty, ``.`` or ``..``), exists and is not a
        regular file, or its folder does not exist or is not writable. A dangling link is
        accepted (it would be replaced, its target never written).
    """
    if str(path) == "-":
        raise InputError("-", f"{option} '-' is not supported (outputs are files, written "
                         "whole; the summary goes to the terminal)",
                         "give a file name such as findings.json")
    path = Path(path)
    if str(path) == "" or path.name in ("", ".", ".."):
        raise InputError(path, f"{option} is not a file name", "give a file name")
    real = Path(os.path.realpath(path))
    if os.path.lexists(path) or real.exists():
        try:
            info = os.stat(path)
        except OSError:  # a dangling link: it would be replaced, its target never written
            info = None
        if info is not None and not stat.S_ISREG(info.st_mode):
            raise InputError(path, f"{option} exists and is {_kind(info.st_mode)}",
                             "give the name of a regular file or a new name")
    folder = real.parent
    if not folder.is_dir():
        raise InputError(path, f"output folder '{path.parent}' does not exist",
                         "create the folder first or choose another path")
    if not os.access(folder, os.W_OK | os.X_OK):
        raise InputError(path, f"output folder '{path.parent}' is not writable",
                         "choose a folder you can write to")
    return path


def check_run_paths(inputs: Iterable[str | Path | None],
                    outputs: Iterable[tuple[str, str | Path | None]]) -> None:
    """Check every output of a run against every input and against each other.

    Called before any work, so that a refused run writes nothing.

    Parameters
    ----------
    inputs : iterable of str or pathlib.Path or None
        The run's input files; None entries are skipped. Each goes through
        :func:`check_input`.
    outputs : iterable of (str, str or pathlib.Path or None)
        ``(option name, path)`` pairs; None paths are skipped. Each goes through
        :func:`check_output`.

    Raises
    ------
    InputError
        For the first problem found: an input or output refused as above, or an output that
        is the same file (same device and inode, or the same resolved name when it does not
        exist yet) as an input or as another output.
    """
    checked_inputs = [check_input(item) for item in inputs if item is not None]
    checked_outputs = [(option, check_output(item, option)) for option, item in outputs
                       if item is not None]
    check_distinct(checked_outputs, checked_inputs)

"""Writing outputs atomically: a temporary file in the same folder, then a rename.

An interrupted or failed run therefore leaves any previous output whole.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from .errors import InputError

_UMASK = os.umask(0)
os.umask(_UMASK)


def check_writable(path: str | Path) -> Path:
    """Fail early (before any work) when the output's folder does not exist."""
    path = Path(path)
    folder = path.parent if str(path.parent) else Path(".")
    if not folder.is_dir():
        raise InputError(path, f"output folder '{folder}' does not exist",
                         "create the folder first or choose another path")
    if path.is_dir():
        raise InputError(path, "is a folder", "give a file name for the output")
    return path


def atomic_write_bytes(path: str | Path, data: bytes) -> Path:
    path = check_writable(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        os.chmod(tmp, 0o666 & ~_UMASK)  # mkstemp makes 0600; give the usual permissions
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        os.replace(tmp, path)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise
    return path


def atomic_write_text(path: str | Path, text: str) -> Path:
    return atomic_write_bytes(path, text.encode("utf-8"))

"""Writing the record of a run: every file of it whole and together, or none of it.

A run's outputs (the JSON and the PDF of a check, say) are rendered in memory first. Then
:func:`commit` writes each to a temporary file beside its target and flushes it to disk; only
when every one is complete are they renamed over their targets, one after the other, with
SIGINT and SIGTERM held back (a deferring handler) and the target folders locked (``flock``
on the folder), so that neither an interruption nor a second run to the same paths can leave
a new file beside an old one. A failed rename puts back the files already replaced. A full
disk or any other write error leaves every previous output as it was and is reported as one
line (exit 2).

The interruption handlers (:func:`interrupt_handling`) turn SIGINT and SIGTERM into
``KeyboardInterrupt`` and also remember that it happened: a library that swallows the
exception cannot make an interrupted run commit its files or exit 0.
"""

from __future__ import annotations

import contextlib
import errno
import os
import signal
import tempfile
import threading
from collections.abc import Iterable, Iterator
from pathlib import Path

from .errors import InputError
from .paths import check_distinct, check_output

try:  # POSIX
    import fcntl
except ImportError:  # pragma: no cover - Windows: no folder lock
    fcntl = None  # type: ignore[assignment]

_UMASK = os.umask(0)
os.umask(_UMASK)

_STOP_SIGNALS = (signal.SIGINT, signal.SIGTERM)
_state = {"interrupted": False}
written: list[Path] = []  # the files committed by this process, in order


def _on_signal(signum, frame):
    _state["interrupted"] = True
    raise KeyboardInterrupt


@contextlib.contextmanager
def interrupt_handling() -> Iterator[None]:
    """For the length of a command, SIGINT and SIGTERM raise ``KeyboardInterrupt`` and are
    remembered.

    A context manager. On entry the interruption flag (:func:`was_interrupted`) and the list
    :data:`written` are cleared; the handlers are installed only in the main thread (elsewhere
    signals keep their handlers). The previous handlers come back and the flag is cleared on
    leaving.

    Yields
    ------
    None
    """
    _state["interrupted"] = False
    written.clear()
    saved = {}
    if threading.current_thread() is threading.main_thread():
        saved = {sig: signal.signal(sig, _on_signal) for sig in _STOP_SIGNALS}
    try:
        yield
    finally:
        for sig, handler in saved.items():
            signal.signal(sig, handler)
        _state["interrupted"] = False


def was_interrupted() -> bool:
    """Whether SIGINT or SIGTERM arrived inside :func:`interrupt_handling`.

    Returns
    -------
    bool
        True from the signal until the ``interrupt_handling`` block ends, even when the
        ``KeyboardInterrupt`` was swallowed by a library.
    """
    return _state["interrupted"]


def _write_error(path: Path, exc: OSError) -> InputError:
    if exc.errno in (errno.ENOSPC, errno.EDQUOT):
        why = "the device is full"
        hint = "free some space or choose another folder"
    else:
        why = exc.strerror or type(exc).__name__
        hint = "check the folder and its permissions"
    return InputError(path, f"cannot be written ({why}); no output of this run was written "
                      "and previous ones are unchanged", hint)


def _stage(path: Path, data: bytes) -> str:
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    try:
        os.chmod(tmp, 0o666 & ~_UMASK)  # mkstemp makes 0600; give the usual permissions
        with os.fdopen(fd, "wb") as handle:
            _write_all(handle, data)
            handle.flush()
            os.fsync(handle.fileno())
    except BaseException:
        _remove(tmp)
        raise
    return tmp


def _write_all(handle, data: bytes) -> None:
    """Write ``data`` (a separate function so a test can make the disk full)."""
    handle.write(data)


def _between_renames() -> None:
    """Called after the first rename of a commit (a test injects a fault or a signal here)."""


def _remove(path: str) -> None:
    with contextlib.suppress(FileNotFoundError):
        os.unlink(path)


@contextlib.contextmanager
def _held_signals() -> Iterator[None]:
    """SIGINT and SIGTERM wait until the block ends, then are delivered as usual.

    Python runs signal handlers in the main thread whichever thread the signal reached, so
    a deferring handler works where blocking the signal in one thread would not.
    """
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    held: list[int] = []
    saved = {sig: signal.signal(sig, lambda signum, frame: held.append(signum))
             for sig in _STOP_SIGNALS}
    try:
        yield
    finally:
        for sig, handler in saved.items():
            signal.signal(sig, handler)
        for sig in dict.fromkeys(held):
            signal.raise_signal(sig)


@contextlib.contextmanager
def _folder_locks(folders: list[Path]) -> Iterator[None]:
    """An exclusive ``flock`` on each output folder, in a fixed order (no deadlock)."""
    fds = []
    try:
        for folder in sorted({str(f) for f in folders}):
            if fcntl is None:
                break
            try:
                fd = os.open(folder, os.O_RDONLY)
            except OSError:
                continue
            fds.append(fd)
            fcntl.flock(fd, fcntl.LOCK_EX)
        yield
    finally:
        for fd in fds:
            if fcntl is not None:
                fcntl.flock(fd, fcntl.LOCK_UN)
            os.close(fd)


def commit(files: dict[str | Path, bytes], inputs: Iterable[str | Path] = ()) -> list[Path]:
    """Write every file of a run's record, all of them or none.

    Each file is staged beside its target (a temporary file, fsynced); then, with the target
    folders ``flock``ed and SIGINT/SIGTERM held back, each is renamed over its target. A
    failed rename puts back the files already replaced. The targets are appended to
    :data:`written`.

    Parameters
    ----------
    files : dict of (str or pathlib.Path) to bytes
        Target path -> content. The targets must be distinct files and none of ``inputs``
        (:func:`checker.paths.check_distinct`, before anything is staged).
    inputs : iterable of str or pathlib.Path, optional
        The files the record was made from: never overwritten.

    Returns
    -------
    list of pathlib.Path
        The target paths, in the order given.

    Raises
    ------
    InputError
        When a target is refused (:func:`checker.paths.check_output`) or a file cannot be
        written (a full disk included); no target is changed then.
    KeyboardInterrupt
        When the run was interrupted (:func:`was_interrupted`) before the renames, even if the
        first ``KeyboardInterrupt`` was swallowed; nothing is written.
    """
    targets = [check_output(p) for p in files]
    check_distinct(targets, inputs)
    if was_interrupted():  # a swallowed KeyboardInterrupt must not reach the disk
        raise KeyboardInterrupt
    staged: list[tuple[Path, str]] = []
    try:
        for path, data in zip(targets, files.values()):
            try:
                staged.append((path, _stage(path, data)))
            except OSError as exc:
                raise _write_error(path, exc) from None
        if was_interrupted():
            raise KeyboardInterrupt
        # the lock first: waiting for another run stays interruptible
        with _folder_locks([Path(os.path.realpath(p)).parent for p in targets]), \
                _held_signals():
            _swap_in(staged)
            written.extend(targets)  # before a held signal is delivered at the block's end
    finally:
        for _, tmp in staged:
            _remove(tmp)
    return targets


def _swap_in(staged: list[tuple[Path, str]]) -> None:
    """Rename every staged file over its target; on a failure put the old ones back."""
    backups: list[tuple[Path, str | None]] = []  # (target, backup of the old file or None)
    try:
        for k, (path, tmp) in enumerate(staged):
            backup = None
            if os.path.exists(path):
                backup = tmp + ".old"
                try:
                    os.link(path, backup)
                except OSError:  # no hard links here: keep a copy instead
                    with open(path, "rb") as old, open(backup, "wb") as keep:
                        keep.write(old.read())
            backups.append((path, backup))
            os.replace(tmp, path)
            if k == 0 and len(staged) > 1:
                _between_renames()
    except BaseException as exc:
        for path, backup in reversed(backups):
            with contextlib.suppress(OSError):
                if backup is not None:
                    os.replace(backup, path)
                else:
                    os.unlink(path)
        if isinstance(exc, OSError):
            raise _write_error(backups[-1][0] if backups else staged[0][0], exc) from None
        raise
    finally:
        for _, backup in backups:
            if backup is not None:
                _remove(backup)

"""Files the program ships: the illustrative limits, the standard load cases, the report
templates and the demo layout, found with :mod:`importlib.resources` whatever the install.

They live in ``checker/data/``; the repository's top-level ``limits/``, ``load_cases/``,
``templates/`` and the demo files in ``sample_tracks/`` are links to them (one copy only).
"""

from __future__ import annotations

import atexit
from contextlib import ExitStack
from importlib import resources
from pathlib import Path

_extracted = ExitStack()  # files extracted from a zipped install live until the process ends
atexit.register(_extracted.close)


def data_path(*parts: str) -> Path:
    """A real file-system path to a shipped data file or folder under ``checker/data``.

    From a zipped install the item is extracted to a temporary file that lives until the
    process ends.

    Parameters
    ----------
    *parts : str
        Path components below ``checker/data`` (e.g. ``"limits", "illustrative.toml"``).

    Returns
    -------
    pathlib.Path
        The path; it is not checked to exist.
    """
    item = resources.files("checker").joinpath("data", *parts)
    if isinstance(item, Path):
        return item
    return _extracted.enter_context(resources.as_file(item))


def bundled_limits() -> Path:
    """The bundled ILLUSTRATIVE limit set (invented example values, not from any standard).

    Returns
    -------
    pathlib.Path
        ``checker/data/limits/illustrative.toml``.
    """
    return data_path("limits", "illustrative.toml")


def standard_cases() -> Path:
    """The shipped standard set of load cases.

    Returns
    -------
    pathlib.Path
        ``checker/data/load_cases/standard.toml``.
    """
    return data_path("load_cases", "standard.toml")


def templates_folder() -> Path:
    """The report templates (HTML and CSS).

    Returns
    -------
    pathlib.Path
        The folder ``checker/data/templates``.
    """
    return data_path("templates")


def demo_folder() -> Path:
    """The fictional demo layout: two revisions, train, operation files, synthetic record.

    Returns
    -------
    pathlib.Path
        The folder ``checker/data/demo``.
    """
    return data_path("demo")

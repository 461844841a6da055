"""The one error type for bad input.

Every loader raises :class:`InputError` with the file, the row or key, the column, what is wrong
and what to do. The command line prints it as one line and exits with code 2.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path


@dataclass
class InputError(Exception):
    """Bad input, located as precisely as the format allows.

    The message is one line: the file, then ``row``, ``column`` and ``key`` where given, the
    problem and, after `` -- ``, the hint. The command line prints it and exits with code 2.

    Parameters
    ----------
    file : str or pathlib.Path or None
        The input at fault (a file, or a name such as an environment variable or ``-``);
        None prints as ``<input>``.
    problem : str
        What is wrong.
    hint : str, optional
        What to do about it (empty: no hint).
    row : int or None, optional
        The 1-based line number in a text file (the header is line 1 of a CSV, after any
        comment lines).
    column : str or None, optional
        The CSV column name.
    key : str or None, optional
        A TOML key path such as ``cars.spacing_m``.

    Attributes
    ----------
    file, problem, hint, row, column, key
        As given.

    Examples
    --------
    >>> from checker.errors import InputError
    >>> str(InputError("track.csv", "'x' is not a number", "write a decimal number",
    ...                row=4, column="z_m"))
    "track.csv, row 4, column 'z_m': 'x' is not a number -- write a decimal number"
    """

    file: str | Path | None
    problem: str
    hint: str = ""
    row: int | None = None
    column: str | None = None
    key: str | None = None

    def __post_init__(self) -> None:
        super().__init__(self.message())

    def message(self) -> str:
        """The one-line message: location, problem and `` -- hint``.

        Returns
        -------
        str
            The message with all whitespace runs (newlines included) collapsed to one space.
        """
        where = [str(self.file) if self.file is not None else "<input>"]
        if self.row is not None:
            where.append(f"row {self.row}")
        if self.column is not None:
            where.append(f"column '{self.column}'")
        if self.key is not None:
            where.append(f"key '{self.key}'")
        text = ", ".join(where) + ": " + self.problem
        if self.hint:
            text += " -- " + self.hint
        return " ".join(text.split())  # always one line

    def __str__(self) -> str:
        return self.message()


class TrainStalled(Exception):
    """The train came to rest outside a stopping brake.

    Parameters
    ----------
    station_m : float
        The lead car's station where the train comes to rest [m], the one station a stall is
        reported at.
    time_s : float
        Ride time at that point [s].
    speed_m_s : float
        Speed there [m/s] (zero or nearly).
    cause : str, optional
        Why: ``"start"`` (no speed at the start), ``"crest"`` (it cannot crest a hill; the
        default) or ``"inverted"`` / ``"on its side"`` (it stops in an element where the riders
        would hang in their restraints).
    attitude : str, optional
        The riders' attitude there (the worst car): ``"upright"`` (default), ``"on its side"``
        or ``"inverted"``.

    Attributes
    ----------
    station_m, time_s, speed_m_s, cause, attitude
        As given.
    """

    def __init__(self, station_m: float, time_s: float, speed_m_s: float,
                 cause: str = "crest", attitude: str = "upright") -> None:
        self.station_m = station_m
        self.time_s = time_s
        self.speed_m_s = speed_m_s
        self.cause = cause
        self.attitude = attitude
        super().__init__(self.message())

    def __reduce__(self):
        # an exception pickles by its args (here the message): rebuild it from its fields, so
        # that a stall recorded in a worker process travels back to the parent
        return (type(self), (self.station_m, self.time_s, self.speed_m_s, self.cause,
                             self.attitude))

    def message(self) -> str:
        """The one-line message: where the train stops, why, and what to change.

        Returns
        -------
        str
            The message, its advice after `` -- ``.
        """
        where = (f"with its lead car at station {self.station_m:.1f} m (t = {self.time_s:.2f} s, "
                 f"speed {self.speed_m_s:.2f} m/s)")
        if self.cause == "start":
            return (f"the train has no speed at the start: it comes to rest {where} -- give a "
                    "start speed (start_speed_m_s), a lift or a launch at the start")
        if self.cause in ("inverted", "on its side"):
            return (f"the train stalls {self.cause} {where}: riders would hang there in their "
                    "restraints -- give the element more entry speed or reshape it")
        return (f"the train cannot crest a hill: it comes to rest {where} -- raise the entry "
                "speed, lower the hill or check the resistances")

    def __str__(self) -> str:
        return self.message()

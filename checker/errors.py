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

    ``row`` is the 1-based line number in a text file (the header is line 1 of a CSV, after any
    comment lines). ``key`` names a TOML key path such as ``cars.spacing_m``.
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

    ``cause`` says why: ``"start"`` (no speed at the start), ``"crest"`` (it cannot crest a
    hill) or ``"inverted"`` / ``"on its side"`` (it stops in an element where the riders would
    hang in their restraints). ``attitude`` is the riders' attitude there (the worst car):
    ``"upright"``, ``"on its side"`` or ``"inverted"``. ``station_m`` is the lead car's
    station, the one station a stall is reported at.
    """

    def __init__(self, station_m: float, time_s: float, speed_m_s: float,
                 cause: str = "crest", attitude: str = "upright") -> None:
        self.station_m = station_m
        self.time_s = time_s
        self.speed_m_s = speed_m_s
        self.cause = cause
        self.attitude = attitude
        super().__init__(self.message())

    def message(self) -> str:
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

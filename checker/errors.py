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
    """The train came to rest outside a stopping brake: it cannot crest a hill."""

    def __init__(self, station_m: float, time_s: float, speed_m_s: float) -> None:
        self.station_m = station_m
        self.time_s = time_s
        self.speed_m_s = speed_m_s
        super().__init__(
            f"the train stalls at station {station_m:.1f} m (t = {time_s:.2f} s, speed "
            f"{speed_m_s:.2f} m/s): it cannot crest the hill there -- raise the entry speed, "
            "lower the hill or check the resistances"
        )

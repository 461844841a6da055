"""Instrument description: how a data logger's CSV export maps onto rider axes.

An optional TOML file (``--instrument``) names the time column and its unit, the three
acceleration columns and their unit, how the logger is mounted (which rider axis each logger
axis points along, with its sign), an optional seat column for several seats interleaved
row by row, or groups of columns for several seats side by side, the columns to ignore, the
longest gap that may be re-sampled across and the zero-offset tolerance::

    [time]
    column = "stamp"
    unit = "ms"                    # "s" or "ms"
    max_gap_s = 0.1                # longer gaps split the record (never bridged);
                                   # default: ten times the median step

    [acceleration]
    columns = ["ax", "ay", "az"]   # logger x, y, z
    unit = "m/s2"                  # "g" or "m/s2"

    [mounting]                     # the rider axis each logger axis points along
    x = "-y"                       # logger x = rider -y (points to the rider's right)
    y = "+x"
    z = "+z"

    seat_column = "channel"        # optional: several seats interleaved row by row
    ignore = ["temp_c", "battery"]
    zero_tolerance_g = 0.05        # offset at rest beyond this is a review item

    [[seats]]                      # optional, instead of [acceleration] columns: groups
    name = "front-left"
    columns = ["ax1", "ay1", "az1"]
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .constants import G0
from .errors import InputError
from .tomlfields import Fields, load_toml

AXES = ("x", "y", "z")
DEFAULT_ZERO_TOLERANCE_G = 0.05


@dataclass(frozen=True)
class Instrument:
    """A validated instrument description (see the module docstring).

    Attributes
    ----------
    time_column : str
        Name of the time column.
    time_scale : float
        Factor from the file's time unit to seconds (1 or 1e-3) [s/unit].
    groups : tuple of (str, (str, str, str))
        Per seat: its name and the logger x, y, z acceleration columns.
    accel_scale : float
        Factor from the file's acceleration unit to g0 (1, or 1/g0 for m/s^2) [g0/unit].
    mounting : tuple of (int, float)
        For logger x, y, z: the rider axis index (0 x, 1 y, 2 z) and sign it points along.
    seat_column : str or None
        Column naming the seat of each row when seats are interleaved.
    ignore : tuple of str
        Columns to ignore.
    max_gap_s : float or None
        Longest gap that may be re-sampled across [s]; None: ten median steps
        (``checker.history.GAP_STEPS``).
    zero_tolerance_g : float
        Offset at rest beyond which a review item is raised [g0].
    source : str
        File the description came from.
    """

    time_column: str = "t"
    time_scale: float = 1.0  # to seconds
    groups: tuple[tuple[str, tuple[str, str, str]], ...] = (("recorded", ("gx", "gy", "gz")),)
    accel_scale: float = 1.0  # to g0
    # rider axis index and sign for logger x, y, z
    mounting: tuple[tuple[int, float], ...] = ((0, 1.0), (1, 1.0), (2, 1.0))
    seat_column: str | None = None
    ignore: tuple[str, ...] = ()
    max_gap_s: float | None = None  # None: ten median steps (checker.history.GAP_STEPS)
    zero_tolerance_g: float = DEFAULT_ZERO_TOLERANCE_G
    source: str = "<default>"

    def to_rider(self, logger_g: np.ndarray) -> np.ndarray:
        """Logger readings to rider-axis specific force.

        Parameters
        ----------
        logger_g : (n, 3) ndarray
            Readings along logger x, y, z, in the file's acceleration unit.

        Returns
        -------
        g : (n, 3) ndarray
            Specific force (Gx, Gy, Gz) in rider axes [g0].
        """
        out = np.empty_like(logger_g, dtype=float)
        for i, (axis, sign) in enumerate(self.mounting):
            out[:, axis] = sign * logger_g[:, i] * self.accel_scale
        return out

    def describe(self) -> str:
        """The instrument in one line, for the record.

        Returns
        -------
        text : str
            Source, time column and unit, mounting, and the gap that splits a record.
        """
        names = ["x", "y", "z"]
        mapping = ", ".join(f"logger {names[i]} = rider {'-' if sign < 0 else '+'}{names[a]}"
                            for i, (a, sign) in enumerate(self.mounting))
        gap = (f"{self.max_gap_s:g} s" if self.max_gap_s is not None
               else "ten median steps")
        return (f"instrument {self.source}: time '{self.time_column}' "
                f"({'ms' if self.time_scale == 1e-3 else 's'}), {mapping}; gaps over {gap} "
                "split the record")


def _axis(fields: Fields, name: str) -> tuple[int, float]:
    text = fields.text(name, f"+{name}").strip()
    sign = -1.0 if text.startswith("-") else 1.0
    letter = text.lstrip("+-")
    fields.check(name, letter in AXES and len(text) <= 2,
                 f"'{text}' is not a rider axis", 'write "+x", "-y", "z" ...')
    return AXES.index(letter), sign


def load_instrument(path: str | Path) -> Instrument:
    """Load and validate an instrument TOML file; unknown keys are errors.

    Parameters
    ----------
    path : str or Path
        The instrument file (format in the module docstring).

    Returns
    -------
    instrument : Instrument

    Raises
    ------
    InputError
        For a missing file, bad TOML, an unknown key, a unit or axis not understood, column
        lists that are not three distinct names, two seat groups with one name, two logger
        axes mounted on the same rider axis, or a value out of range (naming the key).
    """
    path = Path(path)
    doc = Fields(path, load_toml(path))
    time = doc.sub("time")
    time_column = time.text("column", "t")
    unit = time.text("unit", "s", choices=("s", "ms"))
    max_gap = time.optional_number("max_gap_s", positive=True, maximum=3600.0)
    accel = doc.sub("acceleration")
    accel_unit = accel.text("unit", "g", choices=("g", "m/s2"))
    seat_tables = doc.table_list("seats")
    if seat_tables:
        groups = []
        for table in seat_tables:
            cols = table.raw("columns")
            table.check("columns", _three_names(cols), "must list three column names",
                        'write columns = ["ax", "ay", "az"] (logger x, y, z)')
            groups.append((table.text("name"), tuple(cols)))
        names = [g[0] for g in groups]
        if len(set(names)) != len(names):
            raise InputError(path, "two seat groups have the same name", "name each seat once",
                             key="seats")
        accel.raw("columns")
    else:
        cols = accel.raw("columns", ["gx", "gy", "gz"])
        accel.check("columns", _three_names(cols), "must list three column names",
                    'write columns = ["ax", "ay", "az"] (logger x, y, z)')
        groups = [("recorded", tuple(cols))]
    mount = doc.sub("mounting")
    mounting = tuple(_axis(mount, a) for a in AXES)
    if sorted(a for a, _ in mounting) != [0, 1, 2]:
        raise InputError(path, "mounting maps two logger axes onto the same rider axis",
                         "each of rider x, y and z must appear once", key="mounting")
    seat_column = doc.raw("seat_column")
    if seat_column is not None and not isinstance(seat_column, str):
        raise doc.error("seat_column", "must be a column name in quotes")
    ignore = doc.raw("ignore", [])
    if not isinstance(ignore, list) or not all(isinstance(c, str) for c in ignore):
        raise doc.error("ignore", "must be a list of column names",
                        'write ignore = ["temp", "battery"]')
    tolerance = doc.number("zero_tolerance_g", DEFAULT_ZERO_TOLERANCE_G, positive=True,
                           maximum=1.0)
    for f in (doc, time, accel, mount, *seat_tables):
        f.done()
    return Instrument(time_column, 1e-3 if unit == "ms" else 1.0, tuple(groups),
                      1.0 / G0 if accel_unit == "m/s2" else 1.0, mounting, seat_column,
                      tuple(ignore), max_gap, tolerance, str(path))


def _three_names(cols) -> bool:
    return (isinstance(cols, list) and len(cols) == 3 and all(isinstance(c, str) for c in cols)
            and len(set(cols)) == 3)

"""Track centerline input: loading and validating a sampled centerline from a CSV file.

The file has the columns ``x, y, z`` [m] (z up), one row per sample in travel order, and
optionally either ``roll_deg`` (bank angle, ISO 8855 sign: positive = right side down) or an
explicit up vector ``up_x, up_y, up_z``. Lines starting with ``#`` are comments.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .csvtable import read_numeric_csv
from .errors import InputError

FOOT_M = 0.3048  # international foot [m], exact by definition (1959 agreement)
UP_ALONG_TANGENT_DEG = 5.0  # an up vector within this of the tangent is refused
KINK_LIMIT_DEG = 45.0  # turn between successive chords that no track makes between samples
MIN_CHORD_M = 1e-6
MAX_COORDINATE_M = 1e6  # no layout reaches 1000 km from its origin
MAX_DECIMALS = 6  # coordinates with more decimals than this count as unrounded
# A grid coarser than this (or than a tenth of the median sample spacing) is taken as values
# typed on purpose (whole metres, decimetres), not as an export's rounding.
ROUNDING_CAP_M = 0.0101


@dataclass(frozen=True)
class Centerline:
    """Validated centerline samples in SI units.

    ``roll_deg`` or ``up`` is set when the file gives an orientation; never both.

    Attributes
    ----------
    points : (n, 3) ndarray
        Sample positions in travel order, world axes with z up [m].
    roll_deg : (n,) ndarray or None
        Bank angle at each sample, ISO 8855 sign (positive = right side down) [deg].
    up : (n, 3) ndarray or None
        Explicit up vector at each sample as given in the file (not normalized) [-].
    source : str
        File the samples came from, for messages.
    lines : (n,) ndarray or None
        1-based file line of each sample, for messages.
    resolution_m : float or None
        Decimal grid the file's coordinates sit on (an export's rounding), if any [m].
    resolution_text : str
        That grid in the file's own unit, e.g. ``"0.001 m"``; empty when there is none.
    """

    points: np.ndarray
    roll_deg: np.ndarray | None = None
    up: np.ndarray | None = None
    source: str = "<memory>"
    lines: np.ndarray | None = None  # file line of each sample, for messages
    resolution_m: float | None = None  # grid the file's coordinates sit on [m], if any
    resolution_text: str = ""  # that grid in the file's own unit, e.g. "0.001 m"

    @property
    def count(self) -> int:
        """Number of samples n [-]."""
        return len(self.points)


def chord_turn_deg(points: np.ndarray) -> np.ndarray:
    """Angle between successive chords at each interior sample.

    Parameters
    ----------
    points : (n, 3) ndarray
        Centerline samples in travel order [m]; successive samples must differ.

    Returns
    -------
    turn : (n - 2,) ndarray
        Angle between chord i-1 -> i and chord i -> i+1 at interior sample i, in [0, 180]
        [deg].
    """
    chords = np.diff(points, axis=0)
    a, b = chords[:-1], chords[1:]
    cos = np.einsum("ij,ij->i", a, b) / (np.linalg.norm(a, axis=1) * np.linalg.norm(b, axis=1))
    return np.degrees(np.arccos(np.clip(cos, -1.0, 1.0)))


def coordinate_resolution(values: np.ndarray) -> float | None:
    """The decimal grid 10^-d (in the values' own unit) that every value sits on, or None.

    A CAD export that writes d decimals rounds every coordinate to a multiple of 10^-d; the
    smallest such d is found by testing d = 0, 1, ..., MAX_DECIMALS with a tolerance for
    binary floating point. None means the values carry more than MAX_DECIMALS decimals (no
    rounding worth fitting around).

    Parameters
    ----------
    values : array_like
        Coordinates in the file's own unit, any shape; non-finite values are ignored.

    Returns
    -------
    grid : float or None
        The grid 10^-d in the values' unit, or None when no d <= MAX_DECIMALS fits (or there
        are no finite values).
    """
    v = np.asarray(values, dtype=float).ravel()
    v = v[np.isfinite(v)]
    if v.size == 0:
        return None
    for decimals in range(MAX_DECIMALS + 1):
        scaled = v * 10.0**decimals
        off = np.abs(scaled - np.round(scaled))
        if np.all(off <= 1e-6 + 1e-12 * np.abs(scaled)):
            return 10.0**-decimals
    return None


def smoothing_for(line: Centerline, requested_m: float | None) -> float:
    """The smoothing tolerance [m] of a run: the one asked for, else half the coordinate grid.

    Rounding to a grid q leaves each coordinate off by up to q/2 (uniform, RMS q/sqrt(12)),
    so a point is off by sqrt(3) q / sqrt(12) = q/2 RMS when all three coordinates vary: a
    fit within q/2 keeps what the file states and drops what the rounding added.

    Parameters
    ----------
    line : Centerline
        The loaded centerline; its ``resolution_m`` is used when nothing is requested.
    requested_m : float or None
        Tolerance asked for by the user [m]; None to derive it from the file's grid.

    Returns
    -------
    tolerance_m : float
        RMS distance the fitted curve may keep from the samples [m]; 0.0 = interpolate.
    """
    if requested_m is not None:
        return float(requested_m)
    return 0.5 * line.resolution_m if line.resolution_m else 0.0


def _refuse_out_of_reach(path, points: np.ndarray, rows: np.ndarray) -> None:
    """A one-line error naming the first coordinate beyond MAX_COORDINATE_M (row, column),
    before any arithmetic on it can overflow."""
    beyond = np.abs(points) > MAX_COORDINATE_M
    if beyond.any():
        i, k = np.argwhere(beyond)[0]
        raise InputError(path, f"coordinate beyond {MAX_COORDINATE_M:.0e} m",
                         "check the units and the export; coordinates are metres",
                         row=int(rows[i]), column="xyz"[k])


def validate_centerline(line: Centerline) -> Centerline:
    """Check the geometric sanity of a centerline; raise InputError naming the sample.

    Parameters
    ----------
    line : Centerline
        Centerline to check; ``line.lines`` (when set) gives the file rows for messages.

    Returns
    -------
    line : Centerline
        The same object, unchanged, when every check passes.

    Raises
    ------
    InputError
        Fewer than 4 samples; a coordinate beyond MAX_COORDINATE_M; a repeated point (chord
        below MIN_CHORD_M); a turn of more than KINK_LIMIT_DEG between successive chords; a
        zero up vector; or an up vector within UP_ALONG_TANGENT_DEG of the tangent.
    """
    path, pts = line.source, line.points
    rows = line.lines if line.lines is not None else np.arange(2, len(pts) + 2)
    if len(pts) < 4:
        raise InputError(path, f"has {len(pts)} samples; a centerline needs at least 4",
                         "export the centerline with more points")
    _refuse_out_of_reach(path, pts, rows)
    chords = np.linalg.norm(np.diff(pts, axis=0), axis=1)
    repeated = np.flatnonzero(chords < MIN_CHORD_M)
    if repeated.size:
        i = repeated[0] + 1
        raise InputError(path, "repeats the previous point", "delete the duplicated row",
                         row=int(rows[i]), column="x")
    turns = chord_turn_deg(pts)
    kinks = np.flatnonzero(turns > KINK_LIMIT_DEG)
    if kinks.size:
        i = kinks[0] + 1
        station = float(np.sum(chords[:i]))
        raise InputError(path, f"kink of {turns[i - 1]:.0f} deg at station {station:.2f} m: a "
                         f"track cannot turn more than {KINK_LIMIT_DEG:.0f} deg between samples",
                         "check the row order or sample the curve more finely",
                         row=int(rows[i]), column="x")
    if line.up is not None:
        norms = np.linalg.norm(line.up, axis=1)
        zero = np.flatnonzero(norms < 1e-9)
        if zero.size:
            raise InputError(path, "up vector is zero", "give a non-zero up vector",
                             row=int(rows[zero[0]]), column="up_x")
        tangent = np.gradient(pts, axis=0)
        tangent /= np.linalg.norm(tangent, axis=1)[:, None]
        unit_up = line.up / norms[:, None]
        along = np.abs(np.einsum("ij,ij->i", unit_up, tangent))
        parallel = np.flatnonzero(along > np.cos(np.radians(UP_ALONG_TANGENT_DEG)))
        if parallel.size:
            raise InputError(path, "up vector is (nearly) parallel to the track tangent",
                             "the up vector must point away from the rails, across the track",
                             row=int(rows[parallel[0]]), column="up_x")
    return line


def load_centerline(path: str | Path, units: str = "m") -> Centerline:
    """Load and validate a centerline CSV.

    Parameters
    ----------
    path : str or Path
        CSV with columns ``x, y, z`` and optionally ``roll_deg`` or ``up_x, up_y, up_z``.
    units : {"m", "ft"}
        Length unit of the coordinates in the file; feet are converted with FOOT_M.

    Returns
    -------
    line : Centerline
        Validated samples in metres, with the coordinates' rounding grid when one is found.

    Raises
    ------
    InputError
        Unknown ``units``; an unreadable or malformed CSV (missing column, bad cell); both a
        roll column and up-vector columns; an incomplete up vector; or any failure of
        :func:`validate_centerline`.
    """
    path = Path(path)
    if units not in ("m", "ft"):
        raise InputError(path, f"unknown length unit '{units}'", "use --units m or --units ft")
    table = read_numeric_csv(path, ["x", "y", "z"], ["roll_deg", "up_x", "up_y", "up_z"],
                             what="centerline")
    scale = FOOT_M if units == "ft" else 1.0
    points = np.column_stack([table.columns[c] for c in "xyz"]) * scale
    _refuse_out_of_reach(path, points, table.lines if table.lines is not None
                         else np.arange(2, len(points) + 2))
    up_names = [c for c in ("up_x", "up_y", "up_z") if table.has(c)]
    if table.has("roll_deg") and up_names:
        raise InputError(path, "gives both roll_deg and up vector columns",
                         "keep one way of stating the bank: roll_deg or up_x/up_y/up_z",
                         row=None, column="roll_deg")
    if up_names and len(up_names) != 3:
        missing = sorted({"up_x", "up_y", "up_z"} - set(up_names))[0]
        raise InputError(path, "up vector needs all three columns up_x, up_y, up_z",
                         f"add column '{missing}'", column=missing)
    roll = table.columns["roll_deg"].copy() if table.has("roll_deg") else None
    up = np.column_stack([table.columns[c] for c in up_names]) if up_names else None
    grid = coordinate_resolution(np.column_stack([table.columns[c] for c in "xyz"]))
    spacing = float(np.median(np.linalg.norm(np.diff(points, axis=0), axis=1))) \
        if len(points) > 1 else 0.0
    resolution = (grid * scale if grid is not None
                  and 1e-6 <= grid * scale <= min(ROUNDING_CAP_M, 0.1 * spacing) else None)
    text = f"{grid:g} {units}" if resolution is not None else ""
    line = Centerline(points, roll, up, str(path), table.lines, resolution, text)
    return validate_centerline(line)

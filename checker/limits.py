"""Limit sets: loading, validating and interpolating user-editable acceleration limits.

A limit set is one TOML file (format in the README) with optional CSV tables beside it. It
holds metadata, the signal filter, duration-dependent single-axis limits per axis and
direction, combined-axis envelopes (polygons or ellipses) and onset-rate limits.
"""

from __future__ import annotations

import hashlib
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .conditioning import FilterSpec
from .csvtable import read_numeric_csv
from .errors import InputError
from .paths import read_input_bytes
from .terminal import shorten
from .tomlfields import Fields, load_toml

AXES = ("gx", "gy", "gz")
PLANES = {("gx", "gz"): "x-z", ("gy", "gz"): "y-z", ("gx", "gy"): "x-y"}
REST = {"gx": 0.0, "gy": 0.0, "gz": 1.0}  # a rider at rest in a level seat [g0]
INTERPOLATIONS = ("linear", "log", "step")
DIRECTION_WORDS = {"positive": 1, "negative": -1, "left": 1, "right": -1}


@dataclass(frozen=True)
class DurationLimit:
    """Allowed level [g0] against sustained duration [s] for one axis and direction.

    The allowed level at a duration below the first point is the first level; beyond the last
    point the last level holds. ``linear`` interpolates in duration, ``log`` in log(duration),
    ``step`` keeps each level until the next point's duration.

    Attributes
    ----------
    axis : str
        ``"gx"``, ``"gy"`` or ``"gz"``.
    sign : int
        +1: the limit bounds the signal from above (positive levels); -1: from below
        (negative levels; for gy, -1 is the rider's right).
    durations_s : (m,) ndarray
        Sustained durations, increasing, >= 0 [s].
    levels_g : (m,) ndarray
        Allowed level at each duration, signed as ``sign``, |level| not growing with
        duration [g0].
    interpolation : {"linear", "log", "step"}
        How the level is read between the points.
    """

    axis: str
    sign: int  # +1: the signal above the level; -1: below (levels are negative)
    durations_s: np.ndarray
    levels_g: np.ndarray
    interpolation: str = "linear"

    @property
    def name(self) -> str:
        """Display name, e.g. ``"+Gz"``, ``"-Gz"``, ``"Gy left"``, ``"Gy right"``."""
        if self.axis == "gy":
            return "Gy left" if self.sign > 0 else "Gy right"
        return ("+" if self.sign > 0 else "-") + self.axis.capitalize()

    def allowed(self, duration_s: np.ndarray) -> np.ndarray:
        """Allowed level at each duration.

        Parameters
        ----------
        duration_s : array_like
            Durations [s].

        Returns
        -------
        level : ndarray
            Allowed level, signed as ``sign``, same shape as ``duration_s`` [g0].
        """
        d = np.asarray(duration_s, dtype=float)
        x, y = self.durations_s, self.levels_g
        if len(x) == 1:
            return np.full_like(d, y[0])
        if self.interpolation == "step":
            idx = np.clip(np.searchsorted(x, d, side="right") - 1, 0, len(x) - 1)
            return y[idx]
        if self.interpolation == "log":
            floor = x[x > 0].min() if np.any(x > 0) else 1e-3
            return np.interp(np.log(np.maximum(d, floor)), np.log(np.maximum(x, floor)), y)
        return np.interp(d, x, y)


@dataclass(frozen=True)
class CombinedEnvelope:
    """An allowed region in the plane of two axes, as a closed polygon [g0].

    Attributes
    ----------
    name : str
        Envelope name, e.g. ``"x-z envelope"``.
    axes : tuple of (str, str)
        The plane: ``("gx", "gz")``, ``("gy", "gz")`` or ``("gx", "gy")``.
    vertices : (m, 2) ndarray
        Polygon vertices in order around the boundary, not repeating the first [g0]. An
        ellipse is a 144-vertex polygon on it (quadrant-wise half-axes from the duration
        limits); for ``"sustained"`` the ellipse at 0 s, the outer bound drawn in figures.
    source : {"polygon", "ellipse", "sustained"}
        How the envelope was given; ``"sustained"`` is checked per sample with the
        admissible levels for the duration held (:mod:`checker.sustained`).
    """

    name: str
    axes: tuple[str, str]
    vertices: np.ndarray  # (m, 2), not repeating the first vertex
    source: str = "polygon"


@dataclass(frozen=True)
class Zone:
    """One region of a restraint diagram in the (Gx, Gz) plane [g0].

    ``order`` ranks the zones from least (1) to most restraint; a visit counts only when the
    filtered trace stays inside for at least ``dwell_s`` [s].

    Attributes
    ----------
    name : str
        Zone name.
    order : int
        Rank, 1 = least restraint, unique in a limit set.
    vertices : (m, 2) ndarray
        Polygon vertices (gx, gz) in order around the zone [g0].
    dwell_s : float
        Shortest stay inside that counts as reaching the zone [s].
    """

    name: str
    order: int
    vertices: np.ndarray  # (m, 2): (gx, gz)
    dwell_s: float = 0.0


@dataclass(frozen=True)
class OnsetLimit:
    """Limit on the rate of change of one filtered axis.

    Attributes
    ----------
    axis : str
        ``"gx"``, ``"gy"`` or ``"gz"``.
    limit_g_per_s : float
        Largest allowed |d(G)/dt| [g0/s].
    """

    axis: str
    limit_g_per_s: float


@dataclass(frozen=True)
class LimitSet:
    """A validated limit set (one TOML file and the tables it names).

    Attributes
    ----------
    title : str
        ``meta.title``.
    represents : str
        What the set stands for, as the file says (``meta.represents``).
    revision : str
        ``meta.revision``.
    illustrative : bool
        True for an example set that stands for no code or standard.
    filter : FilterSpec
        Low-pass filter applied to the signals before the rules.
    duration : tuple of DurationLimit
        At most one per axis and direction.
    combined : tuple of CombinedEnvelope
        Combined-axis envelopes.
    onset : tuple of OnsetLimit
        Onset-rate limits.
    path : str
        The limits file.
    sha256 : str
        SHA-256 of the limits file (hex).
    files : tuple of (str, str)
        (path, sha256) of the file and each table it reads.
    zones : tuple of Zone
        Restraint diagram, by increasing order; empty when none.
    uplift_free_travel_m : float or None
        ``[uplift] free_travel_m``: the rise off the seat a restraint allows [m].
    """

    title: str
    represents: str
    revision: str
    illustrative: bool
    filter: FilterSpec
    duration: tuple[DurationLimit, ...]
    combined: tuple[CombinedEnvelope, ...]
    onset: tuple[OnsetLimit, ...]
    path: str = "<memory>"
    sha256: str = ""
    files: tuple[tuple[str, str], ...] = ()  # (path, sha256) of the file and its tables
    zones: tuple[Zone, ...] = ()  # restraint diagram, by increasing order
    uplift_free_travel_m: float | None = None  # [uplift] free_travel_m: allowed rise [m]


def sha256_of(path: str | Path) -> str:
    """SHA-256 of a file's bytes.

    Parameters
    ----------
    path : str or Path
        An input file (read through ``checker.paths.read_input_bytes``).

    Returns
    -------
    digest : str
        64 hex digits.

    Raises
    ------
    InputError
        When the file cannot be read as an input (missing, not regular, over the size cap).
    """
    return hashlib.sha256(read_input_bytes(path)).hexdigest()


def _segments_cross(p1, p2, q1, q2) -> bool:
    def orient(a, b, c):
        return np.sign((b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]))

    o1, o2 = orient(p1, p2, q1), orient(p1, p2, q2)
    o3, o4 = orient(q1, q2, p1), orient(q1, q2, p2)
    if o1 != o2 and o3 != o4 and 0 not in (o1, o2, o3, o4):
        return True

    def on_segment(a, b, c):  # c collinear with a-b and within its box
        return (min(a[0], b[0]) - 1e-12 <= c[0] <= max(a[0], b[0]) + 1e-12
                and min(a[1], b[1]) - 1e-12 <= c[1] <= max(a[1], b[1]) + 1e-12)

    return bool((o1 == 0 and on_segment(p1, p2, q1)) or (o2 == 0 and on_segment(p1, p2, q2))
                or (o3 == 0 and on_segment(q1, q2, p1)) or (o4 == 0 and on_segment(q1, q2, p2)))


def polygon_problem(vertices: np.ndarray) -> str | None:
    """Why a closed polygon is unusable, or None.

    Parameters
    ----------
    vertices : (m, 2) ndarray
        Vertices in order; repeated consecutive vertices and a closing repeat are ignored.

    Returns
    -------
    problem : str or None
        "has k distinct vertices ...", "is self-intersecting (edge i crosses edge j)" or
        "has zero area"; None for a usable polygon.
    """
    v = np.asarray(vertices, dtype=float)
    keep = np.ones(len(v), dtype=bool)
    keep[1:] = np.any(np.abs(np.diff(v, axis=0)) > 1e-12, axis=1)  # drop repeated vertices
    v = v[keep]
    if len(v) >= 2 and np.allclose(v[0], v[-1]):
        v = v[:-1]
    if len(v) < 3:
        return f"has {len(v)} distinct vertices; a polygon needs at least 3"
    m = len(v)
    edges = [(v[i], v[(i + 1) % m]) for i in range(m)]
    for i in range(m):
        for j in range(i + 1, m):
            if j == i + 1 or (i == 0 and j == m - 1):
                continue  # neighbours share a vertex
            if _segments_cross(*edges[i], *edges[j]):
                return f"is self-intersecting (edge {i + 1} crosses edge {j + 1})"
    area = 0.5 * np.sum(v[:, 0] * np.roll(v[:, 1], -1) - np.roll(v[:, 0], -1) * v[:, 1])
    if abs(area) < 1e-12:
        return "has zero area"
    return None


def contains(vertices: np.ndarray, points: np.ndarray) -> np.ndarray:
    """Which points lie inside or on a closed polygon.

    The even-odd crossing test (a ray from each point towards +x crosses the outline an odd
    number of times: Shimrat 1962, in the form of Franklin's PNPOLY), vectorised over the
    points one edge at a time; points it puts outside but within a relative 1e-9 of the
    boundary count as inside.

    Parameters
    ----------
    vertices : (m, 2) ndarray
        Polygon vertices in order, not repeating the first [g0].
    points : (n, 2) ndarray
        Points to test [g0].

    Returns
    -------
    inside : (n,) ndarray of bool

    References
    ----------
    M. Shimrat, "Algorithm 112: Position of point relative to polygon", Communications of the
    ACM 5(8), 1962, p. 434 (from memory).
    """
    tol = 1e-9 * max(1.0, float(np.abs(vertices).max()))
    low, high = vertices.min(axis=0) - tol, vertices.max(axis=0) + tol
    px, py = points[:, 0], points[:, 1]
    in_box = np.flatnonzero((px >= low[0]) & (px <= high[0]) & (py >= low[1])
                            & (py <= high[1]))  # nothing beyond the bounding box is inside
    inside = np.zeros(len(points), dtype=bool)
    inside[in_box] = _crossing_parity(vertices, px[in_box], py[in_box])
    out = in_box[~inside[in_box]]
    if out.size:  # points reported outside but on the boundary count as inside
        # a point within the tolerance of the outline lies within it of some edge, so inside
        # that edge's bounding box grown by it: the exact distance is measured for those alone
        ox, oy = points[out, 0], points[out, 1]
        near = np.zeros(out.size, dtype=bool)
        for a, b in zip(vertices, np.roll(vertices, -1, axis=0)):
            lo, hi = np.minimum(a, b) - tol, np.maximum(a, b) + tol
            near |= (ox >= lo[0]) & (ox <= hi[0]) & (oy >= lo[1]) & (oy <= hi[1])
        out = out[near]
        for a in range(0, out.size, 4096):  # in chunks: the temporaries are (chunk, vertices)
            part = out[a:a + 4096]
            inside[part] = _boundary_distance(vertices, points[part]) <= tol
    return inside


def _crossing_parity(vertices: np.ndarray, px: np.ndarray, py: np.ndarray) -> np.ndarray:
    """True where a ray from (px, py) towards +x crosses the closed outline an odd number of
    times (inside; a point exactly on the outline may go either way)."""
    if len(vertices) > 16 and px.size * len(vertices) <= 1 << 19:
        # many edges (an ellipse's outline) and few points: a Python loop over the edges
        # costs more than testing every edge at once; for many points the loop, which
        # computes crossings only where a point straddles an edge, is cheaper (measured)
        return _crossing_parity_matrix(vertices, px, py)
    inside = np.zeros(px.shape, dtype=bool)
    xj, yj = vertices[-1]
    for xi, yi in vertices:
        if yi != yj:  # a level edge is never crossed by a level ray
            straddle = np.flatnonzero((py < yi) != (py < yj))
            if straddle.size:
                x_at = xi + (py[straddle] - yi) * ((xj - xi) / (yj - yi))
                inside[straddle] ^= px[straddle] < x_at
        xj, yj = xi, yi
    return inside


def _crossing_parity_matrix(vertices: np.ndarray, px: np.ndarray, py: np.ndarray) -> np.ndarray:
    """:func:`_crossing_parity` with every edge at once: (points x edges) tables in chunks of
    about a million cells (a loop over 144 edges cost more than the test)."""
    xi, yi = vertices[:, 0], vertices[:, 1]
    xj, yj = np.roll(xi, 1), np.roll(yi, 1)
    level = yi == yj  # never crossed by a level ray
    with np.errstate(divide="ignore", invalid="ignore"):
        slope = np.where(level, 0.0, (xj - xi) / np.where(level, 1.0, yj - yi))
    inside = np.zeros(px.shape, dtype=bool)
    step = max(1, (1 << 20) // len(vertices))
    for a in range(0, px.size, step):
        y = py[a:a + step, None]
        straddle = ((y < yi) != (y < yj)) & ~level
        x_at = xi + (y - yi) * slope
        inside[a:a + step] = np.count_nonzero(straddle & (px[a:a + step, None] < x_at),
                                              axis=1) % 2 == 1
    return inside


def _boundary_distance(vertices: np.ndarray, points: np.ndarray) -> np.ndarray:
    a = vertices
    e = np.roll(vertices, -1, axis=0) - a
    rel = points[:, None, :] - a[None, :, :]
    length_sq = np.einsum("mk,mk->m", e, e)
    u = np.clip(np.einsum("nmk,mk->nm", rel, e) / np.where(length_sq > 0, length_sq, 1.0),
                0.0, 1.0)
    nearest = a[None, :, :] + u[:, :, None] * e[None, :, :]
    return np.linalg.norm(points[:, None, :] - nearest, axis=2).min(axis=1)


def outside_fraction(vertices: np.ndarray, center: np.ndarray, points: np.ndarray) -> np.ndarray:
    """How far each point lies beyond the boundary, along the ray from ``center``.

    Parameters
    ----------
    vertices : (m, 2) ndarray
        Polygon vertices in order [g0].
    center : (2,) ndarray
        Point inside the polygon the rays start from (the rest point) [g0].
    points : (n, 2) ndarray
        Points [g0].

    Returns
    -------
    fraction : (n,) ndarray
        |p - c| / |boundary - c| - 1 along the ray through each point: 0 on the boundary,
        positive outside (0.2 = 20 % beyond), negative inside; inf when the ray meets no
        edge [-].
    """
    p = np.asarray(points, dtype=float) - center
    a = vertices - center
    b = np.roll(vertices, -1, axis=0) - center
    e = b - a
    # Solve t * p = a + u * e for t >= 0, 0 <= u <= 1 for every point and edge.
    det = p[:, None, 0] * (-e[None, :, 1]) - p[:, None, 1] * (-e[None, :, 0])
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (a[None, :, 0] * (-e[None, :, 1]) - a[None, :, 1] * (-e[None, :, 0])) / det
        u = (p[:, None, 0] * a[None, :, 1] - p[:, None, 1] * a[None, :, 0]) / det
    ok = np.isfinite(t) & (t > 0) & (u >= -1e-12) & (u <= 1 + 1e-12)
    first = np.where(ok, t, np.inf).min(axis=1)  # the point is at 1, the boundary at t
    return np.where(np.isfinite(first), 1.0 / first - 1.0, np.inf)


def _points_from(fields: Fields, name: str, base: Path, columns: tuple[str, str],
                 files: list) -> np.ndarray:
    """A table given inline as ``name = [[a, b], ...]`` or as ``table = "file.csv"``."""
    if fields.has("table"):
        rel = fields.text("table")
        path = base / rel
        # only the limits file's folder and below: a table path never reads (or echoes) any
        # other file, whatever links or '..' it holds
        folder = Path(os.path.realpath(base))
        if Path(rel).is_absolute() or folder not in Path(os.path.realpath(path)).parents:
            raise fields.error("table", f"table file '{shorten(rel, 60)}' is outside the "
                               "limits file's folder", "put the table in the limits file's "
                               "folder (or below it) and give a relative path")
        if not path.is_file():
            raise fields.error("table", f"table file '{shorten(rel, 60)}' not found next to "
                               "the limits file", "give a path relative to the limits file")
        table = read_numeric_csv(path, list(columns), what="limit table")
        files.append((str(path), sha256_of(path)))
        return np.column_stack([table.columns[c] for c in columns])
    raw = fields.raw(name)
    if raw is None:
        raise fields.missing(name, f"give {name} = [[...], ...] or table = \"f.csv\"")
    try:
        arr = np.asarray(raw, dtype=float)
    except (TypeError, ValueError):
        raise fields.error(name, "must be a list of number pairs like [[0.0, 4.0], [1.0, 3.5]]"
                           ) from None
    if arr.ndim != 2 or arr.shape[1] != 2 or len(arr) == 0:
        raise fields.error(name, "must be a list of number pairs like [[0.0, 4.0], [1.0, 3.5]]")
    if not np.all(np.isfinite(arr)):
        raise fields.error(name, "holds a value that is not finite")
    return arr


MAX_LEVEL_G = 20.0  # beyond any ride limit: a unit mistake (m/s^2 written as g?)
MAX_DURATION_S = 3600.0


def _check_range(f: Fields, key: str, values: np.ndarray, bound: float, what: str,
                 unit: str) -> None:
    if values.size and np.abs(values).max() > bound:
        worst = float(values.flat[int(np.argmax(np.abs(values)))])
        raise f.error(key, f"{what} of {worst:g}{unit} is beyond {bound:g}{unit}",
                      f"give values within {bound:g}{unit} (units or a typing slip?)")


def _duration_limit(f: Fields, base: Path, files: list) -> DurationLimit:
    axis = f.text("axis", choices=AXES)
    word = f.text("direction", choices=tuple(DIRECTION_WORDS))
    if word in ("left", "right") and axis != "gy":
        raise f.error("direction", f"'{word}' applies to gy only", "use positive or negative")
    sign = DIRECTION_WORDS[word]
    interp = f.text("interpolation", "linear", choices=INTERPOLATIONS)
    pts = _points_from(f, "points", base, ("duration_s", "limit_g"), files)
    durations, levels = pts[:, 0], pts[:, 1]
    key = "table" if f.has("table") else "points"
    if np.any(durations < 0):
        raise f.error(key, "has a negative duration", "durations are seconds, 0 or more")
    _check_range(f, key, durations, MAX_DURATION_S, "a duration", "s")
    _check_range(f, key, levels, MAX_LEVEL_G, "a level", " g")
    if np.any(np.diff(durations) <= 0):
        i = int(np.flatnonzero(np.diff(durations) <= 0)[0]) + 2
        raise f.error(key, f"durations must increase (point {i} does not)",
                      "list the points by increasing duration")
    if np.any(np.sign(levels) != sign) or np.any(levels == 0):
        expected = "positive" if sign > 0 else "negative"
        raise f.error(key, f"a {word} limit must have {expected} levels",
                      f"write the allowed {axis} for this direction with its sign")
    if np.any(np.diff(np.abs(levels)) > 0):
        i = int(np.flatnonzero(np.diff(np.abs(levels)) > 0)[0]) + 2
        raise f.error(key, f"allowed level grows with duration at point {i}",
                      "a longer exposure must not be allowed a higher level")
    rest = REST[axis]
    if np.any(sign * rest >= sign * levels):
        raise f.error(key, f"the rest value {axis} = {rest:g} already breaks this limit",
                      "check the sign and the axis")
    f.done()
    return DurationLimit(axis, sign, durations, levels, interp)


def _ellipse(duration: tuple[DurationLimit, ...], axes: tuple[str, str], at_s: float,
             f: Fields) -> np.ndarray:
    """Quadrant-wise ellipse through the single-axis admissible values at ``at_s``."""
    reach = {}
    for axis in axes:
        for sign in (1, -1):
            match = [d for d in duration if d.axis == axis and d.sign == sign]
            if not match:
                raise f.error("shape", f"an ellipse needs a duration limit for {axis} in both "
                              "directions", "add the missing [[duration]] limit or a polygon")
            reach[(axis, sign)] = float(match[0].allowed(np.array([at_s]))[0])
    theta = np.linspace(0, 2 * np.pi, 144, endpoint=False)
    c, s = np.cos(theta), np.sin(theta)
    a = np.where(c >= 0, reach[(axes[0], 1)], -reach[(axes[0], -1)])
    b = np.where(s >= 0, reach[(axes[1], 1)], -reach[(axes[1], -1)])
    return np.column_stack([a * c, b * s])


def load_limits(path: str | Path) -> LimitSet:
    """Load and validate a limits TOML file and the CSV tables it names.

    Parameters
    ----------
    path : str or Path
        The limits file (format in the README); tables are read relative to its folder,
        never outside it.

    Returns
    -------
    limits : LimitSet
        With the SHA-256 of the file and of every table.

    Raises
    ------
    InputError
        For a missing file, bad TOML, an unknown key, a value out of range, a table outside
        the limits file's folder or missing, durations not increasing, levels of the wrong
        sign or growing with duration, a rest reading that breaks a limit, two limits for
        one axis and direction, an unusable polygon, an envelope without the rest point,
        zones sharing an order, or no limits at all (naming the key).
    """
    path = Path(path)
    doc = Fields(path, load_toml(path))
    base = path.parent
    files: list[tuple[str, str]] = [(str(path), sha256_of(path))]
    meta = doc.sub("meta", required=True)
    title = meta.text("title")
    represents = meta.text("represents", "")
    revision = str(meta.raw("revision", ""))
    illustrative = meta.flag("illustrative", False)
    meta.done()
    filt = doc.sub("filter")
    spec = FilterSpec(filt.text("kind", "butterworth", choices=("butterworth", "none")),
                      filt.integer("order", 4, minimum=1, maximum=12),
                      filt.number("corner_hz", 5.0, minimum=0.01, maximum=1e4),
                      filt.text("pass", "single", choices=("single", "zero-phase")))
    filt.done()
    duration = tuple(_duration_limit(f, base, files) for f in doc.table_list("duration"))
    seen = set()
    for i, d in enumerate(duration):
        if (d.axis, d.sign) in seen:
            raise InputError(path, f"gives a second limit for {d.name}",
                             "keep one table per axis and direction", key=f"duration[{i + 1}]")
        seen.add((d.axis, d.sign))
    combined = []
    for f in doc.table_list("combined"):
        axes_raw = f.raw("axes")
        if not (isinstance(axes_raw, list) and tuple(axes_raw) in PLANES):
            raise f.error("axes", f"must be one of {[list(k) for k in PLANES]}",
                          "name the two axes of the plane")
        axes = tuple(axes_raw)
        name = f.text("name", PLANES[axes] + " envelope")
        shape = f.text("shape", "polygon", choices=("polygon", "ellipse"))
        at = f.raw("at_duration_s")
        if isinstance(at, str) and (shape != "ellipse" or at != "sustained"):
            raise f.error("at_duration_s", f"'{at}' is not a duration",
                          "give seconds (a number) or \"sustained\", with shape = \"ellipse\"")
        if shape == "ellipse" and at == "sustained":
            # admissible levels per sample for the duration held (checker.sustained); the
            # vertices are the outer bound (at 0 s), for figures
            vertices = _ellipse(duration, axes, 0.0, f)
            shape = "sustained"
        elif shape == "ellipse":
            vertices = _ellipse(duration, axes, f.number("at_duration_s", 0.0, minimum=0,
                                                         maximum=MAX_DURATION_S), f)
        else:
            vertices = _points_from(f, "vertices", base, axes, files)
            _check_range(f, "table" if f.has("table") else "vertices", vertices, MAX_LEVEL_G,
                         "a vertex", " g")
            if len(vertices) >= 2 and np.allclose(vertices[0], vertices[-1]):
                vertices = vertices[:-1]
            problem = polygon_problem(vertices)
            vertices = vertices[np.concatenate(
                [[True], np.any(np.abs(np.diff(vertices, axis=0)) > 1e-12, axis=1)])]
            if problem:
                raise f.error("table" if f.has("table") else "vertices", "polygon " + problem,
                              "list the vertices in order around the boundary")
        rest = np.array([[REST[axes[0]], REST[axes[1]]]])
        if not contains(vertices, rest)[0]:
            given = "table" if f.has("table") else "vertices"  # name what holds the points
            what = (f"the polygon of table '{f.raw('table')}'" if given == "table"
                    else "envelope")
            raise f.error(given, f"{what} does not contain the rest point "
                          f"({axes[0]}, {axes[1]}) = ({rest[0, 0]:g}, {rest[0, 1]:g})",
                          "a rider at rest must be inside; check signs and axis order")
        f.done()
        combined.append(CombinedEnvelope(name, axes, vertices, shape))
    onset = []
    for f in doc.table_list("onset"):
        onset.append(OnsetLimit(f.text("axis", choices=AXES),
                                f.number("limit_g_per_s", positive=True, maximum=1e4)))
        f.done()
    zones = _zones(doc, base, files)
    up = doc.sub("uplift")
    free_travel = up.optional_number("free_travel_m", positive=True, maximum=10,
                                     unit=" m")
    up.done()
    doc.done()
    if not (duration or combined or onset or zones or free_travel):
        raise InputError(path, "holds no limits", "add [[duration]], [[combined]] or [[onset]]")
    return LimitSet(title, represents, revision, illustrative, spec, duration,
                    tuple(combined), tuple(onset), str(path), files[0][1], tuple(files),
                    zones, free_travel)


def _zones(doc: Fields, base: Path, files: list) -> tuple[Zone, ...]:
    """``[[zones]]``: name, order (1 = least restraint), vertices [[gx, gz], ...], dwell_s."""
    zones = []
    for f in doc.table_list("zones"):
        name = f.text("name")
        order = f.integer("order", minimum=1, maximum=1000)
        vertices = _points_from(f, "vertices", base, ("gx", "gz"), files)
        _check_range(f, "vertices", vertices, MAX_LEVEL_G, "a zone vertex", " g")
        if len(vertices) >= 2 and np.allclose(vertices[0], vertices[-1]):
            vertices = vertices[:-1]
        problem = polygon_problem(vertices)
        if problem:
            raise f.error("vertices", "polygon " + problem,
                          "list the (gx, gz) vertices in order around the zone")
        dwell = f.number("dwell_s", 0.0, minimum=0, maximum=60, unit=" s")
        f.done()
        taken = [z.name for z in zones if z.order == order]
        if taken:
            raise f.error("order", f"order {order} is used by zone '{taken[0]}' too",
                          "give each zone its own rank, 1 = least restraint")
        zones.append(Zone(name, order, vertices, dwell))
    return tuple(sorted(zones, key=lambda z: z.order))


def star_shaped(steps: np.ndarray) -> bool:
    """Whether a polygon winds once around a point without turning back.

    Parameters
    ----------
    steps : (m,) ndarray
        The angle [rad] each edge turns through about the point, in (-pi, pi].

    Returns
    -------
    bool
        True when every ray from the point crosses the polygon once (star-shaped about it).
    """
    return bool((np.all(steps > 0) or np.all(steps < 0))
                and abs(abs(steps.sum()) - 2 * np.pi) <= 1e-6)


def ray_fraction(vertices: np.ndarray, center: np.ndarray, points: np.ndarray) -> np.ndarray:
    """:func:`checker.limits.outside_fraction`, fast for a polygon star-shaped about a point.

    When the vertices' angles about ``center`` turn monotonically once around (every ray
    from ``center`` crosses the boundary once), each point's edge is found by binary search
    on the angle, O(n log m); otherwise the general routine is used.

    Parameters
    ----------
    vertices : (m, 2) ndarray
        Polygon vertices in order [g0].
    center : (2,) ndarray
        Point inside the polygon the rays start from [g0].
    points : (n, 2) ndarray
        Points [g0].

    Returns
    -------
    fraction : (n,) ndarray
        |p - c| / |boundary - c| - 1 along each point's ray: 0 on the boundary, positive
        outside, negative inside; inf where undefined (e.g. a point at ``center``) [-].
    """
    a = vertices - center
    ang = np.arctan2(a[:, 1], a[:, 0])
    steps = np.angle(np.exp(1j * np.diff(np.append(ang, ang[0]))))
    if not star_shaped(steps):
        return outside_fraction(vertices, center, points)
    if steps[0] < 0:  # walk the polygon counter-clockwise
        a = a[::-1]
        ang = ang[::-1]
        steps = np.angle(np.exp(1j * np.diff(np.append(ang, ang[0]))))
    unwrapped = ang[0] + np.concatenate([[0.0], np.cumsum(steps[:-1])])
    p = np.asarray(points, dtype=float) - center
    theta = np.mod(np.arctan2(p[:, 1], p[:, 0]) - ang[0], 2 * np.pi) + ang[0]
    i = np.clip(np.searchsorted(unwrapped, theta, side="right") - 1, 0, len(a) - 1)
    start, e = a[i], np.roll(a, -1, axis=0)[i] - a[i]
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (start[:, 0] * e[:, 1] - start[:, 1] * e[:, 0]) / (p[:, 0] * e[:, 1]
                                                             - p[:, 1] * e[:, 0])
    return np.where(np.isfinite(t) & (t > 0), 1.0 / t - 1.0, np.inf)

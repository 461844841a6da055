"""Track geometry: arc-length parameterization, curvature and the rider frame.

Pure numerics: takes arrays, returns a :class:`TrackGeometry` of arrays on a uniform grid of
stations ``s`` [m]. The centerline is a degree-5 B-spline through (or, with a smoothing
tolerance, near) the samples, parameterized by chord length refined to the curve's own arc
length, and re-sampled by arc length.

Frame conventions (ISO 8855 vehicle axes, see DEVELOPERS.md): ``tangent`` x forward, ``left``
y to the rider's left, ``up`` z from seat to head. The level reference ``up0`` is world up
projected onto the plane normal to the tangent, its sign kept continuous, measured as an angle
against a rotation-minimizing frame (parallel transport) and bridged smoothly across
(near-)vertical tangents, where it is undefined. Roll turns ``up0`` about the tangent, positive
right side down.

The frame's angular velocity per unit length, in frame components, is
``omega = (twist, pitch, yaw)`` [rad/m] such that every frame vector e obeys de/ds = omega x e.
The curvature vector is then k = yaw * left - pitch * up.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np
from numpy.polynomial.legendre import leggauss

# scipy's interpolation, linear algebra and root finding are imported where used: they
# cost about 0.3 s to import, and a check of a recorded history never builds a track.
if TYPE_CHECKING:
    from scipy.interpolate import BSpline

WORLD_UP = np.array([0.0, 0.0, 1.0])
STATION_STEP_M = 0.2  # default station grid step [m] of every ride
QUINTIC_MIN_SAMPLES = 6  # a degree-5 spline needs 6 samples; fewer get a cubic
# Tangents within this angle of vertical carry the level reference across by a smooth,
# twist-minimal bridge; SMOOTHING_LENGTH_M sets how gently the reference may turn [m].
BLEND_START_DEG = 10.0
SMOOTHING_LENGTH_M = 1.5
STRAY_TOLERANCES = 20  # a smoothed fit this many tolerances off the samples' curve is refused
# Passes that replace the chord-length parameter by the fitted curve's arc length.
ARC_LENGTH_PASSES = 2
# Smoothing fit: order of the coefficient differences penalized; the length of track end a
# polynomial of END_DEGREE is fitted to, to continue the data past each end.
PENALTY_ORDER = 5
END_FIT_M = 2.0
END_DEGREE = 5
END_GHOST_M = 0.5
# Then the ends are continued by the fit's own curvature (END_PASSES refits) over
# END_GHOST_WIDTHS fit widths, the curvature a straight line through the last
# END_WINDOW_WIDTHS widths (fit width: h lambda^(1 / (2 PENALTY_ORDER)), h the knot spacing).
END_PASSES = 3
END_GHOST_WIDTHS = 3.0
END_WINDOW_WIDTHS = 4.5
# Curvature-noise probe: a smoothing fit within this tolerance [m] is compared with the fit
# used; noise shows as curvature the probe removes (RMS over the samples).
NOISE_PROBE_M = 0.002


class _OutOfReach(ValueError):
    """No fit on the smoothing knots comes within the tolerance of the samples (samples much
    denser in places than the knots, which are evenly spaced)."""


@dataclass(frozen=True)
class SmoothingReport:
    """What a smoothing tolerance changed: sample deviation [m], curvature removed [1/m].

    Also used for the curvature-noise probe (what a fit within NOISE_PROBE_M would remove).
    Curvature removed is the absolute difference, at the input samples, between the
    curvature of a reference curve (the exact interpolant, or for the probe the fit used) and
    that of the smoothed curve.

    Attributes
    ----------
    tolerance_m : float
        RMS distance the smoothed curve was allowed to keep from the samples [m].
    max_deviation_m : float
        Largest distance of the smoothed curve from a sample, at the sample's parameter [m].
    rms_curvature_removed : float
        RMS over the samples of the curvature removed [1/m].
    max_curvature_removed : float
        Largest curvature removed at a sample [1/m].
    station_of_max_removed_m : float
        Station of that sample [m].
    refused : str
        Empty, or why the smoothed fit was not used: the curve then passes through every
        sample (the other figures are zero).
    """

    tolerance_m: float
    max_deviation_m: float
    rms_curvature_removed: float
    max_curvature_removed: float
    station_of_max_removed_m: float
    refused: str = ""  # why the fit was not used (the curve then passes through the samples)


@dataclass(frozen=True)
class TrackGeometry:
    """The centerline and rider frame on a uniform station grid (all SI).

    Frame axes follow ISO 8855 (x forward, y left, z up from seat to head); ``omega`` gives
    every frame vector e the derivative de/ds = omega x e (see the module docstring).

    Attributes
    ----------
    s : (n,) ndarray
        Station (arc length from the first sample), uniform grid [m].
    position : (n, 3) ndarray
        Centerline point at each station, world axes [m].
    tangent : (n, 3) ndarray
        Unit tangent in the travel direction [-].
    left : (n, 3) ndarray
        Unit vector to the rider's left, banked by ``roll_deg`` [-].
    up : (n, 3) ndarray
        Unit vector from seat to head, banked by ``roll_deg`` [-].
    curvature_vector : (n, 3) ndarray
        Curvature vector dT/ds in world axes [1/m].
    omega : (n, 3) ndarray
        Frame angular velocity per metre (twist, pitch, yaw), frame components [rad/m].
    domega : (n, 3) ndarray
        Its derivative d(omega)/ds [rad/m^2].
    roll_deg : (n,) ndarray
        Bank against the level reference, ISO 8855 sign (positive = right side down) [deg].
    torsion : (n,) ndarray
        Frenet torsion of the centerline; nan where the curve is straight [1/m].
    sample_stations : (m,) ndarray
        Station of each input sample [m].
    smoothing : SmoothingReport or None
        What the smoothing tolerance changed; None when the samples were interpolated.
    noise : SmoothingReport or None
        What a fit within NOISE_PROBE_M would remove (curvature-noise probe); None when the
        probe did not run (smoothing at or above NOISE_PROBE_M, or fewer than 8 samples).
    """

    s: np.ndarray  # station [m], uniform, shape (n,)
    position: np.ndarray  # [m], (n, 3)
    tangent: np.ndarray  # unit, (n, 3)
    left: np.ndarray  # unit, (n, 3)
    up: np.ndarray  # unit, (n, 3)
    curvature_vector: np.ndarray  # [1/m], (n, 3), world axes
    omega: np.ndarray  # (twist, pitch, yaw) [rad/m], (n, 3), frame components
    domega: np.ndarray  # d omega / ds [rad/m^2], (n, 3)
    roll_deg: np.ndarray  # bank against the level reference [deg], (n,)
    torsion: np.ndarray  # Frenet torsion of the centerline [1/m], (n,); nan where straight
    sample_stations: np.ndarray  # station of each input sample [m]
    smoothing: SmoothingReport | None = None
    noise: SmoothingReport | None = None  # what a fit within NOISE_PROBE_M would remove

    @property
    def length(self) -> float:
        """Track length, the last station [m]."""
        return float(self.s[-1])

    @property
    def step(self) -> float:
        """Station grid step [m]."""
        return float(self.s[1] - self.s[0])

    @property
    def curvature(self) -> np.ndarray:
        """Curvature magnitude |curvature_vector| at each station, shape (n,) [1/m]."""
        return np.linalg.norm(self.curvature_vector, axis=1)

    def sample(self, stations: np.ndarray, *names: str) -> list[np.ndarray]:
        """Linear interpolation of the named grid arrays at given stations.

        Parameters
        ----------
        stations : array_like
            Stations to sample at, clipped to [0, length] [m]; any shape (k...).
        *names : str
            Names of the grid attributes to sample (e.g. ``"position"``, ``"omega"``).

        Returns
        -------
        values : list of ndarray
            One array per name, shape (k...) for 1-D attributes and (k..., c) for (n, c)
            ones, in the attribute's own unit (views into one array of all the columns).
            Unit vectors are interpolated component-wise and are not re-normalized.
        """
        x = np.clip(np.asarray(stations, dtype=float), 0.0, self.length)
        arrays = [getattr(self, name) for name in names]
        values = interpolate_columns(self.s, np.vstack([a.T for a in arrays]), x)
        out, start = [], 0
        for a in arrays:
            if a.ndim == 1:
                out.append(values[start])
                start += 1
            else:
                out.append(np.moveaxis(values[start:start + a.shape[1]], 0, -1))
                start += a.shape[1]
        return out


def interpolate_columns(s: np.ndarray, columns: np.ndarray, x: np.ndarray) -> np.ndarray:
    """``np.interp`` of several value arrays at once (the same formula and values).

    One interval search serves every array (a uniform grid needs no search, only a
    rounding check), then per array a gather of the interval's slope and left value: for
    many arrays about twice as fast as one ``np.interp`` each.

    Parameters
    ----------
    s : (n,) ndarray
        Increasing abscissae (n >= 2).
    columns : (c, n) ndarray
        Values at ``s``, one array per row.
    x : ndarray
        Where to interpolate, within [s[0], s[-1]]; any shape (k...).

    Returns
    -------
    values : (c, k...) ndarray
        slope * (x - s[j]) + columns[:, j] on the interval s[j] <= x < s[j + 1], and
        columns[:, -1] at x = s[-1] (np.interp's formula).
    """
    shape = np.shape(x)
    x = np.asarray(x, dtype=float).reshape(-1)
    last = len(s) - 2
    with np.errstate(invalid="ignore"):  # nan stations come out nan
        j = ((x - s[0]) * ((last + 1) / (s[-1] - s[0]))).astype(np.intp)
    np.clip(j, 0, last, out=j)
    j -= s[j] > x  # the uniform-grid guess can be one off by rounding
    j += s[j + 1] <= x
    np.clip(j, 0, last, out=j)
    if np.any((s[j] > x) | ((s[j + 1] <= x) & (j < last))):  # not a uniform grid
        j = np.clip(np.searchsorted(s, x, side="right") - 1, 0, last)
    columns = np.asarray(columns, dtype=float)
    slopes = np.diff(columns, axis=1) / np.diff(s)
    into = x - s[j]
    at_end = x >= s[-1]
    out = np.empty((len(columns), len(x)))
    for row, values, slope in zip(out, columns, slopes):
        np.take(slope, j, out=row)
        row *= into
        row += np.take(values, j)
        row[at_end] = values[-1]  # as np.interp
    return out.reshape((len(columns),) + shape)


def _unit(v: np.ndarray) -> np.ndarray:
    return v / np.linalg.norm(v, axis=-1, keepdims=True)


def rotation_minimizing_up(points: np.ndarray, tangent: np.ndarray,
                           first_up: np.ndarray) -> np.ndarray:
    """A rotation-minimizing (zero-twist) normal field along a sampled curve.

    Each step reflects the current normal in the bisector plane of the chord, then in the
    plane that maps the reflected tangent onto the next tangent (double reflection). The two
    reflections of a step do not depend on the normal they carry and map the normal plane at
    one sample onto the next, so the normal is tracked as an angle against a fixed reference
    normal at each sample: every step adds its own angle (the map applied to the reference
    normal, measured against the next reference normal), and the angles are a running sum.

    Parameters
    ----------
    points : (n, 3) ndarray
        Curve points; successive points must differ [m].
    tangent : (n, 3) ndarray
        Unit tangent at each point [-].
    first_up : (3,) ndarray
        Unit normal at the first point, perpendicular to ``tangent[0]`` [-].

    Returns
    -------
    up : (n, 3) ndarray
        Unit normal at each point, transported with (approximately) zero twist [-].

    References
    ----------
    W. Wang, B. Juettler, D. Zheng and Y. Liu, "Computation of rotation minimizing frames",
    ACM Transactions on Graphics 27(1), article 2, 2008.
    """
    points = np.asarray(points, dtype=float)
    tangent = np.asarray(tangent, dtype=float)
    # reference normal at each sample: the world axis least aligned with the tangent,
    # projected normal to it (never degenerate: the axis is at least 54.7 deg off)
    axis = np.argmin(np.abs(tangent), axis=1)
    along = tangent[np.arange(len(tangent)), axis]
    ref = -along[:, None] * tangent
    ref[np.arange(len(tangent)), axis] += 1.0
    ref /= np.linalg.norm(ref, axis=1)[:, None]
    side = np.cross(tangent, ref)
    # the step map M_i = H2 H1 (Householder reflections, identity where a normal vanishes)
    # applied to the reference normal at i, measured against the frame at i + 1
    chord = np.diff(points, axis=0)
    carried, tang_reflected, turns1 = _reflect(chord, ref[:-1], tangent[:-1])
    carried, turns2 = _reflect(tangent[1:] - tang_reflected, carried)
    step_angle = np.arctan2(np.sum(carried * side[1:], axis=1),
                            np.sum(carried * ref[1:], axis=1))
    # A reflection left out (identity) makes M_i improper: it maps the angle a to -a + step.
    # With sign_i the product of the steps' orientations before i, sign * angle is a
    # running sum.
    orientation = np.where(turns1 == turns2, 1.0, -1.0)
    sign = np.concatenate([[1.0], np.cumprod(orientation)])
    start = np.arctan2(first_up @ side[0], first_up @ ref[0])
    angle = sign * (start + np.concatenate([[0.0], np.cumsum(sign[1:] * step_angle)]))
    up = np.cos(angle)[:, None] * ref + np.sin(angle)[:, None] * side
    # rounding drift: back onto the plane normal to the tangent, unit length
    up -= np.sum(up * tangent, axis=1)[:, None] * tangent
    return up / np.linalg.norm(up, axis=1)[:, None]


def _reflect(normal: np.ndarray, *vectors: np.ndarray):
    """``vectors`` reflected in the planes with the given normals (n, 3) (unchanged where a
    normal vanishes), and whether each plane reflected (True) or was the identity."""
    length_sq = np.sum(normal * normal, axis=1)
    active = length_sq > 1e-30
    scale = np.divide(2.0, length_sq, out=np.zeros_like(length_sq), where=active)
    out = [v - (scale * np.sum(v * normal, axis=1))[:, None] * normal for v in vectors]
    return (*out, active)


def _bridge_gaps(s: np.ndarray, values: np.ndarray, good: np.ndarray) -> np.ndarray:
    """Smooth ``values`` around each run of not-``good`` stations; leave the rest as is."""
    from scipy.interpolate import make_smoothing_spline

    out = values.copy()
    step = s[1] - s[0]
    margin = int(np.ceil(10 * SMOOTHING_LENGTH_M / step))
    edges = np.flatnonzero(np.diff(np.concatenate([[0], (~good).astype(np.int8), [0]])))
    for a, b in zip(edges[::2], edges[1::2]):
        lo, hi = max(0, a - margin), min(len(s), b + margin)
        if hi - lo < 6:
            continue
        window = slice(lo, hi)
        weights = np.where(good[window], 1.0, 1e-9)
        fitted = make_smoothing_spline(s[window], values[window], w=weights,
                                       lam=SMOOTHING_LENGTH_M**4 / step)(s[window])
        # fade from the fit back to the level values over the outer part of the window
        pos = np.arange(lo, hi)
        fade = np.minimum(np.clip((pos - lo) / (margin / 2), 0, 1) if lo > 0 else 1.0,
                          np.clip((hi - 1 - pos) / (margin / 2), 0, 1) if hi < len(s) else 1.0)
        fade = fade * fade * (3 - 2 * fade)
        out[window] = fade * fitted + (1 - fade) * values[window]
    return out


def level_reference(points: np.ndarray, tangent: np.ndarray, s: np.ndarray) -> np.ndarray:
    """Level up vector ``up0`` for each grid station, continuous through vertical tangents.

    The level direction (world up projected normal to the tangent) is measured as an angle
    against a rotation-minimizing frame. Where the tangent is within BLEND_START_DEG of
    vertical that angle is ill-conditioned and is left out; the angle is then fitted with a
    cubic smoothing spline (scipy.interpolate.make_smoothing_spline) that follows the level
    direction elsewhere and bridges the vertical stretches with a smooth, twist-minimal
    transition. The sign ambiguity of the level direction (up or down the plane) is resolved
    by continuity: the angle is unwrapped with period pi.

    Parameters
    ----------
    points : (n, 3) ndarray
        Centerline position at each grid station [m].
    tangent : (n, 3) ndarray
        Unit tangent at each grid station [-].
    s : (n,) ndarray
        Stations, uniform grid [m].

    Returns
    -------
    up0 : (n, 3) ndarray
        Unit level reference normal to the tangent (roll zero) [-]. Where no station is
        more than BLEND_START_DEG away from vertical, it is the rotation-minimizing normal
        started from a fixed horizontal seed.

    References
    ----------
    W. Wang, B. Juettler, D. Zheng and Y. Liu, "Computation of rotation minimizing frames",
    ACM Transactions on Graphics 27(1), 2008 (the reference frame the angle is measured in).
    """
    level = WORLD_UP - tangent[:, 2:3] * tangent
    horizontal = np.linalg.norm(level, axis=1)
    good = horizontal > np.sin(np.radians(BLEND_START_DEG))
    if good[0]:
        first = level[0] / horizontal[0]
    else:
        seed = np.array([1.0, 0.0, 0.0]) if abs(tangent[0, 0]) < 0.9 else np.array([0, 1.0, 0])
        first = _unit(seed - seed @ tangent[0] * tangent[0])
    rmf_up = rotation_minimizing_up(points, tangent, first)
    if not good.any():
        return rmf_up
    rmf_left = np.cross(rmf_up, tangent)
    angle = np.arctan2(np.einsum("ij,ij->i", level, rmf_left),
                       np.einsum("ij,ij->i", level, rmf_up))
    kept = np.unwrap(angle[good], period=np.pi)
    smooth = np.interp(s, s[good], kept)
    if not good.all():
        smooth = _bridge_gaps(s, smooth, good)
    c, sn = np.cos(smooth)[:, None], np.sin(smooth)[:, None]
    return c * rmf_up + sn * rmf_left


def _arc_length_at(spline, u: np.ndarray) -> np.ndarray:
    """Arc length [m] of ``spline`` from u[0] to each u (5-point Gauss-Legendre per interval)."""
    nodes, weights = leggauss(5)
    h = np.diff(u)
    mids = 0.5 * (u[1:] + u[:-1])
    length = np.zeros_like(h)
    for x, w in zip(nodes, weights):
        length += 0.5 * h * w * np.linalg.norm(_eval(spline, mids + 0.5 * h * x, 1), axis=1)
    return np.concatenate([[0.0], np.cumsum(length)])


def _with_end_extensions(u: np.ndarray, points: np.ndarray, tolerance_m: float):
    """Samples continued past both ends by a least-squares polynomial through the last
    END_FIT_M of track.

    A penalized fit pulls the curve toward a polynomial where the data stop, which bends
    the first and last metres of a track that starts or ends in a curve; continuing the
    local shape beyond the ends (fitting through it, then using the inside only) takes that
    pull away. The polynomial's degree is the lowest (2 to END_DEGREE) that stays within the
    smoothing tolerance of those samples, so it follows the shape without following the
    rounding; it is extended over END_GHOST_M.
    """
    spacing = (u[-1] - u[0]) / (len(u) - 1)
    count = int(min(max(8, np.ceil(END_FIT_M / spacing)), len(u) // 2))
    if count < 8:
        return u, points
    ghosts = np.arange(1, int(np.ceil(END_GHOST_M / spacing)) + 1) * spacing
    parts_u, parts_p = [u], [points]
    for sl, sign, edge in ((slice(0, count), -1.0, u[0]), (slice(-count, None), 1.0, u[-1])):
        local = u[sl] - edge
        for degree in range(2, END_DEGREE + 1):
            coef = np.polynomial.polynomial.polyfit(local, points[sl], degree)
            residual = np.polynomial.polynomial.polyval(local, coef).T - points[sl]
            if np.sqrt(np.mean(np.sum(residual**2, axis=1))) <= tolerance_m:
                break
        parts_u.append(edge + sign * ghosts)
        parts_p.append(np.polynomial.polynomial.polyval(sign * ghosts, coef).T)
    u_all = np.concatenate(parts_u)
    order = np.argsort(u_all)
    return u_all[order], np.concatenate(parts_p)[order]


def _penalized_fit(points: np.ndarray, u: np.ndarray, degree: int,
                   tolerance_m: float, end_passes: int = END_PASSES) -> BSpline:
    """The smoothest spline on ``knots`` whose RMS distance from the samples is ``tolerance_m``.

    A penalized B-spline (P-spline) on equally spaced knots (one interval per sample on
    average, extended past both ends so that every coefficient is alike): least squares on
    the samples plus lambda times the sum of squared PENALTY_ORDER-th differences of the
    coefficients, solved as one banded Cholesky system. Lambda is found by root-finding so
    that the sum of squared distances equals n * tolerance_m^2 (the discrepancy principle).
    High-order differences penalize the change of curvature, where rounding and CAD noise
    show, and leave circles and clothoids nearly untouched. The samples are first continued
    past both ends (:func:`_with_end_extensions`), then ``end_passes`` times by the last
    fit's own curvature (:func:`_curvature_continuation`); continuations are fitted through
    but not counted in the discrepancy.

    References
    ----------
    P. H. C. Eilers and B. D. Marx, "Flexible smoothing with B-splines and penalties",
    Statistical Science 11(2), 1996. V. A. Morozov, "On the solution of functional equations
    by the method of regularization", Soviet Math. Dokl. 7, 1966 (discrepancy principle).
    """
    u_all, points_all = _with_end_extensions(u, points, tolerance_m)
    spline, log_lam, width = _discrepancy_fit(u, points, u_all, points_all, degree,
                                              tolerance_m)
    half = 0.5 * (u[-1] - u[0])
    for _ in range(end_passes):
        ghost, window = min(END_GHOST_WIDTHS * width, half), min(END_WINDOW_WIDTHS * width, half)
        u_a, p_a = _curvature_continuation(spline, u[0], -1.0, window, ghost)
        u_b, p_b = _curvature_continuation(spline, u[-1], 1.0, window, ghost)
        spline, log_lam, width = _discrepancy_fit(
            u, points, np.concatenate([u_a, u, u_b]), np.concatenate([p_a, points, p_b]),
            degree, tolerance_m, near=log_lam)
    return spline


def _discrepancy_fit(u: np.ndarray, points: np.ndarray, u_all: np.ndarray,
                     points_all: np.ndarray, degree: int,
                     tolerance_m: float,
                     near: float | None = None) -> tuple[BSpline, float, float]:
    """The P-spline through the samples and their continuations ``u_all``, ``points_all``
    (sorted, containing ``u``), lambda set by the samples' discrepancy alone (searched within
    a decade of 10^``near`` first). Returns the spline, log10 of its relative lambda and its
    width h lambda^(1 / (2 PENALTY_ORDER)) [m], about the length it averages over."""
    from scipy.interpolate import BSpline
    from scipy.linalg import LinAlgError, solve_banded, solveh_banded
    from scipy.optimize import brentq

    intervals = len(u) - 1
    h = (u[-1] - u[0]) / intervals
    # the knots must reach the outermost continuation; the margin keeps a last-bit rounding
    # of h from leaving it outside (scipy then refuses the design matrix)
    before = int(np.ceil((u[0] - u_all[0]) / h + 1e-6))
    after = int(np.ceil((u_all[-1] - u[-1]) / h + 1e-6))
    knots = u[0] + h * np.arange(-degree - before, intervals + after + degree + 1)
    basis = BSpline.design_matrix(u_all, knots, degree).tocsc()
    count = basis.shape[1]
    normal = (basis.T @ basis).tocsc()
    rhs = basis.T @ points_all
    first = int(np.searchsorted(u_all, u[0]))
    samples = basis[first:first + len(u)]  # the continuations carry no rounding to count
    target = len(points) * tolerance_m**2

    # both matrices are symmetric and banded: Cholesky on the band (LAPACK pbtrf/pbtrs) is
    # O(count) per lambda
    width_band = max(degree, PENALTY_ORDER)
    normal_band = _upper_band(normal, width_band)
    penalty_band = _difference_penalty_band(count, width_band)
    scale = normal.diagonal().mean() / penalty_band[-1].mean()

    solved: dict[float, np.ndarray] = {}  # the search revisits its bracket and its root

    def coefficients(log_lam: float) -> np.ndarray:
        if log_lam in solved:
            return solved[log_lam]
        band = normal_band + (scale * 10.0**log_lam) * penalty_band
        try:
            out = solveh_banded(band, rhs, check_finite=False)
        except LinAlgError:  # semi-definite to rounding (tiny lambda): LU with pivoting
            out = solve_banded((width_band, width_band), _full_band(band), rhs,
                               check_finite=False)
        solved[log_lam] = out
        return out

    def excess(log_lam: float) -> float:
        residual = samples @ coefficients(log_lam) - points
        return float(np.sum(residual**2)) - target

    low, high = -14.0, 14.0
    if near is not None and excess(near - 1.0) < 0 < excess(near + 1.0):
        low, high = near - 1.0, near + 1.0
    elif excess(low) > 0:  # even the least smoothing stays farther than the tolerance
        raise _OutOfReach
    log_lam = high if excess(high) <= 0 else brentq(excess, low, high, xtol=0.01)
    width = h * (scale * 10.0**log_lam) ** (1.0 / (2 * PENALTY_ORDER))
    return BSpline(knots, coefficients(log_lam), degree, axis=0), log_lam, float(width)


def _upper_band(matrix, width: int) -> np.ndarray:
    """A symmetric sparse matrix as LAPACK upper band storage (``width`` + 1 rows)."""
    count = matrix.shape[0]
    band = np.zeros((width + 1, count))
    for k in range(width + 1):
        band[width - k, k:] = matrix.diagonal(k)
    return band


def _difference_penalty_band(count: int, width: int) -> np.ndarray:
    """D^T D in LAPACK upper band storage (``width`` + 1 rows), D the PENALTY_ORDER-th
    differences of ``count`` coefficients: row r of D is (-1)^(P - a) C(P, a) at columns r + a
    (a = 0..P), so every entry is a sum of integer products, exact in floating point."""
    order = PENALTY_ORDER
    row = [(-1) ** (order - a) * math.comb(order, a) for a in range(order + 1)]
    band = np.zeros((width + 1, count))
    for a in range(order + 1):
        for b in range(a, order + 1):  # D[r, r + a] D[r, r + b] -> M[r + a, r + b]
            band[width - (b - a), b:b + count - order] += row[a] * row[b]
    return band


def _full_band(upper: np.ndarray) -> np.ndarray:
    """LAPACK general band storage of a symmetric matrix given in upper band storage."""
    width, count = upper.shape[0] - 1, upper.shape[1]
    full = np.zeros((2 * width + 1, count))
    full[: width + 1] = upper
    for i in range(1, width + 1):  # below the diagonal: M[j + i, j] = M[j, j + i]
        full[width + i, : count - i] = upper[width - i, i:]
    return full


def _curvature_continuation(spline: BSpline, u_end: float, sign: float, window: float,
                            length: float) -> tuple[np.ndarray, np.ndarray]:
    """Points continuing ``spline`` past ``u_end`` (sign -1: before the start, +1: after the
    end) by its own curvature, at the knot spacing, over ``length`` [m].

    The curvature vector's components in a rotation-minimizing (Bishop) frame are fitted by a
    straight line over the last ``window`` of the curve and carried on; the continuation is
    integrated from the end's position and frame (classical Runge-Kutta). A circle continues
    as the circle, a clothoid as the clothoid, a helix nearly as the helix, so the penalty
    does not bend the ends toward a polynomial.

    Reference: R. L. Bishop, "There is more than one way to frame a curve", American
    Mathematical Monthly 82(3), 1975 (the frame equations T' = k1 M1 + k2 M2, M' = -k T).
    """
    h = (spline.t[-1] - spline.t[0]) / (len(spline.t) - 1)
    inward = np.linspace(0.0, window, max(int(np.ceil(window / (0.5 * h))), 4) + 1)
    u = u_end - sign * inward
    d1, d2 = _eval(spline, u, 1), _eval(spline, u, 2)
    speed = np.linalg.norm(d1, axis=1)
    tangent = d1 / speed[:, None]
    curv = (d2 - np.einsum("ij,ij->i", d2, tangent)[:, None] * tangent) / speed[:, None] ** 2
    seed = np.array([1.0, 0.0, 0.0]) if abs(tangent[0, 0]) < 0.9 else np.array([0, 1.0, 0])
    m1 = rotation_minimizing_up(_eval(spline, u), tangent,
                                _unit(seed - seed @ tangent[0] * tangent[0]))
    m2 = np.cross(tangent, m1)
    slope1, k1 = np.polyfit(inward, np.einsum("ij,ij->i", curv, m1), 1)
    slope2, k2 = np.polyfit(inward, np.einsum("ij,ij->i", curv, m2), 1)

    def rate(t: float, y: np.ndarray) -> np.ndarray:  # y = (position, T, M1, M2); t outward
        c1, c2 = k1 - slope1 * t, k2 - slope2 * t
        return sign * np.concatenate([y[3:6], c1 * y[6:9] + c2 * y[9:12],
                                      -c1 * y[3:6], -c2 * y[3:6]])

    steps = max(int(np.ceil(length / h)), 1)
    dt = length / steps
    y = np.concatenate([_eval(spline, np.array([u_end]))[0], tangent[0], m1[0], m2[0]])
    out = np.empty((steps, 3))
    for i in range(steps):
        t = i * dt
        a = rate(t, y)
        b = rate(t + dt / 2, y + dt / 2 * a)
        c = rate(t + dt / 2, y + dt / 2 * b)
        d = rate(t + dt, y + dt * c)
        y = y + dt / 6 * (a + 2 * b + 2 * c + d)
        out[i] = y[:3]
    u_out = u_end + sign * dt * np.arange(1, steps + 1)
    return (u_out[::-1], out[::-1]) if sign < 0 else (u_out, out)


def _fit_centerline(points: np.ndarray, smoothing_m: float):
    """Fit the centerline; returns (fit used, exact interpolant, sample parameters, why the
    smoothed fit was refused or "").

    The parameter starts as the chord length and is then replaced by the interpolant's own
    arc length at the samples (ARC_LENGTH_PASSES times). With chord lengths, unevenly spaced
    samples force the curve's speed |dC/du| to vary from interval to interval (a long chord
    under-states its arc more than a short one), and a degree-5 spline answers with wiggles
    that show as curvature ringing; with the arc-length parameter the speed is 1 everywhere
    and the ringing goes (alternating 0.1 m / 1.9 m samples then match even ones).
    With ``smoothing_m`` > 0 the curve is the penalized fit on the interpolant's knots,
    unless that fit cannot come within the tolerance or strays from the interpolant between
    samples by more than STRAY_TOLERANCES tolerances: its knots are evenly spaced, so between
    samples far apart only the penalty holds it, and with the small tolerance of a finely
    rounded file it swings there (curvature of 17 1/m on a gentle track, seen); the curve
    then passes through every sample, and the report says why.

    References
    ----------
    E. T. Y. Lee, "Choosing nodes in parametric curve interpolation", Computer-Aided Design
    21(6), 1989 (the parameter's effect on interpolants).
    """
    from scipy.interpolate import make_interp_spline

    degree = 5 if len(points) >= QUINTIC_MIN_SAMPLES else 3
    chords = np.linalg.norm(np.diff(points, axis=0), axis=1)
    u = np.concatenate([[0.0], np.cumsum(chords)])
    interp = make_interp_spline(u, points, k=degree, axis=0)
    for _ in range(ARC_LENGTH_PASSES):
        u = _arc_length_at(interp, u)
        interp = make_interp_spline(u, points, k=degree, axis=0)
    if smoothing_m <= 0:
        return interp, interp, u, ""
    try:
        fit = _penalized_fit(points, u, degree, smoothing_m)
    except _OutOfReach:
        return interp, interp, u, "no smooth curve comes within the tolerance of them"
    between = np.linspace(u[:-1], u[1:], 5)[1:-1].ravel()  # inside every sample interval
    stray = float(np.linalg.norm(_eval(fit, between) - _eval(interp, between), axis=1).max())
    if stray > STRAY_TOLERANCES * smoothing_m:
        return interp, interp, u, (f"the smoothed curve strays {stray * 1000:.3g} mm from "
                                   "them between unevenly spaced samples")
    return fit, interp, u, ""


def _curvature_of(spline, u: np.ndarray) -> np.ndarray:
    d1, d2 = _eval(spline, u, 1), _eval(spline, u, 2)
    return np.linalg.norm(np.cross(d1, d2), axis=1) / np.linalg.norm(d1, axis=1) ** 3


def _eval(spline, u: np.ndarray, nu: int = 0) -> np.ndarray:
    return np.asarray(spline(u, nu))


def build_geometry(
    points: np.ndarray,
    roll_deg: np.ndarray | None = None,
    up: np.ndarray | None = None,
    *,
    smoothing_m: float = 0.0,
    step_m: float = STATION_STEP_M,
) -> TrackGeometry:
    """Arc-length geometry and rider frame from centerline samples.

    The curve is a degree-5 B-spline (cubic below QUINTIC_MIN_SAMPLES samples) interpolating
    the samples, its parameter the chord length refined to the interpolant's own arc length
    (ARC_LENGTH_PASSES passes); with ``smoothing_m`` > 0 a penalized B-spline (P-spline) whose
    penalty weight follows from the discrepancy principle. Arc length is integrated by
    Gauss-Legendre quadrature (3 points on sub-intervals of at most ``step_m / 2``), inverted
    by a cubic Hermite interpolant of u(s), and the curve re-sampled on a uniform station grid.
    Roll at the samples is interpolated by a cubic spline in s. The level reference comes from
    :func:`level_reference`.

    Parameters
    ----------
    points : (n, 3) array_like
        Centerline samples in travel order [m].
    roll_deg : (n,) array_like or None
        Bank at each sample, ISO 8855 sign (positive = right side down) [deg]; None for zero.
    up : (n, 3) array_like or None
        Explicit up vector at each sample [-]; overrides ``roll_deg``; None to use roll.
    smoothing_m : float
        RMS distance the curve may keep from the samples (0 = interpolate) [m].
    step_m : float
        Station grid step [m]; the grid has at least 4 stations.

    Returns
    -------
    geometry : TrackGeometry
        Positions, rider frame, curvature, angular velocity, roll and torsion on the grid,
        with the smoothing report and the curvature-noise probe.

    References
    ----------
    C. de Boor, A Practical Guide to Splines, Springer, 1978 (B-splines).
    P. H. C. Eilers and B. D. Marx, "Flexible smoothing with B-splines and penalties",
    Statistical Science 11(2), 1996 (the P-spline used with ``smoothing_m`` > 0).
    G. H. Golub and J. H. Welsch, "Calculation of Gauss quadrature rules", Mathematics of
    Computation 23, 1969 (Gauss-Legendre nodes and weights).
    """
    from scipy.interpolate import CubicHermiteSpline, make_interp_spline

    points = np.asarray(points, dtype=float)
    spline, interp, u, refused = _fit_centerline(points, smoothing_m)
    # Arc length s(u): 3-point Gauss-Legendre on sub-intervals no longer than step_m / 2.
    chords = np.diff(u)
    pieces = np.maximum(1, np.ceil(chords / (0.5 * step_m)).astype(int))
    starts = np.repeat(u[:-1], pieces)
    frac = np.arange(pieces.sum()) - np.repeat(np.cumsum(pieces) - pieces, pieces)
    u_fine = np.append(starts + np.repeat(chords / pieces, pieces) * frac, u[-1])
    nodes, weights = leggauss(3)
    h = np.diff(u_fine)
    mids = 0.5 * (u_fine[1:] + u_fine[:-1])
    quad = np.zeros_like(h)
    for x, w in zip(nodes, weights):
        speed = np.linalg.norm(_eval(spline, mids + 0.5 * h * x, 1), axis=1)
        quad += 0.5 * h * w * speed
    s_fine = np.concatenate([[0.0], np.cumsum(quad)])
    speed_fine = np.linalg.norm(_eval(spline, u_fine, 1), axis=1)
    u_of_s = CubicHermiteSpline(s_fine, u_fine, 1.0 / speed_fine)
    length = float(s_fine[-1])
    n = max(int(np.ceil(length / step_m)) + 1, 4)
    s = np.linspace(0.0, length, n)
    ug = np.clip(u_of_s(s), u[0], u[-1])
    d1, d2, d3 = (_eval(spline, ug, k) for k in (1, 2, 3))
    position = _eval(spline, ug, 0)
    speed = np.linalg.norm(d1, axis=1)
    tangent = d1 / speed[:, None]
    curv = (d2 - np.einsum("ij,ij->i", d2, tangent)[:, None] * tangent) / speed[:, None] ** 2
    cross = np.cross(d1, d2)
    cross_sq = np.einsum("ij,ij->i", cross, cross)
    with np.errstate(invalid="ignore", divide="ignore"):
        torsion = np.where(cross_sq > 1e-18 * speed**6,
                           np.einsum("ij,ij->i", cross, d3) / cross_sq, np.nan)

    up0 = level_reference(position, tangent, s)
    left0 = np.cross(up0, tangent)
    sample_s = np.interp(u, u_fine, s_fine)
    # Roll at the samples, then a cubic spline in s (continuous roll acceleration).
    if up is not None:
        u0s = _unit(np.column_stack([np.interp(sample_s, s, up0[:, i]) for i in range(3)]))
        l0s = _unit(np.column_stack([np.interp(sample_s, s, left0[:, i]) for i in range(3)]))
        roll_samples = np.degrees(np.arctan2(-np.einsum("ij,ij->i", up, l0s),
                                             np.einsum("ij,ij->i", up, u0s)))
    elif roll_deg is not None:
        roll_samples = np.asarray(roll_deg, dtype=float)
    else:
        roll_samples = np.zeros(len(points))
    roll_samples = np.degrees(np.unwrap(np.radians(roll_samples)))
    if np.ptp(roll_samples) == 0.0:
        roll = np.full(n, roll_samples[0])
        droll = np.zeros(n)
    else:
        roll_spline = make_interp_spline(sample_s, np.radians(roll_samples), k=3)
        roll = np.degrees(roll_spline(s))
        droll = roll_spline(s, 1)
    phi = np.radians(roll)
    c, sn = np.cos(phi)[:, None], np.sin(phi)[:, None]
    up_v = c * up0 - sn * left0
    left_v = c * left0 + sn * up0
    twist0 = np.einsum("ij,ij->i", np.gradient(left0, s, axis=0, edge_order=2), up0)
    omega = np.column_stack([
        twist0 + droll,
        -np.einsum("ij,ij->i", curv, up_v),
        np.einsum("ij,ij->i", curv, left_v),
    ])
    domega = np.gradient(omega, s, axis=0, edge_order=2)  # second order at the track ends

    report = None
    if refused:
        report = SmoothingReport(smoothing_m, 0.0, 0.0, 0.0, 0.0, refused)
    elif smoothing_m > 0:
        report = _smoothing_report(points, spline, interp, u, sample_s, smoothing_m)
    noise = None
    if smoothing_m < NOISE_PROBE_M and len(points) >= 8:
        try:
            probe = _penalized_fit(points, u, 5 if len(points) >= QUINTIC_MIN_SAMPLES else 3,
                                   NOISE_PROBE_M, end_passes=0)
        except _OutOfReach:  # nothing to compare with: no probe
            pass
        else:
            noise = _smoothing_report(points, probe, spline, u, sample_s, NOISE_PROBE_M)
    return TrackGeometry(s, position, tangent, left_v, up_v, curv, omega, domega, roll,
                         torsion, sample_s, report, noise)


def _smoothing_report(points, fitted, reference, u, sample_s, tolerance_m) -> SmoothingReport:
    deviation = np.linalg.norm(_eval(fitted, u) - points, axis=1)
    removed = np.abs(_curvature_of(reference, u) - _curvature_of(fitted, u))
    worst = int(np.argmax(removed))
    return SmoothingReport(tolerance_m, float(deviation.max()),
                           float(np.sqrt(np.mean(removed**2))), float(removed[worst]),
                           float(sample_s[worst]))

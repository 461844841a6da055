"""Rule engine: exposure curves, exceedance events and the verdict.

Duration rules compare how long a filtered signal stays above a level with the limit curve.
For each sample i, let W_i be the longest window around it in which every sample is >= x_i
(bounded by the nearest smaller samples, as in the largest-rectangle-under-a-histogram
problem). A sample above the limit allowed for |W_i| is an exceedance. Only samples above a
rule's lowest allowed level (its floor) can exceed it, so the windows are computed for those
samples alone (sparse-table range minima with binary lifting, vectorized), bounded by one
barrier sample after each run: on a ride that is mostly below the floors this is a few passes
over memory.

The exposure curve E(tau), the highest level the signal stays at or above for at least tau,
is drawn by the reports, not needed for the verdict: it is computed only for the seats a
report draws and only at the durations it plots, each in O(N) as the largest sliding-window
minimum (:func:`exposure_curve` with ``durations_s``).

Combined envelopes test every sample first against the largest quadrant-wise ellipse around
the rest point that fits inside the polygon (one multiply-add per sample); only the samples
outside it go through the exact point-in-polygon test.

References
----------
M. A. Bender and M. Farach-Colton, "The LCA problem revisited", LATIN 2000, LNCS 1776,
pp. 88-94 (the sparse table of power-of-two range minima behind :func:`sustained_windows`).
R. Harter, "The minimum on a sliding window algorithm", 2001 (the ascending-minima method of
``scipy.ndimage.minimum_filter1d``); D. Lemire, "Streaming maximum-minimum filter using no
more than three comparisons per element", Nordic Journal of Computing 13(4), 2006 (the same
O(N) sliding-window minimum).
"""

from __future__ import annotations

from collections.abc import Callable, Iterator, Mapping
from dataclasses import asdict, dataclass, field, replace
from enum import Enum
from functools import partial

import numpy as np

from .conditioning import group_delay_s, lowpass, onset_rate
from .errors import InputError
from .limits import AXES, REST, CombinedEnvelope, DurationLimit, LimitSet, contains
from .limits import ray_fraction as _outside_fraction

AXIS_INDEX = {axis: i for i, axis in enumerate(AXES)}
EXPOSURE_POINTS = 160  # durations drawn per exposure curve (log-spaced)
BLOCK = 1 << 15  # samples per block of the rule scan: its temporaries stay in cache


class TextEnum(str, Enum):
    """A str-valued enum that prints, formats, hashes, compares and goes into JSON as its
    value (so documents keep the same strings).

    Attributes
    ----------
    value : str
        The text a member stands for.
    """

    __hash__ = str.__hash__

    def __str__(self) -> str:
        return str(self.value)

    def __format__(self, spec: str) -> str:
        return format(str(self.value), spec)


class Verdict(TextEnum):
    """The outcome of a check.

    Attributes
    ----------
    PASS : str
        ``"pass"``: no finding and no stall.
    FAIL : str
        ``"fail"``: any finding or stall.
    """

    PASS = "pass"
    FAIL = "fail"


class FindingKind(TextEnum):
    """Which kind of rule a finding breaks.

    Attributes
    ----------
    DURATION : str
        ``"duration"``: a level held longer than the limit curve allows.
    COMBINED : str
        ``"combined"``: a filtered sample outside a combined-axis envelope.
    ONSET : str
        ``"onset"``: the rate of change above the onset limit.
    STALL : str
        ``"stall"``: the train comes to rest outside a stopping brake.
    UPLIFT : str
        ``"uplift"``: upward travel beyond the restraint's free travel.
    """

    DURATION = "duration"  # a level held longer than the limit curve allows
    COMBINED = "combined"  # a filtered sample outside a combined-axis envelope
    ONSET = "onset"  # the rate of change above the onset limit
    STALL = "stall"  # the train comes to rest outside a stopping brake
    UPLIFT = "uplift"  # upward travel beyond the restraint's free travel


MARGIN_UNITS = {"duration": "g", "onset": "g/s", "combined": "%", "stall": "m/s",
                "uplift": "m"}


@dataclass(frozen=True)
class Finding:
    """One exceedance in one seat and case. Times [s], stations [m], levels [g0], onset
    [g0/s].

    ``margin`` is limit minus value in the rule's own unit (``unit``: g for duration rules,
    g/s for onset, % of the envelope for combined-axis rules, where -20 means the worst point
    lies 20 % beyond the envelope boundary); negative means exceeded. Stations are those of
    the seat's car: ``s_start_m`` at the start of the exceedance, ``s_end_m`` at its end,
    ``s_worst_m`` where the filtered signal peaks, and ``s_motion_m`` where the car was one
    filter group delay earlier, when the motion that caused the filtered peak happened. A
    stall (kind ``"stall"``) is reported at the lead car's station, its "peak" is the speed
    there [m/s] and it has no margin.

    Attributes
    ----------
    rule : str
        Rule name, e.g. ``"duration +Gz"``, ``"combined x-z envelope"``, ``"onset gz"``.
    kind : FindingKind
        Kind of rule.
    axis : str
        Axis (``"gz"``), axis pair (``"gx+gz"``) or empty (stall).
    seat : str
        Rider position, e.g. ``"car1-1L"``.
    case : str
        Load case.
    t_start, t_end : float
        Time range of the exceedance [s].
    duration_s : float
        Duration of the governing window (duration rules) or of the exceedance [s].
    peak_g : float
        Peak value in ``peak_unit``: signed level [g0] (duration), distance from the rest
        point [g0] (combined; from zero for a sustained envelope), rate [g0/s] (onset), speed
        [m/s] (stall) or rise [m] (uplift).
    limit_g : float
        The limit in ``peak_unit`` at the governing point.
    margin : float
        Limit minus value in ``unit``; negative = exceeded; nan for a stall.
    t_worst : float
        Time of the worst sample [s].
    s_start_m, s_worst_m, s_end_m : float or None
        Stations of the seat's car at the start, worst sample and end [m]; None for
        recorded data without stations.
    position_m : tuple of float or None
        Rider's world position at the worst sample [m].
    detail : str
        The exceedance in one sentence.
    s_motion_m : float or None
        Station one filter group delay before the worst sample [m].
    group_delay_s : float
        Filter delay between the motion and its filtered peak [s].
    attitude : str
        Stall only: the riders' attitude (upright, on its side, inverted).
    v_m_s : float or None
        Train speed at the worst sample (simulated rides) [m/s].
    ratio : float or None
        Sustained combined rule: (a/A)^2 + (b/B)^2 at the worst sample [-].
    admissible_g : tuple of float or None
        Sustained combined rule: the admissible levels (A, B) there [g0].
    """

    rule: str
    kind: FindingKind
    axis: str
    seat: str
    case: str
    t_start: float
    t_end: float
    duration_s: float
    peak_g: float
    limit_g: float
    margin: float  # limit - value in the rule's own unit; negative = exceeded
    t_worst: float
    s_start_m: float | None = None
    s_worst_m: float | None = None
    position_m: tuple[float, float, float] | None = None
    detail: str = ""
    s_end_m: float | None = None
    s_motion_m: float | None = None
    group_delay_s: float = 0.0  # filter delay between the motion and its filtered peak [s]
    attitude: str = ""  # stall only: the riders' attitude (upright, on its side, inverted)
    v_m_s: float | None = None  # train speed at the worst point [m/s] (simulated rides)
    ratio: float | None = None  # sustained combined rule: (a/A)^2 + (b/B)^2 at the worst sample
    admissible_g: tuple[float, float] | None = None  # sustained combined rule: (A, B) [g0]

    @property
    def unit(self) -> str:
        """Unit of peak, limit and margin."""
        return MARGIN_UNITS.get(self.kind, "g")

    @property
    def peak_unit(self) -> str:
        """Unit of peak and limit: a combined-axis finding gives its distance from the rest
        point in g (its margin is in % of the envelope)."""
        return {"onset": "g/s", "stall": "m/s", "uplift": "m"}.get(self.kind, "g")

    @property
    def severity(self) -> float:
        """Exceedance relative to the limit (0 = at the limit); a stall is the most severe."""
        if self.kind == "stall":
            return float("inf")
        if self.kind == "combined":
            return -self.margin / 100.0
        return -self.margin / abs(self.limit_g) if self.limit_g else float("inf")

    def to_dict(self) -> dict:
        """Every field as JSON, with ``severity``, ``unit`` and ``peak_unit`` added.

        Returns
        -------
        fields : dict
        """
        data = asdict(self)
        data["severity"] = self.severity
        data["unit"] = self.unit
        data["peak_unit"] = self.peak_unit
        return data


@dataclass(frozen=True)
class Exposure:
    """Exposure curve of one signal direction: levels [g0] against duration [s].

    Attributes
    ----------
    durations_s : (k,) ndarray
        Durations [s].
    levels_g : (k,) ndarray
        Highest level sustained for at least each duration, signed as the rule's direction;
        -inf (or +inf for a negative direction) for a duration longer than the signal [g0].
    """

    durations_s: np.ndarray
    levels_g: np.ndarray


@dataclass(frozen=True, eq=False)
class SeatResult:
    """Every rule's outcome for one seat in one load case.

    Attributes
    ----------
    seat : str
        Name of the rider position.
    case : str
        Name of the load case.
    worst : dict
        {axis: (min, max)} of the filtered signal [g0].
    findings : tuple of Finding
        The exceedances, in the order the rules produced them.
    filtered : (n, 3) ndarray or None
        Filtered specific force [g0], or None when not kept (sweeps).
    t : (n,) ndarray or None
        Sample times [s], or None when not kept.
    uplift : UpliftSummary or None
        The seat's flights off the seat (:mod:`checker.uplift`).
    zones : ZoneSummary or None
        The seat on the restraint-zone diagram, when the limits carry zones.
    margins : Mapping
        {rule name: worst margin} in each rule's unit (:func:`checker.sensitivity.rule_margins`);
        while the filtered signal is kept they are computed when first read.
    """

    seat: str
    case: str
    worst: dict  # axis -> (min, max) of the filtered signal [g0]
    findings: tuple[Finding, ...] = ()
    filtered: np.ndarray | None = None
    t: np.ndarray | None = None
    uplift: object | None = None  # checker.uplift.UpliftSummary
    zones: object | None = None  # checker.zones.ZoneSummary (when the limits carry zones)
    margins: Mapping = field(default_factory=dict)  # rule -> worst margin (sensitivity)

    @property
    def verdict(self) -> Verdict:
        """FAIL when any rule is exceeded at this seat in this case, else PASS."""
        return verdict_of(bool(self.findings))

    @property
    def outcome(self) -> str:
        """As the documents mark it: ``"stall"`` when the train stalled (a stall finding),
        else the verdict (``"pass"`` or ``"fail"``)."""
        return "stall" if any(f.kind == "stall" for f in self.findings) else self.verdict

    def without_signals(self) -> SeatResult:
        """The same result without the filtered signal and times.

        Small enough to travel between processes.

        Returns
        -------
        result : SeatResult
            A copy with ``filtered`` and ``t`` set to None (and the margins computed).
        """
        return replace(self, filtered=None, t=None, margins=dict(self.margins))


@dataclass(frozen=True, eq=False)
class Evaluation:
    """Every seat checked against one limit set, with what the run noticed on the way.

    Attributes
    ----------
    limits : LimitSet
        The limit set used.
    seats : tuple of SeatResult
        One per seat and load case.
    warnings : tuple of str
        Plausibility and sampling warnings (the run went on).
    stalls : tuple of str
        Where the train stopped short of the end, one line per ride; a stall fails the check
        just as a finding does.
    """

    limits: LimitSet
    seats: tuple[SeatResult, ...]
    warnings: tuple[str, ...] = ()
    stalls: tuple[str, ...] = ()

    @property
    def findings(self) -> list[Finding]:
        """Every finding of every seat, the most severe first (then by seat and time)."""
        return sorted((f for s in self.seats for f in s.findings),
                      key=lambda f: (-f.severity, f.seat, f.t_start))

    @property
    def verdict(self) -> Verdict:
        """The one verdict of a check: FAIL on any finding or any stall, else PASS."""
        return verdict_of(any(s.findings for s in self.seats), bool(self.stalls))


def verdict_of(*failures: bool) -> Verdict:
    """The verdict rule, in one place: "fail" when anything failed, else "pass".

    Parameters
    ----------
    *failures : bool
        One flag per thing that can fail (findings, stalls, cases).

    Returns
    -------
    verdict : Verdict
        FAIL when anything failed, else PASS.
    """
    return Verdict.FAIL if any(failures) else Verdict.PASS


def sustained_windows(x: np.ndarray, widest: int | None = None,
                      query: np.ndarray | None = None) -> tuple[np.ndarray, np.ndarray]:
    """For each sample, the longest window around it in which every sample is >= it.

    A sparse table holds the minima of every power-of-two block (level l: min of
    x[i:i + 2^l]); each sample's window is then extended to the right, and (on the reversed
    array) to the left, by binary lifting: from the highest level down, a block is taken
    when its minimum is >= the sample. O(N log W) for widths up to W, or O(Q log W) for Q
    queried samples after the table.

    Parameters
    ----------
    x : (n,) array_like
        Signal (e.g. signed filtered level [g0]); -inf samples act as barriers.
    widest : int or None
        A bound on any window's width when known (fewer sparse-table levels); None for the
        length.
    query : (q,) array_like of int or None
        The samples to answer for; None for every sample.

    Returns
    -------
    left, right : ndarray of int
        First and last index (inclusive) of each queried sample's window.

    References
    ----------
    M. A. Bender and M. Farach-Colton, "The LCA problem revisited", LATIN 2000, LNCS 1776,
    pp. 88-94 (sparse table of range minima).
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    bound = n if widest is None else min(n, max(int(widest), 1))
    table = [x]
    while (1 << len(table)) <= bound:
        prev, half = table[-1], 1 << (len(table) - 1)
        table.append(np.minimum(prev[:-half], prev[half:]))
    at = np.arange(n) if query is None else np.asarray(query, dtype=np.intp)
    values = x[at]

    def reach(start: np.ndarray, tables: list[np.ndarray]) -> np.ndarray:
        pos = start + 1  # next index to test, going right
        for level in range(len(tables) - 1, -1, -1):
            span = 1 << level
            fits = pos + span <= n
            idx = np.where(fits, pos, 0)
            block = tables[level]
            ok = fits & (block[np.minimum(idx, len(block) - 1)] >= values)
            pos = np.where(ok, pos + span, pos)
        return pos - 1

    right = reach(at, table)
    left = n - 1 - reach(n - 1 - at, [t[::-1] for t in table])
    return left, right


def exposure_durations(count_samples: int, dt: float,
                       points: int = EXPOSURE_POINTS) -> np.ndarray:
    """Durations at which a figure draws an exposure curve.

    Parameters
    ----------
    count_samples : int
        Length of the signal [samples].
    dt : float
        Sample interval [s].
    points : int
        Largest number of durations.

    Returns
    -------
    durations : (k,) ndarray
        Up to ``points`` distinct whole-sample window lengths spaced evenly in log from one
        sample to the whole signal, times ``dt`` [s]; empty for an empty signal.
    """
    if count_samples < 1:
        return np.zeros(0)
    k = np.unique(np.rint(np.geomspace(1, count_samples, min(count_samples, points))))
    return k * dt


def exposure_curve(x: np.ndarray, dt: float, durations_s: np.ndarray | None = None) -> Exposure:
    """Highest level [g0] sustained for at least each duration [s].

    Without ``durations_s``: the whole curve, for k = 1..N samples (duration k * dt), from
    the sustained windows of every sample. With ``durations_s``: the curve at those
    durations only (rounded to whole samples, at least one), each in O(N) as the largest
    sliding-window minimum, E(k) = max_i min(x[i:i + k]); a duration longer than the signal
    gets -inf. The durations are taken in increasing order: a window up to twice the last
    width is the minimum of two overlapping windows of that width (the sparse-table query),
    a longer one a fresh ``scipy.ndimage.minimum_filter1d`` pass.

    Parameters
    ----------
    x : (n,) array_like
        Signed filtered level, the rule's direction positive [g0].
    dt : float
        Sample interval [s].
    durations_s : (k,) array_like or None
        Durations to evaluate [s]; None for every whole number of samples 1..n.

    Returns
    -------
    exposure : Exposure
        Durations [s] and the highest level sustained for at least each [g0].

    References
    ----------
    R. Harter, "The minimum on a sliding window algorithm", 2001 (the ascending-minima
    algorithm ``scipy.ndimage.minimum_filter1d`` implements); D. Lemire, "Streaming
    maximum-minimum filter using no more than three comparisons per element", Nordic
    Journal of Computing 13(4), 2006. M. A. Bender and M. Farach-Colton, "The LCA problem
    revisited", LATIN 2000 (overlapping power-of-two windows, the doubling step).
    """
    x = np.asarray(x, dtype=float)
    n = len(x)
    if durations_s is None:
        left, right = sustained_windows(x)
        width = right - left + 1
        best = np.full(n + 1, -np.inf)
        np.maximum.at(best, width, x)
        levels = np.maximum.accumulate(best[::-1])[::-1][1:]
        return Exposure(dt * np.arange(1, n + 1), levels)
    from scipy.ndimage import minimum_filter1d  # only figures need it: keep start-up lean

    durations = np.asarray(durations_s, dtype=float)
    samples = np.maximum(1, np.rint(durations / dt)).astype(np.intp)
    levels = np.full(len(samples), -np.inf)
    width, minima = 1, x  # minima[i] = min(x[i:i + width])
    for j in np.argsort(samples, kind="stable"):
        k = int(samples[j])
        if k > n:
            continue
        if k > 2 * width:  # a long jump: one van Herk/Gil-Werman pass
            minima = minimum_filter1d(x, k, mode="constant", cval=-np.inf,
                                      origin=-(k // 2))[: n - k + 1]  # starts at i
            width = k
        elif k > width:  # two overlapping windows of the previous width cover one of k
            minima = np.minimum(minima[: n - k + 1], minima[k - width: n - width + 1])
            width = k
        levels[j] = minima.max()
    return Exposure(durations, levels)


def seat_exposures(result: SeatResult, limits: LimitSet,
                   durations_s: np.ndarray | None = None) -> dict[str, Exposure]:
    """Exposure curves of a seat's filtered signal for every duration rule.

    Parameters
    ----------
    result : SeatResult
        A result evaluated with ``keep_signals`` (filtered signal and times kept).
    limits : LimitSet
        The duration rules (axis and direction).
    durations_s : (k,) ndarray or None
        Durations [s]; None for the durations a figure draws (:func:`exposure_durations`).

    Returns
    -------
    curves : dict
        {rule name: Exposure} with signed levels [g0]; empty when the signals were not kept
        or have fewer than two samples.
    """
    if result.filtered is None or result.t is None or len(result.t) < 2:
        return {}
    dt = 1.0 / sample_rate(result.t)
    if durations_s is None:
        durations_s = exposure_durations(len(result.t), dt)
    out = {}
    for rule in limits.duration:
        x = rule.sign * result.filtered[:, AXIS_INDEX[rule.axis]]
        curve = exposure_curve(x, dt, durations_s)
        out[rule.name] = Exposure(curve.durations_s, rule.sign * curve.levels_g)
    return out


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Inclusive index ranges of the True runs."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return [(int(a), int(b) - 1) for a, b in zip(edges[::2], edges[1::2])]


def _merge(left: np.ndarray, right: np.ndarray) -> list[tuple[int, int, np.ndarray]]:
    """Merge overlapping or touching windows; return groups with the member indices."""
    if len(left) == 0:
        return []
    order = np.argsort(left, kind="stable")
    lo, hi = left[order], right[order]
    reach = np.maximum.accumulate(hi)
    new = np.concatenate([[True], lo[1:] > reach[:-1] + 1])
    starts = np.flatnonzero(new)
    ends = np.append(starts[1:], len(order))
    return [(int(lo[a]), int(reach[b - 1]), order[a:b]) for a, b in zip(starts, ends)]


class _Context:
    """What a finding needs to say where it happened."""

    def __init__(self, seat, case: str, group_delay_s: float = 0.0):
        self.seat = seat
        self.case = case
        self.t = np.asarray(seat.t)
        self.s = getattr(seat, "s", None)
        self.position = getattr(seat, "position", None)
        self.v = getattr(seat, "v", None)
        self.group_delay_s = group_delay_s

    def locate(self, start: int, worst: int, end: int | None = None) -> dict:
        out: dict = {"group_delay_s": self.group_delay_s}
        if self.s is not None:
            out["s_start_m"] = float(self.s[start])
            out["s_worst_m"] = float(self.s[worst])
            out["s_end_m"] = float(self.s[worst if end is None else end])
            out["s_motion_m"] = float(np.interp(self.t[worst] - self.group_delay_s, self.t,
                                                self.s))
        if self.v is not None:
            out["v_m_s"] = float(self.v[worst])
        if self.position is not None:
            out["position_m"] = tuple(float(v) for v in self.position[worst])
        return out


def _kept_in_block(x: np.ndarray, floor: float, sign: float,
                   before: bool) -> tuple[np.ndarray, np.ndarray]:
    """Indices (in ``x``) of the samples of ``sign * x`` above ``floor`` and of the barrier
    sample after each of their runs, with a flag that is True for the samples above.
    ``before``: whether the sample just before ``x`` is above (then x[0] is a barrier)."""
    above = x > floor if sign > 0 else x < -floor
    keep = above.copy()
    keep[1:] |= above[:-1]
    if before and len(keep):
        keep[0] = True
    idx = np.flatnonzero(keep)
    return idx, above[idx]


def _windows_of_kept(keep: np.ndarray, real: np.ndarray, values: np.ndarray,
                     allowed=None, dt: float = 0.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sustained windows of the kept samples above the floor, barriers as -inf (no window
    crosses a barrier, so the longest run between barriers bounds the widths).

    With ``allowed`` (signed-positive allowed level [g0] against duration [s], non-increasing)
    only the samples that can exceed it are answered: a sample's window lies inside its run
    above the floor, so a sample at or below ``allowed(run)`` never exceeds, whatever its
    window.
    """
    r = np.flatnonzero(real)
    if r.size == 0:
        return keep[:0], keep[:0], keep[:0]
    first, last = _index_run_bounds(r)
    widest = int(np.max(last - first)) + 1
    query = r
    if allowed is not None:
        run_of = np.repeat(np.arange(len(first)), last - first + 1)
        run_len = (r[last] - r[first] + 1)[run_of]
        query = r[values[r] > allowed(run_len * dt)]
        if query.size == 0:
            return keep[:0], keep[:0], keep[:0]
    left, right = sustained_windows(np.where(real, values, -np.inf), widest, query)
    return keep[query], keep[left], keep[right]


def _positive(rule: DurationLimit):
    """The rule's allowed level in its own direction (positive) [g0] against duration [s],
    or None when it is not non-increasing (the loader refuses such tables; a rule built in
    Python might not be), in which case no sample may be skipped."""
    if np.any(np.diff(np.abs(rule.levels_g)) > 0):
        return None
    return lambda duration_s: rule.sign * rule.allowed(duration_s)


def windows_above(x: np.ndarray, floor: float,
                  sign: float = 1.0) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sustained windows of the samples of ``sign * x`` above ``floor`` only.

    Samples at or below the floor can never exceed a limit that is above it, so they only
    bound the windows (one barrier sample after each run is enough); leaving them out makes
    the check a few passes over memory on long, mostly quiet rides.

    Parameters
    ----------
    x : (n,) array_like
        Filtered signal [g0].
    floor : float
        Level in the rule's direction (``sign * x``) at or below which samples are left out
        [g0].
    sign : float
        +1 or -1, the rule's direction.

    Returns
    -------
    samples, first, last : (m,) ndarray of int
        Index of each sample above the floor and the first and last index (inclusive) of
        its window, all in ``x``; empty arrays when no sample is above.
    """
    x = np.asarray(x, dtype=float)
    keep, real = _kept_in_block(x, floor, sign, False)
    if not real.any():
        empty = np.zeros(0, dtype=np.intp)
        return empty, empty, empty
    return _windows_of_kept(keep, real, sign * x[keep])


def duration_margin(x: np.ndarray, dt: float, rule: DurationLimit) -> float:
    """Worst margin of a duration rule over a signal [g0]: the least, over the samples, of
    the level allowed for the time the sample's level is held less that level, in the
    rule's own direction (negative where the rule is exceeded).

    Parameters
    ----------
    x : (n,) ndarray
        Filtered signal of the rule's axis [g0], uniformly sampled.
    dt : float
        Sample step [s].
    rule : DurationLimit
        The rule (allowed level against duration, non-increasing).

    Returns
    -------
    float
        The margin [g0]; equal to the most negative finding margin where the rule fails.

    Notes
    -----
    Exact, without the window of every sample. The highest sample, and windows aligned on
    blocks as long as the table's corners, give a first bound b;
    only samples above the table's lowest level less b can beat it, so the others become
    barriers. Over what is left, the margin equals the least over window lengths k of
    allowed(k) - E(k), E the exposure (largest window minimum), found by branch and bound
    on k (:func:`_margin_over_durations`).
    """
    signed = rule.sign * np.asarray(x, dtype=float)
    if signed.size == 0:
        return float("inf")
    top = int(np.argmax(signed))
    peak = signed[top]
    lower = np.flatnonzero(signed < peak)  # the peak's plateau ends at the next lower sample
    at = np.searchsorted(lower, top)
    lo = int(lower[at - 1]) + 1 if at > 0 else 0
    hi = int(lower[at]) - 1 if at < len(lower) else len(signed) - 1
    best = float(rule.sign * rule.allowed(np.array([(hi - lo + 1) * dt]))[0] - peak)
    n = len(signed)
    for k in {int(np.ceil(d / dt - 1e-9)) for d in rule.durations_s} | {8, 64, 512}:
        if 1 < k <= n:  # windows aligned on blocks of k: their best minimum is a bound
            held = float(signed[: n // k * k].reshape(-1, k).min(axis=1).max())
            best = min(best, float(rule.sign * rule.allowed(np.array([k * dt]))[0]) - held)
    floor = float(np.min(rule.sign * rule.levels_g)) - best  # below it a sample does better
    keep, real = _kept_in_block(signed, floor, 1.0, False)
    r = np.flatnonzero(real)
    if r.size == 0:
        return best
    first, last = _index_run_bounds(r)
    compressed = np.where(real, signed[keep], -np.inf)
    widest = int(np.max(last - first)) + 1
    if _positive(rule) is None:  # a table that allows more for longer: every window
        left, right = sustained_windows(compressed, widest, r)
        held = (right - left + 1) * dt
        return min(best, float(np.min(rule.sign * rule.allowed(held) - signed[keep[r]])))
    # past the table's last corner the allowed level stays put while the exposure can only
    # fall: no longer window can do worse than that corner's
    last_corner = max(int(np.ceil(float(rule.durations_s[-1]) / dt - 1e-9)), 1)
    return min(best, _margin_over_durations(compressed, min(widest, last_corner), dt, rule,
                                            best))


def _margin_over_durations(x: np.ndarray, longest: int, dt: float, rule: DurationLimit,
                           best: float) -> float:
    """The same margin as min over window lengths k of allowed(k dt) - E(k), E the exposure
    (largest window minimum) of the compressed signal ``x`` (-inf barriers), by branch and
    bound on k: between two evaluated lengths k1 < k2 no length does better than
    allowed(k2 dt) - E(k1) (both are non-increasing in k).

    E(k) is one pass over the power-of-two minima of level floor(log2 k). Those are rolled
    up one level at a time and only the current level is kept (memory of a few copies of
    the signal, whatever the longest window): a coarse grid of lengths first, ascending,
    then the branch and bound inside each power-of-two range of k in turn.
    """
    count = len(x)
    top = min(longest, count)

    def allowed(k: int) -> float:
        return float(rule.sign * rule.allowed(np.array([k * dt]))[0])

    def levels():  # (level, minima of x[i:i + 2^level]) for level 0, 1, ...
        minima, level = x, 0
        while True:
            yield level, minima
            span = 1 << level
            if 2 * span > count:
                return
            minima, level = np.minimum(minima[:-span], minima[span:]), level + 1

    def exposure(k: int, level: int, minima: np.ndarray) -> float:
        span = 1 << level
        return float(np.max(np.minimum(minima[: count - k + 1],
                                       minima[k - span: count - span + 1])))

    grid = {1, top} | {int(k) for k in np.unique(np.rint(np.geomspace(1, top, 24)))}
    for d in rule.durations_s:  # the table's corners, and either side of them
        k = int(np.ceil(d / dt - 1e-9))
        grid |= {min(max(k + j, 1), top) for j in (-1, 0, 1)}
    known: dict[int, float] = {}
    pending = sorted(grid)
    for level, minima in levels():  # the grid, ascending
        while pending and pending[0].bit_length() - 1 == level:
            k = pending.pop(0)
            known[k] = exposure(k, level, minima)
        if not pending:
            break
    best = min([best] + [allowed(k) - e for k, e in known.items() if np.isfinite(e)])
    for level, minima in levels():  # branch and bound, one power-of-two range at a time
        lo, hi = 1 << level, min((2 << level) - 1, top)
        if lo > top:
            break
        for k in (lo, hi):
            if k not in known:
                known[k] = exposure(k, level, minima)
                if np.isfinite(known[k]):
                    best = min(best, allowed(k) - known[k])
        marks = sorted(k for k in known if lo <= k <= hi)
        stack = [(a, b) for a, b in zip(marks[:-1], marks[1:]) if b > a + 1]
        while stack:
            a, b = stack.pop()
            if not np.isfinite(known[a]) or allowed(b) - known[a] >= best:
                continue
            mid = (a + b) // 2
            known[mid] = exposure(mid, level, minima)
            if np.isfinite(known[mid]):
                best = min(best, allowed(mid) - known[mid])
            stack += [(p, q) for p, q in ((a, mid), (mid, b)) if q > p + 1]
    return best


def _duration_findings(x: np.ndarray, dt: float, rule: DurationLimit, ctx: _Context,
                       windows: tuple[np.ndarray, np.ndarray, np.ndarray]) -> list[Finding]:
    """Findings of one duration rule from the windows of the samples above its floor."""
    samples, left, right = windows
    if samples.size == 0:
        return []
    width = right - left + 1
    level = rule.sign * x[samples]
    allowed = rule.sign * rule.allowed(width * dt)
    bad = np.flatnonzero(level > allowed + 1e-12)
    findings = []
    for start, end, members in _merge(left[bad], right[bad]):
        idx = bad[members]
        excess = level[idx] - allowed[idx]
        g = idx[int(np.argmax(excess))]  # the governing window
        peak_i = start + int(np.argmax(rule.sign * x[start:end + 1]))
        findings.append(Finding(
            rule=f"duration {rule.name}", kind=FindingKind.DURATION, axis=rule.axis,
            seat=ctx.seat.seat,
            case=ctx.case, t_start=float(ctx.t[start]), t_end=float(ctx.t[end]) + dt,
            duration_s=float(width[g] * dt), peak_g=float(x[peak_i]),
            limit_g=float(rule.sign * allowed[g]), margin=float(allowed[g] - level[g]),
            t_worst=float(ctx.t[peak_i]),
            detail=f"sustained {rule.sign * level[g]:.2f} g for {width[g] * dt:.3f} s where "
                   f"{rule.sign * allowed[g]:.2f} g is allowed for that long",
            **ctx.locate(start, peak_i, end)))
    return findings


@dataclass(frozen=True)
class InscribedEllipse:
    """An axis-aligned ellipse inside a polygon.

    A point p is inside the ellipse when sum(((p - center) / scale)^2) < radius^2.

    Attributes
    ----------
    center : (2,) ndarray
        Centre [g0].
    scale : (2,) ndarray
        Half-extents of the polygon, the ellipse's axis ratio [g0].
    radius : float
        Radius in scaled coordinates; 0 when no centre was found inside the polygon (then
        every point goes to the exact test) [-].
    """

    center: np.ndarray  # (2,) [g0]
    scale: np.ndarray  # (2,) [g0]
    radius: float

    def holds(self, a: np.ndarray, b: np.ndarray) -> np.ndarray:
        """Which points lie strictly inside the ellipse.

        Parameters
        ----------
        a, b : (n,) ndarray
            The two coordinates of the points [g0].

        Returns
        -------
        inside : (n,) ndarray of bool
            True strictly inside (with a relative 1e-9 margin); all False for radius 0.
        """
        d = a - self.center[0]
        d *= 1.0 / self.scale[0]
        e = b - self.center[1]
        e *= 1.0 / self.scale[1]
        d *= d
        e *= e
        d += e
        return d < self.radius**2 * (1.0 - 1e-9)


def _distance_to_edges(v: np.ndarray) -> float:
    """Smallest distance from the origin to the edges of the closed polygon ``v``."""
    e = np.roll(v, -1, axis=0) - v
    length_sq = np.einsum("ij,ij->i", e, e)
    u = np.clip(-np.einsum("ij,ij->i", v, e) / np.where(length_sq > 0, length_sq, 1.0),
                0.0, 1.0)
    return float(np.min(np.hypot(*(v + u[:, None] * e).T)))


def _point_inside(v: np.ndarray, p: np.ndarray) -> bool:
    """Even-odd rule for one point strictly inside the closed polygon ``v`` (a point on an
    edge counts as outside: the ellipse then gets radius 0)."""
    w = np.roll(v, -1, axis=0)
    e = w - v
    rel = p - v
    length_sq = np.einsum("ij,ij->i", e, e)
    u = np.clip(np.einsum("ij,ij->i", rel, e) / np.where(length_sq > 0, length_sq, 1.0), 0, 1)
    if np.min(np.hypot(*(rel - u[:, None] * e).T)) == 0.0:
        return False
    crosses = (v[:, 1] > p[1]) != (w[:, 1] > p[1])
    with np.errstate(divide="ignore", invalid="ignore"):
        x_at = v[:, 0] + (p[1] - v[:, 1]) * e[:, 0] / e[:, 1]
    return bool(np.count_nonzero(crosses & (x_at > p[0])) % 2)


def inscribed_ellipse(vertices: np.ndarray, rest: np.ndarray) -> InscribedEllipse:
    """A large axis-aligned ellipse inside the closed polygon ``vertices`` [g0].

    Its semi-axes are proportional to the polygon's half-extents; its centre is the middle of
    the bounding box or, if that is not inside, the rest point ``rest``. In coordinates
    scaled by the half-extents the largest circle about an inside centre that stays inside has
    the radius of the centre's distance to the nearest edge; the scaling is linear, so the
    ellipse it maps to lies inside the polygon.

    Parameters
    ----------
    vertices : (m, 2) ndarray
        Closed polygon, vertices in order [g0].
    rest : (2,) ndarray
        The rest point, the second candidate centre [g0].

    Returns
    -------
    ellipse : InscribedEllipse
        The larger of the two candidates; radius 0 when neither centre is strictly inside.
    """
    v = np.asarray(vertices, dtype=float)
    lo, hi = v.min(axis=0), v.max(axis=0)
    scale = np.where(hi > lo, 0.5 * (hi - lo), 1.0)
    best = InscribedEllipse(np.asarray(rest, dtype=float), scale, 0.0)
    for center in (0.5 * (lo + hi), np.asarray(rest, dtype=float)):
        if _point_inside(v, center):
            radius = _distance_to_edges((v - center) / scale)
            if radius > best.radius:
                best = InscribedEllipse(center, scale, radius)
    return best


def _combined_findings(a: np.ndarray, b: np.ndarray, env: CombinedEnvelope,
                       ctx: _Context, dt: float, check: np.ndarray) -> list[Finding]:
    """Findings of one envelope; ``check``: the samples outside its inscribed ellipse."""
    center = np.array([REST[env.axes[0]], REST[env.axes[1]]])
    if check.size == 0:
        return []
    outside = check[~contains(env.vertices, np.column_stack([a[check], b[check]]))]
    if outside.size == 0:
        return []
    findings = []
    for first, last in _index_runs(outside):
        start, end = int(outside[first]), int(outside[last])
        frac = np.concatenate([  # in chunks: the temporaries are (chunk, vertices)
            _outside_fraction(env.vertices, center,
                              np.column_stack([a[i:min(i + 4096, end + 1)],
                                               b[i:min(i + 4096, end + 1)]]))
            for i in range(start, end + 1, 4096)])
        w = start + int(np.argmax(frac))
        reach = float(np.hypot(a[w] - center[0], b[w] - center[1]))
        findings.append(Finding(
            rule=f"combined {env.name}", kind=FindingKind.COMBINED,
            axis=f"{env.axes[0]}+{env.axes[1]}",
            seat=ctx.seat.seat, case=ctx.case, t_start=float(ctx.t[start]),
            t_end=float(ctx.t[end]) + dt, duration_s=float(ctx.t[end] - ctx.t[start] + dt),
            peak_g=reach, limit_g=reach / (1 + float(frac.max())),
            margin=-100.0 * float(frac.max()), t_worst=float(ctx.t[w]),
            detail=f"({env.axes[0]}, {env.axes[1]}) = ({a[w]:.2f}, {b[w]:.2f}) g, "
                   f"{100 * frac.max():.1f} % outside the envelope",
            **ctx.locate(start, w, end)))
    return findings


def _onset_findings(idx: np.ndarray, rate: np.ndarray, axis: str, limit: float,
                    ctx: _Context, dt: float) -> list[Finding]:
    """Findings of one onset rule from the samples whose rate [g0/s] exceeds the limit."""
    findings = []
    for start, end in _index_runs(idx):
        w = start + int(np.argmax(np.abs(rate[start:end + 1])))
        i, j, k = int(idx[start]), int(idx[end]), int(idx[w])
        findings.append(Finding(
            rule=f"onset {axis}", kind=FindingKind.ONSET, axis=axis, seat=ctx.seat.seat,
            case=ctx.case,
            t_start=float(ctx.t[i]), t_end=float(ctx.t[j]) + dt,
            duration_s=float(ctx.t[j] - ctx.t[i] + dt), peak_g=float(rate[w]),
            limit_g=float(limit), margin=float(limit - abs(rate[w])), t_worst=float(ctx.t[k]),
            detail=f"{axis} changes at {rate[w]:.1f} g/s; limit {limit:g} g/s",
            **ctx.locate(i, k, j)))
    return findings


def _index_run_bounds(idx: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Positions in ``idx`` (sorted sample indices) of the first and of the last sample of
    each run of consecutive samples, as two arrays."""
    cut = np.flatnonzero(np.diff(idx) != 1)
    return np.concatenate([[0], cut + 1]), np.append(cut, len(idx) - 1)


def _index_runs(idx: np.ndarray) -> list[tuple[int, int]]:
    """:func:`_index_run_bounds` as a list of (first, last) pairs."""
    if len(idx) == 0:
        return []
    starts, ends = _index_run_bounds(idx)
    return [(int(a), int(b)) for a, b in zip(starts, ends)]


def _time_step(t: np.ndarray) -> tuple[float, bool]:
    """The sample step [s] (median step) and whether every step equals it to 1e-9."""
    dt = np.diff(t)
    lo, hi = float(dt.min()), float(dt.max())
    rounding = 8 * np.finfo(float).eps * max(abs(float(t[0])), abs(float(t[-1])))
    if hi - lo <= 1e-9 * abs(hi) + rounding:
        return (float(t[-1]) - float(t[0])) / (len(t) - 1), True
    return float(np.median(dt)), False


def sample_rate(t: np.ndarray) -> float:
    """Sample rate of a time base: one over the step.

    Parameters
    ----------
    t : (n,) array_like
        Sample times, increasing, n >= 2 [s].

    Returns
    -------
    rate : float
        1 / step, the step being the mean step when all steps agree to 1e-9, else the median
        step [Hz].
    """
    return 1.0 / _time_step(np.asarray(t, dtype=float))[0]


def check_filter_rate(limits: LimitSet, rate_hz: float) -> list[str]:
    """Refuse a corner at or above Nyquist; warn when sampling below 10 x the corner.

    Parameters
    ----------
    limits : LimitSet
        Its filter settings.
    rate_hz : float
        Sample rate of the signals [Hz].

    Returns
    -------
    warnings : list of str
        One warning when the rate is below ten times the corner; empty otherwise or without
        a filter.

    Raises
    ------
    InputError
        The filter corner is at or above half the sample rate (naming
        ``filter.corner_hz``).
    """
    corner = limits.filter.corner_hz
    if limits.filter.kind == "none":
        return []
    if corner >= rate_hz / 2:
        raise InputError(limits.path, f"filter corner {corner:g} Hz is at or above half the "
                         f"sample rate of the signals checked ({rate_hz:g} Hz / 2)",
                         "lower filter.corner_hz, or give signals sampled faster (a record "
                         "logged at a higher rate; --rate for a simulated ride)",
                         key="filter.corner_hz")
    if rate_hz < 10 * corner:
        return [f"sample rate {rate_hz:g} Hz is below 10 x the filter corner ({corner:g} Hz): "
                "peaks may be under-resolved"]
    return []


class _Scan:
    """What the rules need from one pass over a filtered signal, gathered block by block:
    per duration rule the samples above its floor (and the barriers after their runs), per
    envelope the samples outside its inscribed ellipse, per onset rule the samples over the
    limit with their rates, and each axis's extremes."""

    def __init__(self, filtered: np.ndarray, t: np.ndarray, dt: float, uniform: bool,
                 limits: LimitSet):
        n = len(filtered)
        self.floors = [float(np.min(r.sign * r.levels_g)) for r in limits.duration]
        self.ellipses = [inscribed_ellipse(env.vertices, np.array([REST[a] for a in env.axes]))
                         for env in limits.combined]
        kept: list[list] = [[] for _ in limits.duration]
        flags: list[list] = [[] for _ in limits.duration]
        outside: list[list] = [[] for _ in limits.combined]
        over: list[list] = [[] for _ in limits.onset]
        rates: list[list] = [[] for _ in limits.onset]
        low, high = np.full(3, np.inf), np.full(3, -np.inf)
        for lo in range(0, n, BLOCK):
            hi = min(n, lo + BLOCK)
            first = max(lo - 1, 0)  # one sample either side for differences and barriers
            cols = filtered[first:min(n, hi + 1)].T.copy()
            core = slice(lo - first, lo - first + hi - lo)
            part = cols[:, core]
            np.minimum(low, part.min(axis=1), out=low)
            np.maximum(high, part.max(axis=1), out=high)
            for j, rule in enumerate(limits.duration):
                x = cols[AXIS_INDEX[rule.axis]]
                before = lo > 0 and bool(rule.sign * x[0] > self.floors[j])
                idx, real = _kept_in_block(x[core], self.floors[j], rule.sign, before)
                kept[j].append(idx + lo)
                flags[j].append(real)
            for j, env in enumerate(limits.combined):
                ia, ib = AXIS_INDEX[env.axes[0]], AXIS_INDEX[env.axes[1]]
                out = np.flatnonzero(~self.ellipses[j].holds(cols[ia, core], cols[ib, core]))
                outside[j].append(out + lo)
            for j, onset in enumerate(limits.onset):
                x = cols[AXIS_INDEX[onset.axis]]
                # uniform stamps: the scalar step (equal to the stamps' differences to
                # rounding, and several times faster than differencing the stamps)
                rate = onset_rate(x, dt if uniform else t[first:first + len(x)])[core]
                idx = np.flatnonzero(np.abs(rate) > onset.limit_g_per_s)
                over[j].append(idx + lo)
                rates[j].append(rate[idx])
        join = _join
        self.kept = [(join(k, np.intp), join(f, bool)) for k, f in zip(kept, flags)]
        self.outside = [join(o, np.intp) for o in outside]
        self.over = [(join(o, np.intp), join(r, float)) for o, r in zip(over, rates)]
        self.low, self.high = low, high


class _MarginsOnDemand(Mapping):
    """Every rule's worst margin, computed when first read. On a long record they cost about
    ten times the rules themselves, and only the report's aid figures, the sustained-envelope
    summary and the sensitivity read them; a terminal check never does."""

    def __init__(self, compute: Callable[[], dict]) -> None:
        self._compute: Callable[[], dict] | None = compute
        self._values: dict | None = None

    def _get(self) -> dict:
        if self._values is None:
            self._values = self._compute()
            self._compute = None  # let go of the signal it held
        return self._values

    def __getitem__(self, rule: str) -> float:
        return self._get()[rule]

    def __iter__(self) -> Iterator[str]:
        return iter(self._get())

    def __len__(self) -> int:
        return len(self._get())

    def __reduce__(self):  # travels as a plain dict
        return dict, (self._get(),)

    def __repr__(self) -> str:
        return repr(self._get())


def _join(parts: list, dtype) -> np.ndarray:
    return np.concatenate(parts) if parts else np.zeros(0, dtype=dtype)


def evaluate_seat(seat, limits: LimitSet, case: str = "nominal",
                  keep_signals: bool = True, aids: bool = True) -> SeatResult:
    """All rules for one rider signal.

    The filtered signal is scanned once in cache-sized blocks (:class:`_Scan`); the findings
    are then made from the few samples each rule singled out.

    Parameters
    ----------
    seat : SeatHistory or RecordedSignal
        An object with ``seat`` (name), ``t`` ((n,) [s]), ``g`` ((n, 3) [g0]) and optionally
        ``s`` ((n,) [m]), ``v`` ((n,) [m/s]) and ``position`` ((n, 3) [m]).
    limits : LimitSet
        The rules and the filter.
    case : str
        Name of the load case, carried into every finding.
    keep_signals : bool
        Keep the filtered signal and the times in the result (for figures and
        :func:`seat_exposures`).
    aids : bool
        Also compute the design aids' summaries (every rule's worst margin, the rider's
        flights, the restraint zones; the margins when first read while the signal is kept).
        Without, only what the rules need: the flights only when the limits set a free
        travel (they are then a rule); the findings are the same.

    Returns
    -------
    result : SeatResult
        Findings of every rule, extremes of the filtered signal, and (with ``aids``)
        uplift, zones and margins.
    """
    t = np.asarray(seat.t, dtype=float)
    dt, uniform = _time_step(t)
    filtered = lowpass(seat.g, 1.0 / dt, limits.filter)
    scan = _Scan(filtered, t, dt, uniform, limits)
    ctx = _Context(seat, case, group_delay_s(limits.filter, 1.0 / dt))
    findings: list[Finding] = []
    for rule, (keep, real) in zip(limits.duration, scan.kept):
        x = filtered[:, AXIS_INDEX[rule.axis]]
        windows = (_windows_of_kept(keep, real, rule.sign * x[keep], _positive(rule), dt)
                   if real.any() else (keep[:0],) * 3)
        findings += _duration_findings(x, dt, rule, ctx, windows)
    sustained = {}
    for env, check in zip(limits.combined, scan.outside):
        if env.source == "sustained":  # admissible levels for the duration held
            from .sustained import sustained_findings
            found, sustained[env.name] = sustained_findings(filtered, env, limits.duration,
                                                            ctx, dt)
            findings += found
            continue
        findings += _combined_findings(filtered[:, AXIS_INDEX[env.axes[0]]],
                                       filtered[:, AXIS_INDEX[env.axes[1]]], env, ctx, dt,
                                       check)
    for onset, (idx, rate) in zip(limits.onset, scan.over):
        findings += _onset_findings(idx, rate, onset.axis, onset.limit_g_per_s, ctx, dt)
    worst = {axis: (float(scan.low[i]), float(scan.high[i])) for i, axis in enumerate(AXES)}
    from .uplift import seat_uplift, uplift_findings

    uplift = None
    if aids or limits.uplift_free_travel_m is not None:
        uplift = seat_uplift(filtered[:, 2], t, ctx.s, limits.uplift_free_travel_m)
        findings += uplift_findings(uplift, ctx)
    zones, margins = None, {}
    if aids:
        from .sensitivity import rule_margins
        from .zones import seat_zones

        zones = (seat_zones(filtered[:, 0], filtered[:, 2], t, limits.zones, ctx.s,
                            ctx.position) if limits.zones else None)
        compute = partial(rule_margins, filtered, dt, limits, t, uplift, sustained)
        margins = _MarginsOnDemand(compute) if keep_signals else compute()
    return SeatResult(seat.seat, case, worst, tuple(findings),
                      filtered if keep_signals else None, t if keep_signals else None,
                      uplift, zones, margins)


def evaluate(seats, limits: LimitSet, case: str = "nominal",
             keep_signals: bool = True, aids: bool = True) -> Evaluation:
    """Every rule of a limit set for every rider signal.

    Parameters
    ----------
    seats : iterable of SeatHistory or RecordedSignal
        Rider signals (see :func:`evaluate_seat`); the first one's rate is checked against
        the filter.
    limits : LimitSet
        The rules and the filter.
    case : str
        Name of the load case.
    keep_signals : bool
        False does not keep the filtered signals (sweeps); exposure curves are made on
        request by :func:`seat_exposures`.
    aids : bool
        Also compute the design aids' summaries (see :func:`evaluate_seat`); the findings
        are the same either way.

    Returns
    -------
    evaluation : Evaluation
        One SeatResult per signal, with the sampling warning if any.

    Raises
    ------
    InputError
        The filter corner is at or above half the sample rate (:func:`check_filter_rate`).
    """
    seats = list(seats)
    warnings = check_filter_rate(limits, sample_rate(seats[0].t)) if seats else []
    return Evaluation(limits, tuple(evaluate_seat(s, limits, case, keep_signals, aids)
                                    for s in seats), tuple(warnings))

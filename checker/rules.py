"""Rule engine: exposure curves, exceedance events and the verdict.

Duration rules compare the exposure curve of a filtered signal with the limit curve. The
exposure curve E(tau) is, for every duration tau, the highest level the signal stays at or
above continuously for at least tau. For each sample i, let W_i be the longest window around
it in which every sample is >= x_i (bounded by the nearest smaller samples, as in the
largest-rectangle-under-a-histogram problem); then E(k dt) = max{x_i : |W_i| >= k}. The
windows come from sparse-table range minima and binary lifting, fully vectorized:
O(N log N) array work with no Python loop over samples (an O(N) monotonic stack gives the
same windows; the vectorized form is much faster in numpy).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass, field, replace
from enum import Enum

import numpy as np

from .conditioning import group_delay_s, lowpass, onset_rate
from .errors import InputError
from .limits import AXES, REST, CombinedEnvelope, DurationLimit, LimitSet, contains
from .limits import outside_fraction as _outside_fraction

AXIS_INDEX = {axis: i for i, axis in enumerate(AXES)}


class TextEnum(str, Enum):
    """A str-valued enum that prints, formats, hashes, compares and goes into JSON as its
    value (so documents keep the same strings)."""

    __hash__ = str.__hash__

    def __str__(self) -> str:
        return str(self.value)

    def __format__(self, spec: str) -> str:
        return format(str(self.value), spec)


class Verdict(TextEnum):
    """The outcome of a check."""

    PASS = "pass"
    FAIL = "fail"


class FindingKind(TextEnum):
    """Which kind of rule a finding breaks."""

    DURATION = "duration"  # a level held longer than the limit curve allows
    COMBINED = "combined"  # a filtered sample outside a combined-axis envelope
    ONSET = "onset"  # the rate of change above the onset limit
    STALL = "stall"  # the train comes to rest outside a stopping brake


MARGIN_UNITS = {"duration": "g", "onset": "g/s", "combined": "%", "stall": "m/s"}


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

    @property
    def unit(self) -> str:
        """Unit of peak, limit and margin."""
        return MARGIN_UNITS.get(self.kind, "g")

    @property
    def peak_unit(self) -> str:
        """Unit of peak and limit: a combined-axis finding gives its distance from the rest
        point in g (its margin is in % of the envelope)."""
        return {"onset": "g/s", "stall": "m/s"}.get(self.kind, "g")

    @property
    def severity(self) -> float:
        """Exceedance relative to the limit (0 = at the limit); a stall is the most severe."""
        if self.kind == "stall":
            return float("inf")
        if self.kind == "combined":
            return -self.margin / 100.0
        return -self.margin / abs(self.limit_g) if self.limit_g else float("inf")

    def to_dict(self) -> dict:
        data = asdict(self)
        data["severity"] = self.severity
        data["unit"] = self.unit
        data["peak_unit"] = self.peak_unit
        return data


@dataclass(frozen=True)
class Exposure:
    """Exposure curve of one signal direction: levels [g0] against duration [s]."""

    durations_s: np.ndarray
    levels_g: np.ndarray


@dataclass(frozen=True, eq=False)
class SeatResult:
    """Every rule's outcome for one seat in one load case.

    Attributes
    ----------
    seat, case : names of the rider position and of the load case.
    worst : {axis: (min, max)} of the filtered signal [g0].
    findings : the exceedance events, in the order the rules produced them.
    exposures : {duration rule name: :class:`Exposure`} (signed levels), kept for documents.
    filtered : (n, 3) filtered specific force [g0], or None when not kept (sweeps).
    t : (n,) sample times [s], or None when not kept.
    """

    seat: str
    case: str
    worst: dict  # axis -> (min, max) of the filtered signal [g0]
    findings: tuple[Finding, ...] = ()
    exposures: dict = field(default_factory=dict)  # rule name -> Exposure (signed levels)
    filtered: np.ndarray | None = None
    t: np.ndarray | None = None

    @property
    def verdict(self) -> Verdict:
        """FAIL when any rule is exceeded at this seat in this case, else "pass"."""
        return verdict_of(bool(self.findings))

    def without_signals(self) -> SeatResult:
        """The same result without the filtered signal, times and exposure curves (small
        enough to travel between processes)."""
        return replace(self, filtered=None, t=None, exposures={})


@dataclass(frozen=True, eq=False)
class Evaluation:
    """Every seat checked against one limit set, with what the run noticed on the way.

    Attributes
    ----------
    limits : the limit set used.
    seats : one :class:`SeatResult` per seat and load case.
    warnings : plausibility and sampling warnings (the run went on).
    stalls : where the train stopped short of the end, one line per ride; a stall fails the
        check just as a finding does.
    """

    limits: LimitSet
    seats: tuple[SeatResult, ...]
    warnings: tuple[str, ...] = ()
    stalls: tuple[str, ...] = ()

    @property
    def findings(self) -> list[Finding]:
        """Every finding, the most severe first."""
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
    *failures : one flag per thing that can fail (findings, stalls, cases).

    Returns
    -------
    Verdict
        FAIL when anything failed, else PASS.
    """
    return Verdict.FAIL if any(failures) else Verdict.PASS


def sustained_windows(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """For each sample, the first and last index of the longest window around it in which
    every sample is >= it."""
    x = np.asarray(x, dtype=float)
    n = len(x)
    table = [x]
    while (1 << len(table)) <= n:
        prev, half = table[-1], 1 << (len(table) - 1)
        table.append(np.minimum(prev[:-half], prev[half:]))

    def reach(values: np.ndarray, tables: list[np.ndarray]) -> np.ndarray:
        pos = np.arange(1, n + 1)  # next index to test, going right
        for level in range(len(tables) - 1, -1, -1):
            span = 1 << level
            fits = pos + span <= n
            idx = np.where(fits, pos, 0)
            block = tables[level]
            ok = fits & (block[np.minimum(idx, len(block) - 1)] >= values)
            pos = np.where(ok, pos + span, pos)
        return pos - 1

    right = reach(x, table)
    reversed_tables = [t[::-1] for t in table]
    left = n - 1 - reach(x[::-1], reversed_tables)[::-1]
    return left, right


def exposure_curve(x: np.ndarray, dt: float) -> Exposure:
    """Highest level sustained for at least k samples, k = 1..N; duration k * dt [s]."""
    left, right = sustained_windows(x)
    width = right - left + 1
    best = np.full(len(x) + 1, -np.inf)
    np.maximum.at(best, width, x)
    levels = np.maximum.accumulate(best[::-1])[::-1][1:]
    return Exposure(dt * np.arange(1, len(x) + 1), levels)


def _runs(mask: np.ndarray) -> list[tuple[int, int]]:
    """Inclusive index ranges of the True runs."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return [(int(a), int(b) - 1) for a, b in zip(edges[::2], edges[1::2])]


def _merge(left: np.ndarray, right: np.ndarray) -> list[tuple[int, int, np.ndarray]]:
    """Merge overlapping or touching windows; return groups with the member indices."""
    order = np.argsort(left, kind="stable")
    groups = []
    start, end, members = None, None, []
    for i in order:
        if start is None or left[i] > end + 1:
            if start is not None:
                groups.append((start, end, np.asarray(members)))
            start, end, members = int(left[i]), int(right[i]), [i]
        else:
            end = max(end, int(right[i]))
            members.append(i)
    if start is not None:
        groups.append((start, end, np.asarray(members)))
    return groups


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


def windows_above(x: np.ndarray, floor: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Sustained windows of the samples above ``floor`` only: (sample index, first, last).

    Samples at or below the floor can never exceed a limit that is above it, so they only
    bound the windows; leaving them out makes the check fast on long, mostly quiet rides.
    """
    above = x > floor
    keep = above | np.concatenate([[False], above[:-1]])  # one barrier after each run
    idx = np.flatnonzero(keep)
    if idx.size == 0:
        empty = np.zeros(0, dtype=np.intp)
        return empty, empty, empty
    values = np.where(above[idx], x[idx], -np.inf)
    left, right = sustained_windows(values)
    real = above[idx]
    return idx[real], idx[left[real]], idx[right[real]]


def _duration_findings(x: np.ndarray, dt: float, rule: DurationLimit, ctx: _Context,
                       full_curve: bool = True) -> tuple[list[Finding], Exposure | None]:
    signed = rule.sign * x
    exposure = None
    if full_curve:
        curve = exposure_curve(signed, dt)
        exposure = Exposure(curve.durations_s, rule.sign * curve.levels_g)
    floor = float(np.min(rule.sign * rule.levels_g))
    samples, left, right = windows_above(signed, floor)
    if samples.size == 0:
        return [], exposure
    width = right - left + 1
    level = signed[samples]
    allowed = rule.sign * rule.allowed(width * dt)
    bad = np.flatnonzero(level > allowed + 1e-12)
    findings = []
    for start, end, members in _merge(left[bad], right[bad]):
        idx = bad[members]
        excess = level[idx] - allowed[idx]
        g = idx[int(np.argmax(excess))]  # the governing window
        peak_i = start + int(np.argmax(signed[start:end + 1]))
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
    return findings, exposure


def _combined_findings(g: np.ndarray, env: CombinedEnvelope, ctx: _Context) -> list[Finding]:
    pair = g[:, [AXIS_INDEX[env.axes[0]], AXIS_INDEX[env.axes[1]]]]
    inside = contains(env.vertices, pair)
    findings = []
    center = np.array([REST[env.axes[0]], REST[env.axes[1]]])
    dt = float(np.median(np.diff(ctx.t))) if len(ctx.t) > 1 else 0.0
    for start, end in _runs(~inside):
        frac = _outside_fraction(env.vertices, center, pair[start:end + 1])
        w = start + int(np.argmax(frac))
        reach = float(np.hypot(*(pair[w] - center)))
        findings.append(Finding(
            rule=f"combined {env.name}", kind=FindingKind.COMBINED,
            axis=f"{env.axes[0]}+{env.axes[1]}",
            seat=ctx.seat.seat, case=ctx.case, t_start=float(ctx.t[start]),
            t_end=float(ctx.t[end]) + dt, duration_s=float(ctx.t[end] - ctx.t[start] + dt),
            peak_g=reach, limit_g=reach / (1 + float(frac.max())),
            margin=-100.0 * float(frac.max()), t_worst=float(ctx.t[w]),
            detail=f"({env.axes[0]}, {env.axes[1]}) = ({pair[w, 0]:.2f}, {pair[w, 1]:.2f}) g, "
                   f"{100 * frac.max():.1f} % outside the envelope",
            **ctx.locate(start, w, end)))
    return findings


def _onset_findings(x: np.ndarray, axis: str, limit: float, ctx: _Context) -> list[Finding]:
    rate = onset_rate(x, ctx.t)
    findings = []
    dt = float(np.median(np.diff(ctx.t)))
    for start, end in _runs(np.abs(rate) > limit):
        w = start + int(np.argmax(np.abs(rate[start:end + 1])))
        findings.append(Finding(
            rule=f"onset {axis}", kind=FindingKind.ONSET, axis=axis, seat=ctx.seat.seat,
            case=ctx.case,
            t_start=float(ctx.t[start]), t_end=float(ctx.t[end]) + dt,
            duration_s=float(ctx.t[end] - ctx.t[start] + dt), peak_g=float(rate[w]),
            limit_g=float(limit), margin=float(limit - abs(rate[w])), t_worst=float(ctx.t[w]),
            detail=f"{axis} changes at {rate[w]:.1f} g/s; limit {limit:g} g/s",
            **ctx.locate(start, w, end)))
    return findings


def sample_rate(t: np.ndarray) -> float:
    dt = np.diff(np.asarray(t, dtype=float))
    return 1.0 / float(np.median(dt))


def check_filter_rate(limits: LimitSet, rate_hz: float) -> list[str]:
    """Refuse a corner at or above Nyquist; warn when sampling below 10 x the corner."""
    corner = limits.filter.corner_hz
    if limits.filter.kind == "none":
        return []
    if corner >= rate_hz / 2:
        raise InputError(limits.path, f"filter corner {corner:g} Hz is at or above half the "
                         f"sample rate ({rate_hz / 2:g} Hz)",
                         "lower filter.corner_hz or sample the signal faster",
                         key="filter.corner_hz")
    if rate_hz < 10 * corner:
        return [f"sample rate {rate_hz:g} Hz is below 10 x the filter corner ({corner:g} Hz): "
                "peaks may be under-resolved"]
    return []


def evaluate_seat(seat, limits: LimitSet, case: str = "nominal",
                  keep_signals: bool = True) -> SeatResult:
    """All rules for one rider signal (an object with ``seat``, ``t`` [s], ``g`` (n, 3) [g0]
    and optionally ``s`` [m] and ``position`` (n, 3) [m])."""
    t = np.asarray(seat.t, dtype=float)
    rate = sample_rate(t)
    filtered = lowpass(seat.g, rate, limits.filter)
    ctx = _Context(seat, case, group_delay_s(limits.filter, rate))
    dt = 1.0 / rate
    findings: list[Finding] = []
    exposures = {}
    for rule in limits.duration:
        found, exposure = _duration_findings(filtered[:, AXIS_INDEX[rule.axis]], dt, rule, ctx,
                                             keep_signals)
        findings += found
        if exposure is not None:
            exposures[rule.name] = exposure
    for env in limits.combined:
        findings += _combined_findings(filtered, env, ctx)
    for onset in limits.onset:
        findings += _onset_findings(filtered[:, AXIS_INDEX[onset.axis]], onset.axis,
                                    onset.limit_g_per_s, ctx)
    worst = {axis: (float(filtered[:, i].min()), float(filtered[:, i].max()))
             for i, axis in enumerate(AXES)}
    return SeatResult(seat.seat, case, worst, tuple(findings), exposures,
                      filtered if keep_signals else None, t if keep_signals else None)


def evaluate(seats, limits: LimitSet, case: str = "nominal",
             keep_signals: bool = True) -> Evaluation:
    """Every rule of ``limits`` for every rider signal in ``seats``. Without
    ``keep_signals`` the filtered signals and exposure curves are not kept (for sweeps)."""
    seats = list(seats)
    warnings = check_filter_rate(limits, sample_rate(seats[0].t)) if seats else []
    return Evaluation(limits, tuple(evaluate_seat(s, limits, case, keep_signals)
                                    for s in seats), tuple(warnings))

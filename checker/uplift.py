"""Rider uplift: how far an unrestrained rider would rise off the seat during negative Gz.

While the seat pushes on the rider (filtered Gz >= 0) the rider moves with it. Where Gz falls
below zero the seat would have to pull; an unrestrained rider leaves it with no relative speed
and, relative to the seat, accelerates at ``-Gz g0`` along the seat's z axis (the rider is in
free fall, the seat is not). The relative displacement d obeys d'' = -Gz(t) g0 from d = d' = 0
at the moment Gz crosses zero, and the event ends when d returns to zero (the seat catches up
with the rider). The rotation of the seat frame and the lateral and longitudinal axes are left
out: this is the vertical free travel a restraint must allow or stop.

Between samples the acceleration is taken as linear, which the integration below follows
exactly (v by the trapezoid rule, d by the cubic term); the zero crossings at both ends are
interpolated.

References
----------
Uniform and piecewise-linear acceleration: any mechanics text, e.g. Halliday, Resnick &
Walker, *Fundamentals of Physics*, chapter on motion along a straight line (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .constants import G0


@dataclass(frozen=True)
class UpliftEvent:
    """One flight of an unrestrained rider off the seat.

    Attributes
    ----------
    t_start : float
        When filtered Gz crosses below zero (interpolated) [s].
    t_end : float
        When the rider is back on the seat, or the end of the record [s].
    peak_m : float
        Highest displacement off the seat, along the seat's z axis [m].
    t_peak : float
        When it is reached [s].
    min_gz : float
        Lowest filtered Gz during the flight [g0].
    landed : bool
        False when the record ends with the rider still off the seat.
    s_start_m : float or None
        Station of the seat's car at the first sample of the flight [m].
    """

    t_start: float  # [s] Gz crosses below zero
    t_end: float  # [s] the rider is back on the seat (or the record ends)
    peak_m: float  # highest relative displacement off the seat [m]
    t_peak: float  # [s]
    min_gz: float  # lowest filtered Gz during the flight [g0]
    landed: bool  # False when the record ends with the rider still off the seat
    s_start_m: float | None = None  # station of the seat's car at the start [m]

    @property
    def duration_s(self) -> float:
        """Length of the flight [s]."""
        return self.t_end - self.t_start

    def to_dict(self) -> dict:
        """The flight as JSON fields: times [s], peak [m], lowest Gz [g0], station [m].

        Returns
        -------
        fields : dict
        """
        return {"t_start": self.t_start, "t_end": self.t_end, "duration_s": self.duration_s,
                "peak_m": self.peak_m, "t_peak": self.t_peak, "min_gz": self.min_gz,
                "landed": self.landed, "s_start_m": self.s_start_m}


def _step(v: float, d: float, a0: float, a1: float, h: float) -> tuple[float, float]:
    """Exact state after time h under acceleration linear from a0 to a1."""
    return v + 0.5 * (a0 + a1) * h, d + v * h + (2.0 * a0 + a1) * h * h / 6.0


def _states(v: float, d: float, acc: np.ndarray, t: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Relative speed [m/s] and displacement [m] at every sample of ``t`` from (v, d) at
    t[0], the acceleration [m/s^2] linear between samples (as :func:`_step`, summed)."""
    h = np.diff(t)
    speed = v + np.concatenate([[0.0], np.cumsum(0.5 * (acc[:-1] + acc[1:]) * h)])
    rise = speed[:-1] * h + (2.0 * acc[:-1] + acc[1:]) * h * h / 6.0
    return speed, d + np.concatenate([[0.0], np.cumsum(rise)])


def _extremes_in_steps(v: np.ndarray, d: np.ndarray, a0: np.ndarray, a1: np.ndarray,
                       t: np.ndarray) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
    """Each step's highest d [m] (at a stationary point of the exact cubic inside it, where
    the relative speed v + a0 x + (a1 - a0) x^2 / (2 h) changes sign, or at its start) and
    lowest d at a stationary point inside it (inf when none), with their offsets [s] from
    the step's start."""
    h = np.diff(t)
    c2, c1, c0 = (a1 - a0) / (2.0 * h), a0, v
    best, at = d.copy(), np.zeros_like(d)
    low, low_at = np.full_like(d, np.inf), np.zeros_like(d)
    flat = np.abs(c2) < 1e-15
    with np.errstate(divide="ignore", invalid="ignore"):
        linear = np.where(flat & (np.abs(c1) > 1e-15), -c0 / c1, np.nan)
        disc = c1 * c1 - 4.0 * c2 * c0
        root = np.sqrt(np.where(disc >= 0, disc, np.nan))
        candidates = (np.where(flat, linear, (-c1 + root) / (2.0 * c2)),
                      np.where(flat, np.nan, (-c1 - root) / (2.0 * c2)))
    for x in candidates:
        inside = (x > 0.0) & (x < h)
        xs = np.where(inside, x, 0.0)
        dx = d + v * xs + a0 * xs * xs / 2.0 + (a1 - a0) * xs ** 3 / (6.0 * h)
        higher = inside & (dx > best)
        best = np.where(higher, dx, best)
        at = np.where(higher, xs, at)
        lower = inside & (dx < low)
        low = np.where(lower, dx, low)
        low_at = np.where(lower, xs, low_at)
    return best, at, low, low_at


def _landing_in_step(v: float, d: float, a0: float, a1: float, h: float,
                     upto: float | None = None) -> float:
    """Offset within a step at which d first returns to zero (bisection on the exact cubic
    over [0, upto], where d(0) > 0 >= d(upto); upto defaults to the step's end)."""
    def pos(x: float) -> float:
        return d + v * x + a0 * x * x / 2.0 + (a1 - a0) * x ** 3 / (6.0 * h)

    lo, hi = 0.0, h if upto is None else upto
    for _ in range(60):
        mid = 0.5 * (lo + hi)
        if pos(mid) > 0.0:
            lo = mid
        else:
            hi = mid
    return 0.5 * (lo + hi)


def uplift_events(gz: np.ndarray, t: np.ndarray, station: np.ndarray | None = None,
                  g0: float = G0) -> list[UpliftEvent]:
    """Every flight of an unrestrained rider for one seat's filtered Gz.

    The relative displacement obeys d'' = -Gz g0 from rest at each downward zero crossing,
    integrated exactly for Gz linear between samples; a flight ends where d returns to zero
    (found by bisection on the cubic), and a new one starts at once if Gz is still negative.

    Parameters
    ----------
    gz : (n,) ndarray
        Filtered vertical specific force [g0].
    t : (n,) ndarray
        Sample times, increasing [s].
    station : (n,) ndarray or None
        Station of the seat's car [m].
    g0 : float
        Standard gravity [m/s^2].

    Returns
    -------
    events : list of UpliftEvent
        In time order; every flight, however small.
    """
    gz = np.asarray(gz, dtype=float)
    t = np.asarray(t, dtype=float)
    events: list[UpliftEvent] = []
    n = len(t)
    acc = -gz * g0  # relative acceleration off the seat [m/s^2]
    starts = np.flatnonzero((gz[1:] < 0.0) & (gz[:-1] >= 0.0)) + 1
    if n and gz[0] < 0.0:
        starts = np.concatenate([[0], starts])
    carry = None  # (time, acceleration, next sample): landed while Gz < 0, off again at once
    k = 0
    while True:
        if carry is not None:
            t0, a0, i0 = carry
        else:
            later = starts[starts >= k]
            if later.size == 0:
                break
            i0 = int(later[0])
            if i0 == 0:
                t0, a0 = t[0], acc[0]
            else:  # the zero crossing between i0 - 1 and i0
                frac = gz[i0 - 1] / (gz[i0 - 1] - gz[i0])
                t0, a0 = t[i0 - 1] + frac * (t[i0] - t[i0 - 1]), 0.0
        carry = None
        h0 = t[i0] - t0  # the part-step from the start of the flight to the next sample
        v, d = _step(0.0, 0.0, a0, acc[i0], h0) if h0 > 0 else (0.0, 0.0)
        peak, t_peak, k, landed, t_end = max(d, 0.0), t[i0], i0, False, t[-1]
        min_gz = None  # from the samples the flight spans, unless it ends within the part-step
        if h0 > 0 and a0 > acc[i0]:
            # a flight re-launched at a landing can top out, and land again, within the
            # part-step (Gz turns positive there): its peak and landing from the exact cubic
            top, at, _, _ = _extremes_in_steps(np.zeros(1), np.zeros(1), np.array([a0]),
                                               np.array([acc[i0]]), np.array([t0, t[i0]]))
            if top[0] > peak:
                peak, t_peak = float(top[0]), float(t0 + at[0])
            if d <= 0.0:  # d = x^2 (a0 / 2 + (a1 - a0) x / (6 h)) is zero again at x below
                # seated again (Gz > 0 there): the next flight starts at a crossing from i0
                t_end, landed = t0 + min(3.0 * a0 * h0 / (a0 - acc[i0]), h0), True
                min_gz = min(-a0, -acc[i0]) / g0
        chunk = 64
        while not landed and k + 1 < n:
            # a stretch of steps at once: states by running sums, the landing the first step
            # that ends at or below the seat, the peaks of every step up to it
            m_steps = min(chunk, n - 1 - k)
            chunk *= 2
            v_all, d_all = _states(v, d, acc[k:k + m_steps + 1], t[k:k + m_steps + 1])
            top, at, low, low_at = _extremes_in_steps(
                v_all[:-1], d_all[:-1], acc[k:k + m_steps], acc[k + 1:k + m_steps + 1],
                t[k:k + m_steps + 1])
            # the landing: the first step that ends at or below the seat, or dips below it
            # between its samples (the cubic can go down and up again within a step)
            dips = low < 0.0
            down = np.flatnonzero((d_all[1:] <= 0.0) | dips)
            j = int(down[0]) if down.size else m_steps  # steps before it are whole flight
            if j:
                b = int(np.argmax(top[:j]))
                if top[b] > peak:
                    peak, t_peak = float(top[b]), float(t[k + b] + at[b])
            if not down.size:
                v, d, k = float(v_all[-1]), float(d_all[-1]), k + m_steps
                continue
            k += j
            v, d = float(v_all[j]), float(d_all[j])
            h = t[k + 1] - t[k]
            x = _landing_in_step(v, d, acc[k], acc[k + 1], h, low_at[j] if dips[j] else None)
            if 0.0 < at[j] < x and top[j] > peak:  # a top inside the landing step
                peak, t_peak = float(top[j]), float(t[k] + at[j])
            t_end, landed = t[k] + x, True
            a_land = acc[k] + (acc[k + 1] - acc[k]) * x / h
            if a_land > 0.0 and x < h:  # Gz < 0 as the seat catches up
                carry = (t_end, a_land, k + 1)
            k += 1
            break
        if d > peak and not landed:
            peak, t_peak = d, t[k]
        if not landed:
            k = n
        if min_gz is None:
            lo = max(int(np.searchsorted(t, t0)) - 1, 0)
            min_gz = gz[lo:max(min(k, n - 1) + 1, lo + 1)].min()
        events.append(UpliftEvent(
            float(t0), float(t_end), float(peak), float(t_peak), float(min_gz),
            landed, float(station[min(i0, n - 1)]) if station is not None else None))
        if k >= n:
            break
    return events


@dataclass(frozen=True)
class UpliftSummary:
    """One seat's flights and the worst of them against the free-travel limit.

    Attributes
    ----------
    events : tuple of UpliftEvent
        Flights higher than the noise threshold, in time order.
    free_travel_m : float or None
        Rise off the seat the restraint allows [m]; None when the limits give none.
    """

    events: tuple[UpliftEvent, ...]
    free_travel_m: float | None = None

    @property
    def worst(self) -> UpliftEvent | None:
        """The highest flight, or None without flights."""
        return max(self.events, key=lambda e: e.peak_m) if self.events else None

    @property
    def exceeding(self) -> tuple[UpliftEvent, ...]:
        """Flights higher than the free travel (none without a free-travel limit)."""
        if self.free_travel_m is None:
            return ()
        return tuple(e for e in self.events if e.peak_m > self.free_travel_m)

    def to_dict(self) -> dict:
        """The flights as JSON fields, with the highest peak [m] and the free travel [m].

        Returns
        -------
        fields : dict
        """
        worst = self.worst
        return {"events": [e.to_dict() for e in self.events],
                "peak_m": worst.peak_m if worst else 0.0,
                "free_travel_m": self.free_travel_m,
                "exceeding": len(self.exceeding)}


def seat_uplift(gz: np.ndarray, t: np.ndarray, station: np.ndarray | None,
                free_travel_m: float | None, min_peak_m: float = 1e-4) -> UpliftSummary:
    """A seat's flights, with the limit they are compared with.

    Parameters
    ----------
    gz : (n,) ndarray
        Filtered vertical specific force [g0].
    t : (n,) ndarray
        Sample times, increasing [s].
    station : (n,) ndarray or None
        Station of the seat's car [m].
    free_travel_m : float or None
        Rise off the seat the restraint allows [m].
    min_peak_m : float
        Flights lower than this are dropped (0.1 mm: numerical dust is not a flight) [m].

    Returns
    -------
    summary : UpliftSummary
    """
    events = tuple(e for e in uplift_events(gz, t, station) if e.peak_m >= min_peak_m)
    return UpliftSummary(events, free_travel_m)


def uplift_findings(summary: UpliftSummary, ctx) -> list:
    """One finding per flight higher than the free travel.

    Parameters
    ----------
    summary : UpliftSummary
        A seat's flights and free travel.
    ctx : object
        The rule engine's location context (``checker.rules._Context``: seat, case, times,
        stations).

    Returns
    -------
    findings : list of Finding
        Kind ``UPLIFT``; peak, limit and margin in metres [m].
    """
    from .rules import Finding, FindingKind

    out = []
    for e in summary.exceeding:
        start = int(np.searchsorted(ctx.t, e.t_start))
        worst = min(int(np.searchsorted(ctx.t, e.t_peak)), len(ctx.t) - 1)
        start = min(start, len(ctx.t) - 1)
        end = min(max(int(np.searchsorted(ctx.t, e.t_end)) - 1, worst), len(ctx.t) - 1)
        out.append(Finding(
            rule="uplift free travel", kind=FindingKind.UPLIFT, axis="gz", seat=ctx.seat.seat,
            case=ctx.case, t_start=e.t_start, t_end=e.t_end, duration_s=e.duration_s,
            peak_g=e.peak_m, limit_g=float(summary.free_travel_m),
            margin=float(summary.free_travel_m) - e.peak_m, t_worst=e.t_peak,
            detail=f"an unrestrained rider would rise {100 * e.peak_m:.1f} cm off the seat "
                   f"(Gz down to {e.min_gz:.2f} g for {e.duration_s:.2f} s); free travel "
                   f"{100 * summary.free_travel_m:.1f} cm",
            **ctx.locate(start, worst, end)))
    return out

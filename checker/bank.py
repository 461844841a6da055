"""Bank advisor: the roll angle that cancels the riders' lateral specific force.

At a station where a rider reads (Gy, Gz), turning the rider frame by an extra roll delta
(positive right side down, ISO 8855) gives Gy' = Gy cos(delta) + Gz sin(delta), which vanishes
for tan(delta) = -Gy / Gz. A level turn of radius R at speed v, unbanked, reads
Gy = -v^2 / (g0 R), Gz = 1, so the bank is tan(theta) = v^2 / (g0 R), the banked-curve design
speed.

Each seat gives, per station, an interval of roll angles that keeps its |Gy| within a
tolerance: theta* +- asin(tol / |f_perp|), |f_perp| = hypot(Gy, Gz) (where the force across
the track is below the tolerance any roll will do). The seats' intervals are intersected; where
they do not overlap (seats disagree, e.g. front and rear cars at different speeds) the advised
roll is the middle of the seats' angles, which keeps the worst seat's lateral force smallest.

The roll rate a rider feels is d(theta)/dt = d(theta)/ds * v, so a roll-rate limit R makes
theta R-Lipschitz in the "time" tau(s) = integral ds / v_max(s), with v_max the fastest car at
each station. Between the largest R-Lipschitz function under the upper bounds and the smallest
over the lower bounds, the midpoint is R-Lipschitz and lies within the bounds wherever the rate
limit allows them to be met (both envelopes by running minima and maxima, O(N)). A moving
average over ``smoothing_s`` in tau (twice) then limits the roll acceleration; a moving
average keeps the Lipschitz bound. Seats above the rails feel the roll motion itself, so the
advice is iterated: simulate, correct, smooth, again.

References
----------
Banked curve without friction, tan(theta) = v^2 / (g0 R): Serway & Jewett, *Physics for
Scientists and Engineers*, circular motion chapter (from memory). Lipschitz envelopes
(McShane and Whitney extensions): McShane, "Extension of range of functions", Bull. AMS 40
(1934) (from memory).
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import numpy as np

from .errors import InputError
from .ride import RideOptions, run_ride

DEFAULT_ROLL_RATE_DEG_S = 60.0
DEFAULT_TOLERANCE_G = 0.02
DEFAULT_SMOOTHING_S = 0.6
MIN_SPEED_M_S = 0.5  # below this the roll rate is no constraint worth tracking


@dataclass(frozen=True)
class BankAdvice:
    """Given and advised bank on the station grid, and what the advice achieves.

    Attributes
    ----------
    s : (n,) ndarray
        Station grid [m].
    given_deg : (n,) ndarray
        Bank of the input track [deg].
    target_deg : (n,) ndarray
        Unsmoothed bank cancelling Gy, the middle of the seats' angles, from the last
        iteration [deg].
    advised_deg : (n,) ndarray
        Rate-limited, smoothed advice, as the re-fitted track carries it [deg].
    sample_stations : (m,) ndarray
        Station of each input sample [m].
    advised_at_samples : (m,) ndarray
        Advice at the input samples, what the output file carries [deg].
    roll_rate_limit_deg_s : float
        Roll-rate limit the advice was made for [deg/s].
    max_roll_rate_deg_s : float
        Highest roll rate of the advice, |d(theta)/ds| times the fastest car's speed on the
        given track [deg/s].
    rate_bound : (n,) ndarray of bool
        Where the bank cannot meet every seat's tolerance (rate limit, or seats that need
        different banks), by more than 0.5 deg.
    max_abs_gy_given : float
        Worst seat's |Gy|, unfiltered, whole ride, on the given bank [g0].
    max_abs_gy_advised : float
        The same, simulated on the advised bank [g0].
    max_abs_gy_where_allowed : float
        The same, at stations where the advice meets every seat; nan if none [g0].
    iterations : int
        Simulate-and-correct passes asked for.
    ideal : bool
        True when the train was the centerline rider.
    """

    s: np.ndarray  # station grid [m]
    given_deg: np.ndarray  # bank of the input track [deg]
    target_deg: np.ndarray  # unsmoothed bank cancelling Gy (middle of the seats) [deg]
    advised_deg: np.ndarray  # rate-limited, smoothed advice [deg]
    sample_stations: np.ndarray  # station of each input sample [m]
    advised_at_samples: np.ndarray  # [deg], what the output file carries
    roll_rate_limit_deg_s: float
    max_roll_rate_deg_s: float  # of the advice, fastest car [deg/s]
    rate_bound: np.ndarray  # (n,) bool: the bank cannot meet every seat here (rate limit,
    # or seats that need different banks)
    max_abs_gy_given: float  # worst seat, unfiltered, whole ride [g0]
    max_abs_gy_advised: float  # same, simulated on the advised bank [g0]
    max_abs_gy_where_allowed: float  # same, stations where the rate limit does not bind
    iterations: int
    ideal: bool

    def to_dict(self) -> dict:
        """The summary numbers as JSON fields.

        Returns
        -------
        fields : dict
            Rate limit and highest roll rate [deg/s], worst |Gy| given, advised and where
            the rate allows [g0], length where the advice is rate-bound [m], largest change
            of bank [deg], iterations and whether the rider was the centerline rider.
        """
        return {"roll_rate_limit_deg_s": self.roll_rate_limit_deg_s,
                "max_roll_rate_deg_s": self.max_roll_rate_deg_s,
                "max_abs_gy_given_g": self.max_abs_gy_given,
                "max_abs_gy_advised_g": self.max_abs_gy_advised,
                "max_abs_gy_where_rate_allows_g": self.max_abs_gy_where_allowed,
                "rate_bound_length_m": float(np.sum(self.rate_bound) * (self.s[1] - self.s[0])),
                "max_change_deg": float(np.max(np.abs(self.advised_deg - self.given_deg))),
                "iterations": self.iterations, "centerline_rider": self.ideal}


def _on_grid(result, grid: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Each seat's (Gy, Gz) at each grid station [g0], NaN where its car never is."""
    gy, gz = [], []
    for h in result.histories:
        g = h.g
        # car reference station [m]; it only grows (a stopped train repeats stations)
        order = np.maximum.accumulate(h.s)
        keep = np.concatenate([[True], np.diff(order) > 1e-9])
        x = order[keep]
        inside = (grid >= x[0]) & (grid <= x[-1])
        gy.append(np.where(inside, np.interp(grid, x, g[keep, 1]), np.nan))
        gz.append(np.where(inside, np.interp(grid, x, g[keep, 2]), np.nan))
    return np.array(gy), np.array(gz)


def fastest_speed(result, grid: np.ndarray) -> np.ndarray:
    """The highest speed of any car at each station.

    Parameters
    ----------
    result : RideResult
        A simulated ride.
    grid : (n,) ndarray
        Stations [m].

    Returns
    -------
    speed : (n,) ndarray
        Highest speed of any car whose reference point passes the station; 0 where none
        does [m/s].
    """
    m = result.motion
    best = np.zeros(len(grid))
    for k in range(m.car_count):
        lead = grid + k * m.car_spacing_m
        ok = (lead >= m.s[0]) & (lead <= m.s[-1])
        best = np.where(ok, np.maximum(best, np.interp(lead, m.s, m.v)), best)
    return best


def rate_limited(lower: np.ndarray, upper: np.ndarray, tau: np.ndarray,
                 rate: float) -> np.ndarray:
    """Midpoint of the Lipschitz envelopes of two bounds.

    The largest ``rate``-Lipschitz function (in ``tau``) under ``upper`` is
    min_j(upper_j + rate |tau - tau_j|), the smallest over ``lower`` is
    max_j(lower_j - rate |tau - tau_j|); both are computed with running minima and maxima in
    O(n). Their midpoint is ``rate``-Lipschitz too.

    Parameters
    ----------
    lower, upper : (n,) ndarray
        Admissible bank at each station; -inf / +inf where a station is free [deg].
    tau : (n,) ndarray
        Non-decreasing time-like coordinate, integral of ds / v_max [s].
    rate : float
        Roll-rate limit [deg/s].

    Returns
    -------
    bank : (n,) ndarray
        The midpoint [deg]; all nan when either envelope is not finite everywhere (some
        bound is missing on a whole side).

    References
    ----------
    E. J. McShane, "Extension of range of functions", Bull. Amer. Math. Soc. 40, 1934, and
    H. Whitney, "Analytic extensions of differentiable functions defined in closed sets",
    Trans. Amer. Math. Soc. 36, 1934 (the extremal Lipschitz extensions; from memory).
    """
    rt = rate * tau
    with np.errstate(invalid="ignore"):
        up = np.minimum(np.minimum.accumulate(upper - rt) + rt,
                        np.minimum.accumulate((upper + rt)[::-1])[::-1] - rt)
        lo = np.maximum(np.maximum.accumulate(lower + rt) - rt,
                        np.maximum.accumulate((lower - rt)[::-1])[::-1] + rt)
    if not np.all(np.isfinite(up)) or not np.all(np.isfinite(lo)):
        return np.full(len(tau), np.nan)
    return 0.5 * (up + lo)


def smooth_in_time(values: np.ndarray, tau: np.ndarray, window_s: float) -> np.ndarray:
    """Two passes of a centred moving average over a window in ``tau``.

    The values are re-sampled on a uniform grid in ``tau`` (at most 2,000,001 points), the
    ends held constant, and interpolated back. A moving average keeps any Lipschitz bound.

    Parameters
    ----------
    values : (n,) ndarray
        Values at ``tau`` (e.g. bank [deg]).
    tau : (n,) ndarray
        Increasing time-like coordinate [s].
    window_s : float
        Width of the moving average [s]; <= 0, or not shorter than the span of ``tau``,
        returns ``values`` unchanged.

    Returns
    -------
    smoothed : (n,) ndarray
        Smoothed values at ``tau``, in the unit of ``values``.
    """
    if window_s <= 0 or tau[-1] - tau[0] <= window_s:
        return values
    step = min(window_s / 20.0, max(float(np.min(np.diff(tau))), 1e-4))
    count = int(np.ceil((tau[-1] - tau[0]) / step)) + 1
    if count > 2_000_000:
        step = (tau[-1] - tau[0]) / 2_000_000
        count = 2_000_001
    uniform = tau[0] + step * np.arange(count)
    y = np.interp(uniform, tau, values)
    width = max(1, int(round(window_s / step)) | 1)
    kernel = np.ones(width) / width
    for _ in range(2):
        padded = np.concatenate([np.full(width // 2, y[0]), y, np.full(width // 2, y[-1])])
        y = np.convolve(padded, kernel, mode="valid")
    return np.interp(tau, uniform, y)


def _smooth_rows(rows: np.ndarray, tau: np.ndarray, window_s: float) -> np.ndarray:
    """Each seat's signal smoothed in time over ``window_s`` where it is defined: the bank
    follows the lateral force that lasts, not the jolts a rate limit cannot follow."""
    out = rows.copy()
    for row in out:
        ok = np.isfinite(row)
        if ok.sum() > 3:
            row[ok] = smooth_in_time(row[ok], tau[ok], window_s)
    return out


def _bounds(gy: np.ndarray, gz: np.ndarray, current: np.ndarray,
            tolerance_g: float) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Per station: lower and upper admissible bank [deg] over all seats, and the middle
    of the seats' cancelling angles (the target)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        delta = np.degrees(np.arctan(-gy / gz))
        delta = np.where(np.abs(gz) < 1e-9, np.sign(-gy) * 90.0, delta)
        across = np.hypot(gy, gz)
        width = np.degrees(np.arcsin(np.clip(tolerance_g / across, 0.0, 1.0)))
    theta = current[None, :] + delta
    free = np.isnan(theta) | (across <= tolerance_g)
    lo = np.where(free, -np.inf, theta - width)
    hi = np.where(free, np.inf, theta + width)
    lower, upper = lo.max(axis=0), hi.min(axis=0)
    with np.errstate(invalid="ignore"):  # inf - inf where no seat constrains a station
        t_lo = np.where(free, np.inf, theta).min(axis=0)
        t_hi = np.where(free, -np.inf, theta).max(axis=0)
        middle = 0.5 * (t_lo + t_hi)
    clash = lower > upper  # the seats' intervals do not overlap: anywhere between the
    lower = np.where(clash, t_lo, lower)  # seats' own angles will do, the middle is the
    upper = np.where(clash, t_hi, upper)  # fairest (the envelopes' midpoint gets near it)
    target = np.where(np.isfinite(middle), middle, current)
    return lower, upper, target


def advise_bank(centerline, train, operation, options: RideOptions | None = None, *,
                roll_rate_limit_deg_s: float = DEFAULT_ROLL_RATE_DEG_S,
                tolerance_g: float = DEFAULT_TOLERANCE_G,
                smoothing_s: float = DEFAULT_SMOOTHING_S, iterations: int = 3,
                ideal: bool = False) -> BankAdvice:
    """Advised bank for a layout, train and operation.

    Parameters
    ----------
    centerline : Centerline
        The layout; its roll or up vectors are the given bank.
    train : Train
        Cars and seats (as for :func:`checker.ride.run_ride`).
    operation : Operation
        Start speed and powered sections.
    options : RideOptions or None
        Numerical options; None for the defaults.
    roll_rate_limit_deg_s : float
        Highest roll rate a car may see [deg/s].
    tolerance_g : float
        |Gy| accepted at each seat when choosing the bank [g0].
    smoothing_s : float
        Moving-average window in time that softens the roll acceleration [s].
    iterations : int
        Simulate-and-correct passes.
    ideal : bool
        True when ``train`` is the centerline rider (recorded in the result).

    Returns
    -------
    advice : BankAdvice

    Raises
    ------
    InputError
        As :func:`checker.ride.run_ride` (track too short, sections off the track, memory
        cap), and when the train stalls (no speed to bank for beyond the stall).

    References
    ----------
    E. J. McShane, "Extension of range of functions", Bull. Amer. Math. Soc. 40, 1934 (the
    Lipschitz envelopes of :func:`rate_limited`; from memory).
    """
    options = options or RideOptions()
    given = run_ride(centerline, train, operation, options)
    stall = given.motion.stall
    if stall is not None:  # no speed beyond it: nothing to bank for
        raise InputError(centerline.source, f"the train comes to rest with its lead car at "
                         f"station {stall.station_m:.1f} m (t = {stall.time_s:.2f} s), and the "
                         "bank advice needs a ride that reaches the end of the track",
                         "make the train get through first (checker check shows the stall "
                         "and what to change)")
    grid = given.geometry.s
    sample_s = given.geometry.sample_stations
    current = given.geometry.roll_deg.copy()
    speed = np.maximum(fastest_speed(given, grid), MIN_SPEED_M_S)
    ds = np.diff(grid)
    tau = np.concatenate([[0.0], np.cumsum(ds / (0.5 * (speed[1:] + speed[:-1])))])
    gy0, _ = _on_grid(given, grid)
    max_gy_given = float(np.nanmax(np.abs(gy0)))
    # The target comes from each seat's force at rail level (same car, same forward and
    # left offset, no height): there it does not depend on the roll motion, so the
    # correction converges; the heartline's own roll-motion terms are what the rate limit
    # and the smoothing keep small.
    rail_train = replace(train, seats=tuple(replace(seat, up_m=0.0) for seat in train.seats))
    probe = run_ride(centerline, rail_train, operation, options)
    target = current
    bound = np.zeros(len(grid), dtype=bool)
    line = centerline
    for _ in range(iterations):
        gy, gz = _on_grid(probe, grid)
        gy, gz = _smooth_rows(gy, tau, smoothing_s), _smooth_rows(gz, tau, smoothing_s)
        lower, upper, target = _bounds(gy, gz, current, tolerance_g)
        advised = rate_limited(lower, upper, tau, roll_rate_limit_deg_s)
        if np.all(np.isnan(advised)):
            break  # no seat feels any force across the track worth banking for
        advised = smooth_in_time(advised, tau, smoothing_s)
        line = replace(centerline, roll_deg=np.interp(sample_s, grid, advised), up=None)
        probe = run_ride(line, rail_train, operation, options)
        current = probe.geometry.roll_deg.copy()
    gy, gz = _on_grid(probe, grid)
    lower, upper, _ = _bounds(gy, gz, current, tolerance_g)
    bound = (current < lower - 0.5) | (current > upper + 0.5)
    result = run_ride(line, train, operation, options)
    gy, _ = _on_grid(result, grid)
    covered = np.any(np.isfinite(gy), axis=0)
    worst = np.full(len(grid), np.nan)
    worst[covered] = np.nanmax(np.abs(gy[:, covered]), axis=0)
    rate = np.abs(np.gradient(current, grid)) * speed
    allowed = ~bound & np.isfinite(worst)
    return BankAdvice(grid, given.geometry.roll_deg, target, current, sample_s,
                      np.interp(sample_s, grid, current), float(roll_rate_limit_deg_s),
                      float(rate.max()), bound, max_gy_given, float(np.nanmax(worst)),
                      float(worst[allowed].max()) if allowed.any() else float("nan"),
                      iterations, ideal)


def banked_table(points_in_file_units: np.ndarray, roll_deg: np.ndarray, note: str) -> str:
    """The banked centerline as CSV text.

    Parameters
    ----------
    points_in_file_units : (m, 3) ndarray
        Centerline samples in the input file's own length unit (m or ft).
    roll_deg : (m,) ndarray
        Bank at each sample, ISO 8855 sign [deg]; |roll| below 5e-7 is written as 0.
    note : str
        Text of the leading comment line (one line).

    Returns
    -------
    text : str
        ``# note``, the header ``x,y,z,roll_deg``, one row per sample (coordinates to 10
        significant digits, roll to 6 decimals), a final newline.
    """
    lines = [f"# {note}", "x,y,z,roll_deg"]
    for (x, y, z), r in zip(points_in_file_units.tolist(), roll_deg.tolist()):
        lines.append(f"{x:.10g},{y:.10g},{z:.10g},{0.0 if abs(r) < 5e-7 else r:.6f}")
    return "\n".join(lines) + "\n"

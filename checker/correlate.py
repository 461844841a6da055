"""A recorded ride against the simulation of the same layout: alignment and differences.

Both signals are filtered with the limit set's filter, then aligned in time:

* by station, where the record carries the station ``s`` of its car: each recorded sample is
  paired with the simulated sample at the same station, and the time offset is the median
  of the paired time differences;
* otherwise by the cross-correlation of the filtered Gz on a common uniform grid: the
  correlation coefficient over each lag's overlap (sliding sums by scipy.signal.correlate,
  lags by correlation_lags; J. P. Lewis, "Fast normalized cross-correlation", 1995), the
  peak refined to a fraction of a sample by a parabola through the three highest values.

The differences (recorded minus simulated) are then taken on the overlap, per axis: RMS and
largest absolute difference with its time. Arrays in, a frozen :class:`Correlation` out.

References
----------
J. S. Bendat and A. G. Piersol, "Random Data: Analysis and Measurement Procedures", Wiley
(cross-correlation for time delay estimation; from memory).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import signal

from .conditioning import FilterSpec, lowpass

AXES = ("gx", "gy", "gz")


@dataclass(frozen=True)
class AxisDifference:
    """Recorded minus simulated on one axis over the overlap.

    Attributes
    ----------
    axis : str
        ``"gx"``, ``"gy"`` or ``"gz"``.
    rms_g : float
        RMS of the difference over the overlap [g0].
    peak_g : float
        Largest absolute difference [g0].
    t_peak_s : float
        Where it occurs, in simulation time [s].
    """

    axis: str
    rms_g: float
    peak_g: float  # largest |difference|
    t_peak_s: float


@dataclass(frozen=True)
class Correlation:
    """How a record lines up with its simulation and how far apart they are.

    Attributes
    ----------
    recorded_seat : str
        Name of the recorded signal.
    simulated_seat : str
        Name of the simulated seat it was compared with.
    method : str
        ``"station"`` or ``"cross-correlation of filtered Gz"``.
    offset_s : float
        Record time = simulation time + offset_s [s].
    peak_correlation : float
        Normalized cross-correlation at the chosen lag, -1..1; nan when aligned by station
        [-].
    t : (n,) ndarray
        Common time base on the overlap, simulation time [s].
    recorded : (n, 3) ndarray
        Filtered record on ``t`` [g0].
    simulated : (n, 3) ndarray
        Filtered simulation on ``t`` [g0].
    axes : tuple of AxisDifference
        Differences per axis, gx, gy, gz.
    """

    recorded_seat: str
    simulated_seat: str
    method: str  # "station" or "cross-correlation of filtered Gz"
    offset_s: float  # record time = simulation time + offset_s
    peak_correlation: float  # normalized cross-correlation at the chosen lag (nan by station)
    t: np.ndarray  # common time base, simulation time [s]
    recorded: np.ndarray  # (n, 3) filtered record on t [g0]
    simulated: np.ndarray  # (n, 3) filtered simulation on t [g0]
    axes: tuple[AxisDifference, ...]

    @property
    def overlap_s(self) -> float:
        """Length of the overlap [s]; 0 with fewer than two samples."""
        return float(self.t[-1] - self.t[0]) if len(self.t) > 1 else 0.0

    def to_dict(self) -> dict:
        """The alignment and differences as JSON fields (no arrays).

        Returns
        -------
        fields : dict
            Seats, method, offset [s], peak correlation [-], overlap [s] and per axis
            ``axis``, ``rms_g``, ``peak_g`` [g0] and ``t_peak_s`` [s].
        """
        return {"recorded_seat": self.recorded_seat, "simulated_seat": self.simulated_seat,
                "method": self.method, "offset_s": self.offset_s,
                "peak_correlation": self.peak_correlation, "overlap_s": self.overlap_s,
                "axes": [vars(a) for a in self.axes]}


def _rate(t: np.ndarray) -> float:
    return 1.0 / float(np.median(np.diff(t)))


def _on_grid(t: np.ndarray, g: np.ndarray, grid: np.ndarray) -> np.ndarray:
    return np.column_stack([np.interp(grid, t, g[:, i]) for i in range(g.shape[1])])


def cross_correlation_offset(t_rec: np.ndarray, gz_rec: np.ndarray, t_sim: np.ndarray,
                             gz_sim: np.ndarray, max_lag_s: float | None = None
                             ) -> tuple[float, float]:
    """Time offset between a record and a simulation by cross-correlation.

    Both signals are put on the simulation's step (linear interpolation); at every lag whose
    overlap covers at least half the shorter signal, the correlation coefficient over that
    overlap is computed from sliding sums (scipy.signal.correlate, full mode); the best lag
    is refined by a parabola through the peak and its two neighbours.

    Parameters
    ----------
    t_rec : (n,) ndarray
        Record times, increasing [s].
    gz_rec : (n,) ndarray
        Recorded (filtered) Gz [g0].
    t_sim : (m,) ndarray
        Simulation times, increasing [s]; their median step is the common step.
    gz_sim : (m,) ndarray
        Simulated (filtered) Gz [g0].
    max_lag_s : float or None
        Largest offset the search may return [s]; None = any.

    Returns
    -------
    offset_s : float
        Record time = simulation time + offset_s [s].
    peak : float
        Correlation coefficient over the overlap at the integer peak lag, -1..1; nan when
        no lag gives a usable overlap (a constant signal) [-].

    References
    ----------
    J. S. Bendat and A. G. Piersol, Random Data: Analysis and Measurement Procedures, Wiley
    (time-delay estimation by cross-correlation; from memory).
    """
    step = float(np.median(np.diff(t_sim)))
    rec_grid = t_rec[0] + step * np.arange(int(np.floor((t_rec[-1] - t_rec[0]) / step)) + 1)
    sim_grid = t_sim[0] + step * np.arange(int(np.floor((t_sim[-1] - t_sim[0]) / step)) + 1)
    a = np.interp(rec_grid, t_rec, gz_rec)
    b = np.interp(sim_grid, t_sim, gz_sim)
    # The correlation coefficient at every lag over that lag's overlap (means and energies
    # of the overlapping parts only, from sliding sums: J. P. Lewis, "Fast normalized
    # cross-correlation", Vision Interface 1995). Whole-signal means biased the peak of a
    # record of part of the ride by 8 ms (its mean is not the ride's).
    a = a - a.mean()  # conditioning only: the coefficient ignores constant offsets
    b = b - b.mean()
    ones_a, ones_b = np.ones_like(a), np.ones_like(b)
    count = np.rint(signal.correlate(ones_a, ones_b, mode="full"))
    sum_ab = signal.correlate(a, b, mode="full")
    sum_a = signal.correlate(a, ones_b, mode="full")
    sum_b = signal.correlate(ones_a, b, mode="full")
    sum_aa = signal.correlate(a * a, ones_b, mode="full")
    sum_bb = signal.correlate(ones_a, b * b, mode="full")
    lags = signal.correlation_lags(len(a), len(b), mode="full")
    with np.errstate(invalid="ignore", divide="ignore"):
        spread = ((sum_aa - sum_a**2 / count) * (sum_bb - sum_b**2 / count)).clip(min=0.0)
        corr = (sum_ab - sum_a * sum_b / count) / np.sqrt(spread)
    # only lags that overlap over at least half the shorter signal can be trusted
    usable = (count >= 0.5 * min(len(a), len(b))) & np.isfinite(corr)
    if max_lag_s is not None:
        usable &= np.abs(lags * step) <= max_lag_s
    if not usable.any():
        return rec_grid[0] - sim_grid[0], float("nan")
    corr = np.where(usable, corr, -np.inf)
    k = int(np.argmax(corr))
    shift = float(lags[k])
    if 0 < k < len(corr) - 1 and np.isfinite(corr[k - 1]) and np.isfinite(corr[k + 1]):
        y0, y1, y2 = corr[k - 1], corr[k], corr[k + 1]
        denom = y0 - 2 * y1 + y2
        if denom < 0:
            shift += 0.5 * (y0 - y2) / denom
    peak = float(corr[k])
    return rec_grid[0] - sim_grid[0] + shift * step, peak


def correlate_signals(recorded_seat: str, t_rec: np.ndarray, g_rec: np.ndarray,
                      simulated_seat: str, t_sim: np.ndarray, g_sim: np.ndarray,
                      spec: FilterSpec, s_rec: np.ndarray | None = None,
                      s_sim: np.ndarray | None = None,
                      max_lag_s: float | None = None) -> Correlation:
    """Align a record with a simulation and measure their differences per axis.

    Parameters
    ----------
    recorded_seat : str
        Name of the recorded signal.
    t_rec : (n,) ndarray
        Record times, uniform steps [s].
    g_rec : (n, 3) ndarray
        Recorded specific force (Gx, Gy, Gz) [g0].
    simulated_seat : str
        Name of the simulated seat.
    t_sim : (m,) ndarray
        Simulated times, uniform steps [s].
    g_sim : (m, 3) ndarray
        Simulated specific force [g0].
    spec : FilterSpec
        The limit set's filter, applied to both (each at its own rate) before comparing.
    s_rec : (n,) ndarray or None
        Record stations of the car [m].
    s_sim : (m,) ndarray or None
        Simulated stations of the car, non-decreasing [m]; with both, alignment is by
        station (median of the paired time differences).
    max_lag_s : float or None
        Largest offset the cross-correlation may find [s]; None = any.

    Returns
    -------
    correlation : Correlation
        Offset, peak correlation, the filtered signals on the overlap (simulation time) and
        the per-axis differences (recorded minus simulated).

    Raises
    ------
    ValueError
        The record's stations do not overlap the simulation's (fewer than two samples), or
        the signals do not overlap in time once aligned.
    """
    f_rec = lowpass(np.asarray(g_rec, float), _rate(t_rec), spec)
    f_sim = lowpass(np.asarray(g_sim, float), _rate(t_sim), spec)
    if s_rec is not None and s_sim is not None:
        inside = (s_rec >= s_sim.min()) & (s_rec <= s_sim.max())
        if inside.sum() < 2:
            raise ValueError("the record's stations do not overlap the simulation's")
        t_at_s = np.interp(s_rec[inside], s_sim, t_sim)
        offset = float(np.median(t_rec[inside] - t_at_s))
        method, peak = "station", float("nan")
    else:
        offset, peak = cross_correlation_offset(t_rec, f_rec[:, 2], t_sim, f_sim[:, 2],
                                                max_lag_s)
        method = "cross-correlation of filtered Gz"
    start = max(t_sim[0], t_rec[0] - offset)
    end = min(t_sim[-1], t_rec[-1] - offset)
    grid = t_sim[(t_sim >= start) & (t_sim <= end)]
    if len(grid) < 2:
        raise ValueError("the record and the simulation do not overlap in time once aligned")
    rec_on = _on_grid(t_rec - offset, f_rec, grid)
    sim_on = _on_grid(t_sim, f_sim, grid)
    diff = rec_on - sim_on
    axes = []
    for i, name in enumerate(AXES):
        j = int(np.argmax(np.abs(diff[:, i])))
        axes.append(AxisDifference(name, float(np.sqrt(np.mean(diff[:, i] ** 2))),
                                   float(abs(diff[j, i])), float(grid[j])))
    return Correlation(recorded_seat, simulated_seat, method, offset, peak, grid, rec_on,
                       sim_on, tuple(axes))


def correlate_record(signals, histories, spec: FilterSpec, seat: str | None = None,
                     max_lag_s: float | None = None) -> list[Correlation]:
    """Each recorded signal against the simulated seat of the same name (or ``seat``).

    A recorded signal split at gaps (``"<seat> part <k>"``) is matched by its base name.

    Parameters
    ----------
    signals : sequence of RecordedSignal
        Recorded signals (``seat``, ``t`` [s], ``g`` (n, 3) [g0], optional ``s`` [m]).
    histories : sequence of SeatHistory
        Simulated seat histories (``seat``, ``t`` [s], ``g`` [g0], ``s`` [m]).
    spec : FilterSpec
        The limit set's filter.
    seat : str or None
        Simulated seat to compare every record with; None to match by name.
    max_lag_s : float or None
        Largest offset the cross-correlation may find [s]; None = any.

    Returns
    -------
    correlations : list of Correlation
        One per recorded signal, in order.

    Raises
    ------
    KeyError
        With the missing simulated seat's name, when no simulated seat has that name.
    ValueError
        As :func:`correlate_signals` (no overlap).
    """
    by_name = {h.seat: h for h in histories}
    out = []
    for rec in signals:
        base = rec.seat.split(" part ")[0]
        name = seat or base
        if name not in by_name:
            raise KeyError(name)
        sim = by_name[name]
        s_sim = sim.s if rec.s is not None else None
        out.append(correlate_signals(rec.seat, rec.t, rec.g, sim.seat, sim.t, sim.g, spec,
                                     rec.s, s_sim, max_lag_s))
    return out

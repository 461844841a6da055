"""Signal conditioning: the low-pass filter of the limits file, and onset rate.

The ride-acceleration practice is a 4-pole Butterworth low-pass with a 5 Hz corner applied in
a single causal pass (as quoted publicly from the ASTM F24 ride standards; from memory). The
filter is designed with scipy.signal.butter in second-order sections and run with sosfilt,
started in its steady state (sosfilt_zi) at a representative level: the median of the first
START_WINDOW_S of the signal, so that neither a rider at rest nor a noisy or unrepresentative
first sample makes a start-up transient. ``zero-phase`` runs sosfiltfilt instead (forward and
backward).
``kind = "none"`` compares the signal as given (for data filtered elsewhere).

References
----------
S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930, pp. 536-541.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import signal

START_WINDOW_S = 0.1  # the filter starts at rest on the median over this first stretch [s]


@dataclass(frozen=True)
class FilterSpec:
    """Low-pass filter settings: Butterworth ``order`` poles, corner [Hz], pass kind.

    Attributes
    ----------
    kind : {"butterworth", "none"}
        Butterworth low-pass, or no filter.
    order : int
        Number of poles of the designed filter [-]. A zero-phase run applies it twice, so its
        magnitude response is the square (-6 dB at the corner, twice the roll-off).
    corner_hz : float
        Corner (-3 dB) frequency of the designed filter [Hz].
    passes : {"single", "zero-phase"}
        One causal pass (``sosfilt``), or forward and backward (``sosfiltfilt``).

    References
    ----------
    S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930,
    pp. 536-541.
    """

    kind: str = "butterworth"
    order: int = 4
    corner_hz: float = 5.0
    passes: str = "single"  # "single" (causal) or "zero-phase"

    def describe(self) -> str:
        """The filter and how it starts, in words for a report's method text.

        Returns
        -------
        text : str
        """
        if self.kind == "none":
            return "no filter (the signal is compared as given)"
        how = "single causal pass" if self.passes == "single" else "zero-phase (forward-backward)"
        return (f"{self.order}-pole Butterworth low-pass, {self.corner_hz:g} Hz corner, {how}; "
                + start_method(self))


def start_method(spec: FilterSpec) -> str:
    """How the filter starts, in words for a report's method text.

    Parameters
    ----------
    spec : FilterSpec
        The filter settings.

    Returns
    -------
    text : str
    """
    if spec.kind == "none":
        return "no filter"
    if spec.passes == "zero-phase":
        return ("each end padded with the signal's odd reflection (scipy sosfiltfilt), "
                "so no start-up transient")
    return (f"started in its steady state at the median of the first {START_WINDOW_S:g} s of "
            "each signal, so no start-up transient is invented")


def design_sos(spec: FilterSpec, rate_hz: float) -> np.ndarray:
    """Second-order sections of the Butterworth low-pass at a sample rate.

    Parameters
    ----------
    spec : FilterSpec
        Order and corner [Hz].
    rate_hz : float
        Sample rate; the corner must lie below rate_hz / 2 [Hz].

    Returns
    -------
    sos : (ceil(order / 2), 6) ndarray
        Second-order sections (``scipy.signal.butter(..., output="sos")``).

    Raises
    ------
    ValueError
        From scipy when the corner is not below the Nyquist frequency.

    References
    ----------
    S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930,
    pp. 536-541.
    """
    return signal.butter(spec.order, spec.corner_hz, btype="lowpass", fs=rate_hz, output="sos")


def lowpass(values: np.ndarray, rate_hz: float, spec: FilterSpec) -> np.ndarray:
    """Filter each column of a signal along time.

    A single pass starts in the filter's steady state at the median of the first
    START_WINDOW_S of each column; a zero-phase pass uses ``sosfiltfilt`` (odd-reflection
    padding at both ends).

    Parameters
    ----------
    values : (n,) or (n, k) array_like
        Signal, uniformly sampled (e.g. specific force [g0]).
    rate_hz : float
        Sample rate [Hz].
    spec : FilterSpec
        The filter settings.

    Returns
    -------
    filtered : ndarray
        Same shape and unit as ``values``; a copy when ``spec.kind == "none"``.
    """
    x = np.asarray(values, dtype=float)
    if spec.kind == "none":
        return x.copy()
    sos = design_sos(spec, rate_hz)
    if spec.passes == "zero-phase":
        return signal.sosfiltfilt(sos, x, axis=0)
    zi = signal.sosfilt_zi(sos)  # (sections, 2) for a unit step
    head = max(1, int(round(START_WINDOW_S * rate_hz)))
    level = np.median(x[:head], axis=0)
    zi = zi[:, :, None] * level[None, None, ...] if x.ndim == 2 else zi * level
    out, _ = signal.sosfilt(sos, x, axis=0, zi=zi)
    return out


def onset_rate(values: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Rate of change of a signal, by second-order central differences (``numpy.gradient``).

    Parameters
    ----------
    values : (n,) or (n, k) array_like
        Signal (e.g. filtered specific force [g0]).
    t : (n,) array_like or float
        Sample times, or the uniform sample interval [s].

    Returns
    -------
    rate : ndarray
        d(values)/dt, same shape as ``values`` [unit of values per s, e.g. g0/s]; one-sided
        first-order differences at the two ends.
    """
    return np.gradient(np.asarray(values, dtype=float), np.asarray(t, dtype=float), axis=0)


def group_delay_s(spec: FilterSpec, rate_hz: float) -> float:
    """Low-frequency group delay of the filter: how long after the motion its filtered peak
    appears.

    Parameters
    ----------
    spec : FilterSpec
        The filter settings.
    rate_hz : float
        Sample rate [Hz].

    Returns
    -------
    delay : float
        Group delay at 0.1 % of the corner frequency [s]: about 0.083 s for the 4-pole 5 Hz
        Butterworth; 0 for a zero-phase pass or no filter.

    References
    ----------
    scipy.signal.group_delay (the delay -d phase / d omega of the filter's transfer function),
    evaluated at 0.1 % of the corner frequency, where a Butterworth's delay is flat.
    """
    if spec.kind == "none" or spec.passes == "zero-phase":
        return 0.0
    b, a = signal.sos2tf(design_sos(spec, rate_hz))
    _, delay = signal.group_delay((b, a), w=[1e-3 * spec.corner_hz], fs=rate_hz)
    return float(delay[0]) / rate_hz

"""Signal conditioning: the low-pass filter of the limits file, and onset rate.

The ride-acceleration practice is a 4-pole Butterworth low-pass with a 5 Hz corner applied in
a single causal pass (as quoted publicly from the ASTM F24 ride standards; from memory). The
filter is designed here in closed form (analog Butterworth poles, bilinear transform with the
corner pre-warped, poles paired into second-order sections; the same sections as
``scipy.signal.butter(..., output="sos")``, tested) and run by scipy's compiled cascade
(what ``scipy.signal.sosfilt`` calls), started in its steady state (as ``sosfilt_zi``) at a
representative level: the median of the first START_WINDOW_S of the signal, so that neither a
rider at rest nor a noisy or unrepresentative first sample makes a start-up transient.
``zero-phase`` runs ``scipy.signal.sosfiltfilt`` instead (forward and backward).
``kind = "none"`` compares the signal as given (for data filtered elsewhere).

Why not ``scipy.signal`` itself for the single pass: importing its namespace costs about 1 s
of CPU (it parses the docstrings of every signal and statistics function), more than reading
and checking a million-row record. The compiled cascade is loaded from its own file; where
that is not possible the public ``scipy.signal.sosfilt`` is used (same numbers, slower start).

References
----------
S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930, pp. 536-541.
A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal Processing, 3rd ed., Pearson, 2010,
section 7.2 (bilinear transformation) and 6.3 (cascade form).
"""

from __future__ import annotations

import importlib.machinery
import importlib.util
import sys
from collections.abc import Callable
from dataclasses import dataclass
from functools import cache
from pathlib import Path

import numpy as np

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
        Second-order sections, each ``[b0, b1, b2, 1, a1, a2]``; the same as
        ``scipy.signal.butter(order, corner_hz, fs=rate_hz, output="sos")`` to rounding.

    Raises
    ------
    ValueError
        When the corner is not between 0 and the Nyquist frequency, or the order is below 1.

    References
    ----------
    S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930,
    pp. 536-541. Oppenheim and Schafer (2010), section 7.2: the bilinear transform
    z = (2 fs + s) / (2 fs - s), with the corner pre-warped to 2 fs tan(pi fc / fs).
    """
    nyquist = rate_hz / 2.0
    if not 0.0 < spec.corner_hz < nyquist:
        raise ValueError(f"the filter corner {spec.corner_hz:.10g} Hz must lie between 0 and "
                         f"half the sample rate ({nyquist:.10g} Hz)")
    order = int(spec.order)
    if order < 1:
        raise ValueError(f"the filter order must be at least 1 (got {spec.order})")
    # Analog prototype poles on the left half of the unit circle, scaled to the corner
    # pre-warped so that the digital filter has its -3 dB point exactly at corner_hz.
    fs2 = 2.0 * rate_hz
    warped = fs2 * np.tan(np.pi * spec.corner_hz / rate_hz)
    analog = -warped * np.exp(1j * np.pi * np.arange(-order + 1, order, 2) / (2 * order))
    poles = (fs2 + analog) / (fs2 - analog)  # bilinear transform; the zeros all go to z = -1
    gain = float(np.real(warped**order / np.prod(fs2 - analog)))
    sections = []
    for pole in poles[poles.imag > 1e-12 * abs(poles)]:  # one of each conjugate pair
        sections.append((abs(1.0 - abs(pole)),
                         [1.0, 2.0, 1.0, 1.0, -2.0 * pole.real, abs(pole) ** 2]))
    if order % 2:  # the real pole, a first-order section with the odd zero
        real = float(np.real(poles[np.argmin(abs(poles.imag))]))
        sections.append((abs(1.0 - abs(real)), [1.0, 1.0, 0.0, 1.0, -real, 0.0]))
    # Poles farthest from the unit circle first and the overall gain in the first section, as
    # scipy's zpk2sos orders them (for an odd order scipy may move the odd zero to another
    # section: the same filter, sections that differ).
    sos = np.array([row for _, row in sorted(sections, key=lambda item: -item[0])])
    sos[0, :3] *= gain
    return sos


def step_state(sos: np.ndarray) -> np.ndarray:
    """Initial state of a cascade of second-order sections in steady state for a unit step.

    Parameters
    ----------
    sos : (m, 6) ndarray
        Second-order sections, each ``[b0, b1, b2, 1, a1, a2]``.

    Returns
    -------
    state : (m, 2) ndarray
        The transposed direct-form II state of each section after an endless unit input (what
        ``scipy.signal.sosfilt_zi`` returns): each section's input is the DC gain of the ones
        before it.

    References
    ----------
    A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal Processing, 3rd ed., 2010,
    section 6.3: at steady state the state equations z = A z + B u give (I - A) z = B u.
    """
    state = np.zeros((len(sos), 2))
    level = 1.0
    for row, (b0, b1, b2, a0, a1, a2) in enumerate(np.asarray(sos, dtype=float)):
        b0, b1, b2, a1, a2 = b0 / a0, b1 / a0, b2 / a0, a1 / a0, a2 / a0
        # transposed direct form II: y = b0 u + z1, z1' = b1 u - a1 y + z2, z2' = b2 u - a2 y
        # at rest with y = g u (g = DC gain of this section):
        g = (b0 + b1 + b2) / (1.0 + a1 + a2)
        z2 = b2 - a2 * g
        state[row] = (level * (b1 - a1 * g + z2), level * z2)
        level *= g
    return state


@cache
def _compiled_cascade() -> Callable[[np.ndarray, np.ndarray, np.ndarray], None] | None:
    """scipy's compiled second-order-section loop, loaded without ``scipy.signal``'s namespace.

    Returns the in-place kernel ``f(sos, x, zi)`` (x: (signals, samples) C-ordered float64, zi:
    (signals, sections, 2)), or None where its file is not found or does not load.
    """
    name = "scipy.signal._sosfilt"
    try:
        module = sys.modules.get(name)
        if module is None:
            import scipy

            folder = Path(scipy.__file__).parent / "signal"
            path = next((folder / f"_sosfilt{suffix}"
                         for suffix in importlib.machinery.EXTENSION_SUFFIXES
                         if (folder / f"_sosfilt{suffix}").is_file()), None)
            spec = importlib.util.spec_from_file_location(name, path) if path else None
            if spec is None or spec.loader is None:
                return None
            module = importlib.util.module_from_spec(spec)
            spec.loader.exec_module(module)
            sys.modules[name] = module  # scipy.signal, if imported later, reuses it
        kernel = module._sosfilt
    except Exception:  # noqa: BLE001 - any failure means: use the public function
        return None
    return kernel if callable(kernel) else None


def cascade(sos: np.ndarray, x: np.ndarray, state: np.ndarray) -> np.ndarray:
    """Run a cascade of second-order sections along the first axis from a given state.

    Parameters
    ----------
    sos : (m, 6) ndarray
        Second-order sections.
    x : (n,) or (n, k) ndarray
        Signal, uniformly sampled.
    state : (m, 2) or (m, 2, k) ndarray
        Initial transposed direct-form II state of each section (and column).

    Returns
    -------
    y : ndarray
        The filtered signal, same shape as ``x`` (what ``scipy.signal.sosfilt(sos, x, axis=0,
        zi=state)[0]`` returns).
    """
    kernel = _compiled_cascade()
    if kernel is None:
        from scipy import signal

        return signal.sosfilt(sos, x, axis=0, zi=state)[0]
    columns = np.array(np.atleast_2d(x.T), dtype=float, order="C")  # (k, n), filtered in place
    zi = np.ascontiguousarray(np.moveaxis(state.reshape(len(sos), 2, -1), 2, 0), dtype=float)
    kernel(np.ascontiguousarray(sos, dtype=float), columns, zi)
    return columns.T if x.ndim == 2 else columns[0]


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
        from scipy import signal  # the rarer choice: scipy's padding and two passes

        # scipy pads each end with 3 (2 sections + 1) samples' odd reflection (less for odd
        # orders); a shorter signal is padded with what it has
        pad = 3 * (2 * len(sos) + 1 - min(int((sos[:, 2] == 0).sum()),
                                          int((sos[:, 5] == 0).sum())))
        return signal.sosfiltfilt(sos, x, axis=0, padlen=min(pad, max(len(x) - 1, 0)))
    zi = step_state(sos)  # (sections, 2) for a unit step
    head = max(1, int(round(START_WINDOW_S * rate_hz)))
    level = np.median(x[:head], axis=0)
    zi = zi[:, :, None] * level[None, None, ...] if x.ndim == 2 else zi * level
    return cascade(sos, x, zi)


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
    A. V. Oppenheim and R. W. Schafer, Discrete-Time Signal Processing, 3rd ed., 2010,
    section 5.1: the group delay -d phase / d omega of B(z) / A(z) is
    Re[sum k c_k z^-k / sum c_k z^-k] for the numerator minus the same for the denominator,
    and a cascade's delay is the sum of its sections'. Evaluated at 0.1 % of the corner
    frequency, where a Butterworth's delay is flat (as ``scipy.signal.group_delay`` there).
    """
    if spec.kind == "none" or spec.passes == "zero-phase":
        return 0.0
    omega = 2.0 * np.pi * 1e-3 * spec.corner_hz / rate_hz  # [rad/sample]
    powers = np.exp(-1j * omega * np.arange(3))
    taps = np.arange(3)

    def delay_of(c: np.ndarray) -> float:
        return float(np.real(np.sum(taps * c * powers) / np.sum(c * powers)))

    samples = sum(delay_of(row[:3]) - delay_of(row[3:]) for row in design_sos(spec, rate_hz))
    return samples / rate_hz

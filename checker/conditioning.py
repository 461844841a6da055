"""Signal conditioning: the low-pass filter of the limits file, and onset rate.

The ride-acceleration practice is a 4-pole Butterworth low-pass with a 5 Hz corner applied in
a single causal pass (as quoted publicly from the ASTM F24 ride standards; from memory). The
filter is designed with scipy.signal.butter in second-order sections and run with sosfilt,
started in its steady state for the first sample (sosfilt_zi) so that a rider at rest does not
see a start-up transient. ``zero-phase`` runs sosfiltfilt instead (forward and backward).
``kind = "none"`` compares the signal as given (for data filtered elsewhere).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy import signal


@dataclass(frozen=True)
class FilterSpec:
    """Low-pass filter settings: Butterworth ``order`` poles, corner [Hz], pass kind."""

    kind: str = "butterworth"
    order: int = 4
    corner_hz: float = 5.0
    passes: str = "single"  # "single" (causal) or "zero-phase"

    def describe(self) -> str:
        if self.kind == "none":
            return "no filter (the signal is compared as given)"
        how = "single causal pass" if self.passes == "single" else "zero-phase (forward-backward)"
        return f"{self.order}-pole Butterworth low-pass, {self.corner_hz:g} Hz corner, {how}"


def design_sos(spec: FilterSpec, rate_hz: float) -> np.ndarray:
    """Second-order sections of the filter at sample rate ``rate_hz`` [Hz]."""
    return signal.butter(spec.order, spec.corner_hz, btype="lowpass", fs=rate_hz, output="sos")


def lowpass(values: np.ndarray, rate_hz: float, spec: FilterSpec) -> np.ndarray:
    """Filter each column of ``values`` (n,) or (n, k) along time."""
    x = np.asarray(values, dtype=float)
    if spec.kind == "none":
        return x.copy()
    sos = design_sos(spec, rate_hz)
    if spec.passes == "zero-phase":
        return signal.sosfiltfilt(sos, x, axis=0)
    zi = signal.sosfilt_zi(sos)  # (sections, 2) for a unit step
    zi = zi[:, :, None] * x[0][None, None, ...] if x.ndim == 2 else zi * x[0]
    out, _ = signal.sosfilt(sos, x, axis=0, zi=zi)
    return out


def onset_rate(values: np.ndarray, t: np.ndarray) -> np.ndarray:
    """Rate of change d values / dt [units/s], second-order central differences."""
    return np.gradient(np.asarray(values, dtype=float), np.asarray(t, dtype=float), axis=0)


def group_delay_s(spec: FilterSpec, rate_hz: float) -> float:
    """Low-frequency group delay of the filter [s]: how long after the motion its filtered
    peak appears (about 0.083 s for the 4-pole 5 Hz Butterworth). Zero for a zero-phase or
    no filter.

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

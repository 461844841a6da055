"""The filter's own design, steady start, cascade and delay against scipy.signal (the reference
library), and the start-up promise that a single-pass filter never imports scipy.signal."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pytest
from scipy import signal

from checker import conditioning
from checker.conditioning import (
    FilterSpec,
    cascade,
    design_sos,
    group_delay_s,
    lowpass,
    step_state,
)

# (corner [Hz], sample rate [Hz]): the trade's 5 Hz at common logger rates, a low corner, and
# corners close to the Nyquist frequency where the bilinear pre-warp matters most
CORNERS = [(5.0, 200.0), (5.0, 1000.0), (10.0, 200.0), (0.5, 50.0), (49.0, 100.0), (3.0, 7.0)]


@pytest.mark.parametrize("order", range(2, 13, 2))
@pytest.mark.parametrize("corner_hz, rate_hz", CORNERS)
def test_even_order_sections_equal_scipy_butter(order, corner_hz, rate_hz):
    # reference: scipy.signal.butter(..., output="sos") (bilinear transform, zpk2sos pairing)
    ours = design_sos(FilterSpec(order=order, corner_hz=corner_hz), rate_hz)
    ref = signal.butter(order, corner_hz, fs=rate_hz, output="sos")
    np.testing.assert_allclose(ours, ref, rtol=1e-9, atol=1e-12 * np.abs(ref).max())


@pytest.mark.parametrize("order", range(1, 13, 2))
@pytest.mark.parametrize("corner_hz, rate_hz", CORNERS)
def test_odd_order_filters_respond_as_scipy_butter(order, corner_hz, rate_hz):
    # scipy may give the odd zero to another section: compare the filters, not the rows
    ours = design_sos(FilterSpec(order=order, corner_hz=corner_hz), rate_hz)
    ref = signal.butter(order, corner_hz, fs=rate_hz, output="sos")
    assert ours.shape == ref.shape
    np.testing.assert_allclose(ours[:, 3:], ref[:, 3:], rtol=1e-9, atol=1e-12)
    x = np.random.default_rng(order).normal(size=4000)
    expected = signal.sosfilt(ref, x)
    np.testing.assert_allclose(signal.sosfilt(ours, x), expected,
                               atol=1e-10 * np.abs(expected).max())


def test_corner_half_power_at_the_given_frequency():
    # Butterworth (1930): |H| = 1/sqrt(2) at the corner for every order; the pre-warp puts the
    # digital filter's corner exactly there
    for order in (1, 2, 4, 7):
        sos = design_sos(FilterSpec(order=order, corner_hz=5.0), 200.0)
        _, h = signal.sosfreqz(sos, worN=[5.0, 0.0], fs=200.0)
        assert abs(abs(h[0]) - 2 ** -0.5) < 1e-12
        assert abs(abs(h[1]) - 1.0) < 1e-12


def test_bad_corner_and_order_are_refused():
    with pytest.raises(ValueError, match="half"):
        design_sos(FilterSpec(corner_hz=100.0), 200.0)
    with pytest.raises(ValueError, match="order"):
        design_sos(FilterSpec(order=0), 200.0)


@pytest.mark.parametrize("order", [1, 2, 3, 4, 8])
def test_step_state_equals_scipy_sosfilt_zi(order):
    sos = signal.butter(order, 5.0, fs=200.0, output="sos")
    np.testing.assert_allclose(step_state(sos), signal.sosfilt_zi(sos), rtol=1e-12, atol=1e-14)
    # and it is a steady state: a constant input stays constant from the first sample
    y = cascade(sos, np.full(500, 2.5), 2.5 * step_state(sos))
    assert np.max(np.abs(y - 2.5)) < 1e-12


def test_cascade_equals_scipy_sosfilt_bit_for_bit_in_both_paths(monkeypatch):
    rng = np.random.default_rng(3)
    x = rng.normal(size=(5000, 3))
    sos = signal.butter(4, 5.0, fs=200.0, output="sos")
    state = signal.sosfilt_zi(sos)[:, :, None] * np.array([0.1, -0.2, 1.0])
    expected = signal.sosfilt(sos, x, axis=0, zi=state)[0]
    assert np.array_equal(cascade(sos, x, state), expected)
    assert np.array_equal(cascade(sos, x[:, 1], state[:, :, 1]), expected[:, 1])
    # where the compiled loop cannot be loaded, the public function gives the same numbers
    monkeypatch.setattr(conditioning, "_compiled_cascade", lambda: None)
    assert np.array_equal(cascade(sos, x, state), expected)


def test_group_delay_equals_the_phase_slope():
    # the group delay is -d(phase)/d(omega) (Oppenheim and Schafer 2010, 5.1): check it by a
    # central difference of scipy's frequency response at 0.1 % of the corner
    for order, corner, rate in [(4, 5.0, 200.0), (2, 5.0, 1000.0), (6, 10.0, 200.0),
                                (3, 0.5, 50.0)]:
        sos = signal.butter(order, corner, fs=rate, output="sos")
        f = 1e-3 * corner
        df = 1e-4 * f
        _, h = signal.sosfreqz(sos, worN=[f - df, f + df], fs=rate)
        slope = -(np.angle(h[1] / h[0])) / (2 * np.pi * 2 * df)  # [s]
        delay = group_delay_s(FilterSpec(order=order, corner_hz=corner), rate)
        assert abs(delay - slope) < 1e-6 * slope


def test_single_pass_filter_does_not_import_scipy_signal():
    # importing scipy.signal's namespace costs about 1 s of CPU; a check of a record must not
    code = ("import sys, numpy as np; from checker.conditioning import FilterSpec, lowpass; "
            "y = lowpass(np.ones((400, 3)), 200.0, FilterSpec()); "
            "print(int('scipy.signal' in sys.modules), float(np.abs(y - 1).max()))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout.split()
    assert out[0] == "0"
    assert float(out[1]) < 1e-12


def test_zero_phase_pass_still_uses_scipy_sosfiltfilt():
    x = np.random.default_rng(5).normal(size=(3000, 2))
    spec = FilterSpec(passes="zero-phase")
    sos = signal.butter(4, 5.0, fs=200.0, output="sos")
    np.testing.assert_allclose(lowpass(x, 200.0, spec), signal.sosfiltfilt(sos, x, axis=0),
                               atol=1e-12)


@pytest.mark.parametrize("n", [1, 2, 10, 15])
def test_zero_phase_pass_filters_a_record_shorter_than_scipys_padding(n):
    # sosfiltfilt pads 15 samples for 4 poles and refuses shorter signals; a short part of a
    # record is padded with what it has (a constant stays the constant)
    spec = FilterSpec(passes="zero-phase")
    y = lowpass(np.full((n, 3), 0.7), 200.0, spec)
    assert y.shape == (n, 3) and np.allclose(y, 0.7, atol=1e-9)

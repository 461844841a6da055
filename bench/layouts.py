"""Synthetic layouts for the benchmarks (not the demo scenario)."""

from __future__ import annotations

import numpy as np


def long_layout(length_m: float = 2000.0, spacing_m: float = 0.5) -> np.ndarray:
    """A 2 km descending layout with hills and S-turns, sampled every ``spacing_m``."""
    n = int(round(length_m / spacing_m)) + 1
    s = np.linspace(0.0, length_m, n)
    heading = 0.9 * np.sin(2 * np.pi * s / 260.0)  # S-turns [rad]
    pitch = -0.035 + 0.22 * np.sin(2 * np.pi * s / 95.0)  # hills on a gentle descent [rad]
    ds = np.diff(s)
    h, p = 0.5 * (heading[1:] + heading[:-1]), 0.5 * (pitch[1:] + pitch[:-1])
    steps = np.column_stack([np.cos(p) * np.cos(h), np.cos(p) * np.sin(h), np.sin(p)])
    pts = np.vstack([[0.0, 0.0, 80.0], 80.0 + 0 * steps[:1]])[:1]
    return np.vstack([pts, pts + np.cumsum(steps * ds[:, None], axis=0)])

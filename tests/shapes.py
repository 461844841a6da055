"""Closed-form track shapes for the tests (sampled point sets, SI units)."""

from __future__ import annotations

import numpy as np

G0 = 9.80665  # standard gravity [m/s^2], 3rd CGPM (1901); ISO 80000-3


def vertical_loop(radius: float, turns: float = 1.25, per_turn: int = 720,
                  drift_per_turn: float = 0.5) -> np.ndarray:
    """Circle in the x-z plane starting at its bottom going +x, with a small sideways drift
    so that successive turns do not coincide (a helix of tiny pitch)."""
    theta = np.linspace(0.0, 2 * np.pi * turns, int(per_turn * turns) + 1)
    return np.column_stack([radius * np.sin(theta), drift_per_turn * theta / (2 * np.pi),
                            radius * (1 - np.cos(theta))])


def flat_circle_clockwise(radius: float, turns: float = 1.0, per_turn: int = 720) -> np.ndarray:
    """Level circle traversed clockwise seen from above: a right-hand turn."""
    theta = np.linspace(0.0, 2 * np.pi * turns, int(per_turn * turns) + 1)
    return np.column_stack([radius * np.sin(theta), radius * (np.cos(theta) - 1),
                            np.zeros_like(theta)])


def straight(length: float, spacing: float = 1.0) -> np.ndarray:
    x = np.linspace(0.0, length, int(round(length / spacing)) + 1)
    return np.column_stack([x, np.zeros_like(x), np.zeros_like(x)])


def helix(radius: float, pitch_c: float, turns: float, per_turn: int = 360) -> np.ndarray:
    """Circular helix (r cos t, r sin t, c t)."""
    t = np.linspace(0.0, 2 * np.pi * turns, int(per_turn * turns) + 1)
    return np.column_stack([radius * np.cos(t), radius * np.sin(t), pitch_c * t])


def free_fall_crest(v0: float, angle_rad: float, half_width: float, spacing: float = 0.25):
    """The projectile parabola through the origin for entry speed v0 at angle a."""
    span = 2 * half_width
    x = np.linspace(0.0, span, int(round(span / spacing)) + 1)
    z = x * np.tan(angle_rad) - G0 * x**2 / (2 * v0**2 * np.cos(angle_rad) ** 2)
    return np.column_stack([x, np.zeros_like(x), z])


def rolling_hills(length: float = 400.0, spacing: float = 0.5) -> np.ndarray:
    """A smooth up-and-down track with a gentle curve, for energy checks."""
    x = np.linspace(0.0, length, int(round(length / spacing)) + 1)
    y = 15.0 * np.sin(2 * np.pi * x / length)
    z = 8.0 * np.sin(2 * np.pi * x / 90.0) ** 2 - 0.02 * x
    return np.column_stack([x, y, z])


def from_pitch_profile(stations: np.ndarray, pitch_rad: np.ndarray) -> np.ndarray:
    """A planar (x-z) path whose pitch angle follows the given profile along arc length."""
    ds = np.diff(stations)
    mid = 0.5 * (pitch_rad[1:] + pitch_rad[:-1])
    x = np.concatenate([[0.0], np.cumsum(ds * np.cos(mid))])
    z = np.concatenate([[0.0], np.cumsum(ds * np.sin(mid))])
    return np.column_stack([x, np.zeros_like(x), z])


def asymmetric_crest(up_deg: float = 25.0, down_deg: float = 50.0, radius: float = 15.0,
                     spacing: float = 0.25) -> np.ndarray:
    """Gentle climb, circular crest of the given radius, steep drop, then a flat run-out."""
    up, down = np.radians(up_deg), np.radians(down_deg)
    climb, crest = 20.0, radius * (up + down)
    drop, pull = 30.0, 25.0 * down
    total = climb + crest + drop + pull + 30.0
    s = np.linspace(0.0, total, int(round(total / spacing)) + 1)
    pitch = np.piecewise(
        s,
        [s < climb, (s >= climb) & (s < climb + crest), (s >= climb + crest)
         & (s < climb + crest + drop), (s >= climb + crest + drop)
         & (s < climb + crest + drop + pull), s >= climb + crest + drop + pull],
        [up, lambda t: up - (t - climb) / radius, -down,
         lambda t: -down + (t - climb - crest - drop) / 25.0, 0.0])
    return from_pitch_profile(s, pitch)

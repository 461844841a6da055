"""Sustained combined limits: a two-axis ellipse whose half-axes follow how long each level
is held.

For every sample i and each of the two axes, the admissible level comes from that axis's
duration limit (in the direction of the sample's sign) at the length of the longest window
around i in which the axis stays at or beyond its value at i (the windows of
:func:`checker.rules.sustained_windows`). The pair then satisfies the quadrant-wise ellipse
rule

    (a / A)^2 + (b / B)^2 <= 1,

with a, b the two filtered values and A, B their admissible levels for the durations held.

Levels are measured from zero, as the single-axis duration limits measure them (a seated
rider at rest has Gz = +1 and uses part of the positive Gz allowance); the fixed ellipse
(``at_duration_s`` a number) is centred there too.

References
----------
The form (a/A)^2 + (b/B)^2 <= 1 per quadrant with A, B the single-axis admissible levels for
the duration held is the combined-acceleration rule of the international ride standards, as
applied to measured data by a 2025 published framework for ISO 17842-1 (from memory of its
abstract).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .limits import DurationLimit


@dataclass(frozen=True)
class SustainedCombined:
    """Per sample: the combined ratio and the admissible level of each axis.

    Attributes
    ----------
    ratio : (n,) ndarray
        (a/A)^2 + (b/B)^2; the rule holds where it is <= 1 [-].
    admissible_a, admissible_b : (n,) ndarray
        Admissible level A, B of each axis for the duration held, signed like the sample
        [g0].
    held_a_s, held_b_s : (n,) ndarray
        Duration each axis is held at or beyond its value [s].
    """

    ratio: np.ndarray  # (a/A)^2 + (b/B)^2
    admissible_a: np.ndarray
    admissible_b: np.ndarray
    held_a_s: np.ndarray  # duration each axis is held at or beyond its value [s]
    held_b_s: np.ndarray


def held_durations(x: np.ndarray, dt: float) -> np.ndarray:
    """For each sample, how long the signal stays at or beyond its value around it.

    "Beyond" is above for a value >= 0 and below for a negative value; the window is the
    longest one around the sample (:func:`checker.rules.sustained_windows`).

    Parameters
    ----------
    x : (n,) ndarray
        Filtered signal [g0].
    dt : float
        Sample interval [s].

    Returns
    -------
    held : (n,) ndarray
        Window width in samples times ``dt`` [s]; at least ``dt``.
    """
    from .rules import sustained_windows

    x = np.asarray(x, dtype=float)
    held = np.zeros(len(x))
    for sign in (1.0, -1.0):
        side = (sign * x >= 0) if sign > 0 else (x < 0)
        if not side.any():
            continue
        left, right = sustained_windows(sign * x)
        held[side] = (right - left + 1)[side] * dt
    return held


def admissible(x: np.ndarray, held_s: np.ndarray, positive: DurationLimit,
               negative: DurationLimit) -> np.ndarray:
    """Admissible level of each sample for the duration it is held.

    Parameters
    ----------
    x : (n,) ndarray
        Filtered signal [g0]; its sign picks the limit.
    held_s : (n,) ndarray
        Duration each sample is held (:func:`held_durations`) [s].
    positive, negative : DurationLimit
        The axis's limits for values >= 0 and for negative values.

    Returns
    -------
    level : (n,) ndarray
        Allowed level, signed as the limit gives it [g0].
    """
    return np.where(x >= 0, positive.allowed(held_s), negative.allowed(held_s))


def sustained_combined(a: np.ndarray, b: np.ndarray, dt: float,
                       limits_a: tuple[DurationLimit, DurationLimit],
                       limits_b: tuple[DurationLimit, DurationLimit]) -> SustainedCombined:
    """The sustained combined ratio of a pair of filtered signals.

    Parameters
    ----------
    a, b : (n,) ndarray
        Filtered values of the two axes [g0].
    dt : float
        Sample interval [s].
    limits_a, limits_b : tuple of (DurationLimit, DurationLimit)
        (positive, negative) duration limits of each axis.

    Returns
    -------
    result : SustainedCombined
        The rule holds where ``ratio <= 1``.
    """
    a = np.asarray(a, dtype=float)
    b = np.asarray(b, dtype=float)
    held_a, held_b = held_durations(a, dt), held_durations(b, dt)
    adm_a = admissible(a, held_a, *limits_a)
    adm_b = admissible(b, held_b, *limits_b)
    ratio = (a / adm_a) ** 2 + (b / adm_b) ** 2
    return SustainedCombined(ratio, adm_a, adm_b, held_a, held_b)


def pair_limits(duration: tuple[DurationLimit, ...], axis: str
                ) -> tuple[DurationLimit, DurationLimit] | None:
    """The (positive, negative) duration limits of an axis.

    Parameters
    ----------
    duration : tuple of DurationLimit
        The limit set's duration rules.
    axis : str
        ``"gx"``, ``"gy"`` or ``"gz"``.

    Returns
    -------
    limits : tuple of (DurationLimit, DurationLimit) or None
        The first positive and first negative rule of the axis; None if either is missing.
    """
    pos = [d for d in duration if d.axis == axis and d.sign > 0]
    neg = [d for d in duration if d.axis == axis and d.sign < 0]
    return (pos[0], neg[0]) if pos and neg else None


def sustained_findings(filtered: np.ndarray, env, duration: tuple[DurationLimit, ...], ctx,
                       dt: float) -> tuple[list, SustainedCombined]:
    """Findings of one sustained combined envelope for one seat, and the per-sample result.

    Parameters
    ----------
    filtered : (n, 3) ndarray
        Filtered specific force (Gx, Gy, Gz) [g0].
    env : CombinedEnvelope
        The envelope (``source == "sustained"``); its ``axes`` name the pair.
    duration : tuple of DurationLimit
        The limit set's duration rules; both directions of both axes must be present.
    ctx : object
        The rule engine's location context (``checker.rules._Context``: seat, case, times,
        stations).
    dt : float
        Sample interval [s].

    Returns
    -------
    findings : list of Finding
        One per run of samples with ratio > 1, at its worst sample; peak and limit are
        distances from zero [g0], margin 100 (1 - sqrt(ratio)) [%].
    result : SustainedCombined
        The per-sample ratio, admissible levels and held durations.
    """
    from .rules import AXIS_INDEX, Finding, FindingKind

    ia, ib = AXIS_INDEX[env.axes[0]], AXIS_INDEX[env.axes[1]]
    a, b = filtered[:, ia], filtered[:, ib]
    res = sustained_combined(a, b, dt, pair_limits(duration, env.axes[0]),
                             pair_limits(duration, env.axes[1]))
    bad = res.ratio > 1.0 + 1e-12
    edges = np.flatnonzero(np.diff(np.concatenate([[0], bad.astype(np.int8), [0]])))
    findings = []
    for start, stop in zip(edges[::2].tolist(), edges[1::2].tolist()):
        end = stop - 1
        w = start + int(np.argmax(res.ratio[start:stop]))
        q = float(np.sqrt(res.ratio[w]))  # radial position against the ellipse at w
        reach = float(np.hypot(a[w], b[w]))
        adm = (float(res.admissible_a[w]), float(res.admissible_b[w]))
        findings.append(Finding(
            rule=f"combined {env.name}", kind=FindingKind.COMBINED,
            axis=f"{env.axes[0]}+{env.axes[1]}",
            seat=ctx.seat.seat, case=ctx.case, t_start=float(ctx.t[start]),
            t_end=float(ctx.t[end]) + dt, duration_s=float(ctx.t[end] - ctx.t[start] + dt),
            peak_g=reach, limit_g=reach / q, margin=100.0 * (1.0 - q), t_worst=float(ctx.t[w]),
            ratio=float(res.ratio[w]), admissible_g=adm,
            detail=f"({env.axes[0]}, {env.axes[1]}) = ({a[w]:.2f}, {b[w]:.2f}) g held "
                   f"{res.held_a_s[w]:.2f} s and {res.held_b_s[w]:.2f} s, where "
                   f"{adm[0]:.2f} g and {adm[1]:.2f} g are admissible: ratio "
                   f"{res.ratio[w]:.3f} > 1",
            **ctx.locate(start, w, end)))
    return findings, res

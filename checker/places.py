"""The element at a station, in the words a ride designer uses: crest, valley, loop entry,
turn, inversion, lift, launch, brake.

Derived from the geometry alone (and the powered sections): the rider frame's curvature
components and attitude around the station. Pure numerics on a
:class:`checker.geometry.TrackGeometry`.

Rules, in order:

- inside a powered section: its kind (``lift``, ``launch``, ``brake run``);
- riders inverted (rider z axis more than 90 degrees from world up): ``inversion``;
- vertical curvature toward the rider's head (k . up > VERTICAL_K): ``valley``, called
  ``loop entry`` when an inversion begins within :data:`LOOP_REACH_M` after it and ``loop
  exit`` when one ended within that distance before it; curvature toward the feet: ``crest``;
- lateral curvature (|k . left| > LATERAL_K and above a quarter of the vertical curvature,
  so that a loop's sideways drift is no turn): ``left turn`` / ``right turn`` (added after a
  vertical word: "valley, left turn");
- otherwise ``straight``.
"""

from __future__ import annotations

import numpy as np

from .geometry import TrackGeometry

VERTICAL_K = 1.0 / 300.0  # vertical curvature that counts as a crest or valley [1/m]
LATERAL_K = 1.0 / 300.0  # lateral curvature that counts as a turn [1/m]
LOOP_REACH_M = 25.0  # a valley this close to an inversion is its entry or exit [m]
LOOK_AROUND_M = 3.0  # the element around a station: this far either side [m]


def element_at(geometry: TrackGeometry, s_from: float, s_to: float,
               sections: tuple = (), track_length_m: float | None = None) -> str:
    """Words for the element between two stations (rules in the module docstring).

    Parameters
    ----------
    geometry : TrackGeometry
        Track geometry and rider frame.
    s_from, s_to : float
        Stations bounding the element, in either order [m]; the geometry is read
        :data:`LOOK_AROUND_M` beyond them.
    sections : tuple
        The operation's powered sections (objects with ``kind`` and
        ``resolved(track_length)``); a section containing the midpoint names the element.
    track_length_m : float or None
        Track length the sections' stations resolve against [m]; None for the geometry's.

    Returns
    -------
    words : str
        E.g. ``"lift"``, ``"brake run"``, ``"inversion"``, ``"loop entry"``,
        ``"valley, left turn"``, ``"crest"``, ``"straight"``.
    """
    length = geometry.length if track_length_m is None else track_length_m
    lo, hi = sorted((s_from, s_to))
    for sec in sections:
        a, b = sec.resolved(length)
        if a <= 0.5 * (lo + hi) <= b:
            return {"brake": "brake run"}.get(sec.kind, sec.kind)
    s = geometry.s
    window = (s >= lo - LOOK_AROUND_M) & (s <= hi + LOOK_AROUND_M)
    if not window.any():
        window = np.abs(s - 0.5 * (lo + hi)) <= geometry.step
    up_z = geometry.up[:, 2]
    vertical = -geometry.omega[:, 1]  # k . up: toward the rider's head
    lateral = geometry.omega[:, 2]  # k . left
    if np.median(up_z[window]) < 0.0:
        return "inversion"
    v = vertical[window]
    k_v = float(v[np.argmax(np.abs(v))])
    words = []
    if k_v > VERTICAL_K:
        inverted = up_z < 0.0
        after = inverted & (s > hi) & (s <= hi + LOOP_REACH_M)
        before = inverted & (s < lo) & (s >= lo - LOOP_REACH_M)
        words.append("loop entry" if after.any() else "loop exit" if before.any()
                     else "valley")
    elif k_v < -VERTICAL_K:
        words.append("crest")
    lat = lateral[window]
    k_l = float(lat[np.argmax(np.abs(lat))])
    if abs(k_l) > LATERAL_K and abs(k_l) > 0.25 * abs(k_v):  # not a loop's drift
        words.append("left turn" if k_l > 0 else "right turn")
    return ", ".join(words) or "straight"

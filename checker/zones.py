"""Restraint zones: where a ride's (Gx, Gz) trace falls on the user's own zone diagram.

A limits file may carry a diagram of zones in the Gx-Gz plane (``[[zones]]``), ranked from
least (order 1) to most restraint. Each sample belongs to the least-restraint
zone whose polygon contains it, so a diagram may be drawn as nested regions (each zone the
whole region it allows) or as adjacent ones. A seat *reaches* a zone when its filtered
(Gx, Gz) stays in that zone or a higher one continuously for at least the zone's dwell time;
shorter visits do not count. Per seat the highest zone reached is reported with when and
where; samples outside every zone are reported too (the diagram does not cover them; they
count as beyond the highest zone).

Point-in-polygon test: :func:`checker.limits.contains` (matplotlib.path, boundary inside).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .limits import Zone, contains


@dataclass(frozen=True)
class ZoneVisit:
    """The first qualifying visit of one zone by one seat.

    A visit of a zone is a stay in that zone or a higher one (or outside every zone) of at
    least the zone's dwell time.

    Attributes
    ----------
    zone : str
        Zone name.
    order : int
        Its rank, 1 = least restraint.
    t_start : float
        Start of the first qualifying visit [s].
    t_end : float
        Its end (last sample inside plus one step) [s].
    visits : int
        Qualifying visits in the whole ride [-].
    longest_s : float
        The longest qualifying visit [s].
    s_start_m : float or None
        Station of the seat's car at the start [m].
    position_m : tuple of float or None
        Rider's world position (x, y, z) at the start [m].
    """

    zone: str
    order: int
    t_start: float  # [s]
    t_end: float  # [s]
    visits: int  # qualifying visits in the whole ride
    longest_s: float  # the longest qualifying visit [s]
    s_start_m: float | None = None  # station of the seat's car at the start [m]
    position_m: tuple[float, float, float] | None = None  # rider's world position [m]

    @property
    def duration_s(self) -> float:
        """Length of the first qualifying visit [s]."""
        return self.t_end - self.t_start

    def to_dict(self) -> dict:
        """The visit as JSON fields: times and durations [s], station [m], position [m].

        Returns
        -------
        fields : dict
        """
        return {"zone": self.zone, "order": self.order, "t_start": self.t_start,
                "t_end": self.t_end, "duration_s": self.duration_s, "visits": self.visits,
                "longest_s": self.longest_s, "s_start_m": self.s_start_m,
                "position_m": list(self.position_m) if self.position_m else None}


@dataclass(frozen=True)
class ZoneSummary:
    """One seat on the zone diagram.

    Attributes
    ----------
    reached : tuple of ZoneVisit
        Every zone reached, by increasing order.
    outside_s : float
        The longest stretch outside every zone; 0 when the diagram covers every sample [s].
    outside_t_start : float or None
        Its start [s]; None when there is none.
    outside_s_start_m : float or None
        Station of the seat's car at its start [m]; None when there is none or no station.
    """

    reached: tuple[ZoneVisit, ...]  # every zone reached, by increasing order
    outside_s: float  # the longest stretch outside every zone [s]
    outside_t_start: float | None = None  # [s]
    outside_s_start_m: float | None = None  # [m]

    @property
    def highest(self) -> ZoneVisit | None:
        """The highest zone reached, or None when no zone is reached."""
        return self.reached[-1] if self.reached else None

    def to_dict(self) -> dict:
        """The summary as JSON fields (highest zone, every zone reached, time outside [s]).

        Returns
        -------
        fields : dict
        """
        top = self.highest
        return {"highest": top.to_dict() if top else None,
                "reached": [v.to_dict() for v in self.reached],
                "outside_longest_s": self.outside_s, "outside_t_start": self.outside_t_start,
                "outside_s_start_m": self.outside_s_start_m}


def _runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First and last index (inclusive) of each True run."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return edges[::2], edges[1::2] - 1


def _inside(vertices: np.ndarray, points: np.ndarray) -> np.ndarray:
    """:func:`checker.limits.contains`, with the points inside an ellipse inscribed in the
    polygon (about its bounding-box centre or the rest point) taken as inside at once."""
    from .rules import inscribed_ellipse

    ellipse = inscribed_ellipse(vertices, np.array([0.0, 1.0]))  # rest: (Gx, Gz) = (0, 1)
    inside = ellipse.holds(points[:, 0], points[:, 1])
    rest = np.flatnonzero(~inside)
    inside[rest] = contains(vertices, points[rest])
    return inside


def seat_zones(gx: np.ndarray, gz: np.ndarray, t: np.ndarray, zones: tuple[Zone, ...],
               station: np.ndarray | None = None,
               position: np.ndarray | None = None) -> ZoneSummary:
    """Zones reached by one seat's filtered (Gx, Gz).

    A run of n samples inside a zone lasts n * dt (each sample stands for one interval, as
    the rule engine counts durations, dt the median step); it counts when that is at least
    the zone's dwell time.

    Parameters
    ----------
    gx, gz : (n,) ndarray
        Filtered specific force [g0].
    t : (n,) ndarray
        Sample times, increasing [s].
    zones : tuple of Zone
        The diagram (any order; sorted by ``order`` here).
    station : (n,) ndarray or None
        Station of the seat's car [m].
    position : (n, 3) ndarray or None
        Rider's world position [m].

    Returns
    -------
    summary : ZoneSummary
        Zones reached and the longest stretch outside every zone.
    """
    zones = tuple(sorted(zones, key=lambda z: z.order))
    t = np.asarray(t, dtype=float)
    dt = float(np.median(np.diff(t))) if len(t) > 1 else 0.0
    pts = np.column_stack([gx, gz])
    level = np.full(len(t), len(zones))  # index of each sample's zone; len(zones): outside
    for k in range(len(zones) - 1, -1, -1):  # the least-restraint zone containing it wins
        level[_inside(zones[k].vertices, pts)] = k
    inside_any = level < len(zones)
    reached = []
    for k, zone in enumerate(zones):
        first, last = _runs(level >= k)
        length = (last - first + 1) * dt
        ok = np.flatnonzero(length >= zone.dwell_s - 1e-9)
        if ok.size == 0:
            continue
        i, j = int(first[ok[0]]), int(last[ok[0]])
        reached.append(ZoneVisit(
            zone.name, zone.order, float(t[i]), float(t[j]) + dt, int(ok.size),
            float(length[ok].max()),
            float(station[i]) if station is not None else None,
            tuple(float(v) for v in position[i]) if position is not None else None))
    first, last = _runs(~inside_any)
    out_s, out_t, out_station = 0.0, None, None
    if first.size:
        k = int(np.argmax(last - first))
        out_s = float((last[k] - first[k] + 1) * dt)
        out_t = float(t[first[k]])
        out_station = float(station[first[k]]) if station is not None else None
    return ZoneSummary(tuple(reached), out_s, out_t, out_station)


def overall_highest(summaries: dict) -> tuple[str, ZoneVisit] | None:
    """The highest zone any seat reaches, earliest on ties.

    Parameters
    ----------
    summaries : dict
        {seat label: ZoneSummary or None}.

    Returns
    -------
    best : tuple of (str, ZoneVisit) or None
        (seat label, its visit of the highest zone); None when no seat reaches any zone.
    """
    best = None
    for label, summary in summaries.items():
        top = summary.highest if summary is not None else None
        if top is None:
            continue
        if best is None or (top.order, -top.t_start) > (best[1].order, -best[1].t_start):
            best = (label, top)
    return best

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
    """The first qualifying visit of one zone by one seat."""

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
        return self.t_end - self.t_start

    def to_dict(self) -> dict:
        return {"zone": self.zone, "order": self.order, "t_start": self.t_start,
                "t_end": self.t_end, "duration_s": self.duration_s, "visits": self.visits,
                "longest_s": self.longest_s, "s_start_m": self.s_start_m,
                "position_m": list(self.position_m) if self.position_m else None}


@dataclass(frozen=True)
class ZoneSummary:
    """One seat on the zone diagram."""

    reached: tuple[ZoneVisit, ...]  # every zone reached, by increasing order
    outside_s: float  # the longest stretch outside every zone [s]
    outside_t_start: float | None = None  # [s]
    outside_s_start_m: float | None = None  # [m]

    @property
    def highest(self) -> ZoneVisit | None:
        return self.reached[-1] if self.reached else None

    def to_dict(self) -> dict:
        top = self.highest
        return {"highest": top.to_dict() if top else None,
                "reached": [v.to_dict() for v in self.reached],
                "outside_longest_s": self.outside_s, "outside_t_start": self.outside_t_start,
                "outside_s_start_m": self.outside_s_start_m}


def _runs(mask: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """First and last index (inclusive) of each True run."""
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return edges[::2], edges[1::2] - 1


def seat_zones(gx: np.ndarray, gz: np.ndarray, t: np.ndarray, zones: tuple[Zone, ...],
               station: np.ndarray | None = None,
               position: np.ndarray | None = None) -> ZoneSummary:
    """Zones reached by one seat's filtered (Gx, Gz) [g0] at times ``t`` [s].

    A run of n samples inside a zone lasts n * dt (each sample stands for one interval, as
    the rule engine counts durations); it counts when that is at least the zone's dwell time.
    """
    zones = tuple(sorted(zones, key=lambda z: z.order))
    t = np.asarray(t, dtype=float)
    dt = float(np.median(np.diff(t))) if len(t) > 1 else 0.0
    pts = np.column_stack([gx, gz])
    level = np.full(len(t), len(zones))  # index of each sample's zone; len(zones): outside
    for k in range(len(zones) - 1, -1, -1):  # the least-restraint zone containing it wins
        level[contains(zones[k].vertices, pts)] = k
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
    """The highest zone any seat reaches: (seat label, its visit), earliest on ties."""
    best = None
    for label, summary in summaries.items():
        top = summary.highest if summary is not None else None
        if top is None:
            continue
        if best is None or (top.order, -top.t_start) > (best[1].order, -best[1].t_start):
            best = (label, top)
    return best

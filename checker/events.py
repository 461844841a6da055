"""Events: the findings of one rule at one place, across seats and load cases.

A reviewer reads events, not findings: 24 seats passing the bottom of one loop give 24
findings of the same rule but one thing to fix.

What "the same place" means here
--------------------------------
Two findings of the same rule are at the same place when their station ranges (from the
station at the start of the exceedance to the station at its end, of the seat's car) overlap
or lie within one train length (at least :data:`MIN_GAP_M`) of each other, whatever their
seat and load case. The test is applied transitively: findings chain into one event while
each next one starts within a train length of the event's stations so far. One train
length, because every car passes the same element, and an effect of the whole train (the
rear pulled over a crest, a powered section acting while any car is on it) shows in each car
up to a train length apart. A stall is reported at the lead car's station for every seat,
so a case's stall is one event.

Recorded data carry no station: there, findings of the same rule are the same place when
their time ranges overlap or lie within :data:`RECORD_GAP_S` of each other.

An event's governing finding is its most severe one (largest exceedance relative to the
limit); its seat and case govern, and its peak, limit and margin are the event's.
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, replace

from .rules import Finding

RECORD_GAP_S = 0.5  # recorded data: findings this close in time are one event [s]
MIN_GAP_M = 5.0  # the same place is never narrower than this, even for a one-car train [m]


@dataclass(frozen=True)
class Event:
    """One rule exceeded at one place. ``members`` index the findings it was built from."""

    id: str  # "E1", "E2", ... worst first
    rule: str
    kind: str
    axis: str
    s_start_m: float | None  # station range of its findings [m] (None: recorded data)
    s_end_m: float | None
    t_start: float  # time range of its findings [s] (over all cases)
    t_end: float
    seats: tuple[str, ...]
    cases: tuple[str, ...]
    governing: Finding
    members: tuple[int, ...]
    place: str = ""  # the element there, in words (see checker.places)
    remedy: object | None = None  # checker.remedies.Remedy

    @property
    def unit(self) -> str:
        return self.governing.unit

    @property
    def severity(self) -> float:
        return self.governing.severity

    @property
    def peak(self) -> float:
        return self.governing.peak_g

    @property
    def limit(self) -> float:
        return self.governing.limit_g

    @property
    def margin(self) -> float:
        return self.governing.margin

    @property
    def where(self) -> str:
        """Station range (or time range for recorded data) as text."""
        if self.s_start_m is None or self.s_end_m is None:
            return f"t {self.t_start:.2f}-{self.t_end:.2f} s"
        if abs(self.s_end_m - self.s_start_m) < 0.05:
            return f"{self.s_start_m:.1f} m"
        return f"{self.s_start_m:.1f}-{self.s_end_m:.1f} m"


def _station_range(f: Finding) -> tuple[float, float] | None:
    known = [s for s in (f.s_start_m, f.s_end_m, f.s_worst_m) if s is not None]
    if not known:
        return None
    return min(known), max(known)


def group_findings(findings: Sequence[Finding], train_length_m: float = 0.0) -> list[Event]:
    """Group findings into events (see the module text for "the same place").

    Parameters
    ----------
    findings : every finding of a run (any seats and load cases).
    train_length_m : distance from the first to the last car's reference point [m].

    Returns
    -------
    Events, worst first (stalls, then by severity), numbered E1, E2, ...; every finding
    belongs to exactly one event.
    """
    by_rule: dict[str, list[int]] = {}
    for i, f in enumerate(findings):
        by_rule.setdefault(f.rule, []).append(i)
    groups: list[list[int]] = []
    for rule in sorted(by_rule):
        idx = by_rule[rule]
        ranges = {i: _station_range(findings[i]) for i in idx}
        placed = [i for i in idx if ranges[i] is not None]
        timed = [i for i in idx if ranges[i] is None]
        groups += _chain(placed, ranges.__getitem__, max(train_length_m, MIN_GAP_M))
        groups += _chain(timed, lambda i: (findings[i].t_start, findings[i].t_end),
                         RECORD_GAP_S)
    events = [_event(findings, g) for g in groups]
    events.sort(key=lambda e: (-e.severity, e.s_start_m if e.s_start_m is not None
                               else e.t_start, e.rule))
    return [_renumber(e, n + 1) for n, e in enumerate(events)]


def _chain(indices: list[int], span, gap: float) -> list[list[int]]:
    """Single-linkage chaining of 1-D ranges: sorted by start, a range joins the open group
    while it starts within ``gap`` of the group's end."""
    groups: list[list[int]] = []
    end = None
    for i in sorted(indices, key=lambda i: span(i)):
        lo, hi = span(i)
        if end is not None and lo <= end + gap:
            groups[-1].append(i)
            end = max(end, hi)
        else:
            groups.append([i])
            end = hi
    return groups


def _event(findings: Sequence[Finding], members: list[int]) -> Event:
    group = [findings[i] for i in members]
    worst = max(group, key=lambda f: (f.severity, -f.t_start))
    spans = [r for r in (_station_range(f) for f in group) if r is not None]
    return Event(
        id="", rule=worst.rule, kind=worst.kind, axis=worst.axis,
        s_start_m=min(a for a, _ in spans) if spans else None,
        s_end_m=max(b for _, b in spans) if spans else None,
        t_start=min(f.t_start for f in group), t_end=max(f.t_end for f in group),
        seats=tuple(sorted({f.seat for f in group})),
        cases=tuple(sorted({f.case for f in group})), governing=worst,
        members=tuple(sorted(members)))


def _renumber(event: Event, n: int) -> Event:
    return replace(event, id=f"E{n}")


def event_of_finding(events: Sequence[Event], count: int) -> list[str]:
    """The event id of each of ``count`` findings, in the order they were grouped."""
    ids = [""] * count
    for e in events:
        for i in e.members:
            ids[i] = e.id
    return ids


def explain_events(events: Sequence[Event], geometry=None, sections: tuple = (),
                   seat_height_m: float | None = None) -> list[Event]:
    """Events with the element there in words (:mod:`checker.places`) and a remedy computed
    from the physics (:mod:`checker.remedies`). Without geometry (recorded data) the place
    is the time range and there is no computed remedy."""
    from .places import element_at
    from .remedies import remedy_for

    out = []
    for e in events:
        if geometry is None or e.s_start_m is None:
            out.append(replace(e, place="recorded data (no track geometry)"))
            continue
        place = element_at(geometry, e.s_start_m, e.s_end_m, sections)
        out.append(replace(e, place=place,
                           remedy=remedy_for(e, geometry, place, seat_height_m)))
    return out


def events_of_run(evaluation, ride=None) -> list[Event]:
    """The explained events of a checked run: ``evaluation`` (its findings, in their
    worst-first order) and ``ride`` (a :class:`checker.ride.RideResult`, or None for
    recorded data)."""
    findings = evaluation.findings
    if ride is None:
        return explain_events(group_findings(findings))
    heights = [seat.up_m for seat in ride.train.seats]
    events = group_findings(findings, ride.train.length_m)
    return explain_events(events, ride.geometry, ride.operation.sections,
                          max(heights) if heights else None)

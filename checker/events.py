"""Events: the findings of one rule at one place, across seats and load cases.

A reviewer reads events, not findings: 24 seats passing the bottom of one loop give 24
findings of the same rule but one thing to fix.

*What "the same place" means here.* Two findings of the same rule are at the same place when
their station ranges (from the station at the start of the exceedance to the station at its
end, of the seat's car) overlap or lie within one train length (at least :data:`MIN_GAP_M`) of
each other, whatever their seat and load case. The test is applied transitively: findings chain
into one event while each next one starts within a train length of the event's stations so far.
One train length, because every car passes the same element, and an effect of the whole train
(the rear pulled over a crest, a powered section acting while any car is on it) shows in each
car up to a train length apart. A stall is reported at the lead car's station for every seat,
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
    """One rule exceeded at one place.

    ``unit``, ``severity``, ``peak``, ``limit`` and ``margin`` are those of the governing
    finding.

    Attributes
    ----------
    id : str
        ``"E1"``, ``"E2"``, ... worst first.
    rule : str
        The rule exceeded (e.g. ``"duration +Gz"``).
    kind : str
        Finding kind (duration, combined, onset, stall, uplift).
    axis : str
        Axis or axis pair of the rule (empty for a stall).
    s_start_m, s_end_m : float or None
        Station range of its findings (of each seat's car) [m]; None for recorded data.
    t_start, t_end : float
        Time range of its findings over all cases [s].
    seats : tuple of str
        Seats with a finding in the event, sorted.
    cases : tuple of str
        Load cases with a finding in the event, sorted.
    governing : Finding
        The most severe finding.
    members : tuple of int
        Indices of the findings it was built from, in the sequence given to
        :func:`group_findings`.
    place : str
        The element there, in words (:mod:`checker.places`); empty until explained.
    remedy : Remedy or None
        A computed first-estimate remedy (:mod:`checker.remedies`), or None.
    """

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
        """Unit of peak, limit and margin (the governing finding's ``unit``)."""
        return self.governing.unit

    @property
    def severity(self) -> float:
        """Exceedance relative to the limit of the governing finding [-]; inf for a stall."""
        return self.governing.severity

    @property
    def peak(self) -> float:
        """Peak of the governing finding, in its ``peak_unit`` (g0, g0/s, m/s or m)."""
        return self.governing.peak_g

    @property
    def limit(self) -> float:
        """Limit of the governing finding, in its ``peak_unit``."""
        return self.governing.limit_g

    @property
    def margin(self) -> float:
        """Limit minus value of the governing finding in ``unit``; negative = exceeded."""
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
    findings : sequence of Finding
        Every finding of a run (any seats and load cases).
    train_length_m : float
        Distance from the first to the last car's reference point [m]; the gap that still
        counts as the same place is the larger of this and :data:`MIN_GAP_M`.

    Returns
    -------
    events : list of Event
        Worst first (stalls, whose severity is infinite, then by severity), numbered E1,
        E2, ...; every finding belongs to exactly one event. Places and remedies are not yet
        filled in (:func:`explain_events`).
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
    rank = {"on its side": 1, "inverted": 2}  # a stall: the worst attitude governs
    worst = max(group, key=lambda f: (f.severity, rank.get(f.attitude, 0), -f.t_start))
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
    """The event id of each finding, in the order they were grouped.

    Parameters
    ----------
    events : sequence of Event
        Events from :func:`group_findings`.
    count : int
        Number of findings that were grouped.

    Returns
    -------
    ids : list of str
        Event id of finding i at position i (empty for a finding in no event).
    """
    ids = [""] * count
    for e in events:
        for i in e.members:
            ids[i] = e.id
    return ids


def explain_events(events: Sequence[Event], geometry=None, sections: tuple = (),
                   seat_height_m: float | None = None) -> list[Event]:
    """Events with the element there in words and a remedy computed from the physics.

    Without geometry (recorded data), or for an event without stations, the place reads
    "recorded data" and there is no computed remedy.

    Parameters
    ----------
    events : sequence of Event
        Events from :func:`group_findings`.
    geometry : TrackGeometry or None
        Track geometry; None for recorded data.
    sections : tuple
        The operation's powered sections (:mod:`checker.operation`).
    seat_height_m : float or None
        Highest seat offset above the car reference point, for the remedies [m].

    Returns
    -------
    events : list of Event
        The same events with ``place`` (:func:`checker.places.element_at`) and ``remedy``
        (:func:`checker.remedies.remedy_for`) filled in.
    """
    from .places import element_at
    from .remedies import remedy_for

    out = []
    for e in events:
        if geometry is None or e.s_start_m is None:
            out.append(replace(e, place="recorded data"))  # no track geometry
            continue
        place = element_at(geometry, e.s_start_m, e.s_end_m, sections)
        out.append(replace(e, place=place,
                           remedy=remedy_for(e, geometry, place, seat_height_m)))
    return out


def events_of_run(evaluation, ride=None) -> list[Event]:
    """The explained events of a checked run.

    Parameters
    ----------
    evaluation : Evaluation
        The checked run; its findings are grouped in their worst-first order.
    ride : RideResult or None
        The simulated ride (train length, geometry, sections, seat heights); None for
        recorded data (events by time, no places or remedies).

    Returns
    -------
    events : list of Event
        Worst first, with places and remedies.
    """
    findings = evaluation.findings
    if ride is None:
        return explain_events(group_findings(findings))
    heights = [seat.up_m for seat in ride.train.seats]
    events = group_findings(findings, ride.train.length_m)
    return explain_events(events, ride.geometry, ride.operation.sections,
                          max(heights) if heights else None)

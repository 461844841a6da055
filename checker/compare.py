"""Differences between two revisions of a layout: peaks, and findings new, gone, worse or
better.

Findings are matched between revisions by rule, seat and load case, then by place: the
nearest by the rider's world position (within MATCH_DISTANCE_M), otherwise the nearest by
relative station along the layout (within MATCH_FRACTION of its length), so a layout that
changed length still pairs the same element. Each pair says how it was matched.

Events (:mod:`checker.events`, the unit of the documents) are matched by rule and place:
events whose station ranges, as fractions of each layout's length, overlap pair first
(nearest centres first); otherwise their governing findings pair as findings do. An event
is worse or better by its governing finding's severity.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .events import Event, explain_events, group_findings
from .limits import AXES
from .rules import Finding, TextEnum
from .sweep import Sweep, peak_summary

MATCH_DISTANCE_M = 25.0
MATCH_FRACTION = 0.05
SAME_SEVERITY = 0.005  # severity change below which a matched finding counts as unchanged


class ChangeState(TextEnum):
    """How a finding changed from the old revision to the new (in the order documents list
    them).

    Attributes
    ----------
    NEW : str
        ``"new"``: only in the new revision.
    WORSE : str
        ``"worse"``: paired, severity up by more than SAME_SEVERITY.
    GONE : str
        ``"gone"``: only in the old revision.
    BETTER : str
        ``"better"``: paired, severity down by more than SAME_SEVERITY.
    SAME : str
        ``"same"``: paired, severity within SAME_SEVERITY.
    """

    NEW = "new"
    WORSE = "worse"
    GONE = "gone"
    BETTER = "better"
    SAME = "same"


@dataclass(frozen=True)
class FindingChange:
    """One finding in either revision, paired by place where both have it.

    Attributes
    ----------
    status : ChangeState
        New, worse, gone, better or same (by the change of severity).
    old : Finding or None
        The finding in the old revision; None when it is new.
    new : Finding or None
        The finding in the new revision; None when it is gone.
    matched_by : str
        How the pair was matched: ``"position (3.2 m)"``, ``"station fraction (0.012)"``,
        ``"time (0.10 s)"``, or empty when unpaired.
    """

    status: ChangeState
    old: Finding | None
    new: Finding | None
    matched_by: str = ""  # "position (3.2 m)", "station fraction (0.012)" or ""

    @property
    def rule(self) -> str:
        """The rule of the finding (new revision's when both exist)."""
        return (self.new or self.old).rule

    @property
    def seat(self) -> str:
        """The seat of the finding."""
        return (self.new or self.old).seat

    @property
    def case(self) -> str:
        """The load case of the finding."""
        return (self.new or self.old).case


@dataclass(frozen=True)
class EventChange:
    """One event in either revision, paired by rule and place where both have it.

    Attributes
    ----------
    status : ChangeState
        New, worse, gone, better or same.
    old, new : Event or None
        The event in each revision (None where the revision has none).
    matched_by : str
        How the pair was made ("overlapping stations", "position (3.2 m)", ...), or "".
    """

    status: ChangeState
    old: Event | None
    new: Event | None
    matched_by: str = ""  # "overlapping stations", "position (3.2 m)", ... or ""

    @property
    def rule(self) -> str:
        """The rule of the event (the same in both revisions)."""
        return (self.new or self.old).rule


@dataclass
class Comparison:
    """Two revisions of a layout compared.

    Attributes
    ----------
    old_verdict, new_verdict : str
        Verdict of each revision (``"pass"`` or ``"fail"``).
    peaks : list of dict
        Per seat present in both, axis and kind (``"min"``/``"max"``): ``old``, ``new`` and
        ``change`` of the filtered peak over all cases [g0].
    changes : list of FindingChange
        Every finding's change, in the order of :class:`ChangeState`, most severe first.
    events : list of EventChange
        Every event's change (:func:`match_events`).
    """

    old_verdict: str
    new_verdict: str
    peaks: list[dict]  # seat, axis, kind (min/max), old, new, change [g0]
    changes: list[FindingChange] = field(default_factory=list)
    events: list[EventChange] = field(default_factory=list)

    @property
    def regressed(self) -> bool:
        """True when any finding is new or worse in the new revision."""
        return any(c.status in (ChangeState.NEW, ChangeState.WORSE) for c in self.changes)

    def count(self, status: str) -> int:
        """Number of changes with a status.

        Parameters
        ----------
        status : str or ChangeState
            ``"new"``, ``"worse"``, ``"gone"``, ``"better"`` or ``"same"``.

        Returns
        -------
        count : int
        """
        return sum(1 for c in self.changes if c.status == status)

    def count_events(self, status: str) -> int:
        """Number of event changes with a status.

        Parameters
        ----------
        status : str or ChangeState
            ``"new"``, ``"worse"``, ``"gone"``, ``"better"`` or ``"same"``.

        Returns
        -------
        count : int
        """
        return sum(1 for c in self.events if c.status == status)


def _distance(a: Finding, b: Finding, old_len: float, new_len: float) -> tuple[float, str]:
    if a.position_m is not None and b.position_m is not None:
        d = float(np.linalg.norm(np.subtract(a.position_m, b.position_m)))
        if d <= MATCH_DISTANCE_M:
            return d / MATCH_DISTANCE_M, f"position ({d:.1f} m)"
    if a.s_worst_m is not None and b.s_worst_m is not None:
        frac = abs(a.s_worst_m / old_len - b.s_worst_m / new_len)
        if frac <= MATCH_FRACTION:
            return 1.0 + frac / MATCH_FRACTION, f"station fraction ({frac:.3f})"
    if a.s_worst_m is None and b.s_worst_m is None:
        dt = abs(a.t_worst - b.t_worst)
        return 2.0 + dt, f"time ({dt:.2f} s)"
    return np.inf, ""


def _status(old_severity: float, new_severity: float) -> ChangeState:
    if old_severity == new_severity:  # also two stalls (both infinitely severe)
        return ChangeState.SAME
    delta = new_severity - old_severity
    return (ChangeState.SAME if abs(delta) <= SAME_SEVERITY
            else ChangeState.WORSE if delta > 0 else ChangeState.BETTER)


def _fraction_range(e: Event, length: float) -> tuple[float, float] | None:
    if e.s_start_m is None or e.s_end_m is None or length <= 0:
        return None
    return e.s_start_m / length, e.s_end_m / length


def _event_distance(a: Event, b: Event, old_len: float, new_len: float) -> tuple[float, str]:
    ra, rb = _fraction_range(a, old_len), _fraction_range(b, new_len)
    if ra is not None and rb is not None and ra[0] <= rb[1] and rb[0] <= ra[1]:
        centres = abs((ra[0] + ra[1]) - (rb[0] + rb[1])) / 2.0  # < 1: before any other
        return centres, "overlapping stations"
    score, how = _distance(a.governing, b.governing, old_len, new_len)
    return 1.0 + score, how


def match_events(old: list[Event], new: list[Event], old_len: float,
                 new_len: float) -> list[EventChange]:
    """Pair the events of two revisions by rule and place; classify each pair.

    Parameters
    ----------
    old, new : list of Event
        The events of each revision.
    old_len, new_len : float
        Track length of each revision [m] (places compared as fractions of it).

    Returns
    -------
    list of EventChange
        New, worse, gone, better, same; worst first within each.
    """
    rules = sorted({e.rule for e in old} | {e.rule for e in new})
    return _paired([([e for e in old if e.rule == rule], [e for e in new if e.rule == rule])
                    for rule in rules],
                   lambda a, b: _event_distance(a, b, old_len, new_len), EventChange)


def sweep_events(sweep: Sweep, train_length_m: float = 0.0, sections: tuple = (),
                 seat_height_m: float | None = None) -> list[Event]:
    """The explained events of every load case of a sweep (as a check report groups them).

    Parameters
    ----------
    sweep : Sweep
        Every load case of one revision.
    train_length_m : float, optional
        The train's length [m]: findings within it of each other form one event.
    sections : tuple, optional
        The revision's powered sections, to place the events.
    seat_height_m : float or None, optional
        Seat height above the rail [m] for the place words, None for the rail.

    Returns
    -------
    list of Event
    """
    return explain_events(group_findings(sweep.findings, train_length_m), sweep.geometry,
                          sections, seat_height_m)


def match_findings(old: list[Finding], new: list[Finding], old_len: float,
                   new_len: float) -> list[FindingChange]:
    """Pair findings of the same rule, seat and case by place; classify each pair.

    Pairs are taken greedily, closest first: by world position within MATCH_DISTANCE_M,
    else by relative station within MATCH_FRACTION, else (both without stations, recorded
    data) by time of the worst point. A pair whose severity changed by at most
    SAME_SEVERITY is "same".

    Parameters
    ----------
    old, new : list of Finding
        Findings of the old and the new revision.
    old_len, new_len : float
        Track length of each revision, for the relative stations [m].

    Returns
    -------
    changes : list of FindingChange
        Every finding of both lists once, ordered new, worse, gone, better, same, and by
        severity (most severe first) within each.
    """
    groups: dict[tuple, tuple[list, list]] = {}
    for f in old:
        groups.setdefault((f.rule, f.seat, f.case), ([], []))[0].append(f)
    for f in new:
        groups.setdefault((f.rule, f.seat, f.case), ([], []))[1].append(f)
    return _paired([groups[key] for key in sorted(groups)],
                   lambda a, b: _distance(a, b, old_len, new_len), FindingChange)


def _paired(groups, distance, change) -> list:
    """Greedy pairing, closest first, within each (olds, news) group; every item once, as
    ``change(status, old, new[, how])``, ordered new, worse, gone, better, same and by
    severity within each."""
    changes = []
    for olds, news in groups:
        pairs = []
        for i, a in enumerate(olds):
            for j, b in enumerate(news):
                score, how = distance(a, b)
                if np.isfinite(score):
                    pairs.append((score, i, j, how))
        pairs.sort()
        used_old, used_new = set(), set()
        for _, i, j, how in pairs:
            if i in used_old or j in used_new:
                continue
            used_old.add(i)
            used_new.add(j)
            a, b = olds[i], news[j]
            changes.append(change(_status(a.severity, b.severity), a, b, how))
        changes += [change(ChangeState.GONE, a, None) for i, a in enumerate(olds)
                    if i not in used_old]
        changes += [change(ChangeState.NEW, None, b) for j, b in enumerate(news)
                    if j not in used_new]
    order = {state: i for i, state in enumerate(ChangeState)}
    changes.sort(key=lambda c: (order[c.status], -(c.new or c.old).severity))
    return changes


def compare_sweeps(old: Sweep, new: Sweep, old_length_m: float, new_length_m: float,
                   train_length_m: float = 0.0, old_sections: tuple = (),
                   new_sections: tuple = (), seat_height_m: float | None = None) -> Comparison:
    """Peaks per seat and axis before and after, every finding's change and every event's.

    Parameters
    ----------
    old, new : Sweep
        Every load case of each revision.
    old_length_m, new_length_m : float
        Track length of each revision [m].
    train_length_m : float, optional
        The train's length [m]: findings within it of each other form one event.
    old_sections, new_sections : tuple, optional
        Each revision's powered sections (lift, launch, brake), to place the events.
    seat_height_m : float or None, optional
        Seat height above the rail [m] for the place words, None for the rail.

    Returns
    -------
    comparison : Comparison
        Peaks for the seats present in both revisions, the finding changes of
        :func:`match_findings` and the event changes.
    """
    before, after = peak_summary(old), peak_summary(new)
    peaks = []
    for seat in after:
        if seat not in before:
            continue
        for axis in AXES:
            for k, kind in enumerate(("min", "max")):
                a, b = before[seat][axis][k], after[seat][axis][k]
                peaks.append({"seat": seat, "axis": axis, "kind": kind, "old": a, "new": b,
                              "change": b - a})
    changes = match_findings(old.findings, new.findings, old_length_m, new_length_m)
    events = match_events(sweep_events(old, train_length_m, old_sections, seat_height_m),
                          sweep_events(new, train_length_m, new_sections, seat_height_m),
                          old_length_m, new_length_m)
    return Comparison(old.verdict, new.verdict, peaks, changes, events)

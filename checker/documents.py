"""Findings as documents: the JSON record and the terminal summary table.

JSON is written with sorted keys and rounded floats, so the same inputs give byte-identical
files across runs.
"""

from __future__ import annotations

import json
import math

from . import __version__
from .caution import CAUTION, ILLUSTRATIVE_NOTE
from .limits import AXES
from .resources import bundled_limits
from .rules import Evaluation

BUNDLED_LIMITS = bundled_limits()
MATRIX_MARKS = {"pass": "P", "fail": "F", "stall": "S"}


def _clean(value):
    if isinstance(value, float):
        if not math.isfinite(value):
            return None
        return float(f"{value:.6g}")
    if isinstance(value, dict):
        return {k: _clean(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_clean(v) for v in value]
    return value


MARGIN_CONVENTION = (
    "margin = limit - value, in the rule's own unit: g for duration limits, g/s for onset "
    "limits, % of the envelope for combined-axis envelopes (-20 % = the worst point lies 20 % "
    "beyond the envelope boundary, measured from the rest point); negative = exceeded. A "
    "stall has no margin.")
STATION_NOTE = (
    "Stations are those of the seat's car along the track [m]. s_start_m and s_end_m bound "
    "the exceedance; s_worst_m (the one shown in tables) is where the filtered peak occurs; "
    "s_motion_m is where the car was one filter group delay (group_delay_s) earlier, when the "
    "motion that caused the filtered peak happened. A stall names the lead car's station.")


def with_unit(value: float | None, unit: str) -> str:
    """A value with its unit: 2 decimals in g and m/s, 1 in any other unit (g/s, %), '-' when
    there is none.

    Parameters
    ----------
    value : float or None
        The value; None or a non-finite value prints as ``-``.
    unit : str
        Its unit (``"g"``, ``"g/s"``, ``"%"``, ``"m/s"``...).

    Returns
    -------
    str
        E.g. ``"-0.35 g"``, ``"12.4 g/s"``, ``"-"``.
    """
    if value is None or not math.isfinite(value):
        return "-"
    digits = {"g": 2, "m/s": 2}.get(unit, 1)
    return f"{value:.{digits}f} {unit}"


def margin_text(item) -> str:
    """The margin of a finding or event with its unit ('stall' for a stall).

    Parameters
    ----------
    item : Finding or Event
        Anything with ``kind``, ``margin`` and ``unit``.

    Returns
    -------
    str
        ``"stall"`` for a stall, else :func:`with_unit` of the margin in its unit.
    """
    if item.kind == "stall":
        return "stall"
    return with_unit(item.margin, item.unit)


def event_record(event) -> dict:
    """One event as a JSON object.

    Parameters
    ----------
    event : Event
        An event of :func:`checker.events.group_findings` (after
        :func:`checker.events.explain_events`, which fills place and remedy).

    Returns
    -------
    dict
        Id, rule, kind, axis and unit; station range [m] (None for recorded data) and time
        range [s]; place; seats, cases and findings counted, seat and case names; the
        governing finding's seat, case, peak and limit (in ``peak_unit``), margin (in
        ``unit``), ``s_worst_m``, ``s_motion_m`` [m], ``t_worst`` [s], attitude and message;
        the remedy (quantity, value, unit, formula, text) or None. Floats are not rounded here.
    """
    remedy = event.remedy
    g = event.governing
    return {
        "id": event.id, "rule": event.rule, "kind": event.kind, "axis": event.axis,
        "unit": event.unit,
        "station_range_m": (None if event.s_start_m is None
                            else [event.s_start_m, event.s_end_m]),
        "time_range_s": [event.t_start, event.t_end], "place": event.place,
        "seats": len(event.seats), "seat_names": list(event.seats),
        "cases": list(event.cases), "findings": len(event.members),
        "governing_seat": g.seat, "governing_case": g.case, "peak_unit": g.peak_unit,
        "peak": g.peak_g, "limit": g.limit_g, "margin": g.margin,
        "s_worst_m": g.s_worst_m, "s_motion_m": g.s_motion_m, "t_worst": g.t_worst,
        "attitude": g.attitude or None,
        "message": g.detail,
        "remedy": None if remedy is None else {
            "quantity": remedy.quantity, "value": remedy.value, "unit": remedy.unit,
            "formula": remedy.formula, "text": remedy.text},
    }


def evaluation_document(evaluation: Evaluation, inputs: list[tuple[str, str]],
                        command: str, extra: dict | None = None,
                        events: list | None = None) -> dict:
    """The JSON record of a check: verdict, events (worst first) and every finding, each naming
    its event.

    Parameters
    ----------
    evaluation : Evaluation
        The check's evaluation.
    inputs : list of (str, str)
        ``(file, SHA-256 hex digest)`` of every input.
    command : str
        The call that reproduces the run.
    extra : dict or None, optional
        Further top-level keys, added last (they replace keys of the same name).
    events : list of Event or None, optional
        The events, when already grouped from ``evaluation.findings`` in that order;
        None groups and explains them here.

    Returns
    -------
    dict
        Tool, version, caution (with the illustrative note when the limits are
        illustrative), verdict, limits (title, revision, file, SHA-256, filter), inputs,
        command, warnings, margin convention, station note, per-seat summaries, events,
        every finding with its ``event`` id and the aids (:func:`checker.aids.aids_document`).
        Floats are rounded to 6 significant digits and non-finite ones become None.
    """
    from .events import event_of_finding, explain_events, group_findings

    limits = evaluation.limits
    findings = evaluation.findings
    if events is None:
        events = explain_events(group_findings(findings))
    ids = event_of_finding(events, len(findings))
    delays = {f.group_delay_s for f in findings}
    doc = {
        "tool": "checker", "version": __version__,
        "caution": CAUTION + (" " + ILLUSTRATIVE_NOTE if limits.illustrative else ""),
        "verdict": evaluation.verdict,
        "limits": {"title": limits.title, "represents": limits.represents,
                   "revision": limits.revision, "illustrative": limits.illustrative,
                   "file": limits.path, "sha256": limits.sha256,
                   "filter": limits.filter.describe()},
        "inputs": [{"file": f, "sha256": h} for f, h in inputs],
        "command": command,
        "warnings": list(evaluation.warnings),
        "margin_convention": MARGIN_CONVENTION,
        "stations": {"note": STATION_NOTE, "shown": "s_worst_m",
                     "group_delay_s": max(delays) if delays else None},
        "seats": [{"seat": s.seat, "case": s.case, "verdict": s.verdict,
                   "findings": len(s.findings),
                   "filtered_range_g": {a: list(s.worst[a]) for a in AXES}}
                  for s in evaluation.seats],
        "events": [event_record(e) for e in events],
        "findings": [{**f.to_dict(), "event": ids[i]} for i, f in enumerate(findings)],
    }
    from .aids import aids_document

    doc.update(aids_document(evaluation))  # uplift, zones, sustained (checker.aids)
    if extra:
        doc.update(extra)
    return _clean(doc)


def to_json(doc: dict) -> str:
    """The JSON text of a document: indented by 2, keys sorted, a final newline.

    Parameters
    ----------
    doc : dict
        A document of this module (already rounded and free of NaN/inf).

    Returns
    -------
    str
        The text; the same document gives the same bytes.
    """
    return json.dumps(doc, indent=2, sort_keys=True) + "\n"


def events_table(events: list, verdict: str, finding_count: int,
                 recorded: bool = False) -> str:
    """Terminal view: one line per event, worst first, then the overall verdict.

    Parameters
    ----------
    events : list of Event
        Explained events, worst first.
    verdict : str
        The overall verdict (``"pass"``/``"fail"``), printed upper case.
    finding_count : int
        How many findings the events group.
    recorded : bool, optional
        Recorded data: the governing seat is named without a load case (none is involved).

    Returns
    -------
    str
        The table: a header, one line per event (with the stall's cause and the remedy on
        their own lines), the overall line and, when there are events, a note on margins and
        places. No trailing newline.
    """
    head = (f"{'event':<5} {'rule':<24} {'where':<17} {'element':<20} {'seats':>5} "
            f"{'cases':>5}  {'worst margin':>13}  governing")
    lines = [head, "-" * len(head)]
    for e in events:
        g = e.governing
        lines.append(f"{e.id:<5} {e.rule[:24]:<24} {e.where:<17} {e.place[:20]:<20} "
                     f"{len(e.seats):>5} {len(e.cases):>5}  {margin_text(e):>13}  "
                     + (g.seat if recorded else f"{g.seat} / {g.case}"))
        if e.kind == "stall":
            lines.append(f"      {g.detail.split('; this seat')[0]}")
        if e.remedy is not None:
            lines.append(f"      remedy: {e.remedy.text}")
    if not events:
        lines.append("(no event: every rule holds for every seat)")
    stalls = sum(1 for e in events if e.kind == "stall")
    lines.append(f"overall: {verdict.upper()} ({len(events)} event"
                 f"{'' if len(events) == 1 else 's'} from {finding_count} finding"
                 f"{'' if finding_count == 1 else 's'}"
                 + (f"; the train stalls in {stalls} event{'' if stalls == 1 else 's'}"
                    if stalls else "") + ")")
    if events:
        where = ("stations of the seat's car where the filtered peak occurs"
                 if any(e.s_start_m is not None for e in events)
                 else "places are times (recorded data carry no station)")
        lines.append("margins: limit - value in the rule's unit (g, g/s, % of the envelope);"
                     f" negative = exceeded; {where}")
    return "\n".join(lines)


def summary_table(evaluation: Evaluation, events: list | None = None,
                  recorded: bool = False) -> str:
    """Terminal summary: the events table (see :func:`events_table`).

    Parameters
    ----------
    evaluation : Evaluation
        The check's evaluation.
    events : list of Event or None, optional
        The events when already grouped; None groups and explains them here.
    recorded : bool, optional
        Recorded data (see :func:`events_table`).

    Returns
    -------
    str
        The events table.
    """
    from .events import explain_events, group_findings

    findings = evaluation.findings
    if events is None:
        events = explain_events(group_findings(findings))
    return events_table(events, evaluation.verdict, len(findings), recorded)


def sweep_document(sweep) -> dict:
    """Cases, the seat x case verdict matrix and the governing finding of each rule.

    Parameters
    ----------
    sweep : Sweep
        A load-case sweep (:func:`checker.sweep.run_cases`).

    Returns
    -------
    dict
        ``cases`` (case, verdict, number of findings, stall, top speed [m/s], ride time
        [s]), ``matrix`` (seat -> case -> ``"pass"``/``"fail"``/``"stall"``) and
        ``governing`` (per rule: seat, case, peak and limit, margin in ``unit``,
        ``s_worst_m`` [m]); floats rounded to 6 significant digits.
    """
    seats, cases, cells = sweep.matrix()
    return _clean({
        "cases": [{"case": o.case, "verdict": o.verdict,
                   "findings": len(o.evaluation.findings), "stall": o.stall,
                   "top_speed_m_s": o.top_speed_m_s, "ride_time_s": o.duration_s}
                  for o in sweep.outcomes],
        "matrix": {seat: {case: cells[(seat, case)] for case in cases} for seat in seats},
        "governing": [{"rule": f.rule, "seat": f.seat, "case": f.case, "peak_g": f.peak_g,
                       "limit_g": f.limit_g, "margin": f.margin, "unit": f.unit,
                       "s_worst_m": f.s_worst_m}
                      for f in sweep.governing()],
    })


def sweep_tables(sweep) -> str:
    """Terminal view of a sweep: governing seat and case per rule, and the verdict matrix.

    Parameters
    ----------
    sweep : Sweep
        A load-case sweep.

    Returns
    -------
    str
        The lines (no trailing newline); the matrix numbers the cases and names them
        below it.
    """
    lines = ["governing seat and case per rule:"]
    governing = sweep.governing()
    for f in governing:
        if f.kind == "stall":
            lines.append(f"  {f.rule:<26} {f.seat:<12} {f.case:<20} the train stalls at "
                         f"{f.s_worst_m:.1f} m (lead car)")
            continue
        lines.append(f"  {f.rule:<26} {f.seat:<12} {f.case:<20} peak "
                     f"{with_unit(f.peak_g, f.peak_unit):>11}  limit "
                     f"{with_unit(f.limit_g, f.peak_unit):>11}"
                     f"  margin {margin_text(f):>11}")
    if not governing:
        lines.append("  (no finding in any case)")
    seats, cases, cells = sweep.matrix()
    lines.append("verdicts, seat by case (P pass, F fail, S the train stalls):")
    lines.append(" " * 14 + " ".join(f"{i + 1:>2}" for i in range(len(cases))))
    for seat in seats:
        marks = " ".join(f"{MATRIX_MARKS[cells[(seat, c)]]:>2}" for c in cases)
        lines.append(f"  {seat:<12}{marks}")
    lines.append("  cases: " + ", ".join(f"{i + 1} {c}" for i, c in enumerate(cases)))
    return "\n".join(lines)


def comparison_document(comparison, limits, old_file: str, new_file: str, old_count: int,
                        new_count: int, regressed: bool, new_stalls: list[str],
                        cases: list[str], inputs: list[tuple[str, str]], command: str) -> dict:
    """The JSON record of a revision comparison.

    Parameters
    ----------
    comparison : Comparison
        The result of :func:`checker.compare.compare_sweeps`.
    limits : LimitSet
        The limit set both revisions were checked against.
    old_file, new_file : str
        The two layouts' file names.
    old_count, new_count : int
        Their numbers of findings.
    regressed : bool
        Whether the new revision is worse (the comparison's verdict).
    new_stalls : list of str
        Stalls of the new revision, one line each.
    cases : list of str
        The load cases' names.
    inputs : list of (str, str)
        ``(file, SHA-256 hex digest)`` of every input.
    command : str
        The call that reproduces the run.

    Returns
    -------
    dict
        Tool, version, caution, both revisions (file, verdict, findings), ``regression``,
        ``new_stalls``, limits, cases, inputs, command, peaks and every change (status,
        rule, seat, case, how it was matched, old and new finding); floats rounded to 6
        significant digits.
    """
    return _clean({
        "tool": "checker", "version": __version__,
        "caution": CAUTION + (" " + ILLUSTRATIVE_NOTE if limits.illustrative else ""),
        "old": {"file": old_file, "verdict": comparison.old_verdict, "findings": old_count},
        "new": {"file": new_file, "verdict": comparison.new_verdict, "findings": new_count},
        "regression": regressed, "new_stalls": new_stalls,
        "limits": {"title": limits.title, "sha256": limits.sha256,
                   "illustrative": limits.illustrative},
        "cases": cases, "inputs": [{"file": f, "sha256": h} for f, h in inputs],
        "command": command, "peaks": comparison.peaks,
        "events": [{"status": c.status, "rule": c.rule, "matched_by": c.matched_by,
                    "old": event_record(c.old) if c.old else None,
                    "new": event_record(c.new) if c.new else None}
                   for c in comparison.events],
        "changes": [{"status": c.status, "rule": c.rule, "seat": c.seat, "case": c.case,
                     "matched_by": c.matched_by,
                     "old": c.old.to_dict() if c.old else None,
                     "new": c.new.to_dict() if c.new else None}
                    for c in comparison.changes],
    })


def event_change_text(change) -> str:
    """One line of a comparison by event.

    Parameters
    ----------
    change : checker.compare.EventChange
        The event's change.

    Returns
    -------
    str
        Status, rule, where in each revision and the worst margin before and after with its
        unit; a gone event shows its old margin and "gone", a new one "new".
    """
    old, new = change.old, change.new
    where = " -> ".join(e.where if e is not None else "-" for e in (old, new))
    before = margin_text(old) if old is not None else "new"
    after = margin_text(new) if new is not None else "gone"
    return (f"{change.status:<6} {change.rule:<26} at {where:<30} worst margin "
            f"{before:>11} -> {after:<11} {change.matched_by}").rstrip()


def change_head() -> str:
    """The column headings of :func:`change_text`'s lines, aligned with them.

    Returns
    -------
    str
        One line: change, rule, seat, case, worst point, margin old -> new, matched by.
    """
    return (f"{'change':<6} {'rule':<26} {'seat':<12} {'case':<14} {'worst point':<13}"
            f"{'margin old -> new':<34}matched by")


def change_text(change) -> str:
    """One line of a comparison: status, rule, seat, case, place and the margin before and after
    with its unit; a gone finding shows its old margin and "gone", a new one "new".

    Parameters
    ----------
    change : FindingChange
        One finding change of a comparison.

    Returns
    -------
    str
        The line; the place is the station [m], or the time [s] for recorded data.
    """
    f = change.new or change.old
    where = (f"{f.s_worst_m:.1f} m" if f.s_worst_m is not None else f"t {f.t_worst:.2f} s")
    before = margin_text(change.old) if change.old is not None else "new"
    after = margin_text(change.new) if change.new is not None else "gone"
    return (f"{change.status:<6} {change.rule:<26} {change.seat:<12} {change.case:<14} at "
            f"{where:<9} margin {before:>11} -> {after:<11} {change.matched_by}")

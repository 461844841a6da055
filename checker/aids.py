"""The design aids as documents: JSON fields and terminal lines for rider uplift, restraint
zones, sustained combined rules and sensitivity (numerics live in :mod:`checker.uplift`,
:mod:`checker.zones`, :mod:`checker.sustained` and :mod:`checker.sensitivity`).

JSON keys (documented in the README):

- ``uplift``: ``free_travel_m`` (the limit, or null), ``worst`` (seat, case and the worst
  flight) and ``seats`` (per seat and case: ``peak_m``, ``exceeding`` and every flight with
  ``t_start``, ``t_end``, ``duration_s``, ``peak_m``, ``t_peak``, ``min_gz``, ``landed``,
  ``s_start_m``);
- ``zones`` (when the limits carry a diagram): ``diagram`` (name, order, dwell_s, vertices),
  ``highest`` (seat, case and the visit) and ``seats`` (per seat and case: ``highest``,
  ``reached``, ``outside_longest_s``, ...);
- ``sustained``: for each sustained combined rule, the governing seat, its worst ``ratio``
  and the ``admissible_g`` pair, also carried by each such finding (``ratio``,
  ``admissible_g``);
- ``sensitivity`` (with ``--sensitivity``): ``parameters`` and ``rows`` (rule, seat, margin,
  ``derivative`` per parameter, ``typical_effect``, ``dominant``).
"""

from __future__ import annotations

from .rules import Evaluation
from .zones import overall_highest


def uplift_document(evaluation: Evaluation) -> dict:
    """The ``uplift`` part of the findings JSON.

    Parameters
    ----------
    evaluation : Evaluation
        A check's evaluation; seats without an uplift summary are left out.

    Returns
    -------
    dict
        ``free_travel_m`` (the limit set's free travel [m], or None), ``worst`` (seat, case
        and the highest flight of any seat, or None when no seat leaves its seat) and
        ``seats`` (per seat and case: the seat's uplift summary, its flights included).
    """
    seats = []
    worst = None
    for s in evaluation.seats:
        if s.uplift is None:
            continue
        entry = {"seat": s.seat, "case": s.case, **s.uplift.to_dict()}
        seats.append(entry)
        w = s.uplift.worst
        if w is not None and (worst is None or w.peak_m > worst["peak_m"]):
            worst = {"seat": s.seat, "case": s.case, **w.to_dict()}
    return {"free_travel_m": evaluation.limits.uplift_free_travel_m, "worst": worst,
            "seats": seats}


def zones_document(evaluation: Evaluation) -> dict | None:
    """The ``zones`` part of the findings JSON, when the limits carry a restraint-zone diagram.

    Parameters
    ----------
    evaluation : Evaluation
        A check's evaluation.

    Returns
    -------
    dict or None
        ``diagram`` (each zone's name, order, dwell time [s] and vertices [g]), ``highest``
        (seat, case and the highest zone reached for its dwell time, or None) and ``seats``
        (per seat and case: its zone summary); None when the limit set has no zones.
    """
    limits = evaluation.limits
    if not limits.zones:
        return None
    summaries = {(s.seat, s.case): s.zones for s in evaluation.seats if s.zones is not None}
    top = overall_highest(summaries)
    return {
        "diagram": [{"name": z.name, "order": z.order, "dwell_s": z.dwell_s,
                     "vertices": z.vertices.tolist()} for z in limits.zones],
        "highest": ({"seat": top[0][0], "case": top[0][1], **top[1].to_dict()}
                    if top else None),
        "seats": [{"seat": seat, "case": case, **z.to_dict()}
                  for (seat, case), z in summaries.items()],
    }


def sustained_document(evaluation: Evaluation) -> list[dict]:
    """The ``sustained`` part of the findings JSON: one entry per sustained combined rule.

    Parameters
    ----------
    evaluation : Evaluation
        A check's evaluation.

    Returns
    -------
    list of dict
        Per rule: ``rule``, ``axes``, ``findings`` (their number); where a seat has a margin
        for it, the governing seat's ``seat``, ``case``, ``margin`` [% of the envelope] and
        ``ratio`` (``(1 - margin / 100) ** 2``; 1 on the boundary); where it has findings,
        ``worst_finding_ratio`` and ``admissible_g`` [g] of the most severe one.
    """
    out = []
    for env in evaluation.limits.combined:
        if env.source != "sustained":
            continue
        rule = f"combined {env.name}"
        worst = min(((s.margins.get(rule), s) for s in evaluation.seats
                     if s.margins.get(rule) is not None), key=lambda p: p[0], default=None)
        found = [f for f in evaluation.findings if f.rule == rule]
        entry = {"rule": rule, "axes": list(env.axes), "findings": len(found)}
        if worst is not None:
            margin, seat = worst
            entry.update({"seat": seat.seat, "case": seat.case, "margin": margin,
                          "ratio": (1.0 - margin / 100.0) ** 2})
        if found:
            entry.update({"worst_finding_ratio": found[0].ratio,
                          "admissible_g": list(found[0].admissible_g)})
        out.append(entry)
    return out


def aids_document(evaluation: Evaluation, sensitivity=None) -> dict:
    """The aids' part of the findings JSON.

    Parameters
    ----------
    evaluation : Evaluation
        A check's evaluation.
    sensitivity : Sensitivity or None, optional
        The result of :mod:`checker.sensitivity` (``--sensitivity``), or None.

    Returns
    -------
    dict
        ``uplift`` (:func:`uplift_document`), ``sustained`` (:func:`sustained_document`),
        ``zones`` when the limits carry a diagram (:func:`zones_document`) and
        ``sensitivity`` when given.
    """
    doc: dict = {"uplift": uplift_document(evaluation),
                 "sustained": sustained_document(evaluation)}
    zones = zones_document(evaluation)
    if zones is not None:
        doc["zones"] = zones
    if sensitivity is not None:
        doc["sensitivity"] = sensitivity.to_dict()
    return doc


def aids_summary(evaluation: Evaluation, sensitivity=None) -> str:
    """Terminal lines: worst uplift, highest zone, sustained rules, sensitivity table.

    Parameters
    ----------
    evaluation : Evaluation
        A check's evaluation.
    sensitivity : Sensitivity or None, optional
        The sensitivity result; its table is appended when given.

    Returns
    -------
    str
        Newline-separated lines, without a trailing newline (not cleaned of control
        characters: the terminal stream does that).
    """
    lines = []
    up = uplift_document(evaluation)
    w = up["worst"]
    limit = up["free_travel_m"]
    against = f" (free travel {_length(limit)})" if limit is not None else \
        " (no [uplift] free_travel_m in the limits: not compared)"
    if w is None:
        lines.append("uplift: no seat leaves its seat (filtered Gz never below 0)" + against)
    else:
        over = sum(s["exceeding"] for s in up["seats"])
        lines.append(
            f"uplift: highest {_length(w['peak_m'])} off the seat, {w['seat']} "
            f"({w['case']}) at {_where(w)}, {w['duration_s']:.2f} s off the seat{against}"
            + (f"; {over} flight(s) beyond it" if limit is not None else ""))
        if w["duration_s"] > 1.0:
            lines.append("  note: flights over about 1 s turn the seat meanwhile; the figure "
                         "then only says the rider would not stay seated unrestrained")
    zones = zones_document(evaluation)
    if zones is not None:
        top = zones["highest"]
        if top is None:
            lines.append("zones: no zone of the diagram is reached for its dwell time")
        else:
            place = (f" at station {top['s_start_m']:.1f} m" if top.get("s_start_m") is not None
                     else "")
            lines.append(f"zones: highest reached '{top['zone']}' (order {top['order']}) by "
                         f"{top['seat']} ({top['case']}) from {top['t_start']:.2f} s{place} "
                         f"for {top['duration_s']:.2f} s")
        outside = max((s["outside_longest_s"] for s in zones["seats"]), default=0.0)
        if outside > 0:
            lines.append(f"  the trace lies outside every zone for up to {outside:.2f} s: "
                         "the diagram does not cover it")
    for entry in sustained_document(evaluation):
        if "ratio" in entry:
            lines.append(f"sustained {entry['rule']}: worst ratio {entry['ratio']:.3f} "
                         f"(limit 1) at {entry['seat']} ({entry['case']}), "
                         f"{entry['findings']} finding(s)")
    if sensitivity is not None:
        from .sensitivity import sensitivity_table

        lines.append(sensitivity_table(sensitivity))
    return "\n".join(lines)


def _where(entry: dict) -> str:
    s = entry.get("s_start_m")
    return f"station {s:.1f} m" if s is not None else f"{entry['t_start']:.2f} s"


def _length(metres: float) -> str:
    return f"{100 * metres:.1f} cm" if metres < 1.0 else f"{metres:.2f} m"

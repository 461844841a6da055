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


def evaluation_document(evaluation: Evaluation, inputs: list[tuple[str, str]],
                        command: str, extra: dict | None = None) -> dict:
    limits = evaluation.limits
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
        "seats": [{"seat": s.seat, "case": s.case, "verdict": s.verdict,
                   "findings": len(s.findings),
                   "filtered_range_g": {a: list(s.worst[a]) for a in AXES}}
                  for s in evaluation.seats],
        "findings": [f.to_dict() for f in evaluation.findings],
    }
    if extra:
        doc.update(extra)
    return _clean(doc)


def to_json(doc: dict) -> str:
    return json.dumps(doc, indent=2, sort_keys=True) + "\n"


def summary_table(evaluation: Evaluation) -> str:
    """One line per seat: filtered extremes per axis (over all load cases), number of
    findings, verdict."""
    rows: dict[str, dict] = {}
    for s in evaluation.seats:
        row = rows.setdefault(s.seat, {"cases": [], "n": 0, "worst": {}})
        row["cases"].append(s.case)
        row["n"] += len(s.findings)
        for a in AXES:
            lo, hi = row["worst"].get(a, (math.inf, -math.inf))
            row["worst"][a] = (min(lo, s.worst[a][0]), max(hi, s.worst[a][1]))
    head = (f"{'seat':<14} {'case':<14} {'gx min':>7} {'gx max':>7} {'gy min':>7} "
            f"{'gy max':>7} {'gz min':>7} {'gz max':>7} {'findings':>8}  verdict")
    lines = [head, "-" * len(head)]
    for seat, row in rows.items():
        case = row["cases"][0] if len(row["cases"]) == 1 else f"{len(row['cases'])} cases"
        vals = " ".join(f"{v:7.2f}" for a in AXES for v in row["worst"][a])
        lines.append(f"{seat:<14} {case:<14} {vals} {row['n']:8d}  "
                     f"{'fail' if row['n'] else 'pass'}")
    kinds: dict[str, int] = {}
    for f in evaluation.findings:
        kinds[f.kind] = kinds.get(f.kind, 0) + 1
    counts = ", ".join(f"{n} {k}" for k, n in sorted(kinds.items())) or "none"
    lines.append(f"overall: {evaluation.verdict.upper()} ({len(evaluation.findings)} findings: "
                 f"{counts})")
    return "\n".join(lines)


def sweep_document(sweep) -> dict:
    """Cases, the seat x case verdict matrix and the governing finding of each rule."""
    seats, cases, cells = sweep.matrix()
    return _clean({
        "cases": [{"case": o.case, "verdict": o.verdict,
                   "findings": len(o.evaluation.findings), "stall": o.stall,
                   "top_speed_m_s": o.top_speed_m_s, "ride_time_s": o.duration_s}
                  for o in sweep.outcomes],
        "matrix": {seat: {case: cells[(seat, case)] for case in cases} for seat in seats},
        "governing": [{"rule": f.rule, "seat": f.seat, "case": f.case, "peak_g": f.peak_g,
                       "limit_g": f.limit_g, "margin": f.margin, "s_start_m": f.s_start_m}
                      for f in sweep.governing()],
    })


def sweep_tables(sweep) -> str:
    """Terminal view of a sweep: governing seat and case per rule, and the verdict matrix."""
    lines = ["governing seat and case per rule:"]
    governing = sweep.governing()
    for f in governing:
        lines.append(f"  {f.rule:<26} {f.seat:<12} {f.case:<20} peak {f.peak_g:7.2f}  limit "
                     f"{f.limit_g:7.2f}  margin {f.margin:7.2f}")
    if not governing:
        lines.append("  (no finding in any case)")
    seats, cases, cells = sweep.matrix()
    lines.append("verdicts, seat by case (P pass, F fail):")
    lines.append(" " * 14 + " ".join(f"{i + 1:>2}" for i in range(len(cases))))
    for seat in seats:
        marks = " ".join(f"{'F' if cells[(seat, c)] == 'fail' else 'P':>2}" for c in cases)
        lines.append(f"  {seat:<12}{marks}")
    lines.append("  cases: " + ", ".join(f"{i + 1} {c}" for i, c in enumerate(cases)))
    return "\n".join(lines)


def comparison_document(comparison, limits, old_file: str, new_file: str, old_count: int,
                        new_count: int, regressed: bool, new_stalls: list[str],
                        cases: list[str], inputs: list[tuple[str, str]], command: str) -> dict:
    """The JSON record of a revision comparison."""
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
        "changes": [{"status": c.status, "rule": c.rule, "seat": c.seat, "case": c.case,
                     "matched_by": c.matched_by,
                     "old": c.old.to_dict() if c.old else None,
                     "new": c.new.to_dict() if c.new else None}
                    for c in comparison.changes],
    })

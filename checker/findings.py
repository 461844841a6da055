"""Findings as documents: the JSON record and the terminal summary table.

JSON is written with sorted keys and rounded floats, so the same inputs give byte-identical
files across runs.
"""

from __future__ import annotations

import json
import math
from pathlib import Path

from . import __version__
from .envelope import AXES
from .rules import Evaluation

CAUTION = ("This is a pre-submission self-check, not a certification or an approval. The "
           "governing code, the authority having jurisdiction and licensed engineering review "
           "decide.")
ILLUSTRATIVE_NOTE = ("The limit set used is ILLUSTRATIVE (invented example values, not from any "
                     "standard); results against it say nothing about compliance.")
BUNDLED_LIMITS = Path(__file__).resolve().parents[1] / "limits" / "illustrative.toml"


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
    """One line per seat: filtered extremes per axis, number of findings, verdict."""
    head = (f"{'seat':<14} {'case':<10} {'gx min':>7} {'gx max':>7} {'gy min':>7} "
            f"{'gy max':>7} {'gz min':>7} {'gz max':>7} {'findings':>8}  verdict")
    lines = [head, "-" * len(head)]
    for s in evaluation.seats:
        vals = " ".join(f"{v:7.2f}" for a in AXES for v in s.worst[a])
        lines.append(f"{s.seat:<14} {s.case:<10} {vals} {len(s.findings):8d}  {s.verdict}")
    kinds = {}
    for f in evaluation.findings:
        kinds[f.kind] = kinds.get(f.kind, 0) + 1
    counts = ", ".join(f"{n} {k}" for k, n in sorted(kinds.items())) or "none"
    lines.append(f"overall: {evaluation.verdict.upper()} ({len(evaluation.findings)} findings: "
                 f"{counts})")
    return "\n".join(lines)

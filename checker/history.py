"""Recorded (or exported) acceleration histories: loading and validating a CSV.

Columns ``t`` [s], ``gx``, ``gy``, ``gz`` (in g0 by default, or m/s^2 with ``units="m/s2"``),
optional ``seat`` (text; rows of one seat in time order). Time stamps must run forward at a
regular step: irregular or missing stamps are reported, never silently resampled.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .constants import G0
from .csvtable import read_numeric_csv
from .errors import InputError

MIN_SAMPLES = 8  # fewer samples per seat cannot be filtered or checked meaningfully
STEP_TOLERANCE = 0.01  # a step may differ from the median step by 1 %


@dataclass(frozen=True)
class RecordedSignal:
    seat: str
    t: np.ndarray  # [s]
    g: np.ndarray  # (n, 3) [g0]
    s: np.ndarray | None = None
    position: np.ndarray | None = None


MAX_SEAT_NAME_CHARS = 200  # a name, not a pasted file


def load_history(path: str | Path, units: str = "g") -> list[RecordedSignal]:
    path = Path(path)
    if units not in ("g", "m/s2"):
        raise InputError(path, f"unknown acceleration unit '{units}'", "use g or m/s2")
    table = read_numeric_csv(path, ["t", "gx", "gy", "gz"], ["s", "v", "car", "x", "y", "z"],
                             text=["seat"], what="history")
    scale = 1.0 / G0 if units == "m/s2" else 1.0
    seats = table.text_columns.get("seat", ["recorded"] * len(table))
    order: dict[str, list[int]] = {}
    for i, name in enumerate(seats):
        if name == "" or len(name) > MAX_SEAT_NAME_CHARS:
            problem = "seat name is empty" if not name else f"seat name is {len(name)} " \
                "characters long"
            raise InputError(path, problem, "name the seat on every row, in at most "
                             f"{MAX_SEAT_NAME_CHARS} characters", row=int(table.lines[i]),
                             column="seat")
        order.setdefault(name, []).append(i)
    out = []
    has_xyz = all(table.has(c) for c in "xyz")
    for name, rows in order.items():
        idx = np.asarray(rows)
        t = table.columns["t"][idx]
        lines = table.lines[idx]
        if len(t) < MIN_SAMPLES:
            raise InputError(path, f"seat '{name}' has {len(t)} samples; at least {MIN_SAMPLES} "
                             "are needed",
                             "export the whole ride", row=int(lines[0]), column="t")
        dt = np.diff(t)
        back = np.flatnonzero(dt <= 0)
        if back.size:
            j = back[0] + 1
            raise InputError(path, f"time does not increase ({t[j - 1]:g} s then {t[j]:g} s)",
                             "sort the rows by time; remove repeated stamps",
                             row=int(lines[j]), column="t")
        step = float(np.median(dt))
        irregular = np.flatnonzero(np.abs(dt - step) > STEP_TOLERANCE * step)
        if irregular.size:
            j = irregular[0] + 1
            kind = "missing samples (a gap)" if dt[j - 1] > step else "an irregular time step"
            raise InputError(path, f"{kind}: step {dt[j - 1]:.6g} s where the record's step is "
                             f"{step:.6g} s", "resample the record to a fixed rate before "
                             "checking; this tool does not resample", row=int(lines[j]),
                             column="t")
        g = np.column_stack([table.columns[c][idx] for c in ("gx", "gy", "gz")]) * scale
        s = table.columns["s"][idx] if table.has("s") else None
        pos = (np.column_stack([table.columns[c][idx] for c in "xyz"]) if has_xyz else None)
        out.append(RecordedSignal(name, t, g, s, pos))
    return out

"""Recorded (or exported) acceleration histories: loading and validating a CSV.

Columns ``t`` [s], ``gx``, ``gy``, ``gz`` (in g0 by default, or m/s^2 with ``units="m/s2"``),
optional ``seat`` (text; rows of one seat in time order); or any logger layout described by
an instrument file (:mod:`checker.instrument`: column names, units, mounting, seats).

Time stamps must run forward. A gap longer than the instrument's ``max_gap_s`` (else
GAP_STEPS median steps) is never bridged: the record is split there and each part is
checked on its own. Within a part the
step must be regular (within STEP_TOLERANCE of the median); otherwise the rows are named and
the record refused, unless a re-sampling rate is given: then each part is re-sampled onto a
uniform grid by linear interpolation, after a zero-phase Butterworth anti-alias low-pass at
ANTI_ALIAS_FRACTION of the new Nyquist frequency when the new rate is lower than the
record's, and the largest gap and the jitter found are reported.

A zero-offset check looks for the quietest REST_WINDOW_S stretch whose specific force has a
magnitude near 1 g (at rest or moving steadily) and reports a review item when it is off the
level rest reading (0, 0, 1) by more than the instrument's ``zero_tolerance_g``.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .constants import G0
from .csvtable import read_numeric_csv
from .errors import InputError
from .instrument import Instrument

MIN_SAMPLES = 8  # fewer samples per seat cannot be filtered or checked meaningfully
STEP_TOLERANCE = 0.01  # a step may differ from the median step by 1 %
GAP_STEPS = 10  # without a stated max_gap_s, a step this many times the median is a gap
ANTI_ALIAS_FRACTION = 0.8  # anti-alias corner as a fraction of the new Nyquist frequency
REST_WINDOW_S = 1.0
# beyond any ride or shock reading: garbage, or a unit mistake (mm/s^2 as m/s^2?); it would
# also overflow the filter and the flights' integration
MAX_RECORD_G = 1000.0
MAX_RECORD_TIME_S = 1e7  # about 116 days: beyond any record
REST_STD_G = 0.1  # a stretch quieter than this on every axis can be at rest
REST_MAGNITUDE_G = 0.1  # |f| within this of 1 g: at rest or moving steadily


@dataclass(frozen=True)
class RecordedSignal:
    """One seat's recorded signal (or one part of it between gaps).

    Attributes
    ----------
    seat : str
        Seat name; ``"<seat> part <k>"`` for the k-th part of a record split at gaps.
    t : (n,) ndarray
        Time, increasing, uniform steps (re-sampled if asked) [s].
    g : (n, 3) ndarray
        Specific force (Gx, Gy, Gz) in rider axes [g0].
    s : (n,) ndarray or None
        Station of the seat's car [m], when the file has ``s``, ``x``, ``y``, ``z`` and the
        part was not re-sampled.
    position : (n, 3) ndarray or None
        Rider's world position [m], under the same conditions.
    """

    seat: str
    t: np.ndarray  # [s]
    g: np.ndarray  # (n, 3) [g0]
    s: np.ndarray | None = None
    position: np.ndarray | None = None


MAX_SEAT_NAME_CHARS = 200  # a name, not a pasted file


def load_history(path: str | Path, units: str = "g") -> list[RecordedSignal]:
    """The signals of a history CSV in the plain format (see the module docstring).

    Parameters
    ----------
    path : str or Path
        History CSV (columns ``t``, ``gx``, ``gy``, ``gz``, optional ``seat``).
    units : {"g", "m/s2"}
        Unit of the acceleration columns.

    Returns
    -------
    signals : list of RecordedSignal
        As :func:`load_record` (without re-sampling); its notes are dropped.

    Raises
    ------
    InputError
        As :func:`load_record`.
    """
    return load_record(path, units).signals


@dataclass(frozen=True)
class Record:
    """The signals of a record and what loading found (review items).

    Attributes
    ----------
    signals : list of RecordedSignal
        Per seat (and part between gaps), in order of first appearance.
    notes : tuple of str
        Review items: zero offsets, gaps that split the record, parts left out, re-sampling.
    method : str
        How the record was conditioned (instrument, re-sampling), for reports; empty for a
        plain file read as is.
    """

    signals: list[RecordedSignal]
    notes: tuple[str, ...] = ()
    method: str = ""  # how the record was conditioned (time base, re-sampling), for reports


def load_record(path: str | Path, units: str = "g", instrument: Instrument | None = None,
                resample_hz: float | None = None) -> Record:
    """Load a recorded history; split at long gaps, re-sample if asked, check the zero.

    Parameters
    ----------
    path : str or Path
        CSV file.
    units : {"g", "m/s2"}
        Acceleration unit of the plain format (an instrument states its own).
    instrument : Instrument or None
        Column layout, units and mounting of a logger export; None = plain format.
    resample_hz : float or None
        Uniform rate to re-sample irregular stamps onto [Hz]; None = refuse them.

    Returns
    -------
    record : Record
        The signals in rider axes [g0] with times [s], the review items and the method.

    Raises
    ------
    InputError
        Unknown ``units``; an unreadable or malformed CSV (missing column, bad cell, bad
        seat name); a seat with fewer than MIN_SAMPLES samples; a reading beyond
        MAX_RECORD_G or a time beyond MAX_RECORD_TIME_S; time that does not increase; an
        irregular step without ``resample_hz``; or no part between gaps long enough to check
        (naming file, row and column).

    References
    ----------
    S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930,
    pp. 536-541 (the anti-alias low-pass of :func:`resample`).
    """
    path = Path(path)
    if units not in ("g", "m/s2"):
        raise InputError(path, f"unknown acceleration unit '{units}'", "use g or m/s2")
    if instrument is None:
        table = read_numeric_csv(path, ["t", "gx", "gy", "gz"], ["s", "v", "car", "x", "y", "z"],
                                 text=["seat"], what="history")
        instrument = Instrument(seat_column="seat" if table.has("seat") else None,
                                accel_scale=1.0 / G0 if units == "m/s2" else 1.0)
    else:
        needed = [instrument.time_column] + [c for _, cols in instrument.groups for c in cols]
        text = list(instrument.ignore) + ([instrument.seat_column]
                                          if instrument.seat_column else [])
        table = read_numeric_csv(path, needed, text=text, what="history")
    streams = _streams(path, table, instrument)
    signals: list[RecordedSignal] = []
    notes: list[str] = []
    has_xyz = all(table.has(c) for c in "xyz") and table.has("s")
    for name, idx in streams:
        t = table.columns[instrument.time_column][idx] * instrument.time_scale
        lines = table.lines[idx]
        raw = np.column_stack([table.columns[c][idx] for c in dict(instrument.groups)[
            name if len(instrument.groups) > 1 else instrument.groups[0][0]]])
        g = instrument.to_rider(raw)
        del raw  # the logger-axis copy is not needed past here
        _check_magnitudes(path, name, t, g, lines, instrument)
        if len(t) < MIN_SAMPLES:
            raise InputError(path, f"seat '{name}' has {len(t)} samples; at least "
                             f"{MIN_SAMPLES} are needed", "export the whole ride",
                             row=int(lines[0]), column=instrument.time_column)
        back = np.flatnonzero(np.diff(t) <= 0)
        if back.size:
            j = back[0] + 1
            raise InputError(path, f"time does not increase ({t[j - 1]:g} s then {t[j]:g} s)",
                             "sort the rows by time; remove repeated stamps",
                             row=int(lines[j]), column=instrument.time_column)
        notes += _zero_offset_note(name, t, g, instrument.zero_tolerance_g)
        gap_limit = (instrument.max_gap_s if instrument.max_gap_s is not None
                     else GAP_STEPS * float(np.median(np.diff(t))))
        cuts = np.flatnonzero(np.diff(t) > gap_limit) + 1
        parts = np.split(np.arange(len(t)), cuts)
        if cuts.size:
            notes.append(f"seat '{name}': {cuts.size} gap(s) longer than "
                         f"{gap_limit:.3g} s (longest {np.diff(t).max():.3g} s at "
                         f"t = {t[cuts[np.argmax(np.diff(t)[cuts - 1])] - 1]:.3f} s); the "
                         f"record is split into {len(parts)} parts checked separately, never "
                         "bridged")
        for k, part in enumerate(parts):
            label = name if len(parts) == 1 else f"{name} part {k + 1}"
            if len(part) < MIN_SAMPLES:
                notes.append(f"seat '{label}' (rows {lines[part[0]]}-{lines[part[-1]]}) has "
                             f"only {len(part)} samples between gaps: left out")
                continue
            part = slice(int(part[0]), int(part[-1]) + 1)  # contiguous: views, not copies
            pt, pg = t[part], g[part]
            s = table.columns["s"][idx][part] if has_xyz else None
            pos = (np.column_stack([table.columns[c][idx][part] for c in "xyz"])
                   if has_xyz else None)
            if not _regular(pt):
                if resample_hz is None:
                    _refuse_irregular(path, pt, lines[part], instrument.time_column)
                pt, pg, note = resample(pt, pg, resample_hz)
                notes.append(f"seat '{label}': {note}")
                s = pos = None
            signals.append(RecordedSignal(label, pt, pg, s, pos))
    if not signals:
        raise InputError(path, "no stretch of the record is long enough to check",
                         f"each part between gaps needs at least {MIN_SAMPLES} samples")
    method = instrument.describe() if instrument.source != "<default>" else ""
    if resample_hz is not None:
        method += ("; " if method else "") + (
            f"irregular parts re-sampled at {resample_hz:g} Hz by linear interpolation, after "
            f"a zero-phase Butterworth anti-alias low-pass at {ANTI_ALIAS_FRACTION:g} x the "
            "new Nyquist frequency when down-sampling")
    return Record(signals, tuple(notes), method)


def file_notes(path: str | Path, most: int = 12, width: int = 200) -> list[str]:
    """The comment lines (``#``) at the top of a record file, for the report: a record's
    origin (instrument, test, or a synthetic history) is often written there.

    Parameters
    ----------
    path : str or pathlib.Path
        The record file (already read once: it exists).
    most : int, optional
        Most lines kept.
    width : int, optional
        Longest line kept [characters]; longer ones are cut, the cut marked with '...'.

    Returns
    -------
    list of str
        The lines without their ``#`` and surrounding blanks, empty ones left out.
    """
    notes = []
    with open(path, encoding="utf-8-sig", errors="replace") as text:
        for line in text:
            if not line.lstrip().startswith("#") or len(notes) == most:
                break
            note = line.strip().lstrip("#").strip()
            if note:
                notes.append(note if len(note) <= width else note[:width - 3] + "...")
    return notes


def _streams(path: Path, table, instrument: Instrument) -> list[tuple[str, np.ndarray]]:
    """(seat name, row indices) for every seat: by seat column, by column group, or one."""
    if len(instrument.groups) > 1:
        return [(name, np.arange(len(table))) for name, _ in instrument.groups]
    if instrument.seat_column is None:  # every row, as a slice: columns are not copied
        return [(instrument.groups[0][0], slice(None))]
    return _seat_rows(table, path, instrument.seat_column)


def _seat_rows(table, path: Path, column: str) -> list[tuple[str, np.ndarray]]:
    """(seat name, row indices in file order) for every seat, in order of first appearance."""
    names = table.text_columns[column]
    codes, uniques = pd.factorize(names)
    lengths = np.fromiter((len(name) for name in uniques), dtype=np.intp, count=len(uniques))
    bad_names = np.flatnonzero((lengths == 0) | (lengths > MAX_SEAT_NAME_CHARS))
    if bad_names.size:
        first = int(np.flatnonzero(np.isin(codes, bad_names))[0])
        name = names[first]
        problem = "seat name is empty" if not name else f"seat name is {len(name)} " \
            "characters long"
        raise InputError(path, problem, "name the seat on every row, in at most "
                         f"{MAX_SEAT_NAME_CHARS} characters", row=int(table.lines[first]),
                         column=column)
    order = np.argsort(codes, kind="stable")
    bounds = np.searchsorted(codes[order], np.arange(len(uniques) + 1))
    return [(str(name), order[bounds[k]:bounds[k + 1]]) for k, name in enumerate(uniques)]


def _regular(t: np.ndarray) -> bool:
    dt = np.diff(t)
    step = float(np.median(dt))
    return bool(np.all(np.abs(dt - step) <= STEP_TOLERANCE * step))


def _refuse_irregular(path: Path, t: np.ndarray, lines: np.ndarray, column: str) -> None:
    dt = np.diff(t)
    step = float(np.median(dt))
    bad = np.flatnonzero(np.abs(dt - step) > STEP_TOLERANCE * step) + 1
    rows = ", ".join(str(int(lines[j])) for j in bad[:5])
    more = f" and {bad.size - 5} more" if bad.size > 5 else ""
    j = bad[0]
    kind = "missing samples (a gap)" if dt[j - 1] > step else "an irregular time step"
    raise InputError(path, f"{kind}: step {dt[j - 1]:.6g} s where the record's step is "
                     f"{step:.6g} s (rows {rows}{more})", "give --resample HZ to re-sample "
                     "onto a uniform grid (stated in the report), or fix the export",
                     row=int(lines[j]), column=column)


def _check_magnitudes(path: Path, name: str, t: np.ndarray, g: np.ndarray,
                      lines: np.ndarray, instrument: Instrument) -> None:
    """Refuse readings beyond MAX_RECORD_G [g0] and times beyond MAX_RECORD_TIME_S [s],
    naming the first such row."""
    # min and max first: no temporaries on the usual, valid record (a 5 M-row record's
    # |g| would be 120 MB more at the peak)
    if (max(-float(t.min()), float(t.max())) <= MAX_RECORD_TIME_S
            and max(-float(g.min()), float(g.max())) <= MAX_RECORD_G):
        return
    big_t = np.flatnonzero(np.abs(t) > MAX_RECORD_TIME_S)
    big_g = np.flatnonzero(np.any(np.abs(g) > MAX_RECORD_G, axis=1))
    if big_t.size and (not big_g.size or big_t[0] <= big_g[0]):
        j = int(big_t[0])
        raise InputError(path, f"seat '{name}': time {t[j]:.6g} s is beyond "
                         f"{MAX_RECORD_TIME_S:g} s", "give time in seconds from the record's "
                         "start", row=int(lines[j]), column=instrument.time_column)
    if big_g.size:
        j = int(big_g[0])
        axis = int(np.argmax(np.abs(g[j]) > MAX_RECORD_G))
        column = ("gx", "gy", "gz")[axis] if instrument.groups == Instrument().groups else None
        raise InputError(path, f"seat '{name}': G{'xyz'[axis]} reads {g[j, axis]:.6g} g, beyond "
                         f"{MAX_RECORD_G:g} g", "check the unit (--units, or the "
                         "instrument's scale) and the logger's range", row=int(lines[j]),
                         column=column)


def resample(t: np.ndarray, g: np.ndarray, rate_hz: float):
    """Re-sample a signal onto a uniform grid.

    Linear interpolation; when ``rate_hz`` is below the record's own rate (1 / median step),
    the signal is first put on a uniform grid at its own rate and low-pass filtered
    (4th-order Butterworth applied forward and backward by ``scipy.signal.sosfiltfilt``: zero
    phase, corner ANTI_ALIAS_FRACTION x rate_hz / 2) so that what the new rate cannot carry
    does not fold back (Nyquist-Shannon sampling theorem). A signal too short for
    ``sosfiltfilt``'s padding is not filtered, and its note says so.

    Parameters
    ----------
    t : (n,) ndarray
        Time stamps, increasing [s].
    g : (n, k) ndarray
        Signal at the stamps (e.g. specific force [g0]).
    rate_hz : float
        New sample rate [Hz].

    Returns
    -------
    t : (m,) ndarray
        Uniform times from ``t[0]`` at 1 / rate_hz [s].
    g : (m, k) ndarray
        Signal at the new times, in the unit of ``g``.
    note : str
        What was found (median step, largest gap, jitter) and done, for the review items.

    References
    ----------
    S. Butterworth, "On the theory of filter amplifiers", Wireless Engineer 7, 1930,
    pp. 536-541.
    C. E. Shannon, "Communication in the presence of noise", Proc. IRE 37, 1949 (sampling
    theorem).
    """
    dt = np.diff(t)
    step = float(np.median(dt))
    jitter = float(np.std(dt))
    note = (f"time stamps irregular (median step {step * 1000:.3g} ms, largest gap "
            f"{dt.max() * 1000:.3g} ms, jitter {jitter * 1000:.3g} ms RMS); re-sampled at "
            f"{rate_hz:g} Hz")
    own_rate = 1.0 / step
    if rate_hz < own_rate * (1 - STEP_TOLERANCE):
        fine_t = t[0] + step * np.arange(int(np.floor((t[-1] - t[0]) / step)) + 1)
        fine = np.column_stack([np.interp(fine_t, t, g[:, i]) for i in range(g.shape[1])])
        from scipy import signal  # only re-sampling needs it; it costs about 1 s to import

        sos = signal.butter(4, ANTI_ALIAS_FRACTION * rate_hz / 2, fs=own_rate, output="sos")
        if len(fine_t) > 3 * (2 * len(sos) + 1):
            fine = signal.sosfiltfilt(sos, fine, axis=0)
            note += f" after an anti-alias low-pass at {ANTI_ALIAS_FRACTION * rate_hz / 2:g} Hz"
        else:
            note += (" without an anti-alias low-pass (the stretch is too short to filter: "
                     "what the new rate cannot carry may fold back)")
        t, g = fine_t, fine
    count = int(np.floor((t[-1] - t[0]) * rate_hz + 1e-9)) + 1
    new_t = t[0] + np.arange(count) / rate_hz
    new_g = np.column_stack([np.interp(new_t, t, g[:, i]) for i in range(g.shape[1])])
    return new_t, new_g, note


def _zero_offset_note(name: str, t: np.ndarray, g: np.ndarray, tolerance: float) -> list[str]:
    """A review item when the quietest stretch at rest reads off (0, 0, 1) by > tolerance."""
    step = float(np.median(np.diff(t)))
    width = int(round(REST_WINDOW_S / step))
    if width < 4 or len(t) < width + 1:
        return []
    # windows starting every tenth of a window: a stretch at rest lasts far longer than
    # that, and the statistics of ~10 x fewer windows cost ~10 x less; one axis at a time
    # (running sums of one column: a long record's memory stays near its own size)
    first = np.arange(0, len(g) - width + 1, max(1, width // 10))
    mean = np.empty((len(first), 3))
    spread = np.zeros(len(first))
    for axis in range(3):
        column = g[:, axis]
        total = np.concatenate([[0.0], np.cumsum(column)])
        mean[:, axis] = (total[first + width] - total[first]) / width
        total = np.concatenate([[0.0], np.cumsum(column * column)])
        var = np.maximum((total[first + width] - total[first]) / width - mean[:, axis]**2, 0.0)
        np.maximum(spread, np.sqrt(var), out=spread)
    steady = np.abs(np.linalg.norm(mean, axis=1) - 1.0) < REST_MAGNITUDE_G
    quiet = steady & (spread < REST_STD_G)
    if not quiet.any():
        return []
    k = int(np.flatnonzero(quiet)[np.argmin(spread[quiet])])
    level = mean[k]
    if np.max(np.abs(level - np.array([0.0, 0.0, 1.0]))) <= tolerance:
        return []
    return [f"seat '{name}': zero offset? the quietest {REST_WINDOW_S:g} s at rest (from t = "
            f"{t[first[k]]:.2f} s) reads Gx {level[0]:+.3f}, Gy {level[1]:+.3f}, Gz "
            f"{level[2]:.3f} g where a level seat at rest reads 0, 0, 1 (off by more than "
            f"{tolerance:g} g): check the logger's zero and its mounting"]

"""Numeric CSV tables: parse first (pandas' C parser), then check every cell with vectorized
tests, naming the row and column of the first bad one.

The file's line structure (blank and ``#`` comment lines, the header, the number of values
on each line) is found with numpy on the raw bytes, in blocks; the data lines are then parsed
in one call to :func:`pandas.read_csv`. A numeric column that pandas could not read as numbers
is classified cell by cell with a strict pattern (ASCII digits only: no ``1_000``, no
full-width digits, no hexadecimal), and the first bad cell in file order is reported.
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from .errors import InputError
from .textfiles import read_checked_bytes, suggest

# A plain decimal number: optional sign, ASCII digits with an optional point, optional
# exponent; spaces around it are allowed (the cell is stripped).
NUMBER = r"\s*[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?\s*"
NOT_FINITE = r"\s*[+-]?(?:nan|inf|infinity)\s*"
BLOCK_BYTES = 1 << 23  # the byte scans run in blocks of 8 MiB (bounded temporaries)
NEWLINE, COMMA, HASH, CR = 10, 44, 35, 13


@dataclass(frozen=True)
class NumericTable:
    """Columns of a numeric CSV file, with the file line number of every data row.

    ``len(table)`` is the number of data rows.

    Attributes
    ----------
    path : pathlib.Path
        The file read.
    columns : dict of str to numpy.ndarray
        Each numeric column present in the header, float64, shape (rows,), all finite.
    lines : numpy.ndarray
        1-based line number in the file of each data row, integer, shape (rows,).
    text_columns : dict of str to numpy.ndarray
        Each text column present in the header, its cells stripped of surrounding blank
        space (object arrays of str, shape (rows,)).
    """

    path: Path
    columns: dict[str, np.ndarray]
    lines: np.ndarray  # 1-based line numbers in the file, one per data row
    text_columns: dict[str, np.ndarray]  # stripped strings (object arrays)

    def __len__(self) -> int:
        return len(self.lines)

    def has(self, name: str) -> bool:
        """Whether the file had column ``name`` (numeric or text).

        Parameters
        ----------
        name : str
            A column name.

        Returns
        -------
        bool
            True when ``name`` is a key of :attr:`columns` or :attr:`text_columns`.
        """
        return name in self.columns or name in self.text_columns


@dataclass(frozen=True)
class _Lines:
    """Line structure of a file: start and end (excluding the line break) of every line,
    whether it holds data (not blank, not a comment) and its number of commas."""

    start: np.ndarray
    end: np.ndarray
    data: np.ndarray  # indices of the lines holding data (the header first)
    commas: np.ndarray  # commas on each data line


def _scan_lines(raw: bytes) -> _Lines:
    b = np.frombuffer(raw, dtype=np.uint8)
    n = len(b)
    breaks = np.concatenate([np.flatnonzero(b[a:a + BLOCK_BYTES] == NEWLINE) + a
                             for a in range(0, n, BLOCK_BYTES)] or [np.zeros(0, np.intp)])
    start = np.concatenate([[0], breaks + 1])
    end = np.append(breaks, n)
    if start[-1] >= n:  # the file ends with a line break: no last line
        start, end = start[:-1], end[:-1]
    cr = (end > start) & (b[np.maximum(end - 1, 0)] == CR)
    end = end - cr
    first = b[np.minimum(start, max(n - 1, 0))] if n else np.zeros(0, np.uint8)
    data = (end > start) & (first != HASH)
    # a line starting with blank space (as str.strip sees it) or a non-ASCII byte: rare,
    # decided line by line
    odd = (first == 32) | ((first >= 9) & (first <= 13)) | ((first >= 28) & (first <= 31)) \
        | (first >= 128)
    for i in np.flatnonzero(data & odd):
        text = raw[start[i]:end[i]].decode("utf-8", errors="replace").strip()
        data[i] = bool(text) and not text.startswith("#")
    rows = np.flatnonzero(data)
    commas = np.zeros(len(rows), dtype=np.int64)
    line_start, line_end = start[rows], end[rows]
    i = 0
    while i < len(rows):  # commas per data line, block by block of whole lines
        j = max(i + 1, int(np.searchsorted(line_start, line_start[i] + BLOCK_BYTES)))
        lo, hi = int(line_start[i]), int(line_end[j - 1])
        bounds = np.empty(2 * (j - i), dtype=np.intp)  # [start, end) of each line
        bounds[0::2] = line_start[i:j] - lo
        bounds[1::2] = line_end[i:j] - lo
        # sums over [start, end) of every line (and over the breaks between, dropped); the
        # last line runs to the end of the slice
        is_comma = (b[lo:hi] == COMMA).view(np.uint8)
        commas[i:j] = np.add.reduceat(is_comma, bounds[:-1], dtype=np.int32)[0::2]
        i = j
    return _Lines(start, end, rows, commas)


def _cell(raw: bytes, lines: _Lines, line: int, column: int) -> str:
    text = raw[lines.start[line]:lines.end[line]].decode("utf-8", errors="replace")
    fields = [f.strip() for f in text.strip().split(",")]
    return fields[column] if column < len(fields) else ""


def _shown(cell: str) -> str:
    return cell if len(cell) <= 20 else cell[:17] + "..."


def read_numeric_csv(
    path: str | Path,
    required: Iterable[str],
    optional: Iterable[str] = (),
    text: Iterable[str] = (),
    what: str = "table",
) -> NumericTable:
    """Read a comma-separated table with a header row.

    Lines starting with ``#`` and blank lines are skipped (a lone carriage return counts as
    blank space). Every column must be known and appear once, every data line must hold the
    header's number of values, and every cell of a numeric column must be a finite plain
    decimal number (ASCII digits, optional sign, point and exponent). Columns in ``text``
    are kept as stripped strings. Nothing is quoted: a quote character is part of the cell.

    Parameters
    ----------
    path : str or pathlib.Path
        The CSV file (UTF-8, read through :func:`checker.textfiles.read_checked_bytes`).
    required : iterable of str
        Columns that must be present.
    optional : iterable of str, optional
        Further numeric columns that may be present.
    text : iterable of str, optional
        Columns that may be present and hold text.
    what : str, optional
        What the table is, for the messages (e.g. ``"track centerline"``).

    Returns
    -------
    NumericTable
        The columns present, with the file line of each data row.

    Raises
    ------
    InputError
        Naming the file, the 1-based row and the column where it applies: the file cannot be
        read or is not UTF-8; it has no header or no data rows; the header is not
        comma-separated, has an empty, repeated or unknown column name, or lacks a required
        column; a cell is not a number or not finite (the first such cell in file order); a
        line has the wrong number of values.
    """
    path = Path(path)
    required = list(required)
    known = required + list(optional) + list(text)
    raw = read_checked_bytes(path)
    as_read = path
    if b"\r" in raw and raw.count(b"\r") != raw.count(b"\r\n"):
        # rows end at '\n' only; a lone '\r' is blank space inside its row (the parser
        # would end a row there)
        raw = re.sub(rb"\r(?!\n)", b" ", raw)
        as_read = None  # the file on disk is no longer what is parsed
    quick = _read_plain(raw, required, known, text, as_read)
    if quick is not None:
        columns, line_numbers, strings = quick
        return NumericTable(path, columns, line_numbers, strings)
    lines = _scan_lines(raw)
    if len(lines.data) == 0:
        raise InputError(path, f"is empty: no header row found for the {what}",
                         f"the first line must name the columns: {', '.join(required)}")
    head = int(lines.data[0])
    header_line = head + 1
    header = [f.strip() for f in raw[lines.start[head]:lines.end[head]].decode().strip()
              .split(",")]
    _check_header(path, header, header_line, required, known)
    rows = lines.data[1:]
    counts = lines.commas[1:] + 1
    if len(rows) == 0:
        raise InputError(path, f"has a header but no data rows for the {what}",
                         "add the samples below the header", row=header_line)
    wrong = np.flatnonzero(counts != len(header))
    parse_rows = int(wrong[0]) if wrong.size else len(rows)
    text_set = set(text)
    frame = _parse(raw, lines, rows, parse_rows, header, text_set)
    bad = _first_bad_cell(frame, header, text_set)
    if bad is not None:
        row, column, finite_problem = bad
        cell = _cell(raw, lines, int(rows[row]), column)
        if finite_problem:
            raise InputError(path, f"value '{_shown(cell)}' is not finite",
                             "replace NaN or infinite values with real numbers",
                             row=int(rows[row]) + 1, column=header[column])
        raise InputError(path, f"'{_shown(cell)}' is not a number",
                         "write a plain decimal number such as 12.5",
                         row=int(rows[row]) + 1, column=header[column])
    if wrong.size:
        k = int(wrong[0])
        raise InputError(path, f"has {int(counts[k])} values where the header has "
                         f"{len(header)}", "check for decimal commas (use '.') or a missing value",
                         row=int(rows[k]) + 1)
    columns = {name: frame[name].to_numpy(dtype=float) for name in header
               if name not in text_set}
    strings = {name: _stripped(frame[name]) for name in header if name in text_set}
    return NumericTable(path, columns, rows + 1, strings)


# bytes below the header that send a file to the full reader: comment, carriage return, odd
# blank space
_REFUSED_BYTES = (b"#", b"\r", b"\x0b", b"\x0c", b"\x1c", b"\x1d", b"\x1e", b"\x1f")


def _read_plain(raw: bytes, required: list[str], known: list[str], text: Iterable[str],
                source: Path | None = None):
    """The usual file read in one parse: comment lines only before the header, then one
    valid row per line, ASCII, no blank line. None when the file is anything else or holds
    any problem (the full reader then finds and names it)."""
    start = 0
    while True:  # leading comment lines
        end = raw.find(b"\n", start)
        line = raw[start:len(raw) if end < 0 else end]
        if line.startswith(b"#"):
            if end < 0:
                return None
            start = end + 1
            continue
        break
    if end < 0:
        return None
    header = [f.strip() for f in line.decode("utf-8", errors="replace").split(",")]
    if not line or line[:1].isspace() or any(h not in known for h in header) \
            or len(set(header)) != len(header) or any(r not in header for r in required):
        return None
    body = end + 1  # offset of the first data line (slices of raw would copy it)
    if body >= len(raw) or raw[body:body + 1].isspace():
        return None
    # no comment, carriage return, odd blank space, non-ASCII byte or blank line below the
    # header (C-speed scans of the bytes, and numpy on the bytes after each line end)
    if not raw.isascii() or any(raw.find(c, body) >= 0 for c in _REFUSED_BYTES):
        return None  # (single bytes: C memchr scans)
    octets = np.frombuffer(raw, dtype=np.uint8, offset=body)
    ends = np.flatnonzero(octets == 0x0A)
    after = octets[ends[ends < len(octets) - 1] + 1]
    if after.size and np.isin(after, (0x0A, 0x20, 0x09)).any():
        return None  # a blank line, or a row led by blank space
    count = len(ends) + (0 if raw.endswith(b"\n") else 1)
    if np.count_nonzero(octets == 0x2C) != (len(header) - 1) * count:  # a value too many
        return None
    text_set = {name for name in text if name in header}
    try:
        # a regular file is parsed from its path (pandas' own buffered reader, about twice
        # as fast as a Python file object); the row count below must still match the bytes
        # checked above, or the full reader takes over
        given = (str(source) if source is not None and source.is_file() else io.BytesIO(raw))
        frame = pd.read_csv(given, header=None, names=header, na_filter=False,
                            skiprows=raw[:body].count(b"\n"),
                            quoting=csv.QUOTE_NONE, engine="c", skip_blank_lines=False,
                            index_col=False, dtype={name: "category" for name in text_set})
    except (ValueError, pd.errors.ParserError):
        return None
    if len(frame) != count:
        return None
    columns = {}
    for name in header:
        if name in text_set:
            if frame[name].isna().any():
                return None
            continue
        if frame[name].dtype.kind not in "fiu":
            return None
        values = frame[name].to_numpy(dtype=float)
        if not np.all(np.isfinite(values)):  # a missing value reads as NaN: full reader
            return None
        columns[name] = values
    first_data_line = raw[:body].count(b"\n") + 1
    strings = {name: _stripped(frame[name]) for name in header if name in text_set}
    return columns, first_data_line + np.arange(count), strings


def _check_header(path: Path, header: list[str], header_line: int, required: list[str],
                  known: list[str]) -> None:
    if len(header) == 1 and any(sep in header[0] for sep in (";", "\t", "|")):
        raise InputError(path, "is not comma-separated (found ';', tab or '|' in the header)",
                         "use commas between columns and '.' as the decimal point",
                         row=header_line)
    seen: set[str] = set()
    for name in header:
        if name == "":
            raise InputError(path, "has an empty column name in the header",
                             "remove the trailing comma or name the column", row=header_line)
        if name in seen:
            raise InputError(path, "column appears twice in the header",
                             "keep one of them", row=header_line, column=name)
        seen.add(name)
        if name not in known:
            hint = suggest(name, known) or f"known columns: {', '.join(known)}"
            raise InputError(path, "unknown column", hint, row=header_line, column=name)
    for name in required:
        if name not in seen:
            raise InputError(path, f"missing required column '{name}'",
                             f"the header must contain: {', '.join(required)}",
                             row=header_line, column=name)


def _parse(raw: bytes, lines: _Lines, rows: np.ndarray, count: int, header: list[str],
           text_set: set[str]) -> pd.DataFrame:
    """The first ``count`` data rows, parsed by pandas' C parser (nothing converted to NaN:
    a cell that is not a number leaves its column as strings)."""
    if count == 0:
        return pd.DataFrame({name: np.zeros(0) for name in header})
    first, last = int(rows[0]), int(rows[count - 1])
    if last - first == count - 1:  # no blank or comment line among the data (the usual case)
        skip = first
    else:
        between = np.ones(last - first + 1, dtype=bool)
        between[rows[:count] - first] = False
        skip = list(range(first)) + (np.flatnonzero(between) + first).tolist()
    return pd.read_csv(io.BytesIO(raw), header=None, names=header, skiprows=skip, nrows=count,
                       na_filter=False, quoting=csv.QUOTE_NONE, engine="c",
                       skip_blank_lines=False, index_col=False,
                       dtype={name: "category" for name in text_set if name in header})


def _first_bad_cell(frame: pd.DataFrame, header: list[str],
                    text_set: set[str]) -> tuple[int, int, bool] | None:
    """(data row, column position, is a non-finite number) of the first bad cell in file
    order (row by row, left to right), or None."""
    best = None
    for col, name in enumerate(header):
        if name in text_set:
            continue
        series = frame[name]
        if series.dtype.kind in "fiu":
            values = series.to_numpy(dtype=float)
            bad = np.flatnonzero(~np.isfinite(values))
            found = (int(bad[0]), col, True) if bad.size else None
        else:
            cells = series.astype(str)
            good = cells.str.fullmatch(NUMBER).to_numpy(dtype=bool)
            bad = np.flatnonzero(~good)
            if bad.size == 0:  # numbers only, read as text by the parser: convert here
                frame[name] = pd.to_numeric(cells.str.strip(), errors="coerce")
                values = frame[name].to_numpy(dtype=float)
                bad = np.flatnonzero(~np.isfinite(values))
                found = (int(bad[0]), col, False) if bad.size else None
            else:
                row = int(bad[0])
                nonfinite = bool(pd.Series([cells.iloc[row]]).str.fullmatch(
                    NOT_FINITE, case=False).iloc[0])
                found = (row, col, nonfinite)
        if found is not None and (best is None or found[:2] < best[:2]):
            best = found
    return best


def _stripped(series: pd.Series) -> np.ndarray:
    """Stripped strings of a text column (stripping the few categories, not every cell)."""
    if isinstance(series.dtype, pd.CategoricalDtype):
        names = np.asarray([str(c).strip() for c in series.cat.categories], dtype=object)
        codes = series.cat.codes.to_numpy()
        return names[codes] if len(names) else np.full(len(codes), "", dtype=object)
    return np.asarray([str(c).strip() for c in series], dtype=object)

"""Numeric CSV tables: parse, then check every cell, naming the row and column of a bad one."""

from __future__ import annotations

import math
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import InputError
from .textfiles import read_text, suggest


@dataclass(frozen=True)
class NumericTable:
    """Columns of a numeric CSV file, with the file line number of every data row."""

    path: Path
    columns: dict[str, np.ndarray]
    lines: np.ndarray  # 1-based line numbers in the file, one per data row
    text_columns: dict[str, list[str]]

    def __len__(self) -> int:
        return len(self.lines)

    def has(self, name: str) -> bool:
        return name in self.columns or name in self.text_columns


def read_numeric_csv(
    path: str | Path,
    required: Iterable[str],
    optional: Iterable[str] = (),
    text: Iterable[str] = (),
    what: str = "table",
) -> NumericTable:
    """Read a comma-separated table with a header row.

    Lines starting with ``#`` and blank lines are skipped. Every column must be known, appear
    once, and every cell of a numeric column must be a finite number. Columns in ``text`` are
    kept as strings.
    """
    path = Path(path)
    required = list(required)
    known = required + list(optional) + list(text)
    content = read_text(path)
    header: list[str] | None = None
    header_line = 0
    rows: list[list[str]] = []
    lines: list[int] = []
    # rows end at '\n' only: a form feed or U+2028 inside a comment does not shift row numbers
    for number, line in enumerate(content.split("\n"), start=1):
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        fields = [f.strip() for f in stripped.split(",")]
        if header is None:
            header, header_line = fields, number
            continue
        rows.append(fields)
        lines.append(number)
    if header is None:
        raise InputError(path, f"is empty: no header row found for the {what}",
                         f"the first line must name the columns: {', '.join(required)}")
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
    if not rows:
        raise InputError(path, f"has a header but no data rows for the {what}",
                         "add the samples below the header", row=header_line)
    text_set = set(text)
    values = {name: np.empty(len(rows)) for name in header if name not in text_set}
    strings: dict[str, list[str]] = {name: [] for name in header if name in text_set}
    for i, (fields, number) in enumerate(zip(rows, lines)):
        if len(fields) != len(header):
            hint = "check for decimal commas (use '.') or a missing value"
            raise InputError(path, f"has {len(fields)} values where the header has "
                             f"{len(header)}", hint, row=number)
        for name, cell in zip(header, fields):
            if name in text_set:
                strings[name].append(cell)
                continue
            try:
                if not cell.isascii() or "_" in cell:  # float() takes '1_000' and '１２'
                    raise ValueError(cell)
                value = float(cell)
            except ValueError:
                shown = cell if len(cell) <= 20 else cell[:17] + "..."
                raise InputError(path, f"'{shown}' is not a number",
                                 "write a plain decimal number such as 12.5",
                                 row=number, column=name) from None
            if not math.isfinite(value):
                raise InputError(path, f"value '{cell}' is not finite",
                                 "replace NaN or infinite values with real numbers",
                                 row=number, column=name)
            values[name][i] = value
    return NumericTable(path, values, np.asarray(lines), strings)

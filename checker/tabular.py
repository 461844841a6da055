"""Reading the project's text inputs: numeric CSV tables and TOML documents.

Both readers raise :class:`checker.errors.InputError` that names the file, the line or key and
the column, so every loader gives the same kind of one-line message.
"""

from __future__ import annotations

import difflib
import math
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np
import tomllib

from .errors import InputError


def _suggest(name: str, known: Iterable[str]) -> str:
    known = list(known)
    same_letters = [k for k in known if k.lower() == name.lower()]
    close = same_letters or difflib.get_close_matches(name, known, n=1)
    return f"did you mean '{close[0]}'?" if close else ""


def read_text(path: Path) -> str:
    """Read a UTF-8 text file; refuse binary and UTF-16 data with a clear message."""
    try:
        raw = path.read_bytes()
    except FileNotFoundError:
        raise InputError(path, "file not found", "check the path") from None
    except IsADirectoryError:
        raise InputError(path, "is a folder, not a file", "give a file path") from None
    except OSError as exc:
        raise InputError(path, f"cannot be read ({exc.strerror})", "check permissions") from None
    if raw.startswith((b"\xff\xfe", b"\xfe\xff")) or b"\x00" in raw:
        raise InputError(
            path, "is binary or UTF-16 encoded, not UTF-8 text", "save it as UTF-8 text"
        )
    if raw.startswith(b"\xef\xbb\xbf"):
        raise InputError(
            path,
            "starts with a byte-order mark (BOM)",
            "save it as UTF-8 without BOM (e.g. 'CSV UTF-8' without signature)",
            row=1,
        )
    try:
        return raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = raw[: exc.start].count(b"\n") + 1
        raise InputError(path, "is not valid UTF-8 text", "save it as UTF-8", row=line) from None


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
    for number, line in enumerate(content.splitlines(), start=1):
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
            hint = _suggest(name, known) or f"known columns: {', '.join(known)}"
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


def load_toml(path: str | Path) -> dict[str, Any]:
    """Parse a TOML file, turning syntax errors into one-line input errors."""
    path = Path(path)
    content = read_text(path)
    try:
        return tomllib.loads(content)
    except tomllib.TOMLDecodeError as exc:
        text = str(exc)
        row = None
        if "(at line " in text:
            try:
                row = int(text.split("(at line ", 1)[1].split(",", 1)[0])
            except ValueError:
                row = None
        problem = "is not valid TOML: " + text.split(" (at line")[0]
        raise InputError(path, problem, "fix the syntax on that line", row=row) from None


class Fields:
    """Typed access to one TOML table that rejects unknown keys.

    Every key read is remembered; :meth:`done` raises for any key that was never read, so a
    misspelt key is an error and never silently ignored.
    """

    def __init__(self, path: Path, table: Any, prefix: str = "") -> None:
        self.path = path
        self.prefix = prefix
        if not isinstance(table, dict):
            raise InputError(path, "must be a table", "see the README for the format",
                             key=prefix or None)
        self.table = table
        self.used: set[str] = set()

    def key(self, name: str) -> str:
        return f"{self.prefix}.{name}" if self.prefix else name

    def error(self, name: str, problem: str, hint: str = "") -> InputError:
        return InputError(self.path, problem, hint, key=self.key(name))

    def missing(self, name: str, hint: str) -> InputError:
        """A missing key; a misspelt neighbour is named instead where there is one."""
        unknown = [k for k in self.table if k not in self.used]
        close = difflib.get_close_matches(name, unknown, n=1)
        if close:
            return self.error(close[0], "is not a known key", f"did you mean '{name}'?")
        return self.error(name, "is missing", hint)

    def has(self, name: str) -> bool:
        return name in self.table

    def raw(self, name: str, default: Any = None) -> Any:
        self.used.add(name)
        return self.table.get(name, default)

    def number(
        self,
        name: str,
        default: float | None = None,
        *,
        minimum: float | None = None,
        maximum: float | None = None,
        positive: bool = False,
        unit: str = "",
    ) -> float:
        self.used.add(name)
        if name not in self.table:
            if default is None:
                raise self.missing(name, f"add {self.key(name)} = <number{unit}>")
            return float(default)
        value = self.table[name]
        if isinstance(value, bool) or not isinstance(value, (int, float)):
            raise self.error(name, f"must be a number, not {value!r}",
                             "write a plain number without quotes")
        value = float(value)
        if not math.isfinite(value):
            raise self.error(name, "must be finite", "write a real number")
        low = "above 0" if positive else (f"at least {minimum:g}" if minimum is not None
                                          else "")
        high = f"at most {maximum:g}" if maximum is not None else ""
        span = " and ".join(p for p in (low, high) if p)
        hint = f"give {self.key(name)} a value {span}{unit}" if span else ""
        if positive and value <= 0:
            raise self.error(name, f"must be greater than zero (got {value:g})", hint)
        if minimum is not None and value < minimum:
            raise self.error(name, f"must be at least {minimum:g} (got {value:g})", hint)
        if maximum is not None and value > maximum:
            raise self.error(name, f"must be at most {maximum:g} (got {value:g})", hint)
        return value

    def optional_number(self, name: str, **limits) -> float | None:
        """The number at ``name``, or None when the key is absent."""
        if name not in self.table:
            self.used.add(name)
            return None
        return self.number(name, **limits)

    def integer(self, name: str, default: int | None = None, *, minimum: int = 0,
                maximum: int | None = None) -> int:
        self.used.add(name)
        if name not in self.table:
            if default is None:
                raise self.missing(name, f"add {self.key(name)} = <whole number>")
            return default
        value = self.table[name]
        upper = f" and at most {maximum}" if maximum is not None else ""
        if isinstance(value, bool) or not isinstance(value, int):
            raise self.error(name, f"must be a whole number, not {value!r}",
                             f"write a whole number without quotes, at least {minimum}{upper}")
        if value < minimum or (maximum is not None and value > maximum):
            raise self.error(name, f"must be at least {minimum}{upper} (got {value})",
                             f"give a whole number from {minimum}{upper}")
        return value

    def text(self, name: str, default: str | None = None,
             choices: Iterable[str] | None = None) -> str:
        self.used.add(name)
        if name not in self.table:
            if default is None:
                raise self.missing(name, f"add {self.key(name)} = \"...\"")
            return default
        value = self.table[name]
        if not isinstance(value, str):
            raise self.error(name, f"must be text in quotes, not {value!r}",
                             f"write {self.key(name)} = \"...\"")
        if choices is not None:
            options = list(choices)
            if value not in options:
                raise self.error(name, f"'{value}' is not one of: {', '.join(options)}",
                                 _suggest(value, options) or "use one of the listed words")
        return value

    def flag(self, name: str, default: bool) -> bool:
        self.used.add(name)
        value = self.table.get(name, default)
        if not isinstance(value, bool):
            raise self.error(name, f"must be true or false, not {value!r}",
                             "write true or false without quotes")
        return value

    def table_list(self, name: str) -> list[Fields]:
        self.used.add(name)
        value = self.table.get(name, [])
        if isinstance(value, dict):
            value = [value]
        if not isinstance(value, list):
            raise self.error(name, "must be a list of tables", f"write [[{self.key(name)}]]")
        return [Fields(self.path, item, f"{self.key(name)}[{i + 1}]")
                for i, item in enumerate(value)]

    def sub(self, name: str, required: bool = False) -> Fields:
        self.used.add(name)
        if name not in self.table:
            if required:
                raise self.missing(name, f"add a [{self.key(name)}] table")
            return Fields(self.path, {}, self.key(name))
        return Fields(self.path, self.table[name], self.key(name))

    def check(self, name: str, ok: bool, problem: str, hint: str = "") -> None:
        if not ok:
            raise self.error(name, problem, hint)

    def done(self) -> None:
        unknown = sorted(set(self.table) - self.used)
        if unknown:
            name = unknown[0]
            hint = _suggest(name, self.used) or "remove it or check the spelling"
            raise self.error(name, "is not a known key", hint)



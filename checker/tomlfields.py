"""TOML documents and typed, checked access to their keys (unknown keys are errors)."""

from __future__ import annotations

import difflib
import math
import sys
from collections.abc import Iterable
from pathlib import Path
from typing import Any

from .errors import InputError
from .textfiles import read_text, suggest

if sys.version_info >= (3, 11):
    import tomllib
else:  # Python 3.10
    import tomli as tomllib


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


MAX_TEXT_CHARS = 500  # names and titles; longer text is a pasted file, not a name


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
        if len(value) > MAX_TEXT_CHARS:
            raise self.error(name, f"is {len(value)} characters long",
                             f"keep it under {MAX_TEXT_CHARS} characters")
        if choices is not None:
            options = list(choices)
            if value not in options:
                raise self.error(name, f"'{value}' is not one of: {', '.join(options)}",
                                 suggest(value, options) or "use one of the listed words")
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
        """Raise the one-line error for key ``name`` unless ``ok``."""
        if not ok:
            raise self.error(name, problem, hint)

    def done(self) -> None:
        unknown = sorted(set(self.table) - self.used)
        if unknown:
            name = unknown[0]
            hint = suggest(name, self.used) or "remove it or check the spelling"
            raise self.error(name, "is not a known key", hint)

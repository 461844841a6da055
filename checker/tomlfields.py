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
    """Parse a TOML file, turning syntax errors into one-line input errors.

    Parameters
    ----------
    path : str or pathlib.Path
        The TOML file (UTF-8, read through :func:`checker.textfiles.read_text`).

    Returns
    -------
    dict
        The parsed document (``tomllib.loads``).

    Raises
    ------
    InputError
        When the file cannot be read, is not UTF-8 text, or is not valid TOML (with the line
        of the syntax error as ``row`` when the parser gives it).
    """
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
    misspelt key is an error and never silently ignored. Every error names the file and the
    full key path (``prefix.name``).

    Parameters
    ----------
    path : pathlib.Path
        The TOML file, named in every error.
    table : object
        The parsed table; anything but a dict is refused.
    prefix : str, optional
        The table's key path (e.g. ``"cars"`` or ``"sections[2]"``); empty at the top level.

    Attributes
    ----------
    path, prefix : as given
    table : dict
        The table.
    used : set of str
        The keys read so far.

    Raises
    ------
    InputError
        When ``table`` is not a table (dict).
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
        """The full key path of ``name`` in this table.

        Parameters
        ----------
        name : str
            A key of this table.

        Returns
        -------
        str
            ``"prefix.name"``, or ``name`` at the top level.
        """
        return f"{self.prefix}.{name}" if self.prefix else name

    def error(self, name: str, problem: str, hint: str = "") -> InputError:
        """The one-line input error for key ``name`` (not raised).

        Parameters
        ----------
        name : str
            A key of this table.
        problem : str
            What is wrong.
        hint : str, optional
            What to do.

        Returns
        -------
        InputError
            Naming the file and the full key path.
        """
        return InputError(self.path, problem, hint, key=self.key(name))

    def missing(self, name: str, hint: str) -> InputError:
        """The error for a missing key; a misspelt neighbour is named instead where there is one.

        Parameters
        ----------
        name : str
            The key that is missing.
        hint : str
            What to add, used when no unread key is close to ``name``.

        Returns
        -------
        InputError
            "is not a known key -- did you mean '<name>'?" on the closest unread key when there
            is one (:func:`difflib.get_close_matches`), else "is missing" on ``name`` (not raised).
        """
        unknown = [k for k in self.table if k not in self.used]
        close = difflib.get_close_matches(name, unknown, n=1)
        if close:
            return self.error(close[0], "is not a known key", f"did you mean '{name}'?")
        return self.error(name, "is missing", hint)

    def has(self, name: str) -> bool:
        """Whether the table holds key ``name`` (it is not marked as read).

        Parameters
        ----------
        name : str
            A key.

        Returns
        -------
        bool
            True when present.
        """
        return name in self.table

    def raw(self, name: str, default: Any = None) -> Any:
        """The value at ``name`` unchecked, marking the key as read.

        Parameters
        ----------
        name : str
            A key.
        default : object, optional
            Returned when the key is absent (default None).

        Returns
        -------
        object
            The parsed TOML value or ``default``.
        """
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
        """A finite number at ``name``, checked against its range.

        Parameters
        ----------
        name : str
            A key.
        default : float or None, optional
            Returned (as float, unchecked) when the key is absent; None makes the key required.
        minimum, maximum : float or None, optional
            Inclusive bounds.
        positive : bool, optional
            Require a value above 0.
        unit : str, optional
            Unit text for the hints (e.g. ``" m"``).

        Returns
        -------
        float
            The value (a TOML integer becomes a float).

        Raises
        ------
        InputError
            When the key is missing without a default, the value is not a number (booleans and
            quoted numbers are refused), is not finite, or is outside the bounds.
        """
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
        """The number at ``name``, or None when the key is absent.

        Parameters
        ----------
        name : str
            A key.
        **limits
            ``minimum``, ``maximum``, ``positive``, ``unit`` as for :meth:`number`.

        Returns
        -------
        float or None
            The checked value, or None.

        Raises
        ------
        InputError
            As :meth:`number` when the key is present.
        """
        if name not in self.table:
            self.used.add(name)
            return None
        return self.number(name, **limits)

    def integer(self, name: str, default: int | None = None, *, minimum: int = 0,
                maximum: int | None = None) -> int:
        """A whole number at ``name``, checked against its range.

        Parameters
        ----------
        name : str
            A key.
        default : int or None, optional
            Returned (unchecked) when the key is absent; None makes the key required.
        minimum : int, optional
            Inclusive lower bound (default 0).
        maximum : int or None, optional
            Inclusive upper bound.

        Returns
        -------
        int
            The value.

        Raises
        ------
        InputError
            When the key is missing without a default, the value is not a TOML integer (a float
            such as ``2.0``, a boolean or a quoted number is refused), or it is out of range.
        """
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
        """A text value at ``name``, optionally one of a set of words.

        Parameters
        ----------
        name : str
            A key.
        default : str or None, optional
            Returned (unchecked) when the key is absent; None makes the key required.
        choices : iterable of str or None, optional
            The accepted values; None accepts any text.

        Returns
        -------
        str
            The value.

        Raises
        ------
        InputError
            When the key is missing without a default, the value is not a string, is longer than
            :data:`MAX_TEXT_CHARS` characters, or is not one of ``choices``.
        """
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
        """A boolean at ``name``.

        Parameters
        ----------
        name : str
            A key.
        default : bool
            Returned when the key is absent.

        Returns
        -------
        bool
            The value.

        Raises
        ------
        InputError
            When the value is not ``true`` or ``false``.
        """
        self.used.add(name)
        value = self.table.get(name, default)
        if not isinstance(value, bool):
            raise self.error(name, f"must be true or false, not {value!r}",
                             "write true or false without quotes")
        return value

    def table_list(self, name: str) -> list[Fields]:
        """The array of tables at ``name`` (``[[name]]``), each as its own :class:`Fields`.

        Parameters
        ----------
        name : str
            A key.

        Returns
        -------
        list of Fields
            One per table, prefixed ``name[1]``, ``name[2]``...; empty when the key is absent;
            a single table counts as a list of one.

        Raises
        ------
        InputError
            When the value is not a list, or an item is not a table.
        """
        self.used.add(name)
        value = self.table.get(name, [])
        if isinstance(value, dict):
            value = [value]
        if not isinstance(value, list):
            raise self.error(name, "must be a list of tables", f"write [[{self.key(name)}]]")
        return [Fields(self.path, item, f"{self.key(name)}[{i + 1}]")
                for i, item in enumerate(value)]

    def sub(self, name: str, required: bool = False) -> Fields:
        """The sub-table at ``name`` as its own :class:`Fields`.

        Parameters
        ----------
        name : str
            A key.
        required : bool, optional
            Whether the table must be present; otherwise an absent one reads as empty.

        Returns
        -------
        Fields
            Prefixed with the full key path.

        Raises
        ------
        InputError
            When a required table is missing, or the value is not a table.
        """
        self.used.add(name)
        if name not in self.table:
            if required:
                raise self.missing(name, f"add a [{self.key(name)}] table")
            return Fields(self.path, {}, self.key(name))
        return Fields(self.path, self.table[name], self.key(name))

    def check(self, name: str, ok: bool, problem: str, hint: str = "") -> None:
        """Raise the one-line error for key ``name`` unless ``ok``.

        Parameters
        ----------
        name : str
            The key to name.
        ok : bool
            The condition that must hold.
        problem : str
            What is wrong when it does not.
        hint : str, optional
            What to do.

        Raises
        ------
        InputError
            When ``ok`` is false.
        """
        if not ok:
            raise self.error(name, problem, hint)

    def done(self) -> None:
        """Refuse any key of the table that was never read.

        Call it after reading every key the format knows.

        Raises
        ------
        InputError
            For the first unknown key in sorted order, with a close known key as the hint.
        """
        unknown = sorted(set(self.table) - self.used)
        if unknown:
            name = unknown[0]
            hint = suggest(name, self.used) or "remove it or check the spelling"
            raise self.error(name, "is not a known key", hint)

"""The vectorized CSV reader against a plain line-by-line reference (random hostile tables).

The reference reads the file the obvious way (split lines, skip blank and # lines, split on
commas, strip, float() every cell in file order) with the reader's documented number syntax
(ASCII digits only); both must accept the same tables with the same values, or refuse them
with the same one-line message naming the same row and column.
"""

from __future__ import annotations

import math
import re

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.csvtable import read_numeric_csv
from checker.errors import InputError

STRICT = re.compile(r"\s*[+-]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][+-]?[0-9]+)?\s*")


def reference_read(path, required, optional=(), text=()):
    """Line by line, cell by cell (the reader's earlier implementation, kept as the oracle)."""
    content = path.read_bytes().decode("utf-8")
    header, rows, lines = None, [], []
    for number, line in enumerate(content.split("\n"), start=1):  # rows end at '\n' only
        stripped = line.strip()
        if not stripped or stripped.startswith("#"):
            continue
        fields = [f.strip() for f in stripped.split(",")]
        if header is None:
            header = fields
            continue
        rows.append(fields)
        lines.append(number)
    values = {name: [] for name in header if name not in text}
    strings = {name: [] for name in header if name in text}
    for fields, number in zip(rows, lines):
        if len(fields) != len(header):
            raise InputError(path, f"has {len(fields)} values where the header has "
                             f"{len(header)}", "check for decimal commas (use '.') or a "
                             "missing value", row=number)
        for name, cell in zip(header, fields):
            if name in text:
                strings[name].append(cell)
                continue
            value = float(cell) if STRICT.fullmatch(cell) else None
            if value is None and cell.lower().lstrip("+-") in ("nan", "inf", "infinity"):
                value = float(cell)
            if value is None:
                raise InputError(path, f"'{cell}' is not a number",
                                 "write a plain decimal number such as 12.5",
                                 row=number, column=name)
            if not math.isfinite(value):
                raise InputError(path, f"value '{cell}' is not finite",
                                 "replace NaN or infinite values with real numbers",
                                 row=number, column=name)
            values[name].append(value)
    return values, strings, lines


CELLS = st.sampled_from(["0", "1.5", "-2", " 3.25 ", "1e3", ".5", "7.", "+4", "1_000",
                         "\uff11\uff12", "nan", "Infinity", "-inf", "", "abc", "0x10", "1,5",
                         "2.5e-3", "  ", "\x0c1.5", "1\r", "\u00a02"])
SEATS = st.sampled_from(["front", " rear ", "mid", ""])
EXTRA = st.sampled_from(["", "# note, with commas\n", "\n", "   \n", "  # indented\n",
                         "\x0c\n", "\u2028# odd blank\n", "# a\rb, c\n"])


@st.composite
def tables(draw):
    rows = draw(st.lists(st.tuples(CELLS, CELLS, SEATS, EXTRA), min_size=1, max_size=12))
    newline = draw(st.sampled_from(["\n", "\r\n"]))
    head = draw(st.sampled_from(["", "# comment\n", "\n# a, b\n"]))
    body = "".join(f"{extra}{a},{b},{seat}{newline}" for a, b, seat, extra in rows)
    if draw(st.booleans()):  # a last line without a line break
        body = body.rstrip("\r\n")
    return head + f"t, gz ,seat{newline}" + body


@settings(max_examples=300, deadline=None)
@given(tables())
def test_reader_matches_line_by_line_reference(tmp_path_factory, text):
    path = tmp_path_factory.mktemp("csv") / "table.csv"
    path.write_bytes(text.encode("utf-8"))
    try:
        expected = reference_read(path, ["t", "gz"], text=["seat"])
    except InputError as exc:
        with pytest.raises(InputError) as got:
            read_numeric_csv(path, ["t", "gz"], text=["seat"])
        assert str(got.value) == str(exc)
        return
    table = read_numeric_csv(path, ["t", "gz"], text=["seat"])
    values, strings, lines = expected
    assert table.lines.tolist() == lines
    for name in ("t", "gz"):
        assert table.columns[name].tolist() == values[name]
    assert table.text_columns["seat"].tolist() == strings["seat"]


def test_thousands_separator_and_full_width_digits_are_refused(tmp_path):
    # Python's float() accepts "1_000" and full-width digits; a table must not.
    for cell in ("1_000", "\uff11\uff12"):
        path = tmp_path / "t.csv"
        path.write_text(f"x,y,z\n0,0,0\n{cell},0,0\n", encoding="utf-8")
        with pytest.raises(InputError, match="row 3.*'x'.*not a number"):
            read_numeric_csv(path, ["x", "y", "z"])


def test_first_bad_cell_in_file_order(tmp_path):
    # A bad cell on row 3 comes before a short row on row 5 and a NaN on row 4.
    path = tmp_path / "t.csv"
    path.write_text("x,y,z\n0,0,0\n1,two,0\nnan,0,0\n4,0\n", encoding="utf-8")
    with pytest.raises(InputError, match="row 3.*'y'.*'two' is not a number"):
        read_numeric_csv(path, ["x", "y", "z"])


def test_large_table_round_trip(tmp_path):
    # 200 000 rows written by numpy at 17 significant digits read back exactly (the values
    # float() would give).
    rng = np.random.default_rng(0)
    data = rng.normal(0, 1e3, (200_000, 3))
    path = tmp_path / "big.csv"
    np.savetxt(path, data, fmt="%.17g", delimiter=",", header="x,y,z", comments="")
    table = read_numeric_csv(path, ["x", "y", "z"])
    assert np.array_equal(np.column_stack([table.columns[c] for c in "xyz"]), data)
    assert table.lines[0] == 2 and table.lines[-1] == 200_001

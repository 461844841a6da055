"""The vectorized fixed-decimal CSV writer against Python's own formatting."""

from __future__ import annotations

import io

import numpy as np
import pandas as pd
from hypothesis import given, settings
from hypothesis import strategies as st

from checker.csvformat import fixed_csv


@settings(max_examples=200, deadline=None)
@given(st.lists(st.floats(-1e6, 1e6, allow_nan=False) | st.sampled_from(
    [0.0, -0.0, 1.95947e-204, -1e-300, 0.5e-6, -0.5e-6, 999999.9999995]), min_size=1,
    max_size=40), st.integers(0, 6))
def test_cells_are_the_rounded_values_without_trailing_zeros(values, decimals):
    # Each cell, read back by float(), is the value rounded to `decimals` (within one unit
    # of the last place for values at a rounding tie); no exponent, no "-0", no trailing
    # zero after the point (Python's f-format as the reference).
    x = np.asarray(values)
    text = fixed_csv(["v", "name"], [(x, decimals), (np.array(["a"] * len(x)), None)])
    lines = text.decode().splitlines()
    assert lines[0] == "v,name" and len(lines) == len(x) + 1
    for value, line in zip(x, lines[1:]):
        cell, name = line.split(",")
        assert name == "a" and "e" not in cell and cell != "-0"
        assert abs(float(cell) - value) <= 0.5 * 10.0**-decimals * (1 + 1e-9) + 1e-9
        reference = f"{value:.{decimals}f}"
        if "." in reference:
            reference = reference.rstrip("0").rstrip(".")
        if reference in ("-0", ""):
            reference = "0"
        if abs(abs(value) * 10**decimals % 1 - 0.5) > 1e-6:  # not at a tie
            assert cell == reference
        if "." in cell:
            assert not cell.endswith("0")


def test_table_reads_back_with_pandas():
    rng = np.random.default_rng(0)
    a, b = rng.normal(0, 50, 1000), rng.normal(0, 1, 1000)
    names = np.repeat(np.array([b"front", b"rear"]), 500)
    data = fixed_csv(["seat", "a", "b"], [(names, None), (a, 4), (b, 6)])
    back = pd.read_csv(io.BytesIO(data))
    assert back["seat"].tolist() == ["front"] * 500 + ["rear"] * 500
    assert np.max(np.abs(back["a"] - a)) <= 0.5e-4 + 1e-12
    assert np.max(np.abs(back["b"] - b)) <= 0.5e-6 + 1e-12

"""Property-based tests: random bytes and random tables fed to every loader may only give a
valid object or the project's InputError (never another exception)."""

from __future__ import annotations

import tempfile
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from checker.errors import InputError
from checker.history import load_history
from checker.limits import load_limits
from checker.loadcases import load_cases
from checker.operation import load_operation
from checker.track import load_centerline
from checker.train import load_train

LOADERS = [load_centerline, load_train, load_operation, load_limits, load_cases, load_history]
FUZZ = settings(max_examples=60, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture])


def feed(loader, data: bytes, suffix: str):
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / f"input{suffix}"
        path.write_bytes(data)
        try:
            return loader(path)
        except InputError as exc:
            assert "\n" not in exc.message()
            return exc


@FUZZ
@given(st.binary(max_size=400))
def test_random_bytes(data):
    for loader in LOADERS:
        feed(loader, data, ".csv" if loader in (load_centerline, load_history) else ".toml")


CELLS = st.one_of(st.floats(allow_nan=True, allow_infinity=True).map(repr),
                  st.integers(-10, 10).map(str), st.sampled_from(["", "a", "1e400", " 2 ",
                                                                 "nan", "-", "1,5", "#"]))
TRACK_COLUMNS = ["x", "y", "z", "roll_deg", "up_x", "up_y", "up_z", "q"]
HISTORY_COLUMNS = ["t", "gx", "gy", "gz", "seat", "s"]


def table(columns):
    return st.tuples(
        st.lists(st.sampled_from(columns), min_size=1, max_size=len(columns)),
        st.lists(st.lists(CELLS, min_size=1, max_size=8), max_size=12),
    ).map(lambda parts: (",".join(parts[0]) + "\n" + "".join(
        ",".join(row) + "\n" for row in parts[1])).encode())


@FUZZ
@given(table(TRACK_COLUMNS))
def test_random_track_tables(data):
    feed(load_centerline, data, ".csv")


@FUZZ
@given(table(HISTORY_COLUMNS))
def test_random_history_tables(data):
    feed(load_history, data, ".csv")


TOML_VALUES = st.recursive(
    st.one_of(st.integers(-5, 5), st.floats(-1e6, 1e6), st.booleans(),
              st.sampled_from(["lift", "gz", "positive", "full", "x"])),
    lambda inner: st.lists(inner, max_size=4), max_leaves=8)


def toml_doc(keys):
    def render(value):
        if isinstance(value, bool):
            return "true" if value else "false"
        if isinstance(value, str):
            return f'"{value}"'
        if isinstance(value, list):
            return "[" + ", ".join(render(v) for v in value) + "]"
        return repr(value)

    return st.lists(st.tuples(st.sampled_from(keys), st.sampled_from(keys), TOML_VALUES),
                    max_size=8).map(lambda items: "".join(
                        f"[[{table_name}]]\n{key} = {render(v)}\n" if table_name in (
                            "seats", "sections", "duration", "combined", "onset", "case")
                        else f"[{table_name}]\n{key} = {render(v)}\n"
                        for table_name, key, v in items).encode())


KEYS = ["cars", "seats", "riders", "resistance", "sections", "meta", "filter", "duration",
        "combined", "onset", "case", "count", "spacing_m", "empty_mass_kg", "kind", "start_m",
        "end_m", "speed_m_s", "title", "axis", "direction", "points", "vertices", "axes",
        "occupancy", "name", "limit_g_per_s", "corner_hz", "order"]


@FUZZ
@given(toml_doc(KEYS))
def test_random_toml_documents(data):
    for loader in (load_train, load_operation, load_limits, load_cases):
        feed(loader, data, ".toml")

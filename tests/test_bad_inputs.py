"""Every file of the bad-input corpus through the command line: exit 2, one line naming the
file and the row or key, no traceback, no output written, a previous output untouched."""

from __future__ import annotations

from pathlib import Path

import pytest

from checker.cli import main

HERE = Path(__file__).resolve().parent / "bad_inputs"
SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"
GOOD_TRACK = HERE / "_good_track.csv"
GOOD_HISTORY = HERE / "_good_history.csv"

# file -> (how it is used, words the message must contain)
CORPUS = {
    "track_empty.csv": ("track", ["empty"]),
    "track_header_only.csv": ("track", ["no data rows", "row 1"]),
    "track_semicolons.csv": ("track", ["not comma-separated"]),
    "track_decimal_comma.csv": ("track", ["row 3", "decimal commas"]),
    "track_duplicated_column.csv": ("track", ["twice", "'x'"]),
    "track_missing_z.csv": ("track", ["missing required column 'z'"]),
    "track_misspelt_column.csv": ("track", ["'Z'", "did you mean 'z'"]),
    "track_text_cell.csv": ("track", ["row 4", "'y'", "not a number"]),
    "track_nan.csv": ("track", ["row 3", "'z'", "not finite"]),
    "track_infinite.csv": ("track", ["row 3", "not finite"]),
    "track_huge_values.csv": ("track", ["row 3", "units"]),
    "track_three_rows.csv": ("track", ["at least 4"]),
    "track_repeated_point.csv": ("track", ["row 4", "repeats"]),
    "track_kink.csv": ("track", ["kink of 90 deg", "row 4", "station 4.00 m"]),
    "track_reversed_row.csv": ("track", ["kink of 180 deg", "row 4"]),
    "track_roll_and_up.csv": ("track", ["both roll_deg and up"]),
    "track_zero_up.csv": ("track", ["row 3", "up vector is zero"]),
    "track_up_along_tangent.csv": ("track", ["row 3", "parallel"]),
    "track_partial_up.csv": ("track", ["up_z"]),
    "track_short_row.csv": ("track", ["row 3", "2 values"]),
    "track_shorter_than_train.csv": ("track+train", ["shorter than the train"]),
    "track_binary.csv": ("track", ["binary"]),
    "track_utf16.csv": ("track", ["UTF-16"]),
    "track_bom.csv": ("track", ["byte-order mark"]),
    "track_underscore_digits.csv": ("track", ["row 4", "'x'", "not a number"]),
    "track_fullwidth_digits.csv": ("track", ["row 4", "'x'", "not a number"]),
    "track_formfeed_comment.csv": ("track", ["row 6", "'y'", "not a number"]),
    "track_micrometre_spacing.csv": ("track", ["only", "m long", "units"]),
    "train_long_seat_name.toml": ("train", ["seats[1].name", "600 characters"]),
    "train_bom.toml": ("train", ["byte-order mark", "without BOM"]),
    "limits_table_outside.toml": ("limits", ["combined[1]", "outside the limits file's "
                                             "folder"]),
    "limits_table_absolute.toml": ("limits", ["combined[1]", "outside the limits file's "
                                              "folder"]),
    "limits_level_huge.toml": ("limits", ["duration[1].points", "beyond 20 g"]),
    "limits_vertices_huge.toml": ("limits", ["combined[1].vertices", "beyond 20 g"]),
    "limits_corner_tiny.toml": ("limits", ["filter.corner_hz", "at least 0.01"]),
    "train_negative_mass.toml": ("train", ["cars.empty_mass_kg", "greater than zero"]),
    "train_zero_spacing.toml": ("train", ["cars.spacing_m"]),
    "train_unknown_key.toml": ("train", ["riders.mass_kgs", "did you mean 'mass_kg'"]),
    "train_bad_syntax.toml": ("train", ["not valid TOML", "row 1"]),
    "train_no_seats.toml": ("train", ["no seats"]),
    "train_count_as_text.toml": ("train", ["cars.count", "whole number"]),
    "train_duplicate_seat.toml": ("train", ["used twice"]),
    "train_huge_mass.toml": ("train", ["cars.empty_mass_kg", "at most"]),
    "train_occupancy_above_one.toml": ("train", ["riders.occupancy", "at most 1"]),
    "train_binary.toml": ("train", ["binary"]),
    "ops_overlapping.toml": ("ops", ["sections[2]", "overlaps"]),
    "ops_unknown_kind.toml": ("ops", ["sections[1].kind", "catapult"]),
    "ops_backwards.toml": ("ops", ["sections[1]", "backwards"]),
    "ops_launch_force_and_speed.toml": ("ops", ["exactly one of force_n or exit_speed_m_s"]),
    "ops_beyond_track.toml": ("ops", ["sections[1]", "outside the track"]),
    "ops_negative_speed.toml": ("ops", ["start_speed_m_s", "at least 0"]),
    "limits_unknown_key.toml": ("limits", ["filter.corner", "did you mean 'corner_hz'"]),
    "limits_durations_not_increasing.toml": ("limits", ["duration[1].points", "increase"]),
    "limits_level_grows.toml": ("limits", ["grows with duration"]),
    "limits_wrong_sign.toml": ("limits", ["positive levels"]),
    "limits_two_vertices.toml": ("limits", ["combined[1]", "at least 3"]),
    "limits_self_intersecting.toml": ("limits", ["self-intersecting"]),
    "limits_rest_outside.toml": ("limits", ["rest point"]),
    "limits_corner_at_nyquist.toml": ("limits", ["filter.corner_hz", "half the sample rate"]),
    "limits_table_text.csv": ("limits:limits_table_text.toml", ["row 4", "'gy'"]),
    "limits_table_missing_column.csv": ("limits:limits_table_missing_column.toml",
                                        ["'gx'", "unknown column"]),
    "limits_latin1.toml": ("limits", ["not valid UTF-8"]),
    "cases_bad_occupancy.toml": ("cases", ["case[1].occupancy", "most"]),
    "cases_unknown_key.toml": ("cases", ["head_wind", "did you mean 'head_wind_m_s'"]),
    "cases_none.toml": ("cases", ["no load cases"]),
    "cases_wrong_car_count.toml": ("cases", ["case[1].occupancy", "3 cars"]),
    "history_time_backwards.csv": ("history", ["row 6", "'t'", "does not increase"]),
    "history_gap.csv": ("history", ["row 12", "missing samples"]),
    "history_irregular.csv": ("history", ["row 5", "irregular"]),
    "history_missing_gz.csv": ("history", ["missing required column 'gz'"]),
    "history_few_samples.csv": ("history", ["at least 8"]),
    "history_text_cell.csv": ("history", ["row 7", "'gz'", "high"]),
    "history_long_seat_name.csv": ("history", ["row 2", "'seat'", "300 characters"]),
    "history_decimal_comma.csv": ("history", ["row 7", "decimal commas"]),
    "history_utf16.csv": ("history", ["UTF-16"]),
}

# words a message must not contain: no file content echoed, no CSV advice for a TOML file
NOT_SAID = {
    "limits_table_outside.toml": ["root", "passwd:", "/bin/"],
    "train_bom.toml": ["CSV"],
}


def command(kind: str, path: Path, out: Path) -> list[str]:
    if kind == "track":
        return ["simulate", str(path), "--ideal", "--start-speed", "5", "-o", str(out)]
    if kind == "track+train":
        return ["simulate", str(path), "--train", str(SAMPLES / "thistle_comet_train.toml"),
                "--start-speed", "5", "-o", str(out)]
    if kind == "train":
        return ["simulate", str(GOOD_TRACK), "--train", str(path), "--start-speed", "5",
                "-o", str(out)]
    if kind == "ops":
        return ["simulate", str(GOOD_TRACK), "--ideal", "--operation", str(path), "-o",
                str(out)]
    if kind.startswith("limits"):
        limits = HERE / kind.split(":")[1] if ":" in kind else path
        return ["check-history", str(GOOD_HISTORY), "--limits", str(limits), "--json",
                str(out)]
    if kind == "cases":
        return ["check", str(GOOD_TRACK), "--ideal", "--start-speed", "5", "--cases", str(path),
                "--workers", "1", "--quiet", "--json", str(out)]
    return ["check-history", str(path), "--json", str(out)]


def test_corpus_is_complete():
    files = {p.name for p in HERE.iterdir()
             if not p.name.startswith("_") and p.suffix in (".csv", ".toml")}
    companions = {"limits_table_text.toml", "limits_table_missing_column.toml"}
    assert files - companions == set(CORPUS)
    assert len(CORPUS) >= 40
    kinds = {kind.split(":")[0].split("+")[0] for kind, _ in CORPUS.values()}
    assert kinds == {"track", "train", "ops", "limits", "cases", "history"}


@pytest.mark.parametrize("name", sorted(CORPUS))
def test_bad_input_gives_one_line_and_exit_2(name, tmp_path, capsys):
    kind, words = CORPUS[name]
    path = HERE / name
    fresh = tmp_path / "fresh.out"
    code = main(command(kind, path, fresh))
    err = capsys.readouterr().err
    assert code == 2, err
    lines = [line for line in err.splitlines() if line.startswith("checker: error:")]
    assert len(lines) == 1 and "Traceback" not in err, err
    assert name in lines[0], lines[0]
    for word in words:
        assert word in lines[0], (word, lines[0])
    assert " -- " in lines[0]  # the message says what to do
    for word in NOT_SAID.get(name, ()):
        assert word not in err, (word, err)
    assert not fresh.exists()
    kept = tmp_path / "kept.out"
    kept.write_text("previous output\n")
    assert main(command(kind, path, kept)) == 2
    capsys.readouterr()
    assert kept.read_text() == "previous output\n"
    assert not list(tmp_path.glob("*.part"))

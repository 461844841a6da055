"""Writes the bad-input corpus beside this file (run: python tests/bad_inputs/make_corpus.py).

Each file is malformed or suspicious in one way; tests/test_bad_inputs.py runs every one
through the command line. Files starting with an underscore are the good companions.
"""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent
ROWS = "".join(f"{x},0,0\n" for x in range(0, 40, 2))
TRAIN = ('[cars]\ncount = 2\nspacing_m = 2.5\nempty_mass_kg = 450\n'
         '[[seats]]\nname = "a"\nup_m = 1.0\n')
LIMITS_HEAD = '[meta]\ntitle = "bad"\n'
GZ = '[[duration]]\naxis = "gz"\ndirection = "positive"\npoints = [[0.0, 5.0], [2.0, 4.0]]\n'


def history(rows) -> str:
    return "t,gx,gy,gz\n" + "".join(f"{t:.3f},0,0,1\n" for t in rows)


TEXT = {
    # good companions
    "_good_track.csv": "x,y,z\n" + "".join(f"{x},0,0\n" for x in range(0, 200, 2)),
    "_good_history.csv": history([i / 100 for i in range(300)]),
    # track centerlines
    "track_empty.csv": "",
    "track_header_only.csv": "x,y,z\n",
    "track_semicolons.csv": "x;y;z\n" + ROWS.replace(",", ";"),
    "track_decimal_comma.csv": "x,y,z\n0,0,0\n1,5,0,0\n3,0,0\n4,0,0\n",
    "track_duplicated_column.csv": "x,y,z,x\n" + ROWS.replace("\n", ",0\n"),
    "track_missing_z.csv": "x,y\n" + "".join(f"{x},0\n" for x in range(10)),
    "track_misspelt_column.csv": "x,y,Z\n" + ROWS,
    "track_text_cell.csv": "x,y,z\n0,0,0\n2,0,0\n4,zero,0\n6,0,0\n",
    "track_nan.csv": "x,y,z\n0,0,0\n2,0,nan\n4,0,0\n6,0,0\n",
    "track_infinite.csv": "x,y,z\n0,0,0\n2,inf,0\n4,0,0\n6,0,0\n",
    "track_huge_values.csv": "x,y,z\n0,0,0\n1e300,0,0\n2e300,0,0\n3e300,0,0\n",
    "track_three_rows.csv": "x,y,z\n0,0,0\n2,0,0\n4,0,0\n",
    "track_repeated_point.csv": "x,y,z\n0,0,0\n2,0,0\n2,0,0\n4,0,0\n6,0,0\n",
    "track_kink.csv": "x,y,z\n0,0,0\n2,0,0\n4,0,0\n4,2,0\n4,4,0\n",
    "track_reversed_row.csv": "x,y,z\n0,0,0\n2,0,0\n4,0,0\n3,0,0\n6,0,0\n",
    "track_roll_and_up.csv": "x,y,z,roll_deg,up_x,up_y,up_z\n" + "".join(
        f"{x},0,0,0,0,0,1\n" for x in range(0, 12, 2)),
    "track_zero_up.csv": "x,y,z,up_x,up_y,up_z\n0,0,0,0,0,1\n2,0,0,0,0,0\n4,0,0,0,0,1\n"
                         "6,0,0,0,0,1\n",
    "track_up_along_tangent.csv": "x,y,z,up_x,up_y,up_z\n0,0,0,0,0,1\n2,0,0,1,0,0\n"
                                  "4,0,0,0,0,1\n6,0,0,0,0,1\n",
    "track_partial_up.csv": "x,y,z,up_x,up_y\n" + "".join(f"{x},0,0,0,0\n" for x in range(6)),
    "track_short_row.csv": "x,y,z\n0,0,0\n2,0\n4,0,0\n6,0,0\n",
    "track_shorter_than_train.csv": "x,y,z\n0,0,0\n1,0,0\n2,0,0\n3,0,0\n",
    "track_underscore_digits.csv": "x,y,z\n0,0,0\n2,0,0\n1_000,0,0\n6,0,0\n",
    "track_fullwidth_digits.csv": "x,y,z\n0,0,0\n2,0,0\n\uff14,0,0\n6,0,0\n",
    # a form feed and a line separator inside comments: the bad cell is still on line 6
    "track_formfeed_comment.csv": "# exported\x0cpage two\n# note\u2028more\nx,y,z\n0,0,0\n"
                                  "2,0,0\n4,zero,0\n6,0,0\n",
    "track_micrometre_spacing.csv": "x,y,z\n" + "".join(f"{i * 2e-6:.6f},0,0\n"
                                                         for i in range(100)),
    # trains
    "train_negative_mass.toml": TRAIN.replace("empty_mass_kg = 450", "empty_mass_kg = -450"),
    "train_zero_spacing.toml": TRAIN.replace("spacing_m = 2.5", "spacing_m = 0"),
    "train_unknown_key.toml": TRAIN + "[riders]\nmass_kgs = 80\n",
    "train_bad_syntax.toml": "[cars\ncount = 2\n",
    "train_no_seats.toml": "[cars]\ncount = 1\nempty_mass_kg = 400\n",
    "train_count_as_text.toml": TRAIN.replace("count = 2", 'count = "two"'),
    "train_duplicate_seat.toml": TRAIN + '[[seats]]\nname = "a"\n',
    "train_huge_mass.toml": TRAIN.replace("empty_mass_kg = 450", "empty_mass_kg = 1e30"),
    "train_occupancy_above_one.toml": TRAIN + "[riders]\noccupancy = 1.2\n",
    "train_long_seat_name.toml": TRAIN.replace('name = "a"', 'name = "' + "a" * 600 + '"'),
    # operation
    "ops_overlapping.toml": ('[[sections]]\nkind = "lift"\nstart_m = 10\nend_m = 60\n'
                             'speed_m_s = 3\n[[sections]]\nkind = "brake"\nstart_m = 50\n'
                             'end_m = 80\nspeed_m_s = 0\n'),
    "ops_unknown_kind.toml": '[[sections]]\nkind = "catapult"\nstart_m = 0\nend_m = 10\n',
    "ops_backwards.toml": ('[[sections]]\nkind = "brake"\nstart_m = 80\nend_m = 40\n'
                           'speed_m_s = 0\n'),
    "ops_launch_force_and_speed.toml": ('[[sections]]\nkind = "launch"\nstart_m = 5\n'
                                        'end_m = 40\nforce_n = 5000\nexit_speed_m_s = 20\n'),
    "ops_beyond_track.toml": ('[[sections]]\nkind = "lift"\nstart_m = 100\nend_m = 900\n'
                              'speed_m_s = 3\n'),
    "ops_negative_speed.toml": "start_speed_m_s = -4\n",
    # limits
    "limits_unknown_key.toml": LIMITS_HEAD + GZ + "[filter]\ncorner = 5\n",
    "limits_durations_not_increasing.toml": LIMITS_HEAD + GZ.replace("[2.0, 4.0]",
                                                                     "[0.0, 4.0]"),
    "limits_level_grows.toml": LIMITS_HEAD + GZ.replace("[2.0, 4.0]", "[2.0, 6.0]"),
    "limits_wrong_sign.toml": LIMITS_HEAD + GZ.replace("[2.0, 4.0]", "[2.0, -4.0]"),
    "limits_two_vertices.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                              'vertices = [[0, 0], [1, 2]]\n',
    "limits_self_intersecting.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                     'vertices = [[-1, 0], [1, 3], [1, 0], [-1, 3]]\n',
    "limits_rest_outside.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gx", "gz"]\n'
                                'vertices = [[-1, 2], [1, 2], [0, 4]]\n',
    "limits_corner_at_nyquist.toml": LIMITS_HEAD + "[filter]\ncorner_hz = 60\n" + GZ,
    "limits_table_text.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                              'table = "limits_table_text.csv"\n',
    "limits_table_text.csv": "gy,gz\n-1,-1\n1,-1\none,4\n-1,4\n",
    "limits_table_missing_column.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                        'table = "limits_table_missing_column.csv"\n',
    "limits_table_missing_column.csv": "gy,gx\n-1,-1\n1,-1\n1,4\n-1,4\n",
    "limits_table_outside.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                 'table = "../../../../../../../../etc/passwd"\n',
    "limits_table_absolute.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                  'table = "/etc/hostname"\n',
    "limits_level_huge.toml": LIMITS_HEAD + GZ.replace("[0.0, 5.0]", "[0.0, 1e300]"),
    "limits_vertices_huge.toml": LIMITS_HEAD + '[[combined]]\naxes = ["gy", "gz"]\n'
                                 'vertices = [[-1e300, -1e300], [1e300, -1e300], '
                                 '[1e300, 1e300], [-1e300, 1e300]]\n',
    "limits_corner_tiny.toml": LIMITS_HEAD + "[filter]\ncorner_hz = 1e-9\n" + GZ,
    # load cases
    "cases_bad_occupancy.toml": '[[case]]\nname = "x"\noccupancy = "most"\n',
    "cases_unknown_key.toml": '[[case]]\nname = "x"\nhead_wind = 5\n',
    "cases_none.toml": "# no cases\n",
    "cases_wrong_car_count.toml": '[[case]]\nname = "x"\noccupancy = [1, 0, 1]\n',
    # recorded histories
    "history_time_backwards.csv": history([0.0, 0.01, 0.02, 0.03, 0.025, 0.05, 0.06, 0.07,
                                           0.08, 0.09]),
    "history_gap.csv": history([i / 100 for i in range(20) if i != 10]),
    "history_irregular.csv": history([0, 0.01, 0.02, 0.035, 0.04, 0.05, 0.06, 0.07, 0.08]),
    "history_missing_gz.csv": "t,gx,gy\n" + "".join(f"{i / 100},0,0\n" for i in range(20)),
    "history_few_samples.csv": history([0, 0.01, 0.02]),
    "history_text_cell.csv": history([i / 100 for i in range(20)]).replace("0.050,0,0,1",
                                                                           "0.050,0,0,high"),
    "history_long_seat_name.csv": "seat,t,gx,gy,gz\n" + "".join(
        f"{'s' * 300},{i / 100:.2f},0,0,1\n" for i in range(20)),
    "history_decimal_comma.csv": history([i / 100 for i in range(20)]).replace(
        "0.050,0,0,1", "0,050,0,0,1"),
}

BINARY = {
    "track_binary.csv": bytes(range(256)) * 4,
    "track_utf16.csv": ("x,y,z\n" + ROWS).encode("utf-16"),
    "track_bom.csv": b"\xef\xbb\xbf" + ("x,y,z\n" + ROWS).encode(),
    "train_binary.toml": b"\x00\x01\x02PK\x03\x04" * 20,
    "train_bom.toml": b"\xef\xbb\xbf" + TRAIN.encode(),
    "limits_latin1.toml": (LIMITS_HEAD.replace("bad", "caf\xe9") + GZ).encode("latin-1"),
    "history_utf16.csv": history([i / 100 for i in range(20)]).encode("utf-16"),
}


def main() -> None:
    for name, text in TEXT.items():
        (HERE / name).write_text(text, encoding="utf-8")
    for name, data in BINARY.items():
        (HERE / name).write_bytes(data)


if __name__ == "__main__":
    main()

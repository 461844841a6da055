"""Logger files through an instrument description, and a record against its simulation."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from pagetext import page_texts, placed_figures

from checker.cli import main
from checker.conditioning import FilterSpec
from checker.constants import G0
from checker.correlate import correlate_record, correlate_signals
from checker.errors import InputError
from checker.history import load_record
from checker.instrument import load_instrument
from checker.ride import RideOptions, load_inputs, run_ride

SAMPLES = Path(__file__).resolve().parent.parent / "sample_tracks"
RECORD = SAMPLES / "thistle_comet_revB_recorded_synthetic.csv"
TRACK = SAMPLES / "thistle_comet_revB.csv"
TRAIN = SAMPLES / "thistle_comet_train.toml"
OPS = SAMPLES / "thistle_comet_revB.operation.toml"


def rider_signal(t: np.ndarray) -> np.ndarray:
    """A made-up rider history (rider axes, g): at rest for 2 s, then distinct motion on
    every axis, so that a wrong axis mapping cannot go unnoticed."""
    moving = t > 2.0
    gx = np.where(moving, 0.3 * np.sin(1.3 * t), 0.0)
    gy = np.where(moving, -0.5 * np.sin(0.7 * t), 0.0)
    gz = 1.0 + np.where(moving, 1.2 * np.sin(0.4 * t) ** 2, 0.0)
    return np.column_stack([gx, gy, gz])


def write(path: Path, text: str) -> Path:
    path.write_text(text)
    return path


def logger_file(tmp_path: Path, t: np.ndarray, g_rider: np.ndarray) -> Path:
    """A logger export: time in ms, acceleration in m/s^2, mounted with logger x = rider -y,
    logger y = rider +x, logger z = rider +z, plus two columns to ignore."""
    logger = np.column_stack([-g_rider[:, 1], g_rider[:, 0], g_rider[:, 2]]) * G0
    rows = ["stamp,ax,ay,az,temp_c,note"]
    rows += [f"{ti * 1000:.3f},{a:.6f},{b:.6f},{c:.6f},21.5,ok"
             for ti, (a, b, c) in zip(t, logger)]
    return write(tmp_path / "log.csv", "\n".join(rows) + "\n")


INSTRUMENT = """
ignore = ["temp_c", "note"]
[time]
column = "stamp"
unit = "ms"
max_gap_s = 0.2
[acceleration]
columns = ["ax", "ay", "az"]
unit = "m/s2"
[mounting]
x = "-y"
y = "+x"
z = "+z"
"""


def test_instrument_maps_swapped_and_inverted_axes_ms_and_extra_columns(tmp_path):
    # The rider history is known (it made the file); reading it back through the mounting,
    # the ms time base and the m/s^2 unit (g0 = 9.80665 m/s^2, CGPM 1901) must return it.
    t = np.arange(0.0, 6.0, 0.01)
    g = rider_signal(t)
    inst = load_instrument(write(tmp_path / "i.toml", INSTRUMENT))
    record = load_record(logger_file(tmp_path, t, g), instrument=inst)
    (sig,) = record.signals
    assert np.allclose(sig.t, t, atol=1e-9)
    assert np.allclose(sig.g, g, atol=1e-6)
    assert "logger x = rider -y" in record.method


def test_jitter_is_refused_naming_rows_and_resampled_on_request(tmp_path):
    # Jittered stamps (+-2 ms on a 10 ms step): refused without --resample (rows named);
    # with it, a uniform grid whose values follow the known signal (linear interpolation of
    # a smooth signal: error of order step^2 * |g''| / 8), and the jitter is reported.
    rng = np.random.default_rng(5)
    t = np.arange(0.0, 6.0, 0.01) + rng.uniform(-0.002, 0.002, 600)
    t[0] = 0.0
    g = rider_signal(t)
    inst = load_instrument(write(tmp_path / "i.toml", INSTRUMENT))
    path = logger_file(tmp_path, t, g)
    with pytest.raises(InputError) as err:
        load_record(path, instrument=inst)
    assert "rows" in err.value.message() and "--resample" in err.value.message()
    record = load_record(path, instrument=inst, resample_hz=100.0)
    (sig,) = record.signals
    assert np.allclose(np.diff(sig.t), 0.01)
    assert np.max(np.abs(sig.g - rider_signal(sig.t))[sig.t > 2.1]) < 2e-3
    assert any("jitter" in n and "largest gap" in n for n in record.notes)


def test_downsampling_removes_what_the_new_rate_cannot_carry(tmp_path):
    # A 40 Hz tone on a slow signal, recorded at 1 kHz with jitter, re-sampled at 50 Hz: the
    # tone is above the new Nyquist frequency (25 Hz, Nyquist-Shannon) and must not fold back
    # as a 10 Hz alias; the anti-alias step removes it.
    rng = np.random.default_rng(2)
    t = np.arange(0.0, 6.0, 0.001) + rng.uniform(-2e-4, 2e-4, 6000)
    t[0] = 0.0
    g = rider_signal(t)
    g[:, 2] += 0.5 * np.sin(2 * np.pi * 40.0 * t)
    inst = load_instrument(write(tmp_path / "i.toml", INSTRUMENT))
    record = load_record(logger_file(tmp_path, t, g), instrument=inst, resample_hz=50.0)
    (sig,) = record.signals
    inside = (sig.t > 2.5) & (sig.t < 5.5)
    assert np.max(np.abs(sig.g[inside, 2] - rider_signal(sig.t)[inside, 2])) < 0.05
    assert any("anti-alias" in n for n in record.notes)


def test_long_gap_splits_the_record_and_is_never_bridged(tmp_path):
    t = np.concatenate([np.arange(0.0, 3.0, 0.01), np.arange(4.0, 6.0, 0.01)])
    inst = load_instrument(write(tmp_path / "i.toml", INSTRUMENT))
    record = load_record(logger_file(tmp_path, t, rider_signal(t)), instrument=inst)
    assert [s.seat for s in record.signals] == ["recorded part 1", "recorded part 2"]
    assert record.signals[0].t[-1] < 3.0 and record.signals[1].t[0] >= 4.0
    assert any("split" in n for n in record.notes)


def test_zero_offset_at_rest_is_a_review_item(tmp_path):
    # At rest in a level seat an accelerometer reads (0, 0, 1) g (specific force); a logger
    # offset of 0.12 g on its x axis (rider -y) shows on the rider's Gy.
    t = np.arange(0.0, 6.0, 0.01)
    g = rider_signal(t)
    inst = load_instrument(write(tmp_path / "i.toml", INSTRUMENT))
    clean = load_record(logger_file(tmp_path, t, g), instrument=inst)
    assert not any("zero offset" in n for n in clean.notes)
    g[:, 1] -= 0.12
    off = load_record(logger_file(tmp_path, t, g), instrument=inst)
    assert any("zero offset" in n and "Gy -0.120" in n for n in off.notes)


def test_several_seats_interleaved_and_in_column_groups(tmp_path):
    t = np.arange(0.0, 3.0, 0.01)
    g = rider_signal(t)
    rows = ["seat,t,gx,gy,gz"]
    for i, ti in enumerate(t):
        for seat, k in (("front", 1.0), ("rear", 2.0)):
            rows.append(f"{seat},{ti:.3f},{k * g[i, 0]:.6f},{g[i, 1]:.6f},{g[i, 2]:.6f}")
    record = load_record(write(tmp_path / "a.csv", "\n".join(rows) + "\n"))
    front, rear = record.signals
    assert (front.seat, rear.seat) == ("front", "rear")
    assert np.allclose(rear.g[:, 0], 2 * front.g[:, 0], atol=1e-5)
    groups = """
[time]
column = "t"
[[seats]]
name = "front"
columns = ["x1", "y1", "z1"]
[[seats]]
name = "rear"
columns = ["x2", "y2", "z2"]
"""
    rows = ["t,x1,y1,z1,x2,y2,z2"] + [
        f"{ti:.3f},{a:.6f},{b:.6f},{c:.6f},{2 * a:.6f},{b:.6f},{c:.6f}"
        for ti, (a, b, c) in zip(t, g)]
    inst = load_instrument(write(tmp_path / "g.toml", groups))
    record = load_record(write(tmp_path / "b.csv", "\n".join(rows) + "\n"), instrument=inst)
    front, rear = record.signals
    assert (front.seat, rear.seat) == ("front", "rear")
    assert np.allclose(rear.g[:, 0], 2 * front.g[:, 0], atol=1e-5)


def test_bad_mounting_is_refused(tmp_path):
    bad = INSTRUMENT.replace('y = "+x"', 'y = "-y"')
    with pytest.raises(InputError, match="same rider axis"):
        load_instrument(write(tmp_path / "i.toml", bad))


def test_synthetic_record_against_its_own_simulation():
    # The demo's synthetic record is the simulation of rev B's front-left seat plus seeded
    # noise (0.04 g) and a 14 Hz buzz (sample_tracks/generate.py): aligned, its offset is
    # zero within a sample and the filtered differences are of the noise's size; shifted by
    # a known 1.37 s, the shift comes back.
    record = load_record(RECORD)
    line, train, ops = load_inputs(TRACK, TRAIN, operation=OPS)
    ride = run_ride(line, train, ops, RideOptions(rate_hz=100.0))
    (c,) = correlate_record(record.signals, ride.histories, FilterSpec())
    assert c.simulated_seat == "car1-r1L"
    assert abs(c.offset_s) < 0.005
    assert all(a.rms_g < 0.03 for a in c.axes)
    sig = record.signals[0]
    sim = next(h for h in ride.histories if h.seat == sig.seat)
    shifted = correlate_signals("shifted", sig.t + 1.37, sig.g, sim.seat, sim.t, sim.g,
                                FilterSpec())
    assert shifted.offset_s == pytest.approx(1.37, abs=0.005)
    cut = correlate_signals("late start", sig.t[500:] - 0.8, sig.g[500:], sim.seat, sim.t,
                            sim.g, FilterSpec())
    assert cut.offset_s == pytest.approx(-0.8, abs=0.005)


def test_correlate_command_writes_json_and_pdf(tmp_path, capsys):
    out_json, out_pdf = tmp_path / "c.json", tmp_path / "c.pdf"
    code = main(["correlate", str(RECORD), str(TRACK), "--train", str(TRAIN), "--operation",
                 str(OPS), "--rate", "100", "--json", str(out_json), "--pdf", str(out_pdf)])
    assert code == 0
    doc = json.loads(out_json.read_text())
    assert "not a certification" in doc["caution"]
    (c,) = doc["correlations"]
    assert abs(c["offset_s"]) < 0.005 and c["method"].startswith("cross-correlation")
    assert out_pdf.read_bytes()[:4] == b"%PDF"
    assert placed_figures(out_pdf) == 1  # the recorded seat's traces
    assert "car1-r1L" in capsys.readouterr().out


def test_correlate_pdf_alone_writes_its_json_sidecar(tmp_path):
    out_pdf = tmp_path / "alone.pdf"
    code = main(["correlate", str(RECORD), str(TRACK), "--train", str(TRAIN), "--operation",
                 str(OPS), "--rate", "100", "--pdf", str(out_pdf)])
    assert code == 0
    assert out_pdf.read_bytes()[:4] == b"%PDF"
    assert json.loads((tmp_path / "alone.json").read_text())["correlations"]


def test_check_history_reads_a_logger_file_and_refuses_a_bad_instrument(tmp_path, capsys):
    rng = np.random.default_rng(9)
    t = np.arange(0.0, 6.0, 0.01) + rng.uniform(-0.002, 0.002, 600)
    t[0] = 0.0
    path = logger_file(tmp_path, t, rider_signal(t))
    inst = write(tmp_path / "i.toml", INSTRUMENT)
    out_json = tmp_path / "f.json"
    assert main(["check-history", str(path), "--instrument", str(inst)]) == 2
    assert "--resample" in capsys.readouterr().err
    code = main(["check-history", str(path), "--instrument", str(inst), "--resample", "100",
                 "--json", str(out_json)])
    assert code in (0, 1)
    assert "jitter" in capsys.readouterr().err
    bad = write(tmp_path / "bad.toml", INSTRUMENT.replace('x = "-y"', 'x = "-w"'))
    assert main(["check-history", str(path), "--instrument", str(bad), "--resample",
                 "100"]) == 2
    err = capsys.readouterr().err
    assert "mounting.x" in err and len(err.strip().splitlines()) == 1


def test_report_method_says_what_was_done_to_the_record(tmp_path):
    # A record read through an instrument file and re-sampled on request: the report's method
    # text must say so and must not claim that axes were left alone or stamps never
    # re-sampled; a plain record keeps the plain wording.
    from checker import check_history
    from checker.report import method_of

    rng = np.random.default_rng(5)
    t = np.arange(0.0, 6.0, 0.01) + rng.uniform(-0.002, 0.002, 600)
    t[0] = 0.0
    instrument = write(tmp_path / "i.toml", INSTRUMENT)
    done = " ".join(method_of(check_history(logger_file(tmp_path, t, rider_signal(t)),
                                            instrument=instrument, resample_hz=100.0)))
    assert "re-sampled as stated" in done and "mounting" in done
    assert "never re-sampled" not in done and "rotate axes" not in done
    assert "irregular parts re-sampled at 100 Hz" in done and "logger x = rider -y" in done
    plain = " ".join(method_of(check_history(RECORD)))
    assert "never re-sampled" in plain and "rotate axes" in plain


def test_record_report_speaks_of_times_not_stations():
    # recorded data carry no station: the method appendix leaves out the station note, the
    # uplift table gives the flight's start time and the zone table has no station column
    from checker import check_history
    from checker.events import RECORD_GAP_S
    from checker.report import check_report_pdf

    text = "\n".join(page_texts(check_report_pdf(check_history(RECORD))))
    flat = " ".join(text.split())
    assert "Stations are those" not in flat and "Station [m]" not in flat
    assert f"time ranges overlap or lie within {RECORD_GAP_S:g} s" in flat
    assert "Off the seat [s] From [s] Lowest Gz [g]" in flat  # the uplift table's head
    assert "Highest zone From [s] Longest outside every zone [s]" in flat
    # no load case either (a record is one ride as it was), and the caution quotes the
    # record file's own notes on where it came from (here: synthetic, not measured)
    assert "case" not in flat.replace("no load case is involved", "").lower()
    assert "nominal" not in flat
    assert "its file says: \u201cSYNTHETIC test-ride record" in flat


def test_checking_a_record_leaves_the_heavy_libraries_unloaded():
    # start-up is most of a record check's cost: scipy.signal's namespace (about 1 s),
    # scipy.interpolate (a record has no track to fit) and matplotlib (no figure without
    # --pdf) must stay unloaded
    import subprocess
    import sys

    code = ("import sys; from checker.cli import main; "
            f"code = main(['check-history', {str(RECORD)!r}]); "
            "heavy = [m for m in ('scipy.signal', 'scipy.interpolate', 'scipy.stats', "
            "'matplotlib') if m in sys.modules]; print('HEAVY', code, *heavy)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=True).stdout
    assert out.splitlines()[-1] == "HEAVY 0"


@pytest.mark.parametrize("cell, column, row", [("1e300", "gz", 102), ("-2500", "gx", 102)])
def test_readings_beyond_any_ride_are_refused_with_row_and_column(tmp_path, capsys, cell,
                                                                  column, row):
    # a 1e300 g reading overflowed the filter and the flights (null peaks in the JSON, an
    # internal error with --pdf); anything beyond 1000 g is refused before any work
    t = np.arange(400) / 200.0
    rows = ["t,gx,gy,gz"] + [f"{a:.3f},0,0,1" for a in t]
    values = {"gx": "0", "gy": "0", "gz": "1", column: cell}
    rows[row - 1] = f"{t[row - 2]:.3f},{values['gx']},{values['gy']},{values['gz']}"
    record = tmp_path / "record.csv"
    record.write_text("\n".join(rows) + "\n")
    out = tmp_path / "out.json"
    assert main(["check-history", str(record), "--json", str(out)]) == 2
    err = capsys.readouterr().err.strip().splitlines()
    assert len(err) == 1 and f"row {row}, column '{column}'" in err[0] and "1000 g" in err[0]
    assert not out.exists()


def test_a_record_of_part_of_the_ride_aligns_with_its_own_simulation():
    # The record is the first 10 s of the simulated signal itself, the ride's later part at
    # another mean level (Gz higher after 20 s). Correlating with whole-signal means biased
    # the peak (8 ms and 0.15 g of false difference on a trial's record of a ride's first
    # 10 s; 0.2 ms and 0.005 g here); the coefficient over each lag's overlap finds 0.
    rng = np.random.default_rng(3)
    t = np.arange(0.0, 60.0, 1 / 200)
    g = np.zeros((len(t), 3))
    for i, level in enumerate((0.0, 0.0, 1.0)):
        for f, a, p in zip(rng.uniform(0.2, 3.0, 6), rng.uniform(0.1, 0.6, 6),
                           rng.uniform(0, 2 * np.pi, 6)):
            g[:, i] += a * np.sin(2 * np.pi * f * t + p)
        g[:, i] += level
    g[:, 2] += 1.5 * np.clip((t - 20.0) / 5.0, 0.0, 1.0)  # a later, heavier part of the ride
    part = t < 10.0
    found = correlate_signals("rec", t[part], g[part], "sim", t, g, FilterSpec())
    assert abs(found.offset_s) < 2e-5  # the same samples: no offset (old: 2e-4 s)
    assert all(a.peak_g < 1e-3 for a in found.axes), [a.peak_g for a in found.axes]

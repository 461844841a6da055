"""Load cases, the worst case, revision comparison and the Dask executor."""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pytest
from pagetext import opening_sections, page_texts, running_heads
from shapes import vertical_loop

from checker.cli import main
from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits
from checker.loadcases import LoadCase, load_cases
from checker.operation import Operation
from checker.ride import RideOptions
from checker.sweep import run_cases
from checker.track import Centerline
from checker.train import Seat, Train

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"
TRAIN = Train(car_count=3, spacing_m=2.0, seats=(Seat("a", up_m=1.0),), rolling_coefficient=0.02,
              drag_area_m2=1.0)


def loop_layout() -> Centerline:
    """A 60 m level lead-in, then one circular vertical loop of radius 9 m."""
    lead = np.column_stack([np.linspace(-60, -1, 60), np.zeros(60), np.zeros(60)])
    return Centerline(np.vstack([lead, vertical_loop(9.0, 1.0, 360)]))


def test_lower_resistance_case_is_faster_and_governs_loop_gz():
    # Energy argument: less rolling resistance loses less energy before the loop, so the
    # train is faster there and v^2 / R (and Gz at the bottom) is higher.
    limits = load_limits(BUNDLED_LIMITS)
    cases = [LoadCase("sticky", rolling_coefficient_factor=2.0),
             LoadCase("slick", rolling_coefficient_factor=0.25)]
    sweep = run_cases(loop_layout(), TRAIN, Operation(start_speed_m_s=23.0), limits,
                      RideOptions(), cases, workers=1)
    by_case = {o.case: o for o in sweep.outcomes}
    assert not any(o.stall for o in sweep.outcomes)
    assert by_case["slick"].duration_s < by_case["sticky"].duration_s  # faster round
    gz = {name: max(p["gz"][1] for p in o.peaks.values()) for name, o in by_case.items()}
    assert gz["slick"] > gz["sticky"]
    governing = {f.rule: f for f in sweep.governing()}
    assert governing["duration +Gz"].case == "slick"


def test_occupancy_words_and_lists(tmp_path):
    path = tmp_path / "cases.toml"
    path.write_text('[[case]]\nname = "fh"\noccupancy = "front-half"\n'
                    '[[case]]\nname = "list"\noccupancy = [1, 0.5, 0]\n')
    fh, lst = load_cases(path)
    assert fh.occupancy_by_car(5) == (1.0, 1.0, 1.0, 0.0, 0.0)
    assert lst.occupancy_by_car(3) == (1.0, 0.5, 0.0)


@pytest.mark.parametrize("text, words", [
    ('[[case]]\nname = "a"\noccupancy = "half"\n', ["case[1].occupancy", "not one of"]),
    ('[[case]]\nname = "a"\nrider_mas_kg = 80\n', ["rider_mas_kg", "not a known key"]),
    ('[[case]]\nname = "a"\n[[case]]\nname = "a"\n', ["used twice"]),
    ('title = "x"\n', ["'title'"]),
])
def test_bad_cases_file(tmp_path, capsys, text, words):
    path = tmp_path / "cases.toml"
    path.write_text(text)
    code = main(["check", str(SAMPLES / "thistle_comet_revB.csv"), "--ideal",
                 "--start-speed", "5", "--cases", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1
    for w in words:
        assert w in err


def demo_args(old: str, new: str) -> list[str]:
    return ["compare", str(SAMPLES / f"thistle_comet_rev{old}.csv"),
            str(SAMPLES / f"thistle_comet_rev{new}.csv"),
            "--train", str(SAMPLES / "thistle_comet_train.toml"),
            "--old-operation", str(SAMPLES / f"thistle_comet_rev{old}.operation.toml"),
            "--new-operation", str(SAMPLES / f"thistle_comet_rev{new}.operation.toml"),
            "--quiet", "--workers", "2"]


def test_compare_revision_with_itself_changes_nothing(tmp_path):
    out = tmp_path / "same.json"
    assert main(demo_args("A", "A") + ["--json", str(out)]) == 0
    doc = json.loads(out.read_text())
    assert doc["regression"] is False
    assert {c["status"] for c in doc["changes"]} == {"same"}
    assert all(abs(p["change"]) < 1e-9 for p in doc["peaks"])


def _event_table_text(pdf: Path) -> str:
    """The comparison PDF's event table as one line of text (pypdf reads it back)."""
    from pypdf import PdfReader

    text = " ".join(page.extract_text() for page in PdfReader(pdf).pages)
    text = " ".join(text.split())
    start = text.index("Change Rule Old event: where New event: where")
    return text[start:text.index("Peak values per seat", start)]


COMPARE_SECTIONS = {"Verdicts", "Event changes", "Elevations", "Inputs and reproduction",
                    "Peak values per seat (filtered, over all load cases)",
                    "Appendix: every finding's change"}


def check_compare_pages(pdf: Path, gone: int) -> None:
    """The comparison's pages: every one has a running head naming the section it opens in;
    each page of the focus seat names the seat in its head and in every figure's caption;
    the elevations' caption says what the red crosses mark; the finding list repeats its
    column headings on every page; nothing reaches past the right margin; seat names are
    never broken."""
    import pypdfium2 as pdfium

    pages = page_texts(pdf)
    heads = running_heads(pages)
    seat_heads = {h for h in heads if h.startswith("Seat ")}
    assert len(seat_heads) == 1
    assert heads == opening_sections(pages, COMPARE_SECTIONS | seat_heads, "Summary")
    seat = next(iter(seat_heads)).split(",")[0]  # "Seat car1-r1R"
    for text, head in zip(pages, heads):
        if "old (dashed)" in text or "new (solid), old (dotted)" in text:
            assert head.startswith(seat) and text.count(seat + ", case") >= 2, head
    flat = " ".join(" ".join(pages).split())
    assert f"Red crosses: the worst point (station of the filtered peak) of each finding of " \
           f"that revision ({gone} old, 0 new)" in flat
    listing = [t for t, h in zip(pages, heads) if h.startswith("Appendix")]
    assert len(listing) >= 2 and all(re.search(r"^change +rule +seat", t, re.M)
                                     for t in listing)
    assert not re.search(r"car\d-\s*\n", "\n".join(pages))  # "car1-" / "r1L"
    doc = pdfium.PdfDocument(str(pdf))
    for i in range(len(doc)):
        page, text = doc[i], doc[i].get_textpage()
        right = page.get_width() - 16 / 25.4 * 72  # the 16 mm right margin, in points
        edges = [text.get_charbox(k)[2] for k in range(text.count_chars())
                 if not text.get_text_range(k, 1).isspace()]  # not the made-up line breaks
        assert max(edges) <= right + 1.0, f"page {i + 1} reaches {max(edges) - right:.1f} pt " \
                                          "past the margin"


def _margin(event: dict) -> str:
    """The worst margin as the documents print it (2 decimals in g, 1 in g/s and %)."""
    digits = 2 if event["unit"] == "g" else 1
    return f"{event['margin']:.{digits}f} {event['unit']}"


def _where(event: dict) -> str:
    a, b = event["station_range_m"]
    return f"{a:.1f}-{b:.1f} m"


def test_compare_a_to_b_loop_findings_gone_and_b_to_a_regresses(tmp_path):
    pdf = tmp_path / "ab.pdf"
    assert main(demo_args("A", "B") + ["--pdf", str(pdf)]) == 0
    doc = json.loads((tmp_path / "ab.json").read_text())  # the PDF's sidecar
    gone = [c for c in doc["changes"] if c["status"] == "gone"]
    assert gone and all(c["old"]["rule"] for c in gone)
    assert any(c["old"]["rule"] == "duration +Gz" for c in gone)
    assert pdf.exists() and pdf.stat().st_size > 10_000
    # organised by event: every event of revision A (its own check groups 156 findings into
    # events) is gone, each finding belongs to one of them, and each row reads back from the
    # PDF with its old station range, old worst margin with its unit, and the word gone
    events = doc["events"]
    assert events and {e["status"] for e in events} == {"gone"}
    assert sum(e["old"]["findings"] for e in events) == len(gone) == doc["old"]["findings"]
    table = _event_table_text(pdf)
    assert "nan" not in table
    rules = "|".join(sorted({re.escape(e["rule"]) for e in events}))
    rows = re.findall(rf"\b(?:gone|new|worse|better|same) (?:{rules}) ", table)
    assert len(rows) == len(events)
    at = 0
    for e in events:
        old = e["old"]
        row = re.compile(rf"gone {re.escape(e['rule'])} {old['id']} "
                         rf"{re.escape(_where(old))} .*?none .*?{old['seats']} \S+ 0 of 24 "
                         rf"{re.escape(_margin(old))} gone")
        found = row.search(table, at)
        assert found, f"no row for {old['id']} {e['rule']} in: {table[at:at + 300]}"
        at = found.end()
    check_compare_pages(pdf, len(gone))
    # the other way round: the same places come back as new events, with the new margins
    ba = tmp_path / "ba.pdf"
    assert main(demo_args("B", "A") + ["--pdf", str(ba)]) == 1
    back = json.loads(ba.with_suffix(".json").read_text())["events"]
    assert {e["status"] for e in back} == {"new"} and len(back) == len(events)
    table = _event_table_text(ba)
    for e in back:
        new = e["new"]
        assert re.search(rf"new {re.escape(e['rule'])} none {new['id']} "
                         rf"{re.escape(_where(new))} .*?0 \S+ {new['seats']} of 24 new "
                         rf"{re.escape(_margin(new))}", table), e["rule"]


def test_dask_cluster_gives_the_same_results_as_local():
    distributed = pytest.importorskip("distributed")
    limits = load_limits(BUNDLED_LIMITS)
    cases = [LoadCase("full", occupancy="full"), LoadCase("empty", occupancy="empty")]
    args = (loop_layout(), TRAIN, Operation(start_speed_m_s=23.0), limits, RideOptions(),
            cases)
    local = run_cases(*args, workers=1)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=2, processes=True,
                                  host="127.0.0.1", dashboard_address=None,
                                  protocol="tcp") as cluster:
        remote = run_cases(*args, scheduler=cluster.scheduler_address)
    assert [o.case for o in remote.outcomes] == [o.case for o in local.outcomes]
    for a, b in zip(local.outcomes, remote.outcomes):
        assert [f.to_dict() for f in a.evaluation.findings] == \
            [f.to_dict() for f in b.evaluation.findings]
        assert a.peaks == b.peaks


def test_sweep_json_is_byte_identical_across_runs(tmp_path, capsys):
    cases = tmp_path / "cases.toml"
    cases.write_text('[[case]]\nname = "full"\noccupancy = "full"\n'
                     '[[case]]\nname = "empty"\noccupancy = "empty"\n')
    outs = []
    for name, workers in (("one.json", "1"), ("two.json", "2")):
        out = tmp_path / name
        main(["check", str(SAMPLES / "thistle_comet_revB.csv"), "--train",
              str(SAMPLES / "thistle_comet_train.toml"), "--operation",
              str(SAMPLES / "thistle_comet_revB.operation.toml"), "--cases", str(cases),
              "--workers", workers, "--quiet", "--json", str(out)])
        doc = json.loads(out.read_text())
        doc.pop("command")  # the command line names the output file
        outs.append(json.dumps(doc, sort_keys=True))
    assert outs[0] == outs[1]


def test_sweep_report_shows_governing_case_and_matrix(tmp_path, capsys):
    from pypdf import PdfReader

    cases = tmp_path / "cases.toml"
    cases.write_text('[[case]]\nname = "slow-lift"\nlift_speed_factor = 0.9\n'
                     '[[case]]\nname = "warm-fast"\nrolling_coefficient_factor = 0.5\n'
                     'lift_speed_factor = 1.2\n')
    pdf = tmp_path / "sweep.pdf"
    code = main(["check", str(SAMPLES / "thistle_comet_revA.csv"), "--train",
                 str(SAMPLES / "thistle_comet_train.toml"), "--operation",
                 str(SAMPLES / "thistle_comet_revA.operation.toml"), "--cases", str(cases),
                 "--workers", "2", "--quiet", "--pdf", str(pdf)])
    printed = capsys.readouterr().out
    assert code == 1
    assert "governing seat and case per rule" in printed and "slow-lift" in printed
    text = " ".join(" ".join(p.extract_text() for p in PdfReader(str(pdf)).pages).split())
    assert "Governing seat / case" in text  # each event names its governing seat and case
    assert "Verdict by seat and load case" in text and "warm-fast" in text
    doc = json.loads(pdf.with_suffix(".json").read_text())
    assert set(doc["matrix"]["car1-r1L"]) == {"slow-lift", "warm-fast"}
    # the rounded track's warning comes from every case's ride: said once, not once a case
    grid = [w for w in doc["warnings"] if "track coordinates sit on" in w]
    assert len(grid) == 1 and grid[0].startswith("every case: ")
    assert doc["governing"] and all(g["case"] in ("slow-lift", "warm-fast")
                                    for g in doc["governing"])


def test_progress_bar_only_on_a_terminal(monkeypatch, capsys):
    import sys

    from checker.cli import Progress

    monkeypatch.setattr(sys.stderr, "isatty", lambda: True, raising=False)
    bar = Progress("cases", quiet=False)
    bar(1, 4)
    bar(4, 4)
    err = capsys.readouterr().err
    assert "cases [" in err and "4/4" in err and err.endswith("\n")
    quiet = Progress("cases", quiet=True)
    quiet(1, 2)
    assert capsys.readouterr().err == ""


def test_compare_focus_from_the_sweep_equals_rides_run_again(monkeypatch):
    # The figures' seat comes with the signals the sweep kept; a sweep that kept none makes
    # compare_layouts run both rides again. Both must draw the same arrays.
    from dataclasses import replace

    from checker import application

    def compared():
        return application.compare_layouts(
            SAMPLES / "thistle_comet_revA.csv", SAMPLES / "thistle_comet_revB.csv",
            train=SAMPLES / "thistle_comet_train.toml",
            old_operation=SAMPLES / "thistle_comet_revA.operation.toml",
            new_operation=SAMPLES / "thistle_comet_revB.operation.toml", workers=1)

    runs = []
    run_check = application.run_check
    monkeypatch.setattr(application, "run_check",
                        lambda *a, **k: runs.append(a) or run_check(*a, **k))
    kept = compared().focus
    assert runs == []  # the sweep kept every seat of its first (here only) case

    run_layouts = application.run_layouts
    monkeypatch.setattr(application, "run_layouts", lambda *a, **k: [
        replace(sweep, outcomes=[replace(o, kept={}) for o in sweep.outcomes])
        for sweep in run_layouts(*a, **k)])
    again = compared().focus
    assert len(runs) == 2
    assert (kept.seat, kept.case) == (again.seat, again.case) == ("car1-r1R", "nominal")
    for name in ("old", "new"):
        a, b = getattr(kept, name), getattr(again, name)
        np.testing.assert_array_equal(a.filtered, b.filtered)
        np.testing.assert_array_equal(a.t, b.t)
        assert a.findings == b.findings
        ga, gb = getattr(kept, f"{name}_geometry"), getattr(again, f"{name}_geometry")
        np.testing.assert_array_equal(ga.position, gb.position)
    np.testing.assert_array_equal(kept.new_signal.g, again.new_signal.g)

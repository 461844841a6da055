"""The bundled demo end to end, and the generator's reproducibility."""

from __future__ import annotations

import importlib.util
import json
import re
import shlex
import sys
from pathlib import Path

import numpy as np
from pagetext import opening_sections, page_texts, placed_figures, running_heads
from pypdf import PdfReader

from checker.cli import main
from checker.conditioning import lowpass
from checker.documents import BUNDLED_LIMITS
from checker.limits import load_limits
from checker.ride import load_inputs, run_ride

SAMPLES = Path(__file__).resolve().parents[1] / "sample_tracks"
# the check report's section headings (report.html.j2), seat sections aside
SECTIONS = ("Events in detail", "Ride statistics", "Record statistics", "Layout", "Design aids",
            "Appendix A: every seat and every finding", "Appendix B: method",
            "Appendix C: the limit set in full", "Appendix D: inputs and reproduction")


def generator():
    if "demo_generate" not in sys.modules:
        spec = importlib.util.spec_from_file_location("demo_generate",
                                                      SAMPLES / "generate.py")
        module = importlib.util.module_from_spec(spec)
        sys.modules["demo_generate"] = module  # dataclasses look their module up
        spec.loader.exec_module(module)
    return sys.modules["demo_generate"]


def loop_stations(rev: str) -> tuple[float, float]:
    """Stations of the loop, from the generator's element marks (heartline stations, which
    differ from rail stations by much less than the margin used)."""
    marks = generator().build({"A": "circular", "B": "teardrop"}[rev]).marks
    return marks["loop_start"], marks["loop_end"]


def test_demo_writes_both_reports_with_expected_verdicts(tmp_path, capsys):
    out = tmp_path / "demo"
    assert main(["demo", "--out", str(out)]) == 0
    printed = capsys.readouterr().out
    assert "revision A (circular loop): FAIL" in printed
    assert "revision B (teardrop loop): PASS" in printed
    for rev, drawn in (("A", 22), ("B", 6)):  # figures of this run, pinned
        pdf = out / f"thistle_comet_rev{rev}.pdf"
        assert pdf.exists() and len(PdfReader(str(pdf)).pages) >= 3
        # every figure is placed: A's 7 event windows, 4 seat pages of 3, the layout and
        # the aids; B's seat page, layout and aids
        assert placed_figures(pdf) == drawn
    doc_a = json.loads((out / "thistle_comet_revA.json").read_text())
    doc_b = json.loads((out / "thistle_comet_revB.json").read_text())
    assert doc_a["verdict"] == "fail" and doc_b["verdict"] == "pass"
    for rev, doc in (("A", doc_a), ("B", doc_b)):  # the stored command writes the report too
        pdf = out / f"thistle_comet_rev{rev}.pdf"
        assert shlex.split(doc["command"])[-2:] == ["--pdf", str(pdf)]
    start, end = loop_stations("A")
    # every finding of revision A lies at the loop (its entry and exit at the bottom)
    assert all(start - 15 <= f["s_start_m"] <= end + 15 for f in doc_a["findings"])
    assert any(f["rule"] == "duration +Gz" for f in doc_a["findings"])
    check_events_and_pages(doc_a, out / "thistle_comet_revA.pdf", start, end)
    # revision B has no event: its layout caption mentions no event marks; its running heads
    # name the section each page opens in
    pages_b = page_texts(out / "thistle_comet_revB.pdf")
    assert "Station marks every" in "".join(pages_b) and "red crosses" not in "".join(pages_b)
    heads = running_heads(pages_b)
    assert heads == opening_sections(pages_b, set(heads) | set(SECTIONS), "Summary")


def check_events_and_pages(doc: dict, pdf, loop_start: float, loop_end: float) -> None:
    """Revision A: its findings form a few events at the loop's entry and exit; every
    finding belongs to exactly one event; the report fits in 15 pages, names the seat on
    every seat page and keeps every finding in its appendix."""
    events = {e["id"]: e for e in doc["events"]}
    # 156 findings from 7 events: onset gz, x-z ellipse and one more each at the entry and
    # exit, -Gx, +Gz and the y-z envelope at the entry (pinned from this revision's run)
    assert len(events) == 7
    assert sum(e["findings"] for e in events.values()) == len(doc["findings"])
    assert all(f["event"] in events for f in doc["findings"])
    for e in events.values():
        members = [f for f in doc["findings"] if f["event"] == e["id"]]
        assert len(members) == e["findings"] and {f["rule"] for f in members} == {e["rule"]}
        lo, hi = e["station_range_m"]
        assert lo <= min(f["s_start_m"] for f in members)
        near_entry = abs(lo - loop_start) < 15
        near_exit = abs(hi - loop_end) < 15
        assert near_entry or near_exit, e
        assert e["place"].startswith("loop entry" if near_entry else "loop exit")
        assert e["remedy"] and "not a design" in e["remedy"]["text"]
    assert min(e["margin"] for e in events.values() if e["unit"] == "g/s") == min(
        f["margin"] for f in doc["findings"] if f["unit"] == "g/s")  # the worst governs
    reader = PdfReader(str(pdf))
    pages = [page.extract_text() for page in reader.pages]
    assert len(pages) <= 15  # the page budget for revision A, design aids included
    # the running head names the section the page opens in (CSS string(section, start)),
    # not the first heading that begins on it
    heads = running_heads(pages)
    sections = set(heads) | set(SECTIONS)
    assert heads == opening_sections(pages, sections, "Summary")
    assert heads[1] == "Summary"  # page 2 opens with the rest of the summary
    # the findings list's column headings repeat on every page the list spans
    listed = [p for p in pages if re.search(r"^\s*\d+ E\d+ ", p, re.M)]
    assert len(listed) >= 2 and all(re.search(r"^\s*# event rule", p, re.M) for p in listed)
    assert "Overall: FAIL" in pages[0] and "E1" in pages[0] and "g/s" in pages[0]
    # page 1 holds the whole event table: every event, with its remedy
    page1 = pages[0].split("Remedy (first estimate)")[1]
    assert all(re.search(rf"^{e}\b", page1, re.M) for e in events), page1
    # the running head (top right, extracted just before the footer) names the section;
    # on every page of a seat's section, the seat
    seat_pages = [(h, p) for h, p in zip(heads, pages) if h.startswith("Seat ")]
    assert seat_pages and all(h.split(",")[0] in p.split("\n")[0] or "Seat " not in
                              p.split("\n")[0] for h, p in seat_pages)
    governing = {e["governing_seat"] for e in events.values()}
    assert governing <= {h.split(",")[0][5:] for h, _ in seat_pages}
    assert len(seat_pages) < len(doc["seats"])  # not a page per seat
    appendix = "\n".join(p for p, h in zip(pages, heads) if h.startswith("Appendix A"))
    rows = [line.split() for line in appendix.splitlines()]
    numbered = [int(r[0]) for r in rows if len(r) > 2 and r[0].isdigit() and r[1] in events]
    assert numbered == list(range(1, len(doc["findings"]) + 1))  # every finding, once


def test_teardrop_loop_has_lower_peak_gz_than_circular():
    # Common practice: a teardrop (clothoid-sided) loop of the same height and top speed
    # gives a much lower Gz at the bottom than a circular loop.
    limits = load_limits(BUNDLED_LIMITS)
    peaks = {}
    for rev in "AB":
        line, train, ops = load_inputs(SAMPLES / f"thistle_comet_rev{rev}.csv",
                                       SAMPLES / "thistle_comet_train.toml",
                                       operation=SAMPLES / f"thistle_comet_rev{rev}.operation.toml")
        result = run_ride(line, train, ops)
        start, end = loop_stations(rev)
        best = 0.0
        for h in result.histories:
            gz = lowpass(h.g, 200.0, limits.filter)[:, 2]
            inside = (h.s > start - 5) & (h.s < end + 5)
            best = max(best, float(gz[inside].max()))
        peaks[rev] = best
        heights = result.geometry.position[:, 2]
        loop = (result.geometry.s > start) & (result.geometry.s < end)
        peaks[rev + "_height"] = float(np.ptp(heights[loop]))
    assert peaks["B"] < peaks["A"] - 0.8
    assert abs(peaks["A_height"] - peaks["B_height"]) < 1.0  # same height


def test_generator_reproduces_committed_files(tmp_path):
    generator().main(tmp_path)
    made = sorted(p.name for p in tmp_path.iterdir())
    assert made == sorted(["thistle_comet_revA.csv", "thistle_comet_revB.csv",
                           "thistle_comet_revA.operation.toml",
                           "thistle_comet_revB.operation.toml",
                           "thistle_comet_revB_recorded_synthetic.csv"])
    for name in made:
        made_text = (tmp_path / name).read_text()
        kept_text = (SAMPLES / name).read_text()
        if name.endswith(".toml"):
            assert made_text == kept_text, name
            continue
        # Same comments and table; numbers equal within one unit of their last printed digit,
        # so a library's last-bit rounding on another machine does not count as a change.
        made_lines, kept_lines = made_text.splitlines(), kept_text.splitlines()
        assert len(made_lines) == len(kept_lines), name
        for a, b in zip(made_lines, kept_lines):
            for x, y in zip(a.split(","), b.split(","), strict=True):
                try:
                    fx, fy = float(x), float(y)
                except ValueError:
                    assert x == y, (name, a, b)
                    continue
                digits = len(y.split(".")[1]) if "." in y else 0
                assert abs(fx - fy) <= 1.01 * 10.0 ** -digits, (name, a, b)


def test_synthetic_record_passes_check_history(capsys):
    record = SAMPLES / "thistle_comet_revB_recorded_synthetic.csv"
    assert "SYNTHETIC" in record.read_text()[:200]
    assert main(["check-history", str(record)]) == 0

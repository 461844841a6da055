"""The command stored in a report reproduces it: same findings, same cover text."""

from __future__ import annotations

import json
import shlex

from pagetext import placed_figures
from pypdf import PdfReader
from test_stalls import write_hill

from checker.cli import main


def cover(pdf) -> list[str]:
    text = PdfReader(str(pdf)).pages[0].extract_text().splitlines()
    return [line for line in text if not line.startswith("Date ")]


def test_stored_command_reproduces_the_json_and_the_cover(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    track = write_hill(tmp_path)
    project = "O'Neill's \"Fun\" Park; $HOME & `x`"  # quotes and shell characters survive
    assert main(["check", "hill.csv", "--ideal", "--start-speed", "14", "--project", project,
                 "--revision", "r 2", "--pdf", "out.pdf", "--seat-pages", "none"]) in (0, 1)
    first = json.loads((tmp_path / "out.json").read_text())
    first_cover = cover(tmp_path / "out.pdf")
    assert any(project in line for line in first_cover)
    argv = shlex.split(first["command"])
    assert argv[0] == "checker" and project in argv
    (tmp_path / "out.json").unlink()
    (tmp_path / "out.pdf").unlink()
    assert track.endswith("hill.csv")
    main(argv[1:])
    again = json.loads((tmp_path / "out.json").read_text())
    assert again == first  # the JSON carries no date
    assert cover(tmp_path / "out.pdf") == first_cover
    capsys.readouterr()


def test_compare_pdf_writes_its_json_sidecar_and_gone_findings_show_their_old_margin(
        tmp_path, capsys):
    old = write_hill(tmp_path)
    flat = tmp_path / "flat.csv"
    flat.write_text("x,y,z\n" + "\n".join(f"{x:.1f},0,0" for x in range(0, 161)) + "\n")
    pdf = tmp_path / "cmp.pdf"
    main(["compare", old, str(flat), "--ideal", "--start-speed", "10", "--workers", "1",
          "--quiet", "--pdf", str(pdf)])
    printed = capsys.readouterr().out
    doc = json.loads(pdf.with_suffix(".json").read_text())
    gone = [c for c in doc["changes"] if c["status"] == "gone"]
    assert placed_figures(pdf) == 3  # elevations, the focus seat's histories and exposure
    assert gone and "nan" not in printed
    assert "stall -> gone" in " ".join(printed.split())

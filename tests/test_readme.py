"""The README's examples load as documented (a newcomer copies them)."""

from __future__ import annotations

from pathlib import Path

from checker.limits import load_limits
from checker.operation import load_operation
from checker.track import load_centerline
from checker.train import load_train

README = (Path(__file__).resolve().parents[1] / "README.md").read_text()


def fenced() -> list[tuple[str, str]]:
    """(language, text) of every fenced code block, in order."""
    out, lang, lines = [], None, []
    for line in README.splitlines():
        if line.startswith("```"):
            if lang is None:
                lang, lines = line[3:].strip(), []
            else:
                out.append((lang, "\n".join(lines) + "\n"))
                lang = None
        elif lang is not None:
            lines.append(line)
    return out


def blocks(kind: str) -> list[str]:
    return [text for lang, text in fenced() if lang == kind]


def test_readme_track_train_operation_and_limits_examples_load(tmp_path):
    plain = blocks("")
    track = next(b for b in plain if b.lstrip().startswith("# a level straight"))
    (tmp_path / "track.csv").write_text(track)
    assert load_centerline(tmp_path / "track.csv").count == 5
    toml = blocks("toml")
    train = next(b for b in toml if "[cars]" in b)
    (tmp_path / "train.toml").write_text(train)
    assert load_train(tmp_path / "train.toml").car_count == 6
    ops = next(b for b in toml if "[[sections]]" in b)
    (tmp_path / "ops.toml").write_text(ops)
    operation = load_operation(tmp_path / "ops.toml")
    operation.check_against(track_length_m=400.0)
    limits = next(b for b in toml if "[meta]" in b)
    table = next(b for b in plain if b.startswith("gy,gz"))
    (tmp_path / "yz.csv").write_text(table)
    (tmp_path / "limits.toml").write_text(limits)
    loaded = load_limits(tmp_path / "limits.toml")
    assert loaded.duration and loaded.combined and loaded.onset


def test_readme_load_cases_example_loads(tmp_path):
    from checker.loadcases import load_cases

    cases = next(b for b in blocks("toml") if "[[case]]" in b)
    (tmp_path / "cases.toml").write_text(cases)
    assert load_cases(tmp_path / "cases.toml")[0].name == "warm-afternoon"


def test_readme_python_example_runs_outside_the_checkout(tmp_path):
    import hashlib
    import json
    import os
    import subprocess
    import sys

    code = next(b for b in blocks("python") if "check_layout" in b)
    root = Path(__file__).resolve().parents[1]
    env = {**os.environ, "PYTHONPATH": str(root)}
    done = subprocess.run([sys.executable, "-c", code], cwd=tmp_path, env=env,
                          capture_output=True, text=True, timeout=600)
    assert done.returncode == 0, done.stderr
    assert (tmp_path / "revB.pdf").read_bytes().startswith(b"%PDF")
    doc = json.loads((tmp_path / "revB.json").read_text())
    assert doc["verdict"] == "pass" and doc["command"].startswith("checker.check_layout(")
    names = {Path(item["file"]).name for item in doc["inputs"]}
    assert {"thistle_comet_revB.csv", "thistle_comet_train.toml",
            "thistle_comet_revB.operation.toml", "illustrative.toml"} <= names
    for item in doc["inputs"]:  # every file's SHA-256, as hashlib computes it
        assert item["sha256"] == hashlib.sha256(Path(item["file"]).read_bytes()).hexdigest()
        assert item["sha256"] in done.stdout

"""Hostile use of the command line: outputs aimed at inputs, devices and FIFOs as inputs,
faults and signals between the two writes of a record, concurrent runs, closed pipes,
control characters and '$' in names, out-of-range numbers.

Every case checks the exit code, that no traceback is printed, that the inputs are
byte-identical afterwards and that the outputs are both new, both old or absent.
"""

from __future__ import annotations

import errno
import os
import signal
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from checker import outputs
from checker.cli import main

HERE = Path(__file__).resolve().parent
CORPUS = HERE / "bad_inputs"
ROOT = HERE.parent
TRACK = CORPUS / "_good_track.csv"
HISTORY = CORPUS / "_good_history.csv"
RIDE = ["--ideal", "--start-speed", "5"]
ENV = {**os.environ, "PYTHONPATH": str(ROOT)}


def run(argv, capsys) -> tuple[int, str, str]:
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def one_error_line(err: str) -> str:
    assert "Traceback" not in err, err
    lines = [line for line in err.splitlines() if line.startswith("checker:")]
    assert len(lines) == 1, err
    return lines[0]


def snapshot(*paths: Path) -> dict:
    return {p: p.read_bytes() for p in paths}


def failing_history(path: Path) -> Path:
    """A record with a sustained 7 g: a finding against the bundled limits."""
    rows = "".join(f"{i / 100:.2f},0,0,{7 if 100 <= i < 250 else 1}\n" for i in range(300))
    path.write_text("t,gx,gy,gz\n" + rows)
    return path


@pytest.fixture
def fast_pdf(monkeypatch):
    """Skip weasyprint (seconds per page): the pairing of the files is what is tested."""
    import checker.report as report

    monkeypatch.setattr(report, "render_pdf", lambda html, fetcher=None: b"%PDF-test\n%%EOF\n")


# --- 1. inputs are sacred ---------------------------------------------------------------

def _copies(tmp_path):
    track = tmp_path / "t.csv"
    track.write_bytes(TRACK.read_bytes())
    history = tmp_path / "h.csv"
    history.write_bytes(HISTORY.read_bytes())
    limits = tmp_path / "limits.toml"
    limits.write_bytes((ROOT / "limits" / "illustrative.toml").read_bytes())
    (tmp_path / "illustrative_yz.csv").write_bytes(
        (ROOT / "limits" / "illustrative_yz.csv").read_bytes())
    return track, history, limits


ONTO_INPUT = {
    "simulate -o track": lambda t, h, lim: ["simulate", t, *RIDE, "-o", t],
    "check --json track": lambda t, h, lim: ["check", t, *RIDE, "--json", t],
    "check --pdf track": lambda t, h, lim: ["check", t, *RIDE, "--pdf", t],
    "check --pdf sidecar onto track": lambda t, h, lim: ["check", t, *RIDE, "--pdf",
                                                         t.with_suffix(".pdf"), "--json", t],
    "check-history --json history": lambda t, h, lim: ["check-history", h, "--json", h],
    "--json limits": lambda t, h, lim: ["check-history", h, "--limits", lim, "--json", lim],
    "--json limits table": lambda t, h, lim: ["check-history", h, "--limits", lim, "--json",
                                              lim.parent / "illustrative_yz.csv"],
    "compare B B --json B": lambda t, h, lim: ["compare", t, t, *RIDE, "--json", t],
    "--pdf x.json": lambda t, h, lim: ["check-history", h, "--pdf", t.parent / "x.json"],
    "--pdf and --json the same": lambda t, h, lim: ["check-history", h, "--pdf",
                                                    t.parent / "r.pdf", "--json",
                                                    t.parent / "r.pdf"],
}


@pytest.mark.parametrize("name", sorted(ONTO_INPUT))
def test_output_onto_an_input_or_another_output_is_refused(name, tmp_path, capsys):
    track, history, limits = _copies(tmp_path)
    before = snapshot(*tmp_path.iterdir())
    code, _, err = run(ONTO_INPUT[name](track, history, limits), capsys)
    assert code == 2
    line = one_error_line(err)
    assert "same file" in line and " -- " in line
    assert snapshot(*tmp_path.iterdir()) == before  # nothing changed, nothing added


def test_output_through_a_link_to_the_input_is_refused(tmp_path, capsys):
    track, history, _ = _copies(tmp_path)
    (tmp_path / "soft.json").symlink_to(history)
    os.link(history, tmp_path / "hard.json")
    before = history.read_bytes()
    for out in ("soft.json", "hard.json"):
        code, _, err = run(["check-history", history, "--json", tmp_path / out], capsys)
        assert code == 2 and "same file as the input" in one_error_line(err)
    assert history.read_bytes() == before and (tmp_path / "soft.json").is_symlink()


def test_a_sidecar_onto_an_input_is_named_as_the_sidecar(tmp_path, capsys):
    # no --json given: the clash is the --pdf report's sidecar, and the error says so
    _, history, _ = _copies(tmp_path)
    source = tmp_path / "r.json"
    source.write_bytes(history.read_bytes())
    code, _, err = run(["check-history", source, "--pdf", tmp_path / "r.pdf"], capsys)
    line = one_error_line(err)
    assert code == 2 and "the --pdf report's JSON sidecar is the same file" in line
    assert "--json" not in line


def test_json_dash_is_refused_and_creates_no_file(tmp_path, capsys, monkeypatch):
    monkeypatch.chdir(tmp_path)
    code, _, err = run(["check-history", HISTORY, "--json", "-"], capsys)
    assert code == 2 and "'-' is not supported" in one_error_line(err)
    assert not (tmp_path / "-").exists()


@pytest.mark.parametrize("output", ["/dev/full", "/dev/null", "folder"])
def test_output_that_is_not_a_regular_file_is_refused(output, tmp_path, capsys):
    if output == "folder":
        output = tmp_path
    elif not Path(output).exists():
        pytest.skip(f"{output} is not on this system")
    code, _, err = run(["check-history", HISTORY, "--json", output], capsys)
    assert code == 2 and "exists and is" in one_error_line(err)


def test_output_in_a_missing_folder_is_refused(tmp_path, capsys):
    code, _, err = run(["check-history", HISTORY, "--json", tmp_path / "no" / "f.json"], capsys)
    assert code == 2 and "does not exist" in one_error_line(err)


@pytest.mark.parametrize("kind", ["fifo", "device", "folder", "device-limits"])
def test_input_that_is_not_a_regular_file_is_refused(kind, tmp_path, capsys):
    out = tmp_path / "out.json"
    if kind == "fifo":
        path = tmp_path / "pipe.csv"
        os.mkfifo(path)  # nobody writes: reading it would hang
        argv = ["check", path, *RIDE, "--json", out]
    elif kind == "folder":
        argv = ["check", tmp_path, *RIDE, "--json", out]
    elif kind == "device":
        argv = ["check", "/dev/zero", *RIDE, "--json", out]
    else:
        argv = ["check-history", HISTORY, "--limits", "/dev/urandom", "--json", out]
    code, _, err = run(argv, capsys)
    assert code == 2
    line = one_error_line(err)
    assert "not a file" in line and " -- " in line
    assert not out.exists()


def test_input_larger_than_the_cap_is_refused_and_the_cap_can_be_raised(tmp_path, capsys,
                                                                           monkeypatch):
    monkeypatch.setenv("CHECKER_MAX_INPUT_MB", "0.001")  # 1 kB; the record is ~4 kB
    code, _, err = run(["check-history", HISTORY], capsys)
    assert code == 2
    line = one_error_line(err)
    assert "input limit of 0.001 MB" in line and "CHECKER_MAX_INPUT_MB" in line
    monkeypatch.setenv("CHECKER_MAX_INPUT_MB", "1")
    assert run(["check-history", HISTORY], capsys)[0] == 0


def test_reading_a_fifo_directly_does_not_block(tmp_path):
    """The reader itself opens without blocking (a check-then-swap cannot hang it)."""
    from checker.errors import InputError
    from checker.paths import read_input_bytes

    path = tmp_path / "pipe"
    os.mkfifo(path)
    with pytest.raises(InputError, match="FIFO"):
        read_input_bytes(path)


# --- 2. one record, written as one ------------------------------------------------------

def _old_pair(tmp_path):
    pdf, sidecar = tmp_path / "r.pdf", tmp_path / "r.json"
    pdf.write_bytes(b"old pdf")
    sidecar.write_bytes(b"old json")
    return pdf, sidecar


def _pair_state(pdf: Path, sidecar: Path) -> str:
    states = {pdf.read_bytes() == b"old pdf", sidecar.read_bytes() == b"old json"}
    assert len(states) == 1, "a new file beside an old one"
    assert not list(pdf.parent.glob(".*.part*")), "a temporary file was left"
    return "old" if states == {True} else "new"


@pytest.mark.parametrize("fault", [KeyboardInterrupt, OSError])
def test_fault_between_the_two_renames_leaves_the_old_pair(fault, tmp_path, capsys,
                                                           monkeypatch, fast_pdf):
    pdf, sidecar = _old_pair(tmp_path)

    def between():
        raise fault(errno.EIO, "injected") if fault is OSError else fault()

    monkeypatch.setattr(outputs, "_between_renames", between)
    code, _, err = run(["check-history", HISTORY, "--pdf", pdf], capsys)
    line = one_error_line(err)
    if fault is KeyboardInterrupt:
        assert code == 130 and "no output was written or changed" in line
    else:
        assert code == 2 and "previous ones are unchanged" in line
    assert _pair_state(pdf, sidecar) == "old"


def test_full_disk_while_staging_leaves_the_old_pair(tmp_path, capsys, monkeypatch, fast_pdf):
    pdf, sidecar = _old_pair(tmp_path)
    calls = []

    def write_all(handle, data):
        calls.append(len(data))
        if len(calls) == 2:  # the first file is staged, the second finds the disk full
            raise OSError(errno.ENOSPC, "No space left on device")
        handle.write(data)

    monkeypatch.setattr(outputs, "_write_all", write_all)
    code, _, err = run(["check-history", HISTORY, "--pdf", pdf], capsys)
    assert code == 2
    assert "the device is full" in one_error_line(err)
    assert _pair_state(pdf, sidecar) == "old"


def test_signal_between_the_renames_is_held_until_the_pair_is_whole(tmp_path, capsys,
                                                                  monkeypatch, fast_pdf):
    """A real SIGINT arrives between the two renames: both files are new and the message
    says so (the signal waits until the pair is written, then interrupts)."""
    pdf, sidecar = _old_pair(tmp_path)
    monkeypatch.setattr(outputs, "_between_renames",
                        lambda: os.kill(os.getpid(), signal.SIGINT))
    code, _, err = run(["check-history", HISTORY, "--pdf", pdf], capsys)
    assert code == 130
    line = one_error_line(err)
    assert "interrupted after writing" in line and "r.json" in line and "r.pdf" in line
    assert _pair_state(pdf, sidecar) == "new"


def test_swallowed_interrupt_still_exits_130_and_writes_nothing(tmp_path, capsys,
                                                                 monkeypatch):
    """A library that catches KeyboardInterrupt cannot turn an interrupted run into 0."""
    import checker.application as rules  # the application layer calls the rule engine

    real = rules.evaluate

    def evaluate(*args, **kwargs):
        try:
            os.kill(os.getpid(), signal.SIGINT)
            signal.sigtimedwait([], 0) if hasattr(signal, "sigtimedwait") else None
        except KeyboardInterrupt:
            pass  # swallowed, as some C callbacks and __del__ methods do
        return real(*args, **kwargs)

    monkeypatch.setattr(rules, "evaluate", evaluate)
    out = tmp_path / "f.json"
    code, _, err = run(["check-history", HISTORY, "--json", out], capsys)
    assert code == 130 and "no output was written" in one_error_line(err)
    assert not out.exists()


def test_concurrent_commits_to_the_same_pair_never_mix(tmp_path, monkeypatch):
    """Two writers commit (json, pdf) pairs to the same paths; the folder lock keeps every
    pair whole. The pause between the renames makes a mix likely without the lock."""
    import time

    monkeypatch.setattr(outputs, "_between_renames", lambda: time.sleep(0.002))
    a, b = tmp_path / "c.json", tmp_path / "c.pdf"
    errors = []

    def writer(tag):
        try:
            for i in range(25):
                text = f"{tag}{i}".encode()
                outputs.commit({a: text, b: text})
        except Exception as exc:  # pragma: no cover - reported below
            errors.append(exc)

    for _ in range(4):
        threads = [threading.Thread(target=writer, args=(t,)) for t in "xy"]
        for t in threads:
            t.start()
        for t in threads:
            t.join()
        assert not errors
        assert a.read_bytes() == b.read_bytes()
    assert not list(tmp_path.glob(".*"))


# --- 3. user text is data ---------------------------------------------------------------

def test_dollar_and_control_characters_in_names(tmp_path, capsys, monkeypatch):
    """'$' pairs in seat, case and file names are text in the figures (matplotlib would
    typeset them as math and fail on '$\\alpha_$'); ESC and BEL in a seat name reach the
    terminal escaped."""
    import checker.report as report

    svgs = []  # the figures, one-page PDFs

    def render(html, fetcher=None):
        svgs.extend(fetcher.assets.values())
        return b"%PDF-test"

    monkeypatch.setattr(report, "render_pdf", render)
    names = ["cost $5 or $6", "$\\alpha_$", "bell\x07\x1b]0;owned\x07\x1b[2J"]
    # the bell seat pulls hardest, so it governs the event and the terminal names it
    rows = "".join(f"{name},{i / 100:.2f},0,0,"
                   f"{(8 if name.startswith('bell') else 7) if 100 <= i < 250 else 1}\n"
                   for name in names for i in range(300))
    history = tmp_path / "ride $x$.csv"
    history.write_text("seat,t,gx,gy,gz\n" + rows)
    pdf = tmp_path / "r.pdf"
    code, out, err = run(["check-history", history, "--pdf", pdf, "--case", "$\\beta$",
                          "--project", "$$ budget $$", "--seat-pages", "all"], capsys)
    assert code == 1, err
    assert "Traceback" not in err
    assert "\x1b" not in out + err and "\x07" not in out + err
    assert "bell\\x07\\x1b]0;owned" in out + err
    from io import BytesIO

    from pypdf import PdfReader

    text = "".join(PdfReader(BytesIO(figure.pdf())).pages[0].extract_text() for figure in svgs)
    # the governing seat labels its figures' legend; matplotlib's PDF keeps text as text
    assert "$\\alpha_$" in text or "cost $5 or $6" in text
    assert pdf.exists() and pdf.with_suffix(".json").exists()


def test_terminal_clean_escapes_every_control_character():
    from checker.terminal import clean

    raw = "".join(chr(c) for c in range(0x20)) + "\x7f\x9b\u2028\u202e ok $x$"
    shown = clean(raw)
    assert shown.isprintable() or set(shown) - set("\n\t") <= set(
        c for c in shown if c.isprintable())
    assert "\n" in shown and "\t" in shown and "\\x1b" in shown and "\\u202e" in shown
    assert shown.endswith(" ok $x$")


def test_huge_project_name_is_shortened_in_the_report_and_kept_in_the_json(tmp_path, capsys,
                                                                            monkeypatch):
    import checker.report as report

    pages = []
    monkeypatch.setattr(report, "render_pdf",
                        lambda html, fetcher=None: pages.append(html) or b"%PDF-test")
    project = "P" * 100_000
    pdf = tmp_path / "r.pdf"
    argv = ["check-history", str(HISTORY), "--pdf", str(pdf), "--project", project]
    monkeypatch.setattr(sys, "argv", ["checker", *argv])  # the command line in the record
    code, _, err = run(argv, capsys)
    assert code == 0, err
    assert project not in pages[0] and "P" * 70 + "..." in pages[0]
    assert project in pdf.with_suffix(".json").read_text()  # the command line, in full


# --- 4. exit codes ----------------------------------------------------------------------

def test_internal_error_is_exit_3_with_one_line_and_traceback_only_with_debug(
        capsys, monkeypatch):
    import checker.application as rules  # the application layer calls the rule engine

    def broken(*args, **kwargs):
        raise RuntimeError("injected\nsecond line")

    monkeypatch.setattr(rules, "evaluate", broken)
    code, _, err = run(["check-history", HISTORY], capsys)
    assert code == 3
    line = one_error_line(err)
    assert "internal error" in line and "RuntimeError" in line and "--debug" in line
    code, _, err = run(["check-history", HISTORY, "--debug"], capsys)
    assert code == 3 and "Traceback" in err


class _ClosedPipe:
    """A standard output whose reader has gone away."""

    def write(self, text):
        raise BrokenPipeError(errno.EPIPE, "Broken pipe")

    def flush(self):
        raise BrokenPipeError(errno.EPIPE, "Broken pipe")

    def isatty(self):
        return False


def test_closed_stdout_keeps_the_exit_code_and_writes_the_json(tmp_path, monkeypatch):
    """The reader is gone before the first line: exit 1 (a finding), the JSON written."""
    history = failing_history(tmp_path / "h.csv")
    out = tmp_path / "f.json"
    monkeypatch.setattr(sys, "stdout", _ClosedPipe())
    assert main(["check-history", str(history), "--json", str(out)]) == 1
    assert out.read_text().startswith("{")


def test_shell_pipeline_into_head_with_pipefail(tmp_path):
    history = failing_history(tmp_path / "h.csv")
    out = tmp_path / "f.json"
    command = (f"{sys.executable} -m checker check-history {history} --json {out} "
               f"| head -1 >/dev/null")
    proc = subprocess.run(["bash", "-o", "pipefail", "-c", command], capture_output=True,
                          text=True, env=ENV, timeout=300)
    assert proc.returncode == 1, proc.stderr
    assert "Traceback" not in proc.stderr and out.exists()


# --- 5. bounds ---------------------------------------------------------------------------

@pytest.mark.parametrize("option", [
    ["--rate", "inf"], ["--rate", "1e6"], ["--rate", "0.001"], ["--rate", "nan"],
    ["--start-speed", "inf"], ["--start-speed", "1e300"], ["--start-speed", "-1"],
    ["--smoothing", "-1"], ["--workers", "-3"], ["--workers", "0"], ["--workers", "2.5"],
    ["--scheduler-timeout", "0"], ["--case", "c" * 201]])
def test_numeric_option_out_of_range_is_a_usage_error(option, capsys):
    with pytest.raises(SystemExit) as exc:
        main(["check", str(TRACK), "--ideal", *option])
    err = capsys.readouterr().err
    assert exc.value.code == 2
    assert option[0] in err and "Traceback" not in err
    assert "outside" in err or "not a" in err or "characters long" in err
    assert len(err.strip().splitlines()) == 1 and "--help" in err  # one line, where to look


def test_memory_estimate_refuses_a_run_above_the_cap(capsys, monkeypatch, tmp_path):
    monkeypatch.setenv("CHECKER_MAX_MEMORY_MB", "1")
    out = tmp_path / "h.csv"
    code, _, err = run(["simulate", TRACK, *RIDE, "--rate", "2000", "-o", out], capsys)
    assert code == 2
    line = one_error_line(err)
    assert "needs about" in line and "MB of memory" in line and "CHECKER_MAX_MEMORY_MB" in line
    assert not out.exists()


def test_memory_estimate_scales_with_seats_time_and_rate():
    """Plain arithmetic: samples x seats x bytes per seat-sample (plus the cars' part)."""
    from checker.bounds import BYTES_PER_CAR_SAMPLE, BYTES_PER_SEAT_SAMPLE, ride_memory_bytes

    est = ride_memory_bytes(seats=200_000, cars=200, duration_s=60, rate_hz=200)
    assert est == (60 * 200 + 1) * (200_000 * BYTES_PER_SEAT_SAMPLE + 200 * BYTES_PER_CAR_SAMPLE)
    assert est > 100e9  # 200 cars x 1000 seats: far above any desktop


def test_scheduler_without_cases_is_an_error(capsys):
    code, _, err = run(["check", TRACK, *RIDE, "--scheduler", "tcp://127.0.0.1:1"], capsys)
    assert code == 2 and "--cases" in one_error_line(err)


@pytest.mark.parametrize("address", ["not an address", "tcp://127.0.0.1:1"])
def test_bad_or_unreachable_scheduler_is_one_line(address, capsys):
    pytest.importorskip("dask.distributed")
    code, _, err = run(["check", TRACK, *RIDE, "--cases", "standard", "--scheduler", address,
                        "--scheduler-timeout", "2", "--quiet"], capsys)
    assert code == 2
    line = one_error_line(err)
    assert "Dask scheduler" in line and " -- " in line


# --- 6. workers die with their parent ----------------------------------------------------

def _children(pid: int) -> set[int]:
    """Process ids whose parent is ``pid`` (Linux /proc)."""
    found = set()
    for entry in Path("/proc").iterdir():
        if entry.name.isdigit():
            try:
                fields = (entry / "stat").read_text().rsplit(")", 1)[1].split()
            except OSError:
                continue
            if int(fields[1]) == pid:
                found.add(int(entry.name))
    return found


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"


@pytest.mark.skipif(not sys.platform.startswith("linux"), reason="reads /proc")
def test_sweep_workers_exit_when_the_parent_is_killed(tmp_path):
    """SIGKILL of the parent of a two-worker sweep: no worker is alive 10 s later."""
    import time

    demo = ROOT / "sample_tracks"
    proc = subprocess.Popen(
        [sys.executable, "-m", "checker", "check", str(demo / "thistle_comet_revA.csv"),
         "--train", str(demo / "thistle_comet_train.toml"), "--operation",
         str(demo / "thistle_comet_revA.operation.toml"), "--cases", "standard",
         "--workers", "2", "--quiet", "--json", str(tmp_path / "f.json")],
        stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, env=ENV)
    try:
        workers: set[int] = set()
        deadline = time.monotonic() + 120
        while len(workers) < 2 and proc.poll() is None and time.monotonic() < deadline:
            time.sleep(0.2)
            workers = _children(proc.pid)
        assert len(workers) >= 2, "the sweep never started its two workers"
    finally:
        proc.kill()
        proc.wait()
    deadline = time.monotonic() + 10
    while any(_alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.2)
    alive = [w for w in workers if _alive(w)]
    for w in alive:  # do not leave them behind even when the test fails
        os.kill(w, signal.SIGKILL)
    assert not alive
    assert not (tmp_path / "f.json").exists()


def test_watch_parent_ends_a_process_whose_parent_is_gone():
    """The initializer itself: a child whose expected parent is not its parent exits."""
    script = ("import time\nfrom checker.parentwatch import watch_parent\n"
              "watch_parent(-1)\ntime.sleep(30)\n")
    proc = subprocess.run([sys.executable, "-c", script], env=ENV, timeout=60)
    assert proc.returncode == 1


def test_scheduler_with_no_worker_fails_within_the_timeout(capsys):
    distributed = pytest.importorskip("dask.distributed")
    with distributed.LocalCluster(n_workers=0, processes=False, dashboard_address=None) as c:
        code, _, err = run(["check", TRACK, *RIDE, "--cases", "standard", "--scheduler",
                            c.scheduler_address, "--scheduler-timeout", "2", "--quiet"],
                           capsys)
    assert code == 2
    line = one_error_line(err)
    assert "has no worker after 2 s" in line and "--scheduler-timeout" in line


@pytest.mark.parametrize("variable", ["CHECKER_MAX_INPUT_MB", "CHECKER_MAX_MEMORY_MB"])
@pytest.mark.parametrize("value", ["lots", "-5", "inf"])
def test_bad_cap_in_the_environment_is_one_line(variable, value, capsys, monkeypatch,
                                                tmp_path):
    monkeypatch.setenv(variable, value)
    code, _, err = run(["simulate", TRACK, *RIDE, "-o", tmp_path / "h.csv"], capsys)
    assert code == 2
    line = one_error_line(err)
    assert variable in line and "megabytes" in line


def test_parallel_workers_share_the_memory_cap(monkeypatch):
    """Arithmetic of the cap: N workers at once each get 1/N of it."""
    from checker import bounds

    monkeypatch.setenv("CHECKER_MAX_MEMORY_MB", "1000")
    monkeypatch.setitem(bounds._parallel, "runs", 1)
    assert bounds.memory_cap_bytes() == 1_000_000_000
    bounds.share_memory(4)
    assert bounds.memory_cap_bytes() == 250_000_000


def test_a_name_in_a_script_the_figure_font_lacks_leaves_the_terminal_clean(tmp_path):
    """Seat names in Chinese and with an emoji: the PDF is written and stderr carries no
    Python warning (matplotlib warned once per missing glyph, from every figure worker)."""
    import subprocess
    import sys

    rows = "".join(f"{name},{i / 100:.2f},0,0,{6 if name == 'plain' and 100 <= i < 200 else 1}\n"
                   for name in ["座席-1", "Sitz-ä😀", "plain"] for i in range(300))
    history = tmp_path / "h.csv"
    history.write_text("seat,t,gx,gy,gz\n" + rows, encoding="utf-8")
    done = subprocess.run([sys.executable, "-m", "checker", "check-history", str(history),
                           "--pdf", str(tmp_path / "h.pdf"), "--seat-pages", "all"],
                          capture_output=True, text=True, timeout=120)
    assert done.returncode == 1, done.stderr
    assert (tmp_path / "h.pdf").exists()
    assert "Warning" not in done.stderr and "Traceback" not in done.stderr, done.stderr

"""The progress line and Ctrl-C: `sqlstat run` on a long DuckDB query under a pseudo-terminal
(the line shows the engine, the elapsed time and DuckDB's own progress), under a pipe and
with --quiet (no line), and SIGINT ending the query within 2 s with exit code 130 and no
output file. The long query is a per-unit view over DuckDB's range() of 2e9 rows, which
takes about a minute here: the tests interrupt it."""

from __future__ import annotations

import os
import pty
import re
import select
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

duckdb = pytest.importorskip("duckdb")

SPEC = """\
[experiment]
name = "long"
control = "a"

[assignment]
source = "big"
unit = "unit"
arm = "arm"
per_unit = true

[[metric]]
name = "x"
kind = "mean"
value = "v"
"""
# DuckDB's own estimate is shown when it has one; for this plan it has none (query_progress
# gives -1), so the percentage is optional here and checked on a plain scan below.
LINE = re.compile(r"sqlstat: running on DuckDB \(\S*big\.db\) · (\d+\.\d) s(?: · (\d+)% \(engine's estimate\))?")


@pytest.fixture(scope="module")
def long_run(tmp_path_factory) -> tuple[Path, Path]:
    folder = tmp_path_factory.mktemp("long")
    con = duckdb.connect(str(folder / "big.db"))
    con.execute("CREATE VIEW big AS SELECT i AS unit, CASE WHEN i % 2 = 0 THEN 'a' ELSE 'b' END AS arm, "
                "i % 7 AS v FROM range(2000000000) AS t(i)")
    con.close()
    (folder / "spec.toml").write_text(SPEC)
    return folder, folder / "spec.toml"


def _command(folder: Path, spec: Path, *extra: str) -> list[str]:
    return [sys.executable, "-m", "sqlstat.cli", "run", str(spec), "--db", f"duckdb:///{folder / 'big.db'}",
            "--format", "json", "-o", str(folder / "out.json"), *extra]


def _read_until(fd: int, pattern: re.Pattern, seconds: float) -> str:
    seen = b""
    end = time.monotonic() + seconds
    while time.monotonic() < end:
        ready, _, _ = select.select([fd], [], [], 0.2)
        if ready:
            try:
                chunk = os.read(fd, 4096)
            except OSError:
                break
            if not chunk:
                break
            seen += chunk
            if pattern.search(seen.decode("utf-8", "replace")):
                break
    return seen.decode("utf-8", "replace")


def _interrupt(proc: subprocess.Popen) -> float:
    """SIGINT, as Ctrl-C sends it; returns the seconds until the process ended."""
    sent = time.monotonic()
    proc.send_signal(signal.SIGINT)
    try:
        proc.wait(timeout=10)
    finally:
        if proc.poll() is None:
            proc.kill()
    return time.monotonic() - sent


def test_progress_line_on_a_terminal_and_sigint_cancels_the_query(long_run):
    folder, spec = long_run
    master, slave = pty.openpty()
    proc = subprocess.Popen(_command(folder, spec), stdin=subprocess.DEVNULL, stdout=subprocess.PIPE, stderr=slave)
    os.close(slave)
    try:
        text = _read_until(master, re.compile(LINE.pattern + r"[\s\S]*" + LINE.pattern), 60)
        lines = LINE.findall(text)
        assert len(lines) >= 2, text[-500:]  # engine and elapsed time, redrawn in place
        assert float(lines[-1][0]) > float(lines[0][0])
        assert "\r\x1b[K" in text
        took = _interrupt(proc)
        rest = _read_until(master, re.compile("nothing|interrupted"), 3)
    finally:
        os.close(master)
    assert proc.returncode == 130, (proc.returncode, rest)
    assert took < 2.0, took  # the query was cancelled on the engine, not waited for
    assert "interrupted" in rest and "cancelled on the engine" in rest
    assert not (folder / "out.json").exists()
    assert not list(folder.glob(".*tmp*")) and not list(folder.glob("*.tmp"))  # no half-written file
    assert proc.stdout.read() == b""


@pytest.mark.parametrize("quiet", [False, True])
def test_no_progress_line_under_a_pipe_or_with_quiet(long_run, quiet):
    folder, spec = long_run
    if quiet:  # a terminal, but --quiet
        master, slave = pty.openpty()
        proc = subprocess.Popen(_command(folder, spec, "--quiet"), stdin=subprocess.DEVNULL,
                                stdout=subprocess.PIPE, stderr=slave)
        os.close(slave)
        time.sleep(2.5)
        took = _interrupt(proc)
        err = _read_until(master, re.compile("interrupted"), 3)
        os.close(master)
    else:
        proc = subprocess.Popen(_command(folder, spec), stdin=subprocess.DEVNULL, stdout=subprocess.PIPE,
                                stderr=subprocess.PIPE)
        time.sleep(2.5)
        took = _interrupt(proc)
        err = proc.stderr.read().decode()
    assert "running on" not in err and "\x1b[K" not in err, err
    assert proc.returncode == 130 and "interrupted" in err, (proc.returncode, err)
    assert took < 2.0, took
    assert not (folder / "out.json").exists()


def test_quick_runs_draw_nothing_even_on_a_terminal(tmp_path):
    from .conftest import PROJECT

    master, slave = pty.openpty()
    proc = subprocess.run([sys.executable, "-m", "sqlstat.cli", "run", str(PROJECT / "sample_data" / "return_reminders.toml"),
                           "-f", "json"], stdin=subprocess.DEVNULL, stdout=subprocess.PIPE, stderr=slave, cwd=tmp_path)
    os.close(slave)
    err = _read_until(master, re.compile("$^"), 0.5)
    os.close(master)
    assert proc.returncode == 0 and "running on" not in err


def test_duckdb_progress_is_read_while_a_query_runs():
    # DuckDB's query_progress on a plain scan it can measure: values between 0 and 100 that grow
    from sqlstat.engines import duckdb_engine
    from sqlstat.progress import ProgressLine, run_watched

    engine = duckdb_engine()
    seen: list[float] = []

    class Stream(list):
        def write(self, text):
            self.append(text)

        def flush(self):
            pass

    stream = Stream()
    line = ProgressLine(stream, delay=0.0)

    def tick(label, elapsed, progress):
        line(label, elapsed, progress)
        if progress is not None:
            seen.append(progress)
        if len(seen) >= 3:
            raise KeyboardInterrupt  # as Ctrl-C would, from the main thread

    from sqlstat.errors import Interrupted

    with pytest.raises(Interrupted, match="cancelled on the engine"):
        run_watched(engine, "SELECT count(*) FROM range(20000000000) t(i) WHERE i % 7 = 3", None, tick)
    assert seen and all(0 < p <= 100 for p in seen) and seen == sorted(seen), seen
    assert any(re.search(r"running on DuckDB \(in memory\) · \d+\.\d s · \d+% \(engine's estimate\)", s)
               for s in stream)
    assert engine.run("SELECT 1 AS one") == [{"one": 1}]  # the connection is usable after the cancel
    engine.close()

"""Spec inputs that would hang or flood: only regular files under the size limit are read
(a pipe or /dev/zero is refused at once), and echoed source lines are cut to a readable
length with the problem's column marked."""

from __future__ import annotations

import os
import subprocess
import sys
import time

import pytest

from sqlstat.errors import MAX_ECHO_CHARS
from sqlstat.spec import MAX_SPEC_BYTES

CHECK = [sys.executable, "-m", "sqlstat.cli", "check"]


def _check(path, timeout=20):
    start = time.monotonic()
    done = subprocess.run([*CHECK, str(path)], capture_output=True, text=True, timeout=timeout)
    return done, time.monotonic() - start


@pytest.mark.parametrize("make", ["fifo", "dev_zero", "folder"])
def test_non_regular_spec_files_are_refused_at_once(tmp_path, make):
    if make == "fifo":
        path = tmp_path / "spec.toml"
        os.mkfifo(path)
    elif make == "folder":
        path = tmp_path / "spec.toml"
        path.mkdir()
    else:
        path = "/dev/zero"
    done, took = _check(path)
    assert done.returncode == 2 and "must be a regular file" in done.stderr, done.stderr
    assert took < 15


def test_a_spec_over_the_size_limit_is_refused_without_reading_it(tmp_path):
    path = tmp_path / "big.toml"
    with open(path, "wb") as fh:
        fh.truncate(MAX_SPEC_BYTES + 1)  # sparse: no time spent writing
    done, _ = _check(path)
    assert done.returncode == 2 and f"the limit is {MAX_SPEC_BYTES:,}" in done.stderr


def _spec(value_line: str) -> str:
    return ('[experiment]\nname = "x"\ncontrol = "control"\n[assignment]\nsource = "s.a"\nunit = "u"\narm = "a"\n'
            f'[[metric]]\nname = "m"\nkind = "mean"\n{value_line}\n')


def test_a_long_value_line_is_echoed_cut(tmp_path):
    path = tmp_path / "long.toml"
    path.write_text(_spec('value = "' + "+".join(["x"] * 30000) + '"'))
    done, _ = _check(path)
    assert done.returncode == 2 and "limit is 10,000" in done.stderr
    assert len(done.stderr) < 1000, len(done.stderr)
    assert "characters long; shown: columns 1-" in done.stderr
    assert all(len(line) < MAX_ECHO_CHARS + 40 for line in done.stderr.splitlines())


def test_a_syntax_error_far_into_a_long_line_is_shown_around_its_column(tmp_path):
    path = tmp_path / "syntax.toml"
    path.write_text(_spec('value = "' + "x" * 5000 + '" junk'))
    done, _ = _check(path)
    err = done.stderr
    assert done.returncode == 2 and "TOML syntax error" in err and len(err) < 1000, err
    lines = err.splitlines()
    marker = next(i for i, line in enumerate(lines) if "^ column" in line)
    column = int(lines[marker].rsplit(" ", 1)[1])
    assert column > 5000
    # the caret sits under the character at that column of the (cut) line
    full = 'value = "' + "x" * 5000 + '" junk'
    shown, caret = lines[marker - 1], lines[marker].index("^")
    assert shown[caret] == full[column - 1], (shown[caret - 5:caret + 5], full[column - 6:column + 4])
    assert "shown: columns" in err

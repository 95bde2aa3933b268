"""Golden SQL: per case, tests/golden/<case>/spec.toml and one <dialect>.sql per dialect.

A change to the emitted SQL shows up here as a readable diff. To accept a change on
purpose, rewrite the files and review them with git:

    SQLSTAT_UPDATE_GOLDEN=1 python3 -m pytest tests/test_golden.py && git diff tests/golden

Each golden file is also parsed back by sqlglot in its own dialect and must be exactly one
SELECT, so dialects that no engine here runs are at least checked by their parser.
"""

from __future__ import annotations

import difflib
import os
from pathlib import Path

import pytest
import sqlglot
from sqlglot import exp

import sqlstat
from sqlstat.dialects import DIALECTS

GOLDEN = Path(__file__).resolve().parent / "golden"
UPDATE = os.environ.get("SQLSTAT_UPDATE_GOLDEN") == "1"
CASES = sorted(p.name for p in GOLDEN.iterdir() if (p / "spec.toml").is_file())


def load_golden(case: str, dialect: str) -> tuple[str, str | None]:
    """(SQL compiled now, SQL in the golden file or None), rewriting the file first when
    SQLSTAT_UPDATE_GOLDEN=1."""
    actual = sqlstat.sql(GOLDEN / case / "spec.toml", dialect)
    path = GOLDEN / case / f"{dialect}.sql"
    if UPDATE:
        path.write_text(actual, encoding="utf-8")
    return actual, path.read_text(encoding="utf-8") if path.is_file() else None


def test_there_are_golden_cases():
    assert len(CASES) >= 3


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
@pytest.mark.parametrize("case", CASES)
def test_sql_matches_golden_file(case, dialect):
    actual, expected = load_golden(case, dialect)
    if expected is None:
        pytest.fail(f"no golden file tests/golden/{case}/{dialect}.sql; create it with SQLSTAT_UPDATE_GOLDEN=1")
    if actual != expected:
        diff = "".join(difflib.unified_diff(
            expected.splitlines(keepends=True), actual.splitlines(keepends=True),
            fromfile=f"golden/{case}/{dialect}.sql", tofile="compiled now", n=2,
        ))
        pytest.fail(f"SQL for {case}/{dialect} changed (SQLSTAT_UPDATE_GOLDEN=1 accepts it):\n{diff}", pytrace=False)


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
@pytest.mark.parametrize("case", CASES)
def test_golden_file_parses_back_as_one_select(case, dialect):
    text = (GOLDEN / case / f"{dialect}.sql").read_text(encoding="utf-8")
    statements = [s for s in sqlglot.parse(text, read=DIALECTS[dialect].sqlglot) if s is not None]
    assert len(statements) == 1 and isinstance(statements[0], exp.Select)


@pytest.mark.parametrize("case", CASES)
def test_no_stale_golden_files(case):
    files = {p.stem for p in (GOLDEN / case).glob("*.sql")}
    assert files == set(DIALECTS), f"golden/{case}: files {sorted(files ^ set(DIALECTS))} do not match the dialects"

"""The read-only proof: every emitted query, in every dialect, is one SELECT over declared sources."""

from __future__ import annotations

import pytest
import sqlglot
from sqlglot import exp

import sqlstat
from sqlstat import compile as compile_module
from sqlstat.dialects import DIALECTS, get_dialect
from sqlstat.readonly import FORBIDDEN, ReadOnlyViolation, check_read_only
from sqlstat.spec import load_spec

from .conftest import PROJECT, spec_text

DEMO = PROJECT / "sample_data" / "return_reminders.toml"
METRICS = (
    'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
    'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
    'name = "spend_z"\nkind = "mean"\nvalue = "sum(amount)"\nsigma = 3.5',
    'name = "pooled"\nkind = "mean"\nvalue = "avg(amount)"\nequal_variance = true\nmissing = "exclude"',
)
SPECS = {
    "tables": spec_text(*METRICS, assignment_source="analytics.assignments", events_source="analytics.events"),
    "three_part": spec_text(*METRICS, assignment_source="wh.analytics.assignments", events_source='\\"Raw\\".\\"Events\\"'),
    "query_source": spec_text(
        *METRICS, assignment_source="(select unit, arm from raw.assignments where unit > 0)",
        events_source="(with e as (select * from raw.events) select * from e where amount >= 0)"),
    "no_events": spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', events=False,
                           assignment_source="analytics.assignments"),
}


def _assert_pure_select(text: str, dialect: str, allowed_tables: set[str]) -> None:
    """An independent walk of the output (not the module under test): one SELECT, no writes."""
    statements = [s for s in sqlglot.parse(text, read=DIALECTS[dialect].sqlglot) if s is not None]
    assert len(statements) == 1 and isinstance(statements[0], exp.Select)
    tree = statements[0]
    assert not any(isinstance(n, FORBIDDEN) and not isinstance(n.parent, exp.Table) for n in tree.walk())
    ctes = {c.alias_or_name for c in tree.find_all(exp.CTE)}
    names = {".".join(p.name for p in t.parts).lower() for t in tree.find_all(exp.Table) if isinstance(t.this, exp.Identifier)}
    assert names - {c.lower() for c in ctes} <= allowed_tables, names


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
@pytest.mark.parametrize("name", sorted(SPECS))
def test_every_dialect_emits_one_select_over_declared_tables(write_spec, name, dialect):
    text = sqlstat.sql(write_spec(SPECS[name]), dialect)
    allowed = {"analytics.assignments", "analytics.events", "wh.analytics.assignments", "raw.events",
               "raw.assignments"}
    _assert_pure_select(text, dialect, allowed)


def test_demo_reads_only_its_two_files():
    text = sqlstat.sql(DEMO, "duckdb")
    tree = sqlglot.parse_one(text, read="duckdb")
    readers = [t.this for t in tree.find_all(exp.Table) if isinstance(t.this, exp.Func)]
    paths = sorted(r.find(exp.Literal).this for r in readers)
    assert [p.rsplit("/", 1)[-1] for p in paths] == ["assignments.parquet", "loans.parquet"]


DUCK = get_dialect("duckdb")
PG = get_dialect("postgres")
DECLARED = {("t",)}


@pytest.mark.parametrize(
    "sql, dialect, words",
    [
        ("DROP TABLE t", DUCK, "must be a SELECT"),
        ("SELECT 1 FROM t; SELECT 2 FROM t", DUCK, "exactly one statement"),
        ("SELECT 1 FROM t; DROP TABLE t", PG, "exactly one statement"),
        ("INSERT INTO t VALUES (1)", PG, "must be a SELECT"),
        ("PRAGMA enable_profiling", DUCK, "must be a SELECT"),
        ("SET search_path = x", PG, "must be a SELECT"),
        ("COPY t TO '/tmp/x.csv'", DUCK, "must be a SELECT"),
        ("ATTACH 'x.db' AS x", DUCK, "must be a SELECT"),
        ("SELECT * INTO evil FROM t", PG, "INTO"),
        ("SELECT * FROM t FOR UPDATE", PG, "LOCK"),
        ("WITH d AS (DELETE FROM t RETURNING *) SELECT * FROM d", PG, "DELETE"),
        ("SELECT * FROM other", PG, "does not declare"),
        ("SELECT * FROM s.t", PG, "does not declare"),
        ('SELECT * FROM "x.csv"', DUCK, "looks like a file path"),
        ("SELECT * FROM read_csv('/etc/passwd')", DUCK, "not a declared source"),
        ("SELECT * FROM read_parquet('other.parquet')", DUCK, "not a declared source"),
        ("SELECT * FROM read_parquet('data.parquet')", PG, "table function"),
        ("SELECT * FROM generate_series(1, 3)", PG, "table function"),
        ("SELECT pg_sleep(1) FROM t", PG, "unknown function"),
        ("SELECT pg_read_file('/etc/passwd') FROM t", PG, "unknown function"),
        ("SELECT 1 /*! DROP TABLE t */ FROM t", DUCK, "comment"),
        ("SELECT * FROM t WHERE a = $1", PG, "PARAMETER"),
        ("WITH t AS (SELECT 1) SELECT * FROM t", PG, "name of one of the query's own steps"),
    ],
)
def test_the_proof_refuses_anything_but_a_pure_read(sql, dialect, words):
    with pytest.raises(ReadOnlyViolation, match=words.replace("(", r"\(")):
        check_read_only(sql, dialect, tables=DECLARED, files={"data.parquet"})


def test_the_proof_accepts_declared_sources():
    check_read_only("SELECT * FROM read_parquet('data.parquet')", DUCK, tables=set(), files={"data.parquet"})
    check_read_only("WITH a AS (SELECT * FROM t) SELECT COUNT(*) FROM a", PG, tables=DECLARED)


def test_compile_sql_runs_the_proof_on_what_it_returns(write_spec, monkeypatch):
    """A template or dialect bug that added a statement would be stopped before anyone saw the SQL."""
    experiment = load_spec(write_spec(SPECS["tables"]))
    real_finish = compile_module.finish
    monkeypatch.setattr(compile_module, "finish", lambda *a, **k: real_finish(*a, **k) + ";\nDROP TABLE analytics.events")
    with pytest.raises(ReadOnlyViolation, match="exactly one statement"):
        compile_module.compile_sql(experiment, "postgres")

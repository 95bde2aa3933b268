"""Traps of the servers that only show at real sizes or with real connection settings:
PostgreSQL's JIT compiler, and the driver settings given as URL query parameters."""

from __future__ import annotations

import pytest

import sqlstat
from sqlstat import engines

from .conftest import spec_text
from .engine_fixtures import PG_URL

SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
CONVERTED = 'name = "converted"\nkind = "proportion"\nvalue = "count(*) > 0"'
# jit_above_cost = 0 makes PostgreSQL JIT-compile every query, as a real-sized table does
# once the planner's cost estimate passes the default 100000.
JIT_EVERYTHING = "-c jit=on -c jit_above_cost=0"


@pytest.fixture(scope="module")
def pg_tables(request):
    db = request.getfixturevalue("engine_db")
    from .test_engines import matrix_data

    assignments, events = matrix_data(seed=4, units_per_arm=30)
    return db.load("jit_assignments", assignments), db.load("jit_events", events)


def _has_jit(plan) -> bool:
    return any("JIT" in node for node in plan)


@pytest.mark.parametrize("engine_db", ["postgres"], indirect=True)
def test_postgres_runs_of_sqlstat_are_not_jit_compiled(engine_db, pg_tables, monkeypatch):
    import psycopg

    a, e = pg_tables
    spec = sqlstat.parse_spec(spec_text(SPEND, CONVERTED, assignment_source=a, events_source=e))
    explain = "EXPLAIN (ANALYZE, FORMAT JSON) " + sqlstat.sql(spec, "postgres")
    monkeypatch.setenv("PGOPTIONS", JIT_EVERYTHING)  # read by libpq for every new connection
    # The control: a plain connection with these settings does JIT-compile this query.
    with psycopg.connect(PG_URL) as con:
        assert con.execute("SHOW jit").fetchone()[0] == "on"
        assert _has_jit(con.execute(explain).fetchone()[0]), "the server should JIT here (is LLVM JIT installed?)"
    # sqlstat's own connection, the one `run --db postgresql://...` uses, does not.
    with engines.connect(PG_URL) as eng:
        rows = eng.run(explain)
        assert not _has_jit(rows[0]["query plan"]), rows[0]["query plan"]
        assert eng.run("SELECT current_setting('jit') AS jit")[0]["jit"] == "off"
    # A caller's own connection keeps its settings (the docs tell them to turn JIT off).
    with psycopg.connect(PG_URL) as con:
        assert engines.engine_for(con, "postgres").run("SELECT current_setting('jit') AS jit")[0]["jit"] == "on"
    with engines.connect(PG_URL) as eng:
        analysis = sqlstat.run(spec, engine=eng)
    assert {r.metric for r in analysis.results} == {"spend", "converted"}

"""Traps of the servers that only show at real sizes or with real connection settings:
PostgreSQL's JIT compiler, and the driver settings given as URL query parameters."""

from __future__ import annotations

from urllib.parse import urlsplit

import pytest

import sqlstat
from sqlstat import engines
from sqlstat.errors import EngineError, UsageError

from .conftest import spec_text
from .engine_fixtures import MYSQL_URL, PG_URL, unavailable

SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
CONVERTED = 'name = "converted"\nkind = "proportion"\nvalue = "count(*) > 0"'
# jit_above_cost = 0 makes PostgreSQL JIT-compile every query, as a real-sized table does
# once the planner's cost estimate passes the default 100000.
JIT_EVERYTHING = "-c jit=on -c jit_above_cost=0"


@pytest.fixture(scope="module")
def pg_tables(engine_db):
    db = engine_db
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


# --------------------------------------------------------------------------- URL settings

@pytest.fixture(scope="module")
def pg_server():
    try:
        engines.connect(PG_URL).close()
    except EngineError as err:
        unavailable("postgres", str(err))


@pytest.fixture(scope="module")
def mysql_server():
    try:
        engines.connect(MYSQL_URL).close()
    except EngineError as err:
        unavailable("mysql", str(err))


def _with_query(url: str, query: str) -> str:
    return url.split("?")[0] + "?" + query


@pytest.mark.parametrize("query", ["sslmode=require", "sslmode=verify-full&connect_timeout=5"])
def test_postgres_url_asking_for_tls_is_refused_by_a_server_without_it(query, pg_server):
    # The local server has no TLS (ssl = off), as `psql "sslmode=require"` also finds.
    import psycopg

    with psycopg.connect(PG_URL) as con:
        if con.execute("SHOW ssl").fetchone()[0] == "on":
            pytest.skip("this PostgreSQL server offers TLS")
    with pytest.raises(EngineError) as info:
        engines.connect(_with_query(PG_URL, query))
    text = str(info.value)
    assert info.value.exit_code == 3 and "SSL" in text and "does not offer one" in text, text


@pytest.mark.parametrize("query", ["ssl_mode=REQUIRED", "ssl_mode=verify_identity", "ssl_verify_cert=true"])
def test_mysql_url_asking_for_tls_is_refused_by_a_server_without_it(query, mysql_server):
    import pymysql

    parts = urlsplit(MYSQL_URL)
    con = pymysql.connect(host=parts.hostname, port=parts.port, user=parts.username or "root", password="")
    with con.cursor() as cur:
        cur.execute("SHOW VARIABLES LIKE 'have_ssl'")
        if cur.fetchone()[1] == "YES":
            pytest.skip("this MariaDB server offers TLS")
    con.close()
    with pytest.raises(EngineError) as info:
        engines.connect(_with_query(MYSQL_URL, query))
    text = str(info.value)
    assert info.value.exit_code == 3 and "SSL is required" in text and "does not offer one" in text, text


def test_postgres_url_settings_reach_the_connection(pg_server):
    url = _with_query(PG_URL, "application_name=sqlstat-i-test&options=-c%20statement_timeout%3D4321&connect_timeout=7")
    with engines.connect(url) as eng:
        row = eng.run("SELECT current_setting('application_name') AS app, "
                      "current_setting('statement_timeout') AS timeout")[0]
    assert row == {"app": "sqlstat-i-test", "timeout": "4321ms"}


def test_mysql_url_settings_reach_the_connection(mysql_server):
    with engines.connect(_with_query(MYSQL_URL, "ssl_mode=DISABLED&program_name=sqlstat-i-test&read_timeout=30")) as eng:
        assert eng.run("SELECT 1 AS one") == [{"one": 1}]


@pytest.mark.parametrize("url, allowed", [
    (PG_URL + "?sslmode=require&foo=bar", "sslmode, sslrootcert"),
    (PG_URL + "?sslmod=require", "sslmode, sslrootcert"),
    (MYSQL_URL + "?sslmode=require", "ssl_mode, ssl_ca"),
])
def test_unknown_url_parameters_are_an_error_naming_the_allowed_ones(url, allowed):
    with pytest.raises(UsageError) as info:
        engines.connect(url)
    assert info.value.exit_code == 2 and allowed in str(info.value), str(info.value)


@pytest.mark.parametrize("url, what", [(PG_URL + "?sslmode=bogus", "verify-full"),
                                       (MYSQL_URL + "?ssl_mode=maybe", "VERIFY_IDENTITY"),
                                       (MYSQL_URL + "?ssl_disabled=perhaps", "true or false")])
def test_bad_tls_values_are_an_error_naming_the_allowed_ones(url, what):
    with pytest.raises(UsageError, match=what):
        engines.connect(url)

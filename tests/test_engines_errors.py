"""Engine failures become one paragraph that names the dialect, the database (password
masked) and the part of the spec the engine's message points at; the CLI exits with 3."""

from __future__ import annotations

import textwrap

import pytest
from typer.testing import CliRunner

import sqlstat
from sqlstat.cli import app
from sqlstat.errors import EngineError

from .conftest import spec_text
from .engine_fixtures import MYSQL_URL, PG_URL

runner = CliRunner()
SECRET = "Hunter2-not-a-real-one"
SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'


def one_paragraph(text: str) -> bool:
    return "\n" not in text.strip()


def failure(db, spec_text_: str) -> EngineError:
    with db.engine() as eng, pytest.raises(EngineError) as info:
        sqlstat.run(sqlstat.parse_spec(spec_text_), engine=eng)
    return info.value


@pytest.fixture(scope="session")
def tables(engine_db):
    from .test_engines import matrix_data

    assignments, events = matrix_data(seed=2, units_per_arm=20)
    return engine_db.load("err_assignments", assignments), engine_db.load("err_events", events)


def test_missing_table_names_the_source(engine_db, tables):
    a, e = tables
    missing = e.replace("err_events", "no_such_events")
    err = failure(engine_db, spec_text(SPEND, assignment_source=a, events_source=missing))
    text = str(err)
    assert one_paragraph(text), text
    assert err.exit_code == 3 and err.dialect == engine_db.dialect
    assert f"(dialect: {engine_db.dialect})" in text
    assert f"the [events] source {missing!r}" in text, text


def test_missing_column_names_the_metric(engine_db, tables):
    a, e = tables
    typo = 'name = "spend"\nkind = "mean"\nvalue = "sum(amout)"'
    err = failure(engine_db, spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', typo,
                                       assignment_source=a, events_source=e))
    text = str(err)
    assert one_paragraph(text), text
    assert "metric[2] 'spend' (value = 'sum(amout)')" in text, text
    assert f"(dialect: {engine_db.dialect})" in text


def test_missing_unit_column_names_the_key(engine_db, tables):
    a, e = tables
    text = spec_text(SPEND, assignment_source=a, events_source=e).replace(
        'unit = "unit"\narm = "arm"', 'unit = "visitor"\narm = "arm"')
    err = failure(engine_db, text)
    assert "[assignment] unit = 'visitor'" in str(err), str(err)


@pytest.mark.parametrize("engine_db", ["postgres"], indirect=True)
def test_boolean_used_as_a_number_gets_a_hint_on_postgres(engine_db):
    """PostgreSQL cannot cast boolean to double; the message says to write a condition."""
    import numpy as np

    table = engine_db.load("flags", {"unit": np.arange(1, 41), "arm": np.array(["control", "treatment"] * 20),
                                     "flag": np.arange(40) % 3 == 0})
    text = textwrap.dedent(f"""
        [experiment]
        name = "flags"
        control = "control"
        [assignment]
        source = "{table}"
        unit = "unit"
        arm = "arm"
        per_unit = true
        [[metric]]
        name = "flag"
        kind = "proportion"
        value = "flag"
        """)
    err = failure(engine_db, text)
    assert "write it as a condition" in str(err) and "flag = true" in str(err)
    ok = text.replace('value = "flag"', 'value = "flag = true"')
    with engine_db.engine() as eng:
        assert sqlstat.run(sqlstat.parse_spec(ok), engine=eng).results


# ------------------------------------------------------------------ through the CLI


def cli(*args):
    res = runner.invoke(app, [str(a) for a in args])
    return res.exit_code, res.output


@pytest.mark.parametrize("engine_db", ["duckdb"], indirect=True)
def test_cli_duckdb_missing_table_exits_3(engine_db, tables, tmp_path):
    a, _ = tables
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text(SPEND, assignment_source=a.replace("err_assignments", "gone"), events=False)
                    .replace('value = "sum(amount)"', 'value = "count(*)"'))
    code, out = cli("run", spec, "--db", f"duckdb:///{engine_db.path}")
    assert code == 3, out
    assert out.startswith("Error: DuckDB") and "[assignment] source" in out and "(dialect: duckdb)" in out
    assert one_paragraph(out), out
    assert "Traceback" not in out


@pytest.mark.parametrize("engine_db", ["postgres"], indirect=True)
def test_cli_postgres_missing_column_exits_3(engine_db, tables, tmp_path):
    a, e = tables
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amout)"', assignment_source=a,
                              events_source=e))
    code, out = cli("run", spec, "--db", PG_URL)
    assert code == 3, out
    assert out.startswith("Error: PostgreSQL") and "metric[1] 'spend'" in out and "(dialect: postgres)" in out
    assert one_paragraph(out), out


def url_with(url: str, *, user: str | None = None, password: str = SECRET, port: int | None = None) -> str:
    from urllib.parse import urlsplit

    p = urlsplit(url)
    return f"{p.scheme}://{user or p.username}:{password}@{p.hostname}:{port or p.port}{p.path}"


@pytest.mark.parametrize("engine_db, server_url, title", [("postgres", PG_URL, "PostgreSQL"),
                                                         ("mysql", MYSQL_URL, "MySQL / MariaDB")],
                         indirect=["engine_db"])
@pytest.mark.parametrize("problem", ["refused", "credentials"])
def test_cli_connection_errors_are_clear_and_never_show_the_password(engine_db, tables, tmp_path, server_url,
                                                                     title, problem):
    a, e = tables
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text(SPEND, assignment_source=a, events_source=e))
    if problem == "refused":
        url, words = url_with(server_url, port=1), "is the server running"
    else:
        # PostgreSQL here trusts local users, so an unknown role is what it refuses;
        # MariaDB checks the root password.
        url = url_with(server_url, user="no_such_user" if engine_db.dialect == "postgres" else None)
        words = "check the user name and password"
    code, out = cli("run", spec, "--db", url)
    assert code == 3, out
    assert SECRET not in out
    assert ":***@" in out
    assert out.startswith(f"Error: cannot connect to {title}") and words in out, out
    assert f"(dialect: {engine_db.dialect})" in out
    assert one_paragraph(out), out


@pytest.mark.parametrize("url, words", [("duckdb:///no/such/file.duckdb", "DuckDB database file not found"),
                                        ("sqlite:///no/such/file.sqlite", "SQLite database file not found"),
                                        ("oracle://scott:tiger@db/orcl", "unsupported database URL")])
def test_cli_database_that_cannot_be_opened(tmp_path, url, words):
    """The embedded engines' counterpart of 'connection refused': a file that is not there
    (exit 3); an unknown scheme is a usage error (exit 2) that still masks the password."""
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text(SPEND, assignment_source="a", events_source="e"))
    code, out = cli("run", spec, "--db", url)
    assert code == (2 if url.startswith("oracle") else 3), out
    assert words in out and one_paragraph(out), out
    assert "tiger" not in out

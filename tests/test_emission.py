"""Emission forms for scheduling: the plain SELECT, a view wrapper, one file per dialect."""

from __future__ import annotations

import sqlite3
import subprocess
import sys

import duckdb
import numpy as np
import sqlglot
from sqlglot import exp
from typer.testing import CliRunner

import sqlstat
from sqlstat.cli import app
from sqlstat.dialects import DIALECTS

from .conftest import PROJECT, make_experiment, spec_text

METRICS = ('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
           'name = "conv"\nkind = "proportion"\nvalue = "count_if(converted) > 0"')


def test_view_form_gives_the_same_rows_as_the_select_on_duckdb(tmp_path, write_spec):
    make_experiment(tmp_path, seed=5)
    path = write_spec(spec_text(*METRICS))
    con = duckdb.connect()
    con.execute("CREATE SCHEMA dash")
    direct = con.execute(sqlstat.sql(path)).fetchall()
    con.execute(sqlstat.sql(path, view="dash.experiment_readout"))
    via_view = con.execute("SELECT * FROM dash.experiment_readout ORDER BY metric_index, segment_index, is_control DESC, arm").fetchall()
    assert via_view == direct
    con.execute(sqlstat.sql(path, view="dash.experiment_readout"))  # replacing works too


def test_view_form_on_sqlite_drops_then_creates(tmp_path, write_spec):
    rng = np.random.default_rng(1)
    con = sqlite3.connect(":memory:")
    con.execute("CREATE TABLE asg (unit INTEGER, arm TEXT)")
    con.execute("CREATE TABLE ev (unit INTEGER, amount REAL, converted INTEGER)")
    con.executemany("INSERT INTO asg VALUES (?, ?)", [(i, "control" if i % 2 else "treatment") for i in range(200)])
    con.executemany("INSERT INTO ev VALUES (?, ?, ?)", [(int(rng.integers(200)), float(rng.normal(5, 2)), int(rng.random() < 0.3))
                                                         for _ in range(600)])
    path = write_spec(spec_text(METRICS[0], assignment_source="asg", events_source="ev"))
    text = sqlstat.sql(path, "sqlite", view="readout")
    assert text.startswith('DROP VIEW IF EXISTS `readout`;')
    con.executescript(text)
    con.executescript(text)  # twice: replacing an existing view
    assert len(con.execute('SELECT * FROM "readout"').fetchall()) == 2


def test_view_form_parses_in_every_dialect(write_spec):
    path = write_spec(spec_text(*METRICS, assignment_source="a.asg", events_source="a.ev"))
    for name, d in DIALECTS.items():
        statements = [s for s in sqlglot.parse(sqlstat.sql(path, name, view="dash.readout"), read=d.sqlglot) if s]
        create = statements[-1]
        assert isinstance(create, exp.Create) and create.kind == "VIEW", name
        assert isinstance(create.expression, exp.Select) and not create.expression.args.get("order"), name


def test_folder_form_writes_one_file_per_dialect(tmp_path, write_spec):
    path = write_spec(spec_text(*METRICS, assignment_source="a.asg", events_source="a.ev"))
    out = tmp_path / "scheduled"
    res = CliRunner().invoke(app, ["sql", str(path), "--folder", str(out)])
    assert res.exit_code == 0, res.output
    files = sorted(p.name for p in out.iterdir())
    assert files == sorted(f"synthetic.{d}.sql" for d in DIALECTS)
    for d in DIALECTS:
        assert (out / f"synthetic.{d}.sql").read_text() == sqlstat.sql(path, d)


def test_file_sources_give_the_same_sql_from_any_working_directory_and_a_portable_view(tmp_path):
    # The spec's relative file sources are resolved against the spec's folder, and the SQL
    # names them by absolute path: byte-identical text from two working directories.
    import shutil

    import duckdb

    demo = tmp_path / "demo"
    shutil.copytree(PROJECT / "sample_data", demo)
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    exe = [sys.executable, "-m", "sqlstat.cli"]
    outputs = []
    for cwd, spec in ((demo, "return_reminders.toml"), (elsewhere, "../demo/return_reminders.toml"),
                      (tmp_path, str(demo / "return_reminders.toml"))):
        done = subprocess.run([*exe, "sql", spec, "--as-view", "readout", "--readout"], cwd=cwd,
                              capture_output=True, text=True, check=True)
        outputs.append(done.stdout)
    assert outputs[0] == outputs[1] == outputs[2]
    assert f"'{(demo / 'loans.parquet').as_posix()}'" in outputs[0]
    # The view is created from one folder and read from another.
    db = tmp_path / "views.db"
    (tmp_path / "view.sql").write_text(outputs[0])
    code = f"import duckdb, pathlib; duckdb.connect({str(db)!r}).execute(pathlib.Path({str(tmp_path / 'view.sql')!r}).read_text())"
    subprocess.run([sys.executable, "-c", code], cwd=demo, check=True)
    with duckdb.connect(str(db), read_only=True) as con:
        import os

        here = os.getcwd()
        os.chdir(elsewhere)
        try:
            rows = con.execute("SELECT COUNT(*) FROM readout").fetchone()[0]
        finally:
            os.chdir(here)
    assert rows > 0

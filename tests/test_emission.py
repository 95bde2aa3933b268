"""Emission forms for scheduling: the plain SELECT, a view wrapper, one file per dialect."""

from __future__ import annotations

import sqlite3

import duckdb
import numpy as np
import sqlglot
from sqlglot import exp
from typer.testing import CliRunner

import sqlstat
from sqlstat.cli import app
from sqlstat.dialects import DIALECTS

from .conftest import make_experiment, spec_text

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

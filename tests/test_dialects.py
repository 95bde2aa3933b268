"""Emitted SQL for every dialect parses back (sqlglot, same dialect) as exactly one SELECT."""

from __future__ import annotations

import pytest
import sqlglot
from sqlglot import exp

import sqlstat
from sqlstat.dialects import DIALECTS

from .conftest import spec_text

METRICS = (
    'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
    'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
    'name = "spend_z"\nkind = "mean"\nvalue = "sum(amount)"\nsigma = 3.5',
    'name = "spend_pooled"\nkind = "mean"\nvalue = "avg(amount)"\nequal_variance = true\nmissing = "exclude"',
)


@pytest.fixture
def table_spec(write_spec):
    return write_spec(spec_text(*METRICS, assignment_source="analytics.assignments", events_source="analytics.events"))


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_every_dialect_parses_back_as_one_select(table_spec, dialect):
    text = sqlstat.sql(table_spec, dialect)
    statements = [s for s in sqlglot.parse(text, read=DIALECTS[dialect].sqlglot) if s is not None]
    assert len(statements) == 1
    assert isinstance(statements[0], exp.Select)
    assert sqlstat.sql(table_spec, dialect) == text  # deterministic


def test_dialect_traps_are_rewritten(table_spec):
    assert "varSampStable" in sqlstat.sql(table_spec, "clickhouse")
    tsql = sqlstat.sql(table_spec, "tsql")
    assert "VARIANCE(" not in tsql and "OVER (PARTITION BY" in tsql  # T-SQL has no VARIANCE; centred form
    lite = sqlstat.sql(table_spec, "sqlite").upper()
    assert "VARIANCE(" not in lite and "VAR_SAMP(" not in lite and "OVER (PARTITION BY" in lite
    mysql = sqlstat.sql(table_spec, "mysql")
    assert "COUNT_IF" not in mysql.upper()
    assert '"ANALYTICS"."ASSIGNMENTS"' in sqlstat.sql(table_spec, "snowflake")

"""The dialect traps, checked on the parsed SQL of all twelve dialects (including the ones
no engine runs here): the registry in sqlstat/dialects.py must have handled each."""

from __future__ import annotations

import re

import pytest
import sqlglot
from sqlglot import exp

import sqlstat
from sqlstat.compile import template_dir
from sqlstat.dialects import DIALECTS

from .conftest import spec_text

METRICS = (
    'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
    'name = "avg_items"\nkind = "mean"\nvalue = "avg(items)"\nmissing = "exclude"',
    'name = "items_per_order"\nkind = "mean"\nvalue = "sum(items) / count(*)"\nmissing = "exclude"',
    'name = "share"\nkind = "mean"\nvalue = "sum(items) / sum(quantity)"\nmissing = "exclude"',
)


@pytest.fixture(scope="module")
def emitted(tmp_path_factory):
    path = tmp_path_factory.mktemp("traps") / "spec.toml"
    path.write_text(spec_text(*METRICS, assignment_source="shop.assignments", events_source="shop.orders",
                              extra_experiment=""))
    return {d: sqlstat.sql(path, d) for d in DIALECTS}


def parsed(emitted, dialect) -> exp.Select:
    return sqlglot.parse_one(emitted[dialect], read=DIALECTS[dialect].sqlglot)


def user_part(tree: exp.Select) -> exp.Expression:
    """The CTE that aggregates the spec's own expressions (unit_events)."""
    return next(c.this for c in tree.find_all(exp.CTE) if c.alias_or_name.lower() == "unit_events")


def is_float(node: exp.Expression) -> bool:
    return isinstance(node, exp.Cast) and node.to.is_type(*exp.DataType.FLOAT_TYPES)


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_user_sums_averages_and_dividends_are_double(emitted, dialect):
    part = user_part(parsed(emitted, dialect))
    aggregates = list(part.find_all(exp.Sum, exp.Avg))
    assert len(aggregates) == 5
    for node in aggregates:
        assert is_float(node.this), f"{dialect}: {node.sql(DIALECTS[dialect].sqlglot)}"
    divisions = list(part.find_all(exp.Div))
    assert len(divisions) == 2
    for node in divisions:
        left = node.this.unnest() if isinstance(node.this, exp.Paren) else node.this
        assert is_float(left) or (isinstance(left, exp.Sum) and is_float(left.this)), dialect
        assert isinstance(node.expression, exp.Nullif), f"{dialect}: divisor not guarded"


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_no_count_if_and_every_identifier_quoted(emitted, dialect):
    tree = parsed(emitted, dialect)
    assert not list(tree.find_all(exp.CountIf))
    assert "count_if" not in emitted[dialect].lower() and "countif" not in emitted[dialect].lower()
    unquoted = [i.name for i in tree.find_all(exp.Identifier) if not i.quoted]
    assert not unquoted, f"{dialect}: unquoted identifiers {unquoted[:5]}"


@pytest.mark.parametrize("dialect", sorted(DIALECTS))
def test_variance_is_native_only_where_stable(emitted, dialect):
    sql = emitted[dialect]
    d = DIALECTS[dialect]
    native = [n for n in parsed(emitted, dialect).find_all(exp.Variance, exp.VariancePop)]
    if d.variance == "centred":
        assert not native and "OVER (PARTITION BY" in sql.upper(), dialect
    elif dialect == "clickhouse":
        assert "varSampStable(" in sql and "varSamp(" not in sql
    else:
        assert native, dialect


def test_clickhouse_joins_fill_nulls(emitted):
    """Without join_use_nulls, ClickHouse's LEFT JOIN gives 0, not NULL, for units with no events."""
    assert re.search(r'SETTINGS\s+"join_use_nulls" = 1\s*$', emitted["clickhouse"])


def test_sqlite_names_are_never_double_quoted(emitted):
    """SQLite would read an unknown "name" as a string literal (a silent 0)."""
    assert '"' not in emitted["sqlite"]
    assert "`items`" in emitted["sqlite"]


def test_templates_never_branch_on_the_dialect():
    for path in template_dir().glob("*.j2"):
        text = path.read_text()
        assert "dialect" not in text.replace("dialects.py", ""), path

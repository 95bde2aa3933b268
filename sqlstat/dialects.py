"""Target dialect name -> its capabilities, and the one place where dialect traps are handled.

Templates render canonical (DuckDB) SQL; compile.py parses it with sqlglot and calls
``finish`` here, which applies each dialect's rewrites and generates the target text.
Every entry below has a one-line reason: if you find a new trap, add a capability here,
never an ``if dialect == ...`` in a template.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from sqlglot import exp
from sqlglot.optimizer.normalize_identifiers import normalize_identifiers

from .errors import UsageError


@dataclass(frozen=True)
class Dialect:
    """What sqlstat needs to know about one SQL dialect."""

    name: str  # sqlstat's name for it, used on the command line and in URLs
    sqlglot: str  # sqlglot's dialect name
    title: str  # for docs and messages
    # "native": the engine's sample-variance aggregate is numerically stable (Welford,
    # Youngs-Cramer or similar) and is used as is. "centred": the engine has none (or only
    # an unstable one), so the template subtracts each arm's mean with a window AVG first
    # and uses the corrected two-pass formula of Chan, Golub and LeVeque (1983).
    variance: str = "native"
    # Sample covariance (ratio metrics, CUPED). "native": a stable COVAR_SAMP exists.
    # "via_variance": none exists, so cov(a, b) = (var(a + b) - var(a) - var(b)) / 2 with the
    # stable variance aggregate. "centred" follows the variance strategy of the same name.
    covariance: str = "native"
    # Aggregates to call by another name in this dialect (stable variants, missing aliases).
    renames: dict[type[exp.Expression], str] = field(default_factory=dict)
    reads_files: bool = False  # can read .parquet/.csv paths as a source (DuckDB only)
    replaces_views: bool = True  # has CREATE OR REPLACE VIEW (T-SQL's CREATE OR ALTER counts)
    executed: str = "parsed only"  # how the test suite covers it (README support table)


_DIALECTS = [
    Dialect("duckdb", "duckdb", "DuckDB", reads_files=True, executed="executed (embedded)"),
    Dialect("postgres", "postgres", "PostgreSQL", executed="executed (server)"),
    # MariaDB has no sqlglot dialect of its own; MySQL's is the right one for what we emit.
    # MySQL and MariaDB have VAR_SAMP but no covariance aggregate.
    Dialect("mysql", "mysql", "MySQL / MariaDB", covariance="via_variance", executed="executed on MariaDB (server)"),
    # SQLite has no variance aggregate at all.
    # SQLite also lacks CREATE OR REPLACE VIEW: the view form drops the old view first.
    Dialect("sqlite", "sqlite", "SQLite", variance="centred", covariance="centred", replaces_views=False,
            executed="executed (embedded)"),
    Dialect("spark", "spark", "Spark SQL", executed="executed (pyspark, local mode)"),
    Dialect("databricks", "databricks", "Databricks SQL"),
    # varSamp/covarSamp lose all digits on data with a large offset; the *Stable variants do not.
    Dialect(
        "clickhouse",
        "clickhouse",
        "ClickHouse",
        renames={exp.Variance: "varSampStable", exp.CovarSamp: "covarSampStable"},
        executed="executed (chdb, embedded)",
    ),
    Dialect("snowflake", "snowflake", "Snowflake"),
    Dialect("bigquery", "bigquery", "BigQuery"),
    # Redshift documents no covariance aggregate.
    Dialect("redshift", "redshift", "Amazon Redshift", covariance="via_variance"),
    Dialect("trino", "trino", "Trino / Presto"),
    # T-SQL spells the sample variance VAR (sqlglot would print VARIANCE, which T-SQL lacks).
    # T-SQL has no covariance aggregate either.
    Dialect("tsql", "tsql", "SQL Server (T-SQL)", covariance="via_variance", renames={exp.Variance: "VAR"}),
]

DIALECTS: dict[str, Dialect] = {d.name: d for d in _DIALECTS}
ALIASES = {"postgresql": "postgres", "mariadb": "mysql", "sqlserver": "tsql", "mssql": "tsql", "presto": "trino"}


def get_dialect(name: str) -> Dialect:
    """Look a dialect up by sqlstat name or a common alias; the error lists the valid names."""
    key = ALIASES.get(name.lower(), name.lower()) if isinstance(name, str) else name
    try:
        return DIALECTS[key]
    except KeyError:
        import difflib

        hint = difflib.get_close_matches(str(name).lower(), list(DIALECTS) + list(ALIASES), n=1)
        extra = f"; did you mean {hint[0]!r}?" if hint else ""
        raise UsageError(f"unknown dialect {name!r}{extra} (choose from: {', '.join(DIALECTS)})") from None


def finish(tree: exp.Expression, dialect: Dialect, *, pretty: bool = True) -> str:
    """Apply the dialect's rewrites to a canonical tree and print it in that dialect.

    Identifiers are normalised with the target's case rules first (so an unquoted
    ``member_id`` becomes ``"MEMBER_ID"`` on Snowflake) and then always quoted, which makes
    reserved words and unusual names safe without changing what they refer to.
    """
    tree = normalize_identifiers(tree.copy(), dialect=dialect.sqlglot)
    if dialect.renames:

        def rename(node: exp.Expression) -> exp.Expression:
            new = dialect.renames.get(type(node))
            if new is None:
                return node
            args = [a for a in (node.this, node.args.get("expression")) if a is not None]
            return exp.Anonymous(this=new, expressions=args)

        tree = tree.transform(rename)
    return tree.sql(dialect=dialect.sqlglot, identify=True, pretty=pretty)


def finish_view(tree: exp.Expression, dialect: Dialect, name: str, *, pretty: bool = True) -> str:
    """Wrap a finished SELECT as a view definition for scheduled use.

    The ORDER BY is dropped (views promise no order, and T-SQL refuses one without TOP).
    Where the dialect cannot replace a view in one statement, it is dropped first.
    """
    from .errors import UsageError

    try:
        table = exp.to_table(name, dialect=dialect.sqlglot)
    except Exception:  # sqlglot raises several kinds for a bad name
        table = None
    if table is None or not all(isinstance(p, exp.Identifier) and p.name for p in table.parts):
        raise UsageError(f"view name {name!r} must be name, schema.name or catalog.schema.name")
    select = tree.copy()
    select.set("order", None)
    view = normalize_identifiers(table, dialect=dialect.sqlglot)
    create = exp.Create(this=view, kind="VIEW", replace=dialect.replaces_views, expression=select)
    text = finish(create, dialect, pretty=pretty)
    if not dialect.replaces_views:
        drop = exp.Drop(tables=[view.copy()], kind="VIEW", exists=True)
        text = drop.sql(dialect=dialect.sqlglot, identify=True) + ";\n" + text
    return text

"""Target dialect name -> its capabilities, and the one place where dialect traps are handled.

Templates render canonical (DuckDB) SQL; compile.py parses it with sqlglot and calls
``finish`` here, which applies each dialect's rewrites and generates the target text.
Every entry below has a one-line reason: if you find a new trap, add a capability here,
never an ``if dialect == ...`` in a template.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import lru_cache

from sqlglot import exp
from sqlglot.dialects.dialect import Dialect as SqlglotDialect
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
    # Most WITH elements one query may have (0: no limit); beyond it, CTEs read once are
    # moved into their only reader as derived tables.
    max_ctes: int = 0
    # Longest query text the engine parses by default (0: no limit); a longer pretty-printed
    # query is printed compactly instead.
    max_query_bytes: int = 0
    # Query-level settings appended to the statement (ClickHouse: SETTINGS k = v).
    settings: dict[str, int] = field(default_factory=dict)
    # Plain functions the dialect's printer itself emits for portable forms (the read-only
    # check accepts them besides the renames): SQLite has no TIMESTAMP type, and sqlglot
    # prints CAST(x AS TIMESTAMP) as DATETIME(x), ISO text that compares like one.
    printer_functions: tuple[str, ...] = ()
    # Identifier quote to print with, when the dialect's usual one is unsafe.
    quote: str = ""
    # How a constant table (quadrature nodes, the metric list, the planned split) is
    # written: "union" (SELECT ... UNION ALL SELECT ..., which every engine reads) or
    # "values" (one VALUES list, for engines where a long UNION ALL of constants breaks).
    constant_tables: str = "union"
    # Statements sqlstat runs first inside the read-only transaction of a connection it
    # opened itself (from a URL), each lasting for that one query only.
    run_first: tuple[str, ...] = ()
    executed: str = "parsed only"  # how the test suite covers it (README support table)


_DIALECTS = [
    # DuckDB, PostgreSQL (Youngs-Cramer, since 12), MariaDB (Welford) and Spark (central
    # moments, updated online) have stable native variances: checked on NumAcc1-4 here.
    Dialect("duckdb", "duckdb", "DuckDB", reads_files=True, executed="executed (embedded)"),
    # PostgreSQL (11+, jit = on by default) JIT-compiles any query whose planner cost passes
    # jit_above_cost; the emitted query is long and its cost estimate large, so compiling
    # took 20-60x the query's own time (46 s of JIT for a 2 s query). Off for our query only.
    Dialect("postgres", "postgres", "PostgreSQL", run_first=("SET LOCAL jit = off",),
            executed="executed (server)"),
    # MariaDB has no sqlglot dialect of its own; MySQL's is the right one for what we emit.
    # MySQL and MariaDB have VAR_SAMP but no covariance aggregate.
    # MariaDB refuses more than 64 WITH elements (error 4003).
    Dialect("mysql", "mysql", "MySQL / MariaDB", covariance="via_variance", max_ctes=64,
            executed="executed on MariaDB (server)"),
    # SQLite has no variance aggregate at all. And it reads a double-quoted name that
    # matches no column as a string literal: sum("amout") is silently 0. A name in grave
    # accents is always an identifier, so a typo becomes "no such column".
    # SQLite also lacks CREATE OR REPLACE VIEW: the view form drops the old view first.
    Dialect("sqlite", "sqlite", "SQLite", variance="centred", covariance="centred", quote="`",
            replaces_views=False, printer_functions=("datetime",), executed="executed (embedded)"),
    # Spark 4.3 fails at run time on a UNION ALL of constant rows read inside a shuffle
    # stage (ClassCastException deserialising UnionExec); a VALUES list is a local table.
    Dialect("spark", "spark", "Spark SQL", constant_tables="values", executed="executed (pyspark, local mode)"),
    # Databricks runs Spark SQL: the same aggregates as the executed Spark dialect.
    Dialect("databricks", "databricks", "Databricks SQL", constant_tables="values"),
    Dialect(
        "clickhouse",
        "clickhouse",
        "ClickHouse",
        # varSamp/covarSamp lose all digits on data with a large offset; the *Stable variants do not.
        renames={exp.Variance: "varSampStable", exp.CovarSamp: "covarSampStable"},
        # Without it, a LEFT JOIN fills unmatched rows with 0 and '' instead of NULL, so
        # units with no events would count as 0 even under missing = "exclude".
        settings={"join_use_nulls": 1},
        # ClickHouse parses at most max_query_size = 262144 bytes unless told otherwise.
        max_query_bytes=262144,
        executed="executed (chdb, embedded)",
    ),
    # Snowflake, BigQuery, Redshift and SQL Server do not document how their variance and
    # covariance are computed and none runs here, so they get the two-pass forms proven on
    # six engines (Redshift and SQL Server have no covariance aggregate at all).
    Dialect("snowflake", "snowflake", "Snowflake", variance="centred", covariance="centred"),
    Dialect("bigquery", "bigquery", "BigQuery", variance="centred", covariance="centred"),
    Dialect("redshift", "redshift", "Amazon Redshift", variance="centred", covariance="centred"),
    # Trino's variance keeps a running mean and sum of squared deviations (Welford).
    Dialect("trino", "trino", "Trino / Presto"),
    # T-SQL spells the sample variance VAR (sqlglot would print VARIANCE, which T-SQL
    # lacks); unused while the variance is centred, kept for any native use.
    Dialect("tsql", "tsql", "SQL Server (T-SQL)", variance="centred", covariance="centred",
            renames={exp.Variance: "VAR"}),
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
    if dialect.constant_tables == "values":
        tree = constant_tables_as_values(tree)
    if isinstance(tree, exp.Select):
        _apply_settings(tree, dialect)
        if dialect.max_ctes:
            tree = inline_ctes(tree, dialect.max_ctes)
    return tree.sql(dialect=_printer(dialect.sqlglot, dialect.quote), identify=True, pretty=pretty)


@lru_cache(maxsize=None)
def _printer(name: str, quote: str):
    """sqlglot's dialect ``name``, or a subclass of it that prints identifiers in ``quote``."""
    if not quote:
        return name
    base = SqlglotDialect.get_or_raise(name).__class__
    tokenizer = type("Tokenizer", (base.tokenizer_class,), {
        "IDENTIFIERS": [quote] + [q for q in base.tokenizer_class.IDENTIFIERS if q != quote],
    })
    return type(f"_sqlstat_{name}_quoted", (base,), {"Tokenizer": tokenizer})


def prepare(node: exp.Expression, dialect: Dialect, *, measure: bool = False) -> exp.Expression:
    """A spec fragment made ready for the canonical template text of ``dialect``.

    Names are folded with the target's case rules here, before the template is rendered:
    DuckDB must print a reserved word such as ``Order`` quoted, and a quoted name keeps its
    case, so folding later would look for ``"Order"`` on PostgreSQL instead of ``order``.
    With ``measure``, SUM/AVG arguments and dividends are also cast to DOUBLE.
    """
    node = normalize_identifiers(node.copy(), dialect=dialect.sqlglot)
    return guard_measures(node) if measure else node


def _is_double(node: exp.Expression) -> bool:
    """True when the expression is DOUBLE on every engine: a cast, or built from one."""
    if isinstance(node, exp.Cast):
        return node.to.is_type(exp.DataType.Type.DOUBLE)
    if isinstance(node, (exp.Paren, exp.Sum, exp.Avg, exp.Min, exp.Max, exp.Neg)):
        return _is_double(node.this)
    if isinstance(node, (exp.Add, exp.Sub, exp.Mul, exp.Div)):
        return _is_double(node.this) or _is_double(node.expression)
    return False


def as_double(node: exp.Expression) -> exp.Expression:
    """``CAST(node AS DOUBLE)``, unless it already is one."""
    return node if _is_double(node) else exp.Cast(this=node, to=exp.DataType.build("DOUBLE"))


def guard_measures(tree: exp.Expression) -> exp.Expression:
    """Make a user fragment compute in double precision on every engine.

    Engines disagree on integer and decimal arithmetic: AVG of an integer is a DECIMAL
    with 4 digits on MySQL/MariaDB and an integer on SQL Server and Redshift, SUM of an
    INT overflows at 2^31 on SQL Server, ``int / int`` truncates on PostgreSQL, SQLite,
    SQL Server and Trino and gives a 4-digit DECIMAL on MySQL/MariaDB. So every SUM and
    AVG argument and every dividend is cast to DOUBLE first; sums of integers stay exact
    up to 2^53. A division by zero is an error on PostgreSQL and on Spark in ANSI mode,
    NULL or infinity elsewhere; every divisor becomes NULLIF(divisor, 0), so it is NULL
    everywhere (and the metric's missing policy applies).
    """
    tree = tree.copy()
    # innermost first, so a dividend that is already a SUM of doubles is not cast twice
    for node in reversed(list(tree.find_all(exp.Sum, exp.Avg, exp.Div, bfs=False))):
        node.set("this", as_double(node.this))
        if isinstance(node, exp.Div) and not _nonzero_literal(node.expression):
            node.set("expression", exp.Nullif(this=node.expression, expression=exp.Literal.number(0)))
    return tree


def _nonzero_literal(node: exp.Expression) -> bool:
    while isinstance(node, exp.Paren):
        node = node.this
    return isinstance(node, exp.Literal) and not node.is_string and float(node.this) != 0


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
    _apply_settings(select, dialect)
    view = normalize_identifiers(table, dialect=dialect.sqlglot)
    create = exp.Create(this=view, kind="VIEW", replace=dialect.replaces_views, expression=select)
    text = finish(create, dialect, pretty=pretty)
    if not dialect.replaces_views:
        drop = exp.Drop(tables=[view.copy()], kind="VIEW", exists=True)
        text = finish(drop, dialect, pretty=False) + ";\n" + text
    return text


def _apply_settings(select: exp.Select, dialect: Dialect) -> None:
    if dialect.settings:
        select.set("settings", [
            exp.EQ(this=exp.column(k), expression=exp.Literal.number(v)) for k, v in dialect.settings.items()
        ])


def _constant_rows(node: exp.Expression) -> list[exp.Select] | None:
    """The SELECTs of a UNION ALL chain of FROM-less single-row SELECTs, else None."""
    if isinstance(node, exp.Union) and not node.args.get("distinct"):
        left, right = _constant_rows(node.this), _constant_rows(node.expression)
        return None if left is None or right is None else left + right
    if isinstance(node, exp.Select) and all(not v for k, v in node.args.items() if k not in ("expressions", "kind")):
        return [node]
    return None


def constant_tables_as_values(tree: exp.Expression) -> exp.Expression:
    """Rewrite each WITH element that is a UNION ALL of constant rows as
    ``SELECT cols FROM (VALUES (...), ...) AS name(cols)``: the same rows and column names."""
    for cte in list(tree.find_all(exp.CTE)):
        rows = _constant_rows(cte.this)
        if not rows or len(rows) < 2:
            continue
        names = [e.alias_or_name for e in rows[0].expressions]
        if len(set(names)) != len(names) or any(len(r.expressions) != len(names) for r in rows):
            continue
        tuples = [exp.Tuple(expressions=[e.unalias() for e in r.expressions]) for r in rows]
        alias = exp.TableAlias(this=exp.to_identifier(f"{cte.alias}__rows"), columns=[exp.to_identifier(n) for n in names])
        values = exp.Values(expressions=tuples, alias=alias)
        cte.set("this", exp.select(*[exp.column(n) for n in names]).from_(values))
    return tree


def inline_ctes(select: exp.Select, limit: int) -> exp.Select:
    """Fold WITH elements that are read exactly once into their reader, as derived tables,
    until at most ``limit`` remain. Same query, fewer names, for engines that cap them."""
    with_ = select.args.get("with_") or select.args.get("with")
    if with_ is None or len(with_.expressions) <= limit:
        return select
    ctes = list(with_.expressions)
    excess = len(ctes) - limit
    for cte in list(ctes):
        if excess <= 0:
            break
        name = cte.alias
        refs = [t for t in select.find_all(exp.Table) if not t.db and t.name == name]
        if len(refs) != 1:
            continue
        ref = refs[0]
        alias = ref.alias or name
        ref.replace(exp.Subquery(this=cte.this.copy(), alias=exp.TableAlias(this=exp.to_identifier(alias))))
        cte.pop()
        excess -= 1
    return select

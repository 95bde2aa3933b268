"""User SQL fragments -> checked, canonical sqlglot trees (or a message saying what is wrong).

Everything a spec writes as SQL (metric values, filters, column names, source tables and
queries) passes through here. Text is parsed with sqlglot's DuckDB reader (the canonical
dialect), walked node by node against an allow-list, and rewritten into portable forms
(COUNT_IF and boolean aggregates become SUM(CASE ...)). Nothing a user writes is pasted
into SQL as text: later stages only ever see trees produced here.
"""

from __future__ import annotations

import difflib
import unicodedata

import sqlglot
from sqlglot import exp
from sqlglot.errors import ParseError, TokenError

CANONICAL = "duckdb"

AGGREGATES: dict[type[exp.Expression], str] = {
    exp.Count: "count",
    exp.Sum: "sum",
    exp.Avg: "avg",
    exp.Min: "min",
    exp.Max: "max",
    exp.CountIf: "count_if",
}

_SCALAR_FUNCTIONS: dict[str, str] = {
    "Coalesce": "coalesce",
    "Nullif": "nullif",
    "Abs": "abs",
    "Ln": "ln",
    "Log": "log",
    "Exp": "exp",
    "Sqrt": "sqrt",
    "Pow": "power",
    "Round": "round",
    "Floor": "floor",
    "Ceil": "ceil",
    "Greatest": "greatest",
    "Least": "least",
    "Lower": "lower",
    "Upper": "upper",
    "Length": "length",
    "Substring": "substring",
    "Trim": "trim",
    "If": "if",
    "Sign": "sign",
    "Extract": "extract",
    "TimestampTrunc": "date_trunc",
    "DateTrunc": "date_trunc",
    "CurrentDate": "current_date",
}
SCALAR_FUNCTIONS: dict[type[exp.Expression], str] = {
    getattr(exp, cls): name for cls, name in _SCALAR_FUNCTIONS.items() if hasattr(exp, cls)
}

# Structural nodes: columns, literals, arithmetic, comparison, boolean logic, CASE, casts.
_STRUCTURE = (
    exp.Column, exp.Identifier, exp.Literal, exp.Boolean, exp.Null, exp.Paren, exp.Neg,
    exp.Not, exp.And, exp.Or, exp.Add, exp.Sub, exp.Mul, exp.Div, exp.Mod,
    exp.EQ, exp.NEQ, exp.GT, exp.GTE, exp.LT, exp.LTE, exp.Is, exp.In, exp.Between,
    exp.Like, exp.ILike, exp.Case, exp.Cast, exp.TryCast, exp.DataType, exp.Var,
    exp.Interval, exp.Tuple,
)

# Timestamps with a time zone: every engine applies its own session zone (and SQLite has
# no such type), so the same text would select different rows. Plain TIMESTAMP and DATE work.
ZONED_TYPES = frozenset({exp.DataType.Type.TIMESTAMPTZ, exp.DataType.Type.TIMESTAMPLTZ})

ALLOWED_FUNCTION_NAMES = sorted(set(AGGREGATES.values()) | set(SCALAR_FUNCTIONS.values()))

_PREDICATES = (exp.Predicate, exp.Connector, exp.Not, exp.Boolean)


MAX_FRAGMENT_CHARS = 10_000  # far above any real metric; bounds parse time and memory
MAX_IDENTIFIER_CHARS = 128  # SQL Server's and Snowflake's limits are 128 and 255; PostgreSQL's 63
MAX_DEPTH = 200  # nesting of one fragment; deeper trees only come from generated or hostile text

# Schemas that Spark and Databricks read as a file format: parquet.`/some/path`.
FILE_FORMAT_SCHEMAS = frozenset(
    {"parquet", "csv", "json", "orc", "avro", "text", "delta", "binaryfile", "jdbc", "libsvm", "xml"}
)


class ExpressionProblem(ValueError):
    """A user fragment was refused; the message says why and what to write instead."""


def invisible_characters(text: str, *, allow_whitespace: bool = False) -> list[str]:
    """Control, format and separator characters in ``text`` (as U+XXXX names).

    These either break drivers (NUL), repaint terminals (ESC), or make text read differently
    from what it does (right-to-left override, zero-width space). Tab, newline and carriage
    return are allowed where ``allow_whitespace`` is set (multi-line SQL).
    """
    found = []
    for ch in text:
        if allow_whitespace and ch in "\t\n\r":
            continue
        if unicodedata.category(ch) in ("Cc", "Cf", "Cs", "Co", "Cn", "Zl", "Zp"):
            name = f"U+{ord(ch):04X}"
            if name not in found:
                found.append(name)
    return found


def looks_like_path(name: str) -> bool:
    """True for a table-name part an engine might take as a file or URL.

    DuckDB reads ``FROM "data.csv"`` as a file when no such table exists, and Spark reads
    ``parquet.`/dir```: a dot, slash, backslash or colon inside one name part is refused.
    """
    return any(ch in name for ch in "./\\:")


def _check_identifiers(node: exp.Expression, what: str) -> None:
    """Every name in a fragment is non-empty, printable, bounded, and a plain word unless quoted."""
    for ident in node.find_all(exp.Identifier):
        name = ident.this if isinstance(ident.this, str) else str(ident.this)
        if not name:
            raise ExpressionProblem(f"{what}: an empty name (\"\") is not allowed")
        if len(name) > MAX_IDENTIFIER_CHARS:
            raise ExpressionProblem(f"{what}: a name is {len(name)} characters long; the limit is {MAX_IDENTIFIER_CHARS}")
        bad = invisible_characters(name)
        if bad:
            raise ExpressionProblem(f"{what}: a name contains control or invisible characters ({', '.join(bad)})")
        if not ident.quoted and not all(c.isalnum() or c in "_$" for c in name):
            raise ExpressionProblem(
                f"{what}: {name!r} is not a plain name; quote it with \" if it really is one"
            )


def _strip_comments(node: exp.Expression) -> exp.Expression:
    # Comments would be printed into the emitted SQL, and MySQL runs /*! ... */ as code.
    for n in node.walk():
        n.comments = None
    return node


def _check_depth(node: exp.Expression, what: str) -> None:
    stack = [(node, 1)]
    while stack:
        n, depth = stack.pop()
        if depth > MAX_DEPTH:
            raise ExpressionProblem(f"{what} is nested more than {MAX_DEPTH} levels deep")
        stack.extend((child, depth + 1) for child in n.iter_expressions())


def is_predicate(node: exp.Expression) -> bool:
    """True when the expression yields a boolean (comparison, AND/OR/NOT, IN, IS, ...)."""
    while isinstance(node, exp.Paren):
        node = node.this
    return isinstance(node, _PREDICATES)


def has_aggregate(node: exp.Expression) -> bool:
    return any(isinstance(n, tuple(AGGREGATES)) for n in node.walk())


def _parse(text: str, what: str) -> exp.Expression:
    if not isinstance(text, str):
        raise ExpressionProblem(f"{what} must be a string of SQL")
    if not text.strip():
        raise ExpressionProblem(f"{what} is empty")
    if "\x00" in text:
        raise ExpressionProblem(f"{what} contains a NUL character")
    if len(text) > MAX_FRAGMENT_CHARS:
        raise ExpressionProblem(f"{what} is {len(text):,} characters long; the limit is {MAX_FRAGMENT_CHARS:,}")
    bad = invisible_characters(text, allow_whitespace=True)
    if bad:
        raise ExpressionProblem(f"{what} contains control or invisible characters ({', '.join(bad)})")
    try:
        statements = sqlglot.parse(text, read=CANONICAL)
    except (ParseError, TokenError) as err:
        first = str(err).splitlines()[0]
        raise ExpressionProblem(f"{what} does not parse as SQL: {first}") from None
    except RecursionError:
        raise ExpressionProblem(f"{what} is nested too deeply to parse") from None
    statements = [s for s in statements if s is not None]
    if len(statements) != 1:
        raise ExpressionProblem(f"{what} must be one SQL expression, not {len(statements)} statements")
    node = statements[0]
    _check_depth(node, what)
    _check_identifiers(node, what)
    return _strip_comments(node)


def _function_name(node: exp.Expression) -> str:
    if isinstance(node, exp.Anonymous):
        return str(node.this).lower()
    if isinstance(node, exp.Func):
        return node.sql_name().lower()
    return type(node).__name__.lower()


def _check_nodes(node: exp.Expression, what: str) -> None:
    for n in node.walk():
        if isinstance(n, tuple(AGGREGATES)) or isinstance(n, tuple(SCALAR_FUNCTIONS)):
            continue
        if isinstance(n, exp.Star):
            if not isinstance(n.parent, exp.Count):
                raise ExpressionProblem(f"{what}: '*' is only allowed as count(*)")
            continue
        if isinstance(n, exp.Distinct):
            if not isinstance(n.parent, exp.Count):
                raise ExpressionProblem(f"{what}: DISTINCT is only allowed as count(DISTINCT column)")
            continue
        if isinstance(n, _STRUCTURE):
            if isinstance(n, exp.Column) and (n.table or n.args.get("db") or n.args.get("catalog")):
                raise ExpressionProblem(
                    f"{what}: write column {n.name!r} without a table name ({n.sql(CANONICAL)!r})"
                )
            if isinstance(n, exp.In) and n.args.get("query"):
                raise ExpressionProblem(f"{what}: subqueries are not allowed; declare a source instead")
            if isinstance(n, exp.DataType) and n.this in ZONED_TYPES:
                raise ExpressionProblem(
                    f"{what}: {n.sql(CANONICAL)} (a timestamp with a time zone) is not portable: engines "
                    f"read it in different zones, and SQLite has no such type (it would compare as a "
                    f"number); write a plain TIMESTAMP '2026-09-01 06:00:00' in the data's own zone"
                )
            continue
        if isinstance(n, (exp.Query, exp.Subquery)):
            raise ExpressionProblem(f"{what}: subqueries are not allowed; declare a source instead")
        if isinstance(n, exp.Window):
            raise ExpressionProblem(f"{what}: window functions (OVER ...) are not allowed")
        if isinstance(n, exp.Func):
            name = _function_name(n)
            hint = difflib.get_close_matches(name, ALLOWED_FUNCTION_NAMES, n=1)
            extra = f"; did you mean {hint[0]!r}?" if hint else ""
            raise ExpressionProblem(
                f"{what}: function {name!r} is not allowed{extra} "
                f"(allowed: {', '.join(ALLOWED_FUNCTION_NAMES)})"
            )
        raise ExpressionProblem(f"{what}: {n.key.upper()} is not allowed in an expression")


def _as_number(predicate: exp.Expression) -> exp.Expression:
    """A boolean turned into 1/0 portably (engines disagree on boolean arithmetic)."""
    return exp.Case(
        ifs=[exp.If(this=predicate.copy(), true=exp.Literal.number(1))],
        default=exp.Literal.number(0),
    )


def _portable(node: exp.Expression) -> exp.Expression:
    """Rewrite engine-specific conveniences into forms every dialect runs the same way."""

    def rewrite(n: exp.Expression) -> exp.Expression:
        if isinstance(n, exp.CountIf):
            return exp.Sum(this=_as_number(n.this))
        if isinstance(n, (exp.Sum, exp.Avg, exp.Min, exp.Max)) and is_predicate(n.this):
            return n.__class__(this=_as_number(n.this))
        if isinstance(n, exp.If) and not isinstance(n.parent, exp.Case):
            return exp.Case(ifs=[exp.If(this=n.this, true=n.args.get("true"))], default=n.args.get("false"))
        if isinstance(n, _COMPARISONS) and any(_is_timestamp(o) for o in _operands(n)):
            return _both_timestamps(n)
        return n

    return node.copy().transform(rewrite)


_COMPARISONS = (exp.EQ, exp.NEQ, exp.GT, exp.GTE, exp.LT, exp.LTE, exp.Between)


_PLAIN_TIMESTAMPS = {exp.DataType.Type.TIMESTAMP, exp.DataType.Type.TIMESTAMPNTZ, exp.DataType.Type.DATETIME}


def _is_timestamp(node: exp.Expression) -> bool:
    return isinstance(node, exp.Cast) and node.to.this in _PLAIN_TIMESTAMPS


def _operands(n: exp.Expression) -> list[exp.Expression]:
    if isinstance(n, exp.Between):
        return [n.this, n.args["low"], n.args["high"]]
    return [n.this, n.expression]


def _both_timestamps(n: exp.Expression) -> exp.Expression:
    """A comparison with a timestamp on one side compares timestamps on every side.

    Engines promote a DATE compared with a TIMESTAMP to midnight, but SQLite stores both
    as text, and '2026-09-03' sorts before '2026-09-03 00:00:00': casting every side (SQLite:
    DATETIME(...)) gives each engine the same comparison of timestamps.
    """
    to = next(o.to for o in _operands(n) if _is_timestamp(o))

    def cast(o: exp.Expression) -> exp.Expression:
        return o if _is_timestamp(o) else exp.Cast(this=o, to=to.copy())

    if isinstance(n, exp.Between):
        return exp.Between(this=cast(n.this), low=cast(n.args["low"]), high=cast(n.args["high"]))
    return n.__class__(this=cast(n.this), expression=cast(n.expression))


def parse_value(text: str, what: str, *, aggregated: bool) -> exp.Expression:
    """Parse a metric value or similar expression.

    Args:
        text: the SQL written in the spec.
        what: how to name it in messages, e.g. "value".
        aggregated: True when the rows are many per unit, so the value must aggregate them
            (every column inside an aggregate); False when the source has one row per unit.
    """
    node = _parse(text, what)
    _check_nodes(node, what)
    if aggregated:
        if not has_aggregate(node):
            raise ExpressionProblem(
                f"{what} must aggregate the unit's rows, e.g. sum(...), count(*), max(...): "
                f"{text!r} has no aggregate (or declare the source per_unit = true)"
            )
        for col in node.find_all(exp.Column):
            if not any(isinstance(a, tuple(AGGREGATES)) for a in _ancestors(col)):
                raise ExpressionProblem(
                    f"{what}: column {col.name!r} is outside an aggregate; wrap it, e.g. max({col.name})"
                )
    else:
        for agg in node.find_all(*AGGREGATES):
            raise ExpressionProblem(
                f"{what}: the source has one row per unit (per_unit = true), so {_function_name(agg)}() "
                f"is not needed; write a row expression such as a column name"
            )
    for agg in node.find_all(*AGGREGATES):
        if any(isinstance(a, tuple(AGGREGATES)) for a in _ancestors(agg)):
            raise ExpressionProblem(f"{what}: aggregates cannot be nested")
    return _portable(node)


def parse_filter(text: str, what: str) -> exp.Expression:
    """Parse a row filter (a WHERE condition over the source's own columns)."""
    node = _parse(text, what)
    _check_nodes(node, what)
    if has_aggregate(node):
        raise ExpressionProblem(f"{what} filters rows, so it cannot use an aggregate")
    if not is_predicate(node):
        raise ExpressionProblem(f"{what} must be a condition, e.g. \"country = 'NZ'\"")
    return _portable(node)


def parse_column(text: str, what: str) -> exp.Column:
    """Parse a column name. Plain names follow the engine's case rules; quote to keep case."""
    if isinstance(text, str) and text.strip() and all(c.isalnum() or c == "_" for c in text) and not text[0].isdigit():
        node = exp.column(exp.to_identifier(text, quoted=False))
        _check_identifiers(node, what)
        return node
    node = _parse(text, what)
    if not isinstance(node, exp.Column) or node.table:
        raise ExpressionProblem(
            f"{what} must be a single column name (quote it with \" if it has spaces or capitals): {text!r}"
        )
    return node


def parse_table(text: str, what: str) -> exp.Table:
    """Parse a table name: name, schema.name or catalog.schema.name."""
    if not isinstance(text, str) or len(text) > MAX_FRAGMENT_CHARS or invisible_characters(text):
        raise ExpressionProblem(f"{what} must be a table name of printable characters: {str(text)[:80]!r}")
    try:
        table = sqlglot.parse_one(text, read=CANONICAL, into=exp.Table)
    except (ParseError, TokenError, RecursionError):
        table = None
    if not isinstance(table, exp.Table) or not all(isinstance(p, exp.Identifier) for p in table.parts):
        raise ExpressionProblem(
            f"{what} must be a table name (name, schema.name or catalog.schema.name), "
            f"a .parquet/.csv file, or a parenthesised SELECT: {text!r}"
        )
    if table.args.get("alias") or table.args.get("joins") or table.args.get("laterals") or table.args.get("pivots"):
        raise ExpressionProblem(f"{what} must be only a table name: {text!r}")
    _check_identifiers(table, what)
    _check_table_name(table, what)
    return _strip_comments(table)


def _check_table_name(table: exp.Table, what: str) -> None:
    parts = [p.name for p in table.parts]
    for part in parts:
        if looks_like_path(part):
            raise ExpressionProblem(
                f"{what}: table name {part!r} looks like a file path, which some engines would read as a "
                f"file; give the file itself as the source (DuckDB) or load it into a table"
            )
    if len(parts) == 2 and parts[0].lower() in FILE_FORMAT_SCHEMAS:
        raise ExpressionProblem(
            f"{what}: schema {parts[0]!r} names a file format, and Spark reads {'.'.join(parts)!r} as a "
            f"file; use another schema name"
        )


def parse_query(text: str, what: str) -> exp.Query:
    """Parse a parenthesised SELECT used as a source; only reading is allowed."""
    node = _parse(text, what)
    while isinstance(node, (exp.Paren, exp.Subquery)):
        node = node.this
    if not isinstance(node, exp.Query):
        raise ExpressionProblem(f"{what} must be a SELECT query in parentheses")
    for n in node.walk():
        if isinstance(n, (exp.Insert, exp.Update, exp.Delete, exp.Merge, exp.Create, exp.Drop,
                          exp.Alter, exp.Command, exp.Set, exp.Pragma, exp.Copy, exp.Into,
                          exp.Transaction, exp.Commit, exp.Rollback, exp.LoadData)):
            raise ExpressionProblem(f"{what}: only reading is allowed; found {n.key.upper()}")
        if isinstance(n, exp.Lock):
            raise ExpressionProblem(f"{what}: row locks (FOR UPDATE/SHARE) are not allowed")
        if isinstance(n, exp.Anonymous) or (isinstance(n, exp.Table) and isinstance(n.this, exp.Func)):
            fn = n.this if isinstance(n, exp.Table) else n
            raise ExpressionProblem(
                f"{what}: function {_function_name(fn)!r} is not allowed in a source query; "
                f"use a table name, or a .parquet/.csv file as the source"
            )
        if isinstance(n, exp.Func) and n.key in {"readcsv", "readparquet", "readjson"}:
            raise ExpressionProblem(f"{what}: reading files inside a query is not allowed; give the file as the source")
        if isinstance(n, exp.Table):
            if not isinstance(n.this, exp.Identifier):
                raise ExpressionProblem(f"{what}: read from table names only, not {n.sql(CANONICAL)[:80]!r}")
            _check_table_name(n, what)
        if isinstance(n, (exp.Placeholder, exp.Parameter)):
            raise ExpressionProblem(f"{what}: parameters ({n.sql(CANONICAL)}) are not allowed")
    return node


def _ancestors(node: exp.Expression):
    parent = node.parent
    while parent is not None:
        yield parent
        parent = parent.parent

"""Emitted SQL text + what the spec declared -> proof that the query only reads (or CompileError).

compile.py calls ``check_read_only`` as its last step, on the exact text it is about to
return. The text is parsed back by sqlglot in the target dialect and walked node by node:

* exactly one statement, and it is a SELECT (a WITH list in front is fine);
* no statement or clause that writes, changes a setting or reaches outside the query:
  DDL, DML, transactions, PRAGMA/SET/USE, COPY/EXPORT/ATTACH/INSTALL, SELECT ... INTO,
  row locks, sequences, bind parameters, procedural blocks, commands sqlglot could not parse;
* every table is either one of the query's own WITH names or a table the spec declared;
  a table name shaped like a file path is never a table;
* the only table functions are the file readers of declared file sources (engines that
  read files, i.e. DuckDB), each called on exactly one declared path;
* no comments (MySQL runs ``/*! ... */`` as code);
* every function is one sqlglot knows, or one of the few names sqlstat itself emits
  (the dialect's renames): an unknown function could do anything.

This is a second, independent line of defence: expressions.py already refuses anything
outside its allow-list when the spec is read.
"""

from __future__ import annotations

from typing import Callable, Iterable

import sqlglot
from sqlglot import exp
from sqlglot.errors import ParseError, TokenError
from sqlglot.optimizer.normalize_identifiers import normalize_identifiers

from .dialects import Dialect
from .errors import CompileError
from .expressions import looks_like_path
from .model import Experiment, Source

# Anything that is not a pure read. Names are looked up with getattr so an older or newer
# sqlglot without one of them still loads this module.
_FORBIDDEN_NAMES = (
    "Alter", "AlterColumn", "AlterRename", "AlterSession", "AlterSet", "Analyze", "Attach", "Detach",
    "Cache", "Uncache", "Command", "Commit", "Rollback", "Transaction", "Copy", "Create", "Delete",
    "Describe", "Drop", "Execute", "ExecuteSql", "Export", "Grant", "Revoke", "Insert", "Install",
    "Into", "Kill", "LoadData", "Lock", "LockingStatement", "Merge", "MultitableInserts",
    "ConditionalInsert", "Pragma", "Put", "Refresh", "Set", "SetItem", "Show", "TruncateTable",
    "Undrop", "Update", "Use", "NextValueFor", "Block", "IfBlock", "LoopBlock", "WhileBlock",
    "RepeatBlock", "Secret", "ToFile", "Placeholder", "Parameter", "UserDefinedFunction",
    "ReadCSV", "ReadParquet",  # allowed only as the FROM of a declared file source (below)
)
FORBIDDEN: tuple[type[exp.Expression], ...] = tuple(
    getattr(exp, n) for n in _FORBIDDEN_NAMES if isinstance(getattr(exp, n, None), type)
)

# DuckDB's file readers, the only table functions a query may call (on a declared path).
FILE_READERS = frozenset({"read_parquet", "read_csv_auto", "read_csv", "read_json_auto", "read_json"})


class ReadOnlyViolation(CompileError):
    """The emitted query would do more than read the declared sources."""


def _table_key(table: exp.Table) -> tuple[str, ...]:
    return tuple(p.name for p in table.parts)


def _cte_names(tree: exp.Expression) -> set[str]:
    return {cte.alias_or_name for cte in tree.find_all(exp.CTE)}


def declared_sources(
    experiment: Experiment, dialect: Dialect, display_path: Callable[[Source], str]
) -> tuple[set[tuple[str, ...]], set[str]]:
    """The tables (name parts, as the dialect spells them) and file paths the spec declares.

    A parenthesised SELECT source declares every table it reads (not its own WITH names).
    """
    tables: set[tuple[str, ...]] = set()
    files: set[str] = set()
    relations = [experiment.assignment] + ([experiment.events] if experiment.events is not None else [])
    relations += [experiment.pre_period] if experiment.pre_period is not None else []
    for rel in relations:
        src = rel.source
        if src.kind == "file":
            files.add(display_path(src))
            continue
        node = src.table if src.kind == "table" else src.query
        assert node is not None
        node = normalize_identifiers(node.copy(), dialect=dialect.sqlglot)
        inner = _cte_names(node)
        for t in ([node] if isinstance(node, exp.Table) else node.find_all(exp.Table)):
            key = _table_key(t)
            if isinstance(t.this, exp.Identifier) and not (len(key) == 1 and key[0] in inner):
                tables.add(key)
    return tables, files


def _function_name(node: exp.Expression) -> str:
    if isinstance(node, exp.Anonymous):
        return str(node.this)
    return node.sql_name() if isinstance(node, exp.Func) else type(node).__name__


def _reader_path(func: exp.Expression) -> str | None:
    """The single string literal a file reader was called with, or None."""
    args = [func.this] if not isinstance(func, exp.Anonymous) else []
    args += list(func.expressions)
    args = [a for a in args if a is not None]
    if len(args) != 1 or not isinstance(args[0], exp.Literal) or not args[0].is_string:
        return None
    return args[0].this


def check_read_only(
    sql: str,
    dialect: Dialect,
    *,
    tables: Iterable[tuple[str, ...]],
    files: Iterable[str] = (),
) -> exp.Select:
    """Prove that ``sql`` is one SELECT that only reads the declared tables and files.

    Args:
        sql: the query text exactly as it will be handed out.
        dialect: the target dialect; the text is parsed back with its sqlglot reader.
        tables: declared tables, as tuples of name parts (catalog, schema, name).
        files: declared file paths, exactly as the query spells them.

    Returns:
        The parsed SELECT.

    Raises:
        ReadOnlyViolation: naming the first thing found that is not a pure read.
    """
    where = f"the {dialect.title} query"
    try:
        statements = [s for s in sqlglot.parse(sql, read=dialect.sqlglot) if s is not None]
    except (ParseError, TokenError) as err:
        raise ReadOnlyViolation(f"{where} does not parse back: {str(err).splitlines()[0]}") from None
    if len(statements) != 1:
        raise ReadOnlyViolation(f"{where} must be exactly one statement, found {len(statements)}")
    tree = statements[0]
    if not isinstance(tree, exp.Select):
        raise ReadOnlyViolation(f"{where} must be a SELECT, found {tree.key.upper()}")

    declared = set(tables)
    declared_files = set(files)
    ctes = _cte_names(tree)
    clash = sorted(k[0] for k in declared if len(k) == 1 and k[0] in ctes)
    if clash:
        raise ReadOnlyViolation(
            f"source table {clash[0]!r} has the name of one of the query's own steps; "
            f"write it with its schema (e.g. public.{clash[0]}) or rename it"
        )
    allowed_anonymous = {name.lower() for name in dialect.renames.values()} | set(dialect.printer_functions)

    for node in tree.walk():
        if node.comments:
            # sqlstat emits no comments; MySQL runs /*! ... */ and hint comments steer planners.
            raise ReadOnlyViolation(f"{where} contains a comment, which sqlstat never emits")
        if isinstance(node, exp.Table):
            target = node.this
            if isinstance(target, exp.Func):
                name = _function_name(target).lower()
                if not dialect.reads_files or name not in FILE_READERS:
                    raise ReadOnlyViolation(f"{where} calls table function {name!r}; only declared sources are read")
                path = _reader_path(target)
                if path is None or path not in declared_files:
                    raise ReadOnlyViolation(f"{where} reads file {path!r}, which is not a declared source")
                continue
            if not isinstance(target, exp.Identifier):
                raise ReadOnlyViolation(f"{where} reads from {node.sql(dialect.sqlglot)!r}, which is not a table name")
            key = _table_key(node)
            if any(looks_like_path(p) for p in key):
                raise ReadOnlyViolation(f"{where} names table {'.'.join(key)!r}, which looks like a file path")
            if len(key) == 1 and key[0] in ctes:
                continue
            if key not in declared:
                raise ReadOnlyViolation(f"{where} reads table {'.'.join(key)!r}, which the spec does not declare")
            continue
        if isinstance(node, FORBIDDEN):
            if isinstance(node, (exp.ReadCSV, exp.ReadParquet)) and isinstance(node.parent, exp.Table):
                continue  # checked with its table above
            raise ReadOnlyViolation(f"{where} contains {node.key.upper()}, which is not a pure read")
        if isinstance(node, exp.Anonymous) and _function_name(node).lower() not in allowed_anonymous:
            if isinstance(node.parent, exp.Table) and node.arg_key == "this":
                continue  # a file reader, checked with its table above
            raise ReadOnlyViolation(f"{where} calls unknown function {_function_name(node)!r}")
    return tree

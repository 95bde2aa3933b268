"""SQL text -> rows of plain Python values, on DuckDB (default), DB-API connections or a URL.

Only the per-(metric, arm) aggregate rows ever leave the engine. Whatever the driver
returns (Decimal, numpy scalars, bool), values come back as float, int, str or None, and
column names in lower case (Snowflake and friends upper-case unquoted names).
"""

from __future__ import annotations

import decimal
import math
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Callable
from urllib.parse import unquote, urlsplit

from .dialects import get_dialect
from .errors import EngineError, UsageError, mask_secrets

Row = dict[str, Any]

URL_SCHEMES = {
    "duckdb": "duckdb",
    "postgresql": "postgres",
    "postgres": "postgres",
    "mysql": "mysql",
    "mariadb": "mysql",
    "sqlite": "sqlite",
}


def normalise_value(value: Any) -> Any:
    """Driver value -> float/int/str/None (Decimal and numpy scalars become float)."""
    if value is None or isinstance(value, (str, int, float)) and not isinstance(value, bool):
        return value
    if isinstance(value, bool):
        return int(value)
    if isinstance(value, decimal.Decimal):
        return float(value)
    if isinstance(value, (bytes, bytearray)):
        return value.decode("utf-8", errors="replace")
    if hasattr(value, "item"):  # numpy scalar
        return normalise_value(value.item())
    return value


def normalise_rows(columns: list[str], rows: list[tuple]) -> list[Row]:
    names = [c.lower() for c in columns]
    return [{n: normalise_value(v) for n, v in zip(names, r)} for r in rows]


@dataclass
class Engine:
    """A place to run SQL: a dialect name and a function that runs one query."""

    dialect: str
    runner: Callable[[str], list[Row]]
    description: str
    closer: Callable[[], None] | None = None
    _closed: bool = field(default=False, repr=False)

    def run(self, sql: str) -> list[Row]:
        return self.runner(sql)

    def close(self) -> None:
        if self.closer and not self._closed:
            self._closed = True
            self.closer()

    def __enter__(self) -> "Engine":
        return self

    def __exit__(self, *exc) -> None:
        self.close()


def _first_line(err: BaseException) -> str:
    text = str(err).strip() or type(err).__name__
    return text


def dbapi_engine(connection: Any, dialect: str, description: str = "DB-API connection") -> Engine:
    """Wrap any DB-API 2.0 connection. The caller keeps ownership of the connection."""
    d = get_dialect(dialect)

    def run(sql: str) -> list[Row]:
        cursor = connection.cursor()
        try:
            cursor.execute(sql)
            columns = [c[0] for c in cursor.description]
            rows = cursor.fetchall()
        except Exception as err:  # driver errors have no common base class
            raise EngineError(f"the query failed on {d.title}: {_first_line(err)}", d.name) from err
        finally:
            try:
                cursor.close()
            except Exception:
                pass
        return normalise_rows(columns, rows)

    return Engine(d.name, run, description)


def duckdb_engine(path: str | None = None, connection: Any = None) -> Engine:
    """DuckDB in memory (default) or on a database file; reads .parquet/.csv sources."""
    import duckdb

    owned = connection is None
    try:
        con = connection or duckdb.connect(path or ":memory:", read_only=bool(path))
    except duckdb.Error as err:
        raise EngineError(f"cannot open DuckDB database {path!r}: {_first_line(err)}", "duckdb") from err

    def run(sql: str) -> list[Row]:
        try:
            cur = con.execute(sql)
            columns = [c[0] for c in cur.description]
            rows = cur.fetchall()
        except duckdb.Error as err:
            raise EngineError(f"the query failed on DuckDB: {_first_line(err)}", "duckdb") from err
        return normalise_rows(columns, rows)

    return Engine("duckdb", run, f"DuckDB ({path or 'in memory'})", con.close if owned else None)


def connect(url: str | None = None) -> Engine:
    """Open an engine from a URL; None means DuckDB in memory.

    Accepted: ``duckdb:///path/to.db`` (or ``duckdb://`` for memory),
    ``postgresql://user:pw@host:port/db``, ``mysql://user:pw@host:port/db`` (MariaDB too),
    ``sqlite:///path/to.db``. Passwords never appear in messages.
    """
    if url is None or url in ("", "duckdb://", "duckdb:///:memory:"):
        return duckdb_engine()
    parts = urlsplit(url)
    scheme = parts.scheme.lower().split("+")[0]
    if scheme not in URL_SCHEMES:
        raise UsageError(
            f"unsupported database URL {mask_secrets(url)!r}: use one of "
            + ", ".join(f"{s}://" for s in ("duckdb", "postgresql", "mysql", "sqlite"))
        )
    dialect = URL_SCHEMES[scheme]
    masked = mask_secrets(url)
    if dialect == "duckdb":
        path = unquote(parts.path[1:] if parts.path.startswith("/") else parts.path) or None
        if path and not Path(path).exists():
            raise EngineError(f"DuckDB database file not found: {path}", "duckdb")
        return duckdb_engine(path)
    if dialect == "sqlite":
        import sqlite3

        path = unquote(parts.path[1:] if parts.path.startswith("/") else parts.path)
        if not path or not Path(path).exists():
            raise EngineError(f"SQLite database file not found: {path or '(none given)'}", "sqlite")
        con = sqlite3.connect(f"file:{path}?mode=ro", uri=True)
        eng = dbapi_engine(con, "sqlite", f"SQLite ({path})")
        eng.closer = con.close
        return eng
    host = parts.hostname or "127.0.0.1"
    user = unquote(parts.username) if parts.username else None
    password = unquote(parts.password) if parts.password else None
    database = unquote(parts.path.lstrip("/")) or None
    try:
        if dialect == "postgres":
            try:
                import psycopg
            except ImportError:
                raise UsageError("PostgreSQL needs the psycopg package: pip install 'sqlstat[engines]'") from None
            con = psycopg.connect(
                host=host, port=parts.port or 5432, user=user, password=password, dbname=database,
                connect_timeout=10, autocommit=False,
            )
            con.read_only = True  # every query runs in a read-only transaction, never committed
        else:
            try:
                import pymysql
            except ImportError:
                raise UsageError("MySQL/MariaDB needs the pymysql package: pip install 'sqlstat[engines]'") from None
            con = pymysql.connect(
                host=host, port=parts.port or 3306, user=user or "root", password=password or "",
                database=database, connect_timeout=10,
            )
    except UsageError:
        raise
    except Exception as err:
        raise EngineError(f"cannot connect to {masked}: {_first_line(err)}", dialect) from None
    eng = dbapi_engine(con, dialect, masked)
    eng.closer = con.close
    return eng


def is_finite(value: Any) -> bool:
    return isinstance(value, (int, float)) and math.isfinite(value)

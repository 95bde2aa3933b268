"""The engine matrix for the tests: load the same columns as tables into each engine,
hand out sqlstat engines on them, drop everything at the end, and record accuracy.

Engines: DuckDB (file), SQLite (file), PostgreSQL and MariaDB (servers on 127.0.0.1),
Spark SQL (pyspark, local mode) and ClickHouse (chdb, embedded). A missing server or
package skips that engine's tests with the reason, unless SQLSTAT_REQUIRE_ENGINES=1 (set
by .ci/run), which turns the skip into a failure.

Each test session works in its own schema (database) named sqlstat_test_<pid>, so parallel
runs never see each other's tables; sqlstat itself only ever reads.
"""

from __future__ import annotations

import datetime
import math
import os
import shutil
import tempfile
from collections import defaultdict
from pathlib import Path
from typing import Any
from urllib.parse import urlsplit

import numpy as np
import pytest
from sqlglot import exp

from sqlstat import engines

ENGINE_NAMES = ("duckdb", "postgres", "mysql", "sqlite", "spark", "clickhouse")
REQUIRED = os.environ.get("SQLSTAT_REQUIRE_ENGINES") == "1"
PG_URL = os.environ.get("SQLSTAT_TEST_POSTGRES", "postgresql://postgres@127.0.0.1:5432/test")
MYSQL_URL = os.environ.get("SQLSTAT_TEST_MYSQL", "mysql://root@127.0.0.1:3306/test")

# Worst relative error seen per engine, and NumAcc digits, printed at the end of the run
# (conftest.pytest_terminal_summary) and copied by hand into the README's support table.
ACCURACY: dict[str, float] = defaultdict(float)
WORST: dict[str, str] = {}  # which quantity gave the worst error
DIGITS: dict[tuple[str, str], float] = {}


def unavailable(engine: str, reason: str):
    """Skip with the reason, or fail when the environment requires every engine."""
    if REQUIRED:
        pytest.fail(f"{engine} is required (SQLSTAT_REQUIRE_ENGINES=1) but unavailable: {reason}", pytrace=False)
    pytest.skip(f"{engine} unavailable: {reason}")


def record_error(engine: str, got: float, expected: float, what: str = "") -> None:
    """Track the worst relative error (absolute when the reference is ~0) per engine."""
    if expected is None or got is None or not (math.isfinite(got) and math.isfinite(expected)):
        return
    err = abs(got - expected) / abs(expected) if abs(expected) > 1e-12 else abs(got - expected)
    if err > ACCURACY[engine]:
        ACCURACY[engine], WORST[engine] = err, what


def _kind(values: np.ndarray) -> str:
    if np.issubdtype(values.dtype, np.datetime64):
        return "date"
    if values.dtype == bool:
        return "bool"
    if np.issubdtype(values.dtype, np.integer):
        return "int"
    if np.issubdtype(values.dtype, np.floating):
        return "float"
    return "str"


def _python(values: np.ndarray, kind: str) -> list[Any]:
    """numpy column -> Python values for drivers; NaN becomes NULL."""
    if kind == "date":  # datetime64[D] -> datetime.date; SQLite stores ISO text
        return values.astype("datetime64[D]").tolist()
    out: list[Any] = []
    for v in values.tolist():
        if kind == "float" and (v is None or (isinstance(v, float) and math.isnan(v))):
            out.append(None)
        else:
            out.append(v)
    return out


def column_name(name: str) -> exp.Identifier:
    """Test column names: '"Mixed"' keeps its case (quoted), anything else is plain."""
    if name.startswith('"'):
        return exp.to_identifier(name.strip('"'), quoted=True)
    return exp.to_identifier(name, quoted=False)


class TestDatabase:
    """One engine with a scratch schema: load tables, get sqlstat engines on them."""

    name = ""
    dialect = ""
    types: dict[str, str] = {}
    placeholder = "%s"

    def __init__(self, schema: str):
        self.schema = schema
        self.tables: list[str] = []

    # --- to implement per engine
    def execute(self, sql: str, params: list[tuple] | None = None) -> None:
        raise NotImplementedError

    def engine(self) -> engines.Engine:
        raise NotImplementedError

    def url(self) -> str:
        """The --db URL that reaches this database."""
        raise NotImplementedError

    def connection(self) -> Any:
        """A fresh native connection (DB-API, DuckDB, SparkSession or chdb)."""
        raise NotImplementedError

    def close(self) -> None:
        pass

    # --- shared
    def qualified(self, table: str) -> str:
        """The name a spec uses for a test table (schema-qualified where schemas exist)."""
        return f"{self.schema}.{table}"

    def ddl_identifier(self, ident: exp.Identifier) -> str:
        """An identifier as the engine folds it: plain names as the engine's case rules
        say (what a user's unquoted CREATE TABLE gives), quoted names as written."""
        from sqlglot.optimizer.normalize_identifiers import normalize_identifiers

        from sqlstat.dialects import get_dialect

        sg = get_dialect(self.dialect).sqlglot
        return normalize_identifiers(ident.copy(), dialect=sg).sql(dialect=sg, identify=True)

    def column_type(self, kind: str, nullable: bool) -> str:
        return self.types[kind]

    def load(self, table: str, columns: dict[str, np.ndarray]) -> str:
        """Create ``table`` from numpy columns (NaN -> NULL) and return its spec name."""
        names = list(columns)
        arrays = [np.asarray(columns[n]) for n in names]
        kinds = [_kind(a) for a in arrays]
        nullable = [k == "float" and bool(np.isnan(a).any()) for a, k in zip(arrays, kinds)]
        target = self.qualified(table)
        sg_table = self.ddl_table(target)
        idents = [self.ddl_identifier(column_name(n)) for n in names]
        self.execute(f"DROP TABLE IF EXISTS {sg_table}")
        defs = ", ".join(f"{i} {self.column_type(k, nl)}" for i, k, nl in zip(idents, kinds, nullable))
        self.execute(f"CREATE TABLE {sg_table} ({defs}){self.table_suffix()}")
        rows = list(zip(*[_python(a, k) for a, k in zip(arrays, kinds)]))
        self.insert(sg_table, idents, rows)
        self.tables.append(sg_table)
        return target

    def ddl_table(self, target: str) -> str:
        return ".".join(self.ddl_identifier(exp.to_identifier(p)) for p in target.split("."))

    def table_suffix(self) -> str:
        return ""

    def insert(self, table: str, idents: list[str], rows: list[tuple]) -> None:
        marks = ", ".join([self.placeholder] * len(idents))
        self.execute(f"INSERT INTO {table} ({', '.join(idents)}) VALUES ({marks})", rows)


class DuckDBDatabase(TestDatabase):
    """A DuckDB file, written by the test and read by sqlstat through duckdb:///path."""

    name = dialect = "duckdb"
    types = {"int": "BIGINT", "float": "DOUBLE", "bool": "BOOLEAN", "str": "VARCHAR", "date": "DATE"}
    placeholder = "?"

    def __init__(self, schema: str, folder: Path):
        super().__init__(schema)
        import duckdb

        self.path = folder / "tests.duckdb"
        with duckdb.connect(str(self.path)) as con:
            con.execute(f"CREATE SCHEMA IF NOT EXISTS {schema}")

    def execute(self, sql, params=None):
        import duckdb

        # Open per statement: DuckDB will not open a file read-only (sqlstat) and
        # read-write (the test) at the same time in one process.
        with duckdb.connect(str(self.path)) as con:
            if params:
                con.executemany(sql, params)
            else:
                con.execute(sql)

    def insert(self, table, idents, rows):
        import duckdb
        import pyarrow as pa

        # executemany is row by row in DuckDB; an Arrow table goes in at once.
        batch = pa.table({f"c{i}": list(col) for i, col in enumerate(zip(*rows))})
        with duckdb.connect(str(self.path)) as con:
            con.register("batch", batch)
            con.execute(f"INSERT INTO {table} ({', '.join(idents)}) SELECT * FROM batch")

    def url(self):
        return f"duckdb:///{self.path}"

    def engine(self):
        return engines.connect(self.url())

    def connection(self):
        import duckdb

        return duckdb.connect(str(self.path), read_only=True)


class SQLiteDatabase(TestDatabase):
    """A SQLite file (no schemas: tables are unqualified), read through sqlite:///path."""

    name = dialect = "sqlite"
    types = {"int": "INTEGER", "float": "REAL", "bool": "INTEGER", "str": "TEXT", "date": "TEXT"}
    placeholder = "?"

    def __init__(self, schema: str, folder: Path):
        super().__init__(schema)
        self.path = folder / "tests.sqlite"

    def qualified(self, table):
        return table

    def execute(self, sql, params=None):
        import sqlite3

        con = sqlite3.connect(self.path)
        try:
            if params:  # dates as ISO text, the form SQLite compares as dates
                params = [tuple(v.isoformat() if isinstance(v, datetime.date) else v for v in row) for row in params]
                con.executemany(sql, params)
            else:
                con.execute(sql)
            con.commit()
        finally:
            con.close()

    def url(self):
        return f"sqlite:///{self.path}"

    def engine(self):
        return engines.connect(self.url())

    def connection(self):
        import sqlite3

        return sqlite3.connect(self.path)


class PostgresDatabase(TestDatabase):
    name = dialect = "postgres"
    types = {"int": "BIGINT", "float": "DOUBLE PRECISION", "bool": "BOOLEAN", "str": "TEXT", "date": "DATE"}

    def __init__(self, schema: str):
        super().__init__(schema)
        import psycopg

        parts = urlsplit(PG_URL)
        self.con = psycopg.connect(host=parts.hostname, port=parts.port, user=parts.username,
                                   dbname=parts.path.lstrip("/"), autocommit=True, connect_timeout=5)
        self.execute(f"DROP SCHEMA IF EXISTS {schema} CASCADE")
        self.execute(f"CREATE SCHEMA {schema}")

    def execute(self, sql, params=None):
        with self.con.cursor() as cur:
            if params:
                cur.executemany(sql, params)
            else:
                cur.execute(sql)

    def url(self):
        return PG_URL

    def engine(self):
        return engines.connect(PG_URL)

    def connection(self):
        import psycopg

        return psycopg.connect(PG_URL)

    def close(self):
        self.execute(f"DROP SCHEMA IF EXISTS {self.schema} CASCADE")
        self.con.close()


class MariaDBDatabase(TestDatabase):
    name = dialect = "mysql"
    types = {"int": "BIGINT", "float": "DOUBLE", "bool": "BOOLEAN", "str": "VARCHAR(100)", "date": "DATE"}

    def __init__(self, schema: str):
        super().__init__(schema)
        import pymysql

        parts = urlsplit(MYSQL_URL)
        self.con = pymysql.connect(host=parts.hostname, port=parts.port, user=parts.username,
                                   password=parts.password or "", autocommit=True, connect_timeout=5)
        self.execute(f"DROP DATABASE IF EXISTS {schema}")
        self.execute(f"CREATE DATABASE {schema}")

    def execute(self, sql, params=None):
        with self.con.cursor() as cur:
            if params:
                cur.executemany(sql, params)
            else:
                cur.execute(sql)

    def url(self):
        return MYSQL_URL

    def engine(self):
        return engines.connect(MYSQL_URL)

    def connection(self):
        import pymysql

        parts = urlsplit(MYSQL_URL)
        return pymysql.connect(host=parts.hostname, port=parts.port, user=parts.username,
                               password=parts.password or "", database=parts.path.lstrip("/"))

    def close(self):
        self.execute(f"DROP DATABASE IF EXISTS {self.schema}")
        self.con.close()


class ClickHouseDatabase(TestDatabase):
    """Embedded ClickHouse (chdb) on a data folder; sqlstat reads it through chdb:///folder."""

    name = "clickhouse"
    dialect = "clickhouse"
    types = {"int": "Int64", "float": "Float64", "bool": "Bool", "str": "String", "date": "Date"}

    def __init__(self, schema: str, folder: Path):
        super().__init__(schema)
        import chdb

        self.path = chdb_folder()
        self.con = chdb.connect(str(self.path))
        self.execute(f"CREATE DATABASE IF NOT EXISTS {schema}")

    def column_type(self, kind, nullable):
        # Real ClickHouse tables are mostly non-Nullable; use Nullable only where data has NULLs.
        return f"Nullable({self.types[kind]})" if nullable else self.types[kind]

    def table_suffix(self):
        return " ENGINE = MergeTree ORDER BY tuple()"

    def execute(self, sql, params=None):
        cur = self.con.cursor()
        cur.execute(sql)

    def insert(self, table, idents, rows):
        insert_literal_rows(self.con.cursor(), f"{table} ({', '.join(idents)})", rows)

    def url(self):
        return f"chdb:///{self.path}"  # an absolute path: four slashes

    def engine(self):
        return engines.clickhouse_engine(self.con)

    def connection(self):
        import chdb

        return chdb.connect(str(self.path))

    def close(self):
        self.execute(f"DROP DATABASE IF EXISTS {self.schema}")


class SparkDatabase(TestDatabase):
    """pyspark in local mode with a scratch warehouse; one SparkSession per test session."""

    name = dialect = "spark"

    def __init__(self, schema: str, folder: Path):
        super().__init__(schema)
        self.session = spark_session(folder)
        self.session.sql(f"CREATE DATABASE IF NOT EXISTS {schema}")

    def load(self, table, columns):
        from pyspark.sql import types as T

        names = list(columns)
        arrays = [np.asarray(columns[n]) for n in names]
        kinds = [_kind(a) for a in arrays]
        spark_types = {"int": T.LongType(), "float": T.DoubleType(), "bool": T.BooleanType(), "str": T.StringType(),
                       "date": T.DateType()}
        schema = T.StructType([
            T.StructField(column_name(n).name, spark_types[k], True) for n, k in zip(names, kinds)
        ])
        rows = list(zip(*[_python(a, k) for a, k in zip(arrays, kinds)]))
        target = self.qualified(table)
        frame = self.session.createDataFrame(rows, schema)
        frame.write.mode("overwrite").saveAsTable(target)
        self.tables.append(target)
        return target

    def execute(self, sql, params=None):
        self.session.sql(sql).collect()

    def url(self):
        return "spark://local[2]"  # reuses the running session and its catalog

    def engine(self):
        return engines.spark_engine(self.session)

    def connection(self):
        return self.session

    def close(self):
        self.session.sql(f"DROP DATABASE IF EXISTS {self.schema} CASCADE")


_SPARK: dict[str, Any] = {}


def spark_session(folder: Path):
    """The one SparkSession of this test run (starting Spark takes seconds; do it once)."""
    if "session" not in _SPARK:
        from pyspark.sql import SparkSession

        _SPARK["session"] = (
            SparkSession.builder.master("local[2]")
            .appName("sqlstat-tests")
            .config("spark.ui.enabled", "false")
            .config("spark.sql.shuffle.partitions", "2")  # tiny data: 200 partitions is pure overhead
            .config("spark.driver.memory", engines.SPARK_LOCAL_DRIVER_MEMORY)  # planning the readout
            .config("spark.sql.analyzer.maxIterations", str(engines.SPARK_ANALYZER_ITERATIONS))
            .config("spark.sql.warehouse.dir", str(folder / "spark-warehouse"))
            .config("spark.driver.extraJavaOptions", f"-Dderby.system.home={folder}")
            .getOrCreate()
        )
        _SPARK["session"].sparkContext.setLogLevel("ERROR")
    return _SPARK["session"]


def stop_spark() -> None:
    session = _SPARK.pop("session", None)
    if session is not None:
        session.stop()


def open_database(name: str, folder: Path) -> TestDatabase:
    """Open the named engine's test database, or skip/fail with the reason it is absent."""
    schema = f"sqlstat_test_{os.getpid()}"
    try:
        if name == "duckdb":
            return DuckDBDatabase(schema, folder)
        if name == "sqlite":
            return SQLiteDatabase(schema, folder)
        if name == "postgres":
            import psycopg  # noqa: F401

            return PostgresDatabase(schema)
        if name == "mysql":
            import pymysql  # noqa: F401

            return MariaDBDatabase(schema)
        if name == "clickhouse":
            import chdb  # noqa: F401

            return ClickHouseDatabase(schema, folder)
        if name == "spark":
            import pyspark  # noqa: F401

            if shutil.which("java") is None and not os.environ.get("JAVA_HOME"):
                unavailable(name, "no Java runtime (pyspark needs Java 17)")
            return SparkDatabase(schema, folder)
    except ImportError as err:
        unavailable(name, f"package not installed ({err.name}); pip install -e '.[engines]' or '.[heavy]'")
    except Exception as err:  # a server that is down, refused, ...
        if isinstance(err, (pytest.skip.Exception, pytest.fail.Exception)):
            raise
        unavailable(name, f"{type(err).__name__}: {str(err).splitlines()[0] if str(err) else ''}")
    raise ValueError(name)


def insert_literal_rows(cursor: Any, target: str, rows: list[tuple]) -> None:
    """INSERT rows into a ClickHouse table as literals printed by sqlglot (chdb's cursor
    takes no parameters); ``target`` is the table, optionally with its column list."""
    for start in range(0, len(rows), 5000):
        values = exp.values([tuple(exp.convert(v) for v in r) for r in rows[start:start + 5000]])
        cursor.execute(f"INSERT INTO {target} {values.sql(dialect='clickhouse')}")


_CHDB: dict[str, Path] = {}


def chdb_folder() -> Path:
    """The data folder of this process's embedded ClickHouse. chdb runs one embedded server
    per process and refuses a connection to any other path (or to memory) once it has
    started, so every test that uses chdb connects to this one."""
    if "path" not in _CHDB:
        _CHDB["path"] = Path(tempfile.mkdtemp(prefix="sqlstat-chdb-"))
    return _CHDB["path"]


def scratch_folder() -> Path:
    return Path(tempfile.mkdtemp(prefix="sqlstat-engines-"))

"""The library's front door: spec -> SQL, spec -> results, rows -> results.

This module wires the stages together and is the only one that knows all of them.
Engine and statistics modules are imported inside the functions that need them, so
compiling SQL never pays for DuckDB or SciPy.
"""

from __future__ import annotations

from pathlib import Path
from typing import TYPE_CHECKING, Any, Iterable

from .compile import compile_sql
from .model import Experiment
from .spec import load_spec

if TYPE_CHECKING:  # pragma: no cover
    from .engines import Engine
    from .stats import Analysis


def _experiment(spec: str | Path | Experiment) -> Experiment:
    return spec if isinstance(spec, Experiment) else load_spec(spec)


def sql(spec: str | Path | Experiment, dialect: str = "duckdb", *, pretty: bool = True) -> str:
    """The experiment's one read-only SELECT, in ``dialect`` (default DuckDB)."""
    return compile_sql(_experiment(spec), dialect, pretty=pretty)


def analyse(spec: str | Path | Experiment, rows: Iterable[dict[str, Any]]) -> "Analysis":
    """Turn rows that the compiled query returned (from anywhere) into an Analysis."""
    from .stats import analyse as _analyse

    return _analyse(_experiment(spec), rows)


def run(
    spec: str | Path | Experiment,
    *,
    db: str | None = None,
    connection: Any = None,
    dialect: str | None = None,
    engine: "Engine | None" = None,
) -> "Analysis":
    """Compile, execute and analyse in one call.

    Args:
        spec: a spec file path or an Experiment.
        db: a database URL (duckdb:///, postgresql://, mysql://, sqlite:///, spark://local[2],
            chdb:///folder); default is DuckDB in memory, which reads .parquet/.csv sources.
        connection: an open DB-API 2.0 connection instead of a URL (give ``dialect`` too),
            a DuckDB connection, a pyspark SparkSession or a chdb connection.
        dialect: the SQL dialect of ``connection`` (inferred for DuckDB, Spark and chdb).
        engine: an Engine from sqlstat.engines, for full control.
    """
    from . import engines

    experiment = _experiment(spec)
    owned = False
    if engine is None:
        if connection is not None:
            engine = engines.engine_for(connection, dialect)
        else:
            engine, owned = engines.connect(db), True
    try:
        rows = engine.run(compile_sql(experiment, engine.dialect), experiment)
    finally:
        if owned:
            engine.close()
    return analyse(experiment, rows)

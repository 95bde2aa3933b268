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


def sql(spec: str | Path | Experiment, dialect: str = "duckdb", *, pretty: bool = True, view: str | None = None,
        readout: bool = False, double_percent: bool = False) -> str:
    """The experiment's one read-only SELECT, in ``dialect`` (default DuckDB).

    With ``readout``, the query also carries p-values, intervals, adjusted p-values, the
    guardrail status and the verdict in its own columns (for dashboards); with ``view``,
    it is wrapped as a CREATE OR REPLACE VIEW statement of that name. With
    ``double_percent``, ``%`` is written ``%%`` for clients that run the text with
    parameters (psycopg, pymysql), which read ``%`` as a placeholder.
    """
    return compile_sql(_experiment(spec), dialect, pretty=pretty, view=view, readout=readout,
                       double_percent=double_percent)


def sql_folder(spec: str | Path | Experiment, folder: str | Path, *, view: str | None = None,
               force: bool = False, readout: bool = False) -> tuple[list[Path], dict[str, str]]:
    """Write the query for every dialect to ``folder`` as <experiment>.<dialect>.sql.

    Returns the files written and, per dialect skipped, why (e.g. file sources outside DuckDB).
    """
    from .compile import compile_all
    from .files import write_atomic

    experiment = _experiment(spec)
    target = Path(folder)
    target.mkdir(parents=True, exist_ok=True)
    done, skipped = compile_all(experiment, view=view, readout=readout)
    stem = "".join(c if c.isalnum() or c in "-_" else "_" for c in experiment.name)
    written = [write_atomic(target / f"{stem}.{d}.sql", text, kind="sql", force=force) for d, text in done.items()]
    return written, skipped


def daily_sql(spec: str | Path | Experiment, dialect: str = "duckdb", *, pretty: bool = True,
              readout: bool = False, double_percent: bool = False) -> str:
    """The daily cumulative view: one SELECT giving the readout as of each day (needs daily = true).

    With ``readout``, each day's rows also carry p-values, intervals, adjustments and the
    verdict; with ``always_valid = true`` in the spec, the always-valid p-value is the
    running minimum over the days so far.
    """
    from .compile import compile_daily

    return compile_daily(_experiment(spec), dialect, pretty=pretty, readout=readout, double_percent=double_percent)


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
    query = None
    if engine is None and connection is None:
        # Compile first: a spec the URL's engine cannot run (file sources on Spark) is
        # refused before a server is contacted or a JVM started.
        query = compile_sql(experiment, engines.url_dialect(db))
        _check_file_columns(experiment, engines.url_dialect(db))
        engine, owned = engines.connect(db), True
    elif engine is None:
        engine = engines.engine_for(connection, dialect)
    if query is None:
        _check_file_columns(experiment, engine.dialect)
    try:
        rows = engine.run(query or compile_sql(experiment, engine.dialect), experiment)
    finally:
        if owned:
            engine.close()
    return analyse(experiment, rows)


def _check_file_columns(experiment: Experiment, dialect: str) -> None:
    """On DuckDB (which reads the spec's files), a misspelt column of a file source is a
    SpecError naming the key and the nearest column, not an engine error."""
    if dialect == "duckdb" and any(rel is not None and rel.source.kind == "file" for rel in
                                   (experiment.assignment, experiment.events, experiment.pre_period)):
        from .columns import check_columns

        check_columns(experiment)


def baseline_sql(spec: str | Path | Experiment, dialect: str = "duckdb", *, pretty: bool = True) -> str:
    """The planning query: per-metric baseline mean and variance over the pre-period."""
    from .compile import compile_baseline

    return compile_baseline(_experiment(spec), dialect, pretty=pretty)


def plan(
    spec: str | Path | Experiment,
    *,
    mde: float | None = None,
    relative: bool = False,
    units: int | None = None,
    power: float | None = None,
    db: str | None = None,
    engine: "Engine | None" = None,
):
    """Read each metric's baseline from the pre-period and size the experiment.

    Give ``mde`` (absolute, or relative with ``relative=True``) for units per arm and days,
    or ``units`` (per arm) for the minimum detectable effect.
    """
    from . import engines
    from .compile import compile_baseline
    from .errors import UsageError
    from .power import plan as _plan

    if (mde is None) == (units is None):
        raise UsageError("give exactly one of --mde (effect to detect) or --units (units per arm available)")
    if mde is not None and not mde > 0:
        raise UsageError("--mde must be a positive number")
    if units is not None and units < 3:
        raise UsageError("--units must be at least 3 per arm")
    experiment = _experiment(spec)
    owned = engine is None
    engine = engine or engines.connect(db)
    try:
        rows = engine.run(compile_baseline(experiment, engine.dialect))
    finally:
        if owned:
            engine.close()
    return _plan(experiment, rows, mde=mde, relative=relative, units=units, power=power)

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
    from .progress import Tick
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
    """Turn rows that the compiled query returned (from anywhere) into an Analysis.

    The Analysis has ``to_frame()`` (a pandas DataFrame, one row per comparison; needs the
    ``notebook`` extra) and shows itself as an HTML table in Jupyter.
    """
    from .report_frame import notebook_view
    from .stats import analyse as _analyse

    return notebook_view(_analyse(_experiment(spec), rows))


def run(
    spec: str | Path | Experiment,
    *,
    db: str | None = None,
    connection: Any = None,
    dialect: str | None = None,
    engine: "Engine | None" = None,
    on_progress: "Tick | None" = None,
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
        on_progress: called about every 0.1 s while the query runs with (engine, elapsed
            seconds, the engine's own progress 0-100 or None); see sqlstat.progress.

    Ctrl-C while the query runs cancels it on the engine where the driver allows it and
    raises sqlstat.errors.Interrupted.
    """
    return run_with_context(spec, db=db, connection=connection, dialect=dialect, engine=engine,
                            on_progress=on_progress)[0]


def run_with_context(
    spec: str | Path | Experiment,
    *,
    db: str | None = None,
    connection: Any = None,
    dialect: str | None = None,
    engine: "Engine | None" = None,
    on_progress: "Tick | None" = None,
    daily: bool = False,
) -> "tuple[Analysis, dict[str, Any]]":
    """As ``run``, plus what a full report shows beside the results: ``{"query": {"sql",
    "dialect", "fingerprint"}, "engine": description, "daily": None or {"rows": [...],
    "always_valid": bool}}``.

    With ``daily`` and a spec with ``daily = true``, the daily view's readout query runs on
    the same engine right after the main query; its treatment rows (day, metric, arm,
    estimate, ci_low, ci_high, sequence_low, sequence_high) are the chart's data, computed
    in the engine like everything else.
    """
    from . import engines
    from .progress import label, run_watched
    from .report_common import sql_fingerprint

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
    daily_rows = None
    try:
        query = query or compile_sql(experiment, engine.dialect)
        rows = run_watched(engine, query, experiment, on_progress)
        if daily and experiment.daily:
            from .compile import compile_daily

            got = run_watched(engine, compile_daily(experiment, engine.dialect, readout=True), experiment, on_progress)
            daily_rows = [_daily_point(r) for r in got if r.get("arm") != experiment.control]
    finally:
        if owned:
            engine.close()
    context = {
        "query": {"sql": query, "dialect": engine.dialect, "fingerprint": sql_fingerprint(query)},
        "engine": label(engine),
        "daily": None if daily_rows is None else {"rows": daily_rows, "always_valid": experiment.always_valid},
    }
    return analyse(experiment, rows), context


_DAILY_FIELDS = ("metric", "arm", "estimate", "ci_low", "ci_high", "sequence_low", "sequence_high")


def _daily_point(row: dict[str, Any]) -> dict[str, Any]:
    day = row["day"]
    return {"day": day.isoformat() if hasattr(day, "isoformat") else str(day)[:10],
            **{k: row.get(k) for k in _DAILY_FIELDS}}


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
    on_progress: "Tick | None" = None,
):
    """Read each metric's baseline from the pre-period and size the experiment.

    Give ``mde`` (absolute, or relative with ``relative=True``) for units per arm and days,
    or ``units`` (per arm) for the minimum detectable effect.
    """
    from . import engines
    from .compile import compile_baseline
    from .errors import UsageError
    from .power import plan as _plan
    from .progress import run_watched

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
        rows = run_watched(engine, compile_baseline(experiment, engine.dialect), None, on_progress)
    finally:
        if owned:
            engine.close()
    return _plan(experiment, rows, mde=mde, relative=relative, units=units, power=power)

"""Command line -> one library call per command; errors become one 'Error: ...' line.

Exit codes: 0 success, 1 the analysis ran but found a data problem (sample-ratio
mismatch, a comparison the data cannot support), 2 usage or spec error, 3 engine or
connection error, 130 interrupted (Ctrl-C: the query is cancelled on the engine where the
driver allows it and no output file is written). --debug shows the traceback instead.
"""

from __future__ import annotations

import sys
from enum import Enum
from pathlib import Path
from typing import Optional

import typer

from .errors import SqlstatError

app = typer.Typer(
    name="sqlstat",
    help="Experiment metrics -> one read-only SQL query -> tested statistics.",
    add_completion=False,
    no_args_is_help=True,
    pretty_exceptions_enable=False,
    rich_markup_mode=None,
)


class Format(str, Enum):
    table = "table"
    json = "json"
    csv = "csv"
    html = "html"
    markdown = "markdown"


SPEC = typer.Argument(..., help="The experiment spec (TOML).", show_default=False)


def _show_version(value: bool) -> None:
    if value:
        from . import __version__

        typer.echo(f"sqlstat {__version__}")
        raise typer.Exit()


@app.callback()
def _main(
    version: bool = typer.Option(False, "--version", callback=_show_version, is_eager=True,
                                 help="Print sqlstat's version and exit."),
) -> None:
    """Experiment metrics -> one read-only SQL query -> tested statistics."""
DEBUG = typer.Option(False, "--debug", help="Show the full traceback on errors.")
FORCE = typer.Option(False, "--force", help="Replace an existing output file that sqlstat did not write.")
QUIET = typer.Option(False, "--quiet", "-q", help="No progress line while the query runs.")


def _progress_line(quiet: bool):
    """The live progress line on stderr, when stderr is a terminal and not --quiet."""
    if quiet or not sys.stderr.isatty():
        return None
    from .progress import ProgressLine

    return ProgressLine(sys.stderr)


def _fail(err: BaseException, debug: bool) -> None:
    if isinstance(err, KeyboardInterrupt):  # outside a query (compiling, rendering): nothing written
        typer.echo("Error: interrupted; nothing was written", err=True)
        raise typer.Exit(130)
    if debug:
        raise err
    if isinstance(err, SqlstatError):
        typer.echo(f"Error: {err}", err=True)
        raise typer.Exit(err.exit_code)
    raise err


def _emit(text: str, output: Optional[Path], kind: str, force: bool) -> None:
    if output is None:
        sys.stdout.write(text)
        return
    from .files import write_atomic

    write_atomic(output, text, kind=kind, force=force)
    typer.echo(f"wrote {output}", err=True)


@app.command()
def run(
    spec: Path = SPEC,
    db: Optional[str] = typer.Option(
        None, "--db", help="Database URL: duckdb:///file.db, postgresql://..., mysql://..., sqlite:///file.db, "
        "spark://local[2], chdb:///folder. Default: DuckDB in memory (reads .parquet/.csv sources).",
    ),
    fmt: Format = typer.Option(Format.table, "--format", "-f", help="table, json, csv (one row per metric and arm), "
                               "html (one self-contained file with charts) or markdown (for pull requests and chat)."),
    output: Optional[Path] = typer.Option(None, "--output", "-o", help="Write to this file (atomically) instead of stdout."),
    force: bool = FORCE,
    quiet: bool = QUIET,
    debug: bool = DEBUG,
) -> None:
    """Compile the spec, run the query on the engine and print the readout."""
    line = _progress_line(quiet)
    try:
        from . import api
        from .report import render
        analysis, context = api.run_with_context(spec, db=db, on_progress=line, daily=fmt is Format.html)
        if line:
            line.clear()
        _emit(render(analysis, fmt.value, context), output, fmt.value, force)
    except (Exception, KeyboardInterrupt) as err:  # noqa: BLE001 - mapped to exit codes in _fail
        if line:
            line.clear()
        _fail(err, debug)
        return
    if analysis.data_problem:
        raise typer.Exit(1)


@app.command()
def sql(
    spec: Path = SPEC,
    dialect: str = typer.Option("duckdb", "--dialect", "-d", help="Target SQL dialect (see `sqlstat dialects`)."),
    output: Optional[Path] = typer.Option(None, "--output", "-o", help="Write the SQL to this file (atomically)."),
    readout: bool = typer.Option(
        False, "--readout", help="Carry the whole readout in the query's columns: p-values, intervals, "
        "adjusted p-values, guardrails and the verdict (for dashboards with no Python step).",
    ),
    as_view: Optional[str] = typer.Option(
        None, "--as-view", help="Wrap the SELECT as CREATE OR REPLACE VIEW NAME AS ... for a scheduler."
    ),
    folder: Optional[Path] = typer.Option(
        None, "--folder", help="Write one file per dialect into this folder (<experiment>.<dialect>.sql)."
    ),
    daily: bool = typer.Option(False, "--daily", help="The daily cumulative view instead: the readout as of each day "
                               "(the spec needs daily = true and time columns)."),
    double_percent: bool = typer.Option(
        False, "--double-percent", help="Write every % as %% for clients that run the text with parameters "
        "(psycopg, pymysql, pandas read_sql with params), which read % as a placeholder.",
    ),
    force: bool = FORCE,
    debug: bool = DEBUG,
) -> None:
    """Print the experiment's one read-only SELECT for a dialect, ready to paste or schedule."""
    try:
        from . import api

        if folder is not None:
            written, skipped = api.sql_folder(spec, folder, view=as_view, force=force, readout=readout)
            for path in written:
                typer.echo(f"wrote {path}")
            for name, why in skipped.items():
                typer.echo(f"skipped {name}: {why}", err=True)
            return
        if daily:
            _emit(api.daily_sql(spec, dialect, readout=readout, double_percent=double_percent), output, "sql", force)
            return
        _emit(api.sql(spec, dialect, view=as_view, readout=readout, double_percent=double_percent), output, "sql", force)
    except Exception as err:  # noqa: BLE001
        _fail(err, debug)


@app.command()
def check(
    spec: Path = SPEC,
    columns: bool = typer.Option(
        False, "--columns", help="Also read the column names of file sources (with DuckDB) and check every column the spec names."
    ),
    debug: bool = DEBUG,
) -> None:
    """Validate the spec and print the plan: the test each metric will get and why."""
    try:
        from .report import plan_text
        from .columns import check_columns
        from .spec import load_spec

        experiment = load_spec(spec)
        checked = check_columns(experiment) if columns else []
        sys.stdout.write(plan_text(experiment))
        if columns:
            sys.stdout.write("Columns checked:\n" + "".join(f"  {line}\n" for line in checked or ["no file sources to check"]))
    except Exception as err:  # noqa: BLE001
        _fail(err, debug)


@app.command()
def plan(
    spec: Path = SPEC,
    mde: Optional[float] = typer.Option(None, "--mde", help="Effect to detect, in metric units (or a share with --relative)."),
    relative: bool = typer.Option(False, "--relative", help="Read --mde as a share of the baseline, e.g. 0.05 for 5%."),
    units: Optional[int] = typer.Option(None, "--units", help="Units in the smallest arm (every arm, with an equal split): print the minimum detectable effect."),
    power: Optional[float] = typer.Option(None, "--power", help="Chance of detecting the effect if it is real (default: the spec's, 0.8)."),
    db: Optional[str] = typer.Option(None, "--db", help="Database URL (as for `run`)."),
    fmt: Format = typer.Option(Format.table, "--format", "-f", help="table or json."),
    quiet: bool = QUIET,
    debug: bool = DEBUG,
) -> None:
    """Size an experiment before launch from each metric's pre-period baseline."""
    line = _progress_line(quiet)
    try:
        from . import api
        from .report import plan_report

        if fmt.value not in ("table", "json"):
            from .errors import UsageError

            raise UsageError("plan prints a table or JSON: use --format table or --format json")
        result = api.plan(spec, mde=mde, relative=relative, units=units, power=power, db=db, on_progress=line)
        if line:
            line.clear()
        sys.stdout.write(plan_report(result, "json" if fmt.value == "json" else "table"))
    except (Exception, KeyboardInterrupt) as err:  # noqa: BLE001
        if line:
            line.clear()
        _fail(err, debug)


@app.command()
def dialects() -> None:
    """List the SQL dialects sqlstat emits and how each is covered by the tests."""
    from .dialects import DIALECTS

    width = max(len(n) for n in DIALECTS)
    for d in DIALECTS.values():
        typer.echo(f"{d.name.ljust(width)}  {d.title}: {d.executed}")


def main() -> None:  # console-script entry point
    app()


if __name__ == "__main__":  # pragma: no cover
    main()

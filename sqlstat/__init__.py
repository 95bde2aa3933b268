"""sqlstat: experiment metrics -> one warehouse query -> tested statistics.

Public API:
    load_spec(path) -> Experiment            read and check a TOML spec
    parse_spec(text, base_dir) -> Experiment check spec text
    sql(spec, dialect) -> str                the one read-only SELECT for a dialect
    daily_sql(spec, dialect) -> str          the daily cumulative view (readout as of each day)
    run(spec, db=..., connection=...)        compile, execute, analyse -> Analysis
    analyse(spec, rows) -> Analysis          rows from the query -> results
    DIALECTS                                 supported dialects and their capabilities
    SqlstatError, SpecError, ...             the error tree
Reports: sqlstat.report.to_text / to_json / to_csv.
"""

from .api import analyse, baseline_sql, daily_sql, plan, run, sql
from .dialects import DIALECTS
from .errors import CompileError, DataProblem, EngineError, SpecError, SqlstatError, UsageError
from .model import Experiment, Metric
from .spec import load_spec, parse_spec

__version__ = "0.1.0"

__all__ = [
    "DIALECTS",
    "CompileError",
    "DataProblem",
    "EngineError",
    "Experiment",
    "Metric",
    "SpecError",
    "SqlstatError",
    "UsageError",
    "analyse",
    "baseline_sql",
    "daily_sql",
    "plan",
    "load_spec",
    "parse_spec",
    "run",
    "sql",
]

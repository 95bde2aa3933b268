"""Experiment + its data files -> SpecError for every column the spec names that a file lacks.

Engine stage: it reads file headers with DuckDB (imported only when a file is read), so
spec.py stays free of engines. Tables and queries are only known to the database and are
left to it.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

from sqlglot import exp

from .errors import SpecError
from .model import Experiment
from .spec_values import Checker, suggest


def _file_columns(path: Path) -> list[str]:
    """Column names of a data file, read by DuckDB (DESCRIBE); DuckDB is imported only here."""
    import duckdb

    name = path.name.lower()
    reader = "read_parquet" if name.endswith(".parquet") else (
        "read_json_auto" if name.endswith((".json", ".jsonl", ".ndjson")) else "read_csv_auto"
    )
    literal = exp.Literal.string(str(path)).sql("duckdb")
    with duckdb.connect() as con:
        return [row[0] for row in con.execute(f"DESCRIBE SELECT * FROM {reader}({literal})").fetchall()]


def check_columns(experiment: Experiment, text: str | None = None) -> list[str]:
    """Check every column the spec names against the columns of its file sources.

    Only file sources can be inspected without a database connection; table and query
    sources are left to the engine. Raises one SpecError listing every unknown column,
    with the nearest existing name; otherwise returns one line per source saying what was
    checked. Opt-in for ``check`` (``sqlstat check --columns``); ``api.run`` does it before
    running on DuckDB, so the library and the CLI give the same spec error.
    """
    checked: list[str] = []
    file = str(experiment.spec_path) if experiment.spec_path else None
    if text is None and experiment.spec_path is not None and experiment.spec_path.is_file():
        text = experiment.spec_path.read_text(encoding="utf-8")
    c = Checker(text or "", Path("."))
    value_rel = "events" if experiment.events is not None else "assignment"
    uses: dict[str, list[tuple[str, Any]]] = {"assignment": [], "events": [], "pre_period": []}
    pp = experiment.pre_period
    sources = (("assignment", experiment.assignment), ("events", experiment.events), ("pre_period", pp))
    for path, rel in sources:
        if rel is None:
            continue
        uses[path] += [(f"{path}.unit", rel.unit)]
        if getattr(rel, "arm", None) is not None:
            uses[path].append((f"{path}.arm", rel.arm))
        if getattr(rel, "time", None) is not None:
            uses[path].append((f"{path}.time", rel.time))
        if rel.where is not None:
            uses[path].append((f"{path}.where", rel.where))
    for seg in experiment.segments:
        uses["assignment"].append(("experiment.segments", seg))
    for m in experiment.metrics:
        key = "numerator" if m.kind == "ratio" else "value"
        uses[value_rel].append((f"metric[{m.index + 1}].{key}", m.value))
        if m.denominator is not None:
            uses[value_rel].append((f"metric[{m.index + 1}].denominator", m.denominator))
        if m.covariate is not None:
            uses["pre_period"].append((f"metric[{m.index + 1}].covariate", m.covariate))
    for path, rel in sources:
        if rel is None or rel.source.kind != "file" or not uses[path]:
            continue
        assert rel.source.path is not None
        if not rel.source.path.is_file():
            c.add(f"{path}.source", f"source file not found: {rel.source.path}")
            continue
        try:
            columns = _file_columns(rel.source.path)
        except Exception as err:  # duckdb.Error and OSError; the file is the user's to fix
            c.add(f"{path}.source", f"cannot read {rel.source.text!r}: {str(err).splitlines()[0]}")
            continue
        known = {col.lower() for col in columns}
        seen: set[str] = set()
        for key, node in uses[path]:
            cols = [node] if isinstance(node, exp.Column) else list(node.find_all(exp.Column))
            for col in cols:
                seen.add(col.name.lower())
                if col.name.lower() not in known:
                    c.add(key, f"column {col.name!r} is not in {rel.source.text!r}{suggest(col.name, columns)} "
                               f"(columns: {', '.join(columns)})")
        checked.append(f"{len(seen)} column(s) of [{path}] found in {rel.source.text!r} ({', '.join(sorted(seen))})")
    if c.problems:
        raise SpecError(c.problems, file)
    skipped = [f"[{p}] ({rel.source.text.strip()!r})" for p, rel in sources
               if rel is not None and rel.source.kind != "file" and uses[p]]
    if skipped:
        checked.append(f"not checked, left to the engine: {', '.join(skipped)} (tables and queries are "
                       f"only known to the database)")
    return checked

"""Spec text -> located problems: the low-level validators every spec table is checked with.

``Locator`` finds the line of a key path in TOML text; ``Checker`` collects problems and
checks one value at a time (strings, numbers, choices, columns, sources, row filters and
value expressions); the per-table builders in spec_tables.py are written with it.
"""

from __future__ import annotations

import difflib
import math
import os
import re
import tomllib
from pathlib import Path

from . import expressions as ex
from .errors import Problem
from .model import Relation, Source

FILE_SUFFIXES = (".parquet", ".csv", ".csv.gz", ".tsv", ".json", ".jsonl", ".ndjson")
MAX_LABEL_CHARS = 200  # arm labels and the experiment name: printed in every readout


def label_problem(value: str, what: str, *, in_sql: bool = True) -> str | None:
    """Why a label (arm, experiment name) cannot be used, or None when it is fine.

    Labels that go into the query (arm labels) may not contain ';': tools that split SQL
    scripts on ';' would cut the query there.
    """
    if in_sql and ";" in value:
        return f"{what} contains ';', which would cut the query in two for tools that split SQL on ';'; rename it"
    if len(value) > MAX_LABEL_CHARS:
        return f"{what} is {len(value):,} characters long; the limit is {MAX_LABEL_CHARS}"
    bad = ex.invisible_characters(value)
    if bad:
        return f"{what} contains control or invisible characters ({', '.join(bad)}); they would garble readouts"
    return None


class Locator:
    """Finds the line of a key path in TOML text (headers, array-of-tables, plain keys)."""

    _HEADER = re.compile(r"^\s*(\[\[?)\s*([A-Za-z0-9_.\"' -]+?)\s*\]\]?\s*(#.*)?$")
    _KEY = re.compile(r"^\s*(\"[^\"]*\"|'[^']*'|[A-Za-z0-9_-]+)\s*=")

    def __init__(self, text: str):
        self.lines = text.splitlines()
        self.index: dict[str, int] = {}
        counts: dict[str, int] = {}
        table = ""
        for no, line in enumerate(self.lines, start=1):
            head = self._HEADER.match(line)
            if head:
                name = head.group(2).strip().strip("\"'")
                if head.group(1) == "[[":
                    counts[name] = counts.get(name, 0) + 1
                    table = f"{name}[{counts[name]}]"
                else:
                    table = name
                self.index.setdefault(table, no)
                continue
            key = self._KEY.match(line)
            if key:
                k = key.group(1).strip("\"'")
                self.index.setdefault(f"{table}.{k}" if table else k, no)

    def problem(self, key: str, message: str) -> Problem:
        probe = key
        while probe:
            if probe in self.index:
                no = self.index[probe]
                return Problem(message, key, no, self.lines[no - 1])
            probe = probe.rpartition(".")[0]
        return Problem(message, key)


def suggest(word: str, choices: tuple[str, ...] | list[str]) -> str:
    hit = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return f"; did you mean {hit[0]!r}?" if hit else ""


def toml_syntax_problem(err: tomllib.TOMLDecodeError, text: str) -> Problem:
    m = re.search(r"\(at line (\d+), column (\d+)\)", str(err))
    line = int(m.group(1)) if m else None
    lines = text.splitlines()
    src = lines[line - 1] if line and line <= len(lines) else None
    msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(err))
    return Problem(f"TOML syntax error: {msg}", "", line, src, int(m.group(2)) if m and src is not None else None)


class Checker:
    def __init__(self, text: str, base_dir: Path):
        self.loc = Locator(text)
        self.base_dir = base_dir
        self.problems: list[Problem] = []

    def add(self, key: str, message: str) -> None:
        self.problems.append(self.loc.problem(key, message))

    def table(self, doc: dict, key: str, required: bool) -> dict | None:
        value = doc.get(key)
        if value is None:
            if required:
                self.problems.append(Problem(f"missing table [{key}]", key))
            return None
        if not isinstance(value, dict):
            self.add(key, f"[{key}] must be a table")
            return None
        return value

    def unknown_keys(self, table: dict, allowed: tuple[str, ...], path: str) -> None:
        for k in table:
            if k not in allowed:
                self.add(f"{path}.{k}", f"unknown key {k!r}{suggest(k, allowed)} (allowed: {', '.join(allowed)})")

    def string(self, table: dict, key: str, path: str, required: bool = True) -> str | None:
        value = table.get(key)
        if value is None:
            if required:
                self.add(f"{path}.{key}" if path in self.loc.index else path, f"missing required key {key!r} in [{path.split('[')[0]}]")
            return None
        if not isinstance(value, str) or not value.strip():
            self.add(f"{path}.{key}", f"{key!r} must be a non-empty string")
            return None
        return value

    def boolean(self, table: dict, key: str, path: str) -> bool:
        value = table.get(key, False)
        if not isinstance(value, bool):
            self.add(f"{path}.{key}", f"{key!r} must be true or false")
            return False
        return value

    def column(self, table: dict, key: str, path: str, required: bool = True):
        text = self.string(table, key, path, required)
        if text is None:
            return None
        try:
            return ex.parse_column(text, key)
        except ex.ExpressionProblem as err:
            self.add(f"{path}.{key}", str(err))
            return None

    def source(self, table: dict, path: str) -> Source | None:
        text = self.string(table, "source", path)
        if text is None:
            return None
        stripped = text.strip()
        try:
            if stripped.startswith("("):
                return Source("query", text, query=ex.parse_query(stripped, "source"))
            if stripped.lower().endswith(FILE_SUFFIXES) or "/" in stripped or "\\" in stripped:
                if "\x00" in stripped or any(ord(c) < 32 for c in stripped):
                    raise ex.ExpressionProblem("source: a file path cannot contain control characters")
                p = Path(stripped)
                resolved = p if p.is_absolute() else (self.base_dir / p)
                if not stripped.lower().endswith(FILE_SUFFIXES):
                    raise ex.ExpressionProblem(
                        f"source: {text!r} looks like a path but is not a .parquet/.csv/.json file; "
                        f"give a table name, a file, or a parenthesised SELECT"
                    )
                absolute = Path(os.path.abspath(resolved))
                if ";" in str(absolute):
                    raise ex.ExpressionProblem(
                        f"source: the path {str(absolute)!r} contains ';', which would cut the query in two "
                        f"for tools that split SQL on ';'; rename the file or its folder"
                    )
                return Source("file", text, path=absolute)
            return Source("table", text, table=ex.parse_table(stripped, "source"))
        except ex.ExpressionProblem as err:
            self.add(f"{path}.source", str(err))
            return None

    def relation(self, table: dict, path: str, with_arm: bool) -> Relation | None:
        src = self.source(table, path)
        unit = self.column(table, "unit", path)
        arm = self.column(table, "arm", path) if with_arm else None
        per_unit = self.boolean(table, "per_unit", path)
        where = self.row_filter(table, path)
        time = self.column(table, "time", path) if "time" in table else None
        if src is None or unit is None or (with_arm and arm is None):
            return None
        return Relation(src, unit, arm, per_unit, where, time=time)

    def row_filter(self, table: dict, path: str):
        """The optional ``where`` condition of a source table, checked."""
        if "where" not in table:
            return None
        text = self.string(table, "where", path)
        if text is None:
            return None
        try:
            return ex.parse_filter(text, "where")
        except ex.ExpressionProblem as err:
            self.add(f"{path}.where", str(err))
            return None

    def probability(self, table: dict, key: str, path: str, default: float) -> float:
        value = table.get(key, default)
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not (0 < value < 1):
            self.add(f"{path}.{key}", f"{key!r} must be a number strictly between 0 and 1, got {value!r}")
            return default
        return float(value)

    def number(self, table: dict, key: str, path: str, *, positive: bool = False) -> float | None:
        value = table.get(key)
        if value is None:
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) or (positive and value <= 0):
            self.add(f"{path}.{key}", f"{key!r} must be a {'positive ' if positive else ''}number, got {value!r}")
            return None
        return float(value)

    def choice(self, table: dict, key: str, path: str, choices: tuple[str, ...], default: str | None) -> str | None:
        value = table.get(key, default)
        if value is None or value in choices:
            return value
        self.add(f"{path}.{key}", f"{key!r} must be one of: {', '.join(choices)}, got {value!r}{suggest(str(value), choices)}")
        return default

    def expression(self, table: dict, key: str, path: str, aggregated: bool, required: bool):
        text = self.string(table, key, path, required=required)
        if text is None:
            return None, None
        try:
            return ex.parse_value(text, key, aggregated=aggregated), text
        except ex.ExpressionProblem as err:
            self.add(f"{path}.{key}", str(err))
            return None, text

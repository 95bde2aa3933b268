"""TOML spec file -> checked Experiment model, or one SpecError listing every problem found.

Key paths in messages look like ``experiment.control`` or ``metric[2].kind`` (metrics
counted from 1, in file order); lines come from the TOML text itself.
"""

from __future__ import annotations

import datetime as _dt
import difflib
import math
import os
import re
import stat
import tomllib
from pathlib import Path
from typing import Any

from sqlglot import exp

from . import expressions as ex
from .errors import Problem, SpecError
from .model import (
    CORRECTIONS, DIRECTIONS, METRIC_KINDS, MISSING_POLICIES, ROLES, Experiment, Metric, PrePeriod, Relation, Source,
)

EXPERIMENT_KEYS = (
    "name", "control", "alpha", "weights", "arms", "sample_ratio_alpha", "segments", "correction",
    "power", "always_valid", "fastest_detected_lift", "mixing_sd", "description", "daily",
)
ASSIGNMENT_KEYS = ("source", "unit", "arm", "per_unit", "where", "time")
EVENTS_KEYS = ("source", "unit", "per_unit", "where", "time")
METRIC_KEYS = (
    "name", "kind", "value", "numerator", "denominator", "sigma", "equal_variance", "missing",
    "cuped", "covariate", "role", "better", "margin", "relative_margin", "target", "description",
)
PRE_PERIOD_KEYS = ("source", "unit", "time", "start", "end", "where")
CORRECTION_KEYS = ("primary", "secondary", "guardrail", "segment")
TOP_KEYS = ("experiment", "assignment", "events", "pre_period", "metric")
FILE_SUFFIXES = (".parquet", ".csv", ".csv.gz", ".tsv", ".json", ".jsonl", ".ndjson")
_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_.\-]{0,99}$")
MAX_LABEL_CHARS = 200  # arm labels and the experiment name: printed in every readout


def _label_problem(value: str, what: str, *, in_sql: bool = True) -> str | None:
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


class _Locator:
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


def _suggest(word: str, choices: tuple[str, ...] | list[str]) -> str:
    hit = difflib.get_close_matches(str(word), list(choices), n=1, cutoff=0.6)
    return f"; did you mean {hit[0]!r}?" if hit else ""


def _toml_syntax_problem(err: tomllib.TOMLDecodeError, text: str) -> Problem:
    m = re.search(r"\(at line (\d+), column (\d+)\)", str(err))
    line = int(m.group(1)) if m else None
    lines = text.splitlines()
    src = lines[line - 1] if line and line <= len(lines) else None
    msg = re.sub(r"\s*\(at line \d+, column \d+\)", "", str(err))
    return Problem(f"TOML syntax error: {msg}", "", line, src, int(m.group(2)) if m and src is not None else None)


class _Checker:
    def __init__(self, text: str, base_dir: Path):
        self.loc = _Locator(text)
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
                self.add(f"{path}.{k}", f"unknown key {k!r}{_suggest(k, allowed)} (allowed: {', '.join(allowed)})")

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
        self.add(f"{path}.{key}", f"{key!r} must be one of: {', '.join(choices)}, got {value!r}{_suggest(str(value), choices)}")
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

    def metric(self, table: Any, number: int, per_unit: bool, has_pre_period: bool) -> Metric | None:
        path = f"metric[{number}]"
        if not isinstance(table, dict):
            self.add(path, "each [[metric]] must be a table")
            return None
        self.unknown_keys(table, METRIC_KEYS, path)
        name = self.string(table, "name", path)
        if name is not None and not _NAME.match(name):
            self.add(f"{path}.name", "metric name must start with a letter or _ and use letters, digits, _ . - (at most 100)")
            name = None
        kind = table.get("kind")
        if kind is None:
            self.add(path, f"missing required key 'kind' (one of: {', '.join(METRIC_KINDS)})")
        elif kind not in METRIC_KINDS:
            self.add(f"{path}.kind", f"unknown kind {kind!r}{_suggest(kind, METRIC_KINDS)} (allowed: {', '.join(METRIC_KINDS)})")
            kind = None
        value = denominator = None
        text = ""
        if kind == "ratio":
            if "value" in table:
                self.add(f"{path}.value", "a ratio metric takes 'numerator' and 'denominator' instead of 'value'")
            value, text = self.expression(table, "numerator", path, not per_unit, required=True)
            denominator, _ = self.expression(table, "denominator", path, not per_unit, required=True)
        else:
            for k in ("numerator", "denominator"):
                if k in table:
                    self.add(f"{path}.{k}", f"{k!r} is for ratio metrics (kind = \"ratio\"); use 'value'")
            value, text = self.expression(table, "value", path, not per_unit, required=True)
        sigma = self.number(table, "sigma", path, positive=True)
        if sigma is not None and kind != "mean":
            self.add(f"{path}.sigma", "'sigma' applies to mean metrics only; a proportion's variance follows from its rate")
        equal_variance = self.boolean(table, "equal_variance", path)
        if equal_variance and kind != "mean":
            self.add(f"{path}.equal_variance", "'equal_variance' applies to mean metrics only")
        if equal_variance and sigma is not None:
            self.add(f"{path}.equal_variance", "give either 'sigma' (z test) or 'equal_variance' (Student's t), not both")
        missing = self.choice(table, "missing", path, MISSING_POLICIES, "zero")

        covariate = None
        cuped = self.boolean(table, "cuped", path)
        if cuped and "covariate" in table:
            self.add(f"{path}.cuped", "give either 'cuped = true' (the metric's own value before the experiment) or 'covariate', not both")
        elif cuped or "covariate" in table:
            if not has_pre_period:
                self.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED needs a [pre_period] table saying where and when the pre-experiment rows are")
            elif kind == "ratio":
                self.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED adjustment of ratio metrics is not supported; use it on mean or proportion metrics")
            elif sigma is not None or equal_variance:
                self.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED uses its own Welch test; drop 'sigma' / 'equal_variance'")
            elif cuped:
                if per_unit:
                    self.add(f"{path}.cuped", "with per_unit events the value is a row expression; write the pre-period aggregate as 'covariate'")
                else:
                    covariate = value
            else:
                covariate, _ = self.expression(table, "covariate", path, True, required=True)

        role = self.choice(table, "role", path, ROLES, "secondary")
        better = self.choice(table, "better", path, DIRECTIONS, None)
        margin = self.number(table, "margin", path, positive=True)
        relative_margin = self.number(table, "relative_margin", path, positive=True)
        if role == "guardrail":
            if better is None:
                self.add(path, "a guardrail needs 'better' (\"higher\" or \"lower\") to know which way is harm")
            if (margin is None) == (relative_margin is None):
                self.add(path, "a guardrail needs exactly one of 'margin' (absolute) or 'relative_margin' (e.g. 0.05 for 5%)")
        elif margin is not None or relative_margin is not None:
            self.add(f"{path}.{'margin' if margin is not None else 'relative_margin'}", "margins apply to guardrails only (role = \"guardrail\")")
        target = self.number(table, "target", path)
        if target is not None and kind == "proportion" and not (0 < target < 1):
            self.add(f"{path}.target", "a proportion's target must be strictly between 0 and 1")
        description = table.get("description", "")
        if not isinstance(description, str):
            self.add(f"{path}.description", "'description' must be a string")
            description = ""
        if name is None or kind is None or value is None or (kind == "ratio" and denominator is None):
            return None
        if (cuped or "covariate" in table) and covariate is None:
            return None
        return Metric(
            number - 1, name, kind, value, text, sigma, equal_variance, missing or "zero",
            denominator=denominator, covariate=covariate, role=role or "secondary", better=better,
            margin=margin, relative_margin=relative_margin, target=target, description=description,
        )

    def pre_period(self, table: dict) -> PrePeriod | None:
        path = "pre_period"
        self.unknown_keys(table, PRE_PERIOD_KEYS, path)
        src = self.source(table, path)
        unit = self.column(table, "unit", path)
        time = self.column(table, "time", path)
        dates = []
        for key in ("start", "end"):
            raw = table.get(key)
            if raw is None:
                self.add(path, f"missing required key {key!r} (an ISO date such as 2026-08-01)")
                dates.append(None)
                continue
            try:
                dates.append(_dt.date.fromisoformat(str(raw)[:10]) if not isinstance(raw, _dt.date) else raw)
            except ValueError:
                self.add(f"{path}.{key}", f"{key!r} must be an ISO date such as 2026-08-01, got {raw!r}")
                dates.append(None)
        if dates[0] and dates[1] and dates[0] >= dates[1]:
            self.add(f"{path}.end", "'end' must be after 'start' (the window is start <= time < end)")
        where = self.row_filter(table, path)
        if src is None or unit is None or time is None or None in dates:
            return None
        start, end = (d.date() if isinstance(d, _dt.datetime) else d for d in dates)
        return PrePeriod(src, unit, time, start.isoformat(), end.isoformat(), where)


MAX_SPEC_BYTES = 1_000_000  # a spec is a few KB; anything near this is not a spec


def load_spec(path: str | Path) -> Experiment:
    """Read and check a spec file. Raises SpecError naming file, key path and line.

    The spec must be a regular file of at most MAX_SPEC_BYTES: a pipe, a device or a
    folder is refused before it is opened (reading one could wait or read forever).
    """
    path = Path(path)
    try:
        info = path.stat()
    except FileNotFoundError:
        raise SpecError([Problem(f"spec file not found: {path}")], str(path)) from None
    except OSError as err:
        raise SpecError([Problem(f"cannot read spec file: {err}")], str(path)) from None
    if not stat.S_ISREG(info.st_mode):
        kind = "a folder" if stat.S_ISDIR(info.st_mode) else "a pipe, socket or device"
        raise SpecError([Problem(f"the spec must be a regular file; this is {kind}")], str(path))
    if info.st_size > MAX_SPEC_BYTES:
        raise SpecError([Problem(f"the spec file is {info.st_size:,} bytes; the limit is {MAX_SPEC_BYTES:,}")], str(path))
    try:
        with open(path, "rb") as fh:
            raw = fh.read(MAX_SPEC_BYTES + 1)
        if len(raw) > MAX_SPEC_BYTES:  # it grew after the check
            raise SpecError([Problem(f"the spec file is over the limit of {MAX_SPEC_BYTES:,} bytes")], str(path))
        text = raw.decode("utf-8")
    except (OSError, UnicodeDecodeError) as err:
        raise SpecError([Problem(f"cannot read spec file: {err}")], str(path)) from None
    return parse_spec(text, base_dir=path.parent, file=str(path))


def parse_spec(text: str, base_dir: str | Path = ".", file: str | None = None) -> Experiment:
    """Check spec text (TOML) and build the Experiment. Raises SpecError with every problem."""
    try:
        doc = tomllib.loads(text)
    except tomllib.TOMLDecodeError as err:
        raise SpecError([_toml_syntax_problem(err, text)], file) from None
    c = _Checker(text, Path(base_dir))
    for k in doc:
        if k not in TOP_KEYS:
            c.add(k, f"unknown table [{k}]{_suggest(k, TOP_KEYS)} (allowed: {', '.join(TOP_KEYS)})")

    exp_t = c.table(doc, "experiment", required=True) or {}
    c.unknown_keys(exp_t, EXPERIMENT_KEYS, "experiment")
    name = c.string(exp_t, "name", "experiment")
    if name is not None and (why := _label_problem(name, "the experiment name", in_sql=False)):
        c.add("experiment.name", why)
        name = None
    control = exp_t.get("control")
    if control is None:
        c.add("experiment", "missing required key 'control' (the label of the control arm)")
    elif isinstance(control, bool) or not isinstance(control, (str, int)) or str(control).strip() == "":
        c.add("experiment.control", "'control' must be the control arm's label (a string or an integer)")
        control = None
    elif why := _label_problem(str(control), "the control label"):
        c.add("experiment.control", why)
        control = None
    else:
        control = str(control)
    alpha = c.probability(exp_t, "alpha", "experiment", 0.05)
    srm_alpha = c.probability(exp_t, "sample_ratio_alpha", "experiment", 0.001)

    arms = None
    if "arms" in exp_t:
        raw = exp_t["arms"]
        if not isinstance(raw, list) or len(raw) < 2 or not all(isinstance(a, (str, int)) and not isinstance(a, bool) for a in raw):
            c.add("experiment.arms", "'arms' must list at least two arm labels")
        elif any(str(a).strip() == "" for a in raw):
            c.add("experiment.arms", "'arms' has an empty arm label; every arm needs a name")
        elif len({str(a) for a in raw}) != len(raw):
            c.add("experiment.arms", "'arms' lists a label twice")
        elif any(_label_problem(str(a), "an arm label") for a in raw):
            c.add("experiment.arms", next(w for a in raw if (w := _label_problem(str(a), "an arm label"))))
        else:
            arms = tuple(str(a) for a in raw)

    weights = None
    if "weights" in exp_t:
        raw = exp_t["weights"]
        if not isinstance(raw, dict) or len(raw) < 2:
            c.add("experiment.weights", "'weights' must map at least two arm labels to their planned shares")
        elif any(str(k).strip() == "" for k in raw):
            c.add("experiment.weights", "'weights' has an empty arm label; every arm needs a name")
        elif any(_label_problem(str(k), "an arm label") for k in raw):
            c.add("experiment.weights", next(w for k in raw if (w := _label_problem(str(k), "an arm label"))))
        else:
            bad = [k for k, v in raw.items() if isinstance(v, bool) or not isinstance(v, (int, float)) or not (v > 0 and math.isfinite(v))]
            if bad:
                c.add("experiment.weights", f"weights must be positive numbers; check {', '.join(map(repr, bad))}")
            else:
                weights = {str(k): float(v) for k, v in raw.items()}
                if arms is not None and set(weights) != set(arms):
                    c.add("experiment.weights", f"'weights' names arms {sorted(weights)} but 'arms' lists {sorted(arms)}")
    declared = arms or (tuple(weights) if weights else None)
    if control is not None and declared is not None and control not in declared:
        c.add("experiment.control", f"control arm {control!r} is not among the declared arms {list(declared)}{_suggest(control, list(declared))}")

    segments: list = []
    if "segments" in exp_t:
        raw = exp_t["segments"]
        if not isinstance(raw, list) or not raw or len(raw) > 8:
            c.add("experiment.segments", "'segments' must list 1 to 8 column names of the assignment source")
        else:
            for i, text in enumerate(raw):
                try:
                    segments.append(ex.parse_column(text, "segments"))
                except ex.ExpressionProblem as err:
                    c.add("experiment.segments", f"segments[{i + 1}]: {err}")
            names = [s_.sql() for s_ in segments]
            if len(set(names)) != len(names):
                c.add("experiment.segments", "'segments' lists a column twice")
    corrections = {"primary": "none", "secondary": "bh", "guardrail": "none", "segment": "bh"}
    if "correction" in exp_t:
        raw = exp_t["correction"]
        if not isinstance(raw, dict):
            c.add("experiment.correction", "'correction' maps families to methods, e.g. { secondary = \"holm\" }")
        else:
            for k, v in raw.items():
                if k not in CORRECTION_KEYS:
                    c.add("experiment.correction", f"unknown family {k!r}{_suggest(k, CORRECTION_KEYS)} (allowed: {', '.join(CORRECTION_KEYS)})")
                elif v not in CORRECTIONS:
                    c.add("experiment.correction", f"correction for {k!r} must be one of: {', '.join(CORRECTIONS)}, got {v!r}{_suggest(str(v), CORRECTIONS)}")
                else:
                    corrections[k] = v
    power = c.probability(exp_t, "power", "experiment", 0.8)
    always_valid = c.boolean(exp_t, "always_valid", "experiment")
    # The relative effect the always-valid test (mSPRT) detects fastest: its mixing standard
    # deviation as a share of the control value, the method's published "mixing_sd".
    spec_notes: list[str] = []
    lift_key = "fastest_detected_lift"
    mixing_sd = c.number(exp_t, lift_key, "experiment", positive=True)
    if "mixing_sd" in exp_t:
        if lift_key in exp_t:
            c.add("experiment.mixing_sd", f"'mixing_sd' is the old name of {lift_key!r}; give only {lift_key!r}")
        else:
            lift_key = "mixing_sd"
            mixing_sd = c.number(exp_t, "mixing_sd", "experiment", positive=True)
            spec_notes.append("spec key experiment.mixing_sd is deprecated and will be dropped in the next release: "
                              "write fastest_detected_lift (same meaning: the relative effect the always-valid test "
                              "detects fastest)")
    if mixing_sd is not None and not always_valid:
        c.add(f"experiment.{lift_key}", f"{lift_key!r} tunes always-valid results; set always_valid = true too")
    daily = c.boolean(exp_t, "daily", "experiment")

    pre_t = c.table(doc, "pre_period", required=False)
    pre_period = c.pre_period(pre_t) if pre_t is not None else None

    asg_t = c.table(doc, "assignment", required=True)
    assignment = None
    if asg_t is not None:
        c.unknown_keys(asg_t, ASSIGNMENT_KEYS, "assignment")
        assignment = c.relation(asg_t, "assignment", with_arm=True)

    ev_t = c.table(doc, "events", required=False)
    events = None
    if ev_t is not None:
        c.unknown_keys(ev_t, EVENTS_KEYS, "events")
        events = c.relation(ev_t, "events", with_arm=False)
    value_source = ev_t if ev_t is not None else (asg_t or {})
    per_unit_values = bool(value_source.get("per_unit", False)) if isinstance(value_source.get("per_unit", False), bool) else False

    raw_metrics = doc.get("metric")
    metrics: list[Metric] = []
    if raw_metrics is None:
        c.problems.append(Problem("no metrics: add at least one [[metric]] table", "metric"))
    elif not isinstance(raw_metrics, list):
        c.add("metric", "metrics are written as [[metric]] tables (an array of tables)")
    else:
        seen: dict[str, int] = {}
        for i, t in enumerate(raw_metrics, start=1):
            m = c.metric(t, i, per_unit_values, pre_t is not None)
            if m is None:
                continue
            if m.name in seen:
                c.add(f"metric[{i}].name", f"metric name {m.name!r} is already used by metric[{seen[m.name]}]")
                continue
            seen[m.name] = i
            metrics.append(m)

    primaries = [m for m in metrics if m.role == "primary"]
    if len(primaries) > 1:
        c.add("metric", f"only one metric can be primary; found {', '.join(m.name for m in primaries)}")
    elif not primaries and metrics and isinstance(raw_metrics, list):
        explicit = [isinstance(t, dict) and "role" in t for t in raw_metrics]
        if not explicit[0]:
            # The first metric is the primary one unless the spec says otherwise.
            from dataclasses import replace

            metrics[0] = replace(metrics[0], role="primary")

    if daily:
        _check_daily(c, asg_t, ev_t, raw_metrics if isinstance(raw_metrics, list) else [], metrics, bool(segments))

    if c.problems:
        raise SpecError(c.problems, file)
    assert name is not None and control is not None and assignment is not None
    return Experiment(
        name=name,
        control=control,
        assignment=assignment,
        metrics=tuple(metrics),
        events=events,
        alpha=alpha,
        weights=weights,
        arms=arms or (tuple(weights) if weights else None),
        sample_ratio_alpha=srm_alpha,
        segments=tuple(segments),
        pre_period=pre_period,
        corrections=corrections,
        power=power,
        always_valid=always_valid,
        mixing_sd=mixing_sd if mixing_sd is not None else 0.05,
        daily=daily,
        spec_path=Path(file) if file else None,
        notes=tuple(spec_notes),
    )


# Aggregates whose value up to day d follows from running per-unit state (sums, counts,
# running min/max). count(DISTINCT ...) does not: a value seen on two days counts once.
DAILY_AGGREGATES = ("count", "count_if", "sum", "avg", "min", "max")


def _check_daily(c: _Checker, asg_t: dict | None, ev_t: dict | None, raw_metrics: list, metrics: list[Metric],
                 has_segments: bool) -> None:
    """Problems that stop the daily cumulative view (``daily = true``) from being compiled."""
    if isinstance(asg_t, dict) and "time" not in asg_t:
        c.add("assignment", "the daily view (daily = true) needs 'time' in [assignment]: the column saying when "
                            "each unit entered the experiment, e.g. time = \"assigned_at\"")
    if ev_t is None:
        c.add("experiment.daily", "the daily view (daily = true) needs an [events] table with a 'time' column; "
                                  "metrics computed from the assignment rows have no days to accumulate over")
    else:
        if "time" not in ev_t:
            c.add("events", "the daily view (daily = true) needs 'time' in [events]: the column saying when each "
                            "event happened, e.g. time = \"happened_at\"")
        if ev_t.get("per_unit") is True:
            c.add("events.per_unit", "the daily view accumulates each unit's event rows day by day; per_unit = true "
                                     "sources have one row per unit and no days to accumulate (drop one of them)")
    if has_segments:
        c.add("experiment.segments", "the daily view does not break results down by segment; drop 'segments' or "
                                     "'daily = true'")
    for m in metrics:
        path = f"metric[{m.index + 1}]"
        table = raw_metrics[m.index] if m.index < len(raw_metrics) and isinstance(raw_metrics[m.index], dict) else {}
        if m.covariate is not None:
            key = "cuped" if "cuped" in table else "covariate"
            c.add(f"{path}.{key}", "CUPED is not available in the daily view (the covariate adjustment is fitted "
                                   "once, at the end); drop it or drop 'daily = true'")
        if m.kind == "ratio" and m.missing == "exclude":
            c.add(f"{path}.missing", "the daily view of a ratio metric needs missing = \"zero\" (units without "
                                     "events count with 0 in numerator and denominator)")
        for key, node in (("numerator" if m.kind == "ratio" else "value", m.value), ("denominator", m.denominator)):
            if node is None:
                continue
            for agg in node.find_all(exp.Count):
                if isinstance(agg.this, exp.Distinct):
                    c.add(f"{path}.{key}", f"count(DISTINCT ...) cannot be accumulated day by day in the daily "
                                           f"view (a value seen on two days must count once); use one of "
                                           f"{', '.join(DAILY_AGGREGATES)}, or drop 'daily = true'")
                    break


def _file_columns(path: Path) -> list[str]:
    """Column names of a data file, read by DuckDB (DESCRIBE); DuckDB is imported only here."""
    import duckdb
    from sqlglot import exp

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
    checked. Opt-in (``sqlstat check --columns``) and done by ``sqlstat run`` on DuckDB,
    because it reads the files.
    """
    checked: list[str] = []
    file = str(experiment.spec_path) if experiment.spec_path else None
    if text is None and experiment.spec_path is not None and experiment.spec_path.is_file():
        text = experiment.spec_path.read_text(encoding="utf-8")
    c = _Checker(text or "", Path("."))
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
            from sqlglot import exp

            cols = [node] if isinstance(node, exp.Column) else list(node.find_all(exp.Column))
            for col in cols:
                seen.add(col.name.lower())
                if col.name.lower() not in known:
                    c.add(key, f"column {col.name!r} is not in {rel.source.text!r}{_suggest(col.name, columns)} "
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

"""Experiment model -> one read-only SELECT in the target dialect (Jinja, then sqlglot).

The template renders canonical DuckDB SQL from fragments that sqlglot generated from
checked trees; the whole text is parsed back, must be exactly one SELECT, and is handed
to dialects.finish for the target's rewrites and printing.
"""

from __future__ import annotations

import os
from functools import lru_cache
from pathlib import Path

import jinja2
import sqlglot
from sqlglot import exp

from .dialects import DIALECTS, Dialect, finish, finish_view, get_dialect, prepare
from .errors import CompileError
from .templating import environment, template_dir  # noqa: F401 (template_dir: public)
from .expressions import AGGREGATES, CANONICAL, is_predicate
from .model import DAILY_MAX_ARMS, VERDICTS, Experiment, Metric, Relation, Source, daily_view_problems
from .readonly import check_read_only, declared_sources

# Columns of every row the query returns, one row per (metric, arm), in this order.
RESULT_COLUMNS = (
    "metric_index", "metric", "kind", "role", "method", "segment_index", "segment", "segment_value", "arm",
    "is_control", "units", "excluded_units", "n", "total", "mean", "variance", "invalid", "x_n",
    "x_total", "x_mean", "x_variance", "xy_covariance", "value", "value_std_error", "control_n",
    "control_total", "control_mean", "control_variance", "control_value", "control_value_std_error",
    "difference", "estimate", "std_error", "null_std_error", "statistic", "df", "theta",
    "variance_reduction", "relative_lift", "lift_std_error", "direction", "margin", "relative_margin",
    "margin_statistic", "target", "target_statistic", "target_df", "theta_treatment", "theta_control",
)


def _environment() -> jinja2.Environment:
    return environment()


def _sql(node: exp.Expression) -> str:
    return node.sql(dialect=CANONICAL)


def _fragment(node: exp.Expression, dialect: Dialect, *, measure: bool = False) -> str:
    """A spec fragment, its names already folded for the target (see dialects.prepare)."""
    return _sql(prepare(node, dialect, measure=measure))


def _literal(text: str) -> str:
    return _sql(exp.Literal.string(text))


def _display_path(path: Path) -> str:
    """A file path as the emitted SQL shows it: absolute (resolved against the spec's folder
    when the spec was read), so the text is the same from any working directory and a view
    made from it reads the same files wherever it is queried from."""
    return Path(os.path.abspath(path)).as_posix()


def _source_sql(source: Source, dialect: Dialect) -> str:
    if source.kind == "table":
        assert source.table is not None
        return _fragment(source.table, dialect)
    if source.kind == "query":
        assert source.query is not None
        return f"({_fragment(source.query, dialect)})"
    assert source.path is not None
    if not dialect.reads_files:
        raise CompileError(
            f"source {source.text!r} is a file, which only DuckDB reads directly; for "
            f"{dialect.title}, load it into a table and give the table name as the source"
        )
    name = source.path.name.lower()
    reader = "read_parquet" if name.endswith(".parquet") else (
        "read_json_auto" if name.endswith((".json", ".jsonl", ".ndjson")) else "read_csv_auto"
    )
    return f"{reader}({_literal(_display_path(source.path))})"


def _relation(rel: Relation, dialect: Dialect) -> dict:
    return {
        "source": _source_sql(rel.source, dialect),
        "unit": _fragment(rel.unit, dialect),
        "arm": _fragment(rel.arm, dialect) if rel.arm is not None else None,
        "per_unit": rel.per_unit,
        "where": _fragment(rel.where, dialect, measure=True) if rel.where is not None else None,
    }


def _number(x: float | None) -> str:
    return "NULL" if x is None else repr(float(x))


def _value_sql(node: exp.Expression, dialect: Dialect) -> str:
    """A per-unit value: booleans made 1/0 where computed (engines disagree on boolean
    arithmetic), names folded and measures cast to DOUBLE for the target."""
    return _fragment(_numeric(node), dialect, measure=True)


def _window(experiment: Experiment) -> exp.Expression | None:
    pp = experiment.pre_period
    if pp is None:
        return None
    start = exp.cast(exp.Literal.string(pp.start), "DATE")
    end = exp.cast(exp.Literal.string(pp.end), "DATE")
    window = exp.and_(exp.GTE(this=pp.time.copy(), expression=start), exp.LT(this=pp.time.copy(), expression=end))
    if pp.where is not None:
        window = exp.and_(window, exp.Paren(this=pp.where.copy()))
    return window


def _shares_scan(experiment: Experiment) -> bool:
    """True when the pre-period rows come from the events source itself, so one scan can
    serve both (each aggregate then only looks at its own rows)."""
    ev, pp = experiment.events, experiment.pre_period
    return (
        ev is not None and pp is not None and not ev.per_unit
        and ev.source.text.strip() == pp.source.text.strip() and ev.unit.sql() == pp.unit.sql()
    )


def _only_rows(node: exp.Expression, cond: exp.Expression) -> exp.Expression:
    """Restrict every aggregate in a per-unit value to the rows where ``cond`` holds, and
    give NULL (no rows) when the unit has none of them, as a separate scan would."""
    from .expressions import AGGREGATES

    def rewrite(n: exp.Expression) -> exp.Expression:
        if not isinstance(n, tuple(AGGREGATES)):
            return n
        arg = n.this
        if isinstance(arg, exp.Star):
            return n.__class__(this=exp.Case(ifs=[exp.If(this=cond.copy(), true=exp.Literal.number(1))]))
        if isinstance(arg, exp.Distinct):
            inner = exp.Case(ifs=[exp.If(this=cond.copy(), true=arg.expressions[0].copy())])
            return n.__class__(this=exp.Distinct(expressions=[inner]))
        return n.__class__(this=exp.Case(ifs=[exp.If(this=cond.copy(), true=arg.copy())]))

    has_rows = exp.EQ(
        this=exp.Max(this=exp.Case(ifs=[exp.If(this=cond.copy(), true=exp.Literal.number(1))])),
        expression=exp.Literal.number(1),
    )
    return exp.Case(ifs=[exp.If(this=has_rows, true=node.copy().transform(rewrite))])


def _numeric(node: exp.Expression) -> exp.Expression:
    if is_predicate(node):
        return exp.Case(ifs=[exp.If(this=node.copy(), true=exp.Literal.number(1))], default=exp.Literal.number(0))
    return node


def _measures(experiment: Experiment, dialect: Dialect) -> tuple[list[dict], list[dict], list[dict]]:
    """Per-unit measures (each a column of the per-unit table), covariance pairs, metrics."""
    measures: list[dict] = []
    pairs: list[dict] = []
    metrics: list[dict] = []
    shared = _shares_scan(experiment)
    main_cond = experiment.events.where if shared and experiment.events.where is not None else None
    pre_cond = _window(experiment) if shared else None

    def add(node: exp.Expression, origin: str, missing: str, check_binary: bool) -> str:
        key = str(len(measures))
        node = _numeric(node)
        cond = pre_cond if origin == "pre" else main_cond
        if cond is not None:
            node = _only_rows(node, cond)
        measures.append({"key": key, "sql": _fragment(node, dialect, measure=True), "origin": "main" if shared else origin,
                         "missing": missing, "check_binary": check_binary})
        return key

    for m in experiment.metrics:
        y = add(m.value, "main", m.missing, m.kind == "proportion")
        x = None
        if m.denominator is not None:
            x = add(m.denominator, "main", "zero", False)
        elif m.covariate is not None:
            # A unit with no pre-period rows has a covariate of 0, like any count or sum.
            x = add(m.covariate, "pre", "zero", False)
        if x is not None:
            pairs.append({"a": y, "b": x})
        margin = m.margin
        metrics.append({
            "index": m.index,
            "name": _literal(m.name),
            "kind": m.kind,
            "kind_literal": _literal(m.kind),
            "role": _literal(m.role),
            "method": _literal(m.planned_test),
            "sigma": _number(m.sigma),
            "direction": _literal(m.better) if m.better else "CAST(NULL AS VARCHAR)",
            "margin": _number(margin),
            "relative_margin": _number(m.relative_margin),
            "target": _number(m.target),
            "y": y,
            "x": x,
            "check_binary": m.kind == "proportion",
        })
    return measures, pairs, metrics


def _pre_period(experiment: Experiment, dialect: Dialect) -> dict | None:
    pp = experiment.pre_period
    if pp is None:
        return None
    return {"source": _source_sql(pp.source, dialect), "unit": _fragment(pp.unit, dialect),
            "window": _fragment(_window(experiment), dialect, measure=True)}


ALWAYS_VALID_COLUMNS = ("always_valid_p_value", "sequence_low", "sequence_high")


def result_columns(experiment: Experiment) -> tuple[str, ...]:
    """The columns the (non-readout) query returns for this experiment, in order."""
    return RESULT_COLUMNS + (ALWAYS_VALID_COLUMNS if experiment.always_valid else ())


def _srm_arms(experiment: Experiment) -> list[dict]:
    """Declared arms and planned weights for the in-SQL sample-ratio check (empty: from data)."""
    arms = experiment.arms or ()
    weights = experiment.weights or {a: 1.0 for a in arms}
    return [{"label": _literal(a), "weight": _number(weights[a])} for a in arms]


def _result_context(experiment: Experiment, readout: bool, *, with_cuped: bool) -> dict:
    """What templates/results.sql.j2 (and readout.sql.j2) need, for either query."""
    context = {
        "always_valid": experiment.always_valid,
        "mixing_sd": _number(experiment.mixing_sd),
        "alpha": _number(experiment.alpha),
        "result_columns": list(result_columns(experiment)),
        "readout": readout,
        "with_cuped": with_cuped,
        "first_metric": experiment.metrics[0].index,
        "srm_arms": _srm_arms(experiment),
        "srm_alpha": _number(experiment.sample_ratio_alpha),
        "upper_quantile": _number(1 - experiment.alpha / 2),
        "corrections": {_literal(f): _literal(m) for f, m in experiment.corrections.items()},
        "verdict": {v: _literal(v) for v in VERDICTS},  # the verdict words, as SQL literals
    }
    if readout:
        from .distributions import template_context

        context.update(template_context())
    return context


def render_canonical(experiment: Experiment, dialect: str | Dialect = "duckdb", *, readout: bool = False) -> str:
    """The query in canonical DuckDB SQL, shaped for the target's capabilities."""
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    measures, pairs, metrics = _measures(experiment, d)
    events = _relation(experiment.events, d) if experiment.events is not None else None
    pre_period = _pre_period(experiment, d)
    if _shares_scan(experiment):
        # One scan of the shared source reads both periods' rows.
        ev_where = experiment.events.where
        either = _window(experiment) if ev_where is None else exp.or_(exp.Paren(this=ev_where.copy()), exp.Paren(this=_window(experiment)))
        events["where"] = _fragment(either, d, measure=True) if ev_where is not None else None
        pre_period = None
    context = {
        "assignment": _relation(experiment.assignment, d),
        "events": events,
        "pre_period": pre_period,
        "measures": measures,
        "pairs": pairs,
        "metrics": metrics,
        "segments": [
            {"index": i, "column": _fragment(col, d), "name": _literal(col.name)}
            for i, col in enumerate(experiment.segments, start=1)
        ],
        "control": _literal(experiment.control),
        "caps": {"variance": d.variance, "covariance": d.covariance},
        **_result_context(experiment, readout, with_cuped=True),
    }
    return _environment().get_template("experiment.sql.j2").render(**context)


def render_baseline(experiment: Experiment, dialect: str | Dialect = "duckdb") -> str:
    """The planning baseline query in canonical DuckDB SQL (needs a [pre_period] table)."""
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    if experiment.pre_period is None:
        raise CompileError(
            "planning needs a [pre_period] table (source, unit, time, start, end) to read each "
            "metric's baseline from; add one to the spec"
        )
    measures, pairs, metrics = [], [], []
    for m in experiment.metrics:
        y = str(len(measures))
        measures.append({"key": y, "sql": _value_sql(m.value, d), "missing": m.missing})
        x = None
        if m.denominator is not None:
            x = str(len(measures))
            measures.append({"key": x, "sql": _value_sql(m.denominator, d), "missing": m.missing})
            pairs.append({"a": y, "b": x})
        metrics.append({"index": m.index, "name": _literal(m.name), "kind_literal": _literal(m.kind), "y": y, "x": x})
    context = {
        "assignment": _relation(experiment.assignment, d),
        "pre_period": _pre_period(experiment, d),
        "measures": measures,
        "pairs": pairs,
        "metrics": metrics,
        "caps": {"variance": d.variance, "covariance": d.covariance},
    }
    return _environment().get_template("baseline.sql.j2").render(**context)


def _finish(canonical: str, d: Dialect, pretty: bool, experiment: Experiment, view: str | None = None) -> str:
    try:
        statements = [s for s in sqlglot.parse(canonical, read=CANONICAL) if s is not None]
    except sqlglot.errors.ParseError as err:  # a template bug, not a user error
        raise CompileError(f"internal error: the rendered query does not parse: {err}") from err
    if len(statements) != 1 or not isinstance(statements[0], exp.Select):
        raise CompileError("internal error: the rendered query is not exactly one SELECT")
    _drop_redundant_parentheses(statements[0])
    text = finish(statements[0], d, pretty=pretty) + "\n"
    if d.max_query_bytes and len(text.encode()) > d.max_query_bytes:
        text = finish(statements[0], d, pretty=False) + "\n"
        if len(text.encode()) > d.max_query_bytes:
            raise CompileError(
                f"the query is {len(text.encode()):,} bytes, more than {d.title} parses by default "
                f"({d.max_query_bytes:,}); raise the engine's limit, or split the metrics over two specs"
            )
    # Last step, on the exact text handed out: prove it only reads what the spec declared.
    tables, files = declared_sources(experiment, d, lambda src: _display_path(src.path))
    check_read_only(text, d, tables=tables, files=files)
    if ";" in text:  # after the proof, which names an added statement as such
        # Runners that split a script on ';' (many BI tools, migration runners) would cut it.
        raise CompileError(
            f"the query would contain ';' inside its text, which tools that split SQL scripts on ';' "
            f"cut in two; it comes from the spec ({_semicolon_sources(experiment)}): remove the ';'"
        )
    if view is not None:
        return finish_view(statements[0], d, view, pretty=pretty) + ";\n"
    return text


# Expressions that print as one token or a bracketed call: parentheses around them never
# change what a query means.
_ATOMS = (exp.Column, exp.Literal, exp.Case, exp.Cast, exp.Null, exp.Boolean, exp.Paren)
# sqlglot's operators derive from exp.Func too; a call is a Func that is none of them.
_OPERATORS = (exp.Binary, exp.Unary, exp.Connector, exp.Predicate)


def _atom(node: exp.Expression) -> bool:
    if isinstance(node, _ATOMS):
        return True
    return isinstance(node, exp.Func) and not isinstance(node, _OPERATORS) and type(node).__name__ != "Window"


def _drop_redundant_parentheses(tree: exp.Expression) -> None:
    """Remove parentheses around atoms (a column, a literal, a call, a CASE), which the
    templates' macros add around every argument they are given: pretty-printed, each pair
    costs lines, and the readout's text once doubled that way."""
    for node in list(tree.find_all(exp.Paren)):
        inner = node.this
        if _atom(inner) and node.parent is not None:
            node.replace(inner)


def _semicolon_sources(experiment: Experiment) -> str:
    """Which spec values put a ';' into the query: names, labels and string literals."""
    found = [f"experiment name {experiment.name!r}"] if ";" in experiment.name else []
    labels = [experiment.control, *(experiment.arms or ()), *(experiment.weights or {})]
    found += [f"arm label {a!r}" for a in dict.fromkeys(labels) if ";" in a]
    found += [f"metric name {m.name!r}" for m in experiment.metrics if ";" in m.name]
    trees = [t for m in experiment.metrics for t in (m.value, m.denominator) if t is not None]
    for rel in (experiment.assignment, experiment.events):
        if rel is not None and rel.where is not None:
            trees.append(rel.where)
    for tree in trees:
        for lit in tree.find_all(exp.Literal):
            if lit.is_string and ";" in lit.this:
                found.append(f"string literal {lit.this!r}")
    return ", ".join(found) or "a name or literal"


def compile_baseline(experiment: Experiment, dialect: str | Dialect = "duckdb", *, pretty: bool = True) -> str:
    """Compile the planning baseline query (one read-only SELECT over the pre-period)."""
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    return _finish(render_baseline(experiment, d), d, pretty, experiment)


def compile_sql(
    experiment: Experiment, dialect: str | Dialect = "duckdb", *, pretty: bool = True, view: str | None = None,
    readout: bool = False, double_percent: bool = False,
) -> str:
    """Compile an experiment into one read-only SELECT in ``dialect`` (a name or a Dialect).

    The same experiment and dialect always give byte-identical text. With ``view``, the
    SELECT is wrapped as ``CREATE OR REPLACE VIEW view AS ...`` for scheduled use; with
    ``readout``, the query also carries p-values, intervals, adjustments and verdicts.
    With ``double_percent``, every ``%`` is written ``%%``, for clients that read ``%`` as
    a parameter marker when the text is run with parameters (psycopg, pymysql, pandas'
    ``read_sql(..., params=...)``); the text is then only for such clients.
    """
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    text = _finish(render_canonical(experiment, d, readout=readout), d, pretty, experiment, view)
    return doubled_percent(text) if double_percent else text


def doubled_percent(text: str) -> str:
    """The text for clients that read ``%`` as a parameter marker (psycopg, pymysql)."""
    return text.replace("%", "%%")


def compile_all(
    experiment: Experiment, *, view: str | None = None, readout: bool = False
) -> tuple[dict[str, str], dict[str, str]]:
    """The query in every dialect: ({dialect: sql}, {dialect: why it was skipped})."""
    done, skipped = {}, {}
    for name in DIALECTS:
        try:
            done[name] = compile_sql(experiment, name, view=view, readout=readout)
        except CompileError as err:
            skipped[name] = str(err)
    return done, skipped


# --- The daily cumulative view -------------------------------------------------------

# Columns of the daily view: the day, then exactly the main query's columns and meaning,
# one row per (day, metric, arm).
DAILY_COLUMNS = ("day",) + RESULT_COLUMNS  # plus ALWAYS_VALID_COLUMNS with always_valid = true


class _DailyStates:
    """Per-unit running states behind a metric's aggregates, and its value rebuilt from them.

    Each aggregate of a value becomes state columns that accumulate day by day: count(...)
    a running sum of counts, sum(x) a running sum plus a running count of non-NULL x (the
    sum of no values is NULL), avg(x) the same two, min/max a running min/max. Identical
    aggregates share their states.
    """

    def __init__(self, dialect: Dialect) -> None:
        self.dialect = dialect
        self.states: list[dict] = []
        self._by_inc: dict[str, str] = {}

    def _state(self, inc: exp.Expression, fn: str) -> str:
        text = _fragment(inc, self.dialect, measure=True)
        if text not in self._by_inc:
            name = str(len(self.states))
            self._by_inc[text] = name
            self.states.append({"name": name, "inc": text, "fn": fn})
        return self._by_inc[text]

    def _replacement(self, agg: exp.Expression, side: str) -> exp.Expression:
        def col(name: str) -> exp.Column:
            return exp.column(f"{side}_{name}")

        if isinstance(agg, exp.Count):
            if isinstance(agg.this, exp.Distinct):  # refused by render_daily (model.daily_view_problems)
                raise CompileError(f"internal error: no daily state for {_sql(agg)}")
            return col(self._state(agg, "SUM"))
        if isinstance(agg, (exp.Sum, exp.Avg)):
            total = col(self._state(exp.Sum(this=agg.this.copy()), "SUM"))
            count = col(self._state(exp.Count(this=agg.this.copy()), "SUM"))
            value: exp.Expression = total
            if isinstance(agg, exp.Avg):
                value = exp.Div(this=exp.cast(total, "DOUBLE"), expression=count)
            return exp.Paren(this=exp.Case(
                ifs=[exp.If(this=exp.GT(this=count.copy(), expression=exp.Literal.number(0)), true=value)]
            ))
        if isinstance(agg, (exp.Min, exp.Max)):
            return col(self._state(agg, "MIN" if isinstance(agg, exp.Min) else "MAX"))
        raise CompileError(f"internal error: no daily state for {_sql(agg)}")

    def value(self, node: exp.Expression, side: str) -> str:
        """The per-unit value with every aggregate replaced by its ``side`` ("after"/"before") state."""
        def swap(n: exp.Expression) -> exp.Expression:
            return self._replacement(n, side) if isinstance(n, tuple(AGGREGATES)) else n

        return _value_sql(node.copy().transform(swap), self.dialect)


def render_daily(experiment: Experiment, dialect: str | Dialect = "duckdb", *, readout: bool = False) -> str:
    """The daily cumulative view in canonical DuckDB SQL (see templates/daily.sql.j2)."""
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    if not experiment.daily:
        raise CompileError(
            "the spec does not ask for the daily view: add daily = true under [experiment], with 'time' "
            "in [assignment] (when a unit entered) and in [events] (when an event happened)"
        )
    problems = daily_view_problems(experiment.assignment, experiment.events, experiment.metrics, experiment.segments)
    if problems:  # a model built without the spec loader: the same limits, without lines
        more = f" (and {len(problems) - 1} more)" if len(problems) > 1 else ""
        raise CompileError(f"{problems[0][0]}: {problems[0][1]}{more}")
    events = experiment.events
    assert events is not None and events.time is not None and experiment.assignment.time is not None
    _, pairs, metrics = _measures(experiment, d)
    states = _DailyStates(d)
    measures: list[dict] = []
    for m in experiment.metrics:
        for node, missing in ((m.value, m.missing), (m.denominator, "zero")):
            if node is not None:
                measures.append({
                    "key": str(len(measures)),
                    "after": states.value(node, "after"),
                    "before": states.value(node, "before"),
                    "missing": missing,
                    "check_binary": node is m.value and m.kind == "proportion",
                })
    assert [x["key"] for x in measures] == [str(i) for i in range(len(measures))]
    context = {
        "assignment": {**_relation(experiment.assignment, d), "time": _fragment(experiment.assignment.time, d)},
        "events": {**_relation(events, d), "time": _fragment(events.time, d)},
        "states": states.states,
        "measures": measures,
        "pairs": pairs,
        "metrics": metrics,
        "control": _literal(experiment.control),
        "max_arms": DAILY_MAX_ARMS,
        **_result_context(experiment, readout, with_cuped=False),
    }
    return _environment().get_template("daily.sql.j2").render(**context)


def compile_daily(
    experiment: Experiment, dialect: str | Dialect = "duckdb", *, pretty: bool = True, readout: bool = False,
    double_percent: bool = False,
) -> str:
    """Compile the daily cumulative view: one read-only SELECT in ``dialect``.

    One row per (day, metric, arm) for every day on which a unit entered or an event
    happened, holding the readout as of the end of that day (columns: DAILY_COLUMNS).
    ``double_percent`` as for compile_sql.
    """
    d = dialect if isinstance(dialect, Dialect) else get_dialect(dialect)
    text = _finish(render_daily(experiment, d, readout=readout), d, pretty, experiment)
    return doubled_percent(text) if double_percent else text

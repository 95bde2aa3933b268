"""TOML spec file -> checked Experiment model, or one SpecError listing every problem found.

Key paths in messages look like ``experiment.control`` or ``metric[2].kind`` (metrics
counted from 1, in file order); lines come from the TOML text itself. The value checks
live in spec_values.py, one builder per table in spec_tables.py; this module reads the
file, calls them in order and raises once. Checking columns against data files needs an
engine and lives in columns.py.
"""

from __future__ import annotations

import stat
import tomllib
from dataclasses import replace
from pathlib import Path

from .errors import Problem, SpecError
from .model import Experiment, Metric, daily_view_problems
from .spec_tables import ASSIGNMENT_KEYS, EVENTS_KEYS, TOP_KEYS, experiment_table, metric_table, pre_period_table
from .spec_values import Checker, suggest, toml_syntax_problem

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
        raise SpecError([toml_syntax_problem(err, text)], file) from None
    c = Checker(text, Path(base_dir))
    for k in doc:
        if k not in TOP_KEYS:
            c.add(k, f"unknown table [{k}]{suggest(k, TOP_KEYS)} (allowed: {', '.join(TOP_KEYS)})")

    exp_t = c.table(doc, "experiment", required=True) or {}
    fields = experiment_table(c, exp_t)

    pre_t = c.table(doc, "pre_period", required=False)
    pre_period = pre_period_table(c, pre_t) if pre_t is not None else None

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
            m = metric_table(c, t, i, per_unit_values, pre_t is not None)
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
            metrics[0] = replace(metrics[0], role="primary")

    # A table that failed to build has its problems reported already; the daily limits are
    # checked on what was built.
    if fields["daily"] and (asg_t is None or assignment is not None) and (ev_t is None or events is not None):
        tables = raw_metrics if isinstance(raw_metrics, list) else []
        for key, message in daily_view_problems(assignment, events, metrics, fields["segments"]):
            head, _, leaf = key.rpartition(".")
            if leaf == "covariate" and head.startswith("metric["):
                table = tables[int(head[7:-1]) - 1] if int(head[7:-1]) <= len(tables) else {}
                if isinstance(table, dict) and "cuped" in table:
                    key = f"{head}.cuped"
            c.add(key, message)

    if c.problems:
        raise SpecError(c.problems, file)
    assert fields["name"] is not None and fields["control"] is not None and assignment is not None
    arms, weights = fields.pop("arms"), fields["weights"]
    return Experiment(
        assignment=assignment,
        metrics=tuple(metrics),
        events=events,
        arms=arms or (tuple(weights) if weights else None),
        pre_period=pre_period,
        spec_path=Path(file) if file else None,
        **fields,
    )

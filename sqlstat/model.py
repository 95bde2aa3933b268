"""The checked experiment model: plain frozen dataclasses that every later stage reads.

spec.py builds these from a TOML file; compile.py turns them into SQL. Expressions are
held as sqlglot trees that have already passed the allow-list in expressions.py.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from typing import Literal

from sqlglot import exp

MetricKind = Literal["proportion", "mean", "ratio"]
SourceKind = Literal["file", "table", "query"]
Missing = Literal["zero", "exclude"]
Role = Literal["primary", "secondary", "guardrail"]
Correction = Literal["none", "holm", "bh"]

METRIC_KINDS: tuple[str, ...] = ("proportion", "mean", "ratio")

# The readout's verdict per treatment arm, input to a decision and worded so that no
# statistician reads it as a test outcome (no "reject", "accept" or "significant"). The
# Python layer (stats.decide) and the SQL readout (templates/readout.sql.j2) both use these.
VERDICT_FAVOURABLE = "favourable"  # the primary metric improved and every guardrail held
VERDICT_UNFAVOURABLE = "unfavourable"  # the primary metric got worse, or a guardrail showed harm
VERDICT_UNCLEAR = "unclear"  # anything else
VERDICT_INVALID = "invalid"  # sample-ratio mismatch: nothing can be read
VERDICTS = (VERDICT_FAVOURABLE, VERDICT_UNFAVOURABLE, VERDICT_UNCLEAR, VERDICT_INVALID)
# The words of release 0.1, still written under the JSON key "decisions" for one release.
LEGACY_VERDICTS = {VERDICT_FAVOURABLE: "adopt", VERDICT_UNFAVOURABLE: "reject", VERDICT_UNCLEAR: "inconclusive",
                   VERDICT_INVALID: "invalid"}


def format_p(p: object) -> str:
    """A p-value as every readout prints it (table, reasons, notes): one format everywhere."""
    if not isinstance(p, float) or p != p or p in (float("inf"), float("-inf")):
        return "-"
    return "<1e-16" if p < 1e-16 else (f"{p:.2e}" if p < 1e-4 else f"{p:.4f}")


# A guardrail's status, the same words in the table, the JSON and the docs.
GUARDRAIL_HELD, GUARDRAIL_HARMED, GUARDRAIL_NOT_SHOWN = "held", "harmed", "not shown"
MISSING_POLICIES: tuple[str, ...] = ("zero", "exclude")
ROLES: tuple[str, ...] = ("primary", "secondary", "guardrail")
DIRECTIONS: tuple[str, ...] = ("higher", "lower")
CORRECTIONS: tuple[str, ...] = ("none", "holm", "bh")
# The adjustment per family when the spec gives none: the primary metric and the guardrails
# are read one by one, secondary metrics and segment rows are many looks at once.
DEFAULT_CORRECTIONS: dict[str, str] = {"primary": "none", "secondary": "bh", "guardrail": "none", "segment": "bh"}

# Test ids live in the method registry (methods.py); re-exported here for older imports.
from .methods import (  # noqa: E402,F401
    TEST_BINOMIAL_EXACT, TEST_CUPED_WELCH_T, TEST_FISHER_EXACT, TEST_ONE_SAMPLE_T, TEST_ONE_SAMPLE_Z,
    TEST_RATIO_DELTA_Z, TEST_STUDENT_T, TEST_TWO_PROPORTION_Z, TEST_WELCH_T, TEST_Z_KNOWN_SIGMA, planned,
)


@dataclass(frozen=True, eq=False)
class Source:
    """Where rows come from: a file DuckDB can read, a table name, or a parenthesised SELECT."""

    kind: SourceKind
    text: str  # as written in the spec
    path: Path | None = None  # resolved file path, for kind == "file"
    table: exp.Table | None = None  # parsed name, for kind == "table"
    query: exp.Query | None = None  # parsed SELECT, for kind == "query"


@dataclass(frozen=True, eq=False)
class Relation:
    """A source plus the columns that tie it to units (and arms, for the assignment)."""

    source: Source
    unit: exp.Column
    arm: exp.Column | None = None  # only the assignment has an arm column
    per_unit: bool = False  # the source promises one row per unit: no per-unit regroup
    where: exp.Expression | None = None  # row filter, validated
    time: exp.Column | None = None  # when a row happened (assignment: entry; events: the event), daily view


@dataclass(frozen=True, eq=False)
class PrePeriod:
    """Rows from before the experiment: CUPED covariates and the baseline for planning."""

    source: Source
    unit: exp.Column
    time: exp.Column  # timestamp or date column that places a row in the window
    start: str  # ISO date, inclusive
    end: str  # ISO date, exclusive
    where: exp.Expression | None = None

    @property
    def days(self) -> int:
        from datetime import date

        return (date.fromisoformat(self.end) - date.fromisoformat(self.start)).days


@dataclass(frozen=True, eq=False)
class Metric:
    """One metric, aggregated per unit first and then per arm."""

    index: int
    name: str
    kind: MetricKind
    value: exp.Expression  # per-unit value: an aggregate, or a row expression if per_unit
    value_text: str
    sigma: float | None = None  # known population standard deviation -> z test
    equal_variance: bool = False  # Student's pooled t instead of Welch's t
    missing: Missing = "zero"  # a unit whose value is NULL counts as 0, or is left out
    denominator: exp.Expression | None = None  # ratio metrics: per-unit denominator
    covariate: exp.Expression | None = None  # CUPED: per-unit value over the pre-period rows
    role: Role = "secondary"
    better: str | None = None  # "higher" or "lower": which direction is good
    margin: float | None = None  # guardrails: tolerated harm, absolute (in metric units)
    relative_margin: float | None = None  # guardrails: tolerated harm, relative to control
    target: float | None = None  # one-arm check: compare every arm with this value
    description: str = ""

    @property
    def planned_test(self) -> str:
        """The test the SQL computes a statistic for (methods.planned; the data may force its fallback)."""
        return planned(self).id


@dataclass(frozen=True, eq=False)
class Experiment:
    """A whole experiment: who is in which arm, what to measure, and how strict to be."""

    name: str
    control: str
    assignment: Relation
    metrics: tuple[Metric, ...]
    events: Relation | None = None
    alpha: float = 0.05
    weights: dict[str, float] | None = None  # planned split; equal split when None
    arms: tuple[str, ...] | None = None  # declared arm labels, when the spec lists them
    sample_ratio_alpha: float = 0.001
    segments: tuple[exp.Column, ...] = ()  # unit attributes (assignment columns) to break down by
    pre_period: PrePeriod | None = None
    corrections: dict[str, str] = field(default_factory=lambda: dict(DEFAULT_CORRECTIONS))
    power: float = 0.8  # planning default
    always_valid: bool = False  # add always-valid p-values and confidence sequences (mSPRT)
    # mSPRT mixing standard deviation, as a share of the control value: the effect the
    # always-valid test detects fastest (spec key fastest_detected_lift; mixing_sd still read)
    mixing_sd: float = 0.05
    daily: bool = False  # also offer the daily cumulative view (compile.compile_daily)
    spec_path: Path | None = None
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def primary(self) -> tuple[Metric, ...]:
        return tuple(m for m in self.metrics if m.role == "primary")

    def metric(self, name: str) -> Metric:
        for m in self.metrics:
            if m.name == name:
                return m
        raise KeyError(name)


# --- The daily cumulative view's limits (checked by spec.py with locations, enforced by compile.py)

# Aggregates whose value up to day d follows from running per-unit state (sums, counts,
# running min/max). count(DISTINCT ...) does not: a value seen on two days counts once.
DAILY_AGGREGATES = ("count", "count_if", "sum", "avg", "min", "max")
# Arms the daily view keeps apart (by label order); units of further arms count as excluded.
DAILY_MAX_ARMS = 63


def has_count_distinct(node: exp.Expression | None) -> bool:
    """Whether a value expression holds count(DISTINCT ...), which cannot accumulate day by day."""
    return node is not None and any(isinstance(c.this, exp.Distinct) for c in node.find_all(exp.Count))


def daily_view_problems(assignment: Relation | None, events: Relation | None, metrics: tuple[Metric, ...] | list[Metric],
                        segments: tuple | list) -> list[tuple[str, str]]:
    """Why the daily cumulative view (``daily = true``) cannot be compiled: (key path, message) pairs.

    The one statement of these limits: spec.py reports them with their lines, compile.py
    refuses a model built without the spec loader that breaks them.
    """
    out: list[tuple[str, str]] = []
    if assignment is not None and assignment.time is None:
        out.append(("assignment", "the daily view (daily = true) needs 'time' in [assignment]: the column saying when "
                                  "each unit entered the experiment, e.g. time = \"assigned_at\""))
    if events is None:
        out.append(("experiment.daily", "the daily view (daily = true) needs an [events] table with a 'time' column; "
                                        "metrics computed from the assignment rows have no days to accumulate over"))
    else:
        if events.time is None:
            out.append(("events", "the daily view (daily = true) needs 'time' in [events]: the column saying when each "
                                  "event happened, e.g. time = \"happened_at\""))
        if events.per_unit:
            out.append(("events.per_unit", "the daily view accumulates each unit's event rows day by day; per_unit = "
                                           "true sources have one row per unit and no days to accumulate (drop one "
                                           "of them)"))
    if segments:
        out.append(("experiment.segments", "the daily view does not break results down by segment; drop 'segments' "
                                           "or 'daily = true'"))
    for m in metrics:
        path = f"metric[{m.index + 1}]"
        if m.covariate is not None:
            out.append((f"{path}.covariate", "CUPED is not available in the daily view (the covariate adjustment is "
                                             "fitted once, at the end); drop it or drop 'daily = true'"))
        if m.kind == "ratio" and m.missing == "exclude":
            out.append((f"{path}.missing", "the daily view of a ratio metric needs missing = \"zero\" (units without "
                                           "events count with 0 in numerator and denominator)"))
        for key, node in (("numerator" if m.kind == "ratio" else "value", m.value), ("denominator", m.denominator)):
            if has_count_distinct(node):
                out.append((f"{path}.{key}", f"count(DISTINCT ...) cannot be accumulated day by day in the daily "
                                             f"view (a value seen on two days must count once); use one of "
                                             f"{', '.join(DAILY_AGGREGATES)}, or drop 'daily = true'"))
    return out

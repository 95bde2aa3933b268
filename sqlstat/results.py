"""Test results as values: the dataclasses every readout is built from, and one builder each.

No SciPy and no engine: report.py and any later stage read these directly. Field names
and meanings are the JSON contract (README, "JSON output"); add fields, never rename one.
Notes are ``Note`` values, a code and a text: readers match the code, never the wording.
Build results with the functions at the end (``comparison``, ``no_test``, ...), never by
position.
"""

from __future__ import annotations

from dataclasses import dataclass, field, replace
from typing import Any

NAN = float("nan")


class Note(str):
    """A note on a result: its text (the string itself, as every output prints it) and a code.

    A str so that JSON, CSV and the tables print it unchanged; ``code`` says what it is
    about (see NOTE_CODES), so readers never match words of the text.
    """

    code: str

    def __new__(cls, code: str, text: str) -> "Note":
        if code not in NOTE_CODES:
            raise ValueError(f"unknown note code {code!r}; add it to NOTE_CODES")
        obj = super().__new__(cls, text)
        obj.code = code
        return obj

    @property
    def text(self) -> str:
        return str.__str__(self)

    def __reduce__(self):  # pickling and copy keep the code
        return (Note, (self.code, self.text))


# Every note code, with what it flags.
NOTE_CODES = {
    "no_units": "an arm has no units with a value: no test",
    "overflow": "a sum or variance overflowed: no test",
    "not_binary": "a proportion's unit values are not 0 or 1",
    "statistic": "what the statistic column holds (Fisher rows: the odds ratio)",
    "interval": "which interval the ci columns hold",
    "lift_interval": "which interval the relative-lift columns hold",
    "no_information": "every or no unit had the event: p = 1 by construction",
    "no_control_events": "the control arm had no events: the lift is undefined",
    "small_arm": "an arm has fewer than 2 units: no variance",
    "no_standard_error": "the standard error is zero or undefined: no test",
    "zero_variance": "an arm has zero variance",
    "few_units": "an arm has fewer units than the common-practice threshold",
    "weak_covariate": "CUPED's covariate barely predicts the metric",
    "guardrail_method": "how the guardrail's margin test was done",
    "excluded_missing": "units without a value were left out (missing = \"exclude\")",
    "segments_exploratory": "segment results are exploratory",
    "data_problem": "the data do not match the plan",
    "spec": "a note from the spec loader (e.g. a deprecated key)",
}

# The codes that mean the data could not support a comparison (the verdict names them).
PROBLEM_NOTES = frozenset({"no_units", "overflow", "not_binary", "small_arm", "no_standard_error"})


def notes_of(notes: Any, code: str) -> tuple[Note, ...]:
    """The notes with this code (plain strings have none)."""
    return tuple(n for n in notes if getattr(n, "code", None) == code)


@dataclass(frozen=True)
class ArmSummary:
    """Sufficient statistics of one arm for one metric."""

    n: int
    mean: float
    variance: float
    total: float


@dataclass(frozen=True)
class Guardrail:
    """A one-sided non-inferiority test: is the treatment no worse than the margin allows?"""

    direction: str  # "higher" or "lower" is better
    margin: float  # tolerated harm, in metric units or as a share of control (relative)
    relative: bool
    statistic: float
    p_value: float  # one-sided; small means "no worse than the margin"
    p_value_adjusted: float
    bound: float  # the one-sided 1 - alpha confidence bound on the harm side
    held: bool  # non-inferiority shown at alpha (after any adjustment)
    harm: bool  # the two-sided test found a significant change in the bad direction


@dataclass(frozen=True)
class TestResult:
    """One comparison: a treatment arm against control on one metric (scipy-like fields)."""

    metric: str
    kind: str
    arm: str
    test: str
    reason: str
    control: ArmSummary
    treatment: ArmSummary
    estimate: float  # treatment - control (CUPED: the covariate-adjusted difference)
    std_error: float
    statistic: float
    statistic_name: str  # "z", "t" or "odds_ratio" (Fisher rows: the conditional maximum-likelihood estimate)
    df: float | None
    p_value: float
    ci_low: float
    ci_high: float
    alpha: float
    significant: bool  # at alpha, judged on the adjusted p-value when one applies
    alternative: str = "two-sided"
    notes: tuple[str, ...] = ()
    data_problem: bool = False  # the data could not support this comparison
    role: str = "secondary"
    better: str | None = None  # "higher" or "lower" is good, when the spec says
    segment: str | None = None  # None for the whole population
    segment_value: str | None = None
    difference: float = NAN  # raw treatment - control value, before any adjustment
    relative_lift: float = NAN  # (treatment - control) / control
    lift_std_error: float = NAN
    lift_ci_low: float = NAN
    lift_ci_high: float = NAN
    family: str = "secondary"  # multiplicity family this comparison belongs to
    correction: str = "none"  # "none", "holm" or "bh"
    p_value_adjusted: float = NAN
    theta: float | None = None  # CUPED: the within-arm slope pooled over both arms (diagnostic)
    theta_treatment: float | None = None  # CUPED: each arm's own slope, used by the estimate (Lin, 2013)
    theta_control: float | None = None
    variance_reduction: float | None = None  # CUPED: 1 - adjusted variance / raw variance
    guardrail: Guardrail | None = None
    always_valid_p_value: float | None = None  # mSPRT, valid at every look
    sequence_low: float | None = None  # always-valid confidence sequence for the estimate
    sequence_high: float | None = None
    odds_ratio_ci_low: float | None = None  # Fisher rows: exact interval for the conditional odds ratio
    odds_ratio_ci_high: float | None = None

    @property
    def statistic_label(self) -> str:
        """What ``statistic`` is, in words (every output form shows it)."""
        return STATISTIC_LABELS.get(self.statistic_name, self.statistic_name)


STATISTIC_LABELS = {
    "z": "z statistic",
    "t": "t statistic",
    "odds_ratio": "odds ratio, conditional maximum-likelihood estimate (Fisher); not a z or t statistic",
}


@dataclass(frozen=True)
class TargetCheck:
    """One arm's metric against a fixed target value (one-arm test)."""

    metric: str
    kind: str
    arm: str
    target: float
    value: float
    n: int
    test: str
    reason: str
    statistic: float
    df: float | None
    alternative: str
    p_value: float
    alpha: float
    significant: bool


@dataclass(frozen=True)
class SampleRatio:
    """Pearson's chi-square goodness-of-fit test of units per arm against the planned split."""

    arms: tuple[str, ...]
    observed: tuple[int, ...]
    expected: tuple[float, ...]
    statistic: float
    df: int
    p_value: float
    alpha: float
    mismatch: bool


@dataclass(frozen=True)
class Decision:
    """The readout for one treatment arm, with the reasons behind it."""

    arm: str
    verdict: str  # one of VERDICTS
    reasons: tuple[str, ...]


@dataclass(frozen=True)
class Analysis:
    """Everything the report shows: arms, the sample-ratio check and every comparison."""

    experiment: str
    control: str
    alpha: float
    arms: tuple[tuple[str, int], ...]
    excluded_units: int
    sample_ratio: SampleRatio | None
    results: tuple[TestResult, ...]
    notes: tuple[str, ...] = field(default_factory=tuple)
    targets: tuple[TargetCheck, ...] = ()
    decisions: tuple[Decision, ...] = ()
    corrections: dict[str, str] = field(default_factory=dict)
    data_problems: tuple[str, ...] = ()  # the notes that mean the data does not match the plan

    @property
    def verdicts(self) -> tuple[Decision, ...]:
        """The verdict per treatment arm (the same objects as ``decisions``, the older name)."""
        return self.decisions

    @property
    def overall(self) -> tuple[TestResult, ...]:
        return tuple(r for r in self.results if r.segment is None)

    @property
    def segmented(self) -> tuple[TestResult, ...]:
        return tuple(r for r in self.results if r.segment is not None)

    @property
    def data_problem(self) -> bool:
        return bool(self.data_problems) or any(r.data_problem for r in self.overall) or (
            self.sample_ratio is not None and self.sample_ratio.mismatch
        )


# --------------------------------------------------------------------------- builders


def comparison(
    *, metric: Any, arm: str, segment: Any = None, segment_value: Any = None, test: str, reason: str,
    control: ArmSummary, treatment: ArmSummary, alpha: float, **values: Any,
) -> TestResult:
    """A TestResult for one treatment arm of ``metric``: the shared fields (name, kind, role,
    direction, segment) always come from the metric and the row, the numbers by keyword.

    Numbers not given are NaN (no test); ``p_value_adjusted`` starts as ``p_value``.
    """
    fields: dict[str, Any] = dict(estimate=NAN, std_error=NAN, statistic=NAN, statistic_name="z", df=None,
                                  p_value=NAN, ci_low=NAN, ci_high=NAN, significant=False)
    fields.update(values)
    fields.setdefault("p_value_adjusted", fields["p_value"])
    fields["notes"] = tuple(fields.get("notes", ()))
    return TestResult(
        metric=metric.name, kind=metric.kind, arm=str(arm), role=metric.role, better=metric.better,
        family="segment" if segment is not None else metric.role,
        segment=None if segment is None else str(segment),
        segment_value=None if segment is None else str(segment_value),
        test=test, reason=reason, control=control, treatment=treatment, alpha=alpha, **fields,
    )


def no_test(*, notes: Any, **shared: Any) -> TestResult:
    """A comparison the data could not support: every number NaN, flagged as a data problem."""
    shared.pop("data_problem", None)
    return comparison(notes=notes, data_problem=True, **shared)


def with_values(result: Any, **values: Any) -> Any:
    """A copy of a result with some fields changed (multiplicity, always-valid results)."""
    return replace(result, **values)

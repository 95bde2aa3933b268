"""Per-(metric, arm) aggregate rows -> test results: choice of test, p-values, intervals.

Sign convention, everywhere: estimate = treatment - control, so a positive estimate means
the treatment arm's mean (or rate) is higher. Intervals are two-sided at 1 - alpha.

The SQL already computed each difference, its standard error, the statistic and the
degrees of freedom. This module only maps statistics to p-values and intervals
(scipy.special), runs exact tests from counts, and records why each test was chosen.
scipy.stats is imported only when an exact test is needed.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any, Iterable, Literal

from scipy import special

from .model import (
    TEST_FISHER_EXACT,
    TEST_STUDENT_T,
    TEST_TWO_PROPORTION_Z,
    TEST_WELCH_T,
    TEST_Z_KNOWN_SIGMA,
    Experiment,
    Metric,
)

Alternative = Literal["two-sided", "less", "greater"]
ALTERNATIVES = ("two-sided", "less", "greater")

# Common-practice thresholds (rules of thumb, not theorems):
MIN_SUCCESSES_FAILURES = 10  # normal approximation to a proportion needs >= 10 of each
MIN_UNITS_FOR_CLT = 30  # below this per arm, the t test leans on normally distributed data

NAN = float("nan")


@dataclass(frozen=True)
class ArmSummary:
    """Sufficient statistics of one arm for one metric."""

    n: int
    mean: float
    variance: float
    total: float


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
    estimate: float  # treatment mean - control mean
    std_error: float
    statistic: float
    statistic_name: str  # "z", "t" or "odds_ratio"
    df: float | None
    p_value: float
    ci_low: float
    ci_high: float
    alpha: float
    significant: bool
    alternative: str = "two-sided"
    notes: tuple[str, ...] = ()
    data_problem: bool = False  # the data could not support this comparison


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
    data_problems: tuple[str, ...] = ()  # the notes that mean the data does not match the plan

    @property
    def data_problem(self) -> bool:
        return bool(self.data_problems) or any(r.data_problem for r in self.results) or (
            self.sample_ratio is not None and self.sample_ratio.mismatch
        )


# --------------------------------------------------------------------------- distributions


def p_value(statistic: float, df: float | None, alternative: Alternative = "two-sided") -> float:
    """p-value of a z (df None) or t statistic.

    Uses the standard normal CDF (scipy.special.ndtr) or Student's t CDF
    (scipy.special.stdtr, fractional df allowed for Welch).
    """
    if alternative not in ALTERNATIVES:
        raise ValueError(f"alternative must be one of {ALTERNATIVES}, got {alternative!r}")
    if statistic is None or not math.isfinite(statistic) or (df is not None and not df > 0):
        return NAN

    def cdf(x: float) -> float:
        return float(special.ndtr(x)) if df is None else float(special.stdtr(df, x))

    if alternative == "two-sided":
        return min(1.0, 2.0 * cdf(-abs(statistic)))
    if alternative == "greater":
        return cdf(-statistic)
    return cdf(statistic)


def critical_value(alpha: float, df: float | None) -> float:
    """Two-sided critical value: z_{1-alpha/2} (ndtri) or t_{df, 1-alpha/2} (stdtrit)."""
    q = 1.0 - alpha / 2.0
    if df is None:
        return float(special.ndtri(q))
    if not df > 0:
        return NAN
    return float(special.stdtrit(df, q))


def wald_interval(estimate: float, std_error: float, df: float | None, alpha: float) -> tuple[float, float]:
    """estimate -/+ critical value x standard error."""
    if not (_finite(estimate) and _finite(std_error)):
        return NAN, NAN
    half = critical_value(alpha, df) * std_error
    return estimate - half, estimate + half


def wilson_interval(successes: int, n: int, alpha: float) -> tuple[float, float]:
    """Wilson's (1927) score interval for one proportion."""
    if n <= 0:
        return NAN, NAN
    z = critical_value(alpha, None)
    z2 = z * z
    centre = (successes + z2 / 2.0) / (n + z2)
    half = z / (n + z2) * math.sqrt(successes * (n - successes) / n + z2 / 4.0)
    return max(0.0, centre - half), min(1.0, centre + half)


def newcombe_interval(
    successes_t: int, n_t: int, successes_c: int, n_c: int, alpha: float
) -> tuple[float, float]:
    """Newcombe's (1998) hybrid score interval for p_treatment - p_control.

    Newcombe, R. G. (1998). Interval estimation for the difference between independent
    proportions: comparison of eleven methods. Statistics in Medicine 17, 873-890 (his
    method 10). It combines the two Wilson intervals; it keeps close to nominal coverage
    with few units or rates near 0 or 1, where the Wald interval fails.
    """
    if n_t <= 0 or n_c <= 0:
        return NAN, NAN
    p1, p2 = successes_t / n_t, successes_c / n_c
    l1, u1 = wilson_interval(successes_t, n_t, alpha)
    l2, u2 = wilson_interval(successes_c, n_c, alpha)
    d = p1 - p2
    return d - math.sqrt((p1 - l1) ** 2 + (u2 - p2) ** 2), d + math.sqrt((u1 - p1) ** 2 + (p2 - l2) ** 2)


def fisher_exact(successes_t: int, n_t: int, successes_c: int, n_c: int) -> tuple[float, float]:
    """Fisher's (1935) exact test on the 2x2 table; returns (sample odds ratio, two-sided p).

    Conditional on both margins; scipy.stats.fisher_exact does the hypergeometric sums.
    """
    from scipy import stats as sps  # heavy import, only when a small sample needs it

    table = [[successes_t, n_t - successes_t], [successes_c, n_c - successes_c]]
    res = sps.fisher_exact(table, alternative="two-sided")
    return float(res.statistic), float(res.pvalue)


def sample_ratio_test(
    units: dict[str, int], weights: dict[str, float] | None, alpha: float
) -> SampleRatio | None:
    """Pearson's (1900) chi-square goodness of fit of units per arm to the planned split.

    statistic = sum (observed - expected)^2 / expected, df = arms - 1, p from the chi-square
    survival function (scipy.special.chdtrc). Equal split unless weights are given.
    """
    arms = tuple(weights) if weights else tuple(units)
    if len(arms) < 2:
        return None
    observed = tuple(int(units.get(a, 0)) for a in arms)
    total = sum(observed)
    if total == 0:
        return None
    w = [weights[a] for a in arms] if weights else [1.0] * len(arms)
    expected = tuple(total * wi / sum(w) for wi in w)
    stat = float(sum((o - e) ** 2 / e for o, e in zip(observed, expected)))
    df = len(arms) - 1
    p = float(special.chdtrc(df, stat))
    return SampleRatio(arms, observed, expected, stat, df, p, alpha, p < alpha)


# --------------------------------------------------------------------------- test choice


def _finite(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _f(x: Any) -> float:
    return float(x) if _finite(x) else NAN


def choose_test(metric: Metric, treatment: ArmSummary, control: ArmSummary) -> tuple[str, str]:
    """The test a practitioner would pick for this metric and these counts, and why."""
    if metric.kind == "proportion":
        counts = [
            ("treatment", round(treatment.total), treatment.n),
            ("control", round(control.total), control.n),
        ]
        small = [
            f"{arm} has {min(s, n - s)} {'successes' if s <= n - s else 'failures'}"
            for arm, s, n in counts
            if min(s, n - s) < MIN_SUCCESSES_FAILURES
        ]
        if small:
            return TEST_FISHER_EXACT, (
                f"proportion with few events ({'; '.join(small)}; fewer than "
                f"{MIN_SUCCESSES_FAILURES}, a common-practice threshold): the normal "
                f"approximation is unreliable, so Fisher's exact test on the 2x2 counts"
            )
        return TEST_TWO_PROPORTION_Z, (
            f"proportion with at least {MIN_SUCCESSES_FAILURES} successes and failures in each arm "
            f"(common practice): two-proportion z test, pooled standard error under no difference"
        )
    if metric.sigma is not None:
        return TEST_Z_KNOWN_SIGMA, (
            f"mean with known population standard deviation (sigma = {metric.sigma:g}): z test"
        )
    if metric.equal_variance:
        return TEST_STUDENT_T, "mean, variance estimated, equal variances assumed by the spec: Student's pooled t test"
    return TEST_WELCH_T, (
        "mean with variance estimated from the data: Welch's t test "
        "(no equal-variance assumption, Welch-Satterthwaite df)"
    )


def _summary(row: dict, prefix: str = "") -> ArmSummary:
    n = row.get(f"{prefix}n")
    return ArmSummary(
        n=int(n) if _finite(n) else 0,
        mean=_f(row.get(f"{prefix}mean")),
        variance=_f(row.get(f"{prefix}variance")),
        total=_f(row.get(f"{prefix}total")),
    )


def compare(metric: Metric, row: dict, alpha: float) -> TestResult:
    """Turn one treatment row of the query into a TestResult."""
    treatment, control = _summary(row), _summary(row, "control_")
    test, reason = choose_test(metric, treatment, control) if treatment.n and control.n else (metric.planned_test, "")
    notes: list[str] = []
    problem = False
    estimate = _f(row.get("difference"))
    se = _f(row.get("std_error"))
    statistic = _f(row.get("statistic"))
    df = row.get("df")
    df = float(df) if _finite(df) else None
    stat_name = "t" if test in (TEST_WELCH_T, TEST_STUDENT_T) else "z"

    if treatment.n == 0 or control.n == 0:
        empty = "treatment" if treatment.n == 0 else "control"
        notes.append(f"the {empty} arm has no units with a value for this metric: no test is possible")
        return TestResult(metric.name, metric.kind, str(row["arm"]), test, reason or "no data", control, treatment,
                          NAN, NAN, NAN, stat_name, None, NAN, NAN, NAN, alpha, False, notes=tuple(notes), data_problem=True)

    sums = ("total", "control_total", "variance", "control_variance", "std_error")
    if any(isinstance(row.get(k), float) and math.isinf(row[k]) for k in sums):
        # A silent p = 1 would follow (difference / infinity = 0): refuse to test instead.
        notes.append("values are too large for double precision (a sum or variance overflowed to infinity): "
                     "no test is possible; rescale the metric (e.g. divide it by 1e6)")
        return TestResult(metric.name, metric.kind, str(row["arm"]), test, reason, control, treatment,
                          estimate, NAN, NAN, stat_name, None, NAN, NAN, NAN, alpha, False, notes=tuple(notes), data_problem=True)

    if metric.kind == "proportion" and (row.get("invalid") or 0) > 0:
        notes.append(
            f"{int(row['invalid'])} unit value(s) in this arm are not 0 or 1, so this is not a proportion; "
            f"write the value as a condition (e.g. count(*) > 0) or use kind = \"mean\""
        )
        if test == TEST_FISHER_EXACT:  # counts above n make no 2x2 table: no test, not a crash
            return TestResult(metric.name, metric.kind, str(row["arm"]), test, reason, control, treatment,
                              estimate, NAN, NAN, stat_name, None, NAN, NAN, NAN, alpha, False,
                              notes=tuple(notes), data_problem=True)
        problem = True

    if test == TEST_FISHER_EXACT:
        x_t, x_c = round(treatment.total), round(control.total)
        statistic, p = fisher_exact(x_t, treatment.n, x_c, control.n)
        lo, hi = newcombe_interval(x_t, treatment.n, x_c, control.n, alpha)
        notes.append("interval: Newcombe's hybrid score interval (valid with few events)")
        if x_t + x_c == 0 or (x_t == treatment.n and x_c == control.n):
            every = "no unit" if x_t + x_c == 0 else "every unit"
            notes.append(f"{every} in either arm had the event: the data cannot show a difference (p = 1 by construction)")
        stat_name, df = "odds_ratio", None
    else:
        if test in (TEST_WELCH_T, TEST_STUDENT_T):
            if min(treatment.n, control.n) < 2:
                notes.append("an arm has fewer than 2 units: its variance, and so the t test, is undefined")
                problem = True
            elif not _finite(statistic):
                if treatment.variance == 0 and control.variance == 0:
                    notes.append("both arms have zero variance (every unit has the same value, or values too close "
                                 "to tell apart in double precision): no test is possible")
                else:
                    notes.append("the standard error is zero or undefined: no test is possible")
                problem = True
            elif treatment.variance == 0 or control.variance == 0:
                flat = "treatment" if treatment.variance == 0 else "control"
                notes.append(f"the {flat} arm has zero variance (every unit has the same value): the test rests on "
                             f"the other arm's variance alone; check the metric's definition")
            if min(treatment.n, control.n) < MIN_UNITS_FOR_CLT:
                notes.append(
                    f"an arm has fewer than {MIN_UNITS_FOR_CLT} units (common-practice threshold): "
                    f"the t test then assumes the metric is roughly normally distributed"
                )
        elif not _finite(statistic):
            notes.append("the standard error is zero or undefined: no test is possible")
            problem = True
        p = p_value(statistic, df if stat_name == "t" else None)
        lo, hi = wald_interval(estimate, se, df if stat_name == "t" else None, alpha)
        if test == TEST_TWO_PROPORTION_Z:
            notes.append("interval: Wald interval with unpooled standard error")
    significant = bool(_finite(p) and p < alpha)
    return TestResult(
        metric=metric.name, kind=metric.kind, arm=str(row["arm"]), test=test, reason=reason,
        control=control, treatment=treatment, estimate=estimate, std_error=se,
        statistic=statistic, statistic_name=stat_name, df=df, p_value=p, ci_low=lo, ci_high=hi,
        alpha=alpha, significant=significant, notes=tuple(notes), data_problem=problem,
    )


def analyse(experiment: Experiment, rows: Iterable[dict]) -> Analysis:
    """Rows returned by the compiled query -> the full Analysis."""
    rows = list(rows)
    notes: list[str] = []
    units: dict[str, int] = {}
    excluded = 0
    for r in rows:
        if r.get("arm") is None:
            continue
        units.setdefault(str(r["arm"]), int(r["units"]) if _finite(r.get("units")) else 0)
        excluded = int(r["excluded_units"]) if _finite(r.get("excluded_units")) else 0
    problems: list[str] = []
    if excluded:
        problems.append(
            f"{excluded} unit(s) were in more than one arm, or in none, and were left out of every metric"
        )
    declared = experiment.arms
    if declared:
        unknown = sorted(set(units) - set(declared))
        if unknown:
            problems.append(
                f"arm label(s) {unknown} are in the data but not in the spec; they are compared with control too, "
                f"but left out of the sample-ratio check"
            )
        for a in declared:
            if units.get(a, 0) == 0 and a != experiment.control:
                problems.append(f"arm {a!r} is declared in the spec but has no units in the data: nothing to compare")
            units.setdefault(a, 0)
    by_index_all = {m.index: m for m in experiment.metrics}
    for r in rows:
        m = by_index_all.get(int(r.get("metric_index") or 0))
        n, arm_units = r.get("n"), r.get("units")
        if r.get("arm") is not None and m is not None and m.missing == "exclude" and _finite(n) and _finite(arm_units) and arm_units > n:
            notes.append(f"{m.name}: {int(arm_units - n)} unit(s) of arm {r['arm']!r} have no value and were left out "
                         f"(missing = \"exclude\")")
    if experiment.control not in units or units.get(experiment.control, 0) == 0:
        from .errors import DataProblem
        import difflib

        hint = difflib.get_close_matches(experiment.control, list(units), n=1)
        extra = f"; did you mean {hint[0]!r}?" if hint else ""
        raise DataProblem(
            f"the control arm {experiment.control!r} has no units in the data{extra} "
            f"(arms found: {', '.join(sorted(a for a, u in units.items() if u)) or 'none'})"
        )
    srm_units = {a: units.get(a, 0) for a in (declared or units)}
    srm = sample_ratio_test(srm_units, experiment.weights, experiment.sample_ratio_alpha)
    results = []
    by_index = {m.index: m for m in experiment.metrics}
    for r in rows:
        if r.get("arm") is None or int(r.get("is_control") or 0) == 1:
            continue
        metric = by_index[int(r["metric_index"])]
        results.append(compare(metric, r, experiment.alpha))
    arm_order = [experiment.control] + sorted(a for a in units if a != experiment.control)
    return Analysis(
        experiment=experiment.name,
        control=experiment.control,
        alpha=experiment.alpha,
        arms=tuple((a, units[a]) for a in arm_order),
        excluded_units=excluded,
        sample_ratio=srm,
        results=tuple(results),
        notes=tuple(problems + notes),
        data_problems=tuple(problems),
    )

"""Metric -> its test: the method registry, one entry per test id (model stage, no SciPy, no engine).

Each entry owns when it applies and the reason it gives, its thresholds (named constants
below, each marked common practice or with its source), the name of its SQL block (a Jinja
macro in templates/results.sql.j2), and what ``sqlstat check`` prints. The planned test
(what the SQL computes), the actual test (what the returned counts allow) and the plan
printed by ``check`` all come from ``choose`` / ``planned`` / ``plan_lines`` here; the
statistics stage maps each id to how its statistic becomes a p-value and an interval
(``stats.INFERENCE``, a test checks that every id has one).

Adding a test: one ``Method`` entry in ``METHODS``, its rule in ``planned`` (or as a
fallback in ``choose``), its SQL block in templates/results.sql.j2 and its p-value rule in
``stats.INFERENCE``. Metric objects are read by attribute only (kind, sigma,
equal_variance, covariate, target), so this module imports nothing of the pipeline.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable

# Test ids, as they appear in every output. The parametric ones are computed in SQL;
# fisher_exact and binomial_exact are chosen in Python from the returned counts.
TEST_TWO_PROPORTION_Z = "two_proportion_z"
TEST_FISHER_EXACT = "fisher_exact"
TEST_Z_KNOWN_SIGMA = "z_known_sigma"
TEST_WELCH_T = "welch_t"
TEST_STUDENT_T = "student_t"
TEST_RATIO_DELTA_Z = "ratio_delta_z"  # ratio of per-unit sums, delta-method standard error
TEST_CUPED_WELCH_T = "cuped_welch_t"  # covariate-adjusted (CUPED) difference, Welch df
# One-arm checks against a fixed target
TEST_BINOMIAL_EXACT = "binomial_exact"
TEST_ONE_SAMPLE_Z = "one_sample_z"
TEST_ONE_SAMPLE_T = "one_sample_t"

# Thresholds. Rules of thumb, not theorems:
# Common practice: the normal approximation to a proportion needs at least 10 successes and
# 10 failures in each arm (n p >= 10 and n (1 - p) >= 10; textbook rule, recalled from memory).
MIN_SUCCESSES_FAILURES = 10
# Common practice: with fewer than 30 units per arm the t test (and the delta method) leans
# on normally distributed data rather than on the central limit theorem.
MIN_UNITS_FOR_CLT = 30


@dataclass(frozen=True)
class Method:
    """One test: its id, the statistic it reports, where it is computed and how `check` shows it."""

    id: str
    name: str  # in words, for `check` and the docs
    statistic: str  # "z", "t", "odds_ratio" or "successes": what the statistic column holds
    sql_block: str | None  # macro in templates/results.sql.j2 giving its SQL; None: computed in Python
    one_arm: bool  # a check of one arm against a target, not a comparison of two arms
    source: str  # the published method (authors, year), as docs/methods.md states it (the reports show it)
    plan: Callable[[Any], str]  # metric -> what `check` prints for it
    fallback: str | None = None  # the test the data can force instead (from the counts)


def _plan_proportion(m: Any) -> str:
    return (f"two_proportion_z if every arm has >= {MIN_SUCCESSES_FAILURES} successes and >= "
            f"{MIN_SUCCESSES_FAILURES} failures (common practice); otherwise fisher_exact on the counts")


METHODS: dict[str, Method] = {m.id: m for m in (
    Method(TEST_TWO_PROPORTION_Z, "two-proportion z test", "z", "two_proportion_z", False,
           "two-proportion z test, pooled standard error; Wald interval (Fleiss, Levin and Paik, 2003)",
           _plan_proportion, fallback=TEST_FISHER_EXACT),
    Method(TEST_FISHER_EXACT, "Fisher's exact test", "odds_ratio", None, False,
           "Fisher's (1935) exact test; Newcombe's (1998) hybrid score interval; conditional "
           "maximum-likelihood odds ratio (Cornfield, 1956)",
           lambda m: "fisher_exact: Fisher's exact test on the 2x2 counts"),
    Method(TEST_Z_KNOWN_SIGMA, "z test with known sigma", "z", "z_known_sigma", False,
           "z test with a known standard deviation",
           lambda m: f"z_known_sigma: z test with the given sigma = {m.sigma:g}"),
    Method(TEST_WELCH_T, "Welch's t test", "t", "welch_t", False,
           "Welch's (1947) t test with Welch-Satterthwaite degrees of freedom (Satterthwaite, 1946)",
           lambda m: (f"welch_t: Welch's t test with Welch-Satterthwaite df; an arm under {MIN_UNITS_FOR_CLT} "
                      f"units gets a normality note")),
    Method(TEST_STUDENT_T, "Student's pooled t test", "t", "student_t", False,
           "Student's (1908) pooled-variance t test",
           lambda m: "student_t: pooled-variance t test (equal_variance = true)"),
    Method(TEST_RATIO_DELTA_Z, "z test, delta-method standard error", "z", "ratio_delta_z", False,
           "delta method for a ratio of per-unit sums (Deng, Knoblich and Lu, 2018), z test",
           lambda m: (f"ratio_delta_z: ratio of per-unit sums, z test with the delta-method standard error; "
                      f"an arm under {MIN_UNITS_FOR_CLT} units gets a note")),
    Method(TEST_CUPED_WELCH_T, "CUPED-adjusted Welch t test", "t", "cuped_welch_t", False,
           "CUPED (Deng, Xu, Kohavi and Walker, 2013) as Lin's (2013) interacted regression, "
           "Welch degrees of freedom",
           lambda m: ("cuped_welch_t: difference adjusted by the pre-period covariate (CUPED, each arm's own "
                      "slope), Welch df")),
    Method(TEST_BINOMIAL_EXACT, "exact binomial test", "successes", None, True,
           "exact binomial test (the Clopper-Pearson setting; Clopper and Pearson, 1934)",
           lambda m: "binomial_exact: exact binomial test of each arm's rate against the target"),
    Method(TEST_ONE_SAMPLE_Z, "one-sample z test", "z", None, True, "one-sample z test",
           lambda m: "one_sample_z: each arm against the target"),
    Method(TEST_ONE_SAMPLE_T, "one-sample t test", "t", None, True, "one-sample t test (Student, 1908)",
           lambda m: "one_sample_t: each arm's mean against the target"),
)}
TWO_ARM_TESTS = tuple(k for k, m in METHODS.items() if not m.one_arm)
TARGET_TESTS = tuple(k for k, m in METHODS.items() if m.one_arm)
# The tests the experiment query computes, in the order its CASE WHEN blocks list them.
SQL_TESTS = tuple(k for k, m in METHODS.items() if m.sql_block is not None)
T_TESTS = tuple(k for k in TWO_ARM_TESTS if METHODS[k].statistic == "t")

_REASONS = {
    TEST_RATIO_DELTA_Z: ("ratio of per-unit sums (the unit of analysis differs from the randomisation unit): "
                         "z test with the delta-method standard error, which respects that a unit's events are "
                         "correlated"),
    TEST_CUPED_WELCH_T: ("pre-period covariate given: CUPED-adjusted difference (Lin's interacted regression: each "
                         "arm's own slope, means adjusted to the pooled covariate mean), standard error with the "
                         "slopes estimated, Welch df; same expected difference, smaller standard error"),
    TEST_TWO_PROPORTION_Z: (f"proportion with at least {MIN_SUCCESSES_FAILURES} successes and failures in each "
                            f"arm (common practice): two-proportion z test, pooled standard error under no "
                            f"difference"),
    TEST_STUDENT_T: "mean, variance estimated, equal variances assumed by the spec: Student's pooled t test",
    TEST_WELCH_T: ("mean with variance estimated from the data: Welch's t test "
                   "(no equal-variance assumption, Welch-Satterthwaite df)"),
}


def planned(metric: Any) -> Method:
    """The two-arm test the SQL computes a statistic for (the data may force ``fallback``)."""
    if metric.kind == "ratio":
        return METHODS[TEST_RATIO_DELTA_Z]
    if metric.covariate is not None:
        return METHODS[TEST_CUPED_WELCH_T]
    if metric.kind == "proportion":
        return METHODS[TEST_TWO_PROPORTION_Z]
    if metric.sigma is not None:
        return METHODS[TEST_Z_KNOWN_SIGMA]
    return METHODS[TEST_STUDENT_T if metric.equal_variance else TEST_WELCH_T]


def few_events(treatment: Any, control: Any) -> list[str]:
    """Arms of a proportion with fewer than MIN_SUCCESSES_FAILURES successes or failures, in words."""
    counts = [("treatment", round(treatment.total), treatment.n), ("control", round(control.total), control.n)]
    return [f"{arm} has {min(s, n - s)} {'successes' if s <= n - s else 'failures'}"
            for arm, s, n in counts if min(s, n - s) < MIN_SUCCESSES_FAILURES]


def choose(metric: Any, treatment: Any, control: Any) -> tuple[Method, str]:
    """The test for this metric and these arm counts (objects with ``n`` and ``total``), and why.

    The planned test, unless the counts force its fallback (a proportion with few events
    gets Fisher's exact test). With an empty arm, the planned test and no reason.
    """
    plan = planned(metric)
    if not (treatment.n and control.n):
        return plan, ""
    if plan.id == TEST_TWO_PROPORTION_Z:
        small = few_events(treatment, control)
        if small:
            return METHODS[TEST_FISHER_EXACT], (
                f"proportion with few events ({'; '.join(small)}; fewer than {MIN_SUCCESSES_FAILURES}, a "
                f"common-practice threshold): the normal approximation is unreliable, so Fisher's exact test "
                f"on the 2x2 counts"
            )
    if plan.id == TEST_Z_KNOWN_SIGMA:
        return plan, f"mean with known population standard deviation (sigma = {metric.sigma:g}): z test"
    return plan, _REASONS[plan.id]


def choose_target(metric: Any, n: int) -> tuple[Method, str]:
    """The one-arm test of ``n`` units against the metric's target, and why."""
    target = metric.target
    if metric.kind == "proportion":
        if min(n * target, n * (1 - target)) < MIN_SUCCESSES_FAILURES:
            return METHODS[TEST_BINOMIAL_EXACT], (
                f"proportion with n*target or n*(1-target) below {MIN_SUCCESSES_FAILURES} "
                f"(common practice): exact binomial test"
            )
        return METHODS[TEST_ONE_SAMPLE_Z], "proportion with enough units: one-sample z test against the target rate"
    if metric.kind == "mean":
        return METHODS[TEST_ONE_SAMPLE_T], "mean with variance estimated from the data: one-sample t test"
    return METHODS[TEST_ONE_SAMPLE_Z], "ratio: one-sample z test with the delta-method standard error"


def plan_lines(metric: Any) -> list[str]:
    """What ``sqlstat check`` prints under a metric: its planned test, the fallback, the target check."""
    lines = [planned(metric).plan(metric)]
    if metric.target is not None:
        if metric.kind == "proportion":
            lines.append(f"target {metric.target:g}: one_sample_z per arm, or binomial_exact when n*target or "
                         f"n*(1-target) is below {MIN_SUCCESSES_FAILURES} (common practice)")
        else:
            lines.append(f"target {metric.target:g}: {'one_sample_t' if metric.kind == 'mean' else 'one_sample_z'} "
                         f"per arm")
    return lines


def rule_values() -> dict[str, Any]:
    """The registry's thresholds and ids for the SQL templates (read through compile.template_rules)."""
    return {
        "min_successes_failures": MIN_SUCCESSES_FAILURES,
        "min_units_for_clt": MIN_UNITS_FOR_CLT,
        "sql_tests": SQL_TESTS,
        "t_tests": T_TESTS,
        "methods": {k: {"sql_block": m.sql_block, "statistic": m.statistic, "fallback": m.fallback}
                    for k, m in METHODS.items()},
    }

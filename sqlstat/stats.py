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
from dataclasses import replace
from typing import Any, Iterable, Literal

from scipy import special

from . import methods
from .methods import (
    MIN_SUCCESSES_FAILURES,  # noqa: F401 (older imports read the thresholds here)
    MIN_UNITS_FOR_CLT,
    T_TESTS,
    TEST_BINOMIAL_EXACT,
    TEST_CUPED_WELCH_T,
    TEST_FISHER_EXACT,
    TEST_ONE_SAMPLE_T,
    TEST_ONE_SAMPLE_Z,
    TEST_RATIO_DELTA_Z,
    TEST_STUDENT_T,
    TEST_TWO_PROPORTION_Z,
    TEST_WELCH_T,
    TEST_Z_KNOWN_SIGMA,
)
from .model import (
    VERDICT_FAVOURABLE,
    VERDICT_INVALID,
    VERDICT_UNCLEAR,
    VERDICT_UNFAVOURABLE,
    VERDICTS,  # noqa: F401
    Experiment,
    Metric,
    format_p,
)
from .results import (  # noqa: F401 (the result types, re-exported for older imports)
    NAN,
    STATISTIC_LABELS,
    Analysis,
    ArmSummary,
    Decision,
    Guardrail,
    PROBLEM_NOTES,
    Note,
    SampleRatio,
    TargetCheck,
    TestResult,
    comparison,
    no_test,
)

Alternative = Literal["two-sided", "less", "greater"]
ALTERNATIVES = ("two-sided", "less", "greater")


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


def _ratio_score_statistic(ratio: float, x_t: int, n_t: int, x_c: int, n_c: int) -> float:
    """Miettinen and Nurminen's (1985) score statistic for H0: p_t / p_c = ratio.

    S = (p_t - ratio p_c) / sqrt(V), V = (q_t(1 - q_t)/n_t + ratio^2 q_c(1 - q_c)/n_c) N/(N - 1),
    where q_t = ratio q_c and q_c are the maximum-likelihood rates under H0 (the smaller root
    of their quadratic) and N/(N - 1) is their small-sample correction. S falls as ratio rises.
    """
    n = n_t + n_c
    a = n * ratio
    b = -(n_t * ratio + x_t + n_c + x_c * ratio)
    c = x_t + x_c
    q_c = (-b - math.sqrt(max(b * b - 4 * a * c, 0.0))) / (2 * a)
    q_t = q_c * ratio
    v = (q_t * (1 - q_t) / n_t + ratio * ratio * q_c * (1 - q_c) / n_c) * n / (n - 1)
    diff = x_t / n_t - ratio * x_c / n_c
    if v <= 0:
        return math.copysign(math.inf, diff) if diff else 0.0
    return diff / math.sqrt(v)


def ratio_score_interval(
    successes_t: int, n_t: int, successes_c: int, n_c: int, alpha: float
) -> tuple[float, float]:
    """Score interval for the ratio of two proportions p_t / p_c, valid with few events.

    Koopman (1984), "Confidence intervals for the ratio of two binomial proportions",
    Biometrics 40, 513-517, inverted the score test; Miettinen and Nurminen (1985),
    "Comparative analysis of two rates", Statistics in Medicine 4, 213-226, added the
    N/(N - 1) variance correction used here. The interval is every ratio R whose score
    statistic (``_ratio_score_statistic``) lies within -/+ z_{1-alpha/2}; each end is found
    by root finding on log R. With no events in treatment the lower end is 0; with none in
    control the upper end is infinite (the data bound the ratio on one side only).
    """
    from scipy import optimize  # heavy import, only on rows with few events

    if n_t <= 0 or n_c <= 0 or n_t + n_c < 2:
        return NAN, NAN
    z = critical_value(alpha, None)
    x_t, x_c = int(successes_t), int(successes_c)
    if x_t == 0 and x_c == 0:
        return 0.0, math.inf

    def s(log_r: float) -> float:
        return _ratio_score_statistic(math.exp(log_r), x_t, n_t, x_c, n_c)

    def end(target: float, step: float, bounded: bool) -> float:
        # S falls as R rises: the lower end is where S = +z, the upper where S = -z.
        if not bounded:
            return 0.0 if step < 0 else math.inf
        inside = (lambda u: s(u) < target) if step < 0 else (lambda u: s(u) > target)
        inner = math.log(((x_t + 0.5) / n_t) / ((x_c + 0.5) / n_c))  # a start near the estimate
        while not inside(inner):  # make sure the start lies within the interval
            inner -= step
        outer = inner + step
        while inside(outer):
            inner, outer = outer, outer + step
            step *= 2
            if abs(outer) > 700:
                return 0.0 if step < 0 else math.inf
        root = optimize.brentq(lambda u: s(u) - target, min(inner, outer), max(inner, outer), xtol=1e-14, rtol=1e-15)
        return math.exp(root)

    return end(z, -1.0, x_t > 0), end(-z, 1.0, x_c > 0)


def fisher_exact(successes_t: int, n_t: int, successes_c: int, n_c: int) -> tuple[float, float]:
    """Fisher's (1935) exact test on the 2x2 table; returns (sample odds ratio, two-sided p).

    Conditional on both margins; scipy.stats.fisher_exact does the hypergeometric sums.
    """
    from scipy import stats as sps  # heavy import, only when a small sample needs it

    table = [[successes_t, n_t - successes_t], [successes_c, n_c - successes_c]]
    res = sps.fisher_exact(table, alternative="two-sided")
    return float(res.statistic), float(res.pvalue)


def conditional_odds_ratio(
    successes_t: int, n_t: int, successes_c: int, n_c: int, alpha: float
) -> tuple[float, float, float]:
    """The odds ratio that goes with Fisher's test: (conditional MLE, exact interval at 1 - alpha).

    The maximum-likelihood estimate of the odds ratio under the noncentral hypergeometric
    distribution of the table given its margins (Cornfield, 1956), with the exact
    interval that inverts the conditional test; scipy.stats.contingency.odds_ratio with
    kind="conditional" computes both. NaN estimate when a margin is zero (no information).
    """
    from scipy.stats.contingency import odds_ratio  # heavy import, only on Fisher rows

    table = [[successes_t, n_t - successes_t], [successes_c, n_c - successes_c]]
    res = odds_ratio(table, kind="conditional")
    ci = res.confidence_interval(confidence_level=1 - alpha)
    return float(res.statistic), float(ci.low), float(ci.high)


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
    return SampleRatio(arms=arms, observed=observed, expected=expected, statistic=stat, df=df, p_value=p, alpha=alpha,
                       mismatch=p < alpha)


# --------------------------------------------------------------------------- test choice


def _finite(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def _f(x: Any) -> float:
    return float(x) if _finite(x) else NAN


def choose_test(metric: Metric, treatment: ArmSummary, control: ArmSummary) -> tuple[str, str]:
    """The test a practitioner would pick for this metric and these counts, and why (methods.choose)."""
    method, reason = methods.choose(metric, treatment, control)
    return method.id, reason


def _note(notes: list, code: str, text: str) -> None:
    notes.append(Note(code, text))


def _summary(row: dict, prefix: str = "") -> ArmSummary:
    n = row.get(f"{prefix}n")
    mean = row.get(f"{prefix}value") if row.get("kind") == "ratio" else row.get(f"{prefix}mean")
    return ArmSummary(
        n=int(n) if _finite(n) else 0,
        mean=_f(mean),
        variance=_f(row.get(f"{prefix}variance")),
        total=_f(row.get(f"{prefix}total")),
    )


# How each registry test's statistic becomes a p-value and an interval: "normal" (z against
# the standard normal, Wald interval), "t" (Student's t with the row's df), "fisher" (exact
# conditional test on the 2x2 counts, Newcombe's interval), "binomial" (exact one-sample
# test). tests/test_methods.py checks that every id of methods.METHODS has an entry.
INFERENCE: dict[str, str] = {
    TEST_TWO_PROPORTION_Z: "normal",
    TEST_FISHER_EXACT: "fisher",
    TEST_Z_KNOWN_SIGMA: "normal",
    TEST_WELCH_T: "t",
    TEST_STUDENT_T: "t",
    TEST_RATIO_DELTA_Z: "normal",
    TEST_CUPED_WELCH_T: "t",
    TEST_BINOMIAL_EXACT: "binomial",
    TEST_ONE_SAMPLE_Z: "normal",
    TEST_ONE_SAMPLE_T: "t",
}


def compare(metric: Metric, row: dict, alpha: float) -> TestResult:
    """Turn one treatment row of the query into a TestResult (before multiplicity adjustment)."""
    treatment, control = _summary(row), _summary(row, "control_")
    method, reason = methods.choose(metric, treatment, control)
    test = method.id
    notes: list[Note] = []
    problem = False
    estimate = _f(row.get("estimate"))
    se = _f(row.get("std_error"))
    statistic = _f(row.get("statistic"))
    df = row.get("df")
    df = float(df) if _finite(df) else None
    stat_name = method.statistic
    or_lo = or_hi = None
    # The fields every result of this row carries, whatever happens below (role, segment).
    shared = dict(metric=metric, arm=row["arm"], segment=row.get("segment"), segment_value=row.get("segment_value"),
                  test=test, control=control, treatment=treatment, alpha=alpha, statistic_name=stat_name)

    if treatment.n == 0 or control.n == 0:
        empty = "treatment" if treatment.n == 0 else "control"
        notes.append(Note("no_units", f"the {empty} arm has no units with a value for this metric: no test is possible"))
        return no_test(**shared, reason=reason or "no data", notes=notes)

    sums = ("total", "control_total", "variance", "control_variance", "std_error")
    if any(isinstance(row.get(k), float) and math.isinf(row[k]) for k in sums):
        # A silent p = 1 would follow (difference / infinity = 0): refuse to test instead.
        notes.append(Note("overflow", "values are too large for double precision (a sum or variance overflowed to "
                                      "infinity): no test is possible; rescale the metric (e.g. divide it by 1e6)"))
        return no_test(**shared, reason=reason, estimate=estimate, notes=notes)

    if metric.kind == "proportion" and (row.get("invalid") or 0) > 0:
        notes.append(Note("not_binary",
            f"{int(row['invalid'])} unit value(s) in this arm are not 0 or 1, so this is not a proportion; "
            f"write the value as a condition (e.g. count(*) > 0) or use kind = \"mean\""
        ))
        if test == TEST_FISHER_EXACT:  # counts above n make no 2x2 table: no test, not a crash
            return no_test(**shared, reason=reason, estimate=estimate, notes=notes)
        problem = True

    inference = INFERENCE[test]
    if inference == "fisher":
        x_t, x_c = round(treatment.total), round(control.total)
        _, p = fisher_exact(x_t, treatment.n, x_c, control.n)
        statistic, or_lo, or_hi = conditional_odds_ratio(x_t, treatment.n, x_c, control.n, alpha)
        lo, hi = newcombe_interval(x_t, treatment.n, x_c, control.n, alpha)
        _note(notes, "statistic", f"statistic: the odds ratio (conditional maximum-likelihood estimate) with its exact "
                     f"{1 - alpha:.0%} interval [{statistic_text(or_lo)}, {statistic_text(or_hi)}]; the interval "
                     f"column is for the difference of proportions")
        _note(notes, "interval", "interval: Newcombe's hybrid score interval (valid with few events)")
        if x_t + x_c == 0 or (x_t == treatment.n and x_c == control.n):
            every = "no unit" if x_t + x_c == 0 else "every unit"
            _note(notes, "no_information", f"{every} in either arm had the event: the data cannot show a difference (p = 1 by construction)")
        stat_name, df = "odds_ratio", None
    else:
        if test in T_TESTS:
            if min(treatment.n, control.n) < 2:
                _note(notes, "small_arm", "an arm has fewer than 2 units: its variance, and so the t test, is undefined")
                problem = True
            elif not _finite(statistic):
                if treatment.variance == 0 and control.variance == 0:
                    _note(notes, "zero_variance", "both arms have zero variance (every unit has the same value, or values too close "
                                 "to tell apart in double precision): no test is possible")
                else:
                    _note(notes, "no_standard_error", "the standard error is zero or undefined: no test is possible")
                problem = True
            elif treatment.variance == 0 or control.variance == 0:
                flat = "treatment" if treatment.variance == 0 else "control"
                _note(notes, "zero_variance", f"the {flat} arm has zero variance (every unit has the same value): the test rests on "
                             f"the other arm's variance alone; check the metric's definition")
            if min(treatment.n, control.n) < MIN_UNITS_FOR_CLT:
                _note(notes, "few_units", 
                    f"an arm has fewer than {MIN_UNITS_FOR_CLT} units (common-practice threshold): "
                    f"the t test then assumes the metric is roughly normally distributed"
                )
        else:
            if not _finite(statistic):
                _note(notes, "no_standard_error", "the standard error is zero or undefined: no test is possible")
                problem = True
            if test == TEST_RATIO_DELTA_Z and min(treatment.n, control.n) < MIN_UNITS_FOR_CLT:
                _note(notes, "few_units", 
                    f"an arm has fewer than {MIN_UNITS_FOR_CLT} units (common-practice threshold): "
                    f"the delta method's normal approximation may be poor"
                )
        p = p_value(statistic, df if inference == "t" else None)
        lo, hi = wald_interval(estimate, se, df if inference == "t" else None, alpha)
        if test == TEST_TWO_PROPORTION_Z:
            _note(notes, "interval", "interval: Wald interval with unpooled standard error")

    lift, lift_se = _f(row.get("relative_lift")), _f(row.get("lift_std_error"))
    if test == TEST_FISHER_EXACT:
        # The delta-method (Wald) interval does not hold its level with this few events:
        # the score interval for the ratio of the two rates, minus 1.
        r_lo, r_hi = ratio_score_interval(x_t, treatment.n, x_c, control.n, alpha)
        lift_lo, lift_hi = r_lo - 1.0, r_hi - 1.0
        _note(notes, "lift_interval", "relative-lift interval: score interval for the ratio of the two rates "
                     "(Miettinen-Nurminen), valid with few events")
        if x_c == 0:
            _note(notes, "no_control_events", "the control arm had no events: the relative lift is undefined and its interval "
                         "has no upper end")
    else:
        lift_lo, lift_hi = wald_interval(lift, lift_se, None, alpha)
    theta = row.get("theta") if _finite(row.get("theta")) else None
    reduction = row.get("variance_reduction") if _finite(row.get("variance_reduction")) else None
    if test == TEST_CUPED_WELCH_T and reduction is not None:
        reason += (f"; slopes {_f(row.get('theta_treatment')):.4g} (treatment) and "
                   f"{_f(row.get('theta_control')):.4g} (control), variance reduced by {reduction:.1%}")
        if reduction < 0.01:
            _note(notes, "weak_covariate", "the pre-period covariate barely predicts the metric: CUPED gained little")

    guardrail = None
    if metric.role == "guardrail" and metric.better is not None:
        g_stat = _f(row.get("margin_statistic"))
        g_df = df if stat_name == "t" else None
        g_p = p_value(g_stat, g_df, "greater")
        relative = metric.relative_margin is not None
        margin = metric.relative_margin if relative else metric.margin
        crit = critical_value(2 * alpha, g_df)  # one-sided 1 - alpha
        point, point_se = (lift, lift_se) if relative else (estimate, se)
        bound = point - crit * point_se if metric.better == "higher" else point + crit * point_se
        if test == TEST_FISHER_EXACT and relative:
            # With few events, test the ratio of the rates against 1 -/+ margin by the same
            # score statistic as the lift interval, and take the bound from that interval.
            higher = metric.better == "higher"
            r0 = 1 - margin if higher else 1 + margin
            score = _ratio_score_statistic(r0, x_t, treatment.n, x_c, control.n)
            g_stat = score if higher else -score
            g_p = float(special.ndtr(-g_stat))
            r_lo, r_hi = ratio_score_interval(x_t, treatment.n, x_c, control.n, 2 * alpha)
            bound = (r_lo if higher else r_hi) - 1.0
            _note(notes, "guardrail_method", "guardrail margin test: score test for the ratio of the rates (Miettinen-Nurminen), "
                         "valid with few events")
        elif test == TEST_FISHER_EXACT:
            _note(notes, "guardrail_method", "guardrail margin test uses the normal approximation, which is rough with this few events")
        harm = bool(_finite(p) and p < alpha and ((estimate < 0) if metric.better == "higher" else (estimate > 0)))
        guardrail = Guardrail(direction=metric.better, margin=float(margin), relative=relative, statistic=g_stat,
                              p_value=g_p, p_value_adjusted=g_p, bound=bound, held=bool(_finite(g_p) and g_p < alpha),
                              harm=harm)

    shared.update(statistic_name=stat_name)
    return comparison(
        **shared, reason=reason, estimate=estimate,
        std_error=se, statistic=statistic, df=df, p_value=p, ci_low=lo,
        ci_high=hi, significant=bool(_finite(p) and p < alpha), notes=notes,
        data_problem=problem, difference=_f(row.get("difference")), relative_lift=lift,
        lift_std_error=lift_se, lift_ci_low=lift_lo, lift_ci_high=lift_hi,
        theta=theta, variance_reduction=reduction, guardrail=guardrail,
        theta_treatment=_f(row["theta_treatment"]) if theta is not None and _finite(row.get("theta_treatment")) else None,
        theta_control=_f(row["theta_control"]) if theta is not None and _finite(row.get("theta_control")) else None,
        odds_ratio_ci_low=or_lo, odds_ratio_ci_high=or_hi,
    )


def statistic_text(x: float) -> str:
    return "inf" if x == math.inf else ("-" if not _finite(x) else f"{x:.4g}")


# --------------------------------------------------------------------------- always-valid inference


def msprt(estimate: float, std_error: float, mixing_sd: float, alpha: float) -> tuple[float, float, float]:
    """Always-valid p-value and confidence sequence of the mixture SPRT with a normal mixture.

    Johari, Koomen, Pekelis and Walsh (2017, "Peeking at A/B tests", KDD; 2022, Operations
    Research). With V = std_error^2 and the effect's mixing distribution N(0, tau^2):
    Lambda = sqrt(V / (V + tau^2)) exp(tau^2 estimate^2 / (2 V (V + tau^2))); the p-value
    min(1, 1/Lambda) may be read at any time without inflating false positives (take the
    running minimum over looks), and {theta: Lambda(theta) < 1/alpha} is the confidence
    sequence estimate -/+ sqrt(V (V + tau^2) / tau^2 (2 ln(1/alpha) + ln((V + tau^2) / V))).

    Args:
        estimate: the difference, treatment - control.
        std_error: its standard error at this look.
        mixing_sd: tau, the standard deviation of plausible effects (same units as estimate).
        alpha: the error rate the sequence is built for.
    """
    if not (_finite(estimate) and _finite(std_error) and std_error > 0 and mixing_sd > 0):
        return NAN, NAN, NAN
    v, t2 = std_error * std_error, mixing_sd * mixing_sd
    log_lr = 0.5 * math.log(v / (v + t2)) + t2 * estimate * estimate / (2 * v * (v + t2))
    p = 1.0 if log_lr <= 0 else math.exp(-log_lr)
    half = math.sqrt(v * (v + t2) / t2 * (2 * math.log(1 / alpha) + math.log((v + t2) / v)))
    return p, estimate - half, estimate + half


# --------------------------------------------------------------------------- one-arm checks


def target_check(metric: Metric, row: dict, alpha: float) -> TargetCheck | None:
    """Compare one arm's value with the metric's fixed target.

    Proportions: exact binomial test (Clopper and Pearson's setting; scipy.stats.binomtest)
    when n*p0 or n*(1-p0) is below 10 (common practice), else the one-sample z test with
    the standard error implied by the target. Means: one-sample t test (Student, 1908).
    Ratios: one-sample z with the delta-method standard error. The alternative follows
    ``better``: "higher" asks whether the arm is above the target, "lower" below it;
    without a direction the test is two-sided.
    """
    target = metric.target
    n = int(row["n"]) if _finite(row.get("n")) else 0
    if target is None or n == 0:
        return None
    alternative = {"higher": "greater", "lower": "less"}.get(metric.better or "", "two-sided")
    value = _f(row.get("value"))
    stat = _f(row.get("target_statistic"))
    df = float(row["target_df"]) if _finite(row.get("target_df")) else None
    method, reason = methods.choose_target(metric, n)
    test = method.id
    if INFERENCE[test] == "binomial":
        from scipy import stats as sps

        successes = round(_f(row.get("total")))
        res = sps.binomtest(successes, n, target, alternative=alternative)
        p, stat, df = float(res.pvalue), float(successes), None
    else:
        p = p_value(stat, df if INFERENCE[test] == "t" else None, alternative)
    return TargetCheck(metric=metric.name, kind=metric.kind, arm=str(row["arm"]), target=float(target), value=value,
                       n=n, test=test, reason=reason, statistic=stat, df=df, alternative=alternative, p_value=p,
                       alpha=alpha, significant=bool(_finite(p) and p < alpha))


# --------------------------------------------------------------------------- multiplicity


def adjust_p_values(p_values: list[float], method: str) -> list[float]:
    """Adjusted p-values for a family of tests.

    holm: Holm's (1979) step-down procedure, controls the family-wise error rate.
    bh: Benjamini and Hochberg's (1995) step-up procedure, controls the false discovery rate.
    none: unchanged. NaN p-values are left out of the family and stay NaN.
    """
    if method == "none":
        return list(p_values)
    idx = [i for i, p in enumerate(p_values) if _finite(p)]
    m = len(idx)
    out = [NAN] * len(p_values)
    if m == 0:
        return out
    order = sorted(idx, key=lambda i: p_values[i])
    if method == "holm":
        running = 0.0
        for rank, i in enumerate(order):
            running = max(running, min(1.0, (m - rank) * p_values[i]))
            out[i] = running
    elif method == "bh":
        running = 1.0
        for rank in range(m - 1, -1, -1):
            i = order[rank]
            running = min(running, m * p_values[i] / (rank + 1))
            out[i] = min(1.0, running)
    else:
        raise ValueError(f"unknown correction {method!r}; use none, holm or bh")
    return out


def _family(r: TestResult) -> str:
    return "segment" if r.segment is not None else r.role


def apply_corrections(results: list[TestResult], corrections: dict[str, str]) -> list[TestResult]:
    """Adjust p-values within each family (primary, secondary, guardrail, segment)."""
    from dataclasses import replace

    out = list(results)
    for family in ("primary", "secondary", "guardrail", "segment"):
        members = [i for i, r in enumerate(out) if _family(r) == family]
        if not members:
            continue
        method = corrections.get(family, "none")
        if family == "guardrail":
            # Guardrails are judged on their one-sided non-inferiority p-values.
            ps = [out[i].guardrail.p_value if out[i].guardrail else NAN for i in members]
            adj = adjust_p_values(ps, method)
            for i, a in zip(members, adj):
                g = out[i].guardrail
                if g is not None:
                    g = replace(g, p_value_adjusted=a, held=bool(_finite(a) and a < out[i].alpha))
                out[i] = replace(out[i], family=family, correction=method, guardrail=g)
            continue
        adj = adjust_p_values([out[i].p_value for i in members], method)
        for i, a in zip(members, adj):
            out[i] = replace(out[i], family=family, correction=method, p_value_adjusted=a,
                             significant=bool(_finite(a) and a < out[i].alpha))
    return out


# --------------------------------------------------------------------------- decisions


def decide(arms: list[str], results: list[TestResult], srm: SampleRatio | None) -> list[Decision]:
    """One verdict per treatment arm from the sample-ratio gate, the primary metric and guardrails.

    invalid: the sample-ratio check failed, so no comparison can be trusted.
    unfavourable: the primary metric got significantly worse, or a guardrail showed significant harm.
    favourable: the primary metric improved significantly and every guardrail held its margin.
    unclear: anything else (no detectable effect, or a guardrail not yet shown safe).
    The words are model.VERDICTS; none of them is a test outcome, and none is the decision.
    """
    decisions = []
    for arm in arms:
        reasons: list[str] = []
        if srm is not None and srm.mismatch:
            decisions.append(Decision(arm=arm, verdict=VERDICT_INVALID, reasons=(
                f"sample-ratio mismatch (p = {format_p(srm.p_value)}): the split of units differs from the plan, "
                "so assignment or logging is broken; find the cause before reading any result",)))
            continue
        mine = [r for r in results if r.arm == arm and r.segment is None]
        primary = [r for r in mine if r.role == "primary"]
        guards = [r for r in mine if r.guardrail is not None]
        harmed = [r for r in guards if r.guardrail.harm]
        unproven = [r for r in guards if not r.guardrail.held and not r.guardrail.harm]
        verdict = VERDICT_UNCLEAR
        for r in harmed:
            reasons.append(f"guardrail {r.metric} got significantly worse (estimate {r.estimate:+.4g}, p = {format_p(r.p_value)})")
        for r in unproven:
            reasons.append(
                f"guardrail {r.metric} is not yet shown within its margin "
                f"(one-sided p = {format_p(r.guardrail.p_value_adjusted)})"
            )
        for r in guards:
            if r.guardrail.held:
                reasons.append(f"guardrail {r.metric} held (no worse than its margin, one-sided p = {format_p(r.guardrail.p_value_adjusted)})")
        if harmed:
            verdict = VERDICT_UNFAVOURABLE
        for r in primary:
            p = r.p_value_adjusted
            problem = [n for n in r.notes if getattr(n, "code", None) in PROBLEM_NOTES]
            if not _finite(p):
                why = f" ({problem[0]})" if problem else ""
                reasons.append(f"primary metric {r.metric}: no test was possible{why}")
                continue
            if r.data_problem and problem:
                reasons.append(f"primary metric {r.metric} has a data problem: {problem[0]}")
            better = r.better
            if not r.significant:
                reasons.append(
                    f"primary metric {r.metric}: no significant difference (p = {format_p(p)}; interval "
                    f"[{r.ci_low:.4g}, {r.ci_high:.4g}] still includes 0); check power before concluding there is no effect"
                )
                continue
            if better is None:
                reasons.append(f"primary metric {r.metric} differs (p = {format_p(p)}) but no 'better' direction is declared")
                continue
            improved = (r.estimate > 0) == (better == "higher")
            reasons.append(
                f"primary metric {r.metric} {'improved' if improved else 'got worse'} significantly "
                f"(estimate {r.estimate:+.4g}, p = {format_p(p)})"
            )
            if not improved:
                verdict = VERDICT_UNFAVOURABLE
            elif verdict != VERDICT_UNFAVOURABLE and not unproven:
                verdict = VERDICT_FAVOURABLE
        if not primary:
            reasons.append("no primary metric: declare one with role = \"primary\" for a verdict")
        decisions.append(Decision(arm=arm, verdict=verdict, reasons=tuple(reasons)))
    return decisions


# --------------------------------------------------------------------------- the whole analysis


# Columns of the query's rows that hold labels; every other column holds a number.
TEXT_COLUMNS = frozenset({"metric", "kind", "role", "method", "segment", "segment_value", "arm", "direction"})
# Columns without which the rows cannot be read as the query's output.
REQUIRED_COLUMNS = ("metric_index", "arm", "units", "n", "mean")


def _missing(value: Any) -> bool:
    """None, NaN (pandas' missing value in float columns), pandas' NA/NaT, or '' (CSV)."""
    if value is None or (isinstance(value, str) and value.strip() == ""):
        return True
    if isinstance(value, float):
        return math.isnan(value)
    try:
        return bool(value != value)  # NaN-like scalars (numpy, pandas NA/NaT) are not equal to themselves
    except (TypeError, ValueError):
        return False


def coerce_rows(rows: Iterable[dict]) -> list[dict]:
    """Rows from anywhere (the engines, pandas records, csv.DictReader) -> the engines' form.

    Column names in lower case; a missing value (None, NaN, pandas NA, an empty CSV field)
    becomes None; labels become str; numbers (numpy scalars, Decimal, numeric strings from
    CSV) become float. A value that is not a number in a numeric column is an error naming
    the row and the column.
    """
    from .errors import UsageError

    out: list[dict] = []
    for i, row in enumerate(rows, 1):
        if not hasattr(row, "items"):
            raise UsageError(f"row {i} is a {type(row).__name__}, not a mapping of column names to values; "
                             f"give rows as dicts, e.g. pandas' to_dict('records') or csv.DictReader")
        clean: dict = {}
        for key, value in row.items():
            name = str(key).strip().lower()
            if _missing(value):
                clean[name] = None
            elif name in TEXT_COLUMNS:
                clean[name] = value if isinstance(value, str) else str(value.item() if hasattr(value, "item") else value)
            elif isinstance(value, bool):
                clean[name] = float(value)
            else:
                try:
                    clean[name] = float(value.item() if hasattr(value, "item") else value)
                except (TypeError, ValueError):
                    raise UsageError(f"row {i}, column {name!r}: {str(value)[:40]!r} is not a number; the "
                                     f"query returns numbers in every column but "
                                     f"{', '.join(sorted(TEXT_COLUMNS))}") from None
        out.append(clean)
    absent = [c for c in REQUIRED_COLUMNS if not any(c in r for r in out)]
    if out and absent:  # no rows at all: the source was empty, which the control check reports
        raise UsageError(
            f"the rows have no column {', '.join(repr(c) for c in absent)}: they do not look like the rows "
            f"of sqlstat's query (columns found: {', '.join(sorted(out[0]))[:300]}); run the SQL of "
            f"`sqlstat sql SPEC` and pass its rows unchanged"
        )
    return out


def analyse(experiment: Experiment, rows: Iterable[dict]) -> Analysis:
    """Rows returned by the compiled query -> the full Analysis.

    Rows may come from anywhere (see coerce_rows): pandas records with NaN for NULL and
    CSV rows of strings are read like the engines' own rows.
    """
    rows = coerce_rows(rows)
    notes: list[str] = []
    units: dict[str, int] = {}
    excluded = 0
    overall_rows = [r for r in rows if r.get("segment") is None]
    for r in overall_rows:
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
    for r in overall_rows:
        m = by_index_all.get(int(r.get("metric_index") or 0))
        n, arm_units = r.get("n"), r.get("units")
        if r.get("arm") is not None and m is not None and m.missing == "exclude" and _finite(n) and _finite(arm_units) and arm_units > n:
            _note(notes, "excluded_missing", f"{m.name}: {int(arm_units - n)} unit(s) of arm {r['arm']!r} have no value and were left out "
                         f"(missing = \"exclude\")")
    if experiment.control not in units or units.get(experiment.control, 0) == 0:
        from .errors import DataProblem
        import difflib

        if any(r.get("arm") is not None and str(r["arm"]) == experiment.control for r in overall_rows):
            raise DataProblem(
                f"the control arm {experiment.control!r} is in the rows but with 0 units (column 'units' of its "
                f"overall rows, those with an empty segment); nothing to compare with"
            )
        hint = difflib.get_close_matches(experiment.control, [a for a in units if a != experiment.control], n=1)
        extra = f"; did you mean {hint[0]!r}?" if hint else ""
        raise DataProblem(
            f"the control arm {experiment.control!r} has no units in the data{extra} "
            f"(arms found: {', '.join(sorted(a for a, u in units.items() if u)) or 'none'}, in "
            f"{len(overall_rows)} overall row(s) of {len(rows)})"
        )
    srm_units = {a: units.get(a, 0) for a in (declared or units)}
    srm = sample_ratio_test(srm_units, experiment.weights, experiment.sample_ratio_alpha)
    by_index = {m.index: m for m in experiment.metrics}
    results, targets = [], []
    for r in rows:
        if r.get("arm") is None:
            continue
        metric = by_index[int(r["metric_index"])]
        if r.get("segment") is None and metric.target is not None:
            check = target_check(metric, r, experiment.alpha)
            if check is not None:
                targets.append(check)
        if int(r.get("is_control") or 0) == 1:
            continue
        result = compare(metric, r, experiment.alpha)
        if experiment.always_valid:
            from dataclasses import replace

            tau = experiment.mixing_sd * abs(_f(r.get("control_value")))
            p_av, lo_av, hi_av = msprt(result.estimate, result.std_error, tau, experiment.alpha)
            result = replace(result, always_valid_p_value=p_av, sequence_low=lo_av, sequence_high=hi_av)
        results.append(result)
    results = apply_corrections(results, experiment.corrections)
    if any(r.segment is not None for r in results):
        _note(notes, "segments_exploratory", 
            "segment results are exploratory: many slices make chance differences likely, so their p-values "
            f"are adjusted ({experiment.corrections.get('segment', 'none')}) and they do not enter the verdict"
        )
    arm_order = [experiment.control] + sorted(a for a in units if a != experiment.control)
    decisions = decide(arm_order[1:], results, srm)
    return Analysis(
        experiment=experiment.name,
        control=experiment.control,
        alpha=experiment.alpha,
        arms=tuple((a, units[a]) for a in arm_order),
        excluded_units=excluded,
        sample_ratio=srm,
        results=tuple(results),
        notes=tuple([Note("data_problem", n) for n in problems] + notes + [Note("spec", n) for n in experiment.notes]),
        data_problems=tuple(Note("data_problem", n) for n in problems),
        targets=tuple(targets),
        decisions=tuple(decisions),
        corrections=dict(experiment.corrections),
    )

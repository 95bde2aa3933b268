"""Methods beyond the basic tests, each against an independent reference on the raw rows.

References: statsmodels OLS (cluster-robust CR0 and covariate-adjusted regressions),
statsmodels multipletests, statsmodels ttest_ind with a margin, scipy.stats.binomtest,
scipy.stats.ttest_1samp, scipy.stats.bootstrap, statsmodels proportions_ztest and
confint_proportions_2indep, and a worked example from Newcombe (1998) recalled from memory.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
import statsmodels.api as sm
from scipy import stats as sps
from statsmodels.stats.multitest import multipletests

import sqlstat
from sqlstat import stats as st

from .conftest import make_experiment, spec_text, write_parquet


def approx(x, rel=1e-9, abs=1e-12):
    return pytest.approx(x, rel=rel, abs=abs)


def overall(analysis, metric):
    return {r.arm: r for r in analysis.results if r.metric == metric and r.segment is None}


RATIO = 'name = "spend_per_event"\nkind = "ratio"\nnumerator = "sum(amount)"\ndenominator = "count(*)"'
SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'


@pytest.fixture
def ab(tmp_path):
    return make_experiment(
        tmp_path, units={"control": 700, "treatment": 650, "variant_b": 600},
        spend_mean={"control": 20.0, "treatment": 22.0, "variant_b": 19.0},
        spend_sd={"control": 9.0, "treatment": 12.0, "variant_b": 7.0}, seed=11,
    )


def events_frame(syn) -> pd.DataFrame:
    arms = dict(zip(syn.assignment["unit"], syn.assignment["arm"]))
    df = pd.DataFrame({"unit": syn.events["unit"], "amount": syn.events["amount"]})
    df["arm"] = df["unit"].map(arms)
    return df


def test_ratio_metric_equals_cluster_robust_event_regression(ab, write_spec):
    analysis = sqlstat.run(write_spec(spec_text(RATIO)))
    ev = events_frame(ab)
    for arm, res in overall(analysis, "spend_per_event").items():
        sub = ev[ev["arm"].isin([arm, "control"])]
        X = sm.add_constant((sub["arm"] == arm).astype(float).to_numpy())
        # reference: statsmodels OLS at event level, cluster-robust CR0 with clusters = units
        fit = sm.OLS(sub["amount"].to_numpy(), X).fit(
            cov_type="cluster", cov_kwds={"groups": sub["unit"].to_numpy(), "use_correction": False}
        )
        assert res.test == "ratio_delta_z"
        assert res.estimate == approx(fit.params[1], rel=1e-8)
        assert res.std_error == approx(fit.bse[1], rel=1e-8)


@pytest.fixture
def cuped(tmp_path):
    rng = np.random.default_rng(5)
    n = 1500
    unit = np.arange(1, n + 1)
    arm = rng.choice(["control", "treatment", "variant_b"], size=n)
    habit = rng.gamma(2.0, 2.0, size=n)
    pre_amount = rng.poisson(habit) * 1.0
    effect = np.where(arm == "treatment", 0.8, 0.0)
    post = rng.poisson(habit) + effect + rng.normal(0, 1, size=n)
    write_parquet(tmp_path / "assignments.parquet", {"unit": unit, "arm": arm})
    # post-period: one row per unit with its value; pre-period: several rows per unit in a window
    write_parquet(tmp_path / "events.parquet", {"unit": unit, "amount": post, "converted": post > 4})
    pre_unit = np.repeat(unit, 2)
    pre_day = np.tile(np.array(["2026-07-05", "2026-06-20"], dtype="datetime64[D]"), n)
    pre_val = np.column_stack([pre_amount, np.full(n, 100.0)]).ravel()  # second row is outside the window
    write_parquet(tmp_path / "pre.parquet", {"unit": pre_unit, "day": pre_day, "amount": pre_val})
    return pd.DataFrame({"unit": unit, "arm": arm, "y": post, "x": pre_amount})


PRE = """
[pre_period]
source = "pre.parquet"
unit = "unit"
time = "day"
start = 2026-07-01
end = 2026-08-01
"""


def _lin_reference(sub: pd.DataFrame, arm: str):
    """Lin's (2013) interacted regression y ~ T + (x - mean x) + T (x - mean x) on the two arms
    (statsmodels OLS: coefficient and HC2 standard error), and the same estimator's variance
    from each arm's own regression of y on (x - pooled mean x) with its classical intercept
    variance (statsmodels OLS, nonrobust), which is what sqlstat computes."""
    treat = (sub["arm"] == arm).astype(float).to_numpy()
    xc = (sub["x"] - sub["x"].mean()).to_numpy()
    y = sub["y"].to_numpy()
    inter = sm.OLS(y, sm.add_constant(np.column_stack([treat, xc, treat * xc]))).fit(cov_type="HC2")
    per_arm = []
    for flag in (1.0, 0.0):
        keep = treat == flag
        per_arm.append(sm.OLS(y[keep], sm.add_constant(xc[keep])).fit())
    variance = per_arm[0].bse[0] ** 2 + per_arm[1].bse[0] ** 2
    return inter, per_arm, variance


def test_cuped_is_lins_interacted_regression_with_slopes_estimated(cuped, write_spec):
    metric = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncovariate = "sum(amount)"'
    analysis = sqlstat.run(write_spec(spec_text(metric) + PRE))
    for arm, res in overall(analysis, "spend").items():
        sub = cuped[cuped["arm"].isin([arm, "control"])]
        inter, per_arm, variance = _lin_reference(sub, arm)
        assert res.test == "cuped_welch_t"
        # reference: statsmodels OLS, interacted regression (Lin 2013)
        assert res.estimate == approx(inter.params[1])
        assert res.theta_treatment == approx(per_arm[0].params[1]) and res.theta_control == approx(per_arm[1].params[1])
        # reference: statsmodels OLS per arm, classical variance of each adjusted mean
        assert res.std_error == approx(np.sqrt(variance))
        vt, vc = per_arm[0].bse[0] ** 2, per_arm[1].bse[0] ** 2
        nt, nc = per_arm[0].nobs, per_arm[1].nobs
        assert res.df == approx((vt + vc) ** 2 / (vt**2 / (nt - 2) + vc**2 / (nc - 2)))
        # the named variant against HC2 on the interacted regression: close, not equal
        assert abs(res.std_error / inter.bse[1] - 1) < 0.02
        # the pooled slope stays as a diagnostic: the coefficient of y ~ T + x
        fit = sm.OLS(sub["y"].to_numpy(), sm.add_constant(np.column_stack([
            (sub["arm"] == arm).astype(float), sub["x"] - sub["x"].mean()]))).fit()
        assert res.theta == approx(fit.params[2])
        # variance reduction, recomputed from the raw values
        t, c = sub[sub["arm"] == arm], sub[sub["arm"] == "control"]
        raw = np.var(t["y"], ddof=1) / len(t) + np.var(c["y"], ddof=1) / len(c)
        assert res.variance_reduction == approx(1 - variance / raw)
        assert res.variance_reduction > 0.2  # the covariate is informative in this data
    # cuped = true uses the metric's own value in the pre-period window: same numbers here
    metric_own = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncuped = true'
    again = sqlstat.run(write_spec(spec_text(metric_own) + PRE, "own.toml"))
    assert overall(again, "spend")["treatment"].estimate == approx(overall(analysis, "spend")["treatment"].estimate)


def _lift_by_finite_differences(t: np.ndarray, c: np.ndarray) -> tuple[float, float]:
    """Delta method evaluated numerically: gradient of g(T, C) = T / C - 1 by central
    differences, times the diagonal covariance of the two independent means."""
    T, C = t.mean(), c.mean()
    vt, vc = t.var(ddof=1) / t.size, c.var(ddof=1) / c.size
    g = lambda a, b: a / b - 1  # noqa: E731
    h = 1e-6
    dT = (g(T * (1 + h), C) - g(T * (1 - h), C)) / (2 * T * h)
    dC = (g(T, C * (1 + h)) - g(T, C * (1 - h))) / (2 * C * h)
    return g(T, C), float(np.sqrt(dT**2 * vt + dC**2 * vc))


def test_relative_lift_matches_numerical_delta_method_and_bootstrap(tmp_path, write_spec):
    syn = make_experiment(tmp_path, units={"control": 3000, "treatment": 3000},
                          spend_mean={"control": 20.0, "treatment": 21.0}, seed=21)
    analysis = sqlstat.run(write_spec(spec_text(SPEND)))
    res = overall(analysis, "spend")["treatment"]
    values = syn.unit_values(lambda r: r["amount"].sum())
    t, c = values["treatment"], values["control"]
    lift, se = _lift_by_finite_differences(t, c)
    assert res.relative_lift == approx(lift)
    assert res.lift_std_error == approx(se, rel=1e-6)  # finite differences: 1e-6 relative
    # reference: scipy.stats.bootstrap percentile interval, 2000 resamples; with n = 3000
    # per arm the delta-method interval should agree to within 10% of its width
    boot = sps.bootstrap((t, c), lambda a, b: a.mean() / b.mean() - 1, n_resamples=2000,
                         method="percentile", random_state=np.random.default_rng(1), vectorized=False)
    width = res.lift_ci_high - res.lift_ci_low
    assert abs(res.lift_ci_low - boot.confidence_interval.low) < 0.10 * width
    assert abs(res.lift_ci_high - boot.confidence_interval.high) < 0.10 * width


@pytest.mark.parametrize("method, sm_method", [("holm", "holm"), ("bh", "fdr_bh")])
def test_adjusted_p_values_match_statsmodels(method, sm_method):
    rng = np.random.default_rng(3)
    for size in (1, 2, 7, 40):
        p = list(np.concatenate([rng.uniform(0, 0.05, size // 2), rng.uniform(0, 1, size - size // 2)]))
        ref = multipletests(p, method=sm_method)[1]  # reference: statsmodels
        assert st.adjust_p_values(p, method) == pytest.approx(list(ref), rel=1e-12, abs=1e-12)


def test_families_are_adjusted_as_declared(ab, write_spec):
    metrics = [
        'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\nrole = "primary"\nbetter = "higher"',
        'name = "events"\nkind = "mean"\nvalue = "count(*)"',
        'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
        RATIO,
    ]
    analysis = sqlstat.run(write_spec(spec_text(*metrics, extra_experiment='correction = { secondary = "holm" }')))
    secondary = [r for r in analysis.results if r.role == "secondary" and r.segment is None]
    ref = multipletests([r.p_value for r in secondary], method="holm")[1]  # reference: statsmodels
    assert [r.p_value_adjusted for r in secondary] == pytest.approx(list(ref), rel=1e-12)
    assert all(r.correction == "holm" for r in secondary)
    primary = [r for r in analysis.results if r.role == "primary"]
    assert all(r.correction == "none" and r.p_value_adjusted == r.p_value for r in primary)


def test_guardrail_non_inferiority_matches_statsmodels(ab, write_spec):
    from statsmodels.stats.weightstats import ttest_ind

    metric = SPEND + '\nrole = "guardrail"\nbetter = "higher"\nmargin = 1.5'
    analysis = sqlstat.run(write_spec(spec_text(metric)))
    values = ab.unit_values(lambda r: r["amount"].sum())
    for arm, res in overall(analysis, "spend").items():
        # reference: statsmodels ttest_ind, H0: diff <= -margin (Welch variance)
        tstat, p, df = ttest_ind(values[arm], values["control"], alternative="larger", usevar="unequal", value=-1.5)
        g = res.guardrail
        assert g.statistic == approx(tstat)
        assert g.p_value == approx(p)
        assert g.held == (p < 0.05)
    lower = SPEND + '\nrole = "guardrail"\nbetter = "lower"\nmargin = 1.5'
    analysis = sqlstat.run(write_spec(spec_text(lower), "lower.toml"))
    for arm, res in overall(analysis, "spend").items():
        tstat, p, df = ttest_ind(values[arm], values["control"], alternative="smaller", usevar="unequal", value=1.5)
        assert res.guardrail.p_value == approx(p)


def test_verdicts(tmp_path, write_spec):
    make_experiment(tmp_path, units={"control": 2000, "better": 2000, "worse": 2000},
                    spend_mean={"control": 20.0, "better": 23.0, "worse": 20.0},
                    conversion={"control": 0.3, "better": 0.3, "worse": 0.15}, seed=4)
    metrics = [
        'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\nrole = "primary"\nbetter = "higher"',
        'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"\nrole = "guardrail"\n'
        'better = "higher"\nrelative_margin = 0.1',
    ]
    analysis = sqlstat.run(write_spec(spec_text(*metrics)))
    verdicts = {d.arm: d.verdict for d in analysis.verdicts}
    assert verdicts == {"better": "favourable", "worse": "unfavourable"}
    # a broken split makes every verdict invalid
    make_experiment(tmp_path, units={"control": 2000, "better": 2600}, seed=4)
    analysis = sqlstat.run(write_spec(spec_text(*metrics), "srm.toml"))
    assert {d.verdict for d in analysis.decisions} == {"invalid"}


def test_segments_match_per_segment_tests_and_are_adjusted(tmp_path, write_spec):
    rng = np.random.default_rng(9)
    n = 1200
    unit = np.arange(n)
    arm = rng.choice(["control", "treatment"], size=n)
    platform = rng.choice(["web", "app"], size=n)
    region = rng.choice(["n", "s", "e"], size=n)
    write_parquet(tmp_path / "assignments.parquet", {"unit": unit, "arm": arm, "platform": platform, "region": region})
    amount = rng.normal(10, 3, size=n) + (arm == "treatment") * (platform == "app") * 1.0
    write_parquet(tmp_path / "events.parquet", {"unit": unit, "amount": amount, "converted": amount > 11})
    spec = spec_text(SPEND, extra_experiment='segments = ["platform", "region"]')
    analysis = sqlstat.run(write_spec(spec))
    seg = [r for r in analysis.results if r.segment is not None]
    assert len(seg) == 2 + 3
    for r in seg:
        col = platform if r.segment == "platform" else region
        t = amount[(arm == "treatment") & (col == r.segment_value)]
        c = amount[(arm == "control") & (col == r.segment_value)]
        ref = sps.ttest_ind(t, c, equal_var=False)  # reference: scipy on the segment's rows
        assert r.statistic == approx(ref.statistic)
        assert r.p_value == approx(ref.pvalue)
    ref = multipletests([r.p_value for r in seg], method="fdr_bh")[1]  # reference: statsmodels
    assert [r.p_value_adjusted for r in seg] == pytest.approx(list(ref), rel=1e-12)
    assert any("exploratory" in n for n in analysis.notes)
    # the overall row is unchanged by the breakdown
    ref = sps.ttest_ind(amount[arm == "treatment"], amount[arm == "control"], equal_var=False)
    assert overall(analysis, "spend")["treatment"].statistic == approx(ref.statistic)


def test_target_checks_match_scipy(tmp_path, write_spec):
    syn = make_experiment(tmp_path, units={"control": 400, "treatment": 30}, seed=2,
                          conversion={"control": 0.5, "treatment": 0.2}, events_per_unit=1.5)
    metrics = [
        SPEND + "\ntarget = 30.0\nbetter = \"higher\"",
        'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"\ntarget = 0.02',
        'name = "converted_big"\nkind = "proportion"\nvalue = "count_if(converted) > 0"\ntarget = 0.4\nbetter = "lower"',
    ]
    analysis = sqlstat.run(write_spec(spec_text(*metrics)))
    spend = syn.unit_values(lambda r: r["amount"].sum())
    conv = syn.unit_values(lambda r: float(r["converted"].any()))
    checks = {(t.metric, t.arm): t for t in analysis.targets}
    for arm in ("control", "treatment"):
        ref = sps.ttest_1samp(spend[arm], 30.0, alternative="greater")  # reference: scipy
        t = checks[("spend", arm)]
        assert t.test == "one_sample_t" and t.p_value == approx(ref.pvalue) and t.statistic == approx(ref.statistic)
        k, n = int(conv[arm].sum()), conv[arm].size
        ref = sps.binomtest(k, n, 0.02)  # reference: scipy, exact (n * 0.02 < 10)
        t = checks[("converted", arm)]
        assert t.test == "binomial_exact" and t.p_value == approx(ref.pvalue)
    from statsmodels.stats.proportion import proportions_ztest

    k, n = int(conv["control"].sum()), conv["control"].size
    z, p = proportions_ztest(k, n, value=0.4, alternative="smaller", prop_var=0.4)  # reference: statsmodels
    t = checks[("converted_big", "control")]
    assert t.test == "one_sample_z" and t.statistic == approx(z) and t.p_value == approx(p)


def test_newcombe_worked_example_recalled_from_memory():
    """Newcombe (1998), Table II, example 56/70 vs 48/80: the hybrid score interval for the
    difference is 0.0524 to 0.3339 (values recalled from memory, published to 4 decimals).
    Cross-checked against statsmodels' implementation."""
    from statsmodels.stats.proportion import confint_proportions_2indep

    lo, hi = st.newcombe_interval(56, 70, 48, 80, alpha=0.05)
    assert lo == pytest.approx(0.0524, abs=5e-5) and hi == pytest.approx(0.3339, abs=5e-5)
    ref = confint_proportions_2indep(56, 70, 48, 80, method="newcomb", compare="diff")  # reference: statsmodels
    assert (lo, hi) == pytest.approx(ref, rel=1e-12)


def test_pre_period_from_the_events_source_shares_one_scan(tmp_path, write_spec):
    """Same numbers whether the pre-period rows are read in the events scan or separately;
    and DuckDB's plan reads each source file once."""
    import duckdb

    rng = np.random.default_rng(17)
    n = 600
    unit = np.arange(n)
    arm = rng.choice(["control", "treatment"], size=n)
    write_parquet(tmp_path / "assignments.parquet", {"unit": unit, "arm": arm})
    ev_unit = rng.choice(unit, size=4000)
    day = np.datetime64("2026-06-01") + rng.integers(0, 60, size=4000).astype("timedelta64[D]")
    write_parquet(tmp_path / "events.parquet", {"unit": ev_unit, "day": day, "amount": rng.gamma(2, 3, size=4000),
                                                "converted": rng.random(4000) < 0.3})
    metrics = ['name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncuped = true\nmissing = "exclude"',
               'name = "buyers"\nkind = "proportion"\nvalue = "count(*) >= 2"\ncuped = true']
    extra = "\nwhere = \"day >= DATE '2026-07-01'\"\n"
    pre = "\n[pre_period]\nsource = \"{src}\"\nunit = \"unit\"\ntime = \"day\"\nstart = 2026-06-01\nend = 2026-07-01\n"
    base = spec_text(*metrics).replace('source = "events.parquet"\nunit = "unit"\n', 'source = "events.parquet"\nunit = "unit"' + extra)
    assert "where = " in base
    shared = write_spec(base + pre.format(src="events.parquet"), "shared.toml")
    separate = write_spec(base + pre.format(src="./events.parquet"), "separate.toml")
    a, b = sqlstat.run(shared), sqlstat.run(separate)
    for ra, rb in zip(a.results, b.results):
        assert (ra.metric, ra.arm) == (rb.metric, rb.arm)
        for field in ("estimate", "std_error", "theta", "p_value"):
            assert getattr(ra, field) == pytest.approx(getattr(rb, field), rel=1e-12)
        assert ra.treatment.n == rb.treatment.n
    plan = duckdb.sql("EXPLAIN " + sqlstat.sql(shared)).fetchall()[0][1]
    assert plan.count("READ_PARQUET") == 2  # assignments once, events once
    plan = duckdb.sql("EXPLAIN " + sqlstat.sql(separate)).fetchall()[0][1]
    assert plan.count("READ_PARQUET") == 3


def test_demo_query_reads_each_source_file_once():
    """Five metrics, CUPED, a ratio and a segment breakdown: still one scan per file."""
    import duckdb

    from .conftest import PROJECT

    spec = PROJECT / "sample_data" / "return_reminders.toml"
    for readout in (False, True):  # the readout columns work on the result rows only
        plan = duckdb.sql("EXPLAIN " + sqlstat.sql(spec, readout=readout)).fetchall()[0][1]
        assert plan.count("READ_PARQUET") == 2, readout


# ------------------------------------------------------------------ one variance convention per result


def _delta_lift_se(grad: np.ndarray, cov: np.ndarray) -> float:
    """Delta method, independently: sqrt(g' Sigma g) for the gradient g of the lift."""
    return float(np.sqrt(grad @ cov @ grad))


def _independent_lift(test: str, t: np.ndarray, c: np.ndarray, sigma: float | None = None) -> tuple[float, float]:
    """Relative lift T/C - 1 and its delta-method standard error from raw unit values (numpy),
    with the variance of each arm's mean in the convention of the difference's test
    (docs/methods.md): p(1 - p)/n for proportions, the pooled variance for Student's t,
    sigma^2/n for a known sigma, the sample variance / n for Welch's t."""
    T, C = t.mean(), c.mean()
    if test == "two_proportion_z":
        vt, vc = np.var(t) / t.size, np.var(c) / c.size  # p(1 - p)/n: ddof = 0 on 0/1 values
    elif test == "student_t":
        pooled = ((t.size - 1) * np.var(t, ddof=1) + (c.size - 1) * np.var(c, ddof=1)) / (t.size + c.size - 2)
        vt, vc = pooled / t.size, pooled / c.size
    elif test == "z_known_sigma":
        vt, vc = sigma**2 / t.size, sigma**2 / c.size
    else:
        vt, vc = np.var(t, ddof=1) / t.size, np.var(c, ddof=1) / c.size
    grad = np.array([1 / C, -T / C**2])
    return T / C - 1, _delta_lift_se(grad, np.diag([vt, vc]))


@pytest.mark.parametrize("metric, test, sigma", [
    ('name = "m"\nkind = "proportion"\nvalue = "count_if(converted) > 0"', "two_proportion_z", None),
    ('name = "m"\nkind = "mean"\nvalue = "sum(amount)"', "welch_t", None),
    ('name = "m"\nkind = "mean"\nvalue = "sum(amount)"\nequal_variance = true', "student_t", None),
    ('name = "m"\nkind = "mean"\nvalue = "sum(amount)"\nsigma = 30.0', "z_known_sigma", 30.0),
])
def test_lift_and_relative_guardrail_use_the_test_variance_convention(tmp_path, write_spec, metric, test, sigma):
    syn = make_experiment(tmp_path, units={"control": 900, "treatment": 700}, conversion={"control": 0.3, "treatment": 0.34},
                          spend_mean={"control": 20.0, "treatment": 21.0}, spend_sd={"control": 9.0, "treatment": 13.0},
                          seed=31)
    guard = '\nrole = "guardrail"\nbetter = "higher"\nrelative_margin = 0.05'
    res = overall(sqlstat.run(write_spec(spec_text(metric + guard))), "m")["treatment"]
    fn = (lambda r: float(r["converted"].any())) if test == "two_proportion_z" else (lambda r: r["amount"].sum())
    values = syn.unit_values(fn)
    t, c = values["treatment"], values["control"]
    lift, se = _independent_lift(test, t, c, sigma)
    assert res.test == test
    assert res.relative_lift == approx(lift)
    assert res.lift_std_error == approx(se)
    z = sps.norm.ppf(0.975)  # reference: scipy.stats.norm
    assert res.lift_ci_low == approx(lift - z * se) and res.lift_ci_high == approx(lift + z * se)
    g = res.guardrail
    assert g.statistic == approx((lift + 0.05) / se)
    crit = sps.norm.ppf(0.95) if res.df is None else sps.t.ppf(0.95, res.df)  # reference: scipy.stats
    assert g.bound == approx(lift - crit * se)


def test_cuped_lift_uses_the_covariance_of_the_adjusted_difference_with_control(cuped, write_spec):
    metric = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncovariate = "sum(amount)"'
    analysis = sqlstat.run(write_spec(spec_text(metric) + PRE))
    for arm, res in overall(analysis, "spend").items():
        t, c = cuped[cuped["arm"] == arm], cuped[cuped["arm"] == "control"]
        # slopes per arm (numpy), held fixed in the delta method; xbar = pooled covariate mean
        bt = np.cov(t["y"], t["x"], ddof=1)[0, 1] / np.var(t["x"], ddof=1)
        bc = np.cov(c["y"], c["x"], ddof=1)[0, 1] / np.var(c["x"], ddof=1)
        nt, nc = len(t), len(c)
        xbar = (t["x"].sum() + c["x"].sum()) / (nt + nc)
        # L = D / C, D = (yt - bt (xt - xbar)) - (yc - bc (xc - xbar)), C = yc; variables (yt, xt, yc, xc)
        D = (t["y"].mean() - bt * (t["x"].mean() - xbar)) - (c["y"].mean() - bc * (c["x"].mean() - xbar))
        C = c["y"].mean()
        dxt = -bt + (bt - bc) * nt / (nt + nc)  # dD/dxt through xbar
        dxc = bc + (bt - bc) * nc / (nt + nc)
        g_d = np.array([1.0, dxt, -1.0, dxc])  # gradient of D
        grad = g_d / C + np.array([0.0, 0.0, -D / C**2, 0.0])
        cov = np.zeros((4, 4))
        cov[:2, :2] = np.cov(t["y"], t["x"], ddof=1) / len(t)
        cov[2:, 2:] = np.cov(c["y"], c["x"], ddof=1) / len(c)
        assert res.relative_lift == approx(D / C)
        # v_D is the estimate's own variance (slopes estimated); v_C and cov(D, C) hold the slopes fixed
        v_d_fixed = float(g_d @ cov @ g_d)
        expected = grad @ cov @ grad - v_d_fixed / C**2 + res.std_error**2 / C**2
        assert res.lift_std_error == approx(np.sqrt(expected))


# ------------------------------------------------------------------ relative-lift coverage with few events


def test_relative_lift_interval_holds_its_level_on_fisher_rows(tmp_path):
    """Seeded simulation, end to end through sqlstat (benchmarks/lift_coverage.py, which has
    the full grid with 2,000 replications per cell; figures in docs/methods.md). In cells
    where sqlstat picks Fisher's exact test, the 95% relative-lift interval must cover the
    true lift at least 95% of the time: the Clopper-Pearson interval of the simulated
    coverage (scipy.stats.binomtest) must reach 0.95. The delta-method interval these rows
    carried before (none at all when control had no events) fails this check."""
    from .conftest import load_benchmark

    lc = load_benchmark("lift_coverage")
    cells = [(30, 0.02, 1.0), (50, 0.05, 1.0), (50, 0.05, 2.0), (100, 0.02, 2.0), (200, 0.02, 1.0), (500, 0.005, 2.0)]
    for i, (n, rate, ratio) in enumerate(cells):
        cell = lc.simulate(n, rate, ratio, reps=300, seed=100 + i, folder=tmp_path)
        print(f"n={n} rate={rate} ratio={ratio}: coverage {cell.coverage:.3f} [{cell.ci_low:.3f}, {cell.ci_high:.3f}]")
        assert cell.fisher_rows >= 0.95 * cell.reps  # the cell really is in Fisher's region
        assert cell.ci_high >= 0.95, (n, rate, ratio, cell)


def test_cuped_interval_coverage_at_small_and_large_sizes(tmp_path):
    """Seeded simulation, end to end through sqlstat (benchmarks/cuped_coverage.py has the
    full run; figures in docs/methods.md): at 200 and 20,000 units per arm, with a slope that
    differs between arms, the Clopper-Pearson interval (scipy.stats.binomtest) of the share
    of 95% CUPED intervals covering the true effect contains 0.95."""
    from .conftest import load_benchmark

    cc = load_benchmark("cuped_coverage")
    for n, reps, seed in [(200, 400, 7), (20_000, 50, 8)]:
        cell = cc.simulate(n, reps, seed, tmp_path)
        print(f"n={n}: coverage {cell.coverage:.3f} [{cell.ci_low:.3f}, {cell.ci_high:.3f}]")
        assert cell.ci_low <= 0.95 <= cell.ci_high, cell
        assert cell.mean_reduction > 0.3  # the covariate is informative: CUPED is doing work

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


def test_cuped_difference_equals_regression_coefficient(cuped, write_spec):
    metric = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncovariate = "sum(amount)"'
    analysis = sqlstat.run(write_spec(spec_text(metric) + PRE))
    for arm, res in overall(analysis, "spend").items():
        sub = cuped[cuped["arm"].isin([arm, "control"])]
        treat = (sub["arm"] == arm).astype(float)
        xc = sub["x"] - sub["x"].mean()
        # reference: statsmodels OLS y ~ treatment + centred covariate
        fit = sm.OLS(sub["y"].to_numpy(), sm.add_constant(np.column_stack([treat, xc]))).fit()
        assert res.test == "cuped_welch_t"
        assert res.estimate == approx(fit.params[1])
        assert res.theta == approx(fit.params[2])
        # variance reduction, recomputed with numpy from the raw values
        t, c = sub[sub["arm"] == arm], sub[sub["arm"] == "control"]
        th = fit.params[2]
        adj = np.var(t["y"] - th * t["x"], ddof=1) / len(t) + np.var(c["y"] - th * c["x"], ddof=1) / len(c)
        raw = np.var(t["y"], ddof=1) / len(t) + np.var(c["y"], ddof=1) / len(c)
        assert res.variance_reduction == approx(1 - adj / raw)
        assert res.std_error == approx(np.sqrt(adj))
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

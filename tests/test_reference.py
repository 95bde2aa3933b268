"""Every statistic, p-value and interval against independent libraries on the raw rows.

References (named at each check): scipy.stats.ttest_ind (Welch and pooled),
scipy.stats.fisher_exact, statsmodels' proportions_ztest and confint_proportions_2indep,
scipy.stats.chisquare, scipy.stats.norm (textbook z formula). Tolerance: 1e-9 relative,
1e-12 absolute near zero.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats as sps
from statsmodels.stats.proportion import confint_proportions_2indep, proportions_ztest

import sqlstat
from sqlstat import stats as st

from .conftest import make_experiment, spec_text, write_parquet

REL, ABS = 1e-9, 1e-12


def approx(x):
    return pytest.approx(x, rel=REL, abs=ABS)


def by_arm(analysis, metric):
    return {r.arm: r for r in analysis.results if r.metric == metric}


@pytest.fixture
def experiment(tmp_path):
    return make_experiment(
        tmp_path,
        units={"control": 500, "treatment": 530, "variant_b": 480},
        conversion={"control": 0.30, "treatment": 0.36, "variant_b": 0.29},
        spend_mean={"control": 20.0, "treatment": 21.5, "variant_b": 20.0},
        spend_sd={"control": 8.0, "treatment": 11.0, "variant_b": 6.0},
    )


SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
CONVERTED = 'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"'


@pytest.mark.parametrize("equal_var", [False, True])
def test_t_tests_match_scipy_ttest_ind(experiment, write_spec, equal_var):
    metric = SPEND + ("\nequal_variance = true" if equal_var else "")
    analysis = sqlstat.run(write_spec(spec_text(metric)))
    values = experiment.unit_values(lambda r: r["amount"].sum())
    for arm, res in by_arm(analysis, "spend").items():
        ref = sps.ttest_ind(values[arm], values["control"], equal_var=equal_var)  # reference: scipy
        ci = ref.confidence_interval(0.95)
        assert res.test == ("student_t" if equal_var else "welch_t")
        assert res.statistic == approx(ref.statistic)
        assert res.df == approx(ref.df)
        assert res.p_value == approx(ref.pvalue)
        assert res.ci_low == approx(ci.low)
        assert res.ci_high == approx(ci.high)
        assert res.estimate == approx(values[arm].mean() - values["control"].mean())
        assert res.treatment.variance == approx(np.var(values[arm], ddof=1))
        assert res.treatment.n == values[arm].size


def test_two_proportion_z_matches_statsmodels(experiment, write_spec):
    analysis = sqlstat.run(write_spec(spec_text(CONVERTED, extra_experiment="alpha = 0.1")))
    values = experiment.unit_values(lambda r: float(r["converted"].any()))
    for arm, res in by_arm(analysis, "converted").items():
        x = [int(values[arm].sum()), int(values["control"].sum())]
        n = [values[arm].size, values["control"].size]
        z, p = proportions_ztest(x, n)  # reference: statsmodels, pooled variance under H0
        lo, hi = confint_proportions_2indep(x[0], n[0], x[1], n[1], method="wald", compare="diff", alpha=0.1)
        assert res.test == "two_proportion_z"
        assert res.statistic == approx(z)
        assert res.p_value == approx(p)
        assert res.ci_low == approx(lo) and res.ci_high == approx(hi)
        assert res.significant == (p < 0.1)


def test_known_sigma_z_matches_textbook_formula(experiment, write_spec):
    analysis = sqlstat.run(write_spec(spec_text(SPEND + "\nsigma = 12.5")))
    values = experiment.unit_values(lambda r: r["amount"].sum())
    for arm, res in by_arm(analysis, "spend").items():
        # reference: z = diff / (sigma sqrt(1/n1 + 1/n2)), p from scipy.stats.norm
        t, c = values[arm], values["control"]
        se = 12.5 * np.sqrt(1 / t.size + 1 / c.size)
        z = (t.mean() - c.mean()) / se
        assert res.test == "z_known_sigma"
        assert res.df is None
        assert res.statistic == approx(z)
        assert res.p_value == approx(2 * sps.norm.sf(abs(z)))
        q = sps.norm.ppf(0.975)
        assert res.ci_low == approx(t.mean() - c.mean() - q * se)


def test_fisher_exact_and_newcombe_interval_for_few_events(tmp_path, write_spec):
    from statsmodels.stats.proportion import confint_proportions_2indep

    syn = make_experiment(tmp_path, units={"control": 60, "treatment": 55},
                          conversion={"control": 0.04, "treatment": 0.12}, events_per_unit=1.0, seed=7)
    analysis = sqlstat.run(write_spec(spec_text(CONVERTED)))
    values = syn.unit_values(lambda r: float(r["converted"].any()))
    res = by_arm(analysis, "converted")["treatment"]
    xt, nt = int(values["treatment"].sum()), values["treatment"].size
    xc, nc = int(values["control"].sum()), values["control"].size
    assert min(xt, xc) < 10  # the data really is small enough for the rule to apply
    ref = sps.fisher_exact([[xt, nt - xt], [xc, nc - xc]])  # reference: scipy
    lo, hi = confint_proportions_2indep(xt, nt, xc, nc, method="newcomb", compare="diff")  # reference: statsmodels
    assert res.test == "fisher_exact"
    assert res.p_value == approx(ref.pvalue)
    assert res.ci_low == approx(lo) and res.ci_high == approx(hi)
    assert "10" in res.reason


def test_fisher_row_statistic_is_the_conditional_odds_ratio_and_says_so(tmp_path, write_spec):
    """The Fisher row's statistic is the conditional maximum-likelihood odds ratio with its
    exact interval (reference: scipy.stats.contingency.odds_ratio(kind="conditional")), and
    every output form says what it is."""
    import json

    from scipy.stats.contingency import odds_ratio

    from sqlstat import report

    syn = make_experiment(tmp_path, units={"control": 60, "treatment": 55},
                          conversion={"control": 0.08, "treatment": 0.12}, events_per_unit=1.0, seed=7)
    analysis = sqlstat.run(write_spec(spec_text(CONVERTED, SPEND, extra_experiment="alpha = 0.1")))
    values = syn.unit_values(lambda r: float(r["converted"].any()))
    xt, nt = int(values["treatment"].sum()), values["treatment"].size
    xc, nc = int(values["control"].sum()), values["control"].size
    ref = odds_ratio([[xt, nt - xt], [xc, nc - xc]], kind="conditional")  # reference: scipy
    ci = ref.confidence_interval(confidence_level=0.9)
    res = by_arm(analysis, "converted")["treatment"]
    assert res.test == "fisher_exact" and res.statistic_name == "odds_ratio"
    assert res.statistic == approx(ref.statistic)
    assert (res.odds_ratio_ci_low, res.odds_ratio_ci_high) == (approx(ci.low), approx(ci.high))
    assert xc > 0 and np.isfinite(ci.high)
    rows = {r["metric"]: r for r in json.loads(report.to_json(analysis))["results"]}
    assert "conditional maximum-likelihood" in rows["converted"]["statistic_label"]
    assert rows["converted"]["odds_ratio"] == {"estimate": approx(ref.statistic), "method": "conditional_mle",
                                               "ci_low": approx(ci.low),
                                               "ci_high": approx(ci.high) if np.isfinite(ci.high) else None}
    assert rows["spend"]["statistic_label"] == "t statistic" and rows["spend"]["odds_ratio"] is None
    import csv
    import io

    csv_rows = {r["metric"]: r for r in csv.DictReader(io.StringIO(report.to_csv(analysis)))}
    assert "conditional maximum-likelihood" in csv_rows["converted"]["statistic_label"]
    text = report.to_text(analysis)
    assert "OR=" in text and "odds ratio (conditional maximum-likelihood estimate" in text


def test_sample_ratio_check_matches_scipy_chisquare(experiment, write_spec):
    weights = "weights = { control = 0.4, treatment = 0.4, variant_b = 0.2 }"
    analysis = sqlstat.run(write_spec(spec_text(SPEND, extra_experiment=weights)))
    srm = analysis.sample_ratio
    obs = [500, 530, 480]
    total = sum(obs)
    ref = sps.chisquare(obs, f_exp=[total * 0.4, total * 0.4, total * 0.2])  # reference: scipy
    assert srm.df == 2
    assert srm.statistic == approx(ref.statistic)
    assert srm.p_value == approx(ref.pvalue)
    assert srm.mismatch is bool(ref.pvalue < 0.001)
    # equal split by default
    analysis = sqlstat.run(write_spec(spec_text(SPEND)))
    ref = sps.chisquare(obs)
    assert analysis.sample_ratio.p_value == approx(ref.pvalue)


def test_units_without_events_count_as_zero_and_conflicts_are_excluded(tmp_path, write_spec):
    # three units with no events, and unit 7 assigned to both arms
    write_parquet(tmp_path / "assignments.parquet", {
        "unit": np.array([1, 2, 3, 4, 5, 6, 7, 7, 8, 9]),
        "arm": np.array(["control"] * 4 + ["treatment"] * 2 + ["control", "treatment"] + ["treatment"] * 2),
    })
    write_parquet(tmp_path / "events.parquet", {
        "unit": np.array([1, 1, 2, 5, 7, 8, 8, 8]),
        "amount": np.array([1.0, 2.0, 4.0, 3.0, 100.0, 1.0, 1.0, 2.0]),
        "converted": np.array([True, False, False, True, True, True, False, False]),
    })
    analysis = sqlstat.run(write_spec(spec_text(SPEND)))
    res = by_arm(analysis, "spend")["treatment"]
    control = np.array([3.0, 4.0, 0.0, 0.0])  # units 1-4; 3 and 4 have no events
    treatment = np.array([3.0, 0.0, 4.0, 0.0])  # units 5, 6, 8, 9
    ref = sps.ttest_ind(treatment, control, equal_var=False)  # reference: scipy
    assert analysis.excluded_units == 1
    assert dict(analysis.arms) == {"control": 4, "treatment": 4}
    assert res.statistic == approx(ref.statistic)
    assert res.p_value == approx(ref.pvalue)


# ------------------------------------------------------------------ common practice, marked as such


def test_t_p_values_approach_z_as_df_grows():
    """Common practice: with many units the t and z tests agree (t -> normal as df -> inf)."""
    z_p = 2 * sps.norm.sf(2.0)  # reference: scipy.stats.norm
    gaps = [abs(st.p_value(2.0, df) - z_p) for df in (5, 30, 300, 3000, 1e6)]
    assert gaps == sorted(gaps, reverse=True)  # heavier tails at small df, shrinking
    assert gaps[-1] < 1e-6
    assert st.p_value(2.0, 5) > z_p  # the t distribution has heavier tails


@pytest.mark.parametrize("successes, expected", [(9, "fisher_exact"), (10, "two_proportion_z")])
def test_ten_successes_rule_switches_the_test(successes, expected):
    """Common practice: at least 10 successes and 10 failures per arm for the z test."""
    from sqlstat.model import Metric
    from sqlglot import exp

    m = Metric(0, "p", "proportion", exp.column("x"), "x")
    big = st.ArmSummary(n=500, mean=0.2, variance=0.16, total=100)
    small = st.ArmSummary(n=200, mean=successes / 200, variance=0.0, total=successes)
    assert st.choose_test(m, small, big)[0] == expected
    failures_few = st.ArmSummary(n=200, mean=(200 - successes) / 200, variance=0.0, total=200 - successes)
    assert st.choose_test(m, failures_few, big)[0] == expected


@pytest.mark.parametrize("n, noted", [(29, True), (30, False)])
def test_thirty_units_rule_adds_normality_note(tmp_path, write_spec, n, noted):
    """Common practice: below 30 units per arm the t test leans on normal data."""
    make_experiment(tmp_path, units={"control": n, "treatment": 40}, seed=3)
    analysis = sqlstat.run(write_spec(spec_text(SPEND)))
    res = by_arm(analysis, "spend")["treatment"]
    assert res.test == "welch_t"
    assert any("fewer than 30" in note for note in res.notes) is noted


def test_fisher_rows_carry_the_score_interval_for_the_relative_lift(tmp_path, write_spec):
    """With few events the relative lift's interval is the score interval for the ratio of
    the two rates, minus 1 (reference: statsmodels confint_proportions_2indep,
    compare="ratio", method="score", which applies Miettinen and Nurminen's correction)."""
    from statsmodels.stats.proportion import confint_proportions_2indep

    syn = make_experiment(tmp_path, units={"control": 60, "treatment": 55, "variant_b": 50},
                          conversion={"control": 0.04, "treatment": 0.12, "variant_b": 0.07},
                          events_per_unit=1.0, seed=7)
    analysis = sqlstat.run(write_spec(spec_text(CONVERTED)))
    values = syn.unit_values(lambda r: float(r["converted"].any()))
    xc, nc = int(values["control"].sum()), values["control"].size
    for arm, res in by_arm(analysis, "converted").items():
        xt, nt = int(values[arm].sum()), values[arm].size
        assert res.test == "fisher_exact" and xt > 0 and xc > 0
        lo, hi = confint_proportions_2indep(xt, nt, xc, nc, compare="ratio", method="score")  # reference: statsmodels
        assert res.lift_ci_low == approx(lo - 1) and res.lift_ci_high == approx(hi - 1)
        assert res.relative_lift == approx((xt / nt) / (xc / nc) - 1)
        assert any("score interval for the ratio" in n for n in res.notes)
    # the function itself on more tables, against the same reference
    for xt, nt, xc, nc in [(3, 50, 1, 50), (9, 500, 3, 480), (1, 30, 1, 30), (0, 40, 3, 40), (4, 30, 0, 30)]:
        lo, hi = confint_proportions_2indep(xt, nt, xc, nc, compare="ratio", method="score")  # reference: statsmodels
        got = st.ratio_score_interval(xt, nt, xc, nc, 0.05)
        assert got[0] == pytest.approx(max(lo, 0.0), rel=REL, abs=1e-12)
        assert got[1] == approx(hi) if np.isfinite(hi) else got[1] == np.inf


def test_fisher_row_without_control_events_has_an_open_lift_interval(tmp_path, write_spec):
    """No events in control: the ratio is bounded below only; JSON shows null for the open end."""
    import json

    from sqlstat import report

    write_parquet(tmp_path / "assignments.parquet", {"unit": np.arange(60), "arm": np.array(["control", "treatment"] * 30)})
    write_parquet(tmp_path / "events.parquet", {"unit": np.arange(60), "amount": np.ones(60),
                                                "converted": (np.arange(60) % 2 == 1) & (np.arange(60) < 12)})
    analysis = sqlstat.run(write_spec(spec_text(CONVERTED)))
    res = by_arm(analysis, "converted")["treatment"]
    assert res.test == "fisher_exact"
    lo, hi = confint_proportions_2indep(6, 30, 0, 30, compare="ratio", method="score")  # reference: statsmodels
    assert res.lift_ci_low == approx(lo - 1) and res.lift_ci_high == np.inf == hi
    assert any("no upper end" in n for n in res.notes)
    row = [r for r in json.loads(report.to_json(analysis))["results"] if r["metric"] == "converted"][0]
    assert row["lift_ci_high"] is None and row["lift_ci_low"] == approx(lo - 1)


@pytest.mark.parametrize("better", ["higher", "lower"])
def test_fisher_row_relative_guardrail_is_the_score_test_for_the_ratio(tmp_path, write_spec, better):
    """With few events a relative guardrail margin is tested on the ratio of the rates with
    the score statistic behind the lift interval (reference: statsmodels
    test_proportions_2indep(compare="ratio", method="score") against 1 -/+ margin, one-sided;
    the bound is the one-sided end of statsmodels' score interval at 1 - 2 alpha)."""
    from statsmodels.stats.proportion import test_proportions_2indep

    syn = make_experiment(tmp_path, units={"control": 60, "treatment": 55},
                          conversion={"control": 0.08, "treatment": 0.12}, events_per_unit=1.0, seed=7)
    guard = f'\nrole = "guardrail"\nbetter = "{better}"\nrelative_margin = 0.3'
    res = by_arm(sqlstat.run(write_spec(spec_text(CONVERTED + guard))), "converted")["treatment"]
    values = syn.unit_values(lambda r: float(r["converted"].any()))
    xt, nt = int(values["treatment"].sum()), values["treatment"].size
    xc, nc = int(values["control"].sum()), values["control"].size
    assert res.test == "fisher_exact" and xt > 0 and xc > 0
    r0, alt = (0.7, "larger") if better == "higher" else (1.3, "smaller")
    ref = test_proportions_2indep(xt, nt, xc, nc, value=r0, compare="ratio", method="score",
                                  alternative=alt)  # reference: statsmodels
    lo, hi = confint_proportions_2indep(xt, nt, xc, nc, compare="ratio", method="score", alpha=0.1)
    g = res.guardrail
    assert g.p_value == approx(ref.pvalue)
    assert g.statistic == approx(ref.statistic if better == "higher" else -ref.statistic)
    assert g.bound == approx((lo if better == "higher" else hi) - 1)
    assert g.held == (ref.pvalue < 0.05)

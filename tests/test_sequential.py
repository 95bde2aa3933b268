"""Always-valid inference (mixture SPRT, Johari, Koomen, Pekelis and Walsh 2017/2022).

Checks: (1) its purpose, by simulation: under no true effect, with a look every day for
30 days, the share of A/A experiments that ever cross alpha stays at or below alpha
(within simulation error), while daily looks at fixed-horizon p-values exceed it
clearly; (2) the closed form against a direct numerical mixture of likelihood ratios
(scipy.integrate.quad over the normal mixing density); (3) the SQL columns equal the
Python layer's on the same data.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate
from scipy import stats as sps

import sqlstat
from sqlstat import stats as st

from .conftest import make_experiment, spec_text

ALPHA = 0.05


def _looks(rng, sims: int, days: int, per_day: int):
    """Cumulative difference in means and its standard error after each day, A/A data."""
    t = rng.normal(0.0, 1.0, size=(sims, days, per_day))
    c = rng.normal(0.0, 1.0, size=(sims, days, per_day))
    n = per_day * np.arange(1, days + 1)
    st_sum, sc_sum = t.sum(axis=2).cumsum(axis=1), c.sum(axis=2).cumsum(axis=1)
    st_sq, sc_sq = (t**2).sum(axis=2).cumsum(axis=1), (c**2).sum(axis=2).cumsum(axis=1)
    mt, mc = st_sum / n, sc_sum / n
    vt = (st_sq - n * mt**2) / (n - 1)
    vc = (sc_sq - n * mc**2) / (n - 1)
    return mt - mc, np.sqrt(vt / n + vc / n)


def test_always_valid_p_value_controls_false_positives_under_daily_looks():
    rng = np.random.default_rng(2026)
    sims, days = 4000, 30
    diff, se = _looks(rng, sims, days, per_day=40)
    fixed_p = 2 * sps.norm.sf(np.abs(diff / se))  # reference: scipy.stats.norm
    ever_fixed = (fixed_p < ALPHA).any(axis=1).mean()
    av = np.vectorize(lambda d, s: st.msprt(d, s, 0.1, ALPHA)[0])(diff, se)
    ever_av = (np.minimum.accumulate(av, axis=1) < ALPHA).any(axis=1).mean()
    sim_error = 3 * math.sqrt(ALPHA * (1 - ALPHA) / sims)  # three binomial standard errors
    print(f"share ever significant over 30 daily looks: fixed-horizon {ever_fixed:.3f}, always-valid {ever_av:.3f}")
    assert ever_av <= ALPHA + sim_error
    assert ever_fixed > 2 * ALPHA  # daily peeking at fixed-horizon p-values clearly exceeds alpha


def test_closed_form_equals_numerical_mixture():
    for est, se, tau in [(0.3, 0.2, 0.5), (-1.0, 0.4, 0.1), (0.01, 0.05, 2.0)]:
        # reference: integrate the likelihood ratio N(est; theta, se) / N(est; 0, se) over N(0, tau)
        lr = integrate.quad(
            lambda th: sps.norm.pdf(est, th, se) / sps.norm.pdf(est, 0, se) * sps.norm.pdf(th, 0, tau),
            -np.inf, np.inf, epsabs=0, epsrel=1e-12,
        )[0]
        p, lo, hi = st.msprt(est, se, tau, ALPHA)
        assert p == pytest.approx(min(1.0, 1 / lr), rel=1e-9)
        # the sequence's ends are where the mixture ratio against theta reaches 1/alpha
        for edge in (lo, hi):
            lr_edge = integrate.quad(
                lambda th: sps.norm.pdf(est, th, se) / sps.norm.pdf(est, edge, se) * sps.norm.pdf(th - edge, 0, tau),
                -np.inf, np.inf, epsabs=0, epsrel=1e-12,
            )[0]
            assert lr_edge == pytest.approx(1 / ALPHA, rel=1e-8)


def test_sql_always_valid_columns_match_python(tmp_path, write_spec):
    make_experiment(tmp_path, units={"control": 800, "treatment": 820},
                    spend_mean={"control": 20.0, "treatment": 21.0}, seed=12)
    spec = spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
                     'name = "conv"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
                     extra_experiment="always_valid = true\nfastest_detected_lift = 0.1")
    path = write_spec(spec)
    import duckdb

    con = duckdb.connect()
    rows = con.execute(sqlstat.sql(path)).fetchall()
    cols = [c[0] for c in con.description]
    analysis = sqlstat.run(path)
    by = {(r.metric, r.arm): r for r in analysis.results}
    checked = 0
    for row in rows:
        row = dict(zip(cols, row))
        if row["is_control"]:
            continue
        r = by[(row["metric"], row["arm"])]
        assert row["always_valid_p_value"] == pytest.approx(r.always_valid_p_value, rel=1e-12)
        assert row["sequence_low"] == pytest.approx(r.sequence_low, rel=1e-12)
        assert row["sequence_high"] == pytest.approx(r.sequence_high, rel=1e-12)
        checked += 1
    assert checked == 2


def test_always_valid_power_at_the_planned_size_and_the_tuning_value():
    """Seeded simulation (benchmarks/sequential_power.py, full run in docs/methods.md): an
    experiment sized by sqlstat's planner for 80% fixed-horizon power, looked at daily.
    The fixed-horizon test read once has about 80% power (Clopper-Pearson interval via
    scipy.stats.binomtest contains 0.8); the always-valid p-value has clearly less at the
    planned size, catches up with more data, and depends on the tuning value (tuned near the
    true effect it has much more power than tuned far below it)."""
    from .conftest import load_benchmark

    sp = load_benchmark("sequential_power")
    sims = 1500
    near, far = sp.simulate(0.05, sims, 11), sp.simulate(0.01, sims, 12)
    print(f"fixed {near.fixed_power:.3f}; always-valid near {near.av_power}, far {far.av_power}")
    ci = sps.binomtest(round(near.fixed_power * sims), sims).proportion_ci(0.95, method="exact")
    assert ci.low <= 0.8 <= ci.high
    assert near.av_power[0] < near.fixed_power - 0.15  # the price of looking at any time
    assert near.av_power[2] > 0.9  # more data buys the power back
    assert near.av_power[0] > far.av_power[0] + 0.2  # the tuning value matters

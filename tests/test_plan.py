"""Planning: sample sizes and detectable effects against statsmodels and the closed form.

References: statsmodels TTestIndPower and NormalIndPower (solve_power), the closed-form
two-proportion sample-size formula (Fleiss, Levin and Paik, 2003) evaluated here with
scipy.stats.norm, and numpy on the raw pre-period rows for the baseline query.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats as sps
from statsmodels.stats.power import NormalIndPower, TTestIndPower
from typer.testing import CliRunner

import sqlstat
from sqlstat import power as pw
from sqlstat.cli import app

from .conftest import spec_text, write_parquet


@pytest.mark.parametrize("d", [0.05, 0.2, 0.8])
@pytest.mark.parametrize("alpha, power", [(0.05, 0.8), (0.01, 0.9)])
def test_sample_size_for_means_matches_statsmodels(d, alpha, power):
    ref_t = TTestIndPower().solve_power(effect_size=d, alpha=alpha, power=power, ratio=1.0)  # reference
    ref_z = NormalIndPower().solve_power(effect_size=d, alpha=alpha, power=power, ratio=1.0)  # reference
    assert pw.sample_size_mean(d * 3.0, 3.0, alpha, power, t=True) == pytest.approx(ref_t, rel=1e-6)
    assert pw.sample_size_mean(d * 3.0, 3.0, alpha, power, t=False) == pytest.approx(ref_z, rel=1e-6)


@pytest.mark.parametrize("n", [50, 400, 10_000])
def test_mde_for_means_matches_statsmodels(n):
    d = pw.mde_mean(n, 2.0, 0.05, 0.8) / 2.0
    # reference: statsmodels' power function gives exactly the requested power at our effect
    # (its solve_power stops at a looser tolerance, about 3e-6 relative, so compare powers)
    assert TTestIndPower().power(effect_size=d, nobs1=n, alpha=0.05, ratio=1.0) == pytest.approx(0.8, abs=1e-9)
    ref = TTestIndPower().solve_power(nobs1=n, alpha=0.05, power=0.8, ratio=1.0)
    assert d == pytest.approx(ref, rel=1e-4)


@pytest.mark.parametrize("p1, p2", [(0.1, 0.12), (0.5, 0.45), (0.02, 0.03)])
def test_sample_size_for_proportions_matches_closed_form(p1, p2):
    za, zb = sps.norm.ppf(0.975), sps.norm.ppf(0.8)  # closed form, evaluated independently
    pbar = (p1 + p2) / 2
    ref = (za * math.sqrt(2 * pbar * (1 - pbar)) + zb * math.sqrt(p1 * (1 - p1) + p2 * (1 - p2))) ** 2 / (p2 - p1) ** 2
    assert pw.sample_size_proportion(p1, p2, 0.05, 0.8) == pytest.approx(ref, rel=1e-12)
    # inverting gives back the effect
    assert pw.mde_proportion(ref, p1, 0.05, 0.8) == pytest.approx(abs(p2 - p1), rel=1e-6) if p2 > p1 else True


PRE = '\n[pre_period]\nsource = "pre.parquet"\nunit = "unit"\ntime = "day"\nstart = 2026-05-01\nend = 2026-06-01\n'


def _population(tmp_path, *, eligible: int = 800, active: int = 500, seed: int = 8):
    """``eligible`` units in the assignment source; the first ``active`` have pre-period rows
    (two inside the window, one after it); the others have none."""
    rng = np.random.default_rng(seed)
    units = np.repeat(np.arange(active), 3)
    day = np.tile(np.array(["2026-05-02", "2026-05-20", "2026-06-15"], dtype="datetime64[D]"), active)
    amount = rng.gamma(2.0, 5.0, size=units.size)
    write_parquet(tmp_path / "pre.parquet", {"unit": units, "day": day, "amount": amount})
    arm = np.array(["control", "t"] * (eligible // 2))
    write_parquet(tmp_path / "assignments.parquet", {"unit": np.arange(eligible), "arm": arm})
    write_parquet(tmp_path / "events.parquet", {"unit": np.arange(eligible), "amount": np.ones(eligible),
                                                "converted": np.ones(eligible, bool)})
    in_window = amount[day < np.datetime64("2026-06-01")].reshape(active, 2).sum(axis=1)  # numpy on raw rows
    return np.concatenate([in_window, np.zeros(eligible - active)])  # every eligible unit, zeros included


def test_plan_sizes_the_population_the_experiment_counts(tmp_path, write_spec):
    """The baseline is taken over every unit of the [assignment] source, units without
    pre-period rows counting as the metric's missing rule says (0 here), exactly as the
    experiment query counts them. Reference: numpy mean and variance over the full
    population, fed to statsmodels TTestIndPower."""
    values = _population(tmp_path)
    path = write_spec(spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"') + PRE)
    result = sqlstat.plan(path, mde=1.0)
    row = result.rows[0]
    assert row.baseline == pytest.approx(values.mean(), rel=1e-12)
    assert row.sd == pytest.approx(values.std(ddof=1), rel=1e-12)
    ref = TTestIndPower().solve_power(effect_size=1.0 / values.std(ddof=1), alpha=0.05, power=0.8)  # reference
    assert row.units_per_arm == pytest.approx(ref, rel=1e-6)
    assert [n for _, n in row.units_by_arm] == [pytest.approx(ref, rel=1e-6)] * 2  # arms not declared: two
    assert result.window_days == 31 and row.units_seen == 500
    assert row.population == result.population == 800 and row.share_without_rows == pytest.approx(300 / 800)
    assert row.days == pytest.approx(row.units_per_arm * 2 / (500 / 31), rel=1e-12)
    res = CliRunner().invoke(app, ["plan", str(path), "--units", "200", "--format", "json"])
    assert res.exit_code == 0, res.output
    doc = json.loads(res.output)
    assert doc["population"] == 800 and doc["metrics"][0]["share_without_rows"] == pytest.approx(0.375)
    d = doc["metrics"][0]["mde"] / values.std(ddof=1)
    assert TTestIndPower().power(effect_size=d, nobs1=200, alpha=0.05) == pytest.approx(0.8, abs=1e-9)
    text = CliRunner().invoke(app, ["plan", str(path), "--mde", "1"]).output
    assert "Population: 800 units" in text and "37.5% of them without pre-period rows" in text
    # missing = "exclude": units without rows are left out, as in the experiment
    path = write_spec(spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\nmissing = "exclude"') + PRE,
                      "exclude.toml")
    row = sqlstat.plan(path, mde=1.0).rows[0]
    assert row.baseline == pytest.approx(values[:500].mean(), rel=1e-12)
    assert row.sd == pytest.approx(values[:500].std(ddof=1), rel=1e-12)


def test_plan_refuses_a_degenerate_baseline(tmp_path, write_spec):
    """'Had any row' is 1 for every unit with rows: over those alone the rate is 1 and no
    change can be sized. Over the population it is 500/800 and plannable; with every
    eligible unit active it is degenerate, and plan refuses with exit code 1."""
    metric = 'name = "active"\nkind = "proportion"\nvalue = "count(*) > 0"'
    _population(tmp_path)
    path = write_spec(spec_text(metric) + PRE)
    row = sqlstat.plan(path, mde=0.05).rows[0]
    assert row.baseline == pytest.approx(500 / 800)
    _population(tmp_path, eligible=500, active=500)
    res = CliRunner().invoke(app, ["plan", str(path), "--mde", "0.05"])
    assert res.exit_code == 1, res.output
    assert "baseline rate is 1" in res.output and "active" in res.output


def test_plan_follows_the_weights(tmp_path, write_spec):
    """A 2:1:1 split: each comparison has half a treatment unit per control unit, so the
    control size is statsmodels' tt_ind_solve_power(ratio=0.5) (NormalIndPower for a ratio
    metric; the unequal-groups closed form of Fleiss, Levin and Paik for a proportion,
    evaluated with scipy.stats.norm), the total is twice that, and each treatment arm gets a quarter."""
    from statsmodels.stats.power import tt_ind_solve_power

    values = _population(tmp_path)
    weights = 'weights = { control = 2, t = 1, u = 1 }'
    metrics = ['name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
               'name = "active"\nkind = "proportion"\nvalue = "count(*) > 0"']
    path = write_spec(spec_text(*metrics, extra_experiment=weights) + PRE)
    result = sqlstat.plan(path, mde=1.0)
    spend = result.rows[0]
    n_c = tt_ind_solve_power(effect_size=1.0 / values.std(ddof=1), alpha=0.05, power=0.8, ratio=0.5)  # reference
    assert dict(spend.units_by_arm) == {"control": pytest.approx(n_c, rel=1e-6), "t": pytest.approx(n_c / 2, rel=1e-6),
                                        "u": pytest.approx(n_c / 2, rel=1e-6)}
    assert spend.total_units == pytest.approx(2 * n_c, rel=1e-6)
    assert spend.units_per_arm == pytest.approx(n_c / 2, rel=1e-6)  # the smallest arm
    assert result.arms == 3
    ref_z = NormalIndPower().solve_power(effect_size=0.3, alpha=0.05, power=0.8, ratio=0.5)  # reference
    assert pw.sample_size_mean(0.3, 1.0, 0.05, 0.8, t=False, ratio=0.5) == pytest.approx(ref_z, rel=1e-6)
    p1, r = 500 / 800, 0.5
    rows = {x.metric: x for x in sqlstat.plan(path, mde=1.0 - p1 - 0.2).rows}
    p2 = p1 + (1.0 - p1 - 0.2)
    za, zb = sps.norm.ppf(0.975), sps.norm.ppf(0.8)  # closed form for unequal groups, evaluated independently
    pbar = (p1 + r * p2) / (1 + r)
    ref = (za * math.sqrt(pbar * (1 - pbar) * (1 + 1 / r)) + zb * math.sqrt(p1 * (1 - p1) + p2 * (1 - p2) / r)) ** 2 \
        / (p2 - p1) ** 2
    assert dict(rows["active"].units_by_arm)["control"] == pytest.approx(ref, rel=1e-12)
    # given the smallest arm's units, the detectable effect has exactly the requested power
    mde = sqlstat.plan(path, units=300).rows[0].mde
    from statsmodels.stats.power import TTestIndPower as T

    assert T().power(effect_size=mde / values.std(ddof=1), nobs1=600, alpha=0.05, ratio=0.5) == pytest.approx(0.8, abs=1e-9)
    res = CliRunner().invoke(app, ["plan", str(path), "--mde", "1"])
    assert res.exit_code == 0 and "split 2:1:1" in res.output and "Units per arm, following the weights" in res.output
    doc = json.loads(CliRunner().invoke(app, ["plan", str(path), "--mde", "1", "--format", "json"]).output)
    assert doc["weights"] == {"control": 0.5, "t": 0.25, "u": 0.25}
    assert doc["metrics"][0]["units_by_arm"]["control"] == math.ceil(n_c)


def test_plan_needs_exactly_one_goal_and_a_pre_period(write_spec):
    path = write_spec(spec_text('name = "s"\nkind = "mean"\nvalue = "sum(amount)"'))
    res = CliRunner().invoke(app, ["plan", str(path), "--mde", "1"])
    assert res.exit_code == 2 and "[pre_period]" in res.output
    res = CliRunner().invoke(app, ["plan", str(path)])
    assert res.exit_code == 2 and "exactly one of --mde" in res.output


def test_plan_population_on_every_engine(engine_db):
    """The planning query on every engine (the population join and the missing rule are
    dialect-sensitive: ClickHouse's LEFT JOIN fills with 0 unless told otherwise). Reference:
    numpy over the full population, zeros included."""
    rng = np.random.default_rng(13)
    active, eligible = 300, 450
    units = np.repeat(np.arange(active, dtype=np.int64), 2)
    day = np.tile(np.array(["2026-05-03", "2026-06-10"], dtype="datetime64[D]"), active)
    amount = rng.gamma(2.0, 3.0, size=units.size)
    pre = engine_db.load("plan_pre", {"unit": units, "day": day, "amount": amount})
    asg = engine_db.load("plan_assignments", {"unit": np.arange(eligible, dtype=np.int64),
                                              "arm": np.array(["control", "t", "u"] * (eligible // 3))})
    metrics = ['name = "spend"\nkind = "mean"\nvalue = "sum(amount)"',
               'name = "spend_if_any"\nkind = "mean"\nvalue = "sum(amount)"\nmissing = "exclude"']
    text = spec_text(*metrics, events=False, assignment_source=asg) + (
        f'\n[pre_period]\nsource = "{pre}"\nunit = "unit"\ntime = "day"\nstart = 2026-05-01\nend = 2026-06-01\n')
    spec = sqlstat.parse_spec(text)
    with engine_db.engine() as eng:
        result = sqlstat.plan(spec, mde=1.0, engine=eng)
    first = amount[day < np.datetime64("2026-06-01")]  # one row per active unit in the window
    full = np.concatenate([first, np.zeros(eligible - active)])
    rows = {r.metric: r for r in result.rows}
    assert rows["spend"].baseline == pytest.approx(full.mean(), rel=1e-9)
    assert rows["spend"].sd == pytest.approx(full.std(ddof=1), rel=1e-9)
    assert rows["spend_if_any"].baseline == pytest.approx(first.mean(), rel=1e-9)
    assert rows["spend"].population == eligible and rows["spend"].units_seen == active

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


def test_plan_reads_baseline_from_pre_period(tmp_path, write_spec):
    rng = np.random.default_rng(8)
    units = np.repeat(np.arange(500), 3)
    day = np.tile(np.array(["2026-05-02", "2026-05-20", "2026-06-15"], dtype="datetime64[D]"), 500)
    amount = rng.gamma(2.0, 5.0, size=units.size)
    write_parquet(tmp_path / "pre.parquet", {"unit": units, "day": day, "amount": amount})
    write_parquet(tmp_path / "assignments.parquet", {"unit": np.arange(10), "arm": np.array(["control", "t"] * 5)})
    write_parquet(tmp_path / "events.parquet", {"unit": np.arange(10), "amount": np.ones(10), "converted": np.ones(10, bool)})
    spec = spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"') + (
        '\n[pre_period]\nsource = "pre.parquet"\nunit = "unit"\ntime = "day"\nstart = 2026-05-01\nend = 2026-06-01\n'
    )
    path = write_spec(spec)
    result = sqlstat.plan(path, mde=1.0)
    row = result.rows[0]
    in_window = amount[day < np.datetime64("2026-06-01")].reshape(500, 2).sum(axis=1)  # numpy on raw rows
    assert row.baseline == pytest.approx(in_window.mean(), rel=1e-12)
    assert row.sd == pytest.approx(in_window.std(ddof=1), rel=1e-12)
    ref = TTestIndPower().solve_power(effect_size=1.0 / in_window.std(ddof=1), alpha=0.05, power=0.8)
    assert row.units_per_arm == pytest.approx(ref, rel=1e-6)
    assert result.window_days == 31 and row.units_seen == 500
    assert row.days == pytest.approx(row.units_per_arm * 2 / (500 / 31), rel=1e-12)
    res = CliRunner().invoke(app, ["plan", str(path), "--units", "200", "--format", "json"])
    assert res.exit_code == 0, res.output
    doc = json.loads(res.output)
    d = doc["metrics"][0]["mde"] / in_window.std(ddof=1)
    assert TTestIndPower().power(effect_size=d, nobs1=200, alpha=0.05) == pytest.approx(0.8, abs=1e-9)


def test_plan_needs_exactly_one_goal_and_a_pre_period(write_spec):
    path = write_spec(spec_text('name = "s"\nkind = "mean"\nvalue = "sum(amount)"'))
    res = CliRunner().invoke(app, ["plan", str(path), "--mde", "1"])
    assert res.exit_code == 2 and "[pre_period]" in res.output
    res = CliRunner().invoke(app, ["plan", str(path)])
    assert res.exit_code == 2 and "exactly one of --mde" in res.output

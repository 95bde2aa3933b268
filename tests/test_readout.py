"""The self-contained readout (sqlstat sql --readout) against the Python layer, per engine.

The query computes p-values, intervals, lift intervals, Holm/Benjamini-Hochberg
adjustments, the sample-ratio check, guardrail status and verdicts in plain SQL. Each
number must equal what the Python layer (scipy.special, itself checked against scipy and
statsmodels in test_reference.py) gives for the same rows of the same engine: p-values
to 1e-9 absolute, everything else to 1e-9 relative. The data keep every proportion above
10 successes, so the z test applies in both layers (the SQL readout has no exact test).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import sqlstat
from sqlstat.stats import analyse

from .conftest import spec_text
from .engine_fixtures import record_error

ARMS = ("control", "treatment", "variant_b")

METRICS = (
    'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\nrole = "primary"\nbetter = "higher"',
    'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"\nrole = "guardrail"\n'
    'better = "higher"\nrelative_margin = 0.2',
    'name = "spend_per_event"\nkind = "ratio"\nnumerator = "sum(amount)"\ndenominator = "count(*)"',
    'name = "events"\nkind = "mean"\nvalue = "count(*)"\nequal_variance = true',
    'name = "spend_z"\nkind = "mean"\nvalue = "sum(amount)"\nsigma = 15.0\nrole = "guardrail"\n'
    'better = "lower"\nmargin = 2.0',
)


def readout_data(seed: int = 23, per_arm: int = 150):
    rng = np.random.default_rng(seed)
    n = per_arm * 3
    unit = np.arange(1, n + 1, dtype=np.int64)
    arm = np.array(ARMS)[np.arange(n) % 3]
    rng.shuffle(arm)
    region = rng.choice(["north", "south"], size=n)
    counts = rng.poisson(2.0, n)
    ev_unit = np.repeat(unit, counts)
    lift = {"control": 0.0, "treatment": 2.0, "variant_b": -0.5}
    amount = rng.normal(20.0, 8.0, ev_unit.size) + np.array([lift[a] for a in np.repeat(arm, counts)])
    return ({"unit": unit, "arm": arm, "region": region},
            {"unit": ev_unit, "amount": amount, "converted": rng.random(ev_unit.size) < 0.35})


@pytest.fixture(scope="session")
def readout_spec(engine_db):
    assignments, events = readout_data()
    a = engine_db.load("readout_assignments", assignments)
    e = engine_db.load("readout_events", events)
    extra = 'segments = ["region"]\narms = ["control", "treatment", "variant_b"]\nalways_valid = true\nfastest_detected_lift = 0.1'
    return sqlstat.parse_spec(spec_text(*METRICS, extra_experiment=extra, assignment_source=a, events_source=e))


def close(engine: str, got, expected, what: str, *, rel: float = 1e-9, abs_: float = 1e-12) -> None:
    record_error(engine, got, expected, what)
    if expected is None or (isinstance(expected, float) and not math.isfinite(expected)):
        assert got is None or not math.isfinite(got), what
        return
    assert got == pytest.approx(expected, rel=rel, abs=abs_), what


def test_readout_columns_equal_the_python_layer(engine_db, readout_spec):
    with engine_db.engine() as eng:
        plain = eng.run(sqlstat.sql(readout_spec, engine_db.dialect))
        rows = eng.run(sqlstat.sql(readout_spec, engine_db.dialect, readout=True))
    analysis = analyse(readout_spec, plain)
    by_key = {(r.metric, r.segment_value or "(all)", r.arm): r for r in analysis.results}
    verdicts = {d.arm: d.verdict for d in analysis.decisions}
    assert len(rows) == len(by_key) == 5 * 2 * 3  # metrics x treatment arms x (all, north, south)
    name = engine_db.name
    for row in rows:
        r = by_key[(row["metric"], row["segment_value"], row["arm"])]
        what = f"{name} {r.metric}/{r.segment_value}/{r.arm}"
        assert row["test"] == r.test, what
        close(name, row["estimate"], r.estimate, what + " estimate")
        close(name, row["std_error"], r.std_error, what + " std_error")
        close(name, row["p_value"], r.p_value, what + " p", rel=0, abs_=1e-9)
        close(name, row["ci_low"], r.ci_low, what + " ci_low")
        close(name, row["ci_high"], r.ci_high, what + " ci_high")
        close(name, row["lift_ci_low"], r.lift_ci_low, what + " lift_ci_low")
        close(name, row["lift_ci_high"], r.lift_ci_high, what + " lift_ci_high")
        # guardrails are adjusted on their one-sided p-values; their two-sided p stays as is
        close(name, row["p_value_adjusted"], r.p_value if r.family == "guardrail" else r.p_value_adjusted,
              what + " adjusted p", rel=0, abs_=1e-9)
        assert row["correction"] == r.correction, what
        assert bool(row["significant"]) == r.significant, what
        close(name, row["always_valid_p_value"], r.always_valid_p_value, what + " always-valid p", rel=0, abs_=1e-9)
        close(name, row["sequence_low"], r.sequence_low, what + " sequence_low")
        if r.guardrail is not None and r.segment is None:
            close(name, row["guardrail_p_value"], r.guardrail.p_value, what + " guardrail p", rel=0, abs_=1e-9)
            assert bool(row["guardrail_held"]) == r.guardrail.held, what
            assert bool(row["guardrail_harm"]) == r.guardrail.harm, what
        assert row["verdict"] == verdicts[r.arm], what
        close(name, row["srm_p_value"], analysis.sample_ratio.p_value, what + " sample-ratio p", rel=1e-9)


def test_no_step_of_the_query_is_read_twice():
    """Spark inlines every deterministic CTE and ClickHouse pastes a CTE at each reference,
    so a CTE read twice doubles the plan of everything before it (the readout once ran
    Spark's planner out of heap that way). Only constant tables may be read more than once."""
    import collections

    import sqlglot
    from sqlglot import exp

    from sqlstat.compile import compile_daily

    extra = 'segments = ["region"]\narms = ["control", "treatment", "variant_b"]\nalways_valid = true'
    spec = sqlstat.parse_spec(spec_text(*METRICS, extra_experiment=extra,
                                        assignment_source="a.parquet", events_source="e.parquet"))
    from .test_daily import spec_text as daily_spec_text

    daily = sqlstat.parse_spec(daily_spec_text("a.parquet", "e.parquet", extra="always_valid = true"))
    queries = {
        "plain": sqlstat.sql(spec, "duckdb"),
        "readout": sqlstat.sql(spec, "duckdb", readout=True),
        "daily readout": compile_daily(daily, "duckdb", readout=True),
    }
    for what, text in queries.items():
        tree = sqlglot.parse_one(text, read="duckdb")
        ctes = {c.alias: c for c in tree.find_all(exp.CTE)}
        reads = collections.Counter(t.name for t in tree.find_all(exp.Table) if t.name in ctes)
        for name, count in reads.items():
            constant = not any(isinstance(t, exp.Table) for t in ctes[name].this.find_all(exp.Table))
            assert count == 1 or constant, f"{what}: CTE {name} is read {count} times"


def test_readout_leaves_the_lift_interval_empty_where_the_python_layer_uses_exact_methods(tmp_path, write_spec):
    """With fewer than 10 events the delta-method lift interval does not hold its level
    (docs/methods.md); the SQL readout has no score interval, so it shows none, with the reason."""
    import duckdb

    from .conftest import make_experiment

    make_experiment(tmp_path, units={"control": 60, "treatment": 55}, conversion={"control": 0.04, "treatment": 0.12},
                    events_per_unit=1.0, seed=7)
    path = write_spec(spec_text('name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"'))
    con = duckdb.connect()
    cur = con.execute(sqlstat.sql(path, readout=True))
    cols = [c[0] for c in cur.description]
    (row,) = [dict(zip(cols, r)) for r in cur.fetchall()]
    assert row["lift_ci_low"] is None and row["lift_ci_high"] is None
    assert "no lift interval" in row["note"]
    assert sqlstat.run(path).results[0].test == "fisher_exact"

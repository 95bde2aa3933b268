"""The same specs and data on every executed engine, every number checked against scipy
and statsmodels on the raw rows (1e-9 relative, 1e-12 absolute near zero).

Engines: DuckDB, PostgreSQL, MariaDB, SQLite, Spark SQL (pyspark local) and ClickHouse
(chdb); see engine_fixtures.py. References, named at each check: scipy.stats.ttest_ind
(Welch and pooled), scipy.stats.fisher_exact, scipy.stats.norm (textbook z formula),
statsmodels' proportions_ztest and confint_proportions_2indep, numpy for per-arm moments.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pytest
from scipy import stats as sps
from statsmodels.stats.proportion import confint_proportions_2indep, proportions_ztest

import sqlstat
from sqlstat.compile import RESULT_COLUMNS

from .conftest import spec_text
from .engine_fixtures import record_error

REL, ABS = 1e-9, 1e-12
ARMS = ("control", "treatment", "variant_b")


# ------------------------------------------------------------------ data and references


def matrix_data(seed: int = 11, units_per_arm: int = 240, scale: int = 1):
    """A three-arm experiment: Poisson events per unit (some units have none), three units
    assigned to two arms, integer, boolean and nullable columns. ``scale`` multiplies units."""
    rng = np.random.default_rng(seed)
    n = units_per_arm * 3 * scale
    unit = np.arange(1, n + 1, dtype=np.int64)
    arm = np.array(ARMS)[np.arange(n) % 3]
    rng.shuffle(arm)
    # units 1-3 also appear in a second arm: they must be counted and left out
    extra_unit = unit[:3]
    extra_arm = np.array([ARMS[(ARMS.index(a) + 1) % 3] for a in arm[:3]])
    assignments = {"unit": np.concatenate([unit, extra_unit]), "arm": np.concatenate([arm, extra_arm])}
    lift = {"control": 0.0, "treatment": 1.5, "variant_b": -0.5}
    counts = rng.poisson(2.0, n)
    ev_unit = np.repeat(unit, counts)
    ev_arm = np.repeat(arm, counts)
    m = ev_unit.size
    events = {
        "unit": ev_unit,
        "amount": rng.normal(20.0, 8.0, m) + np.array([lift[a] for a in ev_arm]),
        "converted": rng.random(m) < np.array([0.30 + lift[a] / 20 for a in ev_arm]),
        "items": rng.integers(0, 5, m).astype(np.int64),
        "rating": np.where(rng.random(m) < 0.25, np.nan, rng.normal(3.0, 1.0, m)),
    }
    return assignments, events


def unit_values(assignments, events, fn, missing="zero"):
    """Per-unit values by arm with numpy, from raw rows: the reference's own aggregation.

    Units in more than one arm are left out; a unit with no events (or a NULL value) is 0
    under missing = "zero" and left out under "exclude".
    """
    arms_of: dict[int, set] = {}
    for u, a in zip(assignments["unit"].tolist(), assignments["arm"].tolist()):
        arms_of.setdefault(u, set()).add(a)
    order = np.argsort(events["unit"], kind="stable")
    sorted_units = events["unit"][order]
    out: dict[str, list[float]] = {}
    for u, arms in sorted(arms_of.items()):
        if len(arms) != 1:
            continue
        lo, hi = np.searchsorted(sorted_units, u, "left"), np.searchsorted(sorted_units, u, "right")
        rows = {k: v[order[lo:hi]] for k, v in events.items()}
        value = fn(rows) if hi > lo else math.nan
        if math.isnan(value):
            if missing == "exclude":
                continue
            value = 0.0
        out.setdefault(next(iter(arms)), []).append(float(value))
    return {a: np.array(v) for a, v in out.items()}


def close(engine, got, expected, what=""):
    """Assert 1e-9 relative (1e-12 absolute near zero) and record the error for the README."""
    record_error(engine, got, expected, what)
    assert got == pytest.approx(expected, rel=REL, abs=ABS), f"{engine}: {what}: {got!r} != {expected!r}"


def check_against_references(engine, analysis, metric, values, *, sigma=None, alpha=0.05):
    """Every number of every comparison of one metric against an independent library."""
    results = [r for r in analysis.results if r.metric == metric]
    control = values["control"]
    assert {r.arm for r in results} == set(values) - {"control"}
    for res in results:
        arm = values[res.arm]
        what = f"{metric}/{res.arm}"
        # per-arm moments: numpy
        assert res.treatment.n == arm.size and res.control.n == control.size, what
        close(engine, res.treatment.mean, arm.mean(), what + " mean")
        close(engine, res.control.mean, control.mean(), what + " control mean")
        close(engine, res.treatment.variance, np.var(arm, ddof=1), what + " variance")
        close(engine, res.control.variance, np.var(control, ddof=1), what + " control variance")
        close(engine, res.estimate, arm.mean() - control.mean(), what + " difference")
        if res.test in ("welch_t", "student_t"):
            ref = sps.ttest_ind(arm, control, equal_var=res.test == "student_t")  # reference: scipy
            ci = ref.confidence_interval(1 - alpha)
            pairs = [("statistic", res.statistic, ref.statistic), ("df", res.df, ref.df),
                     ("p", res.p_value, ref.pvalue), ("ci_low", res.ci_low, ci.low), ("ci_high", res.ci_high, ci.high)]
        elif res.test == "z_known_sigma":
            # reference: textbook z = diff / (sigma sqrt(1/n1 + 1/n2)), scipy.stats.norm
            se = sigma * math.sqrt(1 / arm.size + 1 / control.size)
            z = (arm.mean() - control.mean()) / se
            q = sps.norm.ppf(1 - alpha / 2)
            pairs = [("statistic", res.statistic, z), ("p", res.p_value, 2 * sps.norm.sf(abs(z))),
                     ("ci_low", res.ci_low, arm.mean() - control.mean() - q * se),
                     ("ci_high", res.ci_high, arm.mean() - control.mean() + q * se)]
        elif res.test == "two_proportion_z":
            x, n = [int(arm.sum()), int(control.sum())], [arm.size, control.size]
            z, p = proportions_ztest(x, n)  # reference: statsmodels (pooled variance under no difference)
            lo, hi = confint_proportions_2indep(x[0], n[0], x[1], n[1], method="wald", compare="diff", alpha=alpha)
            pairs = [("statistic", res.statistic, z), ("p", res.p_value, p), ("ci_low", res.ci_low, lo),
                     ("ci_high", res.ci_high, hi)]
        elif res.test == "fisher_exact":
            xt, xc = int(arm.sum()), int(control.sum())
            ref = sps.fisher_exact([[xt, arm.size - xt], [xc, control.size - xc]])  # reference: scipy
            lo, hi = confint_proportions_2indep(xt, arm.size, xc, control.size, method="newcomb", compare="diff",
                                                alpha=alpha)  # reference: statsmodels
            from scipy.stats.contingency import odds_ratio

            cond = odds_ratio([[xt, arm.size - xt], [xc, control.size - xc]], kind="conditional")  # reference: scipy
            pairs = [("odds ratio", res.statistic, cond.statistic), ("p", res.p_value, ref.pvalue),
                     ("ci_low", res.ci_low, lo), ("ci_high", res.ci_high, hi)]
        else:  # pragma: no cover - a new test kind needs a reference here
            raise AssertionError(f"no reference for test {res.test}")
        for label, got, expected in pairs:
            close(engine, got, expected, f"{what} {res.test} {label}")
    return results


# ------------------------------------------------------------------ the main matrix

METRICS = {
    "converted": ('kind = "proportion"\nvalue = "count_if(converted) > 0"',
                  lambda r: float(r["converted"].any()), "zero"),
    "spend": ('kind = "mean"\nvalue = "sum(amount)"', lambda r: r["amount"].sum(), "zero"),
    "spend_pooled": ('kind = "mean"\nvalue = "sum(amount)"\nequal_variance = true',
                     lambda r: r["amount"].sum(), "zero"),
    "spend_known_sigma": ('kind = "mean"\nvalue = "sum(amount)"\nsigma = 12.5', lambda r: r["amount"].sum(), "zero"),
    # NULL ratings are ignored by avg; a unit with none (or no events) is left out
    "rating": ('kind = "mean"\nvalue = "avg(rating)"\nmissing = "exclude"',
               lambda r: np.nanmean(r["rating"]) if (~np.isnan(r["rating"])).any() else math.nan, "exclude"),
    # integer columns: integer AVG and integer division are traps on several engines
    "items_per_event": ('kind = "mean"\nvalue = "sum(items) / count(*)"\nmissing = "exclude"',
                        lambda r: r["items"].sum() / r["items"].size, "exclude"),
    "avg_items": ('kind = "mean"\nvalue = "avg(items)"\nmissing = "exclude"', lambda r: r["items"].mean(), "exclude"),
    "many_items": ('kind = "proportion"\nvalue = "sum(items) >= 5"', lambda r: float(r["items"].sum() >= 5), "zero"),
    # a divisor that is 0 for some units: an error on some engines unless guarded (then NULL)
    "items_per_conversion": ('kind = "mean"\nvalue = "sum(items) / count_if(converted)"\nmissing = "exclude"',
                             lambda r: r["items"].sum() / r["converted"].sum() if r["converted"].any() else math.nan,
                             "exclude"),
    # a decimal literal: DECIMAL arithmetic on Spark and MariaDB, DOUBLE elsewhere
    "tenths": ('kind = "mean"\nvalue = "sum(items * 0.1)"', lambda r: (r["items"] * 0.1).sum(), "zero"),
}


def matrix_spec(assignment_table: str, events_table: str) -> str:
    bodies = [f'name = "{name}"\n{body}' for name, (body, _, _) in METRICS.items()]
    return spec_text(*bodies, assignment_source=assignment_table, events_source=events_table)


@pytest.fixture(scope="session")
def matrix(engine_db):
    """The three-arm data loaded into the engine, and the spec that reads it."""
    assignments, events = matrix_data()
    a = engine_db.load("assignments", assignments)
    e = engine_db.load("events", events)
    return assignments, events, sqlstat.parse_spec(matrix_spec(a, e))


def run_on(db, spec):
    with db.engine() as eng:
        return sqlstat.run(spec, engine=eng)


def test_every_metric_kind_matches_the_references(engine_db, matrix):
    assignments, events, spec = matrix
    analysis = run_on(engine_db, spec)
    assert analysis.excluded_units == 3  # the three units in two arms
    assert dict(analysis.arms) == {a: int((unit_values(assignments, events, lambda r: 0.0)[a]).size) for a in ARMS}
    seen = set()
    for name, (body, fn, missing) in METRICS.items():
        values = unit_values(assignments, events, fn, missing)
        sigma = 12.5 if "sigma" in body else None
        for res in check_against_references(engine_db.name, analysis, name, values, sigma=sigma):
            seen.add(res.test)
    assert seen == {"two_proportion_z", "welch_t", "student_t", "z_known_sigma"}


def test_rows_have_the_same_shape_and_order_on_every_engine(engine_db, matrix):
    """NULL ordering and column case differ between engines; the returned rows must not."""
    _, _, spec = matrix
    with engine_db.engine() as eng:
        rows = eng.run(sqlstat.sql(spec, engine_db.dialect))
    assert [list(r) for r in rows] == [list(RESULT_COLUMNS)] * len(rows)
    keys = [(r["metric_index"], r["arm"]) for r in rows]
    expected = [(i, a) for i in range(len(METRICS)) for a in ("control", "treatment", "variant_b")]
    assert keys == expected
    for r in rows:
        for col in ("n", "mean", "variance", "units", "control_mean"):
            assert isinstance(r[col], float), (engine_db.name, col, type(r[col]))


# ------------------------------------------------------------------ small counts: Fisher


@pytest.fixture(scope="session")
def few_events(engine_db):
    rng = np.random.default_rng(5)
    n = 50
    unit = np.arange(1, 2 * n + 1, dtype=np.int64)
    arm = np.array(["control", "treatment"] * n)
    converted = rng.random(2 * n) < np.where(arm == "control", 0.05, 0.15)
    assignments = {"unit": unit, "arm": arm}
    events = {"unit": unit, "converted": converted}
    a = engine_db.load("small_assignments", assignments)
    e = engine_db.load("small_events", events)
    return assignments, events, a, e


def test_proportion_with_few_events_falls_back_to_fisher(engine_db, few_events):
    assignments, events, a, e = few_events
    spec = sqlstat.parse_spec(spec_text('name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"',
                                        assignment_source=a, events_source=e))
    values = unit_values(assignments, events, lambda r: float(r["converted"].any()))
    assert min(values["control"].sum(), values["treatment"].sum()) < 10  # the rule really applies
    results = check_against_references(engine_db.name, run_on(engine_db, spec), "converted", values)
    assert [r.test for r in results] == ["fisher_exact"]


# ------------------------------------------------------------------ per-unit sources, awkward names


@pytest.fixture(scope="session")
def per_unit_table(engine_db):
    """One row per unit, with a reserved word ('select'), a plain mixed-case name (Order,
    folded by each engine's rules) and a quoted mixed-case name ("MixedCase")."""
    rng = np.random.default_rng(9)
    n = 150
    columns = {
        "select": np.arange(1, n + 1, dtype=np.int64),
        "Order": np.array(["control", "treatment", "variant_b"])[rng.integers(0, 3, n)],
        '"MixedCase"': rng.gamma(2.0, 10.0, n),
        "bought": rng.random(n) < 0.4,
        "group": rng.integers(0, 3, n).astype(np.int64),
    }
    return columns, engine_db.load("unit_summary", columns)


def test_per_unit_source_with_reserved_and_mixed_case_names(engine_db, per_unit_table):
    columns, table = per_unit_table
    text = f"""
    [experiment]
    name = "per-unit"
    control = "control"

    [assignment]
    source = "{table}"
    unit = "select"
    arm = "Order"
    per_unit = true

    [[metric]]
    name = "value"
    kind = "mean"
    value = '"MixedCase"'

    [[metric]]
    name = "bought"
    kind = "proportion"
    value = "bought = true"

    [[metric]]
    name = "group_share"
    kind = "mean"
    value = '"group" / 2'
    equal_variance = true
    """
    analysis = run_on(engine_db, sqlstat.parse_spec(textwrap.dedent(text)))
    arms = columns["Order"]
    for metric, data in (("value", columns['"MixedCase"']), ("bought", columns["bought"].astype(float)),
                         ("group_share", columns["group"] / 2)):
        values = {a: data[arms == a].astype(float) for a in ARMS}
        check_against_references(engine_db.name, analysis, metric, values)


@pytest.fixture(scope="session")
def per_unit_events(engine_db, matrix):
    """Events already summed per unit (one row per unit), as a warehouse table often is."""
    assignments, events, _ = matrix
    units, index = np.unique(events["unit"], return_inverse=True)
    totals = np.bincount(index, weights=events["amount"])
    return totals, engine_db.load("unit_totals", {"unit": units, "spend": totals})


def test_per_unit_events_table(engine_db, matrix, per_unit_events):
    assignments, events, spec = matrix
    _, table = per_unit_events
    text = f"""
    [experiment]
    name = "per-unit-events"
    control = "control"

    [assignment]
    source = "{spec.assignment.source.text}"
    unit = "unit"
    arm = "arm"

    [events]
    source = "{table}"
    unit = "unit"
    per_unit = true

    [[metric]]
    name = "spend"
    kind = "mean"
    value = "spend"
    """
    analysis = run_on(engine_db, sqlstat.parse_spec(textwrap.dedent(text)))
    values = unit_values(assignments, events, lambda r: r["amount"].sum())
    check_against_references(engine_db.name, analysis, "spend", values)


# ------------------------------------------------------------------ only aggregates leave the engine


@pytest.fixture(scope="session")
def cuped_tables(engine_db):
    """A pre-period table with a DATE column: one row per unit inside the window (its
    covariate) and one outside it (a large value that must be ignored)."""
    rng = np.random.default_rng(5)
    n = 900
    unit = np.arange(1, n + 1, dtype=np.int64)
    arm = np.array(ARMS)[rng.integers(0, 3, n)]
    habit = rng.gamma(2.0, 2.0, n)
    pre_amount = rng.poisson(habit).astype(float)
    post = rng.poisson(habit) + np.where(arm == "treatment", 0.8, 0.0) + rng.normal(0.0, 1.0, n)
    a = engine_db.load("cuped_assignments", {"unit": unit, "arm": arm})
    e = engine_db.load("cuped_events", {"unit": unit, "amount": post})
    p = engine_db.load("cuped_pre", {
        "unit": np.repeat(unit, 2),
        "day": np.tile(np.array(["2026-07-05", "2026-06-20"], dtype="datetime64[D]"), n),
        "amount": np.column_stack([pre_amount, np.full(n, 100.0)]).ravel(),
    })
    pre = f'\n[pre_period]\nsource = "{p}"\nunit = "unit"\ntime = "day"\nstart = 2026-07-01\nend = 2026-08-01\n'
    metric = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\ncuped = true'
    spec = sqlstat.parse_spec(spec_text(metric, assignment_source=a, events_source=e) + pre)
    return {"arm": arm, "y": post, "x": pre_amount}, spec


def test_cuped_equals_the_covariate_adjusted_regression(engine_db, cuped_tables):
    """CUPED (Deng, Xu, Kohavi and Walker, 2013) on every engine, pre-period window read
    from a DATE column, estimated as Lin's (2013) interacted regression. Reference:
    statsmodels OLS y ~ treatment + centred covariate + their product on the two arms
    compared (the estimate), and each arm's own OLS of y on the covariate centred at the
    pooled mean (the slopes and the classical variances that make the standard error)."""
    import statsmodels.api as sm

    data, spec = cuped_tables
    analysis = run_on(engine_db, spec)
    results = {r.arm: r for r in analysis.results if r.metric == "spend" and r.segment is None}
    arm, y, x = data["arm"], data["y"], data["x"]
    for treated in ("treatment", "variant_b"):
        keep = (arm == treated) | (arm == "control")
        t = (arm[keep] == treated).astype(float)
        xc = x[keep] - x[keep].mean()
        fit = sm.OLS(y[keep], sm.add_constant(np.column_stack([t, xc, t * xc]))).fit()
        per_arm = [sm.OLS(y[keep][t == f], sm.add_constant(xc[t == f])).fit() for f in (1.0, 0.0)]
        res = results[treated]
        assert res.test == "cuped_welch_t"
        close(engine_db.name, res.estimate, fit.params[1], f"CUPED {treated} estimate")
        close(engine_db.name, res.theta_treatment, per_arm[0].params[1], f"CUPED {treated} slope")
        close(engine_db.name, res.theta_control, per_arm[1].params[1], f"CUPED {treated} control slope")
        se = math.sqrt(per_arm[0].bse[0] ** 2 + per_arm[1].bse[0] ** 2)
        close(engine_db.name, res.std_error, se, f"CUPED {treated} std_error")
        assert res.variance_reduction > 0.2  # the covariate is informative in this data


def test_rows_returned_do_not_grow_with_the_data(engine_db):
    """Only per-(metric, arm) rows come back: 1x and 10x the data give the same row count."""
    counts = []
    for scale in (1, 10):
        assignments, events = matrix_data(seed=3, units_per_arm=40, scale=scale)
        a = engine_db.load(f"scale{scale}_assignments", assignments)
        e = engine_db.load(f"scale{scale}_events", events)
        spec = sqlstat.parse_spec(matrix_spec(a, e))
        with engine_db.engine() as eng:
            rows = eng.run(sqlstat.sql(spec, engine_db.dialect))
        counts.append((len(rows), int(sum(r["units"] for r in rows if r["metric_index"] == 0))))
    (rows_1x, units_1x), (rows_10x, units_10x) = counts
    assert rows_1x == rows_10x == len(METRICS) * len(ARMS)
    assert units_10x > 9 * units_1x  # the second query really read ten times the units


# ------------------------------------------------------------------ Spark specifics


@pytest.mark.parametrize("engine_db", ["spark"], indirect=True)
def test_spark_gives_the_same_numbers_with_ansi_mode_switched(engine_db, matrix):
    """Spark 4 runs with ANSI mode on by default, Spark 3 with it off: both must agree."""
    assignments, events, spec = matrix
    conf = engine_db.session.conf
    before = conf.get("spark.sql.ansi.enabled")
    try:
        conf.set("spark.sql.ansi.enabled", "false" if before == "true" else "true")
        analysis = run_on(engine_db, spec)
    finally:
        conf.set("spark.sql.ansi.enabled", before)
    for name, (body, fn, missing) in METRICS.items():
        sigma = 12.5 if "sigma" in body else None
        check_against_references("spark", analysis, name, unit_values(assignments, events, fn, missing), sigma=sigma)


# ------------------------------------------------------------------ entry points: URL and connection


def test_cli_runs_on_the_engine_named_by_its_url(engine_db, matrix, tmp_path):
    """`sqlstat run SPEC --db URL` for duckdb:///, sqlite:///, postgresql://, mysql://,
    spark://local[2] and chdb:///; the JSON numbers equal the library's on the same engine."""
    import json

    from typer.testing import CliRunner

    from sqlstat.cli import app

    assignments, events, spec = matrix
    path = tmp_path / "spec.toml"
    path.write_text(matrix_spec(spec.assignment.source.text, spec.events.source.text))
    res = CliRunner().invoke(app, ["run", str(path), "--db", engine_db.url(), "--format", "json"])
    # exit 1: the matrix data has units in two arms on purpose, a data problem to report
    assert res.exit_code == 1, res.output
    doc = json.loads(res.output)
    assert doc["excluded_units"] > 0
    values = unit_values(assignments, events, lambda r: r["amount"].sum())
    spend = {r["arm"]: r for r in doc["results"] if r["metric"] == "spend"}
    for arm in ("treatment", "variant_b"):
        ref = sps.ttest_ind(values[arm], values["control"], equal_var=False)  # reference: scipy
        close(engine_db.name, spend[arm]["statistic"], ref.statistic, "CLI spend statistic")
        close(engine_db.name, spend[arm]["p_value"], ref.pvalue, "CLI spend p-value")


def test_python_entry_point_takes_an_open_connection(engine_db, matrix):
    """sqlstat.run(spec, connection=..., dialect=...) with the engine's own connection object
    (a DB-API 2.0 connection, DuckDB, a SparkSession or chdb; the dialect is inferred for
    the last three)."""
    assignments, events, spec = matrix
    con = engine_db.connection()
    try:
        dialect = engine_db.dialect if engine_db.name in ("postgres", "mysql", "sqlite") else None
        analysis = sqlstat.run(spec, connection=con, dialect=dialect)
    finally:
        if engine_db.name != "spark":
            con.close()
    values = unit_values(assignments, events, lambda r: float(r["converted"].any()))
    check_against_references(engine_db.name, analysis, "converted", values)


# ------------------------------------------------------------------ the SQLSTAT_REQUIRE_ENGINES switch


@pytest.mark.parametrize("required, outcome", [(False, pytest.skip.Exception), (True, pytest.fail.Exception)])
def test_absent_engine_skips_unless_required(monkeypatch, tmp_path, required, outcome):
    """A server that is down or a package that is missing skips its tests with the reason,
    and fails them instead when SQLSTAT_REQUIRE_ENGINES=1 (as .ci/run sets)."""
    import sys

    from . import engine_fixtures as ef

    monkeypatch.setattr(ef, "REQUIRED", required)
    monkeypatch.setattr(ef, "PG_URL", "postgresql://postgres@127.0.0.1:1/test")  # nothing listens on port 1
    with pytest.raises(outcome, match="postgres.*(refused|failed)"):
        ef.open_database("postgres", tmp_path)
    monkeypatch.setitem(sys.modules, "chdb", None)  # as if the heavy extra were not installed
    with pytest.raises(outcome, match="clickhouse.*not installed"):
        ef.open_database("clickhouse", tmp_path)

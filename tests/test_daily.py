"""The daily cumulative view against numpy/scipy/statsmodels on the raw rows, day by day.

For every day the query returns, the reference restricts the raw rows to that day (units
that entered by then, events up to then; an event dated before its unit entered counts
from the entry day, an event with no time on the entry day), recomputes every unit's
value from scratch with SQL's aggregate semantics, and computes the per-arm n, mean and
variance (numpy, ddof=1), Welch's t and its degrees of freedom
(scipy.stats.ttest_ind, equal_var=False), the pooled two-proportion z
(statsmodels.stats.proportion.proportions_ztest) and the delta-method standard error of
a ratio of per-unit sums (Deng, Knoblich and Lu, 2018, written out with numpy).
Tolerance: 1e-9 relative (1e-12 absolute near zero), on DuckDB, SQLite, PostgreSQL and
MariaDB. Data: random, seeded, made here; no sqlstat output is used as a reference.
"""

from __future__ import annotations

import datetime as dt
import math
import os
import re
import sqlite3
import tempfile
import textwrap
import uuid
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest
import sqlglot
from scipy import stats as sps
from sqlglot import exp
from statsmodels.stats.proportion import proportions_ztest

import sqlstat
from sqlstat.compile import DAILY_COLUMNS, RESULT_COLUMNS, compile_daily, compile_sql
from sqlstat.dialects import DIALECTS
from sqlstat.engines import normalise_rows
from sqlstat.errors import CompileError, SpecError

REL, ABS = 1e-9, 1e-12
REQUIRE = os.environ.get("SQLSTAT_REQUIRE_ENGINES") == "1"
START = dt.date(2026, 3, 2)
ARMS = ("control", "treatment", "variant_b")


# --- synthetic data -------------------------------------------------------------------


@dataclass
class Data:
    """Raw rows: assignment (unit, arm, entered) and events (unit, amount, converted, happened)."""

    assignment: list[tuple]
    events: list[tuple]


def make_data(units: int, seed: int = 11, days: int = 12) -> Data:
    """Units enter over ``days`` days (variant_b only from day 3), with Poisson events
    spread from 3 days before entry to 9 days after; some amounts and times are NULL,
    some events belong to units never assigned, two units were given two arms and one
    unit has two assignment rows (its entry is the earlier)."""
    rng = np.random.default_rng(seed)
    assignment: list[tuple] = []
    events: list[tuple] = []
    for i in range(units):
        unit = 10_000 + i
        arm = ARMS[rng.integers(0, 3)]
        first = int(rng.integers(3 if arm == "variant_b" else 0, days))
        entered = dt.datetime.combine(START + dt.timedelta(days=first), dt.time()) + dt.timedelta(
            seconds=int(rng.integers(0, 86_400)))
        assignment.append((unit, arm, entered))
        if i % 97 == 5:  # a second row for the same unit and arm, later
            assignment.append((unit, arm, entered + dt.timedelta(days=2)))
        if i % 151 == 7:  # a unit given two arms: no arm, counted as excluded
            assignment.append((unit, ARMS[(ARMS.index(arm) + 1) % 3], entered))
        lift = {"control": 0.0, "treatment": 1.5, "variant_b": -0.5}[arm]
        for _ in range(rng.poisson(2.5)):
            offset = int(rng.integers(-3, 10))
            when = entered + dt.timedelta(days=offset, seconds=int(rng.integers(-40_000, 40_000)))
            amount = None if rng.random() < 0.08 else round(float(rng.normal(20 + lift, 7)), 6)
            converted = bool(rng.random() < (0.25 if arm == "control" else 0.3))
            events.append((unit, amount, converted, None if rng.random() < 0.03 else when))
    for j in range(15):  # events of units that were never assigned
        events.append((99_000 + j, 5.0, True, dt.datetime.combine(START, dt.time()) + dt.timedelta(days=j % 9)))
    return Data(assignment, events)


# --- the reference: per-unit values recomputed from scratch for each day ---------------


def _sum(xs):  # SQL SUM: NULL over no non-NULL values
    xs = [x for x in xs if x is not None]
    return math.fsum(xs) if xs else None


def _avg(xs):
    xs = [x for x in xs if x is not None]
    return math.fsum(xs) / len(xs) if xs else None


def _max(xs):
    xs = [x for x in xs if x is not None]
    return max(xs) if xs else None


def _count_if(flags):
    return sum(1 for f in flags if f)


# name -> (spec body, per-unit function of the unit's event rows or None for no rows, missing policy)
METRICS = {
    "spend": ('kind = "mean"\nvalue = "sum(amount)"', lambda r: _sum([e[1] for e in r]), "zero"),
    "converted": ('kind = "proportion"\nvalue = "count_if(converted) > 0"',
                  lambda r: 1.0 if _count_if(e[2] for e in r) > 0 else 0.0, "zero"),
    "spend_per_event": ('kind = "ratio"\nnumerator = "sum(amount)"\ndenominator = "count(*)"', None, "zero"),
    "top_amount": ('kind = "mean"\nvalue = "max(amount)"\nmissing = "exclude"',
                   lambda r: _max([e[1] for e in r]), "exclude"),
    "mean_amount": ('kind = "mean"\nvalue = "avg(amount)"\nmissing = "exclude"',
                    lambda r: _avg([e[1] for e in r]), "exclude"),
    # A large offset against a small spread: the case that breaks unshifted sums of squares.
    "offset_top": ('kind = "mean"\nvalue = "max(amount) + 100000"\nmissing = "exclude"',
                   lambda r: None if _max([e[1] for e in r]) is None else _max([e[1] for e in r]) + 100_000,
                   "exclude"),
    "mixed": ('kind = "mean"\nvalue = "count_if(amount > 20) + 0.5 * count(*)"',
              lambda r: _count_if(e[1] is not None and e[1] > 20 for e in r) + 0.5 * len(r), "zero"),
}


def spec_text(assignment: str, events: str, metrics=tuple(METRICS), extra: str = "") -> str:
    text = textwrap.dedent(f"""
        [experiment]
        name = "daily_synthetic"
        control = "control"
        daily = true
        {extra}

        [assignment]
        source = "{assignment}"
        unit = "unit"
        arm = "arm"
        time = "entered"

        [events]
        source = "{events}"
        unit = "unit"
        time = "happened"
        """)
    for name in metrics:
        text += f'\n[[metric]]\nname = "{name}"\n{METRICS[name][0]}\n'
    return text


def reference(data: Data) -> dict:
    """day -> {"units", "excluded", "values": {metric: {arm: array}}, "ratio": {arm: (y, x)}}."""
    arms_of: dict[int, set] = {}
    entry: dict[int, dt.date] = {}
    for unit, arm, when in data.assignment:
        arms_of.setdefault(unit, set()).add(arm)
        entry[unit] = min(entry.get(unit, when.date()), when.date())
    rows_of: dict[int, list[tuple[dt.date, tuple]]] = {u: [] for u in entry}
    for ev in data.events:
        unit, when = ev[0], ev[3]
        if unit not in entry:
            continue  # never assigned
        day = entry[unit] if when is None or when.date() < entry[unit] else when.date()
        rows_of[unit].append((day, ev))
    days = sorted(set(entry.values()) | {d for rows in rows_of.values() for d, _ in rows})
    out = {}
    for d in days:
        present = [u for u in entry if entry[u] <= d]
        values = {m: {a: [] for a in ARMS} for m in METRICS}
        ratio = {a: ([], []) for a in ARMS}
        units = dict.fromkeys(ARMS, 0)
        excluded = 0
        for u in present:
            if len(arms_of[u]) != 1:
                excluded += 1
                continue
            arm = next(iter(arms_of[u]))
            units[arm] += 1
            rows = [ev for day, ev in rows_of[u] if day <= d]
            for m, (_, fn, missing) in METRICS.items():
                if fn is None:
                    continue
                # A unit without event rows has no value; missing = "zero" makes it 0.
                v = fn(rows) if rows else None
                if v is None and missing == "zero":
                    v = 0.0
                if v is not None:
                    values[m][arm].append(float(v))
            ratio[arm][0].append((_sum([e[1] for e in rows]) or 0.0) if rows else 0.0)
            ratio[arm][1].append(float(len(rows)))
        out[d] = {
            "units": units,
            "excluded": excluded,
            "values": {m: {a: np.array(v) for a, v in per.items()} for m, per in values.items()},
            "ratio": {a: (np.array(y), np.array(x)) for a, (y, x) in ratio.items()},
        }
    return out


# --- engines: tables created here, the query run, rows normalised ----------------------


def _day(value) -> dt.date:
    if isinstance(value, dt.datetime):
        return value.date()
    if isinstance(value, dt.date):
        return value
    return dt.date.fromisoformat(str(value)[:10])


class Engine:
    """One engine with the synthetic tables loaded; ``run`` returns normalised rows."""

    def __init__(self, name: str, con, dialect: str, assignment: str, events: str, explain):
        self.name, self.con, self.dialect = name, con, dialect
        self.assignment, self.events = assignment, events
        self._explain = explain

    def fetch(self, sql: str) -> list[dict]:
        """Any query's rows, normalised as sqlstat's engines return them."""
        cur = self.con.cursor()
        cur.execute(sql)
        return normalise_rows([c[0] for c in cur.description], cur.fetchall())

    def run(self, sql: str) -> list[dict]:
        rows = self.fetch(sql)
        for r in rows:
            r["day"] = _day(r["day"])
        return rows

    def scans(self, sql: str) -> dict[str, int]:
        """How many times the plan reads each source table."""
        return self._explain(self, sql)


def _fail_or_skip(reason: str):
    if REQUIRE:
        pytest.fail(f"{reason} (SQLSTAT_REQUIRE_ENGINES=1)")
    pytest.skip(reason)


def _count_words(text: str, names: tuple[str, ...]) -> dict[str, int]:
    return {n: len(re.findall(rf"\b{n}\b", text)) for n in names}


def _duckdb(data: Data, tag: str):
    import duckdb

    con = duckdb.connect()
    a, e = f"asg_{tag}", f"ev_{tag}"
    con.execute(f"CREATE TABLE {a} (unit BIGINT, arm VARCHAR, entered TIMESTAMP)")
    con.execute(f"CREATE TABLE {e} (unit BIGINT, amount DOUBLE, converted BOOLEAN, happened TIMESTAMP)")
    con.executemany(f"INSERT INTO {a} VALUES (?, ?, ?)", data.assignment)
    con.executemany(f"INSERT INTO {e} VALUES (?, ?, ?, ?)", data.events)

    def explain(engine, sql):
        plan = "\n".join(str(r[1]) for r in con.execute("EXPLAIN " + sql).fetchall())
        return _count_words(plan, (a, e))

    yield Engine("duckdb", con, "duckdb", a, e, explain)
    con.close()


def _sqlite(data: Data, tag: str):
    con = sqlite3.connect(":memory:")
    a, e = f"asg_{tag}", f"ev_{tag}"
    con.execute(f"CREATE TABLE {a} (unit INTEGER, arm TEXT, entered TEXT)")
    con.execute(f"CREATE TABLE {e} (unit INTEGER, amount REAL, converted INTEGER, happened TEXT)")
    iso = lambda t: None if t is None else t.strftime("%Y-%m-%d %H:%M:%S")  # noqa: E731
    con.executemany(f"INSERT INTO {a} VALUES (?, ?, ?)", [(u, arm, iso(t)) for u, arm, t in data.assignment])
    con.executemany(f"INSERT INTO {e} VALUES (?, ?, ?, ?)",
                    [(u, x, int(c), iso(t)) for u, x, c, t in data.events])

    def explain(engine, sql):
        # SQLite's plan names a scanned table by its alias in the query.
        plan = "\n".join(str(r[-1]) for r in con.execute("EXPLAIN QUERY PLAN " + sql).fetchall())
        found = _count_words(plan, ("assignment_rows", "event_rows"))
        return {a: found["assignment_rows"], e: found["event_rows"]}

    yield Engine("sqlite", con, "sqlite", a, e, explain)
    con.close()


def _postgres(data: Data, tag: str):
    try:
        import psycopg

        con = psycopg.connect(host="127.0.0.1", port=5432, user="postgres", dbname="test", connect_timeout=5)
    except Exception as err:  # noqa: BLE001 - any failure to reach the server
        _fail_or_skip(f"PostgreSQL at 127.0.0.1:5432 is not reachable: {err}")
    a, e = f"asg_{tag}", f"ev_{tag}"
    # Temporary tables: private to this connection, gone when it closes.
    con.execute(f"CREATE TEMP TABLE {a} (unit BIGINT, arm TEXT, entered TIMESTAMP)")
    con.execute(f"CREATE TEMP TABLE {e} (unit BIGINT, amount DOUBLE PRECISION, converted BOOLEAN, happened TIMESTAMP)")
    with con.cursor() as cur:
        cur.executemany(f"INSERT INTO {a} VALUES (%s, %s, %s)", data.assignment)
        cur.executemany(f"INSERT INTO {e} VALUES (%s, %s, %s, %s)", data.events)

    def explain(engine, sql):
        with con.cursor() as cur:
            cur.execute("EXPLAIN (FORMAT JSON) " + sql)
            plan = cur.fetchone()[0]
        found: list[str] = []

        def walk(node):
            if "Relation Name" in node:
                found.append(node["Relation Name"])
            for child in node.get("Plans", []):
                walk(child)

        walk(plan[0]["Plan"])
        return {n: found.count(n) for n in (a, e)}

    yield Engine("postgres", con, "postgres", a, e, explain)
    con.close()


def _mariadb(data: Data, tag: str):
    try:
        import pymysql

        con = pymysql.connect(host="127.0.0.1", port=3306, user="root", password="", database="test",
                              connect_timeout=5)
    except Exception as err:  # noqa: BLE001
        _fail_or_skip(f"MariaDB at 127.0.0.1:3306 is not reachable: {err}")
    a, e = f"asg_{tag}", f"ev_{tag}"
    with con.cursor() as cur:
        # Temporary tables: private to this connection.
        cur.execute(f"CREATE TEMPORARY TABLE {a} (unit BIGINT, arm VARCHAR(20), entered DATETIME)")
        cur.execute(f"CREATE TEMPORARY TABLE {e} (unit BIGINT, amount DOUBLE, converted BOOLEAN, happened DATETIME)")
        cur.executemany(f"INSERT INTO {a} VALUES (%s, %s, %s)", data.assignment)
        cur.executemany(f"INSERT INTO {e} VALUES (%s, %s, %s, %s)", data.events)

    def explain(engine, sql):
        # MariaDB's plan names a scanned table by its alias in the query.
        with con.cursor() as cur:
            cur.execute("EXPLAIN " + sql)
            names = [c[0] for c in cur.description]
            tables = [dict(zip(names, r))["table"] for r in cur.fetchall()]
        return {a: tables.count("assignment_rows"), e: tables.count("event_rows")}

    yield Engine("mariadb", con, "mysql", a, e, explain)
    con.close()


class SparkEngine(Engine):
    def fetch(self, sql: str) -> list[dict]:
        from sqlstat.engines import spark_engine

        return spark_engine(self.con).run(sql)


def _spark(data: Data, tag: str):
    try:
        from .engine_fixtures import spark_session

        session = spark_session(Path(tempfile.mkdtemp(prefix="sqlstat-daily-spark-")))
    except Exception as err:  # noqa: BLE001 - no pyspark or no Java
        _fail_or_skip(f"Spark (pyspark, local mode) cannot start: {err}")
    from pyspark.sql import types as T

    schema = f"sqlstat_daily_{tag}"
    session.sql(f"CREATE DATABASE IF NOT EXISTS {schema}")
    a, e = f"{schema}.asg_{tag}", f"{schema}.ev_{tag}"
    asg_type = T.StructType([T.StructField("unit", T.LongType()), T.StructField("arm", T.StringType()),
                             T.StructField("entered", T.TimestampType())])
    ev_type = T.StructType([T.StructField("unit", T.LongType()), T.StructField("amount", T.DoubleType()),
                            T.StructField("converted", T.BooleanType()), T.StructField("happened", T.TimestampType())])
    session.createDataFrame(data.assignment, asg_type).write.mode("overwrite").saveAsTable(a)
    session.createDataFrame(data.events, ev_type).write.mode("overwrite").saveAsTable(e)

    def explain(engine, sql):
        # Spark pastes a CTE at each reference; a scan shared through exchange reuse
        # prints as ReusedExchange, not as a second FileScan of the table.
        plan = str(session.sql(sql)._jdf.queryExecution().executedPlan().toString())
        scans = [line for line in plan.splitlines() if "Scan " in line]
        return {t: sum(1 for line in scans if t.split(".")[1] in line) for t in (a, e)}

    yield SparkEngine("spark", session, "spark", a, e, explain)
    session.sql(f"DROP DATABASE IF EXISTS {schema} CASCADE")


def _clickhouse(data: Data, tag: str):
    try:
        from chdb import dbapi

        from .engine_fixtures import chdb_folder, insert_literal_rows

        con = dbapi.connect(str(chdb_folder()))
    except Exception as err:  # noqa: BLE001
        _fail_or_skip(f"chdb (embedded ClickHouse) cannot start: {err}")
    schema = f"sqlstat_daily_{tag}"
    a, e = f"{schema}.asg_{tag}", f"{schema}.ev_{tag}"
    cur = con.cursor()
    cur.execute(f"CREATE DATABASE IF NOT EXISTS {schema}")
    cur.execute(f"CREATE TABLE {a} (unit Int64, arm String, entered DateTime) ENGINE = MergeTree ORDER BY tuple()")
    cur.execute(f"CREATE TABLE {e} (unit Int64, amount Nullable(Float64), converted Bool, "
                f"happened Nullable(DateTime)) ENGINE = MergeTree ORDER BY tuple()")
    iso = lambda t: None if t is None else t.strftime("%Y-%m-%d %H:%M:%S")  # noqa: E731
    insert_literal_rows(cur, a, [(u, arm, iso(t)) for u, arm, t in data.assignment])
    insert_literal_rows(cur, e, [(u, x, c, iso(t)) for u, x, c, t in data.events])

    def explain(engine, sql):
        # EXPLAIN ESTIMATE sums the rows every read of a table would take (a table read
        # twice shows twice its rows); the printed plan (plain EXPLAIN) of the readout form
        # runs chdb out of memory (std::bad_alloc above 10 GB), though the query itself
        # runs in under 1 GB.
        c = con.cursor()
        c.execute("EXPLAIN ESTIMATE " + sql)
        estimated = {f"{db}.{table}": rows for db, table, _parts, rows, _marks in c.fetchall()}
        scans = {}
        for t in (a, e):
            c.execute(f"SELECT count() FROM {t}")
            scans[t] = estimated.get(t, 0) / c.fetchall()[0][0]
        return scans

    yield Engine("clickhouse", con, "clickhouse", a, e, explain)
    cur.execute(f"DROP DATABASE IF EXISTS {schema}")
    con.close()


OPENERS = {"duckdb": _duckdb, "sqlite": _sqlite, "postgres": _postgres, "mariadb": _mariadb,
           "spark": _spark, "clickhouse": _clickhouse}
DATA = make_data(420)


@pytest.fixture(params=list(OPENERS), scope="module")
def engine(request):
    tag = uuid.uuid4().hex[:10]
    gen = OPENERS[request.param](DATA, tag)
    yield next(gen)
    next(gen, None)


@pytest.fixture(scope="module")
def expected():
    return reference(DATA)


def daily_experiment(engine: Engine, metrics=tuple(METRICS), extra: str = ""):
    return sqlstat.parse_spec(spec_text(engine.assignment, engine.events, metrics, extra))


# --- checks against the references -------------------------------------------------------


def approx(x):
    return pytest.approx(x, rel=REL, abs=ABS)


class Worst:
    """The largest relative error seen per engine (printed with pytest -s)."""

    seen: dict[str, float] = {}

    @classmethod
    def note(cls, engine: str, got, want) -> None:
        if got is None or want is None or want == 0:
            return
        cls.seen[engine] = max(cls.seen.get(engine, 0.0), abs(got - want) / abs(want))


@pytest.fixture(scope="module", autouse=True)
def report_worst_error():
    """After this file's tests: the largest relative error per engine (shown with pytest -s)."""
    yield
    for name, err in sorted(Worst.seen.items()):
        print(f"\ndaily view, max relative error vs reference on {name}: {err:.2e}")


def check(engine: str, got, want):
    if want is None:
        assert got is None
        return
    Worst.note(engine, got, want)
    assert got == approx(want)


def _var(x):
    return float(np.var(x, ddof=1)) if x.size > 1 else None


def test_every_day_matches_numpy_and_scipy(engine, expected):
    rows = engine.run(compile_daily(daily_experiment(engine), engine.dialect))
    assert list(rows[0]) == list(DAILY_COLUMNS)
    days = sorted(expected)
    assert sorted({r["day"] for r in rows}) == days
    by = {(r["day"], r["metric"], r["arm"]): r for r in rows}
    for d in days:
        ref = expected[d]
        for arm in ARMS:
            for metric, (_, fn, _) in METRICS.items():
                r = by[(d, metric, arm)]
                assert r["units"] == ref["units"][arm]
                assert r["excluded_units"] == ref["excluded"]
                assert r["is_control"] == (arm == "control")
                assert (r["segment_index"], r["segment"], r["segment_value"]) == (0, None, "(all)")
                if fn is None:
                    continue
                who = engine.name if metric != "offset_top" else f"{engine.name}, offset_top"
                x = ref["values"][metric][arm]
                assert r["n"] == x.size
                check(who, r["mean"], float(x.mean()) if x.size else None)
                check(who, r["variance"], _var(x))
                check(who, r["total"], math.fsum(x) if x.size else None)
                if arm == "control":
                    continue
                c = ref["values"][metric]["control"]
                if metric == "converted":
                    pooled = (x.sum() + c.sum()) / (x.size + c.size) if x.size + c.size else 0.0
                    if x.size and c.size and 0 < pooled < 1:
                        z, _ = proportions_ztest([x.sum(), c.sum()], [x.size, c.size])  # reference: statsmodels
                        check(who, r["statistic"], float(z))
                    continue
                if x.size > 1 and c.size > 1 and (_var(x) or 0) + (_var(c) or 0) > 0:
                    ref_t = sps.ttest_ind(x, c, equal_var=False)  # reference: scipy, Welch
                    check(who, r["statistic"], float(ref_t.statistic))
                    check(who, r["df"], float(ref_t.df))
                    check(who, r["estimate"], float(x.mean() - c.mean()))
                else:
                    assert r["statistic"] is None


def _delta(y: np.ndarray, x: np.ndarray):
    """Ratio of sums and the delta-method variance sum((y - R x)^2) / (sum x)^2
    (Deng, Knoblich and Lu, 2018), written out with numpy."""
    ratio = y.sum() / x.sum()
    return ratio, float(np.sum((y - ratio * x) ** 2) / x.sum() ** 2)


def test_every_day_ratio_matches_delta_method(engine, expected):
    rows = engine.run(compile_daily(daily_experiment(engine, ("spend_per_event",)), engine.dialect))
    by = {(r["day"], r["arm"]): r for r in rows}
    compared = 0
    for d, ref in expected.items():
        if any(ref["ratio"][a][1].sum() == 0 for a in ("control", "treatment")):
            continue
        rc, vc = _delta(*ref["ratio"]["control"])
        rt, vt = _delta(*ref["ratio"]["treatment"])
        r = by[(d, "treatment")]
        check(engine.name, r["value"], rt)
        check(engine.name, r["control_value"], rc)
        check(engine.name, r["value_std_error"], math.sqrt(vt))
        check(engine.name, r["std_error"], math.sqrt(vt + vc))
        check(engine.name, r["statistic"], (rt - rc) / math.sqrt(vt + vc))
        check(engine.name, r["x_total"], float(ref["ratio"]["treatment"][1].sum()))
        compared += 1
    assert compared >= len(expected) - 3


def test_last_day_is_the_main_query(engine):
    """The final day's row holds exactly what the main query reports for the whole run
    (here every unit has an entry time, so both see the same units)."""
    experiment = daily_experiment(engine)
    daily = engine.run(compile_daily(experiment, engine.dialect))
    main = engine.fetch(compile_sql(experiment, engine.dialect))
    last = max(r["day"] for r in daily)
    final = {(r["metric"], r["arm"]): r for r in daily if r["day"] == last}
    assert len(final) == len(main)
    for row in main:
        got = final[(row["metric"], row["arm"])]
        for col in RESULT_COLUMNS:
            want = row[col]
            if isinstance(want, float):
                check(engine.name if row["metric"] != "offset_top" else f"{engine.name}, offset_top", got[col], want)
            else:
                assert got[col] == want, col


@pytest.mark.parametrize("readout", [False, True], ids=["plain", "readout"])
def test_each_source_is_read_once(engine, readout):
    """One scan per source, read off the engine's own plan, with or without the readout
    columns (whose p-values, intervals and verdicts work on the result rows only)."""
    experiment = daily_experiment(engine, extra="always_valid = true" if readout else "")
    counts = engine.scans(compile_daily(experiment, engine.dialect, readout=readout))
    assert counts == {engine.assignment: 1, engine.events: 1}


def test_rows_are_days_times_metrics_times_arms_whatever_the_units(tmp_path):
    """Nothing row-level leaves the engine: with 10x the units, still days x metrics x arms."""
    for units in (150, 1500):
        data = make_data(units, seed=5)
        days = len(reference(data))
        gen = _duckdb(data, f"n{units}")
        eng = next(gen)
        rows = eng.run(compile_daily(daily_experiment(eng), "duckdb"))
        next(gen, None)
        assert len(rows) == days * len(METRICS) * len(ARMS)


# --- the SQL text --------------------------------------------------------------------------


def test_parses_back_as_one_select_in_every_dialect():
    experiment = sqlstat.parse_spec(spec_text("assignments", "events"))
    for name, d in DIALECTS.items():
        text = compile_daily(experiment, name)
        statements = [s for s in sqlglot.parse(text, read=d.sqlglot) if s is not None]
        assert len(statements) == 1 and isinstance(statements[0], exp.Select), name
        assert text == compile_daily(experiment, name)  # deterministic
        for bad in (exp.Insert, exp.Update, exp.Delete, exp.Create, exp.Drop):
            assert not list(statements[0].find_all(bad)), name


def test_api_and_cli(tmp_path):
    from typer.testing import CliRunner

    from sqlstat.cli import app

    spec = tmp_path / "daily.toml"
    spec.write_text(spec_text("assignments", "events", ("spend",)))
    text = sqlstat.daily_sql(spec, "postgres")
    assert text == compile_daily(sqlstat.load_spec(spec), "postgres")
    res = CliRunner().invoke(app, ["sql", str(spec), "--daily", "--dialect", "postgres"])
    assert res.exit_code == 0 and res.output == text
    plain = tmp_path / "plain.toml"
    plain.write_text(spec_text("assignments", "events", ("spend",)).replace("daily = true", ""))
    res = CliRunner().invoke(app, ["sql", str(plain), "--daily"])
    assert res.exit_code == 2 and "daily = true" in res.output
    with pytest.raises(CompileError, match="daily = true"):
        sqlstat.daily_sql(plain)


# --- what the spec refuses -----------------------------------------------------------------


@pytest.mark.parametrize("change, key, words", [
    (lambda t: t.replace('time = "entered"\n', ""), "assignment", "'time' in [assignment]"),
    (lambda t: t.replace('time = "happened"\n', ""), "events", "'time' in [events]"),
    (lambda t: t.replace('value = "sum(amount)"', 'value = "count(distinct amount)"'), "metric[1].value",
     "count(DISTINCT"),
    (lambda t: t.replace('value = "sum(amount)"', 'value = "sum(amount)"\ncuped = true')
     + '\n[pre_period]\nsource = "old"\nunit = "unit"\ntime = "t"\nstart = 2026-01-01\nend = 2026-02-01\n',
     "metric[1].cuped", "CUPED"),
    (lambda t: t.replace("daily = true", 'daily = true\nsegments = ["arm"]'), "experiment.segments", "segment"),
    (lambda t: t.replace('time = "happened"', 'time = "happened"\nper_unit = true'), "events.per_unit", "per_unit"),
    (lambda t: t.replace("daily = true", 'daily = "yes"'), "experiment.daily", "true or false"),
])
def test_spec_refusals_name_the_key(change, key, words):
    text = change(spec_text("assignments", "events", ("spend",)))
    with pytest.raises(SpecError) as info:
        sqlstat.parse_spec(text, file="daily.toml")
    problem = next(p for p in info.value.problems if p.key == key)
    assert words in problem.message
    assert problem.line is not None


def test_ratio_with_missing_exclude_is_refused():
    text = spec_text("assignments", "events", ("spend_per_event",)) + 'missing = "exclude"\n'
    with pytest.raises(SpecError) as info:
        sqlstat.parse_spec(text)
    assert info.value.problems[0].key == "metric[1].missing"


def test_without_events_is_refused():
    text = spec_text("assignments", "events", ("spend",))
    text = text.replace('[events]\nsource = "events"\nunit = "unit"\ntime = "happened"\n', "")
    with pytest.raises(SpecError) as info:
        sqlstat.parse_spec(text)
    assert any(p.key == "experiment.daily" and "[events]" in p.message for p in info.value.problems)


def test_daily_readout_last_day_equals_the_readout_and_always_valid_is_a_running_minimum(engine):
    """With --readout, every day carries p-values and verdicts; the last day equals the
    main query's readout (same data, same formulas), and the always-valid p-value never
    rises from one day to the next (running minimum over looks, Johari et al. 2017)."""
    experiment = daily_experiment(engine, extra="always_valid = true\nfastest_detected_lift = 0.2")
    daily = engine.run(compile_daily(experiment, engine.dialect, readout=True))
    main = engine.fetch(compile_sql(experiment, engine.dialect, readout=True))
    last = max(r["day"] for r in daily)
    final = {(r["metric"], r["arm"]): r for r in daily if r["day"] == last}
    assert len(final) == len(main)
    for row in main:
        got = final[(row["metric"], row["arm"])]
        who = engine.name if row["metric"] != "offset_top" else f"{engine.name}, offset_top"
        for col in ("p_value", "ci_low", "ci_high", "lift_ci_low", "p_value_adjusted", "srm_p_value"):
            if isinstance(row[col], float):
                check(who, got[col], row[col])
        assert got["verdict"] == row["verdict"]
    by_series: dict = {}
    for r in sorted(daily, key=lambda r: r["day"]):
        by_series.setdefault((r["metric"], r["arm"]), []).append(r["always_valid_p_value"])
    for series in by_series.values():
        values = [v for v in series if v is not None]
        assert values and all(b <= a + 1e-15 for a, b in zip(values, values[1:]))

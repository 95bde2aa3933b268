"""Costs that scale with the query, not the data: the JIT-class trap on every executed engine.

PostgreSQL's JIT compiler (benchmarks/pg_jit.py) made a 0.2 s query take 53 s because its
cost grows with the query's text and plan, not with the rows read. This script looks for
the same class of cost on each executed engine: it loads the demo data (sample_data/) at
two sizes, all 30,000 units and a 1% sample of units (with their loan rows), and times the
demo spec's experiment query (E) and its `--readout` query (R) on both. A query whose time
hardly shrinks when the data shrink 100-fold spends it on parsing, planning or compiling,
and that part would not grow with data either; the ratio full / 1% says which it is.

Each time is the median of --repeat runs (after one warm-up run) as sqlstat's own engine
sees it, fetch included; PostgreSQL is measured as sqlstat runs it (JIT off for its query).
Spark is left out unless --spark (its session start dominates; docs/dashboards.md gives its
planning time). Usage: python3 benchmarks/plan_cost.py [--repeat 3] [--engines duckdb,...]
"""

from __future__ import annotations

import argparse
import json
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
PROJECT = HERE.parent
sys.path.insert(0, str(PROJECT))  # the test suite's engine loaders (tests/engine_fixtures.py)

ENGINES = ("duckdb", "sqlite", "postgres", "mysql", "clickhouse")


def demo_columns(share: float) -> dict[str, dict]:
    """The demo tables as numpy columns; share < 1 keeps that share of units (seeded)."""
    import numpy as np
    import pyarrow.parquet as pq

    tables = {}
    for name in ("assignments", "loans"):
        t = pq.read_table(PROJECT / "sample_data" / f"{name}.parquet")
        tables[name] = {c: t.column(c).to_numpy(zero_copy_only=False) for c in t.column_names}
    if share < 1:
        units = tables["assignments"]["borrower_id"]
        keep = np.random.default_rng(7).choice(units, size=max(1, int(len(units) * share)), replace=False)
        for name, cols in tables.items():
            mask = np.isin(cols["borrower_id"], keep)
            tables[name] = {c: v[mask] for c, v in cols.items()}
    return tables


def spec_for(names: dict[str, str], folder: Path) -> Path:
    text = (PROJECT / "sample_data" / "return_reminders.toml").read_text()
    for name, table in names.items():
        text = text.replace(f'"{name}.parquet"', f'"{table}"')
    path = folder / "demo.toml"
    path.write_text(text)
    return path


def median_time(engine, sql: str, repeat: int) -> float:
    engine.run(sql)  # warm-up: caches, first connection
    runs = []
    for _ in range(repeat):
        start = time.perf_counter()
        engine.run(sql)
        runs.append(time.perf_counter() - start)
    return statistics.median(runs)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--engines", default=",".join(ENGINES))
    ap.add_argument("--spark", action="store_true", help="also measure Spark SQL local mode")
    args = ap.parse_args()

    import sqlstat
    from tests import engine_fixtures

    names = args.engines.split(",") + (["spark"] if args.spark else [])
    sizes = {"full": demo_columns(1.0), "1%": demo_columns(0.01)}
    out: dict[str, dict] = {}
    with tempfile.TemporaryDirectory() as tmp:
        folder = Path(tmp)
        for name in names:
            db = engine_fixtures.open_database(name, folder)
            row: dict[str, object] = {}
            try:
                for size, tables in sizes.items():
                    loaded = {t: db.load(t, cols) for t, cols in tables.items()}
                    spec = spec_for(loaded, folder)
                    queries = {"E": sqlstat.sql(str(spec), db.dialect),
                               "R": sqlstat.sql(str(spec), db.dialect, readout=True)}
                    engine = db.engine()
                    try:
                        for key, sql in queries.items():
                            row[f"{key} {size} s"] = round(median_time(engine, sql, args.repeat), 3)
                            row[f"{key} KB"] = round(len(sql.encode()) / 1024)
                    finally:
                        engine.close()
                for key in ("E", "R"):
                    row[f"{key} full / 1%"] = round(row[f"{key} full s"] / row[f"{key} 1% s"], 1)
            finally:
                db.close()
            out[name] = row
            print(name, json.dumps(row), flush=True)
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()

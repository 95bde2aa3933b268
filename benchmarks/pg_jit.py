"""PostgreSQL's JIT compiler and sqlstat's query: time with and without `jit = off`.

Loads the demo data (sample_data/, 30,000 borrowers and 91,241 loans) into the schema
`sqlstat_bench_jit` of the PostgreSQL server given by --url (default: the test server),
whose planner cost for the demo query passes the default `jit_above_cost` (100000), and
times on the same server:

  J1. the demo's experiment query through a plain psycopg connection (server defaults,
      jit = on): what a user who pastes `sqlstat sql --dialect postgres` gets;
  J0. the same text with `SET LOCAL jit = off` first, as sqlstat's own runs do;
  R1/R0. the same two for the `--readout` query;
  S. the whole `sqlstat run SPEC --db URL` process (sqlstat's own run).

Each J/R timing is the query's time as the client sees it (median of --repeat; JIT'd runs
once unless --repeat-slow), plus the JIT time PostgreSQL reports in EXPLAIN ANALYZE.
Usage: python3 benchmarks/pg_jit.py [--url postgresql://postgres@127.0.0.1:5432/test]
"""

from __future__ import annotations

import argparse
import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
PROJECT = HERE.parent
SCHEMA = "sqlstat_bench_jit"
TYPES = {"int64": "BIGINT", "int32": "INTEGER", "double": "DOUBLE PRECISION", "bool": "BOOLEAN",
         "string": "TEXT", "large_string": "TEXT", "date32[day]": "DATE"}


def load(con) -> None:
    import pyarrow.parquet as pq

    con.execute(f"DROP SCHEMA IF EXISTS {SCHEMA} CASCADE")
    con.execute(f"CREATE SCHEMA {SCHEMA}")
    for name in ("assignments", "loans"):
        table = pq.read_table(PROJECT / "sample_data" / f"{name}.parquet")
        cols = ", ".join(f"{f.name} {TYPES[str(f.type)]}" for f in table.schema)
        con.execute(f"CREATE TABLE {SCHEMA}.{name} ({cols})")
        with con.cursor().copy(f"COPY {SCHEMA}.{name} FROM STDIN") as copy:
            for row in zip(*(c.to_pylist() for c in table.columns)):
                copy.write_row(row)
        con.execute(f"ANALYZE {SCHEMA}.{name}")


def spec_file(folder: Path) -> Path:
    text = (PROJECT / "sample_data" / "return_reminders.toml").read_text()
    text = text.replace('"assignments.parquet"', f'"{SCHEMA}.assignments"')
    text = text.replace('"loans.parquet"', f'"{SCHEMA}.loans"')
    path = folder / "demo_pg.toml"
    path.write_text(text)
    return path


def timed(con, sql: str, jit_off: bool) -> float:
    start = time.perf_counter()
    with con.transaction():
        if jit_off:
            con.execute("SET LOCAL jit = off")
        con.execute(sql).fetchall()
    return time.perf_counter() - start


def jit_ms(con, sql: str, jit_off: bool) -> tuple[float, float]:
    """(execution ms, JIT total ms) from EXPLAIN (ANALYZE, FORMAT JSON)."""
    with con.transaction():
        if jit_off:
            con.execute("SET LOCAL jit = off")
        plan = con.execute("EXPLAIN (ANALYZE, FORMAT JSON) " + sql).fetchone()[0][0]
    jit = plan.get("JIT", {}).get("Timing", {}).get("Total", 0.0)
    return plan["Execution Time"], jit if isinstance(jit, float) else jit.get("Total", 0.0)


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--url", default=os.environ.get("SQLSTAT_TEST_POSTGRES", "postgresql://postgres@127.0.0.1:5432/test"))
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--repeat-slow", type=int, default=1)
    args = ap.parse_args()
    import psycopg

    import sqlstat

    out: dict[str, object] = {}
    with psycopg.connect(args.url, autocommit=True) as con:
        out["server"] = con.execute("SELECT version()").fetchone()[0].split(" on ")[0]
        out["jit"], out["jit_above_cost"] = (con.execute(f"SHOW {k}").fetchone()[0] for k in ("jit", "jit_above_cost"))
        load(con)
        with tempfile.TemporaryDirectory() as tmp:
            spec = spec_file(Path(tmp))
            queries = {"J": sqlstat.sql(str(spec), "postgres"), "R": sqlstat.sql(str(spec), "postgres", readout=True)}
            for key, sql in queries.items():
                plan = con.execute("EXPLAIN (FORMAT JSON) " + sql).fetchone()[0][0]["Plan"]
                out[f"{key} planner cost"] = plan["Total Cost"]
                for off in (False, True):
                    label = f"{key}{0 if off else 1}"
                    runs = [timed(con, sql, off) for _ in range(args.repeat if off else args.repeat_slow)]
                    out[f"{label} s"] = round(statistics.median(runs), 2)
                    execution, jit = jit_ms(con, sql, off)
                    out[f"{label} EXPLAIN ANALYZE execution s, of which JIT"] = (round(execution / 1000, 2),
                                                                                 round(jit / 1000, 2))
            runs = []
            for _ in range(args.repeat):
                start = time.perf_counter()
                subprocess.run([str(Path(sys.executable).with_name("sqlstat")), "run", str(spec), "--db", args.url],
                               check=False, capture_output=True)
                runs.append(time.perf_counter() - start)
            out["S sqlstat run s"] = round(statistics.median(runs), 2)
        con.execute(f"DROP SCHEMA IF EXISTS {SCHEMA} CASCADE")
    print(json.dumps(out, indent=1))


if __name__ == "__main__":
    main()

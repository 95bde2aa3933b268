"""Speed of `sqlstat run` against hand-written DuckDB queries doing the same work.

Builds (once) benchmarks/data/units_<N>.parquet: 20 million units, one row each, with a
string unit id (as most event pipelines key units), an arm label and 10 numeric columns;
and times, as whole processes the way a user runs them:

  A. sqlstat run with 3 metrics, per-unit regroup (values are aggregates per unit)
  B. sqlstat run with 30 metrics, per-unit regroup
  C. sqlstat run with 3 metrics, `per_unit = true` (no regroup)
  D. sqlstat run with 3 metrics, per-unit regroup, `--readout`-free but always_valid on
  H1. hand-written DuckDB query doing A's work: per-unit then per-arm aggregation, 3 metrics,
      one scan, and (as sqlstat does) units seen in two arms left out
  H0. the same without the two-arm check (min(arm) only), for reference
  H30. hand-written DuckDB query doing B's work (30 metrics, with the two-arm check)
  H2. hand-written DuckDB query: single-level per-arm aggregation, 3 metrics
  R. the engine time of A's query with and without `--readout` (the self-contained
     p-values, intervals, adjustments and verdicts), alternated in one DuckDB process

Each timing is the median of --repeat runs (default 3), after one warm-up run that also
fills the OS file cache. Targets (issue): A <= 1.3 x H1; B <= 2 x A; C compared with H2.

Usage: python3 benchmarks/bench.py [--units 20000000] [--repeat 3]
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import statistics
import subprocess
import sys
import textwrap
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
DATA = HERE / "data"


def build(units: int) -> Path:
    path = DATA / f"units_{units}.parquet"
    if path.exists():
        return path
    import duckdb

    DATA.mkdir(exist_ok=True)
    cols = ", ".join(f"(hash(i * {k + 7}) % 1000) / 10.0 AS x{k}" for k in range(10))
    duckdb.sql(
        f"COPY (SELECT 'unit-' || lpad(CAST(i AS VARCHAR), 9, '0') AS unit, "
        f"CASE WHEN hash(i) % 2 = 0 THEN 'control' ELSE 'treatment' END AS arm, {cols} "
        f"FROM range({units}) t(i)) TO '{path}' (FORMAT parquet, ROW_GROUP_SIZE 1000000)"
    )
    return path


# 30 metrics over the 10 columns: sums, maxima and counts above a threshold, as a real
# spec mixes them. The 3-metric specs use the first three sums.
AGGREGATES = [f"sum(x{k})" for k in range(10)] + [f"max(x{k})" for k in range(10)] + [
    f"count_if(x{k} > 50)" for k in range(10)
]


def spec(path: Path, metrics: int, per_unit: bool, always_valid: bool = False) -> Path:
    values = [f"x{k}" for k in range(metrics)] if per_unit else AGGREGATES[:metrics]
    body = "\n".join(
        f'[[metric]]\nname = "m{k}"\nkind = "mean"\nvalue = "{v}"\n' for k, v in enumerate(values)
    )
    text = textwrap.dedent(f"""
    [experiment]
    name = "bench"
    control = "control"
    {"always_valid = true" if always_valid else ""}

    [assignment]
    source = "{path.name}"
    unit = "unit"
    arm = "arm"
    {"per_unit = true" if per_unit else ""}
    """) + "\n" + body
    out = path.parent / f"bench_{metrics}_{int(per_unit)}_{int(always_valid)}.toml"
    out.write_text(text)
    return out


HAND_TWO_LEVEL = """
SELECT arm, count(*) AS n, avg(v0), var_samp(v0), avg(v1), var_samp(v1), avg(v2), var_samp(v2)
FROM (SELECT unit, CASE WHEN min(arm) = max(arm) THEN min(arm) END AS arm,
             sum(x0) AS v0, sum(x1) AS v1, sum(x2) AS v2
      FROM read_parquet('{path}') GROUP BY unit)
GROUP BY arm
"""
HAND_TWO_LEVEL_UNCHECKED = """
SELECT arm, count(*) AS n, avg(v0), var_samp(v0), avg(v1), var_samp(v1), avg(v2), var_samp(v2)
FROM (SELECT unit, min(arm) AS arm, sum(x0) AS v0, sum(x1) AS v1, sum(x2) AS v2
      FROM read_parquet('{path}') GROUP BY unit)
GROUP BY arm
"""
HAND_30 = (
    "SELECT arm, count(*), " + ", ".join(f"avg(v{i}), var_samp(v{i})" for i in range(30))
    + " FROM (SELECT unit, CASE WHEN min(arm) = max(arm) THEN min(arm) END AS arm, "
    + ", ".join(f"{a} AS v{i}" for i, a in enumerate(
        [f"sum(x{k})" for k in range(10)] + [f"max(x{k})" for k in range(10)]
        + [f"count_if(x{k} > 50)" for k in range(10)]))
    + " FROM read_parquet('{path}') GROUP BY unit) GROUP BY arm"
)
HAND_ONE_LEVEL = """
SELECT arm, count(*) AS n, avg(x0), var_samp(x0), avg(x1), var_samp(x1), avg(x2), var_samp(x2)
FROM read_parquet('{path}') GROUP BY arm
"""


def time_cmd(cmd: list[str], repeat: int, cwd: Path) -> list[float]:
    subprocess.run(cmd, cwd=cwd, check=False, capture_output=True)  # warm-up
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        res = subprocess.run(cmd, cwd=cwd, capture_output=True, text=True)
        times.append(time.perf_counter() - t0)
        if res.returncode not in (0, 1):
            raise SystemExit(f"command failed: {' '.join(cmd)}\n{res.stderr}")
    return times


def hand(query: str, path: Path) -> list[str]:
    code = f"import duckdb; duckdb.sql({query.format(path=path.name)!r}).fetchall()"
    return [sys.executable, "-c", code]


def readout_cost(path: Path, repeat: int) -> tuple[list[float], list[float]]:
    """Engine seconds of A's query plain and with --readout, alternated in one process
    (same file cache, same connection), after one warm-up of each."""
    import duckdb

    import sqlstat

    experiment = sqlstat.load_spec(spec(path, 3, False, True))
    queries = {False: sqlstat.sql(experiment, "duckdb"), True: sqlstat.sql(experiment, "duckdb", readout=True)}
    con = duckdb.connect()
    con.execute(f"SET file_search_path = '{path.parent}'")
    times: dict[bool, list[float]] = {False: [], True: []}
    for round_ in range(repeat + 1):
        for readout, query in queries.items():
            t0 = time.perf_counter()
            con.execute(query).fetchall()
            if round_:
                times[readout].append(time.perf_counter() - t0)
    return times[False], times[True]


def print_readout_cost(path: Path, repeat: int) -> None:
    plain, readout = readout_cost(path, max(repeat, 5))
    print(f"R  engine time of A's query: plain median {statistics.median(plain):.2f} s "
          f"({', '.join(f'{t:.2f}' for t in plain)}), --readout median {statistics.median(readout):.2f} s "
          f"({', '.join(f'{t:.2f}' for t in readout)})")


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--units", type=int, default=20_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--only-readout", action="store_true", help="measure R only")
    args = ap.parse_args()
    path = build(args.units)
    if args.only_readout:
        print_readout_cost(path, args.repeat)
        return
    run = [sys.executable, "-m", "sqlstat.cli", "run"]
    cases = {
        "A  sqlstat, 3 metrics, per-unit regroup": run + [spec(path, 3, False).name],
        "B  sqlstat, 30 metrics, per-unit regroup": run + [spec(path, 30, False).name],
        "C  sqlstat, 3 metrics, per_unit = true": run + [spec(path, 3, True).name],
        "D  sqlstat, 3 metrics, regroup, always_valid": run + [spec(path, 3, False, True).name],
        "H1 hand-written, two-level, 3 metrics": hand(HAND_TWO_LEVEL, path),
        "H0 hand-written, two-level, no two-arm check": hand(HAND_TWO_LEVEL_UNCHECKED, path),
        "H30 hand-written, two-level, 30 metrics": hand(HAND_30, path),
        "H2 hand-written, one-level, 3 metrics": hand(HAND_ONE_LEVEL, path),
    }
    results = {}
    for name, cmd in cases.items():
        times = time_cmd(cmd, args.repeat, path.parent)
        results[name] = statistics.median(times)
        print(f"{name:48s} median {results[name]:7.2f} s   runs {', '.join(f'{t:.2f}' for t in times)}", flush=True)
    a, b, c = results["A  sqlstat, 3 metrics, per-unit regroup"], results["B  sqlstat, 30 metrics, per-unit regroup"], results["C  sqlstat, 3 metrics, per_unit = true"]
    h1, h2 = results["H1 hand-written, two-level, 3 metrics"], results["H2 hand-written, one-level, 3 metrics"]
    print()
    print(f"A / H1 = {a / h1:.2f}  (target <= 1.3)")
    print(f"B / A  = {b / a:.2f}  (target <= 2)")
    print(f"A / H0 = {a / results['H0 hand-written, two-level, no two-arm check']:.2f}  (against a query that skips the two-arm check)")
    print(f"B / H30 = {b / results['H30 hand-written, two-level, 30 metrics']:.2f}  (30 metrics, same work by hand)")
    print(f"H30 / H1 = {results['H30 hand-written, two-level, 30 metrics'] / h1:.2f}  (the engine's own cost of 30 vs 3 metrics)")
    print(f"C / H2 = {c / h2:.2f}")
    print(f"D / A  = {results['D  sqlstat, 3 metrics, regroup, always_valid'] / a:.2f}  (cost of always-valid columns)")
    print_readout_cost(path, args.repeat)
    import duckdb

    print(json.dumps({"units": args.units, "cpus": os.cpu_count(), "python": platform.python_version(),
                      "duckdb": duckdb.__version__, "machine": platform.machine()}))


if __name__ == "__main__":
    main()

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

Usage: python3 benchmarks/bench.py [--units 20000000] [--repeat 3] [--data DIR]

`--targets` measures, instead, the speed and memory targets, each printed next to its goal:

  S.  start-up: `sqlstat sql` and `sqlstat check` (target < 0.25 s each)
  C1. `sqlstat run`, per_unit = true, 1 million units, against H2 in a bare
      `python -c "import duckdb; ..."` process (target <= 1.5 x)
  K.  the engine cost of the two-arm check: sqlstat's own query against the same query with
      the check taken out (arm = MIN(arm) only), alternated in one DuckDB process, at 5 and
      20 million units (target <= 1.10 x); CPU seconds beside wall seconds, because the
      machine is shared
  A5. the holdout-style case: 5 million units, string ids, 3 metrics, one parquet file,
      `sqlstat run` against the two-level hand-written query H1 (target A / H1 <= 1.3)
  M.  peak RSS of `sqlstat run` (A) and of H1 at 20 million units (target <= 1.2 x)
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import re
import statistics
import subprocess
import sys
import textwrap
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
DATA = HERE / "data"


def build(units: int, data: Path = DATA) -> Path:
    path = data / f"units_{units}.parquet"
    if path.exists():
        return path
    import duckdb

    data.mkdir(exist_ok=True)
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
    out = path.parent / f"bench_{path.stem}_{metrics}_{int(per_unit)}_{int(always_valid)}.toml"
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


def run_measured(cmd: list[str], cwd: Path) -> tuple[float, float]:
    """Wall seconds and peak resident memory (MiB) of one child process (os.wait4)."""
    t0 = time.perf_counter()
    proc = subprocess.Popen(cmd, cwd=cwd, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    _, status, usage = os.wait4(proc.pid, 0)
    wall = time.perf_counter() - t0
    if os.waitstatus_to_exitcode(status) not in (0, 1):
        raise SystemExit(f"command failed: {' '.join(cmd)}\n{proc.stderr.read().decode()}")
    return wall, usage.ru_maxrss / 1024  # Linux reports KiB


def alternate(cases: dict[str, list[str]], repeat: int, cwd: Path) -> dict[str, list[tuple[float, float]]]:
    """Each case once as warm-up, then `repeat` rounds alternating the cases."""
    for cmd in cases.values():
        run_measured(cmd, cwd)
    out: dict[str, list[tuple[float, float]]] = {name: [] for name in cases}
    for _ in range(repeat):
        for name, cmd in cases.items():
            out[name].append(run_measured(cmd, cwd))
    return out


def _median(runs: list[tuple[float, float]], i: int = 0) -> float:
    return statistics.median(r[i] for r in runs)


def _show(name: str, runs: list[tuple[float, float]]) -> None:
    print(f"  {name:44s} median {_median(runs):6.2f} s  peak RSS {_median(runs, 1):6.0f} MiB   "
          f"runs {', '.join(f'{w:.2f}' for w, _ in runs)}", flush=True)


def _verdict(value: float, target: float, below: bool = True) -> str:
    return "meets" if (value <= target if below else value >= target) else "MISSES"


# The per-unit two-arm check in sqlstat's query, and the same query without it.
CHECK_AGGREGATE = re.compile(r"\n\s*MAX\(CAST\(\"arm\" AS TEXT\)\) AS \"arm_label_last\",")
CHECK_LABEL = 'CASE WHEN "arm_label" = "arm_label_last" THEN "arm_label" END AS "arm_label"'


def without_check(query: str) -> str:
    if not CHECK_AGGREGATE.search(query) or CHECK_LABEL not in query:
        raise SystemExit("the two-arm check is not where benchmarks/bench.py expects it: update without_check")
    return CHECK_AGGREGATE.sub("", query).replace(CHECK_LABEL, '"arm_label"')


def check_cost(path: Path, repeat: int) -> None:
    """Engine seconds (wall and CPU) of sqlstat's query with and without the two-arm check,
    alternated in one DuckDB process after a warm-up of each."""
    import duckdb

    import sqlstat

    query = sqlstat.sql(sqlstat.load_spec(spec(path, 3, False)), "duckdb")
    queries = {"with check": query, "without": without_check(query)}
    con = duckdb.connect()
    con.execute(f"SET file_search_path = '{path.parent}'")
    wall: dict[str, list[float]] = {k: [] for k in queries}
    cpu: dict[str, list[float]] = {k: [] for k in queries}
    for round_ in range(repeat + 1):
        for name, q in queries.items():
            w0, c0 = time.perf_counter(), time.process_time()
            con.execute(q).fetchall()
            if round_:
                wall[name].append(time.perf_counter() - w0)
                cpu[name].append(time.process_time() - c0)
    med = {k: (statistics.median(wall[k]), statistics.median(cpu[k])) for k in queries}
    for k in queries:
        print(f"  {k:12s} wall median {med[k][0]:.2f} s ({', '.join(f'{t:.2f}' for t in wall[k])}), "
              f"CPU median {med[k][1]:.2f} s ({', '.join(f'{t:.2f}' for t in cpu[k])})")
    rw, rc = med["with check"][0] / med["without"][0], med["with check"][1] / med["without"][1]
    print(f"  K  two-arm check cost, {path.stem}: wall {rw:.2f} x, CPU {rc:.2f} x   "
          f"(target <= 1.10: {_verdict(rc, 1.10)} by CPU, {_verdict(rw, 1.10)} by wall)", flush=True)


def targets(data: Path, repeat: int) -> None:
    run = [sys.executable, "-m", "sqlstat.cli"]
    for units in (1_000_000, 5_000_000, 20_000_000):  # built in a child: see the note on K below
        subprocess.run([sys.executable, __file__, "--build-only", "--units", str(units), "--data", str(data)], check=True)
    p1, p5, p20 = (build(units, data) for units in (1_000_000, 5_000_000, 20_000_000))
    print("S  start-up (1M-unit spec; compile only)")
    res = alternate({"sqlstat sql": run + ["sql", spec(p1, 3, False).name],
                     "sqlstat check": run + ["check", spec(p1, 3, False).name]}, repeat, data)
    for name, runs in res.items():
        _show(name, runs)
        print(f"  {name}: {_median(runs):.2f} s (target < 0.25 s: {_verdict(_median(runs), 0.25)})")
    print("C1 per_unit = true, 1 million units")
    res = alternate({"C  sqlstat run, per_unit": run + ["run", spec(p1, 3, True).name],
                     "H2 hand-written, one level": hand(HAND_ONE_LEVEL, p1)}, repeat, data)
    for name, runs in res.items():
        _show(name, runs)
    r = _median(res["C  sqlstat run, per_unit"]) / _median(res["H2 hand-written, one level"])
    print(f"  C / H2 = {r:.2f} (target <= 1.5: {_verdict(r, 1.5)})")
    for label, p in (("A5 holdout-style, 5 million units", p5), ("M  20 million units", p20)):
        print(label)
        res = alternate({"A  sqlstat run, 3 metrics": run + ["run", spec(p, 3, False).name],
                         "H1 hand-written, two-level": hand(HAND_TWO_LEVEL, p)}, repeat, data)
        for name, runs in res.items():
            _show(name, runs)
        a, h = res["A  sqlstat run, 3 metrics"], res["H1 hand-written, two-level"]
        print(f"  A / H1 time = {_median(a) / _median(h):.2f} (target <= 1.3: {_verdict(_median(a) / _median(h), 1.3)})")
        m = _median(a, 1) / _median(h, 1)
        print(f"  peak RSS A {_median(a, 1):.0f} MiB, H1 {_median(h, 1):.0f} MiB: A / H1 = {m:.2f}"
              f" (target <= 1.2 at 20M: {_verdict(m, 1.2)})")
    # In a child process: a child's peak RSS starts from its parent's at fork (Linux), so
    # this process must not load the 20M-unit aggregate itself before the memory case.
    print("K  the two-arm check, engine time in one DuckDB process")
    for p in (p5, p20):
        subprocess.run([sys.executable, __file__, "--check-cost", str(p), "--repeat", str(max(repeat, 5))], check=True)
    import duckdb

    print(json.dumps({"cpus": os.cpu_count(), "python": platform.python_version(), "duckdb": duckdb.__version__,
                      "machine": platform.machine(), "load_average_at_end": os.getloadavg()}))


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--units", type=int, default=20_000_000)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--only-readout", action="store_true", help="measure R only")
    ap.add_argument("--targets", action="store_true", help="measure S, C1, K, A5 and M (see the docstring)")
    ap.add_argument("--data", type=Path, default=DATA, help="where the parquet files are built and kept")
    ap.add_argument("--build-only", action="store_true", help=argparse.SUPPRESS)
    ap.add_argument("--check-cost", type=Path, help=argparse.SUPPRESS)  # K on one file (run by --targets)
    args = ap.parse_args()
    if args.build_only:
        build(args.units, args.data)
        return
    if args.check_cost:
        check_cost(args.check_cost, args.repeat)
        return
    if args.targets:
        targets(args.data, args.repeat)
        return
    path = build(args.units, args.data)
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

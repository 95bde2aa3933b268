"""Size of the self-contained readout per dialect, and Spark SQL's planning time for it.

For the demo spec (sample_data/return_reminders.toml, its file sources renamed to tables so
that every dialect compiles it), prints per dialect the bytes, lines and WITH elements of
the `--readout` query beside the plain experiment query. With --spark, also times Spark
SQL local mode (default driver heap: no spark.driver.memory set) planning the readout and
the plain query of the five-metric test spec (tests/test_readout.py): `EXPLAIN` of each,
median of --repeat runs after one warm-up. Run timings on a quiet machine:

    python3 benchmarks/readout_size.py --spark
"""

from __future__ import annotations

import argparse
import statistics
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
PROJECT = HERE.parent
sys.path.insert(0, str(PROJECT))


def demo_experiment():
    from sqlstat.spec import load_spec

    text = (PROJECT / "sample_data" / "return_reminders.toml").read_text()
    for name in ("assignments", "loans"):
        text = text.replace(f'"{name}.parquet"', f'"{name}"')
    path = Path(tempfile.mkdtemp()) / "demo.toml"
    path.write_text(text)
    return load_spec(path)


def sizes() -> list[tuple[str, int, int, int, int]]:
    import sqlglot
    from sqlglot import exp

    import sqlstat
    from sqlstat.dialects import DIALECTS

    experiment = demo_experiment()
    out = []
    for name in sorted(DIALECTS):
        readout = sqlstat.sql(experiment, name, readout=True)
        plain = sqlstat.sql(experiment, name)
        tree = sqlglot.parse_one(readout, read=DIALECTS[name].sqlglot)
        ctes = sum(1 for _ in tree.find_all(exp.CTE))
        out.append((name, len(readout.encode()), readout.count("\n"), ctes, len(plain.encode())))
    return out


def spark_planning(repeat: int) -> tuple[float, float]:
    from pyspark.sql import SparkSession

    import sqlstat
    from tests.conftest import spec_text
    from tests.test_readout import METRICS

    spark = SparkSession.builder.master("local[2]").config("spark.ui.enabled", "false").getOrCreate()
    spark.sql("CREATE OR REPLACE TEMP VIEW ra AS SELECT 1 AS unit, 'control' AS arm, 'north' AS region")
    spark.sql("CREATE OR REPLACE TEMP VIEW re AS SELECT 1 AS unit, 1.0 AS amount, true AS converted")
    extra = 'segments = ["region"]\narms = ["control", "treatment", "variant_b"]\nalways_valid = true'
    spec = sqlstat.parse_spec(spec_text(*METRICS, extra_experiment=extra, assignment_source="ra", events_source="re"))
    result = []
    for readout in (False, True):
        text = sqlstat.sql(spec, "spark", readout=readout)
        spark.sql("EXPLAIN " + text).collect()
        runs = []
        for _ in range(repeat):
            start = time.perf_counter()
            spark.sql("EXPLAIN " + text).collect()
            runs.append(time.perf_counter() - start)
        result.append(statistics.median(runs))
    spark.stop()
    return result[0], result[1]


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--spark", action="store_true", help="also time Spark SQL's planning (local mode)")
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args()
    print(f"{'dialect':12s} {'readout bytes':>13s} {'lines':>6s} {'CTEs':>5s} {'plain bytes':>11s}")
    for name, size, lines, ctes, plain in sizes():
        print(f"{name:12s} {size:13,d} {lines:6d} {ctes:5d} {plain:11,d}")
    if args.spark:
        plain, readout = spark_planning(args.repeat)
        print(f"Spark local planning (EXPLAIN, default driver heap): plain {plain:.2f} s, readout {readout:.2f} s")


if __name__ == "__main__":
    main()

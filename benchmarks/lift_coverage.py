"""Coverage of sqlstat's relative-lift interval for a proportion, by simulation.

For each cell of a grid (units per arm x control rate x true ratio of rates), draw many
independent experiments, run them through sqlstat end to end (one DuckDB query in which
each replication is a segment, then the Python layer, which picks the z test or Fisher's
exact test per replication and the matching lift interval) and count how often the
reported 95% relative-lift interval contains the true lift (ratio - 1). The coverage is
shown with its Clopper-Pearson (1934) 95% interval (scipy.stats.binomtest).

    python3 benchmarks/lift_coverage.py            # the full grid, 2,000 replications per cell
    python3 benchmarks/lift_coverage.py --reps 300 # quicker

tests/test_methods.py runs a smaller grid with fewer replications through the same
function. The figures in docs/methods.md come from the full run.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import textwrap
from dataclasses import dataclass
from pathlib import Path

import numpy as np

SIZES = (30, 50, 100, 200, 500)
RATES = (0.005, 0.02, 0.05, 0.2)
RATIOS = (1.0, 2.0)


@dataclass(frozen=True)
class Cell:
    n: int
    rate: float
    ratio: float
    reps: int
    covered: int
    fisher_rows: int
    ci_low: float
    ci_high: float

    @property
    def coverage(self) -> float:
        return self.covered / self.reps


SPEC = """
[experiment]
name = "lift-coverage"
control = "control"
segments = ["rep"]

[assignment]
source = "{source}"
unit = "unit"
arm = "arm"
per_unit = true

[[metric]]
name = "converted"
kind = "proportion"
value = "converted"
"""


def simulate(n: int, rate: float, ratio: float, reps: int, seed: int, folder: Path) -> Cell:
    """Coverage of the relative-lift interval over ``reps`` experiments with n units per arm."""
    import pyarrow as pa
    import pyarrow.parquet as pq
    from scipy import stats as sps

    import sqlstat

    rng = np.random.default_rng(seed)
    size = 2 * n * reps
    rep = np.repeat(np.arange(reps), 2 * n)
    arm = np.tile(np.repeat(np.array(["control", "treatment"]), n), reps)
    p = np.where(arm == "treatment", rate * ratio, rate)
    converted = rng.random(size) < p
    source = folder / f"cov_{n}_{rate}_{ratio}_{seed}.parquet"
    pq.write_table(pa.table({"unit": np.arange(size), "arm": arm, "rep": rep, "converted": converted}), source)
    spec_path = folder / "spec.toml"
    spec_path.write_text(textwrap.dedent(SPEC.format(source=source.as_posix())))
    analysis = sqlstat.run(spec_path)
    rows = [r for r in analysis.results if r.segment is not None]
    assert len(rows) == reps, (len(rows), reps)
    truth = ratio - 1.0
    covered = sum(1 for r in rows if r.lift_ci_low <= truth <= r.lift_ci_high)
    fisher = sum(1 for r in rows if r.test == "fisher_exact")
    ci = sps.binomtest(covered, reps).proportion_ci(0.95, method="exact")  # Clopper-Pearson
    return Cell(n, rate, ratio, reps, covered, fisher, float(ci.low), float(ci.high))


def grid(sizes=SIZES, rates=RATES, ratios=RATIOS, reps: int = 2000, seed: int = 2026) -> list[Cell]:
    cells = []
    with tempfile.TemporaryDirectory() as tmp:
        for i, (n, rate, ratio) in enumerate((n, r, q) for n in sizes for r in rates for q in ratios):
            if rate * ratio >= 1:
                continue
            cells.append(simulate(n, rate, ratio, reps, seed + i, Path(tmp)))
    return cells


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reps", type=int, default=2000)
    ap.add_argument("--seed", type=int, default=2026)
    args = ap.parse_args(argv)
    print("| units per arm | control rate | true ratio | coverage | Clopper-Pearson 95% | Fisher rows |")
    print("|---|---|---|---|---|---|")
    for c in grid(reps=args.reps, seed=args.seed):
        print(f"| {c.n} | {c.rate:.1%} | {c.ratio:g} | {c.coverage:.3f} | [{c.ci_low:.3f}, {c.ci_high:.3f}] "
              f"| {c.fisher_rows / c.reps:.0%} |", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())

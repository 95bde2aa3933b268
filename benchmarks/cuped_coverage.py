"""Coverage of sqlstat's CUPED interval (Lin's interacted regression, slopes estimated), by simulation.

Each replication is an experiment with a skewed pre-period covariate, a post-period metric
that depends on it, and a treatment effect that varies with it (so each arm has its own
slope, the case Lin, 2013, addresses). Replications run through sqlstat end to end: one
DuckDB query in which each replication is a segment, then the Python layer. The share of
95% intervals that contain the true average effect is shown with its Clopper-Pearson
(1934) 95% interval (scipy.stats.binomtest).

    python3 benchmarks/cuped_coverage.py             # 200 and 20,000 units per arm, 1,000 replications
    python3 benchmarks/cuped_coverage.py --reps 200

tests/test_methods.py runs the same function with fewer replications.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import textwrap
from dataclasses import dataclass
from pathlib import Path

import numpy as np

EFFECT = 0.5  # the true average treatment effect


@dataclass(frozen=True)
class Cell:
    n: int
    reps: int
    covered: int
    ci_low: float
    ci_high: float
    mean_reduction: float

    @property
    def coverage(self) -> float:
        return self.covered / self.reps


SPEC = """
[experiment]
name = "cuped-coverage"
control = "control"
segments = ["rep"]

[assignment]
source = "{assignments}"
unit = "unit"
arm = "arm"
per_unit = true

[events]
source = "{events}"
unit = "unit"
per_unit = true

[pre_period]
source = "{pre}"
unit = "unit"
time = "day"
start = 2026-07-01
end = 2026-08-01

[[metric]]
name = "spend"
kind = "mean"
value = "amount"
covariate = "sum(amount)"
"""


def simulate(n: int, reps: int, seed: int, folder: Path) -> Cell:
    """Coverage of the CUPED interval over ``reps`` experiments with n units per arm."""
    import pyarrow as pa
    import pyarrow.parquet as pq
    from scipy import stats as sps

    import sqlstat

    rng = np.random.default_rng(seed)
    size = 2 * n * reps
    unit = np.arange(size)
    rep = np.repeat(np.arange(reps), 2 * n)
    arm = np.tile(np.repeat(np.array(["control", "treatment"]), n), reps)
    habit = rng.gamma(2.0, 2.0, size)  # mean 4
    pre = rng.poisson(habit).astype(float)
    treated = arm == "treatment"
    # effect EFFECT on average, larger for heavier users: a different slope per arm
    post = rng.poisson(habit) + treated * (EFFECT + 0.3 * (habit - 4.0)) + rng.normal(0.0, 1.0, size)
    tag = f"{n}_{seed}"
    paths = {k: folder / f"{k}_{tag}.parquet" for k in ("assignments", "events", "pre")}
    pq.write_table(pa.table({"unit": unit, "arm": arm, "rep": rep}), paths["assignments"])
    pq.write_table(pa.table({"unit": unit, "amount": post}), paths["events"])
    day = np.full(size, np.datetime64("2026-07-10", "D"))
    pq.write_table(pa.table({"unit": unit, "day": day, "amount": pre}), paths["pre"])
    spec_path = folder / f"spec_{tag}.toml"
    spec_path.write_text(textwrap.dedent(SPEC.format(**{k: v.as_posix() for k, v in paths.items()})))
    analysis = sqlstat.run(spec_path)
    rows = [r for r in analysis.results if r.segment is not None]
    assert len(rows) == reps and all(r.test == "cuped_welch_t" for r in rows)
    covered = sum(1 for r in rows if r.ci_low <= EFFECT <= r.ci_high)
    ci = sps.binomtest(covered, reps).proportion_ci(0.95, method="exact")  # Clopper-Pearson
    reduction = float(np.mean([r.variance_reduction for r in rows]))
    return Cell(n, reps, covered, float(ci.low), float(ci.high), reduction)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reps", type=int, default=1000)
    ap.add_argument("--seed", type=int, default=2026)
    args = ap.parse_args(argv)
    print("| units per arm | replications | coverage | Clopper-Pearson 95% | mean variance reduction |")
    print("|---|---|---|---|---|")
    with tempfile.TemporaryDirectory() as tmp:
        for i, n in enumerate((200, 20_000)):
            reps = args.reps if n < 10_000 else max(args.reps // 4, 50)
            c = simulate(n, reps, args.seed + i, Path(tmp))
            print(f"| {c.n:,} | {c.reps} | {c.coverage:.3f} | [{c.ci_low:.3f}, {c.ci_high:.3f}] "
                  f"| {c.mean_reduction:.1%} |", flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())

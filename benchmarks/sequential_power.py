"""What the always-valid p-value costs: its power at the planned size, by simulation.

An experiment is planned with `sqlstat plan`'s own sample-size function for 80% power
(two-sided fixed-horizon test at alpha = 0.05) to detect a relative effect on a mean.
Each simulated experiment has that true effect and is looked at once a day for 30 days
until the planned size is reached. For each tuning value of the sequential test (the
spec's `fastest_detected_lift` (formerly `mixing_sd`): the mixing distribution's standard deviation as a share of the control
mean) the script reports the share of experiments whose always-valid p-value (running
minimum over the looks, sqlstat.stats.msprt) is below alpha by the planned size, and by
twice and four times that size (looks continuing at the same daily rate), next to the
fixed-horizon test read once at the planned size (which should be near 80%).

Per-day arm means are drawn from their exact normal distribution and the standard error
uses the known sd, so the figures isolate the sequential test's cost from estimation noise.

    python3 benchmarks/sequential_power.py            # 4,000 experiments per setting
    python3 benchmarks/sequential_power.py --sims 1000
"""

from __future__ import annotations

import argparse
import math
import sys
from dataclasses import dataclass

import numpy as np

ALPHA = 0.05
MIXING = (0.01, 0.02, 0.05, 0.1, 0.2, 0.5)


@dataclass(frozen=True)
class Row:
    mixing_sd: float
    sims: int
    fixed_power: float  # fixed-horizon test, one look at the planned size
    av_power: tuple[float, ...]  # always-valid, daily looks, by 1x, 2x, 4x the planned size


def simulate(mixing_sd: float, sims: int, seed: int, *, relative_effect: float = 0.05, mean: float = 10.0,
             sd: float = 10.0, days: int = 30, horizons: tuple[int, ...] = (1, 2, 4)) -> Row:
    from sqlstat import power as pw
    from sqlstat import stats as st

    n_plan = math.ceil(pw.sample_size_mean(relative_effect * mean, sd, ALPHA, 0.8, t=True))
    per_day = n_plan / days
    rng = np.random.default_rng(seed)
    looks = days * max(horizons)
    n = per_day * np.arange(1, looks + 1)
    delta = relative_effect * mean
    # cumulative difference in means after each look: sum of independent daily increments
    daily_diff = rng.normal(delta * per_day, sd * math.sqrt(2 * per_day), size=(sims, looks))
    diff = daily_diff.cumsum(axis=1) / n
    se = sd * np.sqrt(2 / n)
    tau = mixing_sd * mean
    p = np.vectorize(lambda d, s: st.msprt(d, s, tau, ALPHA)[0])(diff, np.broadcast_to(se, diff.shape))
    running = np.minimum.accumulate(p, axis=1)
    fixed_p = np.array([st.p_value(z, None) for z in diff[:, days - 1] / se[days - 1]])
    av = tuple(float((running[:, h * days - 1] < ALPHA).mean()) for h in horizons)
    return Row(mixing_sd, sims, float((fixed_p < ALPHA).mean()), av)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sims", type=int, default=4000)
    ap.add_argument("--seed", type=int, default=2026)
    args = ap.parse_args(argv)
    print("| mixing_sd | fixed-horizon power at the planned size | always-valid power by 1x | by 2x | by 4x |")
    print("|---|---|---|---|---|")
    for i, m in enumerate(MIXING):
        r = simulate(m, args.sims, args.seed + i)
        print(f"| {m:g} | {r.fixed_power:.3f} | {r.av_power[0]:.3f} | {r.av_power[1]:.3f} | {r.av_power[2]:.3f} |",
              flush=True)
    return 0


if __name__ == "__main__":
    sys.exit(main())

"""Rebuild the demo data: an invented community tool library testing return reminders.

Scenario (invented; no real organisation): members of a neighbourhood tool library were
randomised on 2026-09-01 into three arms: no reminder (control), a text message the day
before a loan is due (text_nudge), or an e-mail (email_nudge). loans.parquet holds four
weeks of loans before the start (August, the pre-period used for CUPED and planning) and
four weeks after. Each member has a steady borrowing habit, so August predicts September. The effects below are made up so the demo has something to find; never use these
numbers as reference values in tests.

Run:  python sample_data/generate.py   (needs numpy and pyarrow; seed fixed, output stable)
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq

SEED = 20261201
HERE = Path(__file__).resolve().parent
BORROWERS = 30_000
ARMS = ("control", "text_nudge", "email_nudge")
LATE_RATE = {"control": 0.20, "text_nudge": 0.17, "email_nudge": 0.195}
LOAN_RATE = {"control": 1.50, "text_nudge": 1.58, "email_nudge": 1.52}
DAMAGE_RATE = 0.0005  # rare: the demo's small-count proportion


def main() -> None:
    rng = np.random.default_rng(SEED)
    ids = np.arange(100_001, 100_001 + BORROWERS)
    arm_idx = rng.integers(0, len(ARMS), size=BORROWERS)
    arms = np.array(ARMS)[arm_idx]
    neighbourhood = rng.choice(["north", "south", "east", "west"], size=BORROWERS, p=[0.3, 0.3, 0.2, 0.2])
    joined = np.datetime64("2026-09-01") + rng.integers(0, 7, size=BORROWERS).astype("timedelta64[D]")
    habit = rng.gamma(shape=2.0, scale=0.5, size=BORROWERS)  # each member's borrowing rate, mean 1
    pq.write_table(
        pa.table({
            "borrower_id": ids,
            "arm": arms,
            "neighbourhood": neighbourhood,
            "joined_on": joined,
        }),
        HERE / "assignments.parquet",
        compression="zstd",
    )

    before = rng.poisson(habit * LOAN_RATE["control"])  # August: nobody had reminders yet
    after = rng.poisson(habit * np.array([LOAN_RATE[a] for a in arms]))
    loans_per = before + after
    borrower = np.repeat(ids, loans_per)
    loan_arm = np.repeat(arms, loans_per)
    in_experiment = np.concatenate([np.r_[np.zeros(b, bool), np.ones(a, bool)] for b, a in zip(before, after)])
    n = borrower.size
    late_p = np.where(in_experiment, [LATE_RATE[a] for a in loan_arm], LATE_RATE["control"])
    late = rng.random(n) < late_p
    days_late = np.where(late, rng.geometric(0.35, size=n), 0)
    fee = np.round(days_late * 1.5, 2)
    offset = rng.integers(0, 28, size=n).astype("timedelta64[D]")
    start = np.where(in_experiment, np.datetime64("2026-09-01") + offset, np.datetime64("2026-08-04") + offset)
    pq.write_table(
        pa.table({
            "loan_id": np.arange(1, n + 1),
            "borrower_id": borrower,
            "loaned_on": start,
            "tool": rng.choice(["drill", "ladder", "sander", "saw", "pressure washer", "tile cutter"], size=n),
            "returned_late": late,
            "days_late": days_late.astype(np.int32),
            "late_fee": fee,
            "damaged": rng.random(n) < DAMAGE_RATE,
        }),
        HERE / "loans.parquet",
        compression="zstd",
    )
    print(f"wrote {BORROWERS} borrowers and {n} loans to {HERE}")


if __name__ == "__main__":
    main()

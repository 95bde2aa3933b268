"""Timestamps in filters on every executed engine: TIMESTAMP literals and CAST(... AS
TIMESTAMP) select the same rows as numpy does on the raw dates; zoned timestamps are
refused when the spec is read, with the reason."""

from __future__ import annotations

import numpy as np
import pytest

import sqlstat
from sqlstat.errors import SpecError

from .conftest import spec_text
from .test_engines import close, matrix_data, unit_values

DAYS = np.datetime64("2026-09-01") + np.arange(7)
# filter text -> the same condition on numpy datetime64[s] values of the DATE column
FILTERS = {
    "day >= TIMESTAMP '2026-09-03 00:00:00'": lambda d: d >= np.datetime64("2026-09-03T00:00:00"),
    "day > TIMESTAMP '2026-09-03 12:00:00'": lambda d: d > np.datetime64("2026-09-03T12:00:00"),
    "CAST(day AS TIMESTAMP) < CAST('2026-09-05 00:00:00' AS TIMESTAMP)":
        lambda d: d < np.datetime64("2026-09-05T00:00:00"),
    "day BETWEEN TIMESTAMP '2026-09-02 00:00:00' AND TIMESTAMP '2026-09-04 00:00:00'":
        lambda d: (d >= np.datetime64("2026-09-02T00:00:00")) & (d <= np.datetime64("2026-09-04T00:00:00")),
}


@pytest.fixture(scope="module")
def day_tables(engine_db):
    db = engine_db
    assignments, events = matrix_data(seed=21, units_per_arm=40)
    rng = np.random.default_rng(21)
    events = {"unit": events["unit"], "amount": events["amount"],
              "day": DAYS[rng.integers(0, DAYS.size, events["unit"].size)]}
    return db, assignments, events, db.load("ts_assignments", assignments), db.load("ts_events", events)


@pytest.mark.parametrize("where", list(FILTERS))
def test_timestamp_filters_select_the_same_rows_on_every_engine(engine_db, day_tables, where):
    db, assignments, events, a, e = day_tables
    text = spec_text('name = "spend"\nkind = "mean"\nvalue = "sum(amount)"', assignment_source=a, events_source=e)
    text = text.replace(f'source = "{e}"\nunit = "unit"\n', f'source = "{e}"\nunit = "unit"\nwhere = "{where}"\n')
    assert where in text
    keep = FILTERS[where](events["day"].astype("datetime64[s]"))
    kept = {k: v[keep] for k, v in events.items()}
    expected = unit_values(assignments, kept, lambda rows: float(rows["amount"].sum()))  # reference: numpy
    with db.engine() as eng:
        analysis = sqlstat.run(sqlstat.parse_spec(text), engine=eng)
    for res in analysis.results:
        close(db.name, res.treatment.mean, float(np.mean(expected[res.arm])), f"{where}: {res.arm} mean")
        close(db.name, res.control.mean, float(np.mean(expected["control"])), f"{where}: control mean")


@pytest.mark.parametrize("where", ["day >= CAST('2026-09-01' AS TIMESTAMPTZ)",
                                   "day >= TIMESTAMPTZ '2026-09-01 00:00:00+00'",
                                   "day >= CAST('2026-09-01' AS TIMESTAMP WITH TIME ZONE)"])
def test_zoned_timestamps_are_refused_with_the_reason(where):
    text = spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', assignment_source="s.a", events_source="s.e")
    text = text.replace('source = "s.e"\nunit = "unit"\n', f'source = "s.e"\nunit = "unit"\nwhere = "{where}"\n')
    with pytest.raises(SpecError, match="time zone"):
        sqlstat.parse_spec(text)

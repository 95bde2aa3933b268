"""sqlstat.analyse(spec, rows) reads rows from wherever the user got them: pandas records
(NULL as NaN, numpy scalars) and csv.DictReader rows (every value a string, NULL as '')
give the same analysis as the engine's own rows; rows that do not fit say what is wrong."""

from __future__ import annotations

import csv
import io
import math

import numpy as np
import pytest

import sqlstat
from sqlstat import engines
from sqlstat.errors import SqlstatError, UsageError

from .conftest import PROJECT

DEMO = PROJECT / "sample_data" / "return_reminders.toml"


@pytest.fixture(scope="module")
def demo_rows():
    spec = sqlstat.load_spec(DEMO)
    with engines.connect() as eng:
        return spec, eng.run(sqlstat.sql(spec, "duckdb"))


def _same(a, b):
    assert [(r.metric, r.arm, r.segment_value) for r in a.results] == [(r.metric, r.arm, r.segment_value) for r in b.results]
    for x, y in zip(a.results, b.results):
        for field in ("estimate", "p_value", "ci_low", "ci_high", "statistic"):
            u, v = getattr(x, field), getattr(y, field)
            assert (u is None and v is None) or (math.isnan(u) and math.isnan(v)) or u == v, (x.metric, field, u, v)
    assert a.arms == b.arms and a.sample_ratio.p_value == b.sample_ratio.p_value


def test_pandas_records_with_nan_for_null(demo_rows):
    import pandas as pd

    spec, rows = demo_rows
    frame = pd.DataFrame(rows)
    frame["segment"] = frame["segment"].astype(object).where(frame["segment"].notna(), np.nan)  # NULL -> NaN
    records = frame.to_dict("records")
    assert any(isinstance(r["segment"], float) and math.isnan(r["segment"]) for r in records)
    _same(sqlstat.analyse(spec, records), sqlstat.analyse(spec, rows))


def test_csv_rows_of_strings(demo_rows):
    spec, rows = demo_rows
    buffer = io.StringIO()
    writer = csv.DictWriter(buffer, fieldnames=list(rows[0]))
    writer.writeheader()
    writer.writerows(rows)  # None -> '' and floats as repr, as a warehouse export writes them
    read = list(csv.DictReader(io.StringIO(buffer.getvalue())))
    assert all(isinstance(v, str) for v in read[0].values())
    _same(sqlstat.analyse(spec, read), sqlstat.analyse(spec, rows))


def test_rows_that_do_not_fit_say_what_is_wrong(demo_rows):
    spec, rows = demo_rows
    with pytest.raises(UsageError, match="no column 'metric_index'.*do not look like the rows"):
        sqlstat.analyse(spec, [{"arm": r["arm"], "value": r["mean"]} for r in rows])
    bad = [dict(r) for r in rows]
    bad[2]["units"] = "lots"
    with pytest.raises(UsageError, match="row 3, column 'units': 'lots' is not a number"):
        sqlstat.analyse(spec, bad)
    with pytest.raises(SqlstatError, match=r"has no units in the data \(arms found: none, in 0 overall row\(s\) of 0\)"):
        sqlstat.analyse(spec, [])
    with pytest.raises(UsageError, match="not a mapping"):
        sqlstat.analyse(spec, [tuple(rows[0].values())])
    zero = [dict(r, units=0) if r["arm"] == "control" else r for r in rows]
    with pytest.raises(SqlstatError) as info:
        sqlstat.analyse(spec, zero)
    assert "did you mean 'control'" not in str(info.value) and "0 units" in str(info.value)

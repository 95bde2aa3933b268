"""Degenerate data on DuckDB: each case has a defined result and a note, never a crash or a silent number.

docs/degenerate.md lists the same cases and the behaviour chosen for each. Where a number is
still produced, it is checked against scipy on the same raw rows.
"""

from __future__ import annotations

import math
import textwrap

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest
from scipy import stats as sps
from typer.testing import CliRunner

import sqlstat
from sqlstat.cli import app
from sqlstat.errors import DataProblem

MEAN = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
MEAN_MAX = 'name = "top"\nkind = "mean"\nvalue = "max(amount)"'
PROPORTION = 'name = "bought"\nkind = "proportion"\nvalue = "count_if(amount > 0) > 0"'


def write(folder, assignment: list[tuple], events: list[tuple], *metrics: str, experiment: str = "") -> object:
    """Parquet files from (unit, arm) and (unit, amount) rows, and a spec over them."""
    pq.write_table(pa.table({"unit": pa.array([u for u, _ in assignment], pa.int64()),
                             "arm": pa.array([a for _, a in assignment], pa.string())}), folder / "a.parquet")
    pq.write_table(pa.table({"unit": pa.array([u for u, _ in events], pa.int64()),
                             "amount": pa.array([x for _, x in events], pa.float64())}), folder / "e.parquet")
    spec = textwrap.dedent(f"""
        [experiment]
        name = "degenerate"
        control = "control"
        {experiment}

        [assignment]
        source = "a.parquet"
        unit = "unit"
        arm = "arm"

        [events]
        source = "e.parquet"
        unit = "unit"
        """)
    for m in metrics or (MEAN,):
        spec += "\n[[metric]]\n" + m + "\n"
    path = folder / "spec.toml"
    path.write_text(spec)
    return path


def arms(**sizes: int) -> list[tuple]:
    out, unit = [], 0
    for arm, n in sizes.items():
        for _ in range(n):
            unit += 1
            out.append((unit, arm))
    return out


def events_from(assignment: list[tuple], value) -> list[tuple]:
    """One event per unit with amount value(unit, arm) (None: no event row at all)."""
    return [(u, value(u, a)) for u, a in assignment if value(u, a) is not None]


def one(analysis, metric: str = "spend", arm: str = "treatment"):
    [r] = [r for r in analysis.results if r.metric == metric and r.arm == arm]
    return r


def exit_code(spec) -> int:
    return CliRunner().invoke(app, ["run", str(spec)]).exit_code


# --------------------------------------------------------------------------- arms


def test_declared_arm_with_no_units(tmp_path):
    asg = arms(control=40, treatment=40)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: float(u % 7)), MEAN,
                 experiment='arms = ["control", "treatment", "ghost"]')
    a = sqlstat.run(spec)
    assert [r.arm for r in a.results] == ["treatment"]  # nothing to compare for the empty arm
    assert any("'ghost' is declared" in n for n in a.notes)
    assert a.data_problem and dict(a.arms)["ghost"] == 0
    assert exit_code(spec) == 1


def test_single_unit_in_an_arm(tmp_path):
    asg = arms(control=30, treatment=1)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: float(u % 5) + 1), MEAN, PROPORTION)
    a = sqlstat.run(spec)
    r = one(a)
    assert r.treatment.n == 1 and math.isnan(r.p_value)
    assert any("fewer than 2 units" in n for n in r.notes) and r.data_problem
    # The proportion still has an exact test; reference: scipy.stats.fisher_exact on the same counts.
    p = one(a, "bought")
    assert p.test == "fisher_exact"
    ref = sps.fisher_exact([[1, 0], [30, 0]])
    assert p.p_value == pytest.approx(ref.pvalue)
    assert exit_code(spec) == 1


# --------------------------------------------------------------------------- variance


def test_zero_variance_in_one_arm_matches_scipy_welch(tmp_path):
    asg = arms(control=40, treatment=40)
    value = lambda u, a: 5.0 if a == "treatment" else float(u % 9)  # noqa: E731
    spec = write(tmp_path, asg, events_from(asg, value))
    r = one(sqlstat.run(spec))
    t_vals = [value(u, a) for u, a in asg if a == "treatment"]
    c_vals = [value(u, a) for u, a in asg if a == "control"]
    ref = sps.ttest_ind(t_vals, c_vals, equal_var=False)  # reference: scipy's Welch test
    assert r.statistic == pytest.approx(ref.statistic, rel=1e-9)
    assert r.p_value == pytest.approx(ref.pvalue, rel=1e-9)
    assert any("treatment arm has zero variance" in n for n in r.notes)
    assert not r.data_problem


@pytest.mark.parametrize("equal_variance", [False, True])
@pytest.mark.parametrize("levels", [(5.0, 5.0), (5.0, 6.0)])
def test_zero_variance_in_both_arms(tmp_path, equal_variance, levels):
    asg = arms(control=40, treatment=40)
    metric = MEAN + ("\nequal_variance = true" if equal_variance else "")
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: levels[a == "treatment"]), metric)
    r = one(sqlstat.run(spec))
    assert r.estimate == pytest.approx(levels[1] - levels[0])
    assert math.isnan(r.p_value) and not r.significant
    assert any("both arms have zero variance" in n for n in r.notes) and r.data_problem


# --------------------------------------------------------------------------- proportions


@pytest.mark.parametrize("amount, words", [(0.0, "no unit"), (3.0, "every unit")])
def test_all_zero_and_all_one_proportions(tmp_path, amount, words):
    asg = arms(control=50, treatment=60)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: amount), PROPORTION)
    r = one(sqlstat.run(spec), "bought")
    k = 0 if amount == 0 else 1
    ref = sps.fisher_exact([[60 * k, 60 * (1 - k)], [50 * k, 50 * (1 - k)]])  # reference: scipy
    assert r.test == "fisher_exact" and r.p_value == pytest.approx(ref.pvalue) == 1.0
    assert r.estimate == 0.0
    assert any(words in n and "cannot show a difference" in n for n in r.notes)
    assert not r.significant


def test_proportion_values_outside_zero_and_one(tmp_path):
    asg = arms(control=40, treatment=40)
    evs = events_from(asg, lambda u, a: 1.0) + events_from(asg, lambda u, a: 1.0 if u % 2 else None)
    spec = write(tmp_path, asg, evs, 'name = "events"\nkind = "proportion"\nvalue = "count(*)"')
    r = one(sqlstat.run(spec), "events")
    assert r.data_problem and any("not 0 or 1" in n for n in r.notes)
    assert exit_code(spec) == 1


# --------------------------------------------------------------------------- missing values


def test_null_values_count_as_zero_by_default(tmp_path):
    asg = arms(control=40, treatment=40)
    value = lambda u, a: None if u % 4 == 0 else float(u % 6)  # noqa: E731
    evs = [(u, value(u, a)) for u, a in asg]  # a row per unit, some amounts NULL
    spec = write(tmp_path, asg, evs, MEAN_MAX)
    r = one(sqlstat.run(spec), "top")
    t_vals = [value(u, a) or 0.0 for u, a in asg if a == "treatment"]
    c_vals = [value(u, a) or 0.0 for u, a in asg if a == "control"]
    ref = sps.ttest_ind(t_vals, c_vals, equal_var=False)  # reference: scipy, NULL read as 0
    assert r.treatment.n == 40 and r.statistic == pytest.approx(ref.statistic, rel=1e-9)


def test_null_values_left_out_with_missing_exclude(tmp_path):
    asg = arms(control=40, treatment=40)
    value = lambda u, a: None if u % 4 == 0 else float(u % 6)  # noqa: E731
    evs = [(u, value(u, a)) for u, a in asg]
    spec = write(tmp_path, asg, evs, MEAN_MAX + '\nmissing = "exclude"')
    a = sqlstat.run(spec)
    r = one(a, "top")
    t_vals = [value(u, x) for u, x in asg if x == "treatment" and value(u, x) is not None]
    c_vals = [value(u, x) for u, x in asg if x == "control" and value(u, x) is not None]
    ref = sps.ttest_ind(t_vals, c_vals, equal_var=False)  # reference: scipy on the non-NULL units
    assert r.treatment.n == len(t_vals) and r.statistic == pytest.approx(ref.statistic, rel=1e-9)
    assert any("have no value and were left out" in n for n in a.notes)


# --------------------------------------------------------------------------- assignment


def test_units_assigned_to_two_arms(tmp_path):
    asg = arms(control=40, treatment=40)
    asg_bad = asg + [(1, "treatment"), (2, "treatment")]  # units 1 and 2 are also in control
    spec = write(tmp_path, asg_bad, events_from(asg, lambda u, a: float(u % 7)))
    a = sqlstat.run(spec)
    assert a.excluded_units == 2 and dict(a.arms)["control"] == 38
    assert one(a).control.n == 38  # left out of every metric
    assert any("more than one arm" in n for n in a.notes) and a.data_problem
    assert exit_code(spec) == 1


def test_arm_label_the_spec_does_not_know(tmp_path):
    asg = arms(control=40, treatment=40, mystery=5)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: float(u % 7)), MEAN,
                 experiment='arms = ["control", "treatment"]')
    a = sqlstat.run(spec)
    assert any("['mystery'] are in the data but not in the spec" in n for n in a.notes)
    assert a.sample_ratio.arms == ("control", "treatment")  # the planned split only
    assert a.data_problem and exit_code(spec) == 1


# --------------------------------------------------------------------------- magnitudes


def test_extremely_large_values_are_refused_not_tested(tmp_path):
    asg = arms(control=40, treatment=40)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: 1e300 * (u % 5 + 1)))
    r = one(sqlstat.run(spec))
    # The variance (about 1e600) does not fit in a double; without the check, p would be 1.
    assert math.isnan(r.p_value) and r.data_problem
    assert any("overflowed" in n for n in r.notes)


def test_large_but_representable_values_match_scipy(tmp_path):
    asg = arms(control=40, treatment=40)
    value = lambda u, a: 1e150 * (u % 5 + 1 + (a == "treatment"))  # noqa: E731
    spec = write(tmp_path, asg, events_from(asg, value))
    r = one(sqlstat.run(spec))
    t_vals = np.array([value(u, a) for u, a in asg if a == "treatment"])
    c_vals = np.array([value(u, a) for u, a in asg if a == "control"])
    ref = sps.ttest_ind(t_vals, c_vals, equal_var=False)  # reference: scipy's Welch test
    assert r.statistic == pytest.approx(ref.statistic, rel=1e-9) and not r.data_problem


def test_tiny_values(tmp_path):
    asg = arms(control=40, treatment=40)
    spec = write(tmp_path, asg, events_from(asg, lambda u, a: 1e-300 * (u % 5 + 1)))
    r = one(sqlstat.run(spec))
    # Squared deviations of about 1e-600 underflow to 0: reported as zero variance, no test.
    assert r.treatment.mean == pytest.approx(np.mean([1e-300 * (u % 5 + 1) for u, a in asg if a == "treatment"]))
    assert math.isnan(r.p_value) and r.data_problem
    assert any("too close to tell apart" in n for n in r.notes)


# --------------------------------------------------------------------------- empty sources


def test_empty_assignment_source(tmp_path):
    spec = write(tmp_path, [], [])
    with pytest.raises(DataProblem, match="control arm 'control' has no units"):
        sqlstat.run(spec)
    res = CliRunner().invoke(app, ["run", str(spec)])
    assert res.exit_code == 1 and res.output.startswith("Error: ") and "Traceback" not in res.output


def test_empty_events_source(tmp_path):
    asg = arms(control=40, treatment=40)
    spec = write(tmp_path, asg, [], MEAN, PROPORTION)
    a = sqlstat.run(spec)
    assert any("both arms have zero variance" in n for n in one(a).notes)  # every unit's spend is 0
    assert any("no unit in either arm had the event" in n for n in one(a, "bought").notes)
    assert exit_code(spec) == 1

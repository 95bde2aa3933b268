"""Spec errors people can act on: file, key path, line, the offending line, a suggestion; all at once."""

from __future__ import annotations

import subprocess
import sys

import pytest
from typer.testing import CliRunner

import sqlstat
from sqlstat.cli import app
from sqlstat.errors import SpecError, UsageError
from sqlstat.columns import check_columns
from sqlstat.spec import load_spec

from .conftest import PROJECT, make_experiment, spec_text

SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
runner = CliRunner()


def _error(spec) -> SpecError:
    with pytest.raises(SpecError) as info:
        load_spec(spec)
    return info.value


def _line_of(path, needle: str) -> int:
    return next(i for i, line in enumerate(path.read_text().splitlines(), 1) if needle in line)


@pytest.mark.parametrize(
    "body, key, needle, suggestion",
    [
        (spec_text(SPEND, 'name = "c"\nkind = "propotion"\nvalue = "count(*) > 0"'), "metric[2].kind", "propotion",
         "did you mean 'proportion'"),
        (spec_text('name = "s"\nkind = "mean"\nvaleu = "sum(amount)"'), "metric[1].valeu", "valeu", "did you mean 'value'"),
        (spec_text(SPEND, extra_experiment="alhpa = 0.1"), "experiment.alhpa", "alhpa", "did you mean 'alpha'"),
        (spec_text(SPEND).replace("[events]", "[evnets]"), "evnets", "[evnets]", "did you mean 'events'"),
        (spec_text('name = "s"\nkind = "mean"\nvalue = "sum(amount)"\nmissing = "exlude"'), "metric[1].missing",
         "exlude", "did you mean 'exclude'"),
        (spec_text('name = "s"\nkind = "mean"\nvalue = "summ(amount)"'), "metric[1].value", "summ", "did you mean 'sum'"),
    ],
)
def test_misspelt_names_get_key_line_source_and_suggestion(write_spec, body, key, needle, suggestion):
    spec = write_spec(body)
    err = _error(spec)
    text = str(err)
    assert f"[{key}]" in text and suggestion in text
    line = _line_of(spec, needle)
    assert f"{spec}:{line}" in text  # file and line
    assert f"{line} | " in text and needle in text.split(f"{line} | ", 1)[1]  # the offending line, printed
    assert err.problems[0].key == key and err.problems[0].line == line


def test_every_problem_is_collected_and_raised_once(write_spec):
    bad = [f'name = "m{i}"\nkind = "meen"\nvalue = "sum(amount)"' for i in range(8)]
    spec = write_spec(spec_text(*bad, extra_experiment="alpha = 2"))
    err = _error(spec)
    assert len(err.problems) == 9  # alpha plus eight kinds
    assert str(err).count("did you mean 'mean'") == 4  # five shown (alpha first), then a count
    assert str(err).endswith("... and 4 more")
    assert [p.key for p in err.problems][1:] == [f"metric[{i}].kind" for i in range(1, 9)]


def test_misspelt_dialect_suggests_the_nearest(write_spec, tmp_path):
    make_experiment(tmp_path)
    spec = write_spec(spec_text(SPEND, assignment_source="s.assignments", events_source="s.events"))
    with pytest.raises(UsageError, match="did you mean 'snowflake'"):
        sqlstat.sql(spec, "snowflak")


# --------------------------------------------------------------------------- columns


@pytest.fixture
def misspelt_column_spec(tmp_path):
    make_experiment(tmp_path)
    spec = tmp_path / "spec.toml"
    spec.write_text(spec_text('name = "s"\nkind = "mean"\nvalue = "sum(amout)"').replace('arm = "arm"', 'arm = "amr"'))
    return spec


def test_misspelt_columns_of_file_sources_are_found_with_their_key(misspelt_column_spec):
    spec = misspelt_column_spec
    with pytest.raises(SpecError) as info:
        check_columns(load_spec(spec))
    err = info.value
    assert [p.key for p in err.problems] == ["assignment.arm", "metric[1].value"]
    assert "column 'amr' is not in 'assignments.parquet'; did you mean 'arm'?" in str(err)
    assert "column 'amout' is not in 'events.parquet'; did you mean 'amount'?" in str(err)
    assert err.problems[1].line == _line_of(spec, "amout")


def test_check_reads_columns_only_when_asked(misspelt_column_spec):
    assert runner.invoke(app, ["check", str(misspelt_column_spec)]).exit_code == 0
    res = runner.invoke(app, ["check", str(misspelt_column_spec), "--columns"])
    assert res.exit_code == 2 and "did you mean 'amount'" in res.output and "Traceback" not in res.output


def test_run_reports_a_misspelt_column_as_a_spec_error(misspelt_column_spec):
    res = runner.invoke(app, ["run", str(misspelt_column_spec)])
    assert res.exit_code == 2  # a spec error, not an engine error (3)
    assert res.output.startswith("Error: ") and "[metric[1].value]" in res.output


def test_missing_source_file_is_named(tmp_path):
    make_experiment(tmp_path)
    spec = tmp_path / "spec.toml"
    spec.write_text(spec_text(SPEND, events_source="evnts.parquet"))
    with pytest.raises(SpecError, match=r"\[events.source\]: source file not found"):
        check_columns(load_spec(spec))


def test_check_without_columns_still_never_imports_duckdb(misspelt_column_spec):
    code = (
        "import sys\nfrom typer.testing import CliRunner\nfrom sqlstat.cli import app\n"
        f"r = CliRunner().invoke(app, ['check', {str(misspelt_column_spec)!r}]); assert r.exit_code == 0, r.output\n"
        "assert 'duckdb' not in sys.modules\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, cwd=PROJECT)

"""The command line through typer's test runner: exit codes, exact shapes, the demo."""

from __future__ import annotations

import csv
import io
import json
import subprocess
import sys

import pytest
from typer.testing import CliRunner

from sqlstat.cli import app

from .conftest import PROJECT, make_experiment, spec_text

DEMO = PROJECT / "sample_data" / "return_reminders.toml"
runner = CliRunner()

SPEND = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"'
CONVERTED = 'name = "converted"\nkind = "proportion"\nvalue = "count_if(converted) > 0"'


def invoke(*args):
    return runner.invoke(app, [str(a) for a in args])


def test_demo_runs_and_shows_every_part_of_the_readout():
    res = invoke("run", DEMO)
    assert res.exit_code == 0, res.output
    out = res.output
    for part in ("Units per arm", "Sample-ratio check", "any_late_return", "text_nudge", "email_nudge",
                 "welch_t", "two_proportion_z", "fisher_exact", "95% interval", "p-value",
                 "Why these tests", "Multiple comparisons", "not the chance that the treatment works",
                 "Verdict per treatment arm", "Guardrails", "ratio_delta_z", "cuped_welch_t",
                 "Checks against a fixed target", "Segments (exploratory"):
        assert part in out, part


def test_run_json_follows_the_contract():
    res = invoke("run", DEMO, "--format", "json")
    assert res.exit_code == 0, res.output
    doc = json.loads(res.output)
    assert set(doc) >= {"experiment", "alpha", "arms", "sample_ratio", "results"}
    assert {a["arm"] for a in doc["arms"]} == {"control", "text_nudge", "email_nudge"}
    assert set(doc["sample_ratio"]) >= {"statistic", "df", "p_value"}
    r = doc["results"][0]
    assert set(r) >= {"metric", "kind", "arm", "test", "reason", "control", "treatment", "estimate",
                      "statistic", "df", "p_value", "ci_low", "ci_high", "significant"}
    assert set(r["control"]) == {"n", "mean", "variance"}
    assert isinstance(r["control"]["n"], int) and isinstance(r["significant"], bool)
    assert r["estimate"] == pytest.approx(r["treatment"]["mean"] - r["control"]["mean"], rel=1e-12)
    overall = [r for r in doc["results"] if r["segment"] is None]
    assert len(overall) == 5 * 2  # five metrics, two treatment arms
    assert {d["arm"] for d in doc["decisions"]} == {"text_nudge", "email_nudge"}


def test_run_csv_has_one_row_per_metric_and_arm():
    res = invoke("run", DEMO, "--format", "csv")
    assert res.exit_code == 0, res.output
    rows = [r for r in csv.DictReader(io.StringIO(res.output)) if not r["segment"]]
    assert len(rows) == 10
    assert {(r["metric"], r["arm"]) for r in rows} == {
        (m, a) for m in ("any_late_return", "loans", "late_fees", "fee_per_loan", "damage_report")
        for a in ("text_nudge", "email_nudge")
    }


def test_sql_is_deterministic_and_one_select():
    a = invoke("sql", DEMO)
    b = invoke("sql", DEMO, "--dialect", "duckdb")
    assert a.exit_code == 0 and a.output == b.output
    assert a.output.lstrip().upper().startswith("WITH")
    import sqlglot

    assert len(sqlglot.parse(a.output, read="duckdb")) == 1


def test_sql_for_another_dialect_refuses_file_sources_clearly():
    res = invoke("sql", DEMO, "--dialect", "postgres")
    assert res.exit_code == 2
    assert "Error:" in res.output and "table name" in res.output
    assert "Traceback" not in res.output


def test_sql_unknown_dialect_suggests():
    res = invoke("sql", DEMO, "--dialect", "postgress")
    assert res.exit_code == 2
    assert "did you mean 'postgres'" in res.output


def test_check_prints_the_plan():
    res = invoke("check", DEMO)
    assert res.exit_code == 0, res.output
    assert "Spec OK" in res.output
    assert "fisher_exact" in res.output and "welch_t" in res.output


def test_output_file_is_written_and_never_clobbers_another_kind(tmp_path):
    out = tmp_path / "q.sql"
    assert invoke("sql", DEMO, "-o", out).exit_code == 0
    assert out.read_text().startswith("WITH")
    spec_copy = tmp_path / "keep.toml"
    spec_copy.write_text("precious")
    res = invoke("sql", DEMO, "-o", spec_copy)
    assert res.exit_code == 2 and "--force" in res.output
    assert spec_copy.read_text() == "precious"
    assert invoke("sql", DEMO, "-o", spec_copy, "--force").exit_code == 0


def test_sample_ratio_mismatch_exits_1(tmp_path):
    make_experiment(tmp_path, units={"control": 500, "treatment": 700})
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text(SPEND))
    res = invoke("run", spec)
    assert res.exit_code == 1
    assert "MISMATCH" in res.output


@pytest.mark.parametrize(
    "broken, key, words",
    [
        ('[experiment]\nname = "x"\n', "experiment", "control"),
        (spec_text('name = "s"\nkind = "meen"\nvalue = "sum(amount)"'), "metric[1].kind", "did you mean 'mean'"),
        (spec_text(SPEND, extra_experiment='arms = ["control", "treatment"]', control="contrl"),
         "experiment.control", "did you mean 'control'"),
        (spec_text(SPEND, extra_experiment='arms = ["control", ""]'), "experiment.arms", "empty arm"),
        (spec_text('name = "s"\nkind = "mean"\nvalue = "sum(amount"'), "metric[1].value", "does not parse"),
        (spec_text('name = "s"\nkind = "mean"\nvalue = "amount"'), "metric[1].value", "aggregate"),
    ],
)
def test_bad_spec_gives_one_clear_error_with_key_and_exit_2(tmp_path, broken, key, words):
    spec = tmp_path / "bad.toml"
    spec.write_text(broken)
    res = invoke("check", spec)
    assert res.exit_code == 2
    assert res.output.startswith("Error: ")
    assert key in res.output and words in res.output
    assert "Traceback" not in res.output
    assert str(spec) in res.output


def test_spec_error_shows_line_and_source_text(tmp_path):
    spec = tmp_path / "bad.toml"
    spec.write_text(spec_text('name = "s"\nkind = "meen"\nvalue = "sum(amount)"'))
    res = invoke("check", spec)
    line = next(i for i, l in enumerate(spec.read_text().splitlines(), 1) if "meen" in l)
    assert f"{spec}:{line}" in res.output
    assert 'kind = "meen"' in res.output


def test_toml_syntax_error_has_line(tmp_path):
    spec = tmp_path / "bad.toml"
    spec.write_text('[experiment]\nname = "x\ncontrol = "c"\n')
    res = invoke("check", spec)
    assert res.exit_code == 2 and "TOML syntax error" in res.output and f"{spec}:2" in res.output


def test_debug_shows_traceback(tmp_path):
    spec = tmp_path / "missing.toml"
    res = invoke("check", spec, "--debug")
    assert res.exit_code != 0 and res.exception is not None


def test_sql_and_check_never_import_engine_or_scipy():
    code = (
        "import sys\n"
        "from typer.testing import CliRunner\n"
        "from sqlstat.cli import app\n"
        f"r = CliRunner().invoke(app, ['sql', {str(DEMO)!r}]); assert r.exit_code == 0, r.output\n"
        f"r = CliRunner().invoke(app, ['check', {str(DEMO)!r}]); assert r.exit_code == 0, r.output\n"
        "bad = [m for m in ('duckdb', 'scipy', 'scipy.stats', 'scipy.special') if m in sys.modules]\n"
        "assert not bad, bad\n"
    )
    subprocess.run([sys.executable, "-c", code], check=True, cwd=PROJECT)


def test_every_command_is_documented():
    readme = (PROJECT / "README.md").read_text()
    for command in app.registered_commands:
        name = command.name or command.callback.__name__
        assert command.callback.__doc__, name
        assert f"sqlstat {name}" in readme, f"README does not document `sqlstat {name}`"

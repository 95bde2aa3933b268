"""What a new user hits in the first ten minutes: the README's Python example runs,
--version, check --columns says what it checked, a Spark URL with file sources is refused
before a JVM starts, plan refuses CSV, CSV rows as the README says, one p-value format."""

from __future__ import annotations

import csv
import io
import re
import subprocess
import sys

from typer.testing import CliRunner

import sqlstat
from sqlstat import report
from sqlstat.cli import app

from .conftest import PROJECT, make_experiment, spec_text

DEMO = PROJECT / "sample_data" / "return_reminders.toml"
runner = CliRunner()


def _python_blocks(text: str) -> list[str]:
    return re.findall(r"```python\n(.*?)```", text, re.S)


def test_readme_python_example_runs_as_written():
    block = _python_blocks((PROJECT / "README.md").read_text())[0]
    assert "sqlstat.analyse" in block and "report.to_text" in block
    done = subprocess.run([sys.executable, "-c", block], cwd=PROJECT, capture_output=True, text=True, timeout=300)
    assert done.returncode == 0, done.stderr[-2000:]
    assert "Verdict per treatment arm" in done.stdout


def test_version():
    res = runner.invoke(app, ["--version"])
    assert res.exit_code == 0 and res.stdout.strip() == f"sqlstat {sqlstat.__version__}"


def test_check_columns_says_what_it_checked():
    plain = runner.invoke(app, ["check", str(DEMO)])
    res = runner.invoke(app, ["check", str(DEMO), "--columns"])
    assert res.exit_code == 0 and res.stdout != plain.stdout
    tail = res.stdout.split("Columns checked:\n", 1)[1]
    assert "[assignment] found in 'assignments.parquet'" in tail and "borrower_id" in tail
    assert "[events] found in 'loans.parquet'" in tail and "late_fee" in tail


def test_spark_url_with_file_sources_is_refused_before_spark_starts():
    code = ("import sys, sqlstat\n"
            "try:\n    sqlstat.run(sys.argv[1], db='spark://local[2]')\n"
            "except sqlstat.CompileError as err:\n    print('refused:', err)\n"
            "print('pyspark loaded' if 'pyspark' in sys.modules else 'no pyspark')\n")
    done = subprocess.run([sys.executable, "-c", code, str(DEMO)], capture_output=True, text=True, timeout=120)
    assert "refused:" in done.stdout and "only DuckDB reads" in done.stdout, done.stdout + done.stderr
    assert "no pyspark" in done.stdout and "JavaGateway" not in done.stderr


def test_plan_refuses_csv_and_suggests_no_missing_options(tmp_path):
    res = runner.invoke(app, ["plan", str(DEMO), "--mde", "0.05", "--relative", "--format", "csv"])
    assert res.exit_code == 2 and "table or JSON" in res.output
    spec = tmp_path / "s.toml"
    spec.write_text(spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', assignment_source="s.a",
                              events_source="s.e"))
    res = runner.invoke(app, ["plan", str(spec), "--mde", "1"])
    assert res.exit_code == 2 and "[pre_period]" in res.output and "--baseline" not in res.output


def test_csv_rows_are_what_the_readme_says():
    analysis = sqlstat.run(DEMO)
    rows = list(csv.DictReader(io.StringIO(report.to_csv(analysis))))
    overall = [r for r in rows if not r["segment"]]
    assert len(overall) == len(analysis.overall) and {r["arm"] for r in overall} == {"text_nudge", "email_nudge"}
    assert all(r["segment_value"] for r in rows if r["segment"])
    assert "one row per (metric, segment, treatment arm)" in (PROJECT / "README.md").read_text()


def test_a_p_value_prints_one_way_on_every_line(tmp_path, write_spec):
    make_experiment(tmp_path, units={"control": 1000, "treatment": 1600}, seed=3)
    metric = 'name = "spend"\nkind = "mean"\nvalue = "sum(amount)"\nrole = "primary"\nbetter = "higher"'
    analysis = sqlstat.run(write_spec(spec_text(metric)))
    p = analysis.sample_ratio.p_value
    text = report.to_text(analysis)
    assert text.count(f"p = {report.format_p(p)}") >= 2, text
    assert f"{p:.2g}" not in text


def test_readout_for_mysql_and_tsql_prints_no_warnings(tmp_path):
    spec = tmp_path / "t.toml"
    spec.write_text(spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', assignment_source="s.a",
                              events_source="s.e", extra_experiment='segments = ["region"]'))
    for dialect in ("mysql", "tsql"):
        done = subprocess.run([sys.executable, "-m", "sqlstat.cli", "sql", str(spec), "--readout", "-d", dialect],
                              capture_output=True, text=True, timeout=120)
        assert done.returncode == 0 and done.stdout.startswith("WITH") and done.stderr == "", (dialect, done.stderr[:500])

"""What each command imports, read from `python -X importtime` of a real `sqlstat` process.

`sqlstat sql` and `sqlstat check` compile text only: they must not load DuckDB or SciPy.
`sqlstat run` takes its distribution functions from scipy.special; SciPy's heavier
subpackages (stats, optimize, linalg, ...) are loaded only for an exact small-sample test,
which a large-sample run does not need (the demo does: it has a rare event, and Fisher's
exact test comes from scipy.stats). Start-up speed itself is measured by benchmarks/bench.py,
not by a timed test.
"""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import pytest

PROJECT = Path(__file__).resolve().parent.parent
DEMO = PROJECT / "sample_data" / "return_reminders.toml"
# SciPy subpackages that cost far more than scipy.special and are not needed by `run`.
HEAVY_SCIPY = ("scipy.stats", "scipy.optimize", "scipy.linalg", "scipy.sparse", "scipy.integrate",
               "scipy.interpolate", "scipy.spatial", "scipy.signal", "scipy.fft")
_LINE = re.compile(r"^import time:\s+\d+ \|\s+\d+ \|(\s*)(\S+)\s*$")


def imported_modules(*args: str, cwd: Path) -> set[str]:
    """Modules a `sqlstat <args>` process imported, from its -X importtime report."""
    res = subprocess.run([sys.executable, "-X", "importtime", "-m", "sqlstat.cli", *args],
                         cwd=cwd, capture_output=True, text=True)
    assert res.returncode in (0, 1), res.stderr[-2000:]
    modules = {m.group(2) for line in res.stderr.splitlines() if (m := _LINE.match(line))}
    assert "sqlstat.api" in modules, "no -X importtime report read"  # the parse itself works
    return modules


def _loaded(modules: set[str], package: str) -> list[str]:
    return sorted(m for m in modules if m == package or m.startswith(package + "."))


@pytest.mark.parametrize("command", ["sql", "check"])
def test_compile_commands_import_neither_duckdb_nor_scipy(command, tmp_path):
    # from another working directory, so the spec path is what tells sqlstat where to look
    modules = imported_modules(command, str(DEMO), cwd=tmp_path)
    assert "sqlglot" in modules  # they do compile
    assert not _loaded(modules, "duckdb"), _loaded(modules, "duckdb")
    assert not _loaded(modules, "scipy"), _loaded(modules, "scipy")


def test_run_imports_scipy_special_but_not_its_heavier_subpackages(tmp_path):
    import duckdb

    # 4,000 units, two arms, a mean and a proportion with many events: no exact test needed
    data = tmp_path / "data"
    data.mkdir()
    duckdb.sql(
        "COPY (SELECT 'u' || i AS unit, CASE WHEN i % 2 = 0 THEN 'control' ELSE 'treatment' END AS arm, "
        "(i * 7919) % 101 AS spend, CASE WHEN (i * 31) % 3 = 0 THEN 1 ELSE 0 END AS bought "
        f"FROM range(4000) t(i)) TO '{data / 'units.parquet'}' (FORMAT parquet)"
    )
    spec = data / "spec.toml"
    spec.write_text(
        '[experiment]\nname = "imports"\ncontrol = "control"\n\n'
        '[assignment]\nsource = "units.parquet"\nunit = "unit"\narm = "arm"\n\n'
        '[[metric]]\nname = "spend"\nkind = "mean"\nvalue = "sum(spend)"\n\n'
        '[[metric]]\nname = "bought"\nkind = "proportion"\nvalue = "max(bought)"\n'
    )
    modules = imported_modules("run", str(spec), cwd=tmp_path)
    assert "duckdb" in modules and _loaded(modules, "scipy.special")  # the run did happen, on DuckDB
    heavy = [m for p in HEAVY_SCIPY for m in _loaded(modules, p)]
    assert not heavy, heavy
    # the HTML report's plotting library and pandas are loaded only when asked for
    assert not _loaded(modules, "matplotlib") and not _loaded(modules, "pandas"), _loaded(modules, "matplotlib")
    html = imported_modules("run", str(spec), "--format", "html", "-o", str(tmp_path / "r.html"), cwd=tmp_path)
    assert _loaded(html, "matplotlib") and (tmp_path / "r.html").exists()

"""Shared test helpers: synthetic experiments written to parquet, and spec text builders.

Synthetic data here is random (fixed seeds) and is only ever compared with independent
computations on the same raw rows (scipy, statsmodels, numpy); no value computed by
sqlstat itself is used as a reference.
"""

from __future__ import annotations

import textwrap
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

PROJECT = Path(__file__).resolve().parent.parent


@dataclass
class Synthetic:
    """Raw rows of a synthetic experiment plus per-unit values for reference checks."""

    folder: Path
    assignment: dict  # column -> numpy array
    events: dict
    arms: tuple[str, ...]

    def unit_values(self, fn) -> dict[str, np.ndarray]:
        """Per-unit metric values by arm, computed with numpy from the raw event rows.

        ``fn(rows)`` gets a dict of the unit's event columns (possibly empty arrays).
        """
        order = np.argsort(self.events["unit"], kind="stable")
        ev_units = self.events["unit"][order]
        starts = np.searchsorted(ev_units, self.assignment["unit"], side="left")
        ends = np.searchsorted(ev_units, self.assignment["unit"], side="right")
        out: dict[str, list[float]] = {a: [] for a in self.arms}
        for u_arm, s, e in zip(self.assignment["arm"], starts, ends):
            idx = order[s:e]
            rows = {k: v[idx] for k, v in self.events.items()}
            out[str(u_arm)].append(float(fn(rows)))
        return {a: np.array(v) for a, v in out.items()}


def load_benchmark(name: str):
    """Import a simulation script from benchmarks/ (not a package) so a test can run it lighter."""
    import importlib.util
    import sys

    spec = importlib.util.spec_from_file_location(name, PROJECT / "benchmarks" / f"{name}.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module  # its dataclasses look themselves up there
    spec.loader.exec_module(module)
    return module


def write_parquet(path: Path, columns: dict) -> None:
    pq.write_table(pa.table(columns), path)


def make_experiment(
    folder: Path,
    *,
    seed: int = 1,
    units: dict[str, int] | None = None,
    conversion: dict[str, float] | None = None,
    spend_mean: dict[str, float] | None = None,
    spend_sd: dict[str, float] | None = None,
    events_per_unit: float = 2.0,
) -> Synthetic:
    """A randomised experiment: units per arm, Poisson events per unit, each with an amount
    and a 'converted' flag. Writes assignments.parquet and events.parquet into folder."""
    rng = np.random.default_rng(seed)
    units = units or {"control": 400, "treatment": 420}
    arms = tuple(units)
    conversion = conversion or {a: 0.3 for a in arms}
    spend_mean = spend_mean or {a: 20.0 for a in arms}
    spend_sd = spend_sd or {a: 8.0 for a in arms}
    unit_ids, unit_arms = [], []
    next_id = 1000
    for a, n in units.items():
        unit_ids.extend(range(next_id, next_id + n))
        unit_arms.extend([a] * n)
        next_id += n
    unit_ids = np.array(unit_ids, dtype=np.int64)
    unit_arms = np.array(unit_arms)
    perm = rng.permutation(unit_ids.size)
    unit_ids, unit_arms = unit_ids[perm], unit_arms[perm]
    counts = rng.poisson(events_per_unit, size=unit_ids.size)
    ev_unit = np.repeat(unit_ids, counts)
    ev_arm = np.repeat(unit_arms, counts)
    amount = np.array([rng.normal(spend_mean[a], spend_sd[a]) for a in ev_arm]) if ev_unit.size else np.array([])
    converted = np.array([rng.random() < conversion[a] for a in ev_arm], dtype=bool)
    assignment = {"unit": unit_ids, "arm": unit_arms}
    events = {"unit": ev_unit, "amount": amount.astype(float), "converted": converted}
    write_parquet(folder / "assignments.parquet", assignment)
    write_parquet(folder / "events.parquet", events)
    return Synthetic(folder, assignment, events, arms)


def spec_text(*metrics: str, control: str = "control", extra_experiment: str = "", events: bool = True,
              assignment_source: str = "assignments.parquet", events_source: str = "events.parquet") -> str:
    """A spec for make_experiment's files; each metric is a TOML body (without the header)."""
    head = f"""
    [experiment]
    name = "synthetic"
    control = "{control}"
    {extra_experiment}

    [assignment]
    source = "{assignment_source}"
    unit = "unit"
    arm = "arm"
    """
    text = textwrap.dedent(head)
    if events:
        text += textwrap.dedent(f"""
        [events]
        source = "{events_source}"
        unit = "unit"
        """)
    for m in metrics:
        text += "\n[[metric]]\n" + textwrap.dedent(m).strip() + "\n"
    return text


@pytest.fixture
def write_spec(tmp_path):
    def _write(text: str, name: str = "spec.toml") -> Path:
        p = tmp_path / name
        p.write_text(text, encoding="utf-8")
        return p

    return _write


# ------------------------------------------------------------------ the engine matrix

from .engine_fixtures import ACCURACY, DIGITS, ENGINE_NAMES, WORST, open_database, stop_spark  # noqa: E402


@pytest.fixture(scope="session")
def engine_folder(tmp_path_factory):
    return tmp_path_factory.mktemp("engines")


@pytest.fixture(scope="session", params=ENGINE_NAMES)
def engine_db(request, engine_folder):
    """One executed engine with a scratch schema; every engine test runs on each in turn."""
    db = open_database(request.param, engine_folder)
    yield db
    db.close()


def pytest_sessionfinish(session, exitstatus):
    stop_spark()


def pytest_terminal_summary(terminalreporter):
    """Print what the engine matrix measured, for the README's support table."""
    if not ACCURACY and not DIGITS:
        return
    tr = terminalreporter
    tr.section("engine accuracy (measured in this run)")
    for engine in ENGINE_NAMES:
        if engine in ACCURACY:
            tr.write_line(f"{engine:<11} worst relative error vs scipy/statsmodels: {ACCURACY[engine]:.1e}"
                          f" ({WORST.get(engine, '')})")
    for (engine, data), digits in sorted(DIGITS.items()):
        tr.write_line(f"{engine:<11} {data:<22} correct significant digits of the sd: {digits:.1f}")

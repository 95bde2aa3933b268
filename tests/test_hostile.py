"""Hostile spec text in every slot: a clear refusal naming the key, or SQL where it is inert data.

Every input of tests/hostile_corpus.py goes into every slot of a valid spec (13 slots).
Accepted specs are compiled for DuckDB and PostgreSQL and executed on both, against a
database holding sentinel tables; before and after, we compare the table list, sentinel
contents, settings and the files in the working folder. Inertness is shown by what comes
back: metric names and the control label return as data, byte for byte.
"""

from __future__ import annotations

import collections
import os
import re
from dataclasses import dataclass, field
from pathlib import Path

import pytest
import sqlglot
from sqlglot import exp
from sqlglot.optimizer.normalize_identifiers import normalize_identifiers

from sqlstat.compile import compile_sql
from sqlstat.dialects import DIALECTS, get_dialect
from sqlstat.engines import dbapi_engine, duckdb_engine
from sqlstat.errors import CompileError, SpecError
from sqlstat.model import Experiment
from sqlstat.readonly import ReadOnlyViolation
from sqlstat.spec import parse_spec

from .hostile_corpus import HOSTILE, SLOTS, base_document, inject, toml_document

LABEL_SLOTS = {"experiment.control", "experiment.arms", "experiment.weights"}
SOURCE_SLOTS = {"assignment.source", "events.source"}
# Slots whose accepted values change table columns or labels: these cases get their own tables.
OWN_TABLE_SLOTS = LABEL_SLOTS | {"assignment.unit", "assignment.arm", "events.unit", "assignment.where", "events.where"}
ENGINES = ("duckdb", "postgres")
PYTHON_ONLY_SLOTS = {"experiment.name", "experiment.arms", "experiment.weights"}
SENTINEL_ROWS = 3
EVIL_FILE = Path("/tmp/sqlstat_evil.csv")  # what the COPY input would write


@dataclass
class Case:
    index: int
    slot: str
    label: str
    text: str
    outcome: str = ""  # "refused" or "accepted"
    message: str = ""
    experiment: Experiment | None = None
    sql: dict[str, str] = field(default_factory=dict)


def _build_cases() -> list[Case]:
    cases = []
    for slot in SLOTS:
        for label, text in HOSTILE:
            i = len(cases)
            doc = base_document(f"a_{i}", f"e_{i}") if slot in OWN_TABLE_SLOTS else base_document()
            case = Case(i, slot, label, text)
            spec = toml_document(inject(slot, text, doc))
            try:
                case.experiment = parse_spec(spec, file="hostile.toml")
            except SpecError as err:
                case.outcome, case.message = "refused", str(err)
                cases.append(case)
                continue
            try:
                # Names and labels used only in Python: compiled for DuckDB (and proven to leave
                # the SQL unchanged below); every other slot is compiled and run on both engines.
                for engine in ("duckdb",) if slot in PYTHON_ONLY_SLOTS else ENGINES:
                    case.sql[engine] = compile_sql(case.experiment, engine)
            except CompileError as err:
                case.outcome, case.message = "refused", str(err)
                cases.append(case)
                continue
            case.outcome = "accepted"
            cases.append(case)
    return cases


@pytest.fixture(scope="module")
def cases() -> list[Case]:
    return _build_cases()


def test_corpus_is_big_enough():
    assert len(HOSTILE) >= 60
    assert len({label for label, _ in HOSTILE}) == len(HOSTILE)


def test_every_refusal_names_the_slot_and_never_leaks_a_traceback(cases):
    for c in cases:
        if c.outcome != "refused":
            continue
        assert "Traceback" not in c.message
        if c.message.startswith("hostile.toml"):  # a SpecError: file, then the key path
            key = c.slot.replace("[1]", "[1]")
            assert f"[{key}]" in c.message or f"[{key}." in c.message, (c.slot, c.label, c.message[:300])
        else:  # a CompileError from the read-only proof: names the offending table
            assert "source table" in c.message or "table" in c.message, c.message


def test_statement_breakers_are_always_refused_in_sql_slots(cases):
    """Inputs that could end a statement are refused wherever text becomes SQL code."""
    breakers = {"stacked_name", "stacked_number", "stacked_aggregate", "stacked_predicate", "source_stacked",
                "query_then_drop", "query_insert", "query_delete", "query_update", "query_cte_delete",
                "query_select_into", "query_for_update", "query_union_drop", "copy", "attach", "pragma",
                "set", "read_csv_value", "read_csv_auto_value", "query_read_csv", "query_string_file",
                "query_quoted_file", "pg_read_file", "pg_sleep", "set_config", "nextval", "getenv",
                "subquery_in_value", "subquery_in_filter", "nul", "nul_then_drop", "newline_then_drop",
                "comment_newline_drop", "dollar_quote"}
    sql_slots = set(SLOTS) - LABEL_SLOTS - {"experiment.name", "metric[1].name"}
    accepted = [(c.slot, c.label) for c in cases if c.label in breakers and c.slot in sql_slots and c.outcome != "refused"]
    assert not accepted


def test_labels_never_reach_sql_as_code(cases):
    """Arm labels and names that are accepted appear in the SQL only as escaped literals, or not at all."""
    plain_sql: dict[tuple[str, str], str] = {}
    for c in cases:
        if c.outcome != "accepted":
            continue
        if c.slot in ("experiment.name", "experiment.arms", "experiment.weights"):
            # These are used in Python only: the SQL is exactly that of the same spec without them.
            # Table names differ per case (a_17, e_17): compare with them blanked out.
            sources = tuple(re.sub(r"_\d+$", "_n", x) for x in _sources(c))
            if sources not in plain_sql:
                plain_sql[sources] = compile_sql(parse_spec(toml_document(base_document(*sources))), "duckdb")
            assert re.sub(r'"([ae])_\d+"', r'"\1_n"', c.sql["duckdb"]) == plain_sql[sources], (c.slot, c.label)
        if c.slot == "experiment.control":
            tree = sqlglot.parse_one(c.sql["duckdb"], read="duckdb")
            literals = {lit.this for lit in tree.find_all(exp.Literal) if lit.is_string}
            assert c.experiment.control in literals, c.label


def _sources(c: Case) -> tuple[str, str]:
    if c.slot in OWN_TABLE_SLOTS:
        return f"a_{c.index}", f"e_{c.index}"
    return "assignments", "events"


def test_accepted_sql_passes_the_read_only_proof_in_every_dialect(cases):
    """Every dialect, for the accepted inputs of the SQL-bearing slots: one SELECT, or a refusal."""
    sql_slots = set(SLOTS) - PYTHON_ONLY_SLOTS
    # Two per slot (reserved words first: they are the ones dialects treat differently).
    sample = sorted((c for c in cases if c.outcome == "accepted" and c.slot in sql_slots),
                    key=lambda c: (c.slot, "reserved" not in c.label, c.index))
    seen: set[tuple[str, str]] = set()
    refused = []
    for c in sample:
        if sum(1 for slot, _ in seen if slot == c.slot) >= 2:
            continue
        seen.add((c.slot, c.label))
        for name, d in DIALECTS.items():
            if name in ENGINES:
                continue  # compiled when the cases were built
            try:
                text = compile_sql(c.experiment, name)
            except ReadOnlyViolation as err:
                refused.append((c.slot, c.label, name, str(err)))
                continue
            statements = [s for s in sqlglot.parse(text, read=d.sqlglot) if s is not None]
            assert len(statements) == 1 and isinstance(statements[0], exp.Select), (c.slot, c.label, name)
    # The only refusals: unquoted reserved words as table names on Snowflake (see the next test).
    assert {(slot, name) for slot, _, name, _ in refused} <= {("assignment.source", "snowflake"), ("events.source", "snowflake")}


def test_reserved_word_table_names_follow_snowflake_case_rules():
    """Names are folded with the target's case rules before the template is rendered
    (dialects.prepare), so an unquoted reserved word is upper-cased like any name."""
    e = parse_spec(toml_document(base_document("table", "events")))
    assert '"TABLE"' in compile_sql(e, "snowflake")


# --------------------------------------------------------------------------- execution


def _ident(name: str, dialect: str) -> str:
    return exp.to_identifier(name, quoted=True).sql(dialect=dialect)


def _name(node: exp.Expression, dialect: str) -> str:
    return normalize_identifiers(node.copy(), dialect=get_dialect(dialect).sqlglot).name


def _table_parts(e: Experiment, which: str, dialect: str) -> tuple[str, ...]:
    rel = e.assignment if which == "assignment" else e.events
    t = normalize_identifiers(rel.source.table.copy(), dialect=get_dialect(dialect).sqlglot)
    return tuple(p.name for p in t.parts)


def _boolean_columns(node: exp.Expression | None, dialect: str) -> set[str]:
    if node is None:
        return set()
    out = set()
    for col in node.find_all(exp.Column):
        parent = col.parent
        while isinstance(parent, exp.Paren):
            parent = parent.parent
        if parent is None or isinstance(parent, (exp.And, exp.Or, exp.Not)) or col is node:
            out.add(_name(col, dialect))
    return out


def _tables_for(e: Experiment, dialect: str) -> dict[tuple[str, ...], tuple[dict[str, str], list[tuple]]]:
    """The tables a case needs: name -> (column -> type, rows).

    Both tables get the same columns (assignment and event columns together), so a hostile
    name used as the assignment source in one case and the events source in another is one table.
    """
    labels = [e.control] + [a for a in (e.arms or ()) if a != e.control] + ["treatment"]
    labels = list(dict.fromkeys(labels))
    asg, ev = e.assignment, e.events
    cols = {_name(asg.unit, dialect): "INTEGER", _name(ev.unit, dialect): "INTEGER",
            _name(asg.arm, dialect): "VARCHAR", "amount": "DOUBLE PRECISION", "converted": "BOOLEAN"}
    for col in _boolean_columns(asg.where, dialect) | _boolean_columns(ev.where, dialect):
        cols.setdefault(col, "BOOLEAN")
    rows = []
    unit = 0
    for arm in labels:
        for _ in range(6):
            unit += 1
            for j in range(2):
                values = {"INTEGER": unit, "VARCHAR": arm, "DOUBLE PRECISION": float(unit % 5 + j),
                          "BOOLEAN": (unit + j) % 3 == 0}
                rows.append(tuple(values[t] for t in cols.values()))
    return {_table_parts(e, "assignment", dialect): (cols, rows), _table_parts(e, "events", dialect): (cols, rows)}


def _create(execute, dialect: str, parts: tuple[str, ...], cols: dict[str, str], rows: list[tuple]) -> None:
    name = ".".join(_ident(p, dialect) for p in parts)
    coldefs = ", ".join(f"{_ident(c, dialect)} {t}" for c, t in cols.items())
    execute(f"CREATE TABLE {name} ({coldefs})")
    marks = ", ".join(["%s" if dialect == "postgres" else "?"] * len(cols))
    execute(f"INSERT INTO {name} VALUES ({marks})", rows)


def _check_rows(c: Case, rows: list[dict]) -> None:
    e = c.experiment
    assert rows, (c.slot, c.label)
    assert {r["metric"] for r in rows} == {m.name for m in e.metrics}, (c.slot, c.label)
    controls = {r["arm"] for r in rows if r["is_control"] == 1}
    assert controls == {e.control}, (c.slot, c.label, controls)
    if c.slot in ("experiment.arms", "experiment.weights"):
        assert c.text in {r["arm"] for r in rows}


class _Sandbox:
    """One engine's database with sentinels, the tables every accepted case reads, and snapshots."""

    def __init__(self, dialect: str, folder: Path):
        self.dialect = dialect
        self.folder = folder
        self.created: set[tuple[str, ...]] = set()

    def setup(self, accepted: list[Case]) -> None:
        for name in ("t", "x", "evil", "sentinel"):
            self._create((name,), {"id": "INTEGER", "note": "VARCHAR"}, [(i, f"row {i}") for i in range(SENTINEL_ROWS)])
        for c in accepted:
            for parts, (cols, rows) in _tables_for(c.experiment, self.dialect).items():
                if parts not in self.created:
                    self._create(parts, cols, rows)

    def _create(self, parts, cols, rows) -> None:
        _create(self.execute, self.dialect, parts, cols, rows)
        self.created.add(parts)

    def snapshot(self) -> dict:
        files = sorted(p.name for p in self.folder.iterdir())
        sentinels = {n: self.fetch(f"SELECT COUNT(*), MIN(note), MAX(note) FROM {n}") for n in ("t", "x", "evil", "sentinel")}
        return {"files": files, "evil_file": EVIL_FILE.exists(), "sentinels": sentinels, **self.catalog()}


class _DuckDB(_Sandbox):
    def __init__(self, folder: Path):
        import duckdb

        super().__init__("duckdb", folder)
        self.con = duckdb.connect(str(folder / "hostile.duckdb"))

    def execute(self, sql, rows=None):
        if rows is None:
            self.con.execute(sql)
        else:  # one multi-row INSERT; executemany is slow on DuckDB
            width = len(rows[0])
            marks = ", ".join("(" + ", ".join(["?"] * width) + ")" for _ in rows)
            self.con.execute(sql.rsplit("VALUES", 1)[0] + "VALUES " + marks, [v for r in rows for v in r])

    def fetch(self, sql):
        return self.con.execute(sql).fetchall()

    def catalog(self) -> dict:
        return {
            "tables": self.fetch("SELECT database_name, schema_name, table_name FROM duckdb_tables() ORDER BY ALL"),
            "views": self.fetch("SELECT view_name FROM duckdb_views() WHERE NOT internal ORDER BY ALL"),
            "databases": self.fetch("SELECT database_name FROM duckdb_databases() ORDER BY ALL"),
            "settings": self.fetch("SELECT name, value FROM duckdb_settings() ORDER BY name"),
            "extensions": self.fetch("SELECT extension_name, loaded, installed FROM duckdb_extensions() ORDER BY 1"),
        }

    def engine(self):
        return duckdb_engine(connection=self.con)

    def close(self):
        self.con.close()


class _Postgres(_Sandbox):
    def __init__(self, folder: Path, con, schema: str):
        super().__init__("postgres", folder)
        self.con = con
        self.schema = schema

    def execute(self, sql, rows=None):
        with self.con.cursor() as cur:
            if rows is None:
                cur.execute(sql)
            else:
                cur.executemany(sql, rows)

    def fetch(self, sql, params=None):
        with self.con.cursor() as cur:
            cur.execute(sql, params)
            return cur.fetchall()

    def catalog(self) -> dict:
        return {
            "relations": self.fetch(
                "SELECT c.relname, c.relkind FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace "
                "WHERE n.nspname = %s ORDER BY 1, 2", (self.schema,)),
            "functions": self.fetch(
                "SELECT p.proname FROM pg_proc p JOIN pg_namespace n ON n.oid = p.pronamespace "
                "WHERE n.nspname = %s ORDER BY 1", (self.schema,)),
            "settings": self.fetch("SELECT name, setting FROM pg_settings ORDER BY name"),
            "roles": self.fetch("SELECT rolname FROM pg_roles ORDER BY 1"),
            "databases": self.fetch("SELECT datname FROM pg_database ORDER BY 1"),
            "extensions": self.fetch("SELECT extname FROM pg_extension ORDER BY 1"),
        }

    def engine(self):
        return dbapi_engine(self.con, "postgres")

    def close(self):
        pass


def _run_corpus(sandbox: _Sandbox, accepted: list[Case]) -> tuple[dict, dict, int]:
    sandbox.setup(accepted)
    before = sandbox.snapshot()
    engine = sandbox.engine()
    executed = 0
    for c in accepted:
        if sandbox.dialect not in c.sql:
            continue
        rows = engine.run(c.sql[sandbox.dialect])
        _check_rows(c, rows)
        executed += 1
    after = sandbox.snapshot()
    return before, after, executed


def test_accepted_inputs_run_inert_on_duckdb(cases, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # anything ATTACH or COPY might create would land here
    accepted = [c for c in cases if c.outcome == "accepted"]
    sandbox = _DuckDB(tmp_path)
    try:
        before, after, executed = _run_corpus(sandbox, accepted)
    finally:
        sandbox.close()
    assert executed == len(accepted) > 100
    assert before == after
    assert before["sentinels"]["t"][0][0] == SENTINEL_ROWS
    assert not after["evil_file"]


@pytest.mark.server
def test_accepted_inputs_run_inert_on_postgres(cases, tmp_path):
    psycopg = pytest.importorskip("psycopg")
    try:
        con = psycopg.connect(host="127.0.0.1", port=5432, dbname="test", connect_timeout=5, autocommit=True)
    except psycopg.OperationalError as err:
        pytest.skip(f"PostgreSQL is not reachable on 127.0.0.1:5432: {err}")
    schema = f"sqlstat_hostile_{os.getpid()}"
    accepted = [c for c in cases if c.outcome == "accepted"]
    try:
        # autocommit and no read-only flag: if any query could write, the write would persist.
        con.execute(f'CREATE SCHEMA "{schema}"')
        con.execute(f'SET search_path TO "{schema}"')
        sandbox = _Postgres(tmp_path, con, schema)
        before, after, executed = _run_corpus(sandbox, accepted)
        assert con.execute("SHOW search_path").fetchone()[0].strip('"') == schema
    finally:
        con.execute(f'DROP SCHEMA IF EXISTS "{schema}" CASCADE')
        con.close()
    assert executed == len([c for c in accepted if c.slot not in PYTHON_ONLY_SLOTS]) > 100
    assert before == after
    assert before["sentinels"]["t"][0][0] == SENTINEL_ROWS
    assert not after["evil_file"]


# --------------------------------------------------------------------------- file names

HOSTILE_FILE_NAMES = [
    "it's.parquet",
    "a'; DROP TABLE t; --.parquet",
    'double"quote.parquet',
    "semi;colon.parquet",
    "dollar$$x$$.parquet",
    "space name.parquet",
    "\u00fcn\u00efcode.parquet",
    "--comment.parquet",
    "back\\slash.parquet",
    "percent%s.parquet",
]


def test_hostile_file_names_are_read_as_data_on_duckdb(tmp_path, monkeypatch):
    """A declared file whose name is hostile is read, as a path literal, and nothing else happens."""
    import duckdb
    import pyarrow as pa
    import pyarrow.parquet as pq

    monkeypatch.chdir(tmp_path)
    units = list(range(1, 41))
    arms = ["control" if u % 2 else "treatment" for u in units]
    con = duckdb.connect(str(tmp_path / "sentinel.duckdb"))
    con.execute("CREATE TABLE t AS SELECT 1 AS id")
    for i, fname in enumerate(HOSTILE_FILE_NAMES):
        folder = tmp_path / f"case{i}"
        folder.mkdir()
        pq.write_table(pa.table({"unit": units, "arm": arms}), folder / fname)
        pq.write_table(pa.table({"unit": units, "amount": [float(u % 7) for u in units]}), folder / "events.parquet")
        doc = base_document(fname, "events.parquet")
        doc["metric"] = doc["metric"][:1]
        if ";" in fname:  # refused: ';' inside the query text would cut it for script runners
            with pytest.raises(SpecError, match="contains ';'"):
                parse_spec(toml_document(doc), base_dir=folder, file="hostile.toml")
            continue
        e = parse_spec(toml_document(doc), base_dir=folder, file="hostile.toml")
        before = sorted(p.name for p in folder.iterdir())
        rows = duckdb_engine(connection=con).run(compile_sql(e, "duckdb"))
        assert {r["units"] for r in rows} == {20.0}, fname
        assert sorted(p.name for p in folder.iterdir()) == before
    assert con.execute("SELECT COUNT(*) FROM t").fetchone()[0] == 1
    assert [r[0] for r in con.execute("SELECT table_name FROM duckdb_tables()").fetchall()] == ["t"]
    con.close()


def test_counts_are_reported(cases, capsys):
    """Print the tally for the closing note (visible with pytest -s); also checks both outcomes occur."""
    tally = collections.Counter((c.slot, c.outcome) for c in cases)
    refused = sum(v for (s, o), v in tally.items() if o == "refused")
    accepted = sum(v for (s, o), v in tally.items() if o == "accepted")
    with capsys.disabled():
        print(f"\nhostile corpus: {len(HOSTILE)} inputs x {len(SLOTS)} slots = {len(cases)} cases; "
              f"refused {refused}, accepted and neutralised {accepted}")
        for slot in SLOTS:
            print(f"  {slot:22s} refused {tally[(slot, 'refused')]:3d}  neutralised {tally[(slot, 'accepted')]:3d}")
    assert refused + accepted == len(cases) == len(HOSTILE) * len(SLOTS)
    assert refused > 0 and accepted > 0

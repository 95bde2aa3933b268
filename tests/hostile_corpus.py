"""Hostile inputs for every spec slot, and a tiny TOML writer to put them into spec files.

Each input is written into a spec by real TOML escaping, so what sqlstat sees is exactly
the hostile text (quotes, control characters, NUL and all). Used by test_hostile*.py and
the fuzz tests.
"""

from __future__ import annotations

import math
from typing import Any

# (label, text). At least 60; labels keep test ids readable.
HOSTILE: list[tuple[str, str]] = [
    ("single_quote", "'"),
    ("double_quote", '"'),
    ("backtick", "`"),
    ("two_single_quotes", "''"),
    ("or_true_single", "x' OR '1'='1"),
    ("or_true_double", 'x" OR "1"="1'),
    ("drop_after_single_quote", "'; DROP TABLE x; --"),
    ("drop_after_double_quote", '"; DROP TABLE x; --'),
    ("drop_after_backtick", "`; DROP TABLE x; --"),
    ("drop_after_bracket", "]; DROP TABLE x; --"),
    ("stacked_name", "a; DROP TABLE t"),
    ("stacked_number", "1; DROP TABLE t"),
    ("stacked_aggregate", "sum(amount); DROP TABLE t"),
    ("stacked_predicate", "converted; DELETE FROM t"),
    ("trailing_line_comment", "count(*) -- comment"),
    ("trailing_block_comment", "count(*) /* comment */"),
    ("unterminated_block_comment", "count(*) /* unterminated"),
    ("comment_breakout", "*/ DROP TABLE t /*"),
    ("only_comment", "-- only a comment"),
    ("mysql_hash_comment", "count(*) # DROP TABLE t"),
    ("mysql_exec_comment", "count(*) /*! ; DROP TABLE t */"),
    ("newline_then_drop", "count(*)\n; DROP TABLE t"),
    ("comment_newline_drop", "count(*) --\nDROP TABLE t"),
    ("source_stacked", "t; drop table t"),
    ("query_then_drop", "(select 1); drop table t"),
    ("query_insert", "(insert into t values (1))"),
    ("query_delete", "(delete from t)"),
    ("query_update", "(update t set a = 1)"),
    ("query_cte_delete", "(with d as (delete from t returning *) select * from d)"),
    ("query_select_into", "(select * into evil from assignments)"),
    ("query_for_update", "(select * from assignments for update)"),
    ("query_union_drop", "(select * from assignments) union all (select * from assignments); drop table t"),
    ("read_csv_value", "read_csv('/etc/passwd')"),
    ("read_csv_auto_value", "read_csv_auto('/etc/passwd')"),
    ("query_read_csv", "(select * from read_csv('/etc/passwd'))"),
    ("query_string_file", "(select * from '/etc/passwd')"),
    ("query_quoted_file", '(select * from "secret.csv")'),
    ("quoted_file_table", '"secret.csv"'),
    ("spark_file_table", "parquet.secret"),
    ("copy", "COPY t TO '/tmp/sqlstat_evil.csv'"),
    ("attach", "ATTACH 'evil.db' AS evil"),
    ("pragma", "PRAGMA enable_profiling"),
    ("set", "SET search_path = evil"),
    ("pg_read_file", "pg_read_file('/etc/passwd')"),
    ("pg_sleep", "sum(pg_sleep(10))"),
    ("set_config", "set_config('search_path', 'evil', false) = 'x'"),
    ("nextval", "sum(nextval('s'))"),
    ("getenv", "getenv('HOME') = 'x'"),
    ("subquery_in_value", "sum((select 1))"),
    ("subquery_in_filter", "unit in (select unit from t)"),
    ("fullwidth_semicolon", "a\uff1b drop table t"),
    ("homoglyph_single_quotes", "\u2018; DROP TABLE x; --\u2019"),
    ("homoglyph_double_quotes", "\u201cx\u201d"),
    ("modifier_apostrophe", "x\u02bc OR 1=1"),
    ("ansi_escape", "a\x1b[2Jb"),
    ("carriage_return", "a\rb"),
    ("newline", "a\nDROP TABLE t"),
    ("tab", "a\tb"),
    ("backspace", "abc\x08\x08\x08xyz"),
    ("delete_char", "a\x7fb"),
    ("nul", "a\x00b"),
    ("nul_then_drop", "count(*)\x00; DROP TABLE t"),
    ("line_separator", "a\u2028b"),
    ("rtl_override", "a\u202eb"),
    ("zero_width_space", "a\u200bb"),
    ("long_name", "a" * 100_000),
    ("long_sum", "1+" * 50_000 + "1"),
    ("deep_parens", "(" * 5_000 + "1" + ")" * 5_000),
    ("trailing_backslash", "a\\"),
    ("backslash_quote", "\\'; DROP TABLE t; --"),
    ("backslash_or", "x\\' OR 1=1 --"),
    ("dollar_quote", "$$; DROP TABLE t; $$"),
    ("dollar_tag", "$tag$ x $tag$"),
    ("pg_escape_string", "E'\\x27; DROP TABLE t'"),
    ("unicode_escape_string", "U&'\\0027'"),
    ("hex_literal", "x'41'"),
    ("reserved_select", "select"),
    ("reserved_from", "from"),
    ("reserved_table", "table"),
    ("reserved_order", "order"),
    ("reserved_user", "user"),
    ("quoted_reserved", '"select"'),
    ("quoted_embedded_quote", '"a""b"'),
    ("internal_step_name", "unit_level"),
    ("internal_step_name_2", "arm_stats"),
    ("huge_number", "1e309"),
    ("concat_subquery", "'a' || (select 1)"),
]

SLOTS: tuple[str, ...] = (
    "experiment.name",
    "experiment.control",
    "experiment.arms",
    "experiment.weights",
    "assignment.source",
    "assignment.unit",
    "assignment.arm",
    "assignment.where",
    "events.source",
    "events.unit",
    "events.where",
    "metric[1].name",
    "metric[1].value",
)


# --------------------------------------------------------------------------- TOML writer


def toml_string(text: str) -> str:
    """A TOML basic string holding exactly ``text`` (every control character escaped)."""
    out = ['"']
    for ch in text:
        code = ord(ch)
        if ch == '"':
            out.append('\\"')
        elif ch == "\\":
            out.append("\\\\")
        elif code < 0x20 or code == 0x7F:
            out.append(f"\\u{code:04X}")
        else:
            out.append(ch)
    out.append('"')
    return "".join(out)


def toml_key(key: str) -> str:
    if key and all(c.isascii() and (c.isalnum() or c in "_-") for c in key):
        return key
    return toml_string(key)


def toml_value(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if math.isnan(value):
            return "nan"
        if math.isinf(value):
            return "inf" if value > 0 else "-inf"
        return repr(value)
    if isinstance(value, str):
        return toml_string(value)
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    if isinstance(value, dict):
        return "{" + ", ".join(f"{toml_key(str(k))} = {toml_value(v)}" for k, v in value.items()) + "}"
    raise TypeError(f"cannot write {type(value).__name__} as TOML")


def toml_document(doc: dict[str, Any]) -> str:
    """Top-level scalars first, then [tables], then [[arrays of tables]]."""
    lines: list[str] = []
    for k, v in doc.items():
        if not isinstance(v, dict) and not (isinstance(v, list) and v and all(isinstance(i, dict) for i in v)):
            lines.append(f"{toml_key(k)} = {toml_value(v)}")
    for k, v in doc.items():
        if isinstance(v, dict):
            lines.append(f"\n[{toml_key(k)}]")
            lines.extend(f"{toml_key(str(kk))} = {toml_value(vv)}" for kk, vv in v.items())
    for k, v in doc.items():
        if isinstance(v, list) and v and all(isinstance(i, dict) for i in v):
            for item in v:
                lines.append(f"\n[[{toml_key(k)}]]")
                lines.extend(f"{toml_key(str(kk))} = {toml_value(vv)}" for kk, vv in item.items())
    return "\n".join(lines) + "\n"


# --------------------------------------------------------------------------- specs


def base_document(assignment_source: str = "assignments", events_source: str = "events") -> dict[str, Any]:
    """A valid spec over table sources (so PostgreSQL can run it too)."""
    return {
        "experiment": {"name": "hostile", "control": "control"},
        "assignment": {"source": assignment_source, "unit": "unit", "arm": "arm"},
        "events": {"source": events_source, "unit": "unit"},
        "metric": [
            {"name": "spend", "kind": "mean", "value": "sum(amount)"},
            {"name": "converted", "kind": "proportion", "value": "count_if(converted) > 0"},
        ],
    }


def inject(slot: str, text: str, doc: dict[str, Any] | None = None) -> dict[str, Any]:
    """The base document with ``text`` put into ``slot`` (see SLOTS)."""
    doc = doc or base_document()
    table, _, key = slot.partition(".")
    if table == "metric[1]":
        doc["metric"][0][key] = text
    elif slot == "experiment.arms":
        doc["experiment"]["arms"] = ["control", text]
    elif slot == "experiment.weights":
        doc["experiment"]["weights"] = {"control": 1, text: 1}
    else:
        doc[table][key] = text
    return doc

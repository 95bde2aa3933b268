"""The words a readout uses: verdicts that no statistician reads as a test outcome, the
trade's own terms for guardrails, one set of guardrail words everywhere, and the JSON
contract (new keys added, old ones kept with their old meaning for one release)."""

from __future__ import annotations

import json
import re

from typer.testing import CliRunner

import sqlstat
from sqlstat import report
from sqlstat.cli import app
from sqlstat.model import GUARDRAIL_HARMED, GUARDRAIL_HELD, GUARDRAIL_NOT_SHOWN, LEGACY_VERDICTS, VERDICTS

from .conftest import PROJECT

DEMO = PROJECT / "sample_data" / "return_reminders.toml"
# Words a statistician reads as the outcome of a hypothesis test (common usage).
TEST_OUTCOME_WORDS = re.compile(r"\b(reject\w*|accept\w*|significan\w*|fail(?:ed)? to reject)\b", re.I)


def test_verdict_words_are_not_test_outcomes():
    for word in VERDICTS:
        assert not TEST_OUTCOME_WORDS.search(word), word


def test_json_has_verdicts_and_keeps_decisions_with_the_old_words():
    res = CliRunner().invoke(app, ["run", str(DEMO), "-f", "json"])
    doc = json.loads(res.stdout)
    assert [v["arm"] for v in doc["verdicts"]] == [d["arm"] for d in doc["decisions"]]
    for new, old in zip(doc["verdicts"], doc["decisions"]):
        assert new["verdict"] in VERDICTS and old["verdict"] == LEGACY_VERDICTS[new["verdict"]]
        assert new["reasons"] == old["reasons"]
    statuses = {r["guardrail"]["status"] for r in doc["results"] if r["guardrail"]}
    assert statuses and statuses <= {GUARDRAIL_HELD, GUARDRAIL_HARMED, GUARDRAIL_NOT_SHOWN}


def test_table_uses_the_trade_terms_and_the_documented_guardrail_words():
    analysis = sqlstat.run(DEMO)
    text = report.to_text(analysis)
    assert "non-inferiority margin" in text and "one-sided bound" in text
    assert "tolerated harm" not in text and "worst plausible" not in text
    for d in analysis.verdicts:
        assert f"{d.arm}: {d.verdict.upper()}" in text
    assert "HELD" not in text and "HARM " not in text
    readme = (PROJECT / "README.md").read_text()
    for word in (GUARDRAIL_HELD, GUARDRAIL_HARMED, GUARDRAIL_NOT_SHOWN):
        assert f"`{word}`" in readme, word
    for word in VERDICTS:
        assert f"`{word}`" in readme, word


def test_sql_readout_uses_the_same_verdict_words():
    sql = sqlstat.sql(DEMO, "duckdb", readout=True)
    for word in VERDICTS:
        assert f"'{word}'" in sql
    for old in ("'adopt'", "'reject'", "'inconclusive'"):
        assert old not in sql


def _always_valid_spec(key_lines: str) -> str:
    from .conftest import spec_text

    return spec_text('name = "n"\nkind = "mean"\nvalue = "count(*)"', assignment_source="s.a", events_source="s.e",
                     extra_experiment="always_valid = true\n" + key_lines)


def test_fastest_detected_lift_replaces_mixing_sd_which_is_still_read_with_a_note():
    new = sqlstat.parse_spec(_always_valid_spec("fastest_detected_lift = 0.2"))
    old = sqlstat.parse_spec(_always_valid_spec("mixing_sd = 0.2"))
    assert new.mixing_sd == old.mixing_sd == 0.2 and not new.notes
    assert any("mixing_sd is deprecated" in n and "fastest_detected_lift" in n for n in old.notes)
    assert sqlstat.sql(new, "duckdb", readout=True) == sqlstat.sql(old, "duckdb", readout=True)
    assert "Note: spec key experiment.mixing_sd is deprecated" in report.plan_text(old)
    import pytest

    with pytest.raises(sqlstat.SpecError, match="old name"):
        sqlstat.parse_spec(_always_valid_spec("fastest_detected_lift = 0.2\nmixing_sd = 0.2"))

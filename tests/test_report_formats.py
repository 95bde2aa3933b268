"""--format html and --format markdown, and the notebook view, checked from outside:

- the HTML is parsed by html5lib in strict mode (the WHATWG parsing algorithm; any parse
  error fails) and contains no external URL (nothing is fetched at view time);
- every metric and arm is on the page and the numbers in the tables are the JSON report's;
- every chart is an inline SVG with a title and a description naming each plotted value;
- the daily chart's data are the daily view's rows as DuckDB returns them for the same SQL,
  and its last day agrees with the main query (docs/daily.md says the last day's rows equal
  the main query's when every unit has an assignment time);
- the Markdown is rendered by markdown-it-py (CommonMark with GFM tables) into well-formed
  tables with one row per comparison;
- the data frame has the JSON's values, and without pandas the error names the extra.
"""

from __future__ import annotations

import json
import re
import sys

import pytest
from typer.testing import CliRunner

import sqlstat
from sqlstat import report
from sqlstat.cli import app
from sqlstat.errors import UsageError
from sqlstat.model import GUARDRAIL_HARMED, GUARDRAIL_HELD, GUARDRAIL_NOT_SHOWN, VERDICTS

from .conftest import PROJECT

html5lib = pytest.importorskip("html5lib")
markdown_it = pytest.importorskip("markdown_it")

DEMO = PROJECT / "sample_data" / "return_reminders.toml"
DAILY = PROJECT / "sample_data" / "return_reminders_daily.toml"
NS = {"h": "http://www.w3.org/1999/xhtml", "svg": "http://www.w3.org/2000/svg"}
# Namespace names are identifiers, never fetched (the HTML and SVG specifications).
NAMESPACE_URIS = {"http://www.w3.org/2000/svg", "http://www.w3.org/1999/xlink", "http://www.w3.org/1999/xhtml"}


@pytest.fixture(scope="module")
def demo():
    analysis, context = sqlstat.api.run_with_context(DEMO, daily=True)
    payload = report.to_dict(analysis)
    return payload, context, report.render(analysis, "html", context)


@pytest.fixture(scope="module")
def daily():
    analysis, context = sqlstat.api.run_with_context(DAILY, daily=True)
    return analysis, context, report.render(analysis, "html", context)


def parse(text: str):
    """html5lib in strict mode: raises on any parse error."""
    return html5lib.HTMLParser(strict=True, namespaceHTMLElements=True).parse(text)


def external_urls(text: str) -> list[str]:
    found = re.findall(r"""(?:https?:|ftp:)?//[^\s"'<>)]+""", text)
    return [u for u in found if u not in NAMESPACE_URIS and not u.startswith("//")] + \
        re.findall(r"""(?:src|href|action|poster|data)\s*=\s*["'](?!#)[^"']+""", text) + \
        re.findall(r"url\((?!#)[^)]*\)", text) + re.findall(r"@import", text)


def test_html_parses_strictly_and_fetches_nothing(demo, daily):
    for text in (demo[2], daily[2]):
        root = parse(text)
        assert root.find(".//h:title", NS).text.endswith("experiment report")
        assert not root.findall(".//h:script", NS) and not root.findall(".//h:link", NS)
        assert not root.findall(".//h:img", NS) and not root.findall(".//h:iframe", NS)
        assert external_urls(text) == []
        for use in root.iter("{http://www.w3.org/2000/svg}use"):  # markers point inside the page
            assert use.get("{http://www.w3.org/1999/xlink}href", "#").startswith("#")


def _rows(root, table_class: str):
    table = [t for t in root.iter("{http://www.w3.org/1999/xhtml}table") if t.get("class") == table_class]
    return [tr for t in table for tr in t.iter("{http://www.w3.org/1999/xhtml}tr") if tr.get("data-arm")]


def _text(el) -> str:
    return "".join(el.itertext())


def test_every_metric_and_arm_is_shown_with_the_json_numbers(demo):
    payload, _, text = demo
    root = parse(text)
    shown = {(tr.get("data-metric"), tr.get("data-arm"), tr.get("data-segment")): tr for tr in _rows(root, "results")}
    assert len(shown) == len(payload["results"])
    for r in payload["results"]:
        seg = "" if r["segment"] is None else f"{r['segment']}={r['segment_value']}"
        tr = shown[(r["metric"], r["arm"], seg)]
        cells = {td.get("data-field"): td for td in tr if td.get("data-field")}
        for field, want in (("estimate", r["estimate"]), ("p_value", r["p_value"]),
                            ("p_value_adjusted", r["p_value_adjusted"]), ("control.n", r["control"]["n"]),
                            ("control.mean", r["control"]["mean"]), ("treatment.n", r["treatment"]["n"]),
                            ("treatment.mean", r["treatment"]["mean"]), ("statistic", r["statistic"]),
                            ("df", r["df"]), ("relative_lift", r["relative_lift"]),
                            ("ci", [r["ci_low"], r["ci_high"]]), ("lift_ci", [r["lift_ci_low"], r["lift_ci_high"]]),
                            ("significant", r["significant"])):
            assert json.loads(cells[field].get("data-value")) == want, (r["metric"], r["arm"], field)
        # the text shown is the terminal readout's rounding of the same value
        assert _text(cells["p_value"]) == sqlstat.model.format_p(r["p_value"])
        assert _text(cells["estimate"]) == report._fmt(r["estimate"])
    arms = {a["arm"]: a["units"] for a in payload["arms"]}
    unit_rows = {tr.get("data-arm"): tr for tr in _rows(root, "arms")}
    assert {a: json.loads(tr[1].get("data-value")) for a, tr in unit_rows.items()} == arms
    for v in payload["verdicts"]:
        span = root.find(f".//h:span[@data-verdict='{v['verdict']}']", NS)
        assert span is not None and _text(span) in VERDICTS
        for reason in v["reasons"]:
            assert reason in text.replace("&#x27;", "'") or reason.replace("'", "&#x27;") in text
    guards = {(tr.get("data-metric"), tr.get("data-arm")): tr for tr in _rows(root, "guardrails")}
    for r in payload["results"]:
        if r["guardrail"] and r["segment"] is None:
            cell = [td for td in guards[(r["metric"], r["arm"])] if td.get("data-field") == "guardrail.status"][0]
            assert _text(cell) == r["guardrail"]["status"] in (GUARDRAIL_HELD, GUARDRAIL_NOT_SHOWN, GUARDRAIL_HARMED)
    assert len(_rows(root, "targets")) == len(payload["targets"])


def test_charts_are_inline_svg_with_text_alternatives(demo):
    payload, context, text = demo
    root = parse(text)
    svgs = list(root.iter("{http://www.w3.org/2000/svg}svg"))
    metrics = list(dict.fromkeys(r["metric"] for r in payload["results"]))
    # a forest plot per metric, and one per metric for the segments
    assert len(svgs) == 2 * len(metrics) == int(root.find(".//h:body", NS).get("data-charts"))
    for svg in svgs:
        assert svg.get("role") == "img"
        title = svg.find("svg:title", NS)
        desc = svg.find("svg:desc", NS)
        assert title is not None and desc is not None and title.text and desc.text
        assert svg.get("aria-labelledby") == f"{title.get('id')} {desc.get('id')}"
    for metric in metrics:
        section = root.find(f".//h:section[@class='metric'][@data-metric='{metric}']", NS)
        desc = section.find(".//svg:desc", NS).text
        for r in payload["results"]:
            if r["metric"] == metric and r["segment"] is None:
                assert f"{r['arm']}: difference {report._fmt(r['estimate'])}" in desc
                assert ("not significant" in desc.split(r["arm"] + ":")[1].split(";")[0]) != r["significant"]
    seg = root.find(".//h:section[@id='segments']", NS)
    assert "exploratory" in _text(seg.find("h:h2", NS)) and "adjusted" in _text(seg.find("h:h2", NS))
    # how these were computed: per metric the test, its reason and its source; the query and its fingerprint
    methods = root.find(".//h:section[@id='methods']", NS)
    for r in payload["results"]:
        assert r["test"] in _text(methods)
    assert _text(methods.find(".//h:code[@id='sql-fingerprint']", NS)) == context["query"]["fingerprint"]
    pre = methods.find(".//h:details/h:pre/h:code", NS)
    assert _text(pre) == context["query"]["sql"] == sqlstat.sql(DEMO, "duckdb")
    assert context["daily"] is None  # the demo spec has no daily view


def test_daily_chart_data_are_the_daily_views_rows(daily):
    duckdb = pytest.importorskip("duckdb")
    analysis, context, text = daily
    got = context["daily"]["rows"]
    expected = duckdb.sql(sqlstat.daily_sql(DAILY, "duckdb", readout=True)).fetchall()
    cols = [c for c in duckdb.sql(sqlstat.daily_sql(DAILY, "duckdb", readout=True)).columns]
    want = [dict(zip(cols, row)) for row in expected]
    want = [w for w in want if w["arm"] != "control"]
    assert len(got) == len(want) > 0
    for g, w in zip(got, want):
        assert g["day"] == w["day"].isoformat() and g["metric"] == w["metric"] and g["arm"] == w["arm"]
        for k in ("estimate", "ci_low", "ci_high", "sequence_low", "sequence_high"):
            # DuckDB sums in parallel, so a rerun may differ in the last digits (docs/daily.md: 2.4e-11)
            assert g[k] == pytest.approx(w[k], rel=1e-9, abs=1e-12)
    last = max(g["day"] for g in got)
    for r in analysis.overall:
        end = [g for g in got if g["day"] == last and g["metric"] == r.metric and g["arm"] == r.arm]
        assert end and end[0]["estimate"] == pytest.approx(r.estimate, rel=1e-9)
    root = parse(text)
    figures = root.findall(".//h:section[@id='daily']/h:figure", NS)
    assert [f.get("data-metric") for f in figures] == list(dict.fromkeys(r.metric for r in analysis.overall))
    for f in figures:
        desc = f.find(".//svg:desc", NS).text
        assert "always-valid sequence" in desc and last in desc
    assert "fixed-horizon" in _text(root.find(".//h:section[@id='daily']", NS))


def test_a_sample_ratio_mismatch_is_prominent_and_every_section_says_so(demo):
    payload = json.loads(json.dumps(demo[0]))
    payload["sample_ratio"]["mismatch"] = True  # the renderer reads only the payload
    from sqlstat.report_html import to_html

    root = parse(to_html(payload))
    box = root.find(".//h:div[@id='sample-ratio']", NS)
    assert box.get("role") == "alert" and box.get("class") == "srm-fail" and "MISMATCH" in _text(box)
    for section in ("verdicts", "metrics", "guardrails", "targets", "segments"):
        node = root.find(f".//h:section[@id='{section}']", NS)
        assert node.find("h:p[@class='untrusted']", NS) is not None, section
    from sqlstat.report_markdown import to_markdown

    assert "> **Warning:**" in to_markdown(payload)


def test_markdown_renders_to_well_formed_tables(demo):
    payload, context, _ = demo
    from sqlstat.report_markdown import to_markdown

    md = to_markdown(payload, query=context["query"])
    rendered = markdown_it.MarkdownIt("commonmark").enable("table").render(md)
    root = html5lib.parse(f"<!DOCTYPE html><html><body>{rendered}</body></html>", namespaceHTMLElements=False)
    tables = root.findall(".//table")
    assert len(tables) == 2  # results and guardrails
    for table in tables:
        width = len(table.findall("./thead/tr/th"))
        body = table.findall("./tbody/tr")
        assert body and all(len(tr.findall("td")) == width for tr in body)
    overall = [r for r in payload["results"] if r["segment"] is None]
    results = tables[0].findall("./tbody/tr")
    assert len(results) == len(overall)
    for tr, r in zip(results, overall):
        cells = ["".join(td.itertext()) for td in tr.findall("td")]
        assert cells[0] == r["metric"] and cells[2] == r["arm"] and cells[5] == report._fmt(r["estimate"])
        assert cells[-1] == ("yes" if r["significant"] else "no")
    items = ["".join(li.itertext()) for li in root.iter("li")]
    for v in payload["verdicts"]:
        assert any(i.startswith(f"{v['arm']}: {v['verdict']}") for i in items)
    assert payload["caution"] in md and "Peeking" in md and context["query"]["fingerprint"] in md


def test_cli_writes_html_and_markdown_twice_from_another_folder(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    runner = CliRunner()
    for fmt, name in (("html", "demo.html"), ("markdown", "demo.md")):
        for _ in range(2):  # a nightly job writes the same path again
            res = runner.invoke(app, ["run", str(DEMO), "--format", fmt, "-o", name])
            assert res.exit_code == 0, res.output
        assert (tmp_path / name).stat().st_size > 1000
    notes = tmp_path / "notes.html"
    notes.write_text("<!DOCTYPE html><html><body>my notes</body></html>")
    res = runner.invoke(app, ["run", str(DEMO), "--format", "html", "-o", str(notes)])
    assert res.exit_code == 2 and "my notes" in notes.read_text()
    res = runner.invoke(app, ["run", str(DEMO), "--format", "markdown"])
    assert res.exit_code == 0 and res.stdout.startswith("<!-- sqlstat markdown report -->\n# Experiment:")


def test_html_without_matplotlib_names_the_extra(demo, monkeypatch):
    from sqlstat.report_html import to_html

    monkeypatch.setitem(sys.modules, "matplotlib", None)
    monkeypatch.setitem(sys.modules, "matplotlib.figure", None)
    with pytest.raises(UsageError, match=r"sqlstat\[html\]"):
        to_html(demo[0])


def test_analysis_as_a_data_frame_and_in_a_notebook(demo, monkeypatch):
    pd = pytest.importorskip("pandas")
    payload = demo[0]
    analysis = sqlstat.run(DEMO)
    frame = analysis.to_frame()
    assert isinstance(frame, pd.DataFrame) and len(frame) == len(payload["results"])
    for (_, row), r in zip(frame.iterrows(), payload["results"]):
        assert (row["metric"], row["arm"], row["estimate"], row["p_value"]) == \
            (r["metric"], r["arm"], r["estimate"], r["p_value"])
        assert row["control_n"] == r["control"]["n"] and row["treatment_mean"] == r["treatment"]["mean"]
        assert (row["guardrail_status"] if r["guardrail"] else None) == (r["guardrail"] or {}).get("status")
    page = analysis._repr_html_()
    root = parse(f"<!DOCTYPE html><html><head><title>t</title></head><body>{page}</body></html>")
    assert len(_rows(root, "results")) == len([r for r in payload["results"] if r["segment"] is None])
    assert report.to_json(analysis) == report.to_json(sqlstat.run(DEMO))  # still the same Analysis
    monkeypatch.setitem(sys.modules, "pandas", None)
    with pytest.raises(UsageError, match=r"pip install 'sqlstat\[notebook\]'"):
        analysis.to_frame()

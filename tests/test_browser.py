"""The HTML report in a real browser: Debian's Chromium, headless, driven by Playwright.

On the page as Chromium renders it: no console errors or warnings, no network request
but the file itself, every metric and arm present, the numbers shown equal the JSON
report's (read from the DOM), the SVG charts drawn with their text alternatives. The
screenshot is kept as a test artefact (SQLSTAT_ARTEFACTS, default tests/artefacts/) and
is the one in docs/ for the README (SQLSTAT_UPDATE_SCREENSHOT=1 rewrites docs/report.png).

Skipped with the reason when Playwright or Chromium is absent; with
SQLSTAT_REQUIRE_ENGINES=1, as .ci/run sets (and .ci/run installs Chromium), that is a
failure instead.
"""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from sqlstat.model import format_p

from .conftest import PROJECT

REQUIRED = os.environ.get("SQLSTAT_REQUIRE_ENGINES") == "1"
DEMO = PROJECT / "sample_data" / "return_reminders.toml"
DAILY = PROJECT / "sample_data" / "return_reminders_daily.toml"
ARTEFACTS = Path(os.environ.get("SQLSTAT_ARTEFACTS", PROJECT / "tests" / "artefacts"))
# Flags for a closed network and a root user (as the machine's notes give them): no
# background fetches by the browser itself, so any request seen comes from the page.
CHROMIUM_ARGS = ["--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run", "--disable-background-networking",
                 "--disable-component-update", "--disable-sync", "--disable-default-apps"]


def _chromium() -> str | None:
    for name in ("chromium", "chromium-browser"):
        path = shutil.which(name)
        if path:
            return path
    return None


def _unavailable(reason: str):
    if REQUIRED:
        pytest.fail(f"the browser test is required (SQLSTAT_REQUIRE_ENGINES=1) but cannot run: {reason}", pytrace=False)
    pytest.skip(reason)


@pytest.fixture(scope="module")
def browser():
    try:
        from playwright.sync_api import sync_playwright
    except ImportError:
        _unavailable("playwright is not installed (pip install -e '.[test]')")
    path = _chromium()
    if path is None:
        _unavailable("Chromium is not installed (apt-get install chromium; .ci/run does this)")
    with sync_playwright() as p:
        b = p.chromium.launch(executable_path=path, args=CHROMIUM_ARGS, headless=True)
        yield b
        b.close()


def _report(spec: Path, tmp: Path) -> tuple[Path, dict]:
    out = tmp / f"{spec.stem}.html"
    run = [sys.executable, "-m", "sqlstat.cli", "run", str(spec)]
    res = subprocess.run(run + ["--format", "html", "-o", str(out)], capture_output=True, text=True, cwd=tmp)
    assert res.returncode == 0, res.stderr
    js = subprocess.run(run + ["--format", "json"], capture_output=True, text=True, cwd=tmp)
    return out, json.loads(js.stdout)


def _open(browser, path: Path):
    page = browser.new_page(viewport={"width": 1280, "height": 900})
    console, requests, errors = [], [], []
    page.on("console", lambda m: console.append((m.type, m.text)))
    page.on("pageerror", lambda e: errors.append(str(e)))
    page.on("request", lambda r: requests.append(r.url))
    page.goto(path.as_uri(), wait_until="load")
    return page, console, requests, errors


def test_the_report_in_chromium(browser, tmp_path):
    path, doc = _report(DEMO, tmp_path)
    page, console, requests, errors = _open(browser, path)
    assert [c for c in console if c[0] in ("error", "warning")] == [] and errors == []
    assert requests == [path.as_uri()]  # the file itself, nothing else
    shown = page.eval_on_selector_all(
        "table.results tr[data-arm]",
        """rows => rows.map(tr => ({metric: tr.dataset.metric, arm: tr.dataset.arm, segment: tr.dataset.segment,
             cells: Object.fromEntries([...tr.querySelectorAll('td[data-field]')].map(
                 td => [td.dataset.field, {value: JSON.parse(td.dataset.value), text: td.innerText.trim()}]))}))""")
    assert len(shown) == len(doc["results"])
    by_key = {(s["metric"], s["arm"], s["segment"]): s["cells"] for s in shown}
    for r in doc["results"]:
        seg = "" if r["segment"] is None else f"{r['segment']}={r['segment_value']}"
        cells = by_key[(r["metric"], r["arm"], seg)]
        assert cells["estimate"]["value"] == r["estimate"] and cells["p_value"]["value"] == r["p_value"]
        assert cells["ci"]["value"] == [r["ci_low"], r["ci_high"]]
        assert cells["p_value"]["text"] == format_p(r["p_value"])
        assert cells["treatment.n"]["value"] == r["treatment"]["n"]
    for metric in {r["metric"] for r in doc["results"]}:
        assert page.locator(f'section.metric[data-metric="{metric}"] svg').count() == 1
    for arm in doc["arms"]:
        assert page.locator(f'table.arms tr[data-arm="{arm["arm"]}"]').count() == 1
    charts = page.eval_on_selector_all(
        "svg[role=img]", """svgs => svgs.map(s => {const ids = s.getAttribute('aria-labelledby').split(' ');
            const box = s.getBoundingClientRect();
            return {title: document.getElementById(ids[0]).textContent, desc: document.getElementById(ids[1]).textContent,
                    width: box.width, height: box.height, marks: s.querySelectorAll('path, use').length}})""")
    assert len(charts) == 2 * len({r["metric"] for r in doc["results"]})
    for c in charts:
        assert c["title"] and c["desc"] and c["width"] > 300 and c["height"] > 100 and c["marks"] > 5
    verdicts = page.eval_on_selector_all("span.verdict", "s => s.map(x => x.dataset.verdict)")
    assert verdicts == [v["verdict"] for v in doc["verdicts"]]
    ARTEFACTS.mkdir(parents=True, exist_ok=True)
    page.screenshot(path=str(ARTEFACTS / "report.png"), full_page=True)
    # the README's picture: the top of the page and the first forest plots
    page.set_viewport_size({"width": 1100, "height": 1500})
    page.locator("#metrics").scroll_into_view_if_needed()
    page.evaluate("window.scrollTo(0, 0)")
    shot = ARTEFACTS / "report-top.png"
    page.screenshot(path=str(shot))
    if os.environ.get("SQLSTAT_UPDATE_SCREENSHOT") == "1":
        shutil.copyfile(shot, PROJECT / "docs" / "report.png")
    assert shot.stat().st_size > 20_000
    page.close()


def test_the_daily_report_in_chromium(browser, tmp_path):
    path, doc = _report(DAILY, tmp_path)
    page, console, requests, errors = _open(browser, path)
    assert [c for c in console if c[0] in ("error", "warning")] == [] and errors == []
    assert requests == [path.as_uri()]
    metrics = list(dict.fromkeys(r["metric"] for r in doc["results"]))
    assert page.eval_on_selector_all("#daily figure", "f => f.map(x => x.dataset.metric)") == metrics
    for metric in metrics:
        desc = page.locator(f'#daily figure[data-metric="{metric}"] svg desc').text_content()
        assert "always-valid sequence" in desc
    page.locator("#daily").screenshot(path=str(ARTEFACTS / "report-daily.png"))
    page.close()

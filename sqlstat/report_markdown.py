"""JSON report payload -> GitHub-flavoured Markdown: the verdicts, the main results table,
guardrails and the cautions, for pull requests and chat."""

from __future__ import annotations

from typing import Any

from .report_common import (
    SRM_UNTRUSTED, cautions, confidence, family_lines, finite, method_source, num, overall, p_text, pct,
    segmented, srm_line, srm_mismatch,
)

HEAD = "<!-- sqlstat markdown report -->"  # how files.py recognises a file sqlstat wrote


def _cell(text: Any) -> str:
    """A table cell: pipes escaped, no line breaks (GFM tables are one line per row)."""
    return str(text).replace("\\", "\\\\").replace("|", "\\|").replace("\n", " ")


def _table(headers: list[str], rows: list[list[str]], right: set[int]) -> list[str]:
    rule = ["---:" if i in right else "---" for i in range(len(headers))]
    return (["| " + " | ".join(_cell(h) for h in headers) + " |", "| " + " | ".join(rule) + " |"]
            + ["| " + " | ".join(_cell(c) for c in r) + " |" for r in rows])


def _interval(low: Any, high: Any, fmt=num) -> str:
    return f"[{fmt(low) if finite(low) else 'open'}, {fmt(high) if finite(high) else 'open'}]"


def to_markdown(payload: dict, *, query: dict | None = None) -> str:
    """The Markdown report (``query``: {"sql", "dialect", "fingerprint"} of the query that ran)."""
    conf = confidence(payload)
    untrusted = srm_mismatch(payload)
    out = [HEAD, f"# Experiment: {payload['experiment']}", ""]
    units = ", ".join(f"{a['arm']} {a['units']:,}" for a in payload["arms"])
    out.append(f"Control arm: `{payload['control']}` · alpha {payload['alpha']:g} · units per arm: {units}")
    out.append("")
    srm = srm_line(payload)
    out.append(f"> **Warning:** {srm}" if untrusted else srm)
    out.append("")
    out.append("## Verdict per treatment arm")
    out.append("")
    out.append("_Input to a decision, not the decision itself, and not a test outcome._")
    out.append("")
    for v in payload.get("verdicts", []):
        out.append(f"- **{v['arm']}: {v['verdict']}**")
        out.extend(f"  - {reason}" for reason in v["reasons"])
    out.append("")
    out.append("## Results")
    out.append("")
    if untrusted:
        out += [f"> **{SRM_UNTRUSTED}**", ""]
    out.append(f"Estimate = treatment − control; lift = estimate / control; {conf} two-sided intervals; "
               "significance at the adjusted p-value.")
    out.append("")
    rows = [[r["metric"], r["role"], r["arm"], num(r["control"]["mean"]), num(r["treatment"]["mean"]),
             num(r["estimate"]), _interval(r["ci_low"], r["ci_high"]), pct(r["relative_lift"]),
             _interval(r["lift_ci_low"], r["lift_ci_high"], pct), r["test"], p_text(r["p_value"]),
             p_text(r["p_value_adjusted"]) if r["correction"] != "none" else "-",
             "yes" if r["significant"] else "no"] for r in overall(payload)]
    out += _table(["metric", "role", "arm", "control mean", "treatment mean", "estimate", f"{conf} interval",
                   "lift", f"lift {conf} interval", "test", "p-value", "adj. p", "significant"], rows,
                  right={3, 4, 5, 6, 7, 8, 10, 11})
    guards = [r for r in overall(payload) if r.get("guardrail")]
    if guards:
        out += ["", "## Guardrails", ""]
        g_rows = []
        for r in guards:
            g = r["guardrail"]
            rel = g["margin_type"] == "relative"
            g_rows.append([r["metric"], r["arm"], f"{g['better']} is better",
                           f"{g['margin']:.1%} of control" if rel else num(g["margin"]),
                           pct(g["bound"]) if rel else num(g["bound"]), p_text(g["p_value_adjusted"]), g["status"]])
        out += _table(["metric", "arm", "direction", "non-inferiority margin", "one-sided bound", "p (one-sided)",
                       "status"], g_rows, right={3, 4, 5})
    if segmented(payload):
        out += ["", f"_Segment results ({len(segmented(payload))} rows) are exploratory and adjusted; they are "
                    "in the HTML, JSON and CSV reports and never enter the verdict._"]
    out += ["", "## Tests used", ""]
    seen = set()
    for r in overall(payload):
        if (r["metric"], r["test"]) not in seen:
            seen.add((r["metric"], r["test"]))
            out.append(f"- `{r['metric']}`: `{r['test']}`: {r['reason']} ({method_source(r['test'])})")
    out += ["", "Multiple comparisons:", ""] + [f"- {line}" for line in family_lines(payload)]
    if query:
        out += ["", f"SQL fingerprint `{query['fingerprint']}` ({query['dialect']})."]
    out += ["", "## Cautions", ""] + [f"- {c}" for c in cautions(payload)]
    return "\n".join(out) + "\n"

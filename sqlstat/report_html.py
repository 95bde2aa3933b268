"""JSON report payload (+ the query and the daily view's rows) -> one self-contained HTML file
with inline SVG charts.

Nothing is fetched when the file is opened: no scripts, fonts, style sheets or images from
elsewhere; the charts are inline SVG drawn by matplotlib (imported only here, so other
formats never pay for it). Every chart has a text alternative (an SVG title and
description naming each plotted value) and marks significance by marker shape and an
asterisk, not by colour alone; colours are the Okabe-Ito palette, chosen to stay apart
for the common colour-vision deficiencies (Okabe and Ito, 2008).
"""

from __future__ import annotations

import datetime as _dt
import html
import io
import json
import re
from typing import Any

from . import __version__
from .report_common import (
    ALWAYS_VALID_SOURCE, SEGMENTS_NOTE, SRM_UNTRUSTED, cautions, confidence, correction_name, family_lines, finite,
    method_source, metrics_in_order, num, overall, p_text, pct, segmented, significance_word, sql_fingerprint,
    srm_line, srm_mismatch,
)

# Okabe-Ito colours (black excluded: it is kept for the zero line and the text).
PALETTE = ("#0072B2", "#E69F00", "#009E73", "#CC79A7", "#56B4E9", "#D55E00", "#F0E442")
# Marker shapes per arm in the daily charts, so the arms differ without colour too.
LINESTYLES = ("-", "--", "-.", ":")
MARKERS = ("o", "s", "^", "v", "D", "P", "X")

CSS = """
body{font-family:system-ui,-apple-system,"Segoe UI",Roboto,"DejaVu Sans",sans-serif;margin:2rem auto;max-width:72rem;
padding:0 1rem;color:#1a1a1a;line-height:1.4}
h1{margin-bottom:.2rem}h2{border-bottom:1px solid #ccc;padding-bottom:.2rem;margin-top:2rem}
table{border-collapse:collapse;margin:.6rem 0;font-size:.9rem}
th,td{border:1px solid #bbb;padding:.25rem .5rem;text-align:left;vertical-align:top}
td.n{text-align:right;font-variant-numeric:tabular-nums;white-space:nowrap}
th{background:#f0f0f0}
.srm-ok{border-left:.4rem solid #009E73;padding:.4rem .8rem;background:#f4faf7}
.srm-fail{border:3px solid #D55E00;padding:.8rem;background:#fff1e8;font-size:1.15rem;font-weight:bold}
.untrusted{border-left:.4rem solid #D55E00;padding:.3rem .8rem;background:#fff1e8;font-weight:bold}
.verdict{font-weight:bold;text-transform:uppercase;letter-spacing:.03em}
.caution{background:#f7f7f7;border-left:.4rem solid #999;padding:.4rem .8rem}
.exploratory{border-left:.4rem solid #CC79A7;padding:.3rem .8rem;background:#fbf3f8}
figure{margin:1rem 0}figcaption{font-size:.85rem;color:#333}
svg{max-width:100%;height:auto}
details pre{white-space:pre-wrap;font-size:.75rem;background:#f7f7f7;padding:.6rem;max-height:40rem;overflow:auto}
@media print{details{display:block}details pre{max-height:none}body{margin:0}}
"""


def _e(text: Any) -> str:
    return html.escape(str(text), quote=True)


def _value_attr(x: Any) -> str:
    """The exact JSON value behind a shown number (tests read it back from the page)."""
    return _e(json.dumps(x))


def _cell(field: str, x: Any, shown: str | None = None) -> str:
    shown = num(x) if shown is None else shown
    return f'<td class="n" data-field="{field}" data-value="{_value_attr(x)}">{_e(shown)}</td>'


# --- charts ----------------------------------------------------------------------------

MATPLOTLIB_MISSING = ("--format html draws its charts with matplotlib, which is not installed: "
                      "pip install 'sqlstat[html]'")


def _figure():
    try:
        from matplotlib.figure import Figure
    except ImportError:
        from .errors import UsageError

        raise UsageError(MATPLOTLIB_MISSING) from None
    return Figure


def _svg(fig: Any, salt: str, title: str, desc: str, ident: str) -> str:
    """A matplotlib figure as inline SVG with a title and description (its text alternative)."""
    import matplotlib

    buf = io.StringIO()
    # svg.hashsalt keeps the ids matplotlib writes stable and different per chart, so
    # several charts can sit in one page; text stays text (no embedded font outlines).
    with matplotlib.rc_context({"svg.fonttype": "none", "svg.hashsalt": salt}):
        fig.savefig(buf, format="svg", bbox_inches="tight", metadata={"Date": None, "Creator": None})
    text = buf.getvalue()
    text = text[text.index("<svg"):]  # drop the XML declaration and the DOCTYPE
    text = re.sub(r"<metadata>.*?</metadata>", "", text, flags=re.S)  # RDF boilerplate with URIs
    text = re.sub(r"<!--.*?-->", "", text, flags=re.S)
    head = (f'<svg role="img" aria-labelledby="{ident}-title {ident}-desc" '
            f'data-chart="{_e(ident)}"')
    text = text.replace("<svg", head, 1)
    close = text.index(">") + 1
    alt = (f'<title id="{ident}-title">{_e(title)}</title>'
           f'<desc id="{ident}-desc">{_e(desc)}</desc>')
    return text[:close] + alt + text[close:]


def _interval_text(low: Any, high: Any, fmt=num) -> str:
    return f"[{fmt(low) if finite(low) else 'open'}, {fmt(high) if finite(high) else 'open'}]"


def _colour(arms: list[str], arm: str) -> str:
    return PALETTE[arms.index(arm) % len(PALETTE)] if arm in arms else "#555555"


def _margin_line(r: dict) -> tuple[str, float] | None:
    """Where a guardrail's non-inferiority margin sits: ('absolute'|'relative', position)."""
    g = r.get("guardrail")
    if not g or not finite(g.get("margin")):
        return None
    position = -g["margin"] if g["better"] == "higher" else g["margin"]
    return g["margin_type"], position


def forest_svg(rows: list[dict], *, title: str, conf: str, arms: list[str], salt: str, ident: str,
               label=lambda r: r["arm"]) -> str:
    """Each row's estimate and interval on the absolute scale (left) and as relative lift (right)."""
    Figure = _figure()
    from matplotlib.lines import Line2D

    height = 1.1 + 0.45 * len(rows)
    fig = Figure(figsize=(9.5, height))
    ax_abs, ax_rel = fig.subplots(1, 2, sharey=True)
    ys = list(range(len(rows)))[::-1]
    margins = {"absolute": set(), "relative": set()}
    for y, r in zip(ys, rows):
        colour = _colour(arms, r["arm"])
        sig = bool(r["significant"])
        style = dict(marker="D" if sig else "o", markersize=7, color=colour,
                     markerfacecolor=colour if sig else "white", markeredgewidth=1.6, linewidth=1.8, capsize=3)
        for ax, est, lo, hi in ((ax_abs, r["estimate"], r["ci_low"], r["ci_high"]),
                                (ax_rel, r["relative_lift"], r["lift_ci_low"], r["lift_ci_high"])):
            if not finite(est):
                continue
            if finite(lo) and finite(hi):
                ax.errorbar([est], [y], xerr=[[est - lo], [hi - est]], **style)
            else:
                ax.plot([est], [y], linestyle="none", **{k: v for k, v in style.items() if k != "capsize"})
                end = lo if finite(lo) else hi
                if finite(end):
                    ax.plot([end, est], [y, y], color=colour, linewidth=1.8)
        m = _margin_line(r)
        if m:
            margins[m[0]].add(m[1])
    for ax, scale, name in ((ax_abs, "absolute", "difference (treatment - control)"),
                            (ax_rel, "relative", "relative lift")):
        ax.axvline(0, color="black", linewidth=1)
        for pos in margins[scale]:
            ax.axvline(pos, color="#D55E00", linestyle=(0, (5, 3)), linewidth=1.4)
        ax.set_xlabel(f"{name}, {conf} interval")
        ax.grid(axis="x", color="#dddddd", linewidth=0.6)
        ax.set_axisbelow(True)
        ax.set_ylim(-0.7, len(rows) - 0.3)
    ax_rel.xaxis.set_major_formatter(
        lambda v, _pos: "0%" if abs(v) < 1e-12 else (f"{v:+.0%}" if abs(v) >= 0.01 else f"{v:+.1%}"))
    ax_abs.set_yticks(ys, [f"{label(r)}{' *' if r['significant'] else ''}" for r in rows])
    handles = [Line2D([], [], marker="D", color="#333333", markerfacecolor="#333333", linestyle="none",
                      label="* significant (adjusted p < alpha)"),
               Line2D([], [], marker="o", color="#333333", markerfacecolor="white", linestyle="none",
                      label="not significant")]
    if margins["absolute"] or margins["relative"]:
        handles.append(Line2D([], [], color="#D55E00", linestyle=(0, (5, 3)), label="non-inferiority margin"))
    fig.legend(handles=handles, loc="upper center", ncol=len(handles), frameon=False, fontsize=8,
               bbox_to_anchor=(0.5, 1.0 + 0.25 / height))
    fig.suptitle(title, y=1.0 + 0.55 / height, fontsize=11)
    desc = "; ".join(
        f"{label(r)}: difference {num(r['estimate'])} {_interval_text(r['ci_low'], r['ci_high'])}, relative lift "
        f"{pct(r['relative_lift'])} {_interval_text(r['lift_ci_low'], r['lift_ci_high'], pct)}, "
        f"{'significant' if r['significant'] else 'not significant'} (adjusted p {p_text(r['p_value_adjusted'])})"
        + (f", guardrail {r['guardrail']['status']}" if r.get("guardrail") else "")
        for r in rows
    )
    return _svg(fig, salt, title, f"Forest plot, {conf} intervals, zero line marked. {desc}.", ident)


def daily_svg(rows: list[dict], *, metric: str, conf: str, arms: list[str], salt: str, ident: str,
              always_valid: bool) -> str:
    """The cumulative estimate per treatment arm by day, with its fixed-horizon interval
    (shaded) and, with always_valid, the always-valid confidence sequence (dotted)."""
    fig = _figure()(figsize=(9.5, 3.6))
    ax = fig.subplots()
    by_arm: dict[str, list[dict]] = {}
    for r in rows:
        by_arm.setdefault(r["arm"], []).append(r)
    parts = []
    for i, (arm, rs) in enumerate(by_arm.items()):
        rs = [r for r in rs if finite(r["estimate"])]
        if not rs:
            continue
        colour = _colour(arms, arm)
        days = [_dt.date.fromisoformat(r["day"]) for r in rs]
        ax.step(days, [r["estimate"] for r in rs], where="post", color=colour, linewidth=1.8,
                linestyle=LINESTYLES[i % len(LINESTYLES)], marker=MARKERS[i % len(MARKERS)], markersize=3.5,
                label=f"{arm}: estimate")
        ok = [r for r in rs if finite(r["ci_low"]) and finite(r["ci_high"])]
        if ok:
            ax.fill_between([_dt.date.fromisoformat(r["day"]) for r in ok], [r["ci_low"] for r in ok],
                            [r["ci_high"] for r in ok], step="post", color=colour, alpha=0.18, linewidth=0,
                            label=f"{arm}: {conf} fixed-horizon interval")
        seq = [r for r in rs if finite(r.get("sequence_low")) and finite(r.get("sequence_high"))]
        if always_valid and seq:
            sd = [_dt.date.fromisoformat(r["day"]) for r in seq]
            ax.step(sd, [r["sequence_low"] for r in seq], where="post", color=colour, linestyle=":", linewidth=1.3,
                    label=f"{arm}: always-valid confidence sequence")
            ax.step(sd, [r["sequence_high"] for r in seq], where="post", color=colour, linestyle=":", linewidth=1.3)
        last = rs[-1]
        parts.append(f"{arm}: {len(rs)} days from {rs[0]['day']} to {last['day']}; on the last day estimate "
                     f"{num(last['estimate'])}, {conf} fixed-horizon interval "
                     f"{_interval_text(last['ci_low'], last['ci_high'])}"
                     + (f", always-valid sequence {_interval_text(last.get('sequence_low'), last.get('sequence_high'))}"
                        if always_valid else ""))
    ax.axhline(0, color="black", linewidth=1)
    ax.set_ylabel("difference (treatment - control)")
    ax.grid(color="#dddddd", linewidth=0.6)
    ax.legend(fontsize=7, frameon=False, loc="center left", bbox_to_anchor=(1.0, 0.5))
    fig.autofmt_xdate()
    title = f"{metric}: cumulative effect by day"
    desc = "Cumulative difference as of each day, zero line marked. " + "; ".join(parts) + "."
    return _svg(fig, salt, title, desc, ident)


# --- sections --------------------------------------------------------------------------

def _untrusted(payload: dict) -> str:
    return f'<p class="untrusted" role="note">{_e(SRM_UNTRUSTED)}</p>' if srm_mismatch(payload) else ""


def _results_table(rows: list[dict], conf: str, *, segment: bool = False) -> str:
    head = ["metric"] + (["segment"] if segment else []) + [
        "arm", "control n", "control mean", "treatment n", "treatment mean", "estimate", f"{conf} interval",
        "relative lift", f"lift {conf} interval", "test", "statistic", "df", "p-value", "adjusted p", "significant"]
    out = ['<table class="results"><thead><tr>' + "".join(f'<th scope="col">{_e(h)}</th>' for h in head)
           + "</tr></thead><tbody>"]
    for r in rows:
        seg = "" if r["segment"] is None else f"{r['segment']}={r['segment_value']}"
        out.append(
            f'<tr data-metric="{_e(r["metric"])}" data-arm="{_e(r["arm"])}" data-segment="{_e(seg)}">'
            f'<th scope="row">{_e(r["metric"])}</th>'
            + (f"<td>{_e(seg)}</td>" if segment else "")
            + f"<td>{_e(r['arm'])}</td>"
            + _cell("control.n", r["control"]["n"]) + _cell("control.mean", r["control"]["mean"])
            + _cell("treatment.n", r["treatment"]["n"]) + _cell("treatment.mean", r["treatment"]["mean"])
            + _cell("estimate", r["estimate"])
            + f'<td class="n" data-field="ci" data-value="{_value_attr([r["ci_low"], r["ci_high"]])}">'
              f'{_e(_interval_text(r["ci_low"], r["ci_high"]))}</td>'
            + _cell("relative_lift", r["relative_lift"], pct(r["relative_lift"]))
            + f'<td class="n" data-field="lift_ci" data-value="{_value_attr([r["lift_ci_low"], r["lift_ci_high"]])}">'
              f'{_e(_interval_text(r["lift_ci_low"], r["lift_ci_high"], pct))}</td>'
            + f"<td>{_e(r['test'])}</td>"
            + _cell("statistic", r["statistic"], f"{r['statistic_label']} = {num(r['statistic'], 3)}")
            + _cell("df", r["df"], f"{r['df']:.1f}" if finite(r["df"]) else "-")
            + _cell("p_value", r["p_value"], p_text(r["p_value"]))
            + _cell("p_value_adjusted", r["p_value_adjusted"],
                    p_text(r["p_value_adjusted"]) if r["correction"] != "none" else "-")
            + f'<td data-field="significant" data-value="{_value_attr(r["significant"])}">'
              f'{"yes *" if r["significant"] else "no"}</td></tr>'
        )
    out.append("</tbody></table>")
    return "".join(out)


def _header(payload: dict, meta: dict) -> str:
    srm = payload.get("sample_ratio")
    arms = "".join(
        f'<tr data-arm="{_e(a["arm"])}"><th scope="row">{_e(a["arm"])}{" (control)" if a["arm"] == payload["control"] else ""}'
        f'</th>{_cell("units", a["units"])}'
        + (_cell("expected", srm["expected"].get(a["arm"]), num(srm["expected"].get(a["arm"]), 6))
           if srm and srm.get("expected") else "<td>-</td>") + "</tr>"
        for a in payload["arms"])
    srm_class = "srm-fail" if srm_mismatch(payload) else "srm-ok"
    role = ' role="alert"' if srm_mismatch(payload) else ""
    facts = [f"control arm: {payload['control']}", f"alpha: {payload['alpha']:g}",
             f"analysis run: {meta.get('generated', '-')}"]
    if meta.get("last_day"):
        facts.append(f"data up to: {meta['last_day']} (last day of the daily view)")
    if meta.get("engine"):
        facts.append(f"engine: {meta['engine']}")
    notes = "".join(f"<li>{_e(n)}</li>" for n in payload.get("notes", []))
    return (
        f'<header><h1>Experiment: {_e(payload["experiment"])}</h1><p>{_e(" · ".join(facts))}</p>'
        f'<div id="sample-ratio" class="{srm_class}"{role}>{_e(srm_line(payload))}</div>'
        f'<table class="arms"><caption>Units per arm (excluded units: {_e(num(payload["excluded_units"]))})</caption>'
        f'<thead><tr><th scope="col">arm</th><th scope="col">units</th><th scope="col">expected under the plan</th></tr>'
        f"</thead><tbody>{arms}</tbody></table>"
        + (f"<ul class=\"notes\">{notes}</ul>" if notes else "") + "</header>"
    )


def _verdicts(payload: dict) -> str:
    items = []
    for v in payload.get("verdicts", []):
        reasons = "".join(f"<li>{_e(x)}</li>" for x in v["reasons"])
        items.append(f'<li data-arm="{_e(v["arm"])}"><strong>{_e(v["arm"])}</strong>: '
                     f'<span class="verdict" data-verdict="{_e(v["verdict"])}">{_e(v["verdict"])}</span>'
                     f"<ul>{reasons}</ul></li>")
    caution = "".join(f"<li>{_e(c)}</li>" for c in cautions(payload))
    return (
        '<section id="verdicts"><h2>Verdict per treatment arm</h2>' + _untrusted(payload)
        + "<p>A verdict summarises the evidence as input to a decision; it is not a test outcome and not the "
          "decision itself.</p>"
        + f"<ul>{''.join(items)}</ul>"
        + f'<div class="caution"><strong>Cautions</strong><ul>{caution}</ul></div></section>'
    )


def _metric_sections(payload: dict, arms: list[str], conf: str, charts: list[str]) -> str:
    out = ['<section id="metrics"><h2>Results per metric</h2>', _untrusted(payload),
           f"<p>Estimate = treatment − control; relative lift = estimate / control; {conf} two-sided intervals. "
           "Filled diamonds and an asterisk mark comparisons significant at the adjusted p-value; "
           "dashed orange lines are guardrail non-inferiority margins.</p>"]
    rows = overall(payload)
    for i, metric in enumerate(metrics_in_order(rows)):
        mine = [r for r in rows if r["metric"] == metric]
        first = mine[0]
        title = f"{metric} ({first['kind']}, {first['role']})"
        svg = forest_svg(mine, title=title, conf=conf, arms=arms, salt=f"sqlstat-forest-{i}", ident=f"forest-{i}")
        charts.append(f"forest-{i}")
        out.append(f'<section class="metric" data-metric="{_e(metric)}"><h3>{_e(title)}</h3>'
                   f"<figure>{svg}<figcaption>Forest plot of {_e(metric)}: each treatment arm against the control, "
                   f"absolute difference (left) and relative lift (right); the chart's text alternative lists "
                   f"every value.</figcaption></figure>"
                   + _results_table(mine, conf) + "</section>")
    out.append("</section>")
    return "".join(out)


def _guardrails(payload: dict) -> str:
    rows = [r for r in overall(payload) if r.get("guardrail")]
    if not rows:
        return ""
    body = []
    for r in rows:
        g = r["guardrail"]
        rel = g["margin_type"] == "relative"
        margin = f"{g['margin']:.1%} of control" if rel else num(g["margin"])
        point = r["relative_lift"] if rel else r["estimate"]
        body.append(
            f'<tr data-metric="{_e(r["metric"])}" data-arm="{_e(r["arm"])}"><th scope="row">{_e(r["metric"])}</th>'
            f"<td>{_e(r['arm'])}</td><td>{_e(g['better'])} is better</td>"
            + _cell("guardrail.margin", g["margin"], margin)
            + _cell("guardrail.estimate", point, pct(point) if rel else num(point))
            + _cell("guardrail.bound", g["bound"], pct(g["bound"]) if rel else num(g["bound"]))
            + _cell("guardrail.p_value_adjusted", g["p_value_adjusted"], p_text(g["p_value_adjusted"]))
            + f'<td data-field="guardrail.status" data-value="{_value_attr(g["status"])}">{_e(g["status"])}</td></tr>')
    head = ["metric", "arm", "direction", "non-inferiority margin", "estimate", "one-sided bound", "p (one-sided)",
            "status"]
    return ('<section id="guardrails"><h2>Guardrails</h2>' + _untrusted(payload)
            + "<p>One-sided non-inferiority test against the margin: held (shown no worse than the margin), "
              "not shown (not yet shown within it) or harmed (significantly worse, two-sided).</p>"
            + '<table class="guardrails"><thead><tr>' + "".join(f'<th scope="col">{_e(h)}</th>' for h in head)
            + "</tr></thead><tbody>" + "".join(body) + "</tbody></table></section>")


def _targets(payload: dict) -> str:
    ts = payload.get("targets") or []
    if not ts:
        return ""
    head = ["metric", "arm", "value", "target", "alternative", "test", "statistic", "p-value", "significant"]
    body = "".join(
        f'<tr data-metric="{_e(t["metric"])}" data-arm="{_e(t["arm"])}"><th scope="row">{_e(t["metric"])}</th>'
        f"<td>{_e(t['arm'])}</td>" + _cell("value", t["value"]) + _cell("target", t["target"], f"{t['target']:g}")
        + f"<td>{_e(t['alternative'])}</td><td>{_e(t['test'])}</td>"
        + _cell("statistic", t["statistic"], num(t["statistic"], 3)) + _cell("p_value", t["p_value"], p_text(t["p_value"]))
        + f'<td data-field="significant" data-value="{_value_attr(t["significant"])}">'
          f'{"yes" if t["significant"] else "no"}</td></tr>'
        for t in ts)
    return ('<section id="targets"><h2>Checks against a fixed target</h2>' + _untrusted(payload)
            + "<p>Each arm on its own against the spec's target value.</p>"
            + '<table class="targets"><thead><tr>' + "".join(f'<th scope="col">{_e(h)}</th>' for h in head)
            + "</tr></thead><tbody>" + body + "</tbody></table></section>")


def _segments(payload: dict, arms: list[str], conf: str, charts: list[str]) -> str:
    rows = segmented(payload)
    if not rows:
        return ""
    method = correction_name(payload.get("corrections", {}).get("segment", "none"))
    out = ['<section id="segments" class="exploratory-section"><h2>Segments (exploratory, adjusted)</h2>',
           _untrusted(payload), f'<p class="exploratory">{_e(SEGMENTS_NOTE.format(method=method))}</p>']
    for i, metric in enumerate(metrics_in_order(rows)):
        mine = [r for r in rows if r["metric"] == metric]
        title = f"{metric} by segment (exploratory, adjusted: {method})"
        svg = forest_svg(mine, title=title, conf=conf, arms=arms, salt=f"sqlstat-segment-{i}", ident=f"segment-{i}",
                         label=lambda r: f"{r['segment']}={r['segment_value']} / {r['arm']}")
        charts.append(f"segment-{i}")
        out.append(f'<section class="segment-metric" data-metric="{_e(metric)}"><h3>{_e(title)}</h3>'
                   f"<figure>{svg}<figcaption>Exploratory forest plot of {_e(metric)} per segment value and arm; "
                   "significance uses the segment family's adjusted p-values.</figcaption></figure>"
                   + _results_table(mine, conf, segment=True) + "</section>")
    out.append("</section>")
    return "".join(out)


def _daily(payload: dict, daily: dict | None, arms: list[str], conf: str, charts: list[str]) -> str:
    if not daily:
        return ""
    rows = daily["rows"]
    always_valid = bool(daily.get("always_valid"))
    out = ['<section id="daily"><h2>Cumulative effect by day</h2>', _untrusted(payload),
           "<p>Each point is the readout as it stood at the end of that day (the daily view, run in the same "
           "engine session as the main query). The shaded band is the fixed-horizon interval: valid for one look "
           "at a horizon fixed in advance, not for reading every day and stopping at the first 'significant' day. "
           + ("The dotted lines are the always-valid confidence sequence, which may be read at every look. "
              if always_valid else "Set always_valid = true in the spec for intervals that may be read at every "
                                   "look. ")
           + "A day with no activity has no point: the previous value holds.</p>"]
    for i, metric in enumerate(dict.fromkeys(r["metric"] for r in rows)):
        mine = [r for r in rows if r["metric"] == metric]
        svg = daily_svg(mine, metric=metric, conf=conf, arms=arms, salt=f"sqlstat-daily-{i}", ident=f"daily-{i}",
                        always_valid=always_valid)
        charts.append(f"daily-{i}")
        out.append(f'<figure class="daily" data-metric="{_e(metric)}">{svg}<figcaption>{_e(metric)}: cumulative '
                   f"difference per treatment arm by day.</figcaption></figure>")
    out.append("</section>")
    return "".join(out)


def _methods(payload: dict, query: dict | None) -> str:
    seen: dict[tuple[str, str], dict] = {}
    for r in payload["results"]:
        seen.setdefault((r["metric"], r["test"]), r)
    body = "".join(
        f'<tr data-metric="{_e(m)}"><th scope="row">{_e(m)}</th><td>{_e(t)}</td><td>{_e(r["reason"])}</td>'
        f"<td>{_e(method_source(t))}</td></tr>" for (m, t), r in seen.items())
    fams = "".join(f"<li>{_e(x)}</li>" for x in family_lines(payload))
    extra = ""
    if any(r.get("always_valid") for r in payload["results"]):
        extra = f"<p>Always-valid results: {_e(ALWAYS_VALID_SOURCE)}.</p>"
    sql = ""
    if query:
        sql = (f'<p>The query: one read-only SELECT in the {_e(query["dialect"])} dialect, SQL fingerprint '
               f'<code id="sql-fingerprint">{_e(query["fingerprint"])}</code> (first 16 hex digits of the SHA-256 of '
               f"its text; the same spec gives the same text).</p>"
               f'<details><summary>Show the query ({len(query["sql"]):,} characters)</summary>'
               f'<pre><code>{_e(query["sql"])}</code></pre></details>')
    return ('<section id="methods"><h2>How these were computed</h2>'
            '<table class="methods"><thead><tr><th scope="col">metric</th><th scope="col">test</th>'
            '<th scope="col">why this test</th><th scope="col">published source</th></tr></thead>'
            f"<tbody>{body}</tbody></table><p>Multiple comparisons:</p><ul>{fams}</ul>{extra}{sql}</section>")


def to_html(payload: dict, *, query: dict | None = None, daily: dict | None = None,
            engine: str | None = None, generated: str | None = None) -> str:
    """The self-contained HTML report.

    Args:
        payload: the JSON report (``report.to_dict``), the documented contract.
        query: ``{"sql", "dialect", "fingerprint"}`` of the query that ran (see ``query_info``).
        daily: ``{"rows": [...], "always_valid": bool}``: the daily view's treatment rows
            (day, metric, arm, estimate, ci_low, ci_high, sequence_low, sequence_high).
        engine: a description of where the query ran.
        generated: when the analysis ran (default: now, UTC).
    """
    generated = generated or _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%d %H:%M UTC")
    arms = [a["arm"] for a in payload["arms"] if a["arm"] != payload["control"]]
    conf = confidence(payload)
    charts: list[str] = []
    meta = {"generated": generated, "engine": engine,
            "last_day": max((r["day"] for r in daily["rows"]), default=None) if daily else None}
    body = (_header(payload, meta) + "<main>" + _verdicts(payload) + _metric_sections(payload, arms, conf, charts)
            + _guardrails(payload) + _targets(payload) + _segments(payload, arms, conf, charts)
            + _daily(payload, daily, arms, conf, charts) + _methods(payload, query) + "</main>")
    return (
        "<!DOCTYPE html>\n"
        f'<html lang="en"><head><meta charset="utf-8"><meta name="generator" content="sqlstat {_e(__version__)}">'
        f'<meta name="viewport" content="width=device-width, initial-scale=1">'
        f"<title>{_e(payload['experiment'])}: experiment report</title><style>{CSS}</style></head>"
        f'<body data-charts="{len(charts)}">{body}'
        f"<footer><p>Written by sqlstat {_e(__version__)}. The JSON form of this report "
        f"(<code>--format json</code>) is the machine-readable contract.</p></footer></body></html>\n"
    )


def query_info(sql: str, dialect: str) -> dict:
    return {"sql": sql, "dialect": dialect, "fingerprint": sql_fingerprint(sql)}

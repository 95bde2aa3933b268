"""Analysis -> what people read: a terminal table, JSON (the documented contract) or CSV."""

from __future__ import annotations

import csv
import io
import json
import math
from typing import Any

from . import methods
from .model import GUARDRAIL_HARMED, GUARDRAIL_HELD, GUARDRAIL_NOT_SHOWN, LEGACY_VERDICTS, format_p
from .results import Analysis, TestResult  # no SciPy: report reads results, never stats

CAUTION = (
    "How to read this: a p-value is the chance of a difference at least this large if the arms "
    "truly did not differ; it is not the chance that the treatment works, and not the size of the "
    "effect (read the interval for that). Checking results repeatedly before the planned sample "
    "size, or scanning many metrics and arms, makes some 'significant' result likely by chance; "
    "a test with too few units can miss a real effect. Treat this readout as one input to a "
    "decision, next to cost, risk and what else is known."
)


def _num(x: Any) -> Any:
    """JSON has no NaN or infinity: use null for them."""
    if isinstance(x, float) and not math.isfinite(x):
        return None
    return x


def guardrail_status(g: Any) -> str:
    """held, harmed or not shown: the one set of words for a guardrail's outcome."""
    return GUARDRAIL_HELD if g.held else (GUARDRAIL_HARMED if g.harm else GUARDRAIL_NOT_SHOWN)


def _guardrail_dict(g: Any) -> dict[str, Any] | None:
    if g is None:
        return None
    return {
        "status": guardrail_status(g),
        "better": g.direction,
        "margin": g.margin,
        "margin_type": "relative" if g.relative else "absolute",
        "statistic": _num(g.statistic),
        "p_value": _num(g.p_value),
        "p_value_adjusted": _num(g.p_value_adjusted),
        "bound": _num(g.bound),
        "held": g.held,
        "harm": g.harm,
    }


def result_dict(r: "TestResult") -> dict[str, Any]:
    return {
        "metric": r.metric,
        "kind": r.kind,
        "role": r.role,
        "segment": r.segment,
        "segment_value": r.segment_value,
        "arm": r.arm,
        "test": r.test,
        "reason": r.reason,
        "control": {"n": r.control.n, "mean": _num(r.control.mean), "variance": _num(r.control.variance)},
        "treatment": {"n": r.treatment.n, "mean": _num(r.treatment.mean), "variance": _num(r.treatment.variance)},
        "estimate": _num(r.estimate),
        "difference": _num(r.difference),
        "std_error": _num(r.std_error),
        "statistic": _num(r.statistic),
        "statistic_name": r.statistic_name,
        "statistic_label": r.statistic_label,
        "odds_ratio": None if r.statistic_name != "odds_ratio" else {
            "estimate": _num(r.statistic), "method": "conditional_mle",
            "ci_low": _num(r.odds_ratio_ci_low), "ci_high": _num(r.odds_ratio_ci_high),
        },
        "df": _num(r.df),
        "p_value": _num(r.p_value),
        "p_value_adjusted": _num(r.p_value_adjusted),
        "correction": r.correction,
        "family": r.family,
        "ci_low": _num(r.ci_low),
        "ci_high": _num(r.ci_high),
        "relative_lift": _num(r.relative_lift),
        "lift_ci_low": _num(r.lift_ci_low),
        "lift_ci_high": _num(r.lift_ci_high),
        "alternative": r.alternative,
        "significant": r.significant,
        "cuped": None if r.theta is None else {
            "theta": _num(r.theta), "variance_reduction": _num(r.variance_reduction),
            "theta_treatment": _num(r.theta_treatment), "theta_control": _num(r.theta_control),
        },
        "guardrail": _guardrail_dict(r.guardrail),
        "always_valid": None if r.always_valid_p_value is None else {
            "p_value": _num(r.always_valid_p_value), "sequence_low": _num(r.sequence_low),
            "sequence_high": _num(r.sequence_high),
        },
        "notes": list(r.notes),
        "note_codes": [getattr(n, "code", None) for n in r.notes],
    }


def to_dict(a: "Analysis") -> dict[str, Any]:
    """The JSON contract: fields may be added over time, never renamed."""
    srm = a.sample_ratio
    return {
        "experiment": a.experiment,
        "control": a.control,
        "alpha": a.alpha,
        "arms": [{"arm": arm, "units": units} for arm, units in a.arms],
        "excluded_units": a.excluded_units,
        "sample_ratio": None if srm is None else {
            "statistic": _num(srm.statistic),
            "df": srm.df,
            "p_value": _num(srm.p_value),
            "alpha": srm.alpha,
            "mismatch": srm.mismatch,
            "expected": {arm: e for arm, e in zip(srm.arms, srm.expected)},
        },
        "corrections": dict(a.corrections),
        "results": [result_dict(r) for r in a.results],
        "targets": [
            {"metric": t.metric, "kind": t.kind, "arm": t.arm, "target": t.target, "value": _num(t.value), "n": t.n,
             "test": t.test, "reason": t.reason, "statistic": _num(t.statistic), "df": _num(t.df),
             "alternative": t.alternative, "p_value": _num(t.p_value), "significant": t.significant}
            for t in a.targets
        ],
        "verdicts": [{"arm": d.arm, "verdict": d.verdict, "reasons": list(d.reasons)} for d in a.verdicts],
        # Kept for one release with the old words (adopt/reject/inconclusive/invalid); read "verdicts".
        "decisions": [{"arm": d.arm, "verdict": LEGACY_VERDICTS[d.verdict], "reasons": list(d.reasons)}
                      for d in a.verdicts],
        "notes": list(a.notes),
        "caution": CAUTION,
    }


def to_json(a: "Analysis") -> str:
    return json.dumps(to_dict(a), indent=2, allow_nan=False) + "\n"


CSV_COLUMNS = (
    "experiment", "metric", "kind", "role", "segment", "segment_value", "arm", "test", "control_n",
    "control_mean", "control_variance", "treatment_n", "treatment_mean", "treatment_variance", "estimate",
    "std_error", "statistic", "statistic_name", "df", "p_value", "p_value_adjusted", "correction", "ci_low",
    "ci_high", "relative_lift", "lift_ci_low", "lift_ci_high", "alpha", "significant", "guardrail_held",
    "reason", "notes", "statistic_label",
)


def to_csv(a: "Analysis") -> str:
    """One row per (metric, segment, treatment arm)."""
    out = io.StringIO()
    w = csv.writer(out, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    for r in a.results:
        w.writerow([
            a.experiment, r.metric, r.kind, r.role, r.segment or "", r.segment_value or "", r.arm, r.test,
            r.control.n, _csv(r.control.mean), _csv(r.control.variance), r.treatment.n, _csv(r.treatment.mean),
            _csv(r.treatment.variance), _csv(r.estimate), _csv(r.std_error), _csv(r.statistic), r.statistic_name,
            _csv(r.df), _csv(r.p_value), _csv(r.p_value_adjusted), r.correction, _csv(r.ci_low), _csv(r.ci_high),
            _csv(r.relative_lift), _csv(r.lift_ci_low), _csv(r.lift_ci_high), a.alpha, str(r.significant).lower(),
            "" if r.guardrail is None else str(r.guardrail.held).lower(), r.reason, " | ".join(r.notes),
            r.statistic_label,
        ])
    return out.getvalue()


def _csv(x: Any) -> str:
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return ""
    return repr(x) if isinstance(x, float) else str(x)


def _fmt(x: Any, digits: int = 4) -> str:
    if x is None or (isinstance(x, float) and not math.isfinite(x)):
        return "-"
    if isinstance(x, int):
        return f"{x:,}"
    if x != 0 and (abs(x) >= 1e6 or abs(x) < 1e-3):
        return f"{x:.{digits - 1}e}"
    return f"{x:.{digits}g}"


_p = format_p


def _table(headers: list[str], rows: list[list[str]]) -> str:
    widths = [max(len(h), *(len(r[i]) for r in rows)) if rows else len(h) for i, h in enumerate(headers)]
    line = "  ".join(h.ljust(w) for h, w in zip(headers, widths))
    rule = "  ".join("-" * w for w in widths)
    body = ["  ".join(c.rjust(w) if i > 1 else c.ljust(w) for i, (c, w) in enumerate(zip(r, widths))) for r in rows]
    return "\n".join([line, rule, *body])


def _pct(x: Any) -> str:
    return "-" if not isinstance(x, float) or not math.isfinite(x) else f"{x:+.1%}"


# The table's short names for each statistic; the legend under the table spells them out.
STAT_SHORT = {"z": "z", "t": "t", "odds_ratio": "OR"}

CORRECTION_NAMES = {"none": "none", "holm": "Holm", "bh": "Benjamini-Hochberg"}


def _result_rows(results: list, conf: str) -> tuple[list[str], list[list[str]]]:
    headers = ["metric", "arm", "ctrl n", "ctrl mean", "trt n", "trt mean", "estimate",
               f"{conf} interval", "lift", "test", "stat", "df", "p-value", "adj. p", "sig."]
    rows = []
    for r in results:
        rows.append([
            r.metric if r.segment is None else f"{r.metric} [{r.segment}={r.segment_value}]", r.arm,
            _fmt(r.control.n), _fmt(r.control.mean), _fmt(r.treatment.n), _fmt(r.treatment.mean),
            _fmt(r.estimate), f"[{_fmt(r.ci_low)}, {_fmt(r.ci_high)}]", _pct(r.relative_lift), r.test,
            f"{STAT_SHORT.get(r.statistic_name, r.statistic_name)}={_fmt(r.statistic, 3)}",
            f"{r.df:.1f}" if r.df is not None else "-",
            _p(r.p_value), _p(r.p_value_adjusted) if r.correction != "none" else "-",
            "yes" if r.significant else "no",
        ])
    return headers, rows


def to_text(a: "Analysis") -> str:
    """The terminal readout."""
    conf = f"{(1 - a.alpha) * 100:g}%"
    out = [f"Experiment: {a.experiment}    control arm: {a.control}    alpha: {a.alpha:g}", ""]
    out.append("Units per arm: " + ", ".join(f"{arm} {units:,}" for arm, units in a.arms))
    srm = a.sample_ratio
    if srm is None:
        out.append("Sample-ratio check: not possible (fewer than two arms with units)")
    else:
        verdict = (
            f"MISMATCH (p < {srm.alpha:g}): the split differs from the plan; fix assignment before trusting any result"
            if srm.mismatch else f"ok (no mismatch at {srm.alpha:g})"
        )
        out.append(
            f"Sample-ratio check (chi-square vs planned split): chi2 = {srm.statistic:.3f}, df = {srm.df}, "
            f"p = {_p(srm.p_value)}: {verdict}"
        )
    for n in a.notes:
        if getattr(n, "code", None) != "segments_exploratory":
            out.append(f"Note: {n}")
    if a.verdicts:
        out.append("")
        out.append("Verdict per treatment arm (input to a decision, not the decision itself):")
        for d in a.verdicts:
            out.append(f"  {d.arm}: {d.verdict.upper()}")
            for reason in d.reasons:
                out.append(f"    - {reason}")
    out.append("")
    out.append(f"Results (estimate = treatment - control; lift = estimate / control; {conf} two-sided intervals):")
    headers, rows = _result_rows(list(a.overall), conf)
    out.append(_table(headers, rows))
    if any(r.statistic_name == "odds_ratio" for r in a.results):
        out.append("stat OR = odds ratio (conditional maximum-likelihood estimate, as Fisher's exact test "
                   "uses), not a z or t statistic; its exact interval is in the notes")
    monitored = [r for r in a.overall if r.always_valid_p_value is not None]
    if monitored:
        out.append("")
        out.append("Always-valid results (mSPRT; safe to read at every look, unlike the p-values above):")
        out.append(_table(
            ["metric", "arm", "estimate", "always-valid p", f"{conf} confidence sequence"],
            [[r.metric, r.arm, _fmt(r.estimate), _p(r.always_valid_p_value),
              f"[{_fmt(r.sequence_low)}, {_fmt(r.sequence_high)}]"] for r in monitored],
        ))
    guards = [r for r in a.overall if r.guardrail is not None]
    if guards:
        out.append("")
        out.append("Guardrails (one-sided non-inferiority test against the non-inferiority margin):")
        g_rows = []
        for r in guards:
            g = r.guardrail
            margin = f"{g.margin:.1%} of control" if g.relative else f"{g.margin:g}"
            point = _pct(r.relative_lift) if g.relative else _fmt(r.estimate)
            g_rows.append([r.metric, r.arm, f"{g.direction} is better", margin, point,
                           _pct(g.bound) if g.relative else _fmt(g.bound), _p(g.p_value_adjusted),
                           guardrail_status(g)])
        out.append(_table(["metric", "arm", "direction", "non-inferiority margin", "estimate", "one-sided bound",
                           "p (one-sided)", "status"], g_rows))
    if a.targets:
        out.append("")
        out.append("Checks against a fixed target (one arm at a time):")
        t_rows = [[t.metric, t.arm, _fmt(t.value), f"{t.target:g}", t.alternative, t.test, _fmt(t.statistic, 3),
                   _p(t.p_value), "yes" if t.significant else "no"] for t in a.targets]
        out.append(_table(["metric", "arm", "value", "target", "alternative", "test", "stat", "p-value", "sig."], t_rows))
    if a.segmented:
        out.append("")
        method = CORRECTION_NAMES.get(a.corrections.get("segment", "none"), "none")
        out.append(f"Segments (exploratory; p-values adjusted across all segment rows: {method}; not used in the verdict):")
        headers, rows = _result_rows(list(a.segmented), conf)
        out.append(_table(headers, rows))
    out.append("")
    out.append("Why these tests:")
    seen = set()
    for r in a.overall:
        if (r.metric, r.test) in seen:
            continue
        seen.add((r.metric, r.test))
        out.append(f"  {r.metric} ({r.test}): {r.reason}")
    flagged = [(r.metric, r.arm, n) for r in a.overall for n in r.notes if getattr(n, "code", None) != "interval"]
    if flagged:
        out.append("")
        out.append("Notes:")
        for metric, arm, note in flagged:
            out.append(f"  {metric} / {arm}: {note}")
    families = {}
    for r in a.overall:
        families.setdefault(r.family, []).append(r)
    out.append("")
    parts = [f"{fam} ({len(rs)} comparisons): {CORRECTION_NAMES.get(rs[0].correction, rs[0].correction)}"
             for fam, rs in families.items()]
    out.append("Multiple comparisons: " + "; ".join(parts) + ".")
    unadjusted = sum(len(rs) for rs in families.values() if rs[0].correction == "none")
    if unadjusted > 1:
        out.append(
            f"  {unadjusted} comparisons are unadjusted at alpha = {a.alpha:g} each; "
            f"expect about {unadjusted * a.alpha:.2g} false positives among them if nothing differs."
        )
    out.append("")
    out.append(CAUTION)
    return "\n".join(out) + "\n"


def render(a: Analysis, fmt: str, context: dict | None = None) -> str:
    """``a`` in ``fmt``; html and markdown are built from the JSON payload (report_html,
    report_markdown), with ``context`` from api.run_with_context (the query, the daily view)."""
    if fmt == "html":
        from .report_html import to_html

        return to_html(to_dict(a), **(context or {}))
    if fmt == "markdown":
        from .report_markdown import to_markdown

        return to_markdown(to_dict(a), query=(context or {}).get("query"))
    if fmt == "json":
        return to_json(a)
    if fmt == "csv":
        return to_csv(a)
    return to_text(a)


def plan_text(experiment: Any) -> str:
    """What ``sqlstat check`` prints: the spec as understood and the test each metric will get."""
    from .expressions import CANONICAL

    e = experiment
    src = e.assignment.source
    out = [f"Spec OK: experiment {e.name!r}, control arm {e.control!r}, alpha {e.alpha:g}"]
    out += [f"Note: {n}" for n in e.notes]
    split = (", ".join(f"{k} {v:g}" for k, v in e.weights.items()) if e.weights else "equal split")
    out.append(f"Arms: {', '.join(e.arms) if e.arms else 'taken from the data'}; planned split: {split}")
    out.append(
        f"Assignment: {src.text} (unit {e.assignment.unit.sql(CANONICAL)}, arm {e.assignment.arm.sql(CANONICAL)}"
        + (", one row per unit" if e.assignment.per_unit else "") + ")"
    )
    if e.events is not None:
        out.append(
            f"Events: {e.events.source.text} (unit {e.events.unit.sql(CANONICAL)}"
            + (", one row per unit" if e.events.per_unit else ", aggregated per unit") + ")"
        )
    out.append("")
    out.append("Metrics and the test each will get:")
    for m in e.metrics:
        if m.kind == "ratio" and m.denominator is not None:
            out.append(f"  {m.name} [{m.kind}] numerator = {m.value.sql(CANONICAL)}, "
                       f"denominator = {m.denominator.sql(CANONICAL)}")
        else:
            out.append(f"  {m.name} [{m.kind}] value = {m.value.sql(CANONICAL)}")
        if m.covariate is not None:
            out.append(f"    covariate (pre-period) = {m.covariate.sql(CANONICAL)}")
        out += [f"    {line}" for line in methods.plan_lines(m)]
        if m.missing == "exclude":
            out.append("    units without a value are left out of this metric")
    out.append("")
    out.append("Sample-ratio check: chi-square goodness of fit of units per arm, mismatch if "
               f"p < {e.sample_ratio_alpha:g}")
    return "\n".join(out) + "\n"


def _pct_plain(x: Any) -> str:
    return "-" if not isinstance(x, float) or not math.isfinite(x) else f"{x:.1%}"


def plan_dict(p: Any) -> dict[str, Any]:
    return {
        "experiment": p.experiment,
        "alpha": p.alpha,
        "power": p.power,
        "arms": p.arms,
        "window_days": p.window_days,
        "daily_units": _num(p.daily_units),
        "population": p.population,
        "weights": {a: w for a, w in p.weights},
        "metrics": [
            {"metric": r.metric, "kind": r.kind, "baseline": _num(r.baseline), "sd": _num(r.sd),
             "units_seen": r.units_seen, "population": r.population,
             "share_without_rows": _num(r.share_without_rows),
             "units_by_arm": {a: None if not math.isfinite(n) else math.ceil(n) for a, n in r.units_by_arm},
             "mde": _num(r.mde), "mde_relative": _num(r.mde_relative),
             "units_per_arm": None if not math.isfinite(r.units_per_arm) else math.ceil(r.units_per_arm),
             "total_units": None if not math.isfinite(r.total_units) else math.ceil(r.total_units),
             "days": None if not math.isfinite(r.days) else math.ceil(r.days), "method": r.method,
             "notes": list(r.notes)}
            for r in p.rows
        ],
    }


def plan_report(p: Any, fmt: str = "table") -> str:
    """What ``sqlstat plan`` prints."""
    if fmt == "json":
        return json.dumps(plan_dict(p), indent=2, allow_nan=False) + "\n"
    shares = [w for _, w in p.weights]
    split = "equal split" if len(set(round(w, 12) for w in shares)) <= 1 else "split " + ":".join(
        f"{w / min(shares):g}" for w in shares) + " (" + ", ".join(a for a, _ in p.weights) + ")"
    without = p.rows[0].share_without_rows if p.rows else float("nan")
    out = [
        f"Plan for {p.experiment}: two-sided alpha = {p.alpha:g}, power = {p.power:g}, {p.arms} arms, {split}",
        f"Population: {p.population:,} units (the [assignment] source), {_pct_plain(without)} of them without "
        f"pre-period rows (counted under each metric's missing rule)",
        f"Baseline from the pre-period ({p.window_days} days): {_fmt(p.daily_units)} units seen per day",
        "",
    ]
    rows = []
    for r in p.rows:
        units = "-" if not math.isfinite(r.units_per_arm) else f"{math.ceil(r.units_per_arm):,}"
        total = "-" if not math.isfinite(r.total_units) else f"{math.ceil(r.total_units):,}"
        days = "-" if not math.isfinite(r.days) else f"{math.ceil(r.days):,}"
        rows.append([r.metric, r.kind, _fmt(r.baseline), _fmt(r.sd), _fmt(r.mde), _pct(r.mde_relative), units,
                     total, days, r.method])
    out.append(_table(["metric", "kind", "baseline", "sd per unit", "effect (abs)", "effect (rel)",
                       "units (smallest arm)", "total units", "days", "method"], rows))
    if any(len({round(n, 6) for _, n in r.units_by_arm}) > 1 for r in p.rows):
        out.append("")
        out.append("Units per arm, following the weights (the smallest comparison arm sets the size):")
        for r in p.rows:
            arms = ", ".join(f"{a} {'-' if not math.isfinite(n) else f'{math.ceil(n):,}'}" for a, n in r.units_by_arm)
            out.append(f"  {r.metric}: {arms}")
    for r in p.rows:
        for n in r.notes:
            out.append(f"Note: {r.metric}: {n}")
    out.append("")
    out.append(
        "Days assume every unit seen in the pre-period window arrives at the same daily rate; returning units "
        "make real traffic grow more slowly, so treat the days as a lower bound. Decide the sample size before "
        "launch and read the result once it is reached: stopping early when a p-value dips below alpha inflates "
        "false positives."
    )
    return "\n".join(out) + "\n"

"""Spec tables -> model parts: one builder per table ([experiment], [[metric]], [pre_period]).

Each builder reads one TOML table with a spec_values.Checker, adds every problem it finds
(key path and line) and returns the model part, or None when the table cannot be built.
spec.py calls them in order and raises the collected problems once.
"""

from __future__ import annotations

import datetime as _dt
import math
import re
from typing import Any

from . import expressions as ex
from .model import (
    CORRECTIONS, DEFAULT_CORRECTIONS, DIRECTIONS, METRIC_KINDS, MISSING_POLICIES, ROLES, Metric, PrePeriod,
)
from .spec_values import Checker, label_problem, suggest

EXPERIMENT_KEYS = (
    "name", "control", "alpha", "weights", "arms", "sample_ratio_alpha", "segments", "correction",
    "power", "always_valid", "fastest_detected_lift", "mixing_sd", "description", "daily",
)
ASSIGNMENT_KEYS = ("source", "unit", "arm", "per_unit", "where", "time")
EVENTS_KEYS = ("source", "unit", "per_unit", "where", "time")
METRIC_KEYS = (
    "name", "kind", "value", "numerator", "denominator", "sigma", "equal_variance", "missing",
    "cuped", "covariate", "role", "better", "margin", "relative_margin", "target", "description",
)
PRE_PERIOD_KEYS = ("source", "unit", "time", "start", "end", "where")
CORRECTION_KEYS = ("primary", "secondary", "guardrail", "segment")
TOP_KEYS = ("experiment", "assignment", "events", "pre_period", "metric")
_NAME = re.compile(r"^[A-Za-z_][A-Za-z0-9_.\-]{0,99}$")


def metric_table(c: Checker, table: Any, number: int, per_unit: bool, has_pre_period: bool) -> Metric | None:
    path = f"metric[{number}]"
    if not isinstance(table, dict):
        c.add(path, "each [[metric]] must be a table")
        return None
    c.unknown_keys(table, METRIC_KEYS, path)
    name = c.string(table, "name", path)
    if name is not None and not _NAME.match(name):
        c.add(f"{path}.name", "metric name must start with a letter or _ and use letters, digits, _ . - (at most 100)")
        name = None
    kind = table.get("kind")
    if kind is None:
        c.add(path, f"missing required key 'kind' (one of: {', '.join(METRIC_KINDS)})")
    elif kind not in METRIC_KINDS:
        c.add(f"{path}.kind", f"unknown kind {kind!r}{suggest(kind, METRIC_KINDS)} (allowed: {', '.join(METRIC_KINDS)})")
        kind = None
    value = denominator = None
    text = ""
    if kind == "ratio":
        if "value" in table:
            c.add(f"{path}.value", "a ratio metric takes 'numerator' and 'denominator' instead of 'value'")
        value, text = c.expression(table, "numerator", path, not per_unit, required=True)
        denominator, _ = c.expression(table, "denominator", path, not per_unit, required=True)
    else:
        for k in ("numerator", "denominator"):
            if k in table:
                c.add(f"{path}.{k}", f"{k!r} is for ratio metrics (kind = \"ratio\"); use 'value'")
        value, text = c.expression(table, "value", path, not per_unit, required=True)
    sigma = c.number(table, "sigma", path, positive=True)
    if sigma is not None and kind != "mean":
        c.add(f"{path}.sigma", "'sigma' applies to mean metrics only; a proportion's variance follows from its rate")
    equal_variance = c.boolean(table, "equal_variance", path)
    if equal_variance and kind != "mean":
        c.add(f"{path}.equal_variance", "'equal_variance' applies to mean metrics only")
    if equal_variance and sigma is not None:
        c.add(f"{path}.equal_variance", "give either 'sigma' (z test) or 'equal_variance' (Student's t), not both")
    missing = c.choice(table, "missing", path, MISSING_POLICIES, "zero")

    covariate = None
    cuped = c.boolean(table, "cuped", path)
    if cuped and "covariate" in table:
        c.add(f"{path}.cuped", "give either 'cuped = true' (the metric's own value before the experiment) or 'covariate', not both")
    elif cuped or "covariate" in table:
        if not has_pre_period:
            c.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED needs a [pre_period] table saying where and when the pre-experiment rows are")
        elif kind == "ratio":
            c.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED adjustment of ratio metrics is not supported; use it on mean or proportion metrics")
        elif sigma is not None or equal_variance:
            c.add(f"{path}.{'cuped' if cuped else 'covariate'}", "CUPED uses its own Welch test; drop 'sigma' / 'equal_variance'")
        elif cuped:
            if per_unit:
                c.add(f"{path}.cuped", "with per_unit events the value is a row expression; write the pre-period aggregate as 'covariate'")
            else:
                covariate = value
        else:
            covariate, _ = c.expression(table, "covariate", path, True, required=True)

    role = c.choice(table, "role", path, ROLES, "secondary")
    better = c.choice(table, "better", path, DIRECTIONS, None)
    margin = c.number(table, "margin", path, positive=True)
    relative_margin = c.number(table, "relative_margin", path, positive=True)
    if role == "guardrail":
        if better is None:
            c.add(path, "a guardrail needs 'better' (\"higher\" or \"lower\") to know which way is harm")
        if (margin is None) == (relative_margin is None):
            c.add(path, "a guardrail needs exactly one of 'margin' (absolute) or 'relative_margin' (e.g. 0.05 for 5%)")
    elif margin is not None or relative_margin is not None:
        c.add(f"{path}.{'margin' if margin is not None else 'relative_margin'}", "margins apply to guardrails only (role = \"guardrail\")")
    target = c.number(table, "target", path)
    if target is not None and kind == "proportion" and not (0 < target < 1):
        c.add(f"{path}.target", "a proportion's target must be strictly between 0 and 1")
    description = table.get("description", "")
    if not isinstance(description, str):
        c.add(f"{path}.description", "'description' must be a string")
        description = ""
    if name is None or kind is None or value is None or (kind == "ratio" and denominator is None):
        return None
    if (cuped or "covariate" in table) and covariate is None:
        return None
    return Metric(
        number - 1, name, kind, value, text, sigma, equal_variance, missing or "zero",
        denominator=denominator, covariate=covariate, role=role or "secondary", better=better,
        margin=margin, relative_margin=relative_margin, target=target, description=description,
    )

def pre_period_table(c: Checker, table: dict) -> PrePeriod | None:
    path = "pre_period"
    c.unknown_keys(table, PRE_PERIOD_KEYS, path)
    src = c.source(table, path)
    unit = c.column(table, "unit", path)
    time = c.column(table, "time", path)
    dates = []
    for key in ("start", "end"):
        raw = table.get(key)
        if raw is None:
            c.add(path, f"missing required key {key!r} (an ISO date such as 2026-08-01)")
            dates.append(None)
            continue
        try:
            dates.append(_dt.date.fromisoformat(str(raw)[:10]) if not isinstance(raw, _dt.date) else raw)
        except ValueError:
            c.add(f"{path}.{key}", f"{key!r} must be an ISO date such as 2026-08-01, got {raw!r}")
            dates.append(None)
    if dates[0] and dates[1] and dates[0] >= dates[1]:
        c.add(f"{path}.end", "'end' must be after 'start' (the window is start <= time < end)")
    where = c.row_filter(table, path)
    if src is None or unit is None or time is None or None in dates:
        return None
    start, end = (d.date() if isinstance(d, _dt.datetime) else d for d in dates)
    return PrePeriod(src, unit, time, start.isoformat(), end.isoformat(), where)


def experiment_table(c: Checker, exp_t: dict) -> dict[str, Any]:
    """The [experiment] table -> the Experiment's fields (None where a value has a problem)."""
    c.unknown_keys(exp_t, EXPERIMENT_KEYS, "experiment")
    name = c.string(exp_t, "name", "experiment")
    if name is not None and (why := label_problem(name, "the experiment name", in_sql=False)):
        c.add("experiment.name", why)
        name = None
    control = exp_t.get("control")
    if control is None:
        c.add("experiment", "missing required key 'control' (the label of the control arm)")
    elif isinstance(control, bool) or not isinstance(control, (str, int)) or str(control).strip() == "":
        c.add("experiment.control", "'control' must be the control arm's label (a string or an integer)")
        control = None
    elif why := label_problem(str(control), "the control label"):
        c.add("experiment.control", why)
        control = None
    else:
        control = str(control)
    alpha = c.probability(exp_t, "alpha", "experiment", 0.05)
    srm_alpha = c.probability(exp_t, "sample_ratio_alpha", "experiment", 0.001)

    arms = None
    if "arms" in exp_t:
        raw = exp_t["arms"]
        if not isinstance(raw, list) or len(raw) < 2 or not all(isinstance(a, (str, int)) and not isinstance(a, bool) for a in raw):
            c.add("experiment.arms", "'arms' must list at least two arm labels")
        elif any(str(a).strip() == "" for a in raw):
            c.add("experiment.arms", "'arms' has an empty arm label; every arm needs a name")
        elif len({str(a) for a in raw}) != len(raw):
            c.add("experiment.arms", "'arms' lists a label twice")
        elif any(label_problem(str(a), "an arm label") for a in raw):
            c.add("experiment.arms", next(w for a in raw if (w := label_problem(str(a), "an arm label"))))
        else:
            arms = tuple(str(a) for a in raw)

    weights = None
    if "weights" in exp_t:
        raw = exp_t["weights"]
        if not isinstance(raw, dict) or len(raw) < 2:
            c.add("experiment.weights", "'weights' must map at least two arm labels to their planned shares")
        elif any(str(k).strip() == "" for k in raw):
            c.add("experiment.weights", "'weights' has an empty arm label; every arm needs a name")
        elif any(label_problem(str(k), "an arm label") for k in raw):
            c.add("experiment.weights", next(w for k in raw if (w := label_problem(str(k), "an arm label"))))
        else:
            bad = [k for k, v in raw.items() if isinstance(v, bool) or not isinstance(v, (int, float)) or not (v > 0 and math.isfinite(v))]
            if bad:
                c.add("experiment.weights", f"weights must be positive numbers; check {', '.join(map(repr, bad))}")
            else:
                weights = {str(k): float(v) for k, v in raw.items()}
                if arms is not None and set(weights) != set(arms):
                    c.add("experiment.weights", f"'weights' names arms {sorted(weights)} but 'arms' lists {sorted(arms)}")
    declared = arms or (tuple(weights) if weights else None)
    if control is not None and declared is not None and control not in declared:
        c.add("experiment.control", f"control arm {control!r} is not among the declared arms {list(declared)}{suggest(control, list(declared))}")

    segments: list = []
    if "segments" in exp_t:
        raw = exp_t["segments"]
        if not isinstance(raw, list) or not raw or len(raw) > 8:
            c.add("experiment.segments", "'segments' must list 1 to 8 column names of the assignment source")
        else:
            for i, text in enumerate(raw):
                try:
                    segments.append(ex.parse_column(text, "segments"))
                except ex.ExpressionProblem as err:
                    c.add("experiment.segments", f"segments[{i + 1}]: {err}")
            names = [s_.sql() for s_ in segments]
            if len(set(names)) != len(names):
                c.add("experiment.segments", "'segments' lists a column twice")
    corrections = dict(DEFAULT_CORRECTIONS)
    if "correction" in exp_t:
        raw = exp_t["correction"]
        if not isinstance(raw, dict):
            c.add("experiment.correction", "'correction' maps families to methods, e.g. { secondary = \"holm\" }")
        else:
            for k, v in raw.items():
                if k not in CORRECTION_KEYS:
                    c.add("experiment.correction", f"unknown family {k!r}{suggest(k, CORRECTION_KEYS)} (allowed: {', '.join(CORRECTION_KEYS)})")
                elif v not in CORRECTIONS:
                    c.add("experiment.correction", f"correction for {k!r} must be one of: {', '.join(CORRECTIONS)}, got {v!r}{suggest(str(v), CORRECTIONS)}")
                else:
                    corrections[k] = v
    power = c.probability(exp_t, "power", "experiment", 0.8)
    always_valid = c.boolean(exp_t, "always_valid", "experiment")
    # The relative effect the always-valid test (mSPRT) detects fastest: its mixing standard
    # deviation as a share of the control value, the method's published "mixing_sd".
    spec_notes: list[str] = []
    lift_key = "fastest_detected_lift"
    mixing_sd = c.number(exp_t, lift_key, "experiment", positive=True)
    if "mixing_sd" in exp_t:
        if lift_key in exp_t:
            c.add("experiment.mixing_sd", f"'mixing_sd' is the old name of {lift_key!r}; give only {lift_key!r}")
        else:
            lift_key = "mixing_sd"
            mixing_sd = c.number(exp_t, "mixing_sd", "experiment", positive=True)
            spec_notes.append("spec key experiment.mixing_sd is deprecated and will be dropped in the next release: "
                              "write fastest_detected_lift (same meaning: the relative effect the always-valid test "
                              "detects fastest)")
    if mixing_sd is not None and not always_valid:
        c.add(f"experiment.{lift_key}", f"{lift_key!r} tunes always-valid results; set always_valid = true too")
    daily = c.boolean(exp_t, "daily", "experiment")
    return {
        "name": name, "control": control, "alpha": alpha, "sample_ratio_alpha": srm_alpha, "arms": arms,
        "weights": weights, "segments": tuple(segments), "corrections": corrections, "power": power,
        "always_valid": always_valid, "mixing_sd": mixing_sd if mixing_sd is not None else 0.05, "daily": daily,
        "notes": tuple(spec_notes),
    }

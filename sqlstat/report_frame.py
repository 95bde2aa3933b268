"""JSON report payload -> a pandas DataFrame (one row per comparison) and the HTML table a
notebook shows for an analysis.

``api.run`` and ``api.analyse`` hand back their Analysis as a ``notebook_view`` of it: the
same frozen object and fields, plus ``to_frame()`` and ``_repr_html_()``. Both read the
JSON payload (``report.to_dict``), the documented contract, so a frame's columns are the
JSON's field names (nested ones joined with "_": ``control_n``, ``guardrail_status``).
pandas is optional: ``pip install 'sqlstat[notebook]'``.
"""

from __future__ import annotations

from typing import Any

from .errors import UsageError

PANDAS_MISSING = ("a data frame needs pandas, which is not installed: pip install 'sqlstat[notebook]' "
                  "(or pip install pandas)")


def _flat(prefix: str, value: Any, out: dict[str, Any]) -> None:
    if isinstance(value, dict):
        for k, v in value.items():
            _flat(f"{prefix}_{k}" if prefix else k, v, out)
    elif isinstance(value, list):
        out[prefix] = " | ".join(str(v) for v in value)
    else:
        out[prefix] = value


# Nested fields that are absent on some rows still get their columns (as missing values).
_SHAPES = {
    "odds_ratio": ("estimate", "method", "ci_low", "ci_high"),
    "cuped": ("theta", "variance_reduction", "theta_treatment", "theta_control"),
    "guardrail": ("status", "better", "margin", "margin_type", "statistic", "p_value", "p_value_adjusted", "bound",
                  "held", "harm"),
    "always_valid": ("p_value", "sequence_low", "sequence_high"),
}


def rows(payload: dict) -> list[dict[str, Any]]:
    """One flat dict per comparison (metric, segment, treatment arm), in the JSON's order."""
    out = []
    for r in payload["results"]:
        flat: dict[str, Any] = {"experiment": payload["experiment"]}
        for key, value in r.items():
            if value is None and key in _SHAPES:
                value = dict.fromkeys(_SHAPES[key])
            _flat(key, value, flat)
        flat["alpha"] = payload["alpha"]
        out.append(flat)
    return out


def to_frame(payload: dict):
    """The comparisons as a pandas DataFrame (raises UsageError naming the extra without pandas)."""
    try:
        import pandas as pd
    except ImportError:
        raise UsageError(PANDAS_MISSING) from None
    return pd.DataFrame(rows(payload))


def to_notebook_html(payload: dict) -> str:
    """What Jupyter shows for an analysis: the sample-ratio check, the verdicts and the results."""
    from html import escape

    from .report_common import confidence, overall, srm_line, srm_mismatch
    from .report_html import _results_table

    srm = escape(srm_line(payload))
    head = (f"<p><strong>Experiment {escape(payload['experiment'])}</strong> (control arm "
            f"{escape(payload['control'])}, alpha {payload['alpha']:g})</p>"
            + (f"<p><strong>{srm}</strong></p>" if srm_mismatch(payload) else f"<p>{srm}</p>"))
    verdicts = "".join(f"<li>{escape(v['arm'])}: <strong>{escape(v['verdict'])}</strong> &mdash; "
                       f"{escape('; '.join(v['reasons']))}</li>" for v in payload.get("verdicts", []))
    return (f'<div class="sqlstat-analysis">{head}<ul>{verdicts}</ul>'
            f"{_results_table(overall(payload), confidence(payload))}"
            f"<p><small>{escape(payload['caution'])}</small></p></div>")


_VIEWS: dict[type, type] = {}


def notebook_view(analysis: Any) -> Any:
    """``analysis`` as the same object with ``to_frame()`` and ``_repr_html_()`` added."""
    cls = type(analysis)
    if cls in _VIEWS.values():
        return analysis
    if cls not in _VIEWS:
        def to_frame_method(self):
            """The comparisons as a pandas DataFrame, one row per (metric, segment, treatment arm)."""
            from .report import to_dict

            return to_frame(to_dict(self))

        def repr_html(self) -> str:
            from .report import to_dict

            return to_notebook_html(to_dict(self))

        _VIEWS[cls] = type(cls.__name__, (cls,), {"to_frame": to_frame_method, "_repr_html_": repr_html,
                                                  "__module__": cls.__module__, "__qualname__": cls.__qualname__})
    view = _VIEWS[cls]
    import dataclasses

    return view(**{f.name: getattr(analysis, f.name) for f in dataclasses.fields(analysis) if f.init})

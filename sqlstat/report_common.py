"""JSON report payload -> what the HTML and Markdown reports share: number formats, method
sources (read from the method registry), the cautions and the SQL fingerprint.

Both human reports read the JSON payload (``report.to_dict``, the documented contract),
never the result dataclasses, so they show exactly what the JSON says.
"""

from __future__ import annotations

import hashlib
import math
from typing import Any

from . import methods
from .model import format_p
from .report import CORRECTION_NAMES, _fmt, _pct

SAMPLE_RATIO_SOURCE = "Pearson's (1900) chi-square goodness of fit against the planned split"
ALWAYS_VALID_SOURCE = ("mixture sequential probability ratio test (Johari, Koomen, Pekelis and Walsh, 2017/2022); "
                       "repeated looks inflate fixed-horizon errors (Armitage, McPherson and Rowe, 1969)")

# The standard cautions beside every human report; the first is the JSON's "caution".
PEEKING = ("Peeking: looking at results every day and stopping when p < alpha inflates false "
           "positives far above alpha; fix the sample size in advance and read the result once.")
MULTIPLICITY = ("Multiplicity: with many metrics and arms some comparisons cross alpha by chance; "
                "families are adjusted as listed below.")
POWER = ("Power: an underpowered test misses real effects; 'not significant' is not 'no effect' "
         "(read the interval).")
SRM_UNTRUSTED = ("The sample-ratio check failed: the split of units differs from the plan, so assignment "
                 "or logging is broken and none of these results can be trusted until that is explained.")
SEGMENTS_NOTE = ("Segments are exploratory: p-values are adjusted across all segment rows ({method}) and "
                 "segments never enter the verdict.")


def num(x: Any, digits: int = 4) -> str:
    """A number as the reports print it (the terminal table's format)."""
    return _fmt(x, digits)


def pct(x: Any) -> str:
    return _pct(x)


def p_text(x: Any) -> str:
    return format_p(x)


def finite(x: Any) -> bool:
    return isinstance(x, (int, float)) and not isinstance(x, bool) and math.isfinite(x)


def sql_fingerprint(sql: str) -> str:
    """The query's identity: the first 16 hex digits of the SHA-256 of its text."""
    return hashlib.sha256(sql.encode("utf-8")).hexdigest()[:16]


def method_source(test: str) -> str:
    """The published method a test id follows (the registry's ``source``)."""
    method = methods.METHODS.get(test)
    return method.source if method else "see docs/methods.md"


def correction_name(method: str) -> str:
    return CORRECTION_NAMES.get(method, method)


def overall(payload: dict) -> list[dict]:
    return [r for r in payload["results"] if r.get("segment") is None]


def segmented(payload: dict) -> list[dict]:
    return [r for r in payload["results"] if r.get("segment") is not None]


def metrics_in_order(results: list[dict]) -> list[str]:
    seen: dict[str, None] = {}
    for r in results:
        seen.setdefault(r["metric"], None)
    return list(seen)


def srm_mismatch(payload: dict) -> bool:
    srm = payload.get("sample_ratio")
    return bool(srm and srm.get("mismatch"))


def srm_line(payload: dict) -> str:
    srm = payload.get("sample_ratio")
    if srm is None:
        return "Sample-ratio check: not possible (fewer than two arms with units)."
    head = (f"Sample-ratio check ({SAMPLE_RATIO_SOURCE}): chi-square = {num(srm['statistic'])}, "
            f"df = {srm['df']}, p = {p_text(srm['p_value'])}")
    if srm["mismatch"]:
        return f"{head}: MISMATCH (p < {srm['alpha']:g}). {SRM_UNTRUSTED}"
    return f"{head}: no mismatch at {srm['alpha']:g}."


def family_lines(payload: dict) -> list[str]:
    """How each family of comparisons was adjusted, and the false positives to expect."""
    families: dict[str, list[dict]] = {}
    for r in overall(payload):
        families.setdefault(r["family"], []).append(r)
    lines = [f"{fam} ({len(rs)} comparisons): {correction_name(rs[0]['correction'])}" for fam, rs in families.items()]
    unadjusted = sum(len(rs) for rs in families.values() if rs[0]["correction"] == "none")
    if unadjusted > 1:
        lines.append(f"{unadjusted} comparisons are unadjusted at alpha = {payload['alpha']:g} each; expect about "
                     f"{unadjusted * payload['alpha']:.2g} false positives among them if nothing differs.")
    return lines


def cautions(payload: dict) -> list[str]:
    return [payload["caution"], PEEKING, MULTIPLICITY, POWER]


def confidence(payload: dict) -> str:
    return f"{(1 - payload['alpha']) * 100:g}%"


def significance_word(r: dict) -> str:
    """What the reports print for the significant flag: 'yes' or 'no', never a verdict word."""
    return "yes" if r["significant"] else "no"

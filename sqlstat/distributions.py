"""Constants for the SQL distribution macros (templates/distributions.sql.j2), and grid queries.

The macros compute normal, Student's t and chi-square probabilities and quantiles in
plain SQL arithmetic, so the emitted query can carry p-values and intervals itself. They
need a few constant tables (quadrature nodes, series coefficients), which
``template_context`` supplies; the compiler merges that dict into the render context of
any template that imports the macro file with ``{% import "distributions.sql.j2" as dist
with context %}``. ``grid_query`` builds a standalone SELECT that applies one macro to a
constant table of inputs; the tests run it on each engine and compare with scipy.special.
"""

from __future__ import annotations

import math
from functools import lru_cache
from pathlib import Path
from typing import Iterable, Sequence

import jinja2
import numpy as np
import sqlglot
from sqlglot import exp

from .dialects import finish, get_dialect
from .errors import CompileError

# Gauss-Legendre nodes per quadrature, and terms of the binomial series of the t tail;
# 48 of each keep both truncation errors below 1e-16 (docs/distributions.md).
QUADRATURE_NODES = 48
# Gauss-Laguerre nodes for the normal tail beyond 3 (Mills' ratio); 20 reach 2e-13 relative.
LAGUERRE_NODES = 20
# Integer chi-square df up to this value use the exact finite sums; above, Wilson-Hilferty.
CHISQ_EXACT_MAX_DF = 10

FUNCTIONS = ("normal_cdf", "normal_quantile", "t_cdf", "t_quantile", "chisq_sf")


def _literal(x: float | None) -> str:
    """A float as a SQL literal that reads back as the same double (shortest repr); None is NULL."""
    if x is None:
        return "NULL"
    if not math.isfinite(x):
        raise ValueError(f"not a finite number: {x!r}")
    return repr(float(x))


def normal_quantile_literal(p: float) -> str:
    """Phi^-1(p) for a p known when compiling, as a SQL number literal (NULL unless 0 < p < 1).

    statistics.NormalDist.inv_cdf implements Wichura's (1988) Algorithm AS 241 (PPND16),
    the same method as the SQL macro, to about 1e-16 relative; the query then carries a
    number instead of the rational functions.
    """
    from statistics import NormalDist

    p = float(p)
    if not 0.0 < p < 1.0:
        return "NULL"
    return _literal(NormalDist().inv_cdf(p))


@lru_cache(maxsize=1)
def template_context() -> dict:
    """Constants the distribution macros need, to merge into a template's render context.

    ``distribution_nodes``: one row per index j = 0..N-1 with the Gauss-Legendre node
    ``s`` on [0, 1] (numpy.polynomial.legendre.leggauss, mapped from [-1, 1]), the log
    of its weight ``lw``, and the log of the binomial-series coefficient
    c_j = C(2j, j) / 4^j (``lc``), the coefficients of (1 - y^2)^(-1/2).
    ``normal_tail_nodes``: 20-point Gauss-Laguerre rule (laggauss) as the log weight
    ``lw`` and c = s^2 / 2 for each node s, for Mills' ratio of the normal tail.
    ``chisq_terms``: r = 1..CHISQ_EXACT_MAX_DF/2 with log(r!) and log(1*3*...*(2r-1)).
    """
    s, w = np.polynomial.legendre.leggauss(QUADRATURE_NODES)
    nodes = []
    for j in range(QUADRATURE_NODES):
        log_c = math.lgamma(2 * j + 1) - 2 * math.lgamma(j + 1) - 2 * j * math.log(2.0)
        nodes.append({
            "j": str(j),
            "s": _literal((s[j] + 1.0) / 2.0),
            "lw": _literal(math.log(w[j] / 2.0)),
            "lc": _literal(log_c),
        })
    terms = []
    for r in range(1, CHISQ_EXACT_MAX_DF // 2 + 1):
        log_double_factorial = sum(math.log(2 * i - 1) for i in range(1, r + 1))
        terms.append({
            "r": str(r),
            "even_k": str(2 * r + 2),  # the term r enters the even sum for k >= 2r + 2
            "odd_k": str(2 * r + 1),  # and the odd sum for k >= 2r + 1
            "log_factorial": _literal(math.lgamma(r + 1)),
            "log_double_factorial": _literal(log_double_factorial),
        })
    ls, lw = np.polynomial.laguerre.laggauss(LAGUERRE_NODES)
    tail_nodes = [{"lw": _literal(math.log(w_i)), "c": _literal(s_i * s_i / 2.0)} for s_i, w_i in zip(ls, lw)]
    return {
        "normal_quantile_literal": normal_quantile_literal,
        "distribution_nodes": nodes,
        "normal_tail_nodes": tail_nodes,
        "chisq_terms": terms,
        "chisq_exact_max_df": str(CHISQ_EXACT_MAX_DF),
    }


def _environment() -> jinja2.Environment:
    from .templating import environment

    return environment()


# What each function reads from a grid row and which columns it returns.
_INPUTS = {
    "normal_cdf": ("x",),
    "normal_quantile": ("p",),
    "t_cdf": ("t", "df"),
    "t_quantile": ("q", "df"),
    "chisq_sf": ("x", "k"),
}
_OUTPUTS = {
    "normal_cdf": ("value",),
    "normal_quantile": ("value",),
    "t_cdf": ("lower", "upper", "note"),
    "t_quantile": ("value",),
    "chisq_sf": ("value",),
}

_GRID_TEMPLATE = """\
{%- import "distributions.sql.j2" as dist with context -%}
WITH grid AS (
{%- if table is not none %}
  SELECT * FROM {{ table }}
{%- else %}
{%- for row in rows %}
  {{ "UNION ALL " if not loop.first }}SELECT {{ row.id }} AS id
{%- for name, value in row.cells %}, CAST({{ value }} AS DOUBLE) AS {{ name }}{% endfor %}
{%- endfor %}
{%- endif %}
)
{%- if function == "normal_cdf" %}
SELECT id, {{ dist.normal_cdf("x") }} AS value FROM grid
{%- elif function == "chisq_sf" %}
SELECT id, {{ dist.chisq_sf("x", k_literal if k_literal is not none else "k") }} AS value FROM grid
{%- elif function == "normal_quantile" %},
{{ dist.normal_quantile_ctes("result", "grid", "p") }}
SELECT id, result_value AS value FROM result
{%- elif function == "t_cdf" %},
{{ dist.t_cdf_ctes("result", "grid", "id", "t", "df") }}
SELECT id, result_lower AS lower, result_upper AS upper, result_note AS note FROM result
{%- elif function == "t_quantile" %},
{{ dist.t_quantile_ctes("result", "grid", "id", "q", "df") }}
SELECT id, result_value AS value FROM result
{%- endif %}
ORDER BY id
"""


def render_grid(function: str, values: Iterable[Sequence[float | None]], *, k_literal: int | None = None,
                table: str | None = None) -> str:
    """Canonical (DuckDB) SQL applying one macro to a constant grid; see ``grid_query``."""
    if function not in FUNCTIONS:
        raise ValueError(f"unknown function {function!r} (choose from: {', '.join(FUNCTIONS)})")
    names = _INPUTS[function]
    rows = []
    for i, value in enumerate(values, start=1):
        value = tuple(value) if isinstance(value, (tuple, list)) else (value,)
        if len(value) != len(names):
            raise ValueError(f"{function} takes {len(names)} input(s) per row ({', '.join(names)}), got {value!r}")
        rows.append({"id": i, "cells": [(n, _literal(v)) for n, v in zip(names, value)]})
    if not rows:
        raise ValueError("the grid is empty")
    template = _environment().from_string(_GRID_TEMPLATE)
    return template.render(rows=rows, function=function, k_literal=k_literal, table=table, **template_context())


def grid_query(function: str, dialect: str, values: Iterable[Sequence[float | None]], *,
               k_literal: int | None = None, table: str | None = None, pretty: bool = False) -> str:
    """One SELECT over a constant grid (UNION ALL of literal rows with an ``id``), in ``dialect``.

    Args:
        function: one of FUNCTIONS.
        dialect: a sqlstat dialect name.
        values: one tuple per row (None for NULL), in the order of the inputs: normal_cdf (x),
            normal_quantile (p), t_cdf (t, df), t_quantile (q, df), chisq_sf (x, k).
        k_literal: for chisq_sf, pass k as a literal integer to the macro instead of the
            grid column (the grid's k column is then ignored).
        table: read the grid from this table (columns ``id`` and the inputs, as DOUBLE)
            instead of literal rows; ``values`` then only checks the row count. Spark runs
            each branch of a UNION ALL of literal rows as a task of its own, which costs
            seconds per query.
        pretty: pretty-print the SQL.

    Returns:
        The query text; its rows are ``id`` (1-based, in input order) and the outputs:
        ``value``, or ``lower``, ``upper``, ``note`` for t_cdf.
    """
    d = get_dialect(dialect)
    canonical = render_grid(function, values, k_literal=k_literal, table=table)
    statements = [s for s in sqlglot.parse(canonical, read="duckdb") if s is not None]
    if len(statements) != 1 or not isinstance(statements[0], exp.Select):
        raise CompileError("internal error: the grid query is not exactly one SELECT")
    return finish(statements[0], d, pretty=pretty)


def inputs(function: str) -> tuple[str, ...]:
    """Grid column names (besides ``id``) that ``function`` reads, in ``values`` order."""
    return _INPUTS[function]


def outputs(function: str) -> tuple[str, ...]:
    """Column names (besides ``id``) that ``grid_query`` returns for ``function``."""
    return _OUTPUTS[function]

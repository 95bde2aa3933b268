"""Baseline rows from the pre-period query -> sample sizes, minimum detectable effects, days.

Planning assumes a two-sided test at alpha, equal allocation between each treatment arm
and control, and that the pre-period behaves like the experiment will. Sizes are units
per arm.
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import Iterable

from scipy import optimize, special

from .model import Experiment

NAN = float("nan")


def _z(q: float) -> float:
    return float(special.ndtri(q))


def power_normal(effect_size: float, n: float, alpha: float) -> float:
    """Power of the two-sided two-sample z test with n units per arm and standardised effect d.

    power = Phi(d sqrt(n/2) - z_{1-alpha/2}) + Phi(-d sqrt(n/2) - z_{1-alpha/2}).
    """
    nc = abs(effect_size) * math.sqrt(n / 2.0)
    z = _z(1 - alpha / 2)
    return float(special.ndtr(nc - z) + special.ndtr(-nc - z))


def power_t(effect_size: float, n: float, alpha: float) -> float:
    """Power of the two-sided two-sample t test (equal n, pooled df = 2n - 2).

    Uses the noncentral t distribution with noncentrality d sqrt(n/2) (scipy.stats.nct).
    """
    from scipy import stats as sps

    df = 2 * n - 2
    if df <= 0:
        return NAN
    nc = abs(effect_size) * math.sqrt(n / 2.0)
    crit = float(special.stdtrit(df, 1 - alpha / 2))
    upper = float(sps.nct.sf(crit, df, nc))
    lower = float(sps.nct.cdf(-crit, df, nc))  # the wrong-sign tail; NaN in scipy when ~0
    return (upper if math.isfinite(upper) else 1.0) + (lower if math.isfinite(lower) else 0.0)


def _solve_n(power_fn, effect_size: float, alpha: float, power: float) -> float:
    if not effect_size or not math.isfinite(effect_size):
        return NAN
    lo, hi = 2.0 + 1e-9, 2.0
    while power_fn(effect_size, hi, alpha) < power:
        hi *= 2
        if hi > 1e13:
            return math.inf
    if power_fn(effect_size, lo, alpha) >= power:
        return lo
    return float(optimize.brentq(lambda n: power_fn(effect_size, n, alpha) - power, lo, hi, xtol=1e-10, rtol=1e-12))


def sample_size_mean(delta: float, sd: float, alpha: float, power: float, *, t: bool = True) -> float:
    """Units per arm to detect a difference ``delta`` in means with standard deviation ``sd``.

    Solves the power equation exactly (t: noncentral t, as for Welch/Student with equal n;
    otherwise normal), not the rounded textbook shortcut 2 sd^2 (z_a + z_b)^2 / delta^2.
    """
    if not sd > 0:
        return NAN
    return _solve_n(power_t if t else power_normal, delta / sd, alpha, power)


def sample_size_proportion(p1: float, p2: float, alpha: float, power: float) -> float:
    """Units per arm for a two-proportion z test (pooled variance under no difference).

    n = (z_{1-alpha/2} sqrt(2 pbar qbar) + z_{power} sqrt(p1 q1 + p2 q2))^2 / (p2 - p1)^2,
    the closed form without continuity correction (Fleiss, Levin and Paik, 2003, ch. 4).
    """
    if not (0 < p1 < 1 and 0 < p2 < 1) or p1 == p2:
        return NAN
    pbar = (p1 + p2) / 2
    a = _z(1 - alpha / 2) * math.sqrt(2 * pbar * (1 - pbar))
    b = _z(power) * math.sqrt(p1 * (1 - p1) + p2 * (1 - p2))
    return (a + b) ** 2 / (p2 - p1) ** 2


def mde_mean(n: float, sd: float, alpha: float, power: float, *, t: bool = True) -> float:
    """Smallest absolute difference in means detectable with n units per arm."""
    if not (sd > 0 and n > 2):
        return NAN
    fn = power_t if t else power_normal
    hi = 1.0
    while fn(hi, n, alpha) < power:
        hi *= 2
    d = optimize.brentq(lambda d: fn(d, n, alpha) - power, 1e-12, hi, xtol=1e-14, rtol=1e-12)
    return float(d * sd)


def mde_proportion(n: float, p1: float, alpha: float, power: float) -> float:
    """Smallest increase over the baseline rate p1 detectable with n units per arm."""
    if not (0 < p1 < 1 and n > 0):
        return NAN
    upper = 1 - p1 - 1e-12
    if sample_size_proportion(p1, p1 + upper, alpha, power) > n:
        return NAN
    return float(optimize.brentq(lambda d: sample_size_proportion(p1, p1 + d, alpha, power) - n, 1e-9, upper,
                                 xtol=1e-14, rtol=1e-12))


@dataclass(frozen=True)
class PlanRow:
    """The plan for one metric."""

    metric: str
    kind: str
    baseline: float  # mean (rate, ratio) in the pre-period
    sd: float  # per-unit standard deviation (ratio: of the linearised value)
    units_seen: int
    mde: float  # absolute
    mde_relative: float
    units_per_arm: float
    total_units: float
    days: float
    method: str
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class Plan:
    experiment: str
    alpha: float
    power: float
    arms: int
    window_days: int
    daily_units: float
    rows: tuple[PlanRow, ...]


def plan(
    experiment: Experiment,
    rows: Iterable[dict],
    *,
    mde: float | None = None,
    relative: bool = False,
    units: int | None = None,
    power: float | None = None,
) -> Plan:
    """Sample size (given an effect) or minimum detectable effect (given units per arm)."""
    if (mde is None) == (units is None):
        raise ValueError("give exactly one of mde or units")
    power = experiment.power if power is None else power
    alpha = experiment.alpha
    arms = len(experiment.arms) if experiment.arms else 2
    window = experiment.pre_period.days if experiment.pre_period else 0
    by_index = {m.index: m for m in experiment.metrics}
    out = []
    units_seen = 0
    for r in rows:
        m = by_index[int(r["metric_index"])]
        units_seen = int(r["units"] or 0)
        mean = float(r["mean"]) if r.get("mean") is not None else NAN
        var = float(r["variance"]) if r.get("variance") is not None else NAN
        notes: list[str] = []
        if m.kind == "ratio":
            xm, xv, cov = (float(r[k]) if r.get(k) is not None else NAN for k in ("x_mean", "x_variance", "xy_covariance"))
            baseline = mean / xm if xm else NAN
            # Per-unit variance of the linearised ratio (y - R x) / mean(x): the delta method.
            lin = (var - 2 * baseline * cov + baseline**2 * xv) / xm**2 if xm else NAN
            sd = math.sqrt(lin) if lin > 0 else NAN
            method = "delta-method z (normal power)"
        else:
            baseline = mean
            sd = math.sqrt(var) if var > 0 else NAN
            method = "two-proportion z (closed form)" if m.kind == "proportion" else "t test (noncentral t power)"
        if m.covariate is not None:
            notes.append("CUPED will lower the units needed by about its variance reduction; this plan ignores it")
        if mde is not None:
            delta = mde * abs(baseline) if relative else mde
            if m.kind == "proportion":
                n = sample_size_proportion(baseline, baseline + delta, alpha, power)
            else:
                n = sample_size_mean(delta, sd, alpha, power, t=(m.kind == "mean"))
        else:
            n = float(units)
            if m.kind == "proportion":
                delta = mde_proportion(n, baseline, alpha, power)
            else:
                delta = mde_mean(n, sd, alpha, power, t=(m.kind == "mean"))
        total = n * arms if math.isfinite(n) else NAN
        daily = units_seen / window if window else NAN
        days = total / daily if daily and math.isfinite(total) else NAN
        out.append(PlanRow(m.name, m.kind, baseline, sd, units_seen, delta,
                           delta / abs(baseline) if baseline else NAN, n, total, days, method, tuple(notes)))
    return Plan(experiment.name, alpha, power, arms, window, units_seen / window if window else NAN, tuple(out))

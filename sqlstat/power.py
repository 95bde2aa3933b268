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


def power_normal(effect_size: float, n: float, alpha: float, ratio: float = 1.0) -> float:
    """Power of the two-sided two-sample z test with n control units, ratio * n treatment units.

    power = Phi(d sqrt(n r/(1 + r)) - z_{1-alpha/2}) + Phi(-d sqrt(n r/(1 + r)) - z_{1-alpha/2});
    r = 1 is the equal split, d sqrt(n/2).
    """
    nc = abs(effect_size) * math.sqrt(n * ratio / (1.0 + ratio))
    z = _z(1 - alpha / 2)
    return float(special.ndtr(nc - z) + special.ndtr(-nc - z))


def power_t(effect_size: float, n: float, alpha: float, ratio: float = 1.0) -> float:
    """Power of the two-sided two-sample t test, n and ratio * n units (pooled df = n(1 + r) - 2).

    Uses the noncentral t distribution with noncentrality d sqrt(n r/(1 + r)) (scipy.stats.nct).
    """
    from scipy import stats as sps

    df = n * (1.0 + ratio) - 2
    if df <= 0:
        return NAN
    nc = abs(effect_size) * math.sqrt(n * ratio / (1.0 + ratio))
    crit = float(special.stdtrit(df, 1 - alpha / 2))
    upper = float(sps.nct.sf(crit, df, nc))
    lower = float(sps.nct.cdf(-crit, df, nc))  # the wrong-sign tail; NaN in scipy when ~0
    return (upper if math.isfinite(upper) else 1.0) + (lower if math.isfinite(lower) else 0.0)


def _solve_n(power_fn, effect_size: float, alpha: float, power: float, ratio: float = 1.0) -> float:
    if not effect_size or not math.isfinite(effect_size):
        return NAN
    lo = 4.0 / (1.0 + ratio) + 1e-9  # df = 2 at the smallest size tried
    hi = max(lo, 2.0)
    while power_fn(effect_size, hi, alpha, ratio) < power:
        hi *= 2
        if hi > 1e13:
            return math.inf
    if power_fn(effect_size, lo, alpha, ratio) >= power:
        return lo
    return float(optimize.brentq(lambda n: power_fn(effect_size, n, alpha, ratio) - power, lo, hi,
                                 xtol=1e-10, rtol=1e-12))


def sample_size_mean(delta: float, sd: float, alpha: float, power: float, *, t: bool = True,
                     ratio: float = 1.0) -> float:
    """Control units to detect a difference ``delta`` in means with standard deviation ``sd``,
    with ``ratio`` treatment units per control unit (1: the equal split, units per arm).

    Solves the power equation exactly (t: noncentral t, as for Student's t with these
    sizes; otherwise normal), not the rounded textbook shortcut 2 sd^2 (z_a + z_b)^2 / delta^2.
    """
    if not sd > 0:
        return NAN
    return _solve_n(power_t if t else power_normal, delta / sd, alpha, power, ratio)


def sample_size_proportion(p1: float, p2: float, alpha: float, power: float, ratio: float = 1.0) -> float:
    """Control units for a two-proportion z test (pooled variance under no difference), with
    ``ratio`` treatment units per control unit; p1 is the control rate.

    n = (z_{1-alpha/2} sqrt(pbar qbar (1 + 1/r)) + z_{power} sqrt(p1 q1 + p2 q2 / r))^2 / (p2 - p1)^2,
    pbar = (p1 + r p2)/(1 + r): the closed form without continuity correction for unequal
    groups (Fleiss, Levin and Paik, 2003, ch. 4); r = 1 gives the familiar equal-split form.
    """
    if not (0 < p1 < 1 and 0 < p2 < 1) or p1 == p2:
        return NAN
    pbar = (p1 + ratio * p2) / (1 + ratio)
    a = _z(1 - alpha / 2) * math.sqrt(pbar * (1 - pbar) * (1 + 1 / ratio))
    b = _z(power) * math.sqrt(p1 * (1 - p1) + p2 * (1 - p2) / ratio)
    return (a + b) ** 2 / (p2 - p1) ** 2


def mde_mean(n: float, sd: float, alpha: float, power: float, *, t: bool = True, ratio: float = 1.0) -> float:
    """Smallest absolute difference in means detectable with n control and ratio * n treatment units."""
    if not (sd > 0 and n * (1 + ratio) > 2):
        return NAN
    fn = power_t if t else power_normal
    hi = 1.0
    while fn(hi, n, alpha, ratio) < power:
        hi *= 2
    d = optimize.brentq(lambda d: fn(d, n, alpha, ratio) - power, 1e-12, hi, xtol=1e-14, rtol=1e-12)
    return float(d * sd)


def mde_proportion(n: float, p1: float, alpha: float, power: float, ratio: float = 1.0) -> float:
    """Smallest increase over the baseline rate p1 detectable with n control and ratio * n treatment units."""
    if not (0 < p1 < 1 and n > 0):
        return NAN
    upper = 1 - p1 - 1e-12
    if sample_size_proportion(p1, p1 + upper, alpha, power, ratio) > n:
        return NAN
    return float(optimize.brentq(lambda d: sample_size_proportion(p1, p1 + d, alpha, power, ratio) - n, 1e-9,
                                 upper, xtol=1e-14, rtol=1e-12))


@dataclass(frozen=True)
class PlanRow:
    """The plan for one metric."""

    metric: str
    kind: str
    baseline: float  # mean (rate, ratio) over the planning population
    sd: float  # per-unit standard deviation (ratio: of the linearised value)
    units_seen: int  # units of the population with pre-period rows
    mde: float  # absolute (with weights: the largest over the comparisons)
    mde_relative: float
    units_per_arm: float  # the smallest arm's units (equal split: every arm's)
    total_units: float
    days: float
    method: str
    notes: tuple[str, ...] = ()
    units_by_arm: tuple[tuple[str, float], ...] = ()  # per-arm sizes, following the weights
    population: int = 0  # units the experiment would count (the [assignment] relation)
    share_without_rows: float = NAN  # share of the population with no pre-period rows


@dataclass(frozen=True)
class Plan:
    experiment: str
    alpha: float
    power: float
    arms: int
    window_days: int
    daily_units: float
    rows: tuple[PlanRow, ...]
    weights: tuple[tuple[str, float], ...] = ()  # planned share per arm (sums to 1)
    population: int = 0


def _arm_shares(experiment: Experiment) -> list[tuple[str, float]]:
    """(arm, planned share) with control first; equal split unless ``weights`` says otherwise."""
    if experiment.weights:
        arms = [experiment.control] + [a for a in experiment.weights if a != experiment.control]
        total = sum(experiment.weights.values())
        return [(a, experiment.weights[a] / total) for a in arms]
    if experiment.arms:
        arms = [experiment.control] + [a for a in experiment.arms if a != experiment.control]
    else:
        arms = [experiment.control, "treatment"]
    return [(a, 1.0 / len(arms)) for a in arms]


def plan(
    experiment: Experiment,
    rows: Iterable[dict],
    *,
    mde: float | None = None,
    relative: bool = False,
    units: int | None = None,
    power: float | None = None,
) -> Plan:
    """Sample size (given an effect) or minimum detectable effect (given the smallest arm's units).

    Every treatment arm is compared with control at the spec's alpha and the given power.
    Arms follow ``weights``: with control share s_c and arm share s_k, the comparison has
    r = s_k / s_c treatment units per control unit; each comparison's control size is
    solved with its r, and the largest sets the total, n_c / s_c (the smallest comparison
    arm needs the most). The baseline comes from the population the experiment will count,
    units without pre-period rows included under the metric's ``missing`` rule; a
    degenerate baseline (a rate of 0 or 1, no variation, no units) is refused.
    """
    from .errors import DataProblem

    if (mde is None) == (units is None):
        raise ValueError("give exactly one of mde or units")
    power = experiment.power if power is None else power
    alpha = experiment.alpha
    shares = _arm_shares(experiment)
    control_share = shares[0][1]
    ratios = [s / control_share for _, s in shares[1:]]
    window = experiment.pre_period.days if experiment.pre_period else 0
    by_index = {m.index: m for m in experiment.metrics}
    out = []
    problems: list[str] = []
    units_seen = population = 0
    for r in rows:
        m = by_index[int(r["metric_index"])]
        units_seen = int(r["units"] or 0)
        population = int(r.get("population") or 0)
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
        if population == 0:
            problems.append(f"{m.name}: the planning population is empty (no units in the [assignment] source)")
        elif m.kind == "proportion" and not 0 < baseline < 1:
            problems.append(f"{m.name}: the baseline rate is {_show(baseline)} over {population:,} units, so no "
                            f"change can be sized; check the metric's definition and the pre-period window")
        elif not math.isfinite(sd):
            problems.append(f"{m.name}: the per-unit value does not vary over the {population:,} units of the "
                            f"population (or cannot be computed), so no change can be sized")
        if m.covariate is not None:
            notes.append("CUPED will lower the units needed by about its variance reduction; this plan ignores it")
        fn_n = (lambda delta, r_: sample_size_proportion(baseline, baseline + delta, alpha, power, r_)) \
            if m.kind == "proportion" else \
            (lambda delta, r_: sample_size_mean(delta, sd, alpha, power, t=(m.kind == "mean"), ratio=r_))
        if mde is not None:
            delta = mde * abs(baseline) if relative else mde
            n_control = max((fn_n(delta, q) for q in ratios), default=NAN, key=lambda v: v if math.isfinite(v) else math.inf)
            total = n_control / control_share if math.isfinite(n_control) else NAN
        else:
            smallest = min(s for _, s in shares)
            total = float(units) / smallest
            n_control = total * control_share
            deltas = [mde_proportion(n_control, baseline, alpha, power, q) if m.kind == "proportion"
                      else mde_mean(n_control, sd, alpha, power, t=(m.kind == "mean"), ratio=q) for q in ratios]
            delta = max(deltas, key=lambda v: v if math.isfinite(v) else math.inf) if deltas else NAN
        by_arm = tuple((a, total * s) for a, s in shares) if math.isfinite(total) else tuple((a, NAN) for a, s in shares)
        smallest_arm = min(n for _, n in by_arm) if by_arm else NAN
        daily = units_seen / window if window else NAN
        days = total / daily if daily and math.isfinite(total) else NAN
        without = 1 - units_seen / population if population else NAN
        out.append(PlanRow(m.name, m.kind, baseline, sd, units_seen, delta,
                           delta / abs(baseline) if baseline else NAN, smallest_arm, total, days, method, tuple(notes),
                           by_arm, population, without))
    if problems:
        raise DataProblem("cannot plan: " + "; ".join(problems))
    return Plan(experiment.name, alpha, power, len(shares), window, units_seen / window if window else NAN,
                tuple(out), tuple(shares), population)


def _show(x: float) -> str:
    return f"{x:g}" if math.isfinite(x) else "undefined"

"""Age replacement: cost rate, downtime, event rates and the best replacement age.

Policy: replace a position at failure, or preventively when it reaches T
operating hours without failing; either way it is restored to new. A cycle
ends at min(life, T) plus the stop that follows. By the renewal-reward theorem
(Barlow & Proschan, *Mathematical Theory of Reliability*, 1965, from memory)
the long-run cost per hour is

              c_p·R(T) + c_f·F(T) + c_d·[d_p·R(T) + d_f·F(T)]
    C(T) = ------------------------------------------------------
                  ∫₀ᵀ R(t) dt + d_p·R(T) + d_f·F(T)

with R = 1 − F the reliability, c_p/c_f the planned/failure replacement costs,
d_p/d_f the planned/failure stop durations (hours) and c_d the cost of a stop
hour. Without stops this is the classical C(T) = [c_p R(T) + c_f F(T)] / ∫₀ᵀ R.
As T → ∞ it tends to the run-to-failure rate (c_f + c_d·d_f) / (μ + d_f).

A finite optimum T* exists only if the hazard rises (Weibull shape b > 1) and
a failure costs clearly more than a planned replacement; otherwise
:func:`optimal_age_replacement` says so in plain words and returns no interval.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np

from fleetsim.errors import InputError
from fleetsim.plan.costs import (
    MIN_SAVING_FRACTION,
    ReplacementCosts,
    ReplacementOptimum,
    check_optimisable,
    decide,
    refine_grid_minimum,
    run_to_failure_cost_rate,
)
from fleetsim.plan.lifelike import (
    as_life,
    integrated_reliability,
    is_weibull_with_non_rising_hazard,
    tail_time_h,
)

#: Far-tail probability bounding the search for T*.
SEARCH_TAIL = 1e-9
GRID_POINTS = 2001


@dataclass(frozen=True)
class ReplacementRates:
    """Long-run event rates per hour of cycle time for one position.

    Attributes
    ----------
    failures_per_h
        Failure replacements per hour.
    planned_per_h
        Planned replacements per hour.
    downtime_fraction
        Share of time the machine is stopped for this position's replacements.
    """

    failures_per_h: float
    planned_per_h: float
    downtime_fraction: float

    @property
    def replacements_per_h(self) -> float:
        """All replacements per hour: the spares demand of the position."""
        return self.failures_per_h + self.planned_per_h


def _intervals(interval_h: Any) -> np.ndarray:
    t = np.asarray(interval_h, dtype=float)
    if np.any(~(t > 0)) or not np.all(np.isfinite(t)):
        raise InputError("interval_h", "expected finite replacement ages > 0 h")
    return t


def _cycle(dist: Any, t: np.ndarray, costs: ReplacementCosts) -> tuple[Any, Any, Any]:
    """(R(T), F(T), expected cycle length in hours)."""
    r = np.asarray(dist.sf(t), dtype=float)
    f = np.asarray(dist.cdf(t), dtype=float)
    length = (
        np.asarray(integrated_reliability(dist, t), dtype=float)
        + costs.planned_stop_h * r
        + costs.failure_stop_h * f
    )
    return r, f, length


def _out(x: np.ndarray) -> Any:
    return float(x) if np.ndim(x) == 0 else x


def age_replacement_cost_rate(dist: Any, interval_h: Any, costs: ReplacementCosts) -> Any:
    """Long-run cost per hour C(T) of age replacement at ``interval_h`` operating hours.

    Parameters
    ----------
    dist
        Life distribution in operating hours.
    interval_h
        Replacement age(s) T in hours (> 0).
    costs
        Replacement costs and stop durations.

    Returns
    -------
    float or numpy.ndarray
        Cost per hour (currency/h), shaped like ``interval_h``.
    """
    dist = as_life(dist)
    t = _intervals(interval_h)
    r, f, length = _cycle(dist, t, costs)
    return _out((costs.planned_total * r + costs.failure_total * f) / length)


def age_replacement_rates(
    dist: Any, interval_h: float, costs: ReplacementCosts | None = None
) -> ReplacementRates:
    """Failure and planned replacement rates per hour under age replacement at T.

    Failures per hour F(T)/L(T), planned R(T)/L(T), stopped share
    [d_p R(T) + d_f F(T)]/L(T), with L(T) the mean cycle length in hours.
    """
    dist = as_life(dist)
    costs = costs if costs is not None else ReplacementCosts(0.0, 0.0)
    t = _intervals(interval_h)
    if t.ndim != 0:
        raise InputError("interval_h", "expected one replacement age")
    r, f, length = _cycle(dist, t, costs)
    down = (costs.planned_stop_h * r + costs.failure_stop_h * f) / length
    return ReplacementRates(float(f / length), float(r / length), float(down))


def optimal_age_replacement(
    dist: Any,
    costs: ReplacementCosts,
    *,
    min_saving_fraction: float = MIN_SAVING_FRACTION,
) -> ReplacementOptimum:
    """Best age-replacement interval T*, or a plain "run to failure" with the reason.

    Searches C(T) on a grid from the life at F = 1e-9 to the life at
    F = 1 − 1e-9 (uniform in hours and in probability), then refines the best
    grid point with a bounded scalar minimiser.

    Parameters
    ----------
    dist
        Life distribution in operating hours.
    costs
        Replacement costs and stop durations; the planned replacement must cost
        something (money or stop time).
    min_saving_fraction
        Smallest saving, as a share of the run-to-failure cost rate, reported
        as an optimum (default 0.1 %). A smaller "optimum" sits far in the tail
        and is not worth acting on.

    Returns
    -------
    ReplacementOptimum
        ``has_optimum`` False and ``interval_h`` None when no finite interval pays.
    """
    dist = as_life(dist)
    check_optimisable(costs, min_saving_fraction)
    rtf = run_to_failure_cost_rate(dist, costs)
    hi = tail_time_h(dist, SEARCH_TAIL)
    if hasattr(dist, "ppf"):
        lo = float(dist.ppf(SEARCH_TAIL))
        probs = np.linspace(SEARCH_TAIL, 1.0 - SEARCH_TAIL, GRID_POINTS)
        extra = np.asarray(dist.ppf(probs), dtype=float)
    else:
        lo = 1e-6 * hi
        extra = np.empty(0)
    lo = max(lo, 1e-9 * hi)
    grid = np.unique(np.concatenate((np.linspace(lo, hi, GRID_POINTS), extra)))
    grid = grid[(grid >= lo) & (grid <= hi)]
    rates = np.asarray(age_replacement_cost_rate(dist, grid, costs))
    best_t, best_c, at_upper_end = refine_grid_minimum(
        grid, rates, lambda x: float(age_replacement_cost_rate(dist, x, costs)), 1e-9 * hi
    )
    return decide(
        policy="age",
        best_interval_h=best_t,
        best_rate=best_c,
        rtf_rate=rtf,
        at_upper_end=at_upper_end,
        costs=costs,
        min_saving_fraction=min_saving_fraction,
        non_rising_hazard=is_weibull_with_non_rising_hazard(dist),
    )

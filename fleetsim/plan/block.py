"""Block replacement: cost rate, event rates and the best block interval.

Policy: replace a position at every failure and, regardless of its age, at
every multiple of T operating hours (all positions of a kind together). The
number of failures in a block is the renewal count, with mean M(T). Counting
the stops, a block lasts T + d_p + d_f·M(T) hours, so by the renewal-reward
theorem (Barlow & Proschan, *Mathematical Theory of Reliability*, 1965, from
memory)

              c_p + c_f·M(T) + c_d·[d_p + d_f·M(T)]
    C(T) = -------------------------------------------
                    T + d_p + d_f·M(T)

which is the classical [c_p + c_f M(T)] / T without stops. As T → ∞,
M(T)/T → 1/μ and C(T) tends to the run-to-failure rate (c_f + c_d d_f)/(μ + d_f).

M(T) comes from :func:`fleetsim.plan.renewal.renewal_grid` (Xie's mid-point scheme).
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import interpolate

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
from fleetsim.plan.lifelike import as_life, is_weibull_with_non_rising_hazard, mean_h
from fleetsim.plan.renewal import renewal_function, renewal_grid

#: The search for T* runs up to this many mean lives; beyond a few means M(T)
#: follows its straight-line asymptote and C(T) is monotone.
SEARCH_MEANS = 10.0
SEARCH_STEPS = 4000


@dataclass(frozen=True)
class BlockRates:
    """Long-run event rates per hour under block replacement for one position.

    Attributes
    ----------
    failures_per_h
        Failure replacements per hour, M(T)/L.
    planned_per_h
        Block (planned) replacements per hour, 1/L.
    downtime_fraction
        Share of time stopped for this position, [d_p + d_f M(T)]/L.
    """

    failures_per_h: float
    planned_per_h: float
    downtime_fraction: float

    @property
    def replacements_per_h(self) -> float:
        """All replacements per hour: the spares demand of the position."""
        return self.failures_per_h + self.planned_per_h


def _cost_rate(m: Any, t: Any, costs: ReplacementCosts) -> Any:
    length = t + costs.planned_stop_h + costs.failure_stop_h * m
    return (costs.planned_total + costs.failure_total * m) / length


def _intervals(interval_h: Any) -> np.ndarray:
    t = np.asarray(interval_h, dtype=float)
    if np.any(~(t > 0)) or not np.all(np.isfinite(t)):
        raise InputError("interval_h", "expected finite block intervals > 0 h")
    return t


def block_replacement_cost_rate(
    dist: Any, interval_h: Any, costs: ReplacementCosts, *, steps: int | None = None
) -> Any:
    """Long-run cost per hour C(T) of block replacement every ``interval_h`` operating hours.

    Parameters
    ----------
    dist
        Life distribution in operating hours.
    interval_h
        Block interval(s) T in hours (> 0).
    costs
        Replacement costs and stop durations.
    steps
        Grid steps of the renewal-function solver (see :func:`renewal_function`).

    Returns
    -------
    float or numpy.ndarray
        Cost per hour, shaped like ``interval_h``.
    """
    t = _intervals(interval_h)
    m = np.asarray(renewal_function(as_life(dist), t, steps=steps))
    out = _cost_rate(m, t, costs)
    return float(out) if np.ndim(out) == 0 else out


def block_replacement_rates(
    dist: Any, interval_h: float, costs: ReplacementCosts | None = None
) -> BlockRates:
    """Failure and planned replacement rates per hour under block replacement at T."""
    costs = costs if costs is not None else ReplacementCosts(0.0, 0.0)
    t = float(_intervals(interval_h))
    m = float(renewal_function(as_life(dist), t))
    length = t + costs.planned_stop_h + costs.failure_stop_h * m
    down = (costs.planned_stop_h + costs.failure_stop_h * m) / length
    return BlockRates(failures_per_h=m / length, planned_per_h=1.0 / length, downtime_fraction=down)


def optimal_block_replacement(
    dist: Any,
    costs: ReplacementCosts,
    *,
    min_saving_fraction: float = MIN_SAVING_FRACTION,
) -> ReplacementOptimum:
    """Best block interval T*, or a plain "run to failure" with the reason.

    Solves M on a grid up to ten mean lives, evaluates C(T) there, and refines
    the best grid point on a cubic spline of M with a bounded minimiser.

    Parameters
    ----------
    dist
        Life distribution in operating hours.
    costs
        Replacement costs and stop durations (the planned replacement must cost something).
    min_saving_fraction
        Smallest saving, as a share of the run-to-failure cost rate, reported
        as an optimum (default 0.1 %).

    Returns
    -------
    ReplacementOptimum
        ``policy == "block"``; ``interval_h`` None when no finite interval pays.
    """
    dist = as_life(dist)
    check_optimisable(costs, min_saving_fraction)
    rtf = run_to_failure_cost_rate(dist, costs)
    t_max = SEARCH_MEANS * mean_h(dist)
    grid, m = renewal_grid(dist, t_max, SEARCH_STEPS)
    grid, m = grid[1:], m[1:]
    rates = _cost_rate(m, grid, costs)
    spline = interpolate.CubicSpline(grid, m)
    best_t, best_c, at_upper_end = refine_grid_minimum(
        grid, rates, lambda x: float(_cost_rate(spline(x), x, costs)), 1e-9 * t_max
    )
    return decide(
        policy="block",
        best_interval_h=best_t,
        best_rate=best_c,
        rtf_rate=rtf,
        at_upper_end=at_upper_end,
        costs=costs,
        min_saving_fraction=min_saving_fraction,
        non_rising_hazard=is_weibull_with_non_rising_hazard(dist),
    )

"""Cost inputs and the optimum result shared by the replacement policies.

A planned replacement costs ``planned_replacement`` and stops the machine for
``planned_stop_h`` hours; a failure costs ``failure`` (parts, secondary
damage, call-out) and stops it for ``failure_stop_h`` hours; each stop hour
costs ``downtime_per_h``. The effective costs per event are then

    A = c_p + c_d·d_p   (planned),     B = c_f + c_d·d_f   (failure),

and the run-to-failure cost rate is B / (μ + d_f) per hour of cycle time
(operating hours plus stop hours), by the renewal-reward theorem (Barlow &
Proschan, *Mathematical Theory of Reliability*, 1965, from memory): the long-run
cost rate is E[cost per cycle] / E[length of cycle].
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

import numpy as np
from scipy import optimize

from fleetsim.errors import InputError
from fleetsim.plan.lifelike import as_life, mean_h

#: Default smallest saving (share of the run-to-failure cost rate) worth calling an optimum.
MIN_SAVING_FRACTION = 1e-3


def _nonneg(value: float, where: str) -> float:
    v = float(value)
    if not (v >= 0.0 and math.isfinite(v)):
        raise InputError(where, f"expected a finite value >= 0, got {value}")
    return v


@dataclass(frozen=True)
class ReplacementCosts:
    """Costs and stop durations of planned and unplanned replacement.

    Attributes
    ----------
    planned_replacement
        Cost of a planned replacement c_p (currency), excluding downtime.
    failure
        Cost of a failure replacement c_f (currency), excluding downtime.
    planned_stop_h
        Machine stop per planned replacement d_p (hours).
    failure_stop_h
        Machine stop per failure d_f (hours).
    downtime_per_h
        Cost of one hour of machine stop c_d (currency per hour).
    """

    planned_replacement: float
    failure: float
    planned_stop_h: float = 0.0
    failure_stop_h: float = 0.0
    downtime_per_h: float = 0.0

    def __post_init__(self) -> None:
        _nonneg(self.planned_replacement, "costs.planned_replacement")
        _nonneg(self.failure, "costs.failure")
        _nonneg(self.planned_stop_h, "costs.planned_stop_h")
        _nonneg(self.failure_stop_h, "costs.failure_stop_h")
        _nonneg(self.downtime_per_h, "costs.downtime_per_h")

    @property
    def planned_total(self) -> float:
        """A = c_p + c_d·d_p: full cost of one planned replacement."""
        return self.planned_replacement + self.downtime_per_h * self.planned_stop_h

    @property
    def failure_total(self) -> float:
        """B = c_f + c_d·d_f: full cost of one failure."""
        return self.failure + self.downtime_per_h * self.failure_stop_h


@dataclass(frozen=True)
class ReplacementOptimum:
    """Best interval of a replacement policy, or a plain statement that none pays.

    Attributes
    ----------
    policy
        ``"age"`` or ``"block"``.
    has_optimum
        True when replacing at a finite interval beats run-to-failure by at
        least the threshold asked for.
    interval_h
        Best interval T* in operating hours, or None when there is no finite optimum.
    cost_rate_per_h
        Cost per hour of the recommended policy (C(T*), or the run-to-failure
        rate when there is no optimum).
    run_to_failure_cost_rate_per_h
        (c_f + c_d·d_f) / (μ + d_f).
    saving_per_h
        Run-to-failure cost rate minus ``cost_rate_per_h`` (0 without an optimum).
    saving_fraction
        ``saving_per_h`` as a share of the run-to-failure cost rate.
    reason
        One or two sentences in plain words: what to do and why.
    """

    policy: str
    has_optimum: bool
    interval_h: float | None
    cost_rate_per_h: float
    run_to_failure_cost_rate_per_h: float
    saving_per_h: float
    saving_fraction: float
    reason: str


def run_to_failure_cost_rate(dist: Any, costs: ReplacementCosts) -> float:
    """Long-run cost per hour of run-to-failure: (c_f + c_d·d_f) / (μ + d_f)."""
    mu = mean_h(as_life(dist))
    return costs.failure_total / (mu + costs.failure_stop_h)


def check_optimisable(costs: ReplacementCosts, min_saving_fraction: float) -> None:
    """Raise :class:`InputError` when an optimum would be degenerate."""
    if costs.planned_total <= 0.0:
        raise InputError(
            "costs.planned_replacement",
            "expected a planned replacement that costs something (money or stop time); "
            "with a free planned replacement the best interval is zero",
        )
    if not (0.0 <= min_saving_fraction < 1.0):
        raise InputError(
            "min_saving_fraction", f"expected a share in [0, 1), got {min_saving_fraction}"
        )


def decide(
    *,
    policy: str,
    best_interval_h: float,
    best_rate: float,
    rtf_rate: float,
    at_upper_end: bool,
    costs: ReplacementCosts,
    min_saving_fraction: float,
    non_rising_hazard: bool,
) -> ReplacementOptimum:
    """Turn the best grid/refined point into an optimum or a plain "no optimum"."""
    saving = rtf_rate - best_rate
    fraction = saving / rtf_rate if rtf_rate > 0 else 0.0
    if not at_upper_end and fraction >= min_saving_fraction and saving > 0:
        return ReplacementOptimum(
            policy=policy,
            has_optimum=True,
            interval_h=float(best_interval_h),
            cost_rate_per_h=float(best_rate),
            run_to_failure_cost_rate_per_h=float(rtf_rate),
            saving_per_h=float(saving),
            saving_fraction=float(fraction),
            reason=(
                f"Replace at {best_interval_h:,.0f} operating hours: it saves "
                f"{100 * fraction:.1f} % of the run-to-failure cost rate."
            ),
        )
    if non_rising_hazard:
        why = (
            "the hazard rate does not rise with age (Weibull shape b <= 1), so replacing "
            "a working bearing early does not make failures less likely"
        )
    elif costs.failure_total <= costs.planned_total:
        why = (
            "a failure costs no more than a planned replacement (including stop time), "
            "so planned replacement cannot pay"
        )
    elif at_upper_end or saving <= 0:
        why = (
            "the cost rate keeps falling towards the run-to-failure rate as the interval "
            "grows, so no finite interval is better (a failure costs "
            f"{costs.failure_total / costs.planned_total:.3g} times a planned replacement, "
            "stop time included)"
        )
    else:
        why = (
            f"the best interval (about {best_interval_h:,.0f} h) would save only "
            f"{100 * max(fraction, 0.0):.3f} % of the run-to-failure cost rate, less than "
            f"the {100 * min_saving_fraction:.3g} % asked for; a failure costs too little "
            "more than a planned replacement"
        )
    return ReplacementOptimum(
        policy=policy,
        has_optimum=False,
        interval_h=None,
        cost_rate_per_h=float(rtf_rate),
        run_to_failure_cost_rate_per_h=float(rtf_rate),
        saving_per_h=0.0,
        saving_fraction=0.0,
        reason=f"No finite {policy}-replacement interval pays: run to failure. Reason: {why}.",
    )


def refine_grid_minimum(
    grid: Any, rates: Any, rate_of: Callable[[float], float], xatol_h: float
) -> tuple[float, float, bool]:
    """The least rate on a grid, refined between its neighbours by a bounded search.

    Returns ``(interval_h, rate, at_upper_end)``; at the upper end of the grid
    (no interior minimum) the grid point is returned unrefined.
    """
    k = int(np.argmin(rates))
    at_upper_end = k == len(grid) - 1
    best_t, best_c = float(grid[k]), float(rates[k])
    if not at_upper_end:
        a, b = float(grid[max(k - 1, 0)]), float(grid[k + 1])
        res = optimize.minimize_scalar(
            rate_of, bounds=(a, b), method="bounded", options={"xatol": xatol_h}
        )
        if res.success and float(res.fun) < best_c:
            best_t, best_c = float(res.x), float(res.fun)
    return best_t, best_c, at_upper_end

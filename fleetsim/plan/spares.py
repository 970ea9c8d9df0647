"""Spare-bearing stock levels: base stock by Palm's theorem, and (s, S) reorder levels.

Base stock (one-for-one, "(S − 1, S)"). Each demand for a spare (a failure or
a planned replacement) triggers an order for one, which arrives after a
resupply lead time L. With Poisson demand at rate λ per hour and independent
lead times of mean L, Palm's theorem says the number X of units in resupply
is Poisson with mean λL, whatever the lead-time distribution (Palm 1938; used
for spares by Feeney & Sherbrooke, 1966, "The (s − 1, s) inventory policy under
compound Poisson demand", *Management Science* 12(5), from memory). With base
stock s, the stock on hand is (s − X)⁺ and the backorders (X − s)⁺, so

    fill rate   = P(X <= s − 1)         share of demands met from stock at once
    ready rate  = P(X <= s)             share of time with no demand waiting
    EBO(s)      = E[(X − s)⁺] = λL − s + E[(s − X)⁺]
    on hand     = E[(s − X)⁺]
    mean wait   = EBO(s) / λ            hours per demand, by Little's law.

Reorder point / order-up-to (s, S). Order S − s = Q units when the inventory
position (on hand + on order − backorders) falls to s. With unit Poisson
demand and a fixed lead time the inventory position is uniform on
{s + 1, ..., S} and independent of the lead-time demand (Hadley & Whitin,
*Analysis of Inventory Systems*, 1963; Zipkin, *Foundations of Inventory
Management*, 2000, from memory), so the fill rate is the average of the
base-stock fill rates over those levels:

    fill(s, S) = (1/Q)·Σ_{y = s+1}^{S} P(X <= y − 1).

This is exact for the model. The approximation in :func:`reorder_levels_for_fill_rate`
is the usual sequential choice: the batch Q is fixed first (given, or the
economic order quantity √(2·K·λ / h) from the order cost K and holding cost h
per unit-hour), then the smallest s meeting the fill rate is found for that Q;
Q and s are not optimised jointly.

Demand from planned replacements is more regular than Poisson; treating the
sum of failure and planned rates as Poisson overstates its variability and so
errs towards more stock (common practice).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import stats

from fleetsim.errors import InputError

#: Largest stock level searched for a fill-rate target, beyond the mean pipeline.
_MAX_EXTRA_SD = 40.0


def _check_rate(demand_per_h: float, lead_time_h: float) -> float:
    if not (demand_per_h >= 0 and math.isfinite(demand_per_h)):
        raise InputError(
            "demand_per_h", f"expected a demand rate >= 0 per hour, got {demand_per_h}"
        )
    if not (lead_time_h >= 0 and math.isfinite(lead_time_h)):
        raise InputError("lead_time_h", f"expected a lead time >= 0 h, got {lead_time_h}")
    return float(demand_per_h) * float(lead_time_h)


def poisson_pmf(mean: float, upto: int) -> np.ndarray:
    """P(X = x) for x = 0..upto, X ~ Poisson(mean), computed in log space."""
    x = np.arange(upto + 1, dtype=float)
    if mean == 0.0:
        out = np.zeros(upto + 1)
        out[0] = 1.0
        return out
    log_fact = np.array([math.lgamma(v + 1.0) for v in x])
    return np.exp(x * math.log(mean) - mean - log_fact)


def poisson_cdf(mean: float, upto: int) -> np.ndarray:
    """P(X <= x) for x = 0..upto, X ~ Poisson(mean); empty for upto < 0."""
    if upto < 0:
        return np.zeros(0)
    return np.minimum(np.cumsum(poisson_pmf(mean, upto)), 1.0)


@dataclass(frozen=True)
class BaseStockResult:
    """Performance of a base stock s under Palm's theorem.

    Attributes
    ----------
    base_stock
        s, spares held (on hand plus on order).
    demand_per_h
        λ, spares demanded per hour.
    lead_time_h
        Mean resupply lead time L in hours.
    pipeline_mean
        λL, mean number of units in resupply.
    fill_rate
        Share of demands met from stock at once, P(X <= s − 1).
    ready_rate
        Share of time with no demand waiting, P(X <= s).
    expected_backorders
        EBO(s), mean number of demands waiting for a spare.
    expected_on_hand
        Mean spares on the shelf.
    mean_wait_h
        Mean wait for a spare per demand, EBO/λ (0 without demand).
    """

    base_stock: int
    demand_per_h: float
    lead_time_h: float
    pipeline_mean: float
    fill_rate: float
    ready_rate: float
    expected_backorders: float
    expected_on_hand: float
    mean_wait_h: float


def _stock_levels(mean: float, upto: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """For y = 0..upto: P(X <= y − 1), E[(y − X)⁺] and EBO(y) (Palm)."""
    cdf = poisson_cdf(mean, upto)
    fill = np.concatenate(([0.0], cdf[:-1]))
    # E[(y - X)+] = sum_{x<y} P(X <= x) = cumulative sum of the cdf
    on_hand = np.concatenate(([0.0], np.cumsum(cdf)[:-1]))
    # EBO(y) = E[(X - y)+] = mean·P(X >= y) - y·P(X > y), from the tails: the form
    # mean - y + E[(y - X)+] loses everything to cancellation once EBO is tiny. It is
    # non-increasing in y by definition; the running minimum keeps it so in floating point.
    y = np.arange(upto + 1)
    ebo = np.maximum(mean * stats.poisson.sf(y - 1, mean) - y * stats.poisson.sf(y, mean), 0.0)
    ebo = np.minimum.accumulate(ebo)
    return fill, on_hand, ebo


def base_stock_performance(
    base_stock: int, demand_per_h: float, lead_time_h: float
) -> BaseStockResult:
    """Fill rate, backorders and stock on hand for base stock ``base_stock`` (Palm's theorem).

    Parameters
    ----------
    base_stock
        s >= 0, spares held (on hand plus on order).
    demand_per_h
        Poisson demand rate λ per hour (failures plus planned replacements).
    lead_time_h
        Mean resupply lead time in hours.
    """
    if int(base_stock) != base_stock or base_stock < 0:
        raise InputError("base_stock", f"expected a whole number >= 0, got {base_stock}")
    s = int(base_stock)
    mean = _check_rate(demand_per_h, lead_time_h)
    fill, on_hand, ebo = _stock_levels(mean, s + 1)
    return BaseStockResult(
        base_stock=s,
        demand_per_h=float(demand_per_h),
        lead_time_h=float(lead_time_h),
        pipeline_mean=mean,
        fill_rate=float(fill[s]),
        ready_rate=float(fill[s + 1]),
        expected_backorders=float(ebo[s]),
        expected_on_hand=float(on_hand[s]),
        mean_wait_h=float(ebo[s] / demand_per_h) if demand_per_h > 0 else 0.0,
    )


def _check_target(target: float) -> float:
    if not (0.0 <= target < 1.0):
        raise InputError(
            "target", f"expected a fill rate in [0, 1) (a share, e.g. 0.95), got {target}"
        )
    return float(target)


def _search_limit(mean: float) -> int:
    return int(math.ceil(mean + _MAX_EXTRA_SD * math.sqrt(mean) + 50))


def base_stock_for_fill_rate(
    demand_per_h: float, lead_time_h: float, target: float
) -> BaseStockResult:
    """Smallest base stock whose fill rate P(X <= s − 1) reaches ``target``.

    Parameters
    ----------
    demand_per_h
        Poisson demand rate λ per hour (use :func:`spares_demand_per_h` to add
        planned replacements to failures).
    lead_time_h
        Mean resupply lead time in hours.
    target
        Fill-rate target, a share in [0, 1) (e.g. 0.95).
    """
    target = _check_target(target)
    mean = _check_rate(demand_per_h, lead_time_h)
    upto = _search_limit(mean)
    fill, _, _ = _stock_levels(mean, upto)
    hits = np.nonzero(fill >= target)[0]
    if hits.size == 0:  # pragma: no cover - the limit is far in the tail
        raise InputError("target", f"fill rate {target} not reached below {upto} spares")
    return base_stock_performance(int(hits[0]), demand_per_h, lead_time_h)


@dataclass(frozen=True)
class ReorderLevels:
    """Performance of a reorder point / order-up-to policy (s, S).

    Attributes
    ----------
    reorder_point
        s: order when the inventory position falls to s (may be −1).
    order_up_to
        S: order enough to bring the inventory position back to S (> s).
    batch
        Q = S − s, units per order.
    demand_per_h, lead_time_h, pipeline_mean
        λ per hour, L in hours, λL.
    fill_rate
        Share of demands met from stock at once.
    expected_backorders
        Mean number of demands waiting.
    expected_on_hand
        Mean spares on the shelf.
    orders_per_h
        λ/Q, replenishment orders per hour.
    """

    reorder_point: int
    order_up_to: int
    batch: int
    demand_per_h: float
    lead_time_h: float
    pipeline_mean: float
    fill_rate: float
    expected_backorders: float
    expected_on_hand: float
    orders_per_h: float


def reorder_levels_performance(
    reorder_point: int, order_up_to: int, demand_per_h: float, lead_time_h: float
) -> ReorderLevels:
    """Fill rate, backorders and stock of an (s, S) policy with unit Poisson demand.

    The inventory position is uniform on {s + 1, ..., S}; each figure is the
    average of the base-stock figure over those levels (module docstring).
    """
    s, big_s = int(reorder_point), int(order_up_to)
    if s != reorder_point or big_s != order_up_to or s < -1 or big_s <= s:
        raise InputError(
            "reorder levels",
            f"expected whole numbers with -1 <= reorder point < order-up-to, got "
            f"s={reorder_point}, S={order_up_to}",
        )
    mean = _check_rate(demand_per_h, lead_time_h)
    fill, on_hand, ebo = _stock_levels(mean, big_s)
    levels = slice(s + 1, big_s + 1)
    q = big_s - s
    return ReorderLevels(
        reorder_point=s,
        order_up_to=big_s,
        batch=q,
        demand_per_h=float(demand_per_h),
        lead_time_h=float(lead_time_h),
        pipeline_mean=mean,
        fill_rate=float(np.mean(fill[levels])),
        expected_backorders=float(np.mean(ebo[levels])),
        expected_on_hand=float(np.mean(on_hand[levels])),
        orders_per_h=float(demand_per_h) / q,
    )


def economic_order_quantity(
    demand_per_h: float, order_cost: float, holding_cost_per_h: float
) -> int:
    """EOQ √(2·K·λ / h), rounded to a whole number >= 1.

    Parameters
    ----------
    demand_per_h
        λ, units per hour.
    order_cost
        K, fixed cost per order.
    holding_cost_per_h
        h, cost of holding one unit for one hour (e.g. 20 %/year of the price / 8760).
    """
    if not (order_cost >= 0 and holding_cost_per_h > 0):
        raise InputError(
            "order_cost / holding_cost_per_h",
            f"expected order cost >= 0 and holding cost > 0, got {order_cost}, {holding_cost_per_h}",
        )
    q = math.sqrt(2.0 * order_cost * demand_per_h / holding_cost_per_h)
    return max(1, int(round(q)))


def reorder_levels_for_fill_rate(
    demand_per_h: float,
    lead_time_h: float,
    target: float,
    *,
    batch: int | None = None,
    order_cost: float | None = None,
    holding_cost_per_h: float | None = None,
) -> ReorderLevels:
    """(s, S) levels for a fill-rate target: batch first, then the smallest reorder point.

    Parameters
    ----------
    demand_per_h
        Poisson demand rate λ per hour.
    lead_time_h
        Fixed resupply lead time in hours.
    target
        Fill-rate target, a share in [0, 1).
    batch
        Units per order Q; if None, the EOQ from ``order_cost`` and
        ``holding_cost_per_h``; if those are None too, Q = 1 (base stock).

    Returns
    -------
    ReorderLevels
        With S = s + Q and s the smallest reorder point (>= −1) meeting the target.
    """
    target = _check_target(target)
    mean = _check_rate(demand_per_h, lead_time_h)
    if batch is None:
        if order_cost is not None and holding_cost_per_h is not None:
            batch = economic_order_quantity(demand_per_h, order_cost, holding_cost_per_h)
        else:
            batch = 1
    if int(batch) != batch or batch < 1:
        raise InputError("batch", f"expected a whole number of units >= 1, got {batch}")
    q = int(batch)
    upto = _search_limit(mean) + q
    fill, _, _ = _stock_levels(mean, upto)
    # fill rate for reorder point s is the mean of fill[s+1 .. s+q]
    window = np.convolve(fill, np.ones(q) / q, mode="valid")  # window[i] = mean fill[i..i+q-1]
    hits = np.nonzero(window >= target)[0]
    if hits.size == 0:  # pragma: no cover - the limit is far in the tail
        raise InputError("target", f"fill rate {target} not reached below {upto} spares")
    s = int(hits[0]) - 1
    return reorder_levels_performance(s, s + q, demand_per_h, lead_time_h)


def spares_demand_per_h(
    failures_per_h: float, planned_per_h: float = 0.0, positions: int = 1
) -> float:
    """Spares demand per hour of ``positions`` identical positions: failures plus planned.

    Treated as Poisson by the stock models (conservative for planned work; see
    the module docstring).
    """
    if failures_per_h < 0 or planned_per_h < 0 or positions < 0:
        raise InputError(
            "spares demand",
            f"expected rates and a count >= 0, got {failures_per_h}, {planned_per_h}, {positions}",
        )
    return positions * (failures_per_h + planned_per_h)

"""Spares stock levels: Palm's theorem for base stock, and (s, S) reorder levels.

Sources: Palm's theorem as used for (s − 1, s) spares by Feeney & Sherbrooke
(1966), *Management Science* 12(5) (from memory): units in resupply ~
Poisson(λL), fill rate P(X <= s − 1). Poisson sums are checked against
scipy.stats.poisson; the (s, S) fill rate with the inventory position uniform
on {s+1..S} (Hadley & Whitin, 1963, from memory) is checked by simulation.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import example, given, settings
from hypothesis import strategies as st
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.plan import (
    ReplacementCosts,
    age_replacement_rates,
    base_stock_for_fill_rate,
    base_stock_performance,
    economic_order_quantity,
    reorder_levels_for_fill_rate,
    reorder_levels_performance,
    spares_demand_per_h,
)


@pytest.mark.parametrize("pipeline", [0.05, 1.0, 3.7, 25.0, 480.0])
def test_poisson_sums_against_scipy(pipeline: float) -> None:
    demand_per_h, lead_h = pipeline / 1000.0, 1000.0
    dist = stats.poisson(pipeline)
    top = int(pipeline + 8 * math.sqrt(pipeline) + 10)
    for s in range(0, top, max(1, top // 25)):
        res = base_stock_performance(s, demand_per_h, lead_h)
        assert res.fill_rate == pytest.approx(dist.cdf(s - 1), rel=1e-9, abs=1e-300)
        assert res.ready_rate == pytest.approx(dist.cdf(s), rel=1e-9)
        x = np.arange(0, top + 200)
        ebo = float(np.sum(np.maximum(x - s, 0) * dist.pmf(x)))
        assert res.expected_backorders == pytest.approx(ebo, rel=1e-8, abs=1e-11)
        on_hand = float(np.sum(np.maximum(s - x, 0) * dist.pmf(x)))
        assert res.expected_on_hand == pytest.approx(on_hand, rel=1e-8, abs=1e-11)


def test_hand_worked_case() -> None:
    # λL = 1: P(X=0) = P(X=1) = e^{-1}. Fill rates 0, e^{-1}, 2e^{-1};
    # EBO(0) = 1, EBO(1) = e^{-1}, EBO(2) = 3e^{-1} − 1.
    e = math.exp(-1.0)
    for s, fill, ebo in [(0, 0.0, 1.0), (1, e, e), (2, 2 * e, 3 * e - 1)]:
        res = base_stock_performance(s, demand_per_h=0.002, lead_time_h=500.0)
        assert res.pipeline_mean == pytest.approx(1.0)
        assert res.fill_rate == pytest.approx(fill, abs=1e-15)
        assert res.expected_backorders == pytest.approx(ebo, rel=1e-12)
        assert res.mean_wait_h == pytest.approx(ebo / 0.002, rel=1e-12)


def test_base_stock_for_fill_rate_hand_case() -> None:
    # λL = 2: P(X <= 4) = 7e^{-2} = 0.947 < 0.95 <= P(X <= 5) = (7 + 4/15)e^{-2} = 0.983,
    # so the smallest base stock with fill rate P(X <= s − 1) >= 0.95 is s = 6.
    res = base_stock_for_fill_rate(demand_per_h=0.004, lead_time_h=500.0, target=0.95)
    assert res.base_stock == 6
    assert res.fill_rate == pytest.approx((7 + 4 / 15) * math.exp(-2.0), rel=1e-12)
    assert base_stock_performance(5, 0.004, 500.0).fill_rate == pytest.approx(7 * math.exp(-2.0))
    assert base_stock_for_fill_rate(0.004, 500.0, 0.0).base_stock == 0


def simulated_fill_rate(
    base_stock: int, demand_per_h: float, lead: np.ndarray, times: np.ndarray, batches: int = 40
) -> tuple[float, float]:
    """Share of demands met from stock at once (one-for-one resupply), with a batch-means SE."""
    arrivals = np.sort(times + lead)
    # units still in resupply when demand i arrives: earlier orders not yet back
    outstanding = np.arange(times.size) - np.searchsorted(arrivals, times, side="right")
    met = outstanding <= base_stock - 1
    means = np.array([b.mean() for b in np.array_split(met, batches)])
    return float(met.mean()), float(means.std(ddof=1) / math.sqrt(batches))


@pytest.mark.parametrize("lead_kind", ["fixed", "exponential"])
def test_palm_fill_rate_by_simulation(lead_kind: str) -> None:
    # Palm: the fill rate depends on the lead time only through its mean.
    rng = np.random.default_rng(np.random.SeedSequence([2024, len(lead_kind)]))
    demand_per_h, lead_h, s = 1 / 200.0, 600.0, 4  # λL = 3
    n = 200_000
    times = np.cumsum(rng.exponential(1 / demand_per_h, n))
    lead = np.full(n, lead_h) if lead_kind == "fixed" else rng.exponential(lead_h, n)
    fill, se = simulated_fill_rate(s, demand_per_h, lead, times)
    assert abs(fill - base_stock_performance(s, demand_per_h, lead_h).fill_rate) < 4 * se


def test_reorder_levels_by_simulation() -> None:
    # (s, S) = (2, 6), fixed lead time, unit Poisson demand.
    rng = np.random.default_rng(np.random.SeedSequence(99))
    demand_per_h, lead_h, s, big_s = 1 / 100.0, 300.0, 2, 6
    q = big_s - s
    n = 200_000
    times = np.cumsum(rng.exponential(1 / demand_per_h, n))
    idx = np.arange(n)
    # inventory position before demand i is S − (i mod Q); an order goes out at
    # the demand that takes it down to s, and arrives L later with Q units.
    position = big_s - (idx % q)
    order_times = times[(idx % q) == q - 1]
    on_order = np.searchsorted(order_times, times, side="left") - np.searchsorted(
        order_times + lead_h, times, side="right"
    )
    net = position - q * on_order
    met = net >= 1
    keep = slice(1000, None)  # drop the start-up
    batches = np.array([b.mean() for b in np.array_split(met[keep], 40)])
    se = batches.std(ddof=1) / math.sqrt(40)
    res = reorder_levels_performance(s, big_s, demand_per_h, lead_h)
    assert abs(met[keep].mean() - res.fill_rate) < 4 * se
    assert res.orders_per_h == pytest.approx(demand_per_h / q)
    # Poisson arrivals see time averages (PASTA): the stock a demand finds on
    # arrival averages to the time-average stock on hand and backorders.
    for seen, expected in [
        (np.maximum(net, 0), res.expected_on_hand),
        (np.maximum(-net, 0), res.expected_backorders),
    ]:
        means = np.array([b.mean() for b in np.array_split(seen[keep], 40)])
        assert abs(seen[keep].mean() - expected) < 4 * means.std(ddof=1) / math.sqrt(40)


def test_reorder_levels_for_fill_rate() -> None:
    res = reorder_levels_for_fill_rate(0.004, 500.0, 0.95, batch=1)
    assert (res.reorder_point, res.order_up_to) == (5, 6)  # base stock 6, as above
    res = reorder_levels_for_fill_rate(0.004, 500.0, 0.95, batch=5)
    assert res.fill_rate >= 0.95
    below = reorder_levels_performance(res.reorder_point - 1, res.order_up_to - 1, 0.004, 500.0)
    assert below.fill_rate < 0.95
    # EOQ √(2·K·λ/h): K = 200, λ = 0.004/h, h = 0.002 per unit-hour → √800 ≈ 28.3 → 28
    assert economic_order_quantity(0.004, 200.0, 0.002) == 28
    eoq = reorder_levels_for_fill_rate(
        0.004, 500.0, 0.95, order_cost=200.0, holding_cost_per_h=0.002
    )
    assert eoq.batch == 28 and eoq.fill_rate >= 0.95


def test_demand_includes_planned_replacements() -> None:
    life = LifeDistribution.from_rating_life(20_000.0, "iso281")
    rates = age_replacement_rates(life, 30_000.0, ReplacementCosts(1.0, 5.0))
    demand = spares_demand_per_h(rates.failures_per_h, rates.planned_per_h, positions=24)
    assert demand == pytest.approx(24 * rates.replacements_per_h)
    assert demand > 24 / life.mean_h  # age replacement uses more spares than run-to-failure


def test_bad_inputs() -> None:
    with pytest.raises(InputError):
        base_stock_performance(-1, 0.01, 100.0)
    with pytest.raises(InputError):
        base_stock_for_fill_rate(0.01, 100.0, 1.0)
    with pytest.raises(InputError):
        base_stock_for_fill_rate(0.01, -5.0, 0.9)
    with pytest.raises(InputError):
        reorder_levels_performance(3, 3, 0.01, 100.0)


@settings(max_examples=50, deadline=None)
@given(
    demand_per_h=st.floats(1e-5, 0.1),
    lead_h=st.floats(1.0, 5000.0),
    s=st.integers(0, 60),
)
# Far in the tail, where backorders computed by cancellation came out as rounding noise
# above the value at one spare less.
@example(demand_per_h=0.08813303722485488, lead_h=1.0, s=32)
def test_properties(demand_per_h: float, lead_h: float, s: int) -> None:
    a = base_stock_performance(s, demand_per_h, lead_h)
    b = base_stock_performance(s + 1, demand_per_h, lead_h)
    assert b.fill_rate >= a.fill_rate  # more stock, better fill
    assert b.expected_backorders <= a.expected_backorders
    assert a.fill_rate <= a.ready_rate
    # stock balance: on hand − backorders = s − λL (exact)
    scale = max(1.0, s, a.pipeline_mean)
    assert a.expected_on_hand - a.expected_backorders == pytest.approx(
        s - a.pipeline_mean, abs=1e-9 * scale
    )

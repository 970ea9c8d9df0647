"""Block replacement against the exact Erlang-2 renewal function and Monte Carlo.

Model: Barlow & Proschan, *Mathematical Theory of Reliability* (1965): cost
rate [c_p + c_f M(T)] / T (from memory), extended with stop durations. The
Erlang-2 renewal function M(t) = λt/2 − 1/4 + e^{−2λt}/4 is from Cox, *Renewal
Theory* (1962, from memory). Age replacement is optimal among all replacement
policies for i.i.d. lives, so its minimum cost rate never exceeds block
replacement's (Barlow & Proschan, from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import optimize, stats

from fleetsim.life import LifeDistribution
from fleetsim.plan import (
    ReplacementCosts,
    ScipyLife,
    block_replacement_cost_rate,
    block_replacement_rates,
    optimal_age_replacement,
    optimal_block_replacement,
    renewal_function,
)


def erlang2_renewal(t: float, phase_rate: float) -> float:
    return phase_rate * t / 2.0 - 0.25 + math.exp(-2.0 * phase_rate * t) / 4.0


@pytest.mark.parametrize("c_p, c_f", [(1.0, 10.0), (1.0, 6.0)])
def test_erlang2_exact_optimum(c_p: float, c_f: float) -> None:
    lam = 1.0 / 500.0
    life = ScipyLife(stats.gamma(a=2.0, scale=500.0))

    def exact(t: float) -> float:
        return (c_p + c_f * erlang2_renewal(t, lam)) / t

    ref = optimize.minimize_scalar(
        exact, bounds=(1.0, 5000.0), method="bounded", options={"xatol": 1e-6}
    )
    ours = optimal_block_replacement(life, ReplacementCosts(c_p, c_f))
    assert ours.has_optimum and ours.policy == "block"
    assert ours.interval_h == pytest.approx(ref.x, rel=2e-4)
    assert ours.cost_rate_per_h == pytest.approx(ref.fun, rel=1e-6)
    assert ours.run_to_failure_cost_rate_per_h == pytest.approx(c_f / 1000.0, rel=1e-12)


def test_erlang2_no_optimum_when_failure_cheap_enough() -> None:
    # Erlang-2: C(T) − c_f/μ = (c_p − c_f/4 + c_f e^{−2λT}/4)/T, so with c_f <= 4 c_p
    # C(T) stays above the run-to-failure rate for every T: no finite optimum.
    life = ScipyLife(stats.gamma(a=2.0, scale=500.0))
    res = optimal_block_replacement(life, ReplacementCosts(1.0, 3.9))
    assert not res.has_optimum and res.interval_h is None
    assert "run to failure" in res.reason


def test_exponential_life_has_no_optimum() -> None:
    # M(T) = T/μ, so C(T) = c_p/T + c_f/μ falls towards run-to-failure for ever.
    life = LifeDistribution(shape=1.0, scale_h=2000.0)
    res = optimal_block_replacement(life, ReplacementCosts(1.0, 20.0))
    assert not res.has_optimum and res.interval_h is None
    assert res.cost_rate_per_h == pytest.approx(20.0 / 2000.0)
    t = np.array([100.0, 1000.0, 5000.0])
    assert np.allclose(
        block_replacement_cost_rate(life, t, ReplacementCosts(1.0, 20.0)), 1 / t + 0.01, rtol=1e-6
    )


@pytest.mark.parametrize(
    "life",
    [
        LifeDistribution(shape=2.5, scale_h=1000.0),
        LifeDistribution.from_rating_life(20_000.0, "iso281"),
    ],
)
def test_age_never_costs_more_than_block(life: LifeDistribution) -> None:
    costs = ReplacementCosts(1.0, 8.0, planned_stop_h=4.0, failure_stop_h=12.0, downtime_per_h=0.02)
    block = optimal_block_replacement(life, costs)
    age = optimal_age_replacement(life, costs)
    assert block.has_optimum and age.has_optimum
    assert age.cost_rate_per_h <= block.cost_rate_per_h


def test_monte_carlo_block_cost_rate() -> None:
    life = LifeDistribution(shape=2.5, scale_h=1000.0, location_h=50.0)
    costs = ReplacementCosts(1.0, 6.0, planned_stop_h=3.0, failure_stop_h=80.0, downtime_per_h=0.05)
    t_block = optimal_block_replacement(life, costs).interval_h
    assert t_block is not None
    rng = np.random.default_rng(np.random.SeedSequence(31))
    n = 100_000
    arrivals = np.cumsum(life.sample(rng, (n, 8)), axis=1)
    assert np.all(arrivals[:, -1] > t_block)
    failures = (arrivals <= t_block).sum(axis=1)
    cost = costs.planned_total + costs.failure_total * failures
    length = t_block + costs.planned_stop_h + costs.failure_stop_h * failures
    ratio = cost.mean() / length.mean()
    resid = cost - ratio * length
    se = resid.std(ddof=1) / math.sqrt(n) / length.mean()
    assert abs(ratio - block_replacement_cost_rate(life, t_block, costs)) < 4 * se
    rates = block_replacement_rates(life, t_block, costs)
    m = float(renewal_function(life, t_block))
    length_h = t_block + 3.0 + 80.0 * m  # T + d_p + d_f M(T)
    assert rates.failures_per_h == pytest.approx(m / length_h, rel=1e-12)
    assert rates.planned_per_h == pytest.approx(1 / length_h, rel=1e-12)
    assert block_replacement_cost_rate(life, t_block, costs) == pytest.approx(
        (1.0 + 0.05 * 3.0 + (6.0 + 0.05 * 80.0) * m) / length_h, rel=1e-9
    )


def test_weibull_shape_below_one_has_no_optimum() -> None:
    res = optimal_block_replacement(LifeDistribution(0.8, 1000.0), ReplacementCosts(1.0, 50.0))
    assert not res.has_optimum
    assert "shape" in res.reason

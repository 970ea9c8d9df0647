"""The policy view (stationary start, warm-up deletion) against closed forms.

References: the age- and block-replacement cost rates by the renewal-reward
theorem (Barlow & Proschan, *Mathematical Theory of Reliability*, 1965, from
memory), computed by :mod:`fleetsim.plan.age` and :mod:`fleetsim.plan.block`
(themselves checked against published values in test_plan_age.py and
test_plan_block.py); the equilibrium age distribution of a renewal process,
density R(a)/E[cycle] (Cox, *Renewal Theory*, 1962), integrated here with
scipy's quad. Tolerances: Z = 4 standard errors of the replications.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import integrate, stats

from fleetsim.life import LifeDistribution
from fleetsim.plan.age import age_replacement_cost_rate, optimal_age_replacement
from fleetsim.plan.block import block_replacement_cost_rate
from fleetsim.plan.costs import ReplacementCosts
from fleetsim.scenario.model import (
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Crews,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.study import run_study
from fleetsim.study.policy_view import equilibrium_ages, policy_window, run_policy_view

Z = 4.0
B = "FB-1"
#: Weibull with a location: x0 = 2000 h, η = 10,000 h, b = 2.5 (a rising hazard).
LIFE = LifeDistribution(shape=2.5, scale_h=10_000.0, location_h=2_000.0)
CP, CF = 100.0, 1000.0  # planned and failure replacement costs
COSTS = ReplacementCosts(CP, CF)
#: About one characteristic life (x0 + η) from new.
HORIZON_H = 12_000.0


def fleet(policy: Policy, units: int = 50, crews: Crews | None = None) -> Scenario:
    return Scenario(
        study=Study("policy view", HORIZON_H, 200, 5),
        costs=Costs(planned_replacement=CP, failure=CF - CP),
        bearings={B: Bearing(B, "ball", 10_000.0)},
        machines=(Machine("M", units, 1.0, 0.0, (Position("p", B, LIFE, policy),)),),
        crews=crews or Crews(),
    )


def mean_se(result) -> tuple[float, float]:
    x = result.figure("cost_per_year").to_numpy()
    return float(x.mean()), float(x.std(ddof=1) / math.sqrt(x.size))


def test_equilibrium_ages_follow_the_integrated_reliability() -> None:
    t = 6000.0
    u = np.random.default_rng(1).random(4000)
    ages = equilibrium_ages(LIFE, Policy("age", interval_h=t), u)
    total = integrate.quad(lambda a: float(LIFE.sf(a)), 0.0, t, points=[2000.0])[0]

    def cdf(x: float) -> float:
        return integrate.quad(lambda a: float(LIFE.sf(a)), 0.0, min(x, t), points=[2000.0])[0] / total

    assert ages.max() <= t
    assert stats.kstest(ages, np.vectorize(cdf)).pvalue > 1e-3
    # Run to failure: mean age E[X²]/(2 E[X]) (the equilibrium mean, Cox 1962).
    rtf = equilibrium_ages(LIFE, Policy(), u)
    m1, m2 = LIFE.mean_h, LIFE.variance_h2 + LIFE.mean_h**2
    assert abs(rtf.mean() - m2 / (2 * m1)) <= Z * rtf.std(ddof=1) / math.sqrt(u.size)


def test_policy_view_reproduces_the_age_replacement_rate_at_and_around_the_optimum() -> None:
    t_star = optimal_age_replacement(LIFE, COSTS).interval_h
    assert t_star is not None
    for t in (0.7 * t_star, t_star, 1.4 * t_star):
        sc = fleet(Policy("age", interval_h=t))
        mean, se = mean_se(run_policy_view(sc, replications=200, seed=3))
        ref = age_replacement_cost_rate(LIFE, t, COSTS) * HOURS_PER_YEAR * 50
        assert abs(mean - ref) <= Z * se, (t, mean, ref, se)
    # The budget view from new, over one characteristic life, is far below the
    # long-run rate: the end-of-horizon effect the policy view removes.
    budget = run_study(fleet(Policy("age", interval_h=t_star)), replications=200, seed=3,
                       keep_events=False).figure("cost_per_year").mean()
    assert budget < 0.85 * age_replacement_cost_rate(LIFE, t_star, COSTS) * HOURS_PER_YEAR * 50


def test_policy_view_reproduces_the_block_replacement_rate() -> None:
    for t in (4000.0, 6000.0):
        sc = fleet(Policy("block", interval_h=t))
        result = run_policy_view(sc, replications=200, seed=4)
        assert result.horizon_h % t == 0
        mean, se = mean_se(result)
        ref = block_replacement_cost_rate(LIFE, t, COSTS) * HOURS_PER_YEAR * 50
        assert abs(mean - ref) <= Z * se, (t, mean, ref, se)


def test_warm_up_window_of_a_coupled_fleet_keeps_the_long_run_rate() -> None:
    # Finite but ample crews with no repair time: coupled in form, not in effect,
    # so the window (W, W + H] must still give the closed-form rate.
    t_star = optimal_age_replacement(LIFE, COSTS).interval_h
    sc = fleet(Policy("age", interval_h=t_star), units=20, crews=Crews(count=50))
    window = policy_window(sc)
    assert window.warmup_h >= HOURS_PER_YEAR and not window.exact
    mean, se = mean_se(run_policy_view(sc, replications=100, seed=3))
    ref = age_replacement_cost_rate(LIFE, t_star, COSTS) * HOURS_PER_YEAR * 20
    assert abs(mean - ref) <= Z * se


def test_a_sweep_of_the_policy_view_finds_the_optimum_within_one_grid_step() -> None:
    t_star = optimal_age_replacement(LIFE, COSTS).interval_h
    grid = np.arange(2500.0, 8001.0, 500.0)
    means = [run_policy_view(fleet(Policy("age", interval_h=t), units=20), replications=100,
                             seed=11).figure("cost_per_year").mean() for t in grid]
    assert abs(grid[int(np.argmin(means))] - t_star) <= 500.0


def test_policy_view_is_undiscounted_and_labelled() -> None:
    sc = fleet(Policy("age", interval_h=5000.0), units=5)
    sc = dataclasses.replace(sc, costs=dataclasses.replace(sc.costs, discount_rate_per_year=0.08))
    result = run_policy_view(sc, replications=20, seed=1)
    plain = run_policy_view(dataclasses.replace(
        sc, costs=dataclasses.replace(sc.costs, discount_rate_per_year=0.0)), replications=20, seed=1)
    assert result.view == "policy" and result.notes
    assert result.figure("cost_per_year").equals(plain.figure("cost_per_year"))

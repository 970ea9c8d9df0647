"""A simulated interval sweep recovers the closed-form age-replacement optimum.

Independent positions (vectorised engine), zero stop times, operating share 1:
the long-run cost rate is Barlow & Proschan's C(T) = [c_p R(T) + c_f F(T)] / ∫₀ᵀ R,
whose minimiser T* comes from fleetsim.plan (itself checked against the
`reliability` package in tests/test_plan_age.py). The sweep runs every interval on
common random numbers; T* must lie among the intervals whose paired cost
difference from the simulated best is not significant (95 % interval includes 0),
and that set must be a proper subset of the grid (the sweep can tell intervals apart).
"""

from __future__ import annotations

import numpy as np

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.plan import ReplacementCosts, optimal_age_replacement
from fleetsim.scenario.model import Bearing, Costs, Machine, Policy, Position, Scenario, Study
from fleetsim.study import run_study
from fleetsim.study.summary import paired_difference

LIFE = LifeDistribution(shape=2.5, scale_h=20_000.0)


def scenario(interval_h: float) -> Scenario:
    pos = tuple(Position(f"p{j}", "B", LIFE, Policy("age", interval_h)) for j in range(4))
    return Scenario(
        Study("sweep", 400_000.0, 40, 77),
        Costs(planned_replacement=200.0, failure=1_800.0),
        {"B": Bearing("B", BearingType.BALL, 5e4, price=100.0)},
        (Machine("m", 100, 1.0, 0.0, pos),),
    )


def test_sweep_recovers_the_analytic_optimum() -> None:
    # c_p = labour + price, c_f = labour + failure + price (engine convention).
    analytic = optimal_age_replacement(LIFE, ReplacementCosts(planned_replacement=300.0,
                                                              failure=2_100.0))
    assert analytic.has_optimum and analytic.interval_h is not None
    grid = np.arange(4_000.0, 20_001.0, 2_000.0)
    results = [run_study(scenario(t), engine="vector", keep_events=False) for t in grid]
    costs = [r.figure("cost_total") for r in results]
    best = int(np.argmin([c.mean() for c in costs]))
    indistinguishable = []
    for t, c in zip(grid, costs, strict=True):
        d = paired_difference(c, costs[best])
        if d.low <= 0.0 <= d.high or t == grid[best]:
            indistinguishable.append(t)
    lo, hi = min(indistinguishable) - 1_000.0, max(indistinguishable) + 1_000.0
    assert lo <= analytic.interval_h <= hi, (analytic.interval_h, indistinguishable)
    assert len(indistinguishable) < len(grid)

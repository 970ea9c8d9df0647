"""The vectorised engine agrees with the discrete-event engine in distribution.

On shared scenarios with independent positions (unlimited spares and crews),
the per-replication figures of both engines must have the same mean (within
4 standard errors of the difference) and the same distribution (two-sample
Kolmogorov–Smirnov test, scipy.stats.ks_2samp, at the 0.1 % level).
"""

from __future__ import annotations

import math

import pytest
from scipy import stats

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.study import run_study

LIFE = LifeDistribution(shape=1.4, scale_h=30_000.0, location_h=1_500.0)
#: the P-F interval belongs to the position: the same under every policy
PF = Duration("weibull", 2_500.0, shape=2.0)
POLICIES = {
    "run-to-failure": Policy(),
    "age": Policy("age", 20_000.0),
    "block": Policy("block", 25_000.0, block_scope="machine"),
    "condition": Policy("condition", inspection_every_h=1_000.0, detection=0.7,
                        respond_within_h=100.0),
    "age+opportunistic": Policy("age", 20_000.0, opportunistic_share=0.7),
}


def scenario(policy: Policy) -> Scenario:
    positions = (
        Position("drive-end", "B1", LIFE, policy, pf_interval=PF),
        Position("non-drive-end", "B1", LIFE.scaled(1.5), policy, pf_interval=PF),
        Position("pump", "B2", LIFE.scaled(0.8), policy, pf_interval=PF),
    )
    return Scenario(
        Study("agree", 87_660.0, 120, 2024),
        Costs(planned_replacement=400.0, failure=3_000.0, downtime_per_hour=80.0, inspection=15.0),
        {"B1": Bearing("B1", BearingType.BALL, 4e4, price=90.0),
         "B2": Bearing("B2", BearingType.ROLLER, 9e4, price=300.0)},
        (Machine("pump", 6, 0.7, 5_000.0, positions),),
        groups=(Group("station", ("pump",), 4),),
        crews=Crews(None, Duration.fixed(6.0), Duration("lognormal", 10.0, p90_h=30.0)),
    )


FIGURES = ["failures", "planned_replacements", "cost_total", "downtime_h", "downtime_repair_h",
           "downtime_planned_h", "spares_issued:B2", "group_downtime_h:station", "inspections",
           "detections"]


@pytest.mark.parametrize("name", list(POLICIES))
def test_engines_agree_in_distribution(name: str) -> None:
    sc = scenario(POLICIES[name])
    des = run_study(sc, engine="des", seed=11, keep_events=False).replications
    vec = run_study(sc, engine="vector", seed=12, keep_events=False).replications
    for fig in FIGURES:
        a, b = des[fig].to_numpy(), vec[fig].to_numpy()
        if a.std() == 0 and b.std() == 0:
            assert a.mean() == b.mean(), fig
            continue
        se = math.sqrt(a.var(ddof=1) / a.size + b.var(ddof=1) / b.size)
        assert abs(a.mean() - b.mean()) < 4 * se, (name, fig, a.mean(), b.mean(), se)
        assert stats.ks_2samp(a, b).pvalue > 0.001, (name, fig)


def test_engines_agree_on_fleet_down_events_with_instant_stops() -> None:
    # With zero stop durations and no groups the fleet is down (for an instant) at
    # every stop; both engines count such down events (a long-lived fleet, so that
    # the first down event often falls inside the horizon and often not).
    life = LifeDistribution(shape=1.4, scale_h=600_000.0, location_h=1_500.0)
    positions = (Position("a", "B1", life, Policy("age", 400_000.0)),
                 Position("b", "B1", life, Policy()))
    sc = Scenario(Study("instant", 87_660.0, 150, 3), Costs(failure=100.0),
                  {"B1": Bearing("B1", BearingType.BALL, 4e4, price=10.0)},
                  (Machine("fan", 3, 0.9, 0.0, positions),))
    des = run_study(sc, engine="des", seed=1, keep_events=False).replications
    vec = run_study(sc, engine="vector", seed=2, keep_events=False).replications
    for fig in ["fleet_down", "fleet_first_down_h", "failures"]:
        a, b = des[fig].to_numpy(), vec[fig].to_numpy()
        se = math.sqrt(a.var(ddof=1) / a.size + b.var(ddof=1) / b.size)
        assert abs(a.mean() - b.mean()) < 4 * se, (fig, a.mean(), b.mean(), se)
    assert 0.2 < des["fleet_down"].mean() < 0.8

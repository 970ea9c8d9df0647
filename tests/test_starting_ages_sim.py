"""Both engines simulate a fleet that is not new from each position's own age.

A bearing aged a runs for a remaining life with reliability R(a + t) / R(a)
(conditional reliability; e.g. Barlow & Proschan). Checked three ways, on
fixed seeds:

* the first failure of many units follows that conditional distribution,
  computed with scipy.stats.weibull_min's survival function (one-sample
  Kolmogorov–Smirnov test, scipy.stats.kstest, at the 0.1 % level), for the
  discrete-event engine and both paths of the vectorised engine; the same test
  rejects the unconditional (new-bearing) distribution, so it has power;
* the engines share the table of first lives (U[0, unit, position]), so each
  unit's first failure is the same in both, draw for draw;
* whole studies agree in distribution (means within 4 standard errors of the
  difference, like tests/test_engines_agree.py).
"""

from __future__ import annotations

import math

import numpy as np
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
from fleetsim.sim import simulate
from fleetsim.sim.discount import Discount
from fleetsim.sim.streams import Streams
from fleetsim.sim.vector import simulate_machine
from fleetsim.sim.years import YearBook
from fleetsim.study import run_study

SHARE = 0.5  # the machines run half the time: calendar hours = operating hours / 0.5
HORIZON_H = 100_000.0  # calendar; 50,000 operating hours: P(no failure yet) < 1e-5 below
LIFE_A = LifeDistribution(shape=1.5, scale_h=10_000.0, location_h=1_000.0)
# Exponential (memoryless): its age does not matter, so misplacing the two
# positions' ages (or the units') changes the first stops clearly.
LIFE_B = LifeDistribution(shape=1.0, scale_h=30_000.0)
BEARINGS = {"B": Bearing("B", BearingType.BALL, 4e4, price=50.0)}
INSTANT = Crews()
TIMED = Crews(None, Duration.fixed(4.0), Duration("lognormal", 8.0, p90_h=24.0))


def weibull(life: LifeDistribution):
    return stats.weibull_min(c=life.shape, loc=life.location_h, scale=life.scale_h)


def fleet(positions, ages, crews: Crews, groups: bool = True) -> Scenario:
    units = len(ages)
    machine = Machine("m", units, SHARE, 0.0, tuple(positions),
                      position_ages_h=tuple(tuple(row) for row in ages))
    return Scenario(Study("aged", HORIZON_H, 1, 0), Costs(failure=100.0), BEARINGS, (machine,),
                    groups=(Group("all", ("m",), 1),) if groups else (), crews=crews)


def des_first_failures(sc: Scenario, seed: int) -> np.ndarray:
    """Operating hours to each unit's first failure, by the discrete-event engine."""
    first: dict[str, float] = {}
    for t, unit, _pos, kind in simulate(sc, seed).event_log():
        if kind == "failure" and unit not in first:
            first[unit] = t
    ids = sc.machines[0].unit_ids()
    assert len(first) == len(ids)  # every unit failed inside the horizon
    return np.array([first[u] for u in ids]) * SHARE


def vector_first_failures(sc: Scenario, seed: int) -> np.ndarray:
    """Operating hours to each unit's first stop, by the vectorised engine (stops are failures)."""
    m = sc.machines[0]
    sums = simulate_machine(m, 0, sc, Streams(np.random.SeedSequence(seed)), HORIZON_H,
                            YearBook(HORIZON_H, Discount(0.0)), keep_intervals=True)
    first = np.full(m.count, math.inf)
    for unit, start, _end in sums.intervals:
        np.minimum.at(first, unit, start)
    assert np.all(np.isfinite(first))
    return first * SHARE


# --- one position per unit, all aged a ---------------------------------------------------
AGE_H = 8_000.0
N_UNITS = 1_000
SINGLE = {
    # run to failure with one position: the vectorised engine's renewal fast path
    "renewal path": Policy(),
    # a block interval beyond the horizon never falls due, but takes the general lane path
    "lane path": Policy("block", interval_h=10 * HORIZON_H),
}


@pytest.mark.parametrize("path", list(SINGLE))
def test_first_failure_of_an_aged_bearing_follows_the_conditional_life(path: str) -> None:
    sc = fleet([Position("p", "B", LIFE_A, SINGLE[path])], [[AGE_H]] * N_UNITS, INSTANT)
    # P(one unit has not failed within 50,000 operating hours) = sf(58,000)/sf(8,000) ~ 1e-7
    assert weibull(LIFE_A).sf(AGE_H + HORIZON_H * SHARE) / weibull(LIFE_A).sf(AGE_H) < 1e-5
    des = des_first_failures(sc, seed=101)
    vec = vector_first_failures(sc, seed=101)
    # the same first lives, draw for draw (shared uniform table)
    np.testing.assert_allclose(vec, des, rtol=1e-9)
    ref = weibull(LIFE_A)

    def conditional(t, age_h=AGE_H):
        return 1.0 - ref.sf(age_h + t) / ref.sf(age_h)

    assert stats.kstest(des, conditional).pvalue > 0.001
    vec2 = vector_first_failures(sc, seed=202)  # an independent sample for the vector engine
    assert stats.kstest(vec2, conditional).pvalue > 0.001
    # power: the life of a new bearing, or of one twice as old, is clearly rejected
    assert stats.kstest(des, ref.cdf).pvalue < 1e-6
    assert stats.kstest(des, lambda t: conditional(t, 2 * AGE_H)).pvalue < 1e-6


# --- two positions per unit, ages different by unit and position -------------------------
def mixed_ages(units: int) -> np.ndarray:
    a = [0.0, 20_000.0, 5_000.0, 40_000.0]
    b = [60_000.0, 0.0, 25_000.0]
    return np.array([[a[u % 4], b[u % 3]] for u in range(units)])


def unit_cdf(ages: np.ndarray, t: np.ndarray) -> np.ndarray:
    """P(unit u stops by t operating hours) = 1 − S_a(t | a_u)·S_b(t | b_u), by scipy."""
    ref_a, ref_b = weibull(LIFE_A), weibull(LIFE_B)
    a, b = ages[:, 0], ages[:, 1]
    return 1.0 - ref_a.sf(a + t) / ref_a.sf(a) * ref_b.sf(b + t) / ref_b.sf(b)


@pytest.mark.parametrize("crews", [INSTANT, TIMED], ids=["renewal path", "lane path"])
def test_first_stop_of_a_unit_with_aged_positions(crews: Crews) -> None:
    # The unit stops at the first failure of either position; before it nothing
    # stops, so in operating hours it is the minimum of two independent conditional
    # lives. Each unit's time through its own CDF (probability integral transform)
    # is uniform on (0, 1) when every (unit, position) got its own age.
    ages = mixed_ages(1_200)
    positions = [Position("a", "B", LIFE_A, Policy()), Position("b", "B", LIFE_B, Policy())]
    sc = fleet(positions, ages.tolist(), crews)
    des = des_first_failures(sc, seed=7)
    vec = vector_first_failures(sc, seed=7)
    np.testing.assert_allclose(vec, des, rtol=1e-9)  # same (unit, position) cells in both
    assert stats.kstest(unit_cdf(ages, des), "uniform").pvalue > 0.001
    vec2 = vector_first_failures(sc, seed=8)
    assert stats.kstest(unit_cdf(ages, vec2), "uniform").pvalue > 0.001
    # power: ages swapped between the positions, shifted by one unit, or all new
    for wrong in (ages[:, ::-1], np.roll(ages, 1, axis=0), np.zeros_like(ages)):
        assert stats.kstest(unit_cdf(wrong, des), "uniform").pvalue < 1e-6


# --- whole studies: the engines agree in distribution ------------------------------------
LIFE = LifeDistribution(shape=1.4, scale_h=30_000.0, location_h=1_500.0)
WEAR_OUT = LifeDistribution(shape=3.0, scale_h=30_000.0, location_h=1_500.0)
# (policy, crews, life, horizon in hours): run to failure of wear-out lives over two years,
# where the starting ages matter most
AGED_POLICIES = {
    "run-to-failure, instant stops": (Policy(), INSTANT, WEAR_OUT, 17_532.0),
    "age, timed stops": (Policy("age", 20_000.0), TIMED, LIFE, 87_660.0),
    "age+opportunistic": (Policy("age", 20_000.0, opportunistic_share=0.7), TIMED, LIFE, 87_660.0),
}
FIGURES = ["failures", "planned_replacements", "opportunistic_replacements", "cost_total",
           "downtime_h", "spares_issued:B2", "group_downtime_h:station",
           "group_first_down_h:station"]


def aged_fleet(policy: Policy, crews: Crews, life: LifeDistribution) -> Scenario:
    positions = (
        Position("drive-end", "B1", life, policy),
        Position("non-drive-end", "B1", life.scaled(1.5), policy),
        Position("pump", "B2", life.scaled(0.8), policy),
    )
    # some new, some worn, some past the 20,000 h interval (changed at the start)
    ages = ((0.0, 0.0, 0.0), (5_000.0, 25_000.0, 0.0), (12_000.0, 3_000.0, 30_000.0),
            (19_000.0, 19_000.0, 19_000.0), (40_000.0, 0.0, 8_000.0), (2_000.0, 60_000.0, 15_000.0))
    return Scenario(
        Study("aged-agree", 87_660.0, 120, 2024),
        Costs(planned_replacement=400.0, failure=3_000.0, downtime_per_hour=80.0),
        {"B1": Bearing("B1", BearingType.BALL, 4e4, price=90.0),
         "B2": Bearing("B2", BearingType.ROLLER, 9e4, price=300.0)},
        (Machine("pump", 6, 0.7, 5_000.0, positions, position_ages_h=ages),),
        groups=(Group("station", ("pump",), 4),),
        crews=crews,
    )


@pytest.mark.parametrize("name", list(AGED_POLICIES))
def test_engines_agree_with_per_position_ages(name: str) -> None:
    policy, crews, life, horizon_h = AGED_POLICIES[name]
    sc = aged_fleet(policy, crews, life)
    run = dict(horizon_h=horizon_h, keep_events=False)
    des = run_study(sc, engine="des", seed=31, **run).replications
    vec = run_study(sc, engine="vector", seed=32, **run).replications
    for fig in FIGURES:
        a, b = des[fig].to_numpy(), vec[fig].to_numpy()
        if a.std() == 0 and b.std() == 0:
            assert a.mean() == b.mean(), fig
            continue
        se = math.sqrt(a.var(ddof=1) / a.size + b.var(ddof=1) / b.size)
        assert abs(a.mean() - b.mean()) < 4 * se, (name, fig, a.mean(), b.mean(), se)

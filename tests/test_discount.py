"""Discounted costs: the factors, exact present values, and both engines against a closed form."""

from __future__ import annotations

import dataclasses
import math

import numpy as np
import pytest
from scipy import integrate

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import (
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Crews,
    Duration,
    Machine,
    Policy,
    Position,
    Scenario,
    Stock,
    Study,
)
from fleetsim.sim import simulate
from fleetsim.sim.discount import Discount, per_year
from fleetsim.study.engines import replicate
from fleetsim.study.seeds import replication_seed

B = "DB-1"
RATE = 0.08
NEVER = 1e12


def test_factor_and_integral_against_quadrature() -> None:
    d = Discount(RATE)
    # (1 + r)^(−years): one year on, 1 is worth 1 / 1.08
    assert d.factor(HOURS_PER_YEAR) == pytest.approx(1 / 1.08, rel=1e-12)
    for a, b in ((0.0, 10.0), (1_000.0, 50_000.0), (20_000.0, 20_000.5)):
        ref, _ = integrate.quad(d.factor, a, b, epsabs=0, epsrel=1e-12)
        assert d.integral(a, b) == pytest.approx(ref, rel=1e-10)
    assert d.integral(5.0, 5.0) == 0.0 and d.integral(6.0, 5.0) == 0.0
    a = np.array([0.0, 100.0, 3_000.0])
    b = np.array([8.0, 100.0, 9_000.0])
    assert np.allclose(d.integrals(a, b), [d.integral(x, y) for x, y in zip(a, b, strict=True)], rtol=1e-13)
    assert np.allclose(d.factors(a), [d.factor(x) for x in a], rtol=1e-13)


def test_equivalent_annual_cost_of_a_level_stream() -> None:
    # A stream of 1,000 a year paid evenly over 10 years: its present value, annualised,
    # is 1,000 a year again; undiscounted, per year is total / years.
    years = 10.0
    d = Discount(RATE)
    pv = 1_000.0 * d.integral(0.0, years * HOURS_PER_YEAR) / HOURS_PER_YEAR
    assert per_year(pv, years, RATE) == pytest.approx(1_000.0, rel=1e-12)
    assert per_year(12_345.0, years, 0.0) == pytest.approx(1_234.5)


def _one_unit(policy: Policy, crews: Crews, costs: Costs, stores=None, horizon=1_000.0) -> Scenario:
    life = LifeDistribution(shape=1.5, scale_h=10_000.0)
    return Scenario(
        study=Study("disc", horizon, 1, 0),
        costs=costs,
        bearings={B: Bearing(B, "ball", 10_000.0, price=200.0)},
        machines=(Machine("P", 1, 1.0, 0.0, (Position("de", B, life, policy),)),),
        stores=stores or {},
        crews=crews,
    )


def _lives(*hours: float):  # type: ignore[no-untyped-def]
    return lambda unit, position, k: hours[k] if k < len(hours) else NEVER


def test_exact_present_values_of_one_failure_and_one_planned_change() -> None:
    # Failure at 100 h (repair 8 h); the next bearing is age-replaced at 300 h of its
    # age, i.e. at 108 + 300 = 408 h (planned stop 4 h). Every cost at its own time.
    costs = Costs(planned_replacement=50.0, failure=1_000.0, downtime_per_hour=10.0,
                  discount_rate_per_year=RATE)
    sc = _one_unit(Policy("age", 300.0), Crews(None, Duration.fixed(4.0), Duration.fixed(8.0)),
                   costs, horizon=700.0)
    r = simulate(sc, 1, life_sampler=_lives(100.0, NEVER))
    assert r.counts["failures"] == 1 and r.counts["planned"] == 1
    d = math.log(1.08) / HOURS_PER_YEAR
    v = lambda t: math.exp(-d * t)  # noqa: E731
    assert r.costs["failure_labour"] == pytest.approx(1_050.0 * v(100.0), rel=1e-12)
    assert r.costs["planned_labour"] == pytest.approx(50.0 * v(412.0), rel=1e-12)  # end of work
    assert r.costs["parts"] == pytest.approx(200.0 * (v(100.0) + v(408.0)), rel=1e-12)
    down = (v(100.0) - v(108.0)) / d + (v(408.0) - v(412.0)) / d
    assert r.costs["downtime"] == pytest.approx(10.0 * down, rel=1e-9)
    undiscounted = simulate(dataclasses.replace(sc, costs=dataclasses.replace(
        costs, discount_rate_per_year=0.0)), 1, life_sampler=_lives(100.0, NEVER))
    assert undiscounted.costs["failure_labour"] == 1_050.0
    assert undiscounted.costs["downtime"] == pytest.approx(120.0)


def test_exact_present_value_of_holding_and_a_stop_running_past_the_horizon() -> None:
    # Two spares on the shelf all along: holding = rate · price · 2 · ∫ v dt / hours a year.
    # The failure at 990 h is still under repair (8 h) at the 995 h horizon.
    costs = Costs(downtime_per_hour=10.0, holding_rate_per_year=0.25,
                  discount_rate_per_year=RATE)
    stores = {B: Stock(3, 0, 3, Duration.fixed(10_000.0))}
    sc = _one_unit(Policy(), Crews(None, Duration.fixed(0.0), Duration.fixed(8.0)), costs,
                   stores, horizon=995.0)
    r = simulate(sc, 1, life_sampler=_lives(990.0))
    d = Discount(RATE)
    holding = 0.25 * 200.0 * (3 * d.integral(0.0, 990.0) + 2 * d.integral(990.0, 995.0))
    assert r.costs["holding"] == pytest.approx(holding / HOURS_PER_YEAR, rel=1e-10)
    assert r.costs["downtime"] == pytest.approx(10.0 * d.integral(990.0, 995.0), rel=1e-10)


@pytest.mark.parametrize("engine", ["des", "vector"])
def test_poisson_failures_against_the_closed_form(engine: str) -> None:
    # Exponential lives (Weibull shape 1) run to failure with instant repairs: each
    # position fails as a Poisson process of rate λ = 1/η, so the expected present value
    # of its failure costs over [0, H] is c λ (1 − e^(−δH)) / δ (the present value of a
    # Poisson stream of payments; Ross, Introduction to Probability Models, from memory).
    eta, n_units, horizon = 20_000.0, 50, 10 * HOURS_PER_YEAR
    life = LifeDistribution(shape=1.0, scale_h=eta)
    c_fail = 1_000.0
    sc = Scenario(
        study=Study("poisson", horizon, 1, 0),
        costs=Costs(planned_replacement=0.0, failure=c_fail, discount_rate_per_year=RATE),
        bearings={B: Bearing(B, "ball", 10_000.0, price=0.0)},
        machines=(Machine("P", n_units, 1.0, 0.0, (Position("a", B, life, Policy()),
                                                     Position("b", B, life, Policy()))),),
    )
    d = math.log(1.08) / HOURS_PER_YEAR
    expected = 2 * n_units * c_fail / eta * -math.expm1(-d * horizon) / d
    reps = 200
    x = np.array([replicate((sc, engine, horizon), replication_seed(5, i))["cost_failure"]
                  for i in range(reps)])
    se = x.std(ddof=1) / math.sqrt(reps)
    assert abs(x.mean() - expected) < 4 * se
    assert se < 0.02 * expected  # tight enough to see a wrong factor


@pytest.mark.parametrize("positions", [3, 1])
def test_engines_agree_on_discounted_costs(positions: int) -> None:
    # Three positions a unit step the vectorised lanes; one position a unit takes its
    # direct renewal sampler.
    life = LifeDistribution(shape=2.0, scale_h=15_000.0, location_h=500.0)
    pos = tuple(Position(f"p{j}", B, life, Policy("age", 12_000.0)) for j in range(positions))
    sc = Scenario(
        study=Study("agree", 8 * HOURS_PER_YEAR, 1, 0),
        costs=Costs(planned_replacement=300.0, failure=2_000.0, downtime_per_hour=40.0,
                    discount_rate_per_year=0.1),
        bearings={B: Bearing(B, "ball", 10_000.0, price=150.0)},
        machines=(Machine("P", 30, 0.8, 2_000.0, pos),),
        crews=Crews(None, Duration("exponential", 6.0), Duration("exponential", 12.0)),
    )
    reps = 120
    figures = ("cost_total", "cost_per_year", "cost_downtime", "cost_parts", "cost_failure",
               "cost_planned")
    res = {e: np.array([[replicate((sc, e, sc.study.horizon_h), replication_seed(9, i))[f]
                         for f in figures] for i in range(reps)]) for e in ("des", "vector")}
    a, b = res["des"], res["vector"]
    se = np.sqrt(a.var(axis=0, ddof=1) / reps + b.var(axis=0, ddof=1) / reps)
    assert np.all(np.abs(a.mean(axis=0) - b.mean(axis=0)) < 4 * se)
    undiscounted = dataclasses.replace(sc, costs=dataclasses.replace(sc.costs,
                                                                     discount_rate_per_year=0.0))
    u = np.array([replicate((undiscounted, "des", sc.study.horizon_h), replication_seed(9, i))
                  ["cost_total"] for i in range(20)])
    assert np.all(a[:20, 0] < u)  # discounting lowers every replication's total

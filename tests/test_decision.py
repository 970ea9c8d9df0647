"""The decision: view, baseline, sensitivity studies and intervals never reached."""

from __future__ import annotations

import dataclasses

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.study import run_study
from fleetsim.study.decision import decide, interval_never_reached, is_cost_input
from fleetsim.study.policy_view import run_policy_view

LIFE = LifeDistribution(shape=2.5, scale_h=10_000.0, location_h=2_000.0)


def fleet(policy: Policy, failure: float = 900.0, age_h: float = 0.0,
          horizon_h: float = 12_000.0) -> Scenario:
    return Scenario(
        study=Study("decision", horizon_h, 40, 5),
        costs=Costs(planned_replacement=100.0, failure=failure),
        bearings={"FB-1": Bearing("FB-1", "ball", 10_000.0)},
        machines=(Machine("M", 20, 1.0, age_h, (Position("p", "FB-1", LIFE, policy),)),),
    )


def both(variants: dict[str, Scenario]):
    budget = [run_study(sc, label=n, keep_events=False) for n, sc in variants.items()]
    policy = [run_policy_view(sc, label=n) for n, sc in variants.items()]
    return budget, policy


def test_cost_inputs_are_recognised() -> None:
    assert is_cost_input("costs.failure") and is_cost_input("costs")
    assert is_cost_input("bearing[WB-50].price")
    assert not is_cost_input("policy.interval") and not is_cost_input("stores.WB-50.order_up_to")


def test_an_interval_beyond_the_horizon_is_flagged() -> None:
    # 12,000 h horizon at full running: 20,000 h from new is never reached; 5,000 h is.
    assert interval_never_reached(fleet(Policy("age", interval_h=20_000.0)))
    assert not interval_never_reached(fleet(Policy("age", interval_h=5_000.0)))
    assert not interval_never_reached(fleet(Policy("age", interval_h=20_000.0), age_h=9_000.0))
    assert not interval_never_reached(fleet(Policy()))  # run to failure has no interval
    assert interval_never_reached(fleet(Policy("block", interval_h=12_000.0)))


def test_the_policy_view_decides_against_the_end_of_horizon_effect() -> None:
    # From new over half a characteristic life, the budget view rewards an
    # interval never reached (it defers every change past the horizon); the
    # long-run view prefers the closed-form optimum (about 4,500 h here).
    variants = {"age 4,500 h": fleet(Policy("age", interval_h=4_500.0), horizon_h=6_000.0),
                "age 20,000 h": fleet(Policy("age", interval_h=20_000.0), horizon_h=6_000.0)}
    budget, policy = both(variants)
    assert budget[1].figure("cost_per_year").mean() < budget[0].figure("cost_per_year").mean()
    d = decide(budget, policy=policy, baseline=1)
    assert d.view == "policy" and d.recommended == 0 and d.never_reached == (1,)
    doc = d.as_json()
    assert doc["baseline"] == "age 20,000 h"
    assert doc["recommended"]["variant"] == "age 4,500 h" and doc["recommended"]["view"] == "policy"
    assert doc["indistinguishable_from_best"] == ["age 4,500 h"]
    pv = d.variant_json(0)["policy_view"]["cost_per_year"]
    assert pv["ci_low"] <= pv["mean"] <= pv["ci_high"]
    assert any("never falls due" in line for line in d.lines())
    # Reliability over the horizon is a budget-view figure.
    assert decide(budget, policy=policy, objective="reliability").view == "budget"


def test_a_cost_sweep_is_a_sensitivity_study() -> None:
    names = {}
    for cost in (300.0, 3000.0):
        for t in (4_500.0, 20_000.0):
            names[f"costs.failure={cost:g}; policy.interval={t:g} h"] = (
                f"costs.failure={cost:g}", fleet(Policy("age", interval_h=t), failure=cost))
    budget, policy = both({n: sc for n, (_s, sc) in names.items()})
    d = decide(budget, policy=policy, sensitivity_keys=["costs.failure"],
               cost_settings=[s for s, _sc in names.values()])
    assert d.recommended is None and d.as_json()["recommended"]["variant"] is None
    assert [r.setting for r in d.sensitivity] == ["costs.failure=300", "costs.failure=3000"]
    assert d.lines()[0].startswith("Sensitivity study of costs.failure")
    # A dear failure favours replacing before it (the closed form says so too).
    assert d.labels[d.sensitivity[1].best].endswith("policy.interval=4500 h")


def test_availability_is_maximised() -> None:
    variants = {"rtf": dataclasses.replace(fleet(Policy())), "age": fleet(Policy("age", interval_h=4_500.0))}
    budget, policy = both(variants)
    d = decide(budget, policy=policy, objective="availability")
    assert d.view == "policy" and d.selection.minimise is False

"""Groups that hold planned work back: a planner does not take a k-out-of-n group down."""

from __future__ import annotations

import pytest

from fleetsim.errors import InputError
from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario import parse_scenario
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
from fleetsim.study import choose_engine

LIFE = LifeDistribution(1.5, 1e6)


def pumps(hold: bool) -> Scenario:
    pos = (Position("de", "B", LIFE, Policy("age", 1_000.0)),)
    return Scenario(
        Study("hold", 1_500.0, 1, 1), Costs(),
        {"B": Bearing("B", BearingType.BALL, 1e4)},
        (Machine("pump", 3, 1.0, 0.0, pos),),
        groups=(Group("station", ("pump",), 2, hold_planned_work=hold),),
        crews=Crews(None, Duration.fixed(10.0), Duration.fixed(10.0)),
    )


def never_fails(unit: str, position: str, k: int) -> float:
    return 1e9


def stops(result) -> list[tuple[float, str, str]]:  # type: ignore[no-untyped-def]
    return [(t, u, k) for t, u, _p, k in result.event_log() if k in ("stop", "up")]


def test_without_hold_the_three_age_replacements_take_the_station_down() -> None:
    r = simulate(pumps(False), 1, life_sampler=never_fails)
    assert stops(r) == [
        (1000.0, "pump#1", "stop"), (1000.0, "pump#2", "stop"), (1000.0, "pump#3", "stop"),
        (1010.0, "pump#1", "up"), (1010.0, "pump#2", "up"), (1010.0, "pump#3", "up"),
    ]
    station = r.groups.loc["station"]
    assert station["had_down"] and station["down_h"] == pytest.approx(10.0)


def test_with_hold_the_changes_follow_one_another_and_the_station_stays_up() -> None:
    r = simulate(pumps(True), 1, life_sampler=never_fails)
    assert stops(r) == [
        (1000.0, "pump#1", "stop"), (1010.0, "pump#1", "up"),
        (1010.0, "pump#2", "stop"), (1020.0, "pump#2", "up"),
        (1020.0, "pump#3", "stop"), (1030.0, "pump#3", "up"),
    ]
    assert not r.groups.loc["station"]["had_down"]
    assert r.counts["planned"] == 3


def test_hold_needs_the_discrete_event_engine_and_loads_from_toml() -> None:
    assert choose_engine(pumps(True))[0] == "des"
    with pytest.raises(InputError, match="--engine des"):
        choose_engine(pumps(True), "vector")
    text = """
[study]
horizon = "1 year"
[[bearing]]
id = "B"
type = "ball"
dynamic_rating = "30 kN"
[[machine]]
id = "pump"
count = 3
  [[machine.position]]
  id = "de"
  bearing = "B"
  radial_load = "2 kN"
  speed = "1500 rpm"
[[group]]
id = "station"
machines = ["pump"]
need = 2
hold_planned_work = true
"""
    assert parse_scenario(text).groups[0].hold_planned_work is True
    with pytest.raises(InputError, match="hold_planned_work: expected true or false"):
        parse_scenario(text.replace("hold_planned_work = true", 'hold_planned_work = "yes"'))

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


def test_a_member_failing_while_the_crew_is_on_its_way_holds_the_planned_stop_back() -> None:
    # One crew. fan (outside the station) fails at 90 h: the crew repairs it until 110 h.
    # pA's age change falls due at 100 h: the station can spare it, so it asks for the
    # crew and queues. pB fails at 105 h and waits for a spare (none on the shelf; the
    # order placed then arrives at 155 h). At 110 h the crew comes free for pA, but the
    # station now has pB down: stopping pA would take it down, so pA hands the crew back
    # and waits. pB is repaired 155–175 h; then pA's change goes ahead, 175–185 h.
    from fleetsim.scenario.model import Stock

    def unit(mid: str, bearing: str, policy: Policy) -> Machine:
        return Machine(mid, 1, 1.0, 0.0, (Position("de", bearing, LIFE, policy),))

    sc = Scenario(
        Study("hold", 280.0, 1, 1), Costs(),
        {"B": Bearing("B", BearingType.BALL, 1e4), "S": Bearing("S", BearingType.BALL, 1e4)},
        (unit("pA", "B", Policy("age", 100.0)), unit("pB", "S", Policy()),
         unit("pC", "B", Policy()), unit("fan", "B", Policy())),
        groups=(Group("station", ("pA", "pB", "pC"), 2, hold_planned_work=True),),
        stores={"S": Stock(0, -1, 1, Duration.fixed(50.0))},
        crews=Crews(1, Duration.fixed(10.0), Duration.fixed(20.0)),
    )
    first = {"fan": 90.0, "pB": 105.0}

    def lives(u: str, p: str, k: int) -> float:
        return first.get(u, 1e9) if k == 0 else 1e9

    r = simulate(sc, 1, life_sampler=lives)
    assert [(t, u, k) for t, u, _p, k in r.event_log() if k in ("failure", "stop", "work", "up")] == [
        (90.0, "fan", "failure"), (90.0, "fan", "work"),
        (105.0, "pB", "failure"),
        (110.0, "fan", "up"),
        (155.0, "pB", "work"), (175.0, "pB", "up"),
        (175.0, "pA", "stop"), (185.0, "pA", "up"),
    ]
    assert not r.groups.loc["station"]["had_down"]

"""The quiet units' process gives exactly what the general unit process gives.

:func:`fleetsim.sim.quiet.quiet_process` is a specialised copy of
:meth:`UnitRunner.run` for units nothing outside can wake, and
:func:`fleetsim.sim.quiet.step_quiet_fleet` steps a fleet of them without
SimPy. All three — the stepper, SimPy stepping the quiet processes, SimPy
stepping the general process — are run on the same fleets and seeds, drawn by
hypothesis over run-to-failure and age policies, opportunistic shares, fixed,
zero and random stop durations, starting ages, operating shares, groups and
discounted costs, and every event, count, cost and table must be equal, bit
for bit. The stepper also counts the events SimPy steps: an event budget stops
both at the same count.
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import fleetsim.sim.engine as engine
from fleetsim.life import LifeDistribution
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

B = "QB-1"
LIVES = (
    LifeDistribution(shape=1.5, scale_h=3_000.0, location_h=200.0),
    LifeDistribution(shape=3.0, scale_h=2_000.0),
    LifeDistribution(shape=0.9, scale_h=5_000.0),
)
DURATIONS = (
    Duration.fixed(0.0),
    Duration.fixed(8.0),
    Duration("exponential", 12.0),
    Duration("lognormal", 10.0, p90_h=30.0),
)


@st.composite
def quiet_fleets(draw: st.DrawFn) -> Scenario:
    machines = []
    for m in range(draw(st.integers(1, 3))):
        positions = []
        for j in range(draw(st.integers(1, 4))):
            kind = draw(st.sampled_from(["run-to-failure", "age"]))
            interval = draw(st.sampled_from([800.0, 1_500.0, 4_000.0])) if kind == "age" else None
            share = draw(st.sampled_from([None, 0.0, 0.5, 0.8])) if kind == "age" else None
            policy = Policy(kind, interval, opportunistic_share=share)
            positions.append(Position(f"p{j}", B, draw(st.sampled_from(LIVES)), policy))
        count = draw(st.integers(1, 4))
        operating = draw(st.sampled_from([1.0, 0.6, 0.0]))
        age = draw(st.sampled_from([0.0, 1_000.0, 3_500.0]))
        machines.append(Machine(f"M{m}", count, operating, age, tuple(positions)))
    groups = ()
    if draw(st.booleans()):
        units = [u for m in machines for u in m.unit_ids()]
        members = tuple(units[: max(1, len(units) // 2)])
        groups = (Group("g", members, draw(st.integers(1, len(members)))),)
    crews = Crews(None, draw(st.sampled_from(DURATIONS)), draw(st.sampled_from(DURATIONS)))
    return Scenario(
        study=Study("quiet", 20_000.0, 1, 0),
        costs=Costs(planned_replacement=100.0, failure=900.0, downtime_per_hour=20.0,
                    discount_rate_per_year=draw(st.sampled_from([0.0, 0.07]))),
        bearings={B: Bearing(B, "ball", 10_000.0, price=50.0)},
        machines=tuple(machines),
        groups=groups,
        crews=crews,
    )


def both(sc: Scenario, seed: int, monkeypatch: pytest.MonkeyPatch):  # type: ignore[no-untyped-def]
    """(the stepper's run, the general process's run), after checking that SimPy stepping
    the quiet processes gives the stepper's run."""
    fast = simulate(sc, seed)
    with monkeypatch.context() as m:
        m.setattr(engine, "QUIET_STEPPER", False)
        m.setattr(engine, "LEAN", False)  # SimPy itself
        assert_same(simulate(sc, seed), fast)
        m.setattr(engine, "QUIET_PROCESS", False)
        general = simulate(sc, seed)
    return fast, general


def assert_same(fast, general) -> None:  # type: ignore[no-untyped-def]
    assert fast.event_log() == general.event_log()
    assert fast.counts == general.counts
    assert fast.costs == general.costs
    assert fast.crew_busy_h == general.crew_busy_h
    for name in ("units", "positions", "spares", "groups"):
        assert fast.tables[name] == general.tables[name], name


@settings(max_examples=60, deadline=None)
@given(sc=quiet_fleets(), seed=st.integers(0, 2**32 - 1))
def test_quiet_process_matches_the_general_process(sc: Scenario, seed: int) -> None:
    with pytest.MonkeyPatch.context() as mp:
        fast, general = both(sc, seed, mp)
    assert_same(fast, general)


def test_the_comparison_sees_work(monkeypatch: pytest.MonkeyPatch) -> None:
    """A busy quiet fleet: failures, planned and opportunistic changes all happen."""
    pos = (
        Position("a", B, LIVES[0], Policy("age", 1_500.0, opportunistic_share=0.5)),
        Position("b", B, LIVES[1], Policy()),
        Position("c", B, LIVES[2], Policy("age", 4_000.0)),
    )
    sc = Scenario(
        study=Study("quiet", 50_000.0, 1, 0),
        costs=Costs(),
        bearings={B: Bearing(B, "ball", 10_000.0, price=50.0)},
        machines=(Machine("M", 5, 0.9, 1_000.0, pos),),
        crews=Crews(None, Duration("exponential", 6.0), Duration("lognormal", 10.0, p90_h=30.0)),
    )
    fast, general = both(sc, 7, monkeypatch)
    assert_same(fast, general)
    assert min(general.counts[k] for k in ("failures", "planned", "opportunistic")) > 10
    assert np.isfinite(general.costs["total"])


def test_tables_have_the_documented_columns() -> None:
    from fleetsim.sim.records import GROUP_COLUMNS, POSITION_COLUMNS, SPARE_COLUMNS, UNIT_COLUMNS

    sc = Scenario(
        study=Study("quiet", 5_000.0, 1, 0),
        costs=Costs(),
        bearings={B: Bearing(B, "ball", 10_000.0, price=50.0)},
        machines=(Machine("M", 2, 1.0, 0.0, (Position("a", B, LIVES[0], Policy()),)),),
    )
    r = simulate(sc, 3)
    for name, columns in (("units", UNIT_COLUMNS), ("positions", POSITION_COLUMNS),
                          ("spares", SPARE_COLUMNS), ("groups", GROUP_COLUMNS)):
        assert tuple(r.tables[name]) == columns, name
        assert len({len(col) for col in r.tables[name].values()}) == 1, name


@pytest.mark.parametrize("operating", [1.0, 0.0])
def test_the_stepper_and_simpy_stop_at_the_same_event_budget(
    operating: float, monkeypatch: pytest.MonkeyPatch
) -> None:
    """Each start, wake-up and end of a process counts, and the stop at the horizon: the
    smallest budget that lets a replication through is the same with and without SimPy
    (a fleet that never runs: every process ends at its start)."""
    from fleetsim.sim.budget import EventBudgetExceeded

    pos = (Position("a", B, LIVES[0], Policy()), Position("b", B, LIVES[1], Policy("age", 900.0)))
    sc = Scenario(
        study=Study("quiet", 8_000.0, 1, 0),
        costs=Costs(),
        bearings={B: Bearing(B, "ball", 10_000.0, price=50.0)},
        machines=(Machine("M", 3, operating, 0.0, pos),),
        crews=Crews(None, Duration.fixed(5.0), Duration.fixed(2.0)),
    )

    def least_budget(stepper: bool) -> int:
        with monkeypatch.context() as m:
            m.setattr(engine, "QUIET_STEPPER", stepper)
            m.setattr(engine, "LEAN", False)  # SimPy itself
            for limit in range(1, 400):
                m.setattr(engine, "event_budget", lambda *_, limit=limit: limit)
                try:
                    simulate(sc, 11)
                except EventBudgetExceeded:
                    continue
                return limit
        raise AssertionError("no budget up to 400 events let the replication through")

    least = least_budget(True)
    assert least == least_budget(False)
    assert least > 3 * 2 if operating else least == 3 * 2 + 1  # starts and ends, and the stop

"""The lean event loop gives SimPy's run, bit for bit.

:class:`fleetsim.sim.lean_env.LeanEnvironment` replaces ``simpy.Environment`` under the
discrete-event engine's unchanged processes. Its claim is SimPy's order of events
(time, then URGENT before NORMAL, then the order of scheduling) and SimPy's
``PriorityResource`` rules, so every replication must give the same event log,
counts, costs and tables as SimPy (the reference: ``simpy`` itself, run on the same
scenario and seed). The scenarios are the engine-identity matrix plus fleets only the
discrete-event engine runs (planned work under finite stores and crews, groups holding
planned work, spares ordered ahead), and hypothesis draws more with whole-hour stops,
intervals and lead times, so that many events fall on one instant and only the
tie-breaking rules decide their order.
"""

from __future__ import annotations

import dataclasses

import pytest
import simpy
from hypothesis import given, settings
from hypothesis import strategies as st

import fleetsim.sim.engine as engine
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
    Stock,
    Study,
)
from fleetsim.sim import simulate
from fleetsim.sim.lean_env import LeanEnvironment, LeanPriorityResource
from tests.test_engine_identity import AGED, CASES, MIXED, coupled
from tests.test_sim_quiet import assert_same  # every event, count, cost and table

# fleets only the discrete-event engine runs
DES_ONLY = {
    "coupled: mixed policies, stores and 2 crews": coupled((MIXED,)),
    "coupled: mixed policies, one crew, whole-hour stops": dataclasses.replace(
        coupled((MIXED, AGED), crews=1), crews=Crews(1, Duration.fixed(8.0), Duration.fixed(4.0))),
    "coupled: mixed policies, a group holding planned work back": coupled(
        (MIXED,), groups=(Group("held", ("mixed",), 5, hold_planned_work=True),)),
}
_ahead = coupled((MIXED,))
DES_ONLY["coupled: spares ordered ahead"] = dataclasses.replace(_ahead, stores={
    b: dataclasses.replace(s, order_ahead=True) for b, s in _ahead.stores.items()})


def runs(sc: Scenario, seed: int, monkeypatch: pytest.MonkeyPatch):  # type: ignore[no-untyped-def]
    """(the lean loop's run, SimPy's run) of ``sc`` with ``seed``."""
    lean = simulate(sc, seed)
    with monkeypatch.context() as m:
        m.setattr(engine, "LEAN", False)
        reference = simulate(sc, seed)
    return lean, reference


assert not set(CASES) & set(DES_ONLY)  # (one name each)


@pytest.mark.parametrize("name", sorted({**CASES, **DES_ONLY}))
def test_the_lean_loop_gives_simpys_run(name: str, monkeypatch: pytest.MonkeyPatch) -> None:
    sc = {**CASES, **DES_ONLY}[name]
    lean, reference = runs(sc, 20261204, monkeypatch)
    assert_same(lean, reference)
    assert len(reference.event_log()) > 50  # (the comparison sees work)


def test_the_des_only_fleets_wait_for_spares_and_crews(monkeypatch: pytest.MonkeyPatch) -> None:
    """The fleets above exercise the queues: stockouts, crew waits, planned work, and the
    orders ahead."""
    for name, sc in DES_ONLY.items():
        lean, _ = runs(sc, 5, monkeypatch)
        units = lean.tables["units"]
        assert lean.counts["planned"] > 0 and lean.counts["failures"] > 0, name
        assert lean.counts["stockouts"] > 0 or "ahead" in name, name
        if sc.crews.count is not None:
            assert sum(units["waiting_crew_h"]) > 0.0, name
    ahead = simulate(DES_ONLY["coupled: spares ordered ahead"], 5)
    assert any(kind == "order_ahead" for *_, kind in ahead.event_log())


LIFE = LifeDistribution(shape=1.8, scale_h=3_000.0, location_h=100.0)


@st.composite
def tied_fleets(draw: st.DrawFn) -> Scenario:
    """Small fleets whose events often share an instant: new bearings everywhere (every
    unit's age due at once), whole-hour stops, block and inspection dates, lead times."""
    policies = [
        Policy(),
        Policy("age", float(draw(st.sampled_from([600, 1_000, 2_000])))),
        Policy("block", float(draw(st.sampled_from([500, 1_500]))),
               block_scope=draw(st.sampled_from(["machine", "position"]))),
        Policy("condition", inspection_every_h=float(draw(st.sampled_from([100, 250]))),
               detection=0.8, respond_within_h=float(draw(st.sampled_from([0, 24])))),
    ]
    machines = []
    for m in range(draw(st.integers(1, 2))):
        n_pos = draw(st.integers(1, 3))
        positions = tuple(
            Position(f"p{j}", draw(st.sampled_from(["B1", "B2"])), LIFE,
                     draw(st.sampled_from(policies)),
                     pf_interval=Duration.fixed(300.0) if draw(st.booleans()) else None)
            for j in range(n_pos))
        machines.append(Machine(f"m{m}", draw(st.integers(1, 5)), 1.0, 0.0, positions))
    lead = Duration.fixed(float(draw(st.sampled_from([100, 400]))))
    stores = {b: Stock(initial=draw(st.integers(0, 3)), reorder_point=0, order_up_to=3,
                       lead_time=lead, order_ahead=draw(st.booleans()))
              for b in ("B1", "B2") if draw(st.booleans())}
    fixed = draw(st.sampled_from([0.0, 4.0, 8.0]))
    crews = Crews(draw(st.sampled_from([None, 1, 2])), Duration.fixed(fixed),
                  Duration.fixed(draw(st.sampled_from([0.0, 4.0]))))
    groups = ()
    if draw(st.booleans()):
        groups = (Group("g", tuple(m.id for m in machines),
                        max(1, sum(m.count for m in machines) - 1),
                        hold_planned_work=draw(st.booleans())),)
    return Scenario(
        Study("ties", 8_000.0, 1, 0),
        Costs(planned_replacement=100.0, failure=900.0, downtime_per_hour=10.0,
              inspection=5.0),
        {"B1": Bearing("B1", BearingType.BALL, 2e4, price=40.0),
         "B2": Bearing("B2", BearingType.ROLLER, 4e4, price=90.0)},
        tuple(machines), groups=groups, stores=stores, crews=crews)


@settings(max_examples=200, deadline=None)
@given(sc=tied_fleets(), seed=st.integers(0, 2**32 - 1))
def test_the_lean_loop_breaks_ties_as_simpy_does(sc: Scenario, seed: int) -> None:
    """(About three examples in four put events of several units on one instant, and
    over half of them are coupled by stores or crews: counted once, 300 examples.)"""
    with pytest.MonkeyPatch.context() as mp:
        lean, reference = runs(sc, seed, mp)
    assert_same(lean, reference)


def test_tied_fleets_do_tie() -> None:
    """The strategy's fleets put several events on one instant (else the test above
    would not test the tie-breaking): one of them, checked."""
    pos = (Position("a", "B1", LIFE, Policy("age", 1_000.0)), Position("b", "B1", LIFE, Policy()))
    sc = Scenario(Study("ties", 8_000.0, 1, 0), Costs(),
                  {"B1": Bearing("B1", BearingType.BALL, 2e4, price=40.0)},
                  (Machine("m", 5, 1.0, 0.0, pos),),
                  stores={"B1": Stock(1, 0, 3, Duration.fixed(100.0))},
                  crews=Crews(1, Duration.fixed(4.0), Duration.fixed(4.0)))
    units_at: dict[float, set[str]] = {}
    for t, unit, *_ in simulate(sc, 3).event_log():
        if unit:
            units_at.setdefault(t, set()).add(unit)
    assert max(len(u) for u in units_at.values()) >= 3  # three units' events at one instant


# --- the crews' resource against simpy.PriorityResource ------------------------------
@st.composite
def crew_scripts(draw: st.DrawFn) -> tuple[int, list[tuple[int, int, int, int]]]:
    """(capacity, jobs): each job asks at a whole hour with priority 0 or 1, then works
    some hours or gives up after some hours (withdrawing, granted or not)."""
    jobs = draw(st.lists(st.tuples(st.integers(0, 6), st.integers(0, 1), st.integers(0, 3),
                                   st.integers(0, 2)), min_size=1, max_size=12))
    return draw(st.integers(1, 3)), jobs


def crew_log(env, resource, jobs):  # type: ignore[no-untyped-def]
    log = []

    def job(i, at, priority, hours, give_up):  # type: ignore[no-untyped-def]
        yield env.timeout(at)
        req = resource.request(priority=priority)
        log.append((env.now, i, "ask", req.triggered))
        if give_up:
            yield env.timeout(give_up)
            log.append((env.now, i, "give up", req.triggered))
            if req.triggered:
                resource.release(req)
            else:
                req.cancel()
            return
        yield req
        log.append((env.now, i, "start"))
        yield env.timeout(hours)
        resource.release(req)
        log.append((env.now, i, "done"))

    for i, j in enumerate(jobs):
        env.process(job(i, *j))
    if isinstance(env, simpy.Environment):
        env.run(until=50.0)
    else:
        env.run_within(50.0, 10_000)
    return log


@settings(max_examples=200, deadline=None)
@given(script=crew_scripts())
def test_the_crews_resource_is_simpys_priority_resource(script) -> None:  # type: ignore[no-untyped-def]
    capacity, jobs = script
    env = simpy.Environment()
    expected = crew_log(env, simpy.PriorityResource(env, capacity), jobs)
    lean = LeanEnvironment()
    assert crew_log(lean, LeanPriorityResource(lean, capacity), jobs) == expected


def test_the_lean_loop_and_simpy_stop_at_the_same_event_budget(
        monkeypatch: pytest.MonkeyPatch) -> None:
    """Every event counts, the stop at the horizon too: the smallest budget that lets a
    replication through is the same with and without SimPy."""
    from fleetsim.sim.budget import EventBudgetExceeded

    sc = coupled((MIXED,), stops="fixed")

    def least_budget(lean: bool) -> int:
        with monkeypatch.context() as m:
            m.setattr(engine, "LEAN", lean)
            lo, hi = 1, 200_000  # bisection: passing is monotone in the budget
            while lo < hi:
                mid = (lo + hi) // 2
                m.setattr(engine, "event_budget", lambda *_, limit=mid: limit)
                try:
                    simulate(sc, 11)
                except EventBudgetExceeded:
                    lo = mid + 1
                else:
                    hi = mid
            return lo

    least = least_budget(True)
    assert 1_000 < least < 200_000
    assert least == least_budget(False)

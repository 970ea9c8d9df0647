"""The heap scan of a unit with many positions gives exactly the linear scan's run.

:class:`fleetsim.sim.scan_heap.PositionHeap` replaces the pass over every
position of a unit (``setup.scan``) by a heap of next events once a unit has
more than ``HEAP_SCAN_MIN`` positions. The same scenarios are run with the
threshold at 0 (every unit on the heap) and out of reach (every unit on the
linear pass); the event logs, counts, costs and tables must be equal, bit for
bit: mixed policies on one machine (run-to-failure, age, block with the skip
rule, condition with P-F intervals, opportunistic changes), starting ages,
groups, discounting, random stops, a finite store and a finite crew (the
general unit process), the quiet process, and one unit with 2,000 positions.
"""

from __future__ import annotations

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from test_engine_identity import CASES, MIXED, scenario
from test_sim_quiet import assert_same, quiet_fleets

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario.model import (
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
from fleetsim.sim import scan_heap, simulate
from fleetsim.sim.scan_heap import PositionHeap


def heap_and_linear(sc: Scenario, seed: int):  # type: ignore[no-untyped-def]
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(scan_heap, "HEAP_SCAN_MIN", 0)
        heap = simulate(sc, seed)
        mp.setattr(scan_heap, "HEAP_SCAN_MIN", 10**9)
        linear = simulate(sc, seed)
    return heap, linear

@pytest.mark.parametrize("name", list(CASES))
def test_heap_scan_gives_the_linear_scans_run(name: str) -> None:
    heap, linear = heap_and_linear(CASES[name], 11)
    assert_same(heap, linear)
    assert linear.counts["failures"] > 0

def test_heap_scan_with_a_finite_store_and_crew() -> None:
    """The general unit process: failures wait for spares and for the one crew."""
    base = scenario((MIXED,))
    sc = Scenario(
        base.study, base.costs, base.bearings, base.machines,
        stores={"B1": Stock(2, 0, 3, Duration.fixed(900.0))},
        crews=Crews(1, Duration("exponential", 20.0), Duration("lognormal", 6.0, p90_h=15.0)),
    )
    heap, linear = heap_and_linear(sc, 5)
    assert_same(heap, linear)
    assert linear.counts["failures"] > 10 and linear.counts["planned"] > 10

@settings(max_examples=25, deadline=None)
@given(sc=quiet_fleets(), seed=st.integers(0, 2**32 - 1))
def test_heap_scan_in_quiet_fleets(sc: Scenario, seed: int) -> None:
    heap, linear = heap_and_linear(sc, seed)
    assert_same(heap, linear)

def big_unit(positions: int) -> Scenario:
    life = LifeDistribution(shape=1.4, scale_h=30_000.0)
    pos = tuple(Position(f"p{j}", "B", life, Policy("age", 25_000.0) if j % 3 else Policy())
                for j in range(positions))
    return Scenario(
        Study("big", 40_000.0, 1, 0),
        Costs(planned_replacement=100.0, failure=900.0, downtime_per_hour=20.0),
        {"B": Bearing("B", BearingType.BALL, 10_000.0, price=50.0)},
        (Machine("one", 1, 1.0, 0.0, pos),),
        crews=Crews(None, Duration.fixed(4.0), Duration.fixed(2.0)),
    )

def test_one_unit_with_many_positions_scans_its_heap() -> None:
    sc = big_unit(2_000)
    heap, linear = heap_and_linear(sc, 3)
    assert_same(heap, linear)
    assert linear.counts["failures"] > 500
    # by default a unit this size is on the heap
    assert 2_000 > scan_heap.HEAP_SCAN_MIN

def test_outdated_entries_are_skipped() -> None:
    """A position fitted again before its old entry comes is not reported twice."""

    class P:  # the fields the heap reads
        def __init__(self, slot: int, fail: float) -> None:
            self.slot, self.ver, self.heap = slot, 0, None
            self.defect_seen, self.defect_op, self.fail_op, self.due_op = False, fail, fail, float("inf")

    ps = [P(0, 10.0), P(1, 20.0), P(2, 30.0)]
    h = PositionHeap(ps)  # type: ignore[arg-type]
    ps[0].defect_op = ps[0].fail_op = 25.0  # refitted: its entry at 10 is outdated
    h.push(ps[0])  # type: ignore[arg-type]
    failed, due, defects, nxt = h.scan(12.0)
    assert failed is None and due is None and defects is None and nxt == 20.0
    failed, _due, defects, nxt = h.scan(26.0)
    assert [p.slot for p in failed] == [0, 1] and [p.slot for p in defects] == [0, 1]  # type: ignore[union-attr]
    assert nxt == 30.0
    # still failed (not fitted since): reported again, in position order
    failed, _due, defects, nxt = h.scan(31.0)
    assert [p.slot for p in failed] == [0, 1, 2] and [p.slot for p in defects] == [2]  # type: ignore[union-attr]
    assert nxt == float("inf")


def _slots(xs: list | None) -> list[int] | None:  # type: ignore[type-arg]
    return None if xs is None else [p.slot for p in xs]


def _reference_scan(positions: list, clock: float) -> tuple:  # type: ignore[type-arg]
    """The scan's rule read literally from its docstring, on copies of the fields."""
    failed, due, defects, nxt = [], [], [], float("inf")
    for p in positions:
        if not p["seen"] and p["defect"] <= clock:
            p["seen"] = True
            defects.append(p["slot"])
        if p["fail"] <= clock:
            failed.append(p["slot"])
            continue
        if p["due"] <= clock:
            p["due"] = float("inf")
            due.append(p["slot"])
        nxt = min([nxt, p["fail"], p["due"]] + ([] if p["seen"] else [p["defect"]]))
    return failed or None, due or None, defects or None, nxt


@settings(max_examples=200, deadline=None)
@given(st.lists(st.tuples(st.sampled_from([0.0, 5.0, 10.0, 12.5]), st.sampled_from([0.0, 2.5]),
                          st.sampled_from([3.0, 10.0, 40.0, float("inf")]), st.booleans()),
                min_size=1, max_size=6),
       st.sampled_from([0.0, 5.0, 10.0, 11.0]))
def test_the_scan_passes_positions_by_their_next_event_exactly(
        rows: list[tuple[float, float, float, bool]], clock: float) -> None:
    """The linear scan, which passes a position whose next_op lies ahead in one
    comparison, gives what the rule gives position by position (failed, due and
    defects in position order, the next event's clock), and leaves every position
    not failed with next_op = min(unseen defect, failure, age due)."""
    from types import SimpleNamespace

    from fleetsim.sim.scan_heap import next_op
    from fleetsim.sim.setup import scan

    ps, refs = [], []
    for slot, (defect, pf, due, seen) in enumerate(rows):
        p = SimpleNamespace(slot=slot, defect_op=defect, fail_op=defect + pf, due_op=due,
                            defect_seen=seen and defect <= clock)
        p.next_op = next_op(p)
        ps.append(p)
        refs.append({"slot": slot, "defect": defect, "fail": defect + pf, "due": due,
                     "seen": p.defect_seen})
    failed, due, defects, nxt = scan(ps, clock)  # type: ignore[arg-type]
    assert (_slots(failed), _slots(due), _slots(defects), nxt) == _reference_scan(refs, clock)
    for p, r in zip(ps, refs, strict=True):
        assert (p.defect_seen, p.due_op) == (r["seen"], r["due"])
        if p.fail_op > clock:
            assert p.next_op == next_op(p)


def test_the_shared_filled_claim_of_unlimited_supply_is_never_changed() -> None:
    """Unlimited supply hands every request the one filled claim; after mixed policies
    (planned, opportunistic, condition responses) on unlimited spares it is unchanged."""
    from fleetsim.sim.stores import FILLED

    sc = CASES["mixed policies, random stops"]
    assert not sc.stores  # every bearing from unlimited supply
    res = simulate(sc, 3, keep_events=False)
    assert res.counts["failures"] > 0 and res.counts["planned"] > 0
    assert (FILLED.filled, FILLED.notify, FILLED.expedited, FILLED.ahead) == (True, None, False, None)

"""Exact event logs of the engine with fixed lifetimes (no randomness).

Every life comes from a ``life_sampler`` table and every duration is fixed,
so each log below is worked out by hand from the engine's documented rules
(see the comments) and pinned exactly.
"""

from __future__ import annotations

import numpy as np
import pytest

from fleetsim.errors import InputError
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
    Stock,
    Study,
)
from fleetsim.sim import simulate
from fleetsim.study.figures import figures_of

LIFE = LifeDistribution(shape=1.5, scale_h=10_000.0)  # unused when lives are tabled
NEVER = 1e12
B = "FB-1"


def pos(pid: str, policy: Policy | None = None, bearing: str = B,
        pf: Duration | None = None) -> Position:
    return Position(pid, bearing, LIFE, policy or Policy(), pf_interval=pf)


B2 = "FR-2"


def scenario(machines, *, stores=None, crews=None, groups=(), costs=None, horizon=500.0):
    return Scenario(
        study=Study("test", horizon, 1, 0),
        costs=costs or Costs(),
        bearings={B: Bearing(B, "ball", 10_000.0, price=100.0),
                  B2: Bearing(B2, "roller", 20_000.0, price=300.0)},
        machines=tuple(machines),
        groups=tuple(groups),
        stores=stores or {},
        crews=crews or Crews(),
    )


def lives(table):
    """life_sampler from {(unit, position): [life_0, life_1, ...]}; later lives never end."""

    def sampler(unit: str, position: str, k: int) -> float:
        seq = table.get((unit, position), [])
        return seq[k] if k < len(seq) else NEVER

    return sampler


def fixed(h: float) -> Duration:
    return Duration.fixed(h)


def test_failure_waits_for_the_replenishment_order() -> None:
    # Stock 1, (s, S) = (0, 1), lead 200 h; one crew, repair 8 h.
    sc = scenario(
        [Machine("P1", 1, 1.0, 0.0, (pos("de"),))],
        stores={B: Stock(1, 0, 1, fixed(200.0))},
        crews=Crews(1, fixed(4.0), fixed(8.0)),
        costs=Costs(planned_replacement=50.0, failure=1000.0, downtime_per_hour=10.0,
                    holding_rate_per_year=0.25),
    )
    r = simulate(sc, 1, life_sampler=lives({("P1", "de"): [100.0, 50.0]}))
    assert r.event_log() == [
        # t=100: the spare on the shelf is issued; position 0 <= s: order S − 0 = 1 (arrives 300)
        (100.0, "P1", "de", "failure"),
        (100.0, "", B, "order"),
        (100.0, "P1", "", "work"),
        (108.0, "P1", "de", "corrective"),
        (108.0, "P1", "", "up"),
        # second life 50 h: fails at 158 with an empty shelf; position 0 + 1 − 1 = 0: order 1
        (158.0, "P1", "de", "failure"),
        (158.0, "P1", "de", "stockout"),
        (158.0, "", B, "order"),
        (300.0, "", B, "delivery"),  # first order arrives: goes to the waiting failure
        (300.0, "P1", "", "work"),
        (308.0, "P1", "de", "corrective"),
        (308.0, "P1", "", "up"),
        (358.0, "", B, "delivery"),
    ]
    u = r.units.loc["P1"]
    assert u["waiting_spare_h"] == 142.0
    assert u["waiting_crew_h"] == 0.0
    assert u["repair_h"] == 16.0
    assert u["planned_h"] == 0.0
    assert u["down_h"] == 158.0
    assert u["availability"] == pytest.approx((500.0 - 158.0) / 500.0)
    assert u["operating_h"] == pytest.approx(342.0)
    s = r.spares.loc[B]
    assert (s["demands"], s["issued"], s["stockouts"], s["orders"]) == (2, 2, 1, 2)
    assert s["fill_rate"] == 0.5
    # On hand: 1 on [0, 100), 0 on [100, 358), 1 on [358, 500).
    assert s["mean_on_hand"] == pytest.approx((100.0 + 142.0) / 500.0)
    assert r.counts["failures"] == 2 and r.counts["stockouts"] == 1
    years = 500.0 / 8766.0
    assert r.costs["failure_labour"] == 2 * (50.0 + 1000.0)
    assert r.costs["parts"] == 200.0
    assert r.costs["downtime"] == 158.0 * 10.0
    assert r.costs["holding"] == pytest.approx(0.25 * 100.0 * (242.0 / 500.0) * years)
    assert r.costs["total"] == pytest.approx(sum(v for k, v in r.costs.items() if k != "total"))
    # The study's figures (the one reduction of the tally) agree with the tables.
    assert r.tally is not None
    f = figures_of(r.tally, sc)
    assert f["failures"] == 2.0 and f["stockouts"] == 1.0
    assert f["downtime_spares_h"] == 142.0 and f["downtime_h"] == 158.0
    assert f["availability:P1"] == pytest.approx(342.0 / 500.0) == f["availability"]
    assert f["fill_rate:FB-1"] == 0.5 and f["spares_issued:FB-1"] == 2.0
    assert f["cost_total"] == pytest.approx(r.costs["total"])
    assert f["fleet_down"] == 1.0 and f["fleet_first_down_h"] == 100.0


def test_crew_queue_first_come_first_served_but_failures_first() -> None:
    # One crew. A#1 fails at 100 (repair 10 h → 110). B's age replacement falls due
    # at 102 and queues (planned, B keeps running). A#2 fails at 105 and goes
    # before B (failures first): crew 110 → 120. B stops at 120, planned 4 h.
    sc = scenario(
        [
            Machine("A", 2, 1.0, 0.0, (pos("p"),)),
            Machine("B", 1, 1.0, 0.0, (pos("p", Policy("age", interval_h=102.0)),)),
        ],
        crews=Crews(1, fixed(4.0), fixed(10.0)),
        horizon=200.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("A#1", "p"): [100.0], ("A#2", "p"): [105.0]}))
    assert r.event_log() == [
        (100.0, "A#1", "p", "failure"),
        (100.0, "A#1", "", "work"),
        (105.0, "A#2", "p", "failure"),
        (110.0, "A#1", "p", "corrective"),
        (110.0, "A#1", "", "up"),
        (110.0, "A#2", "", "work"),
        (120.0, "A#2", "p", "corrective"),
        (120.0, "A#2", "", "up"),
        (120.0, "B", "", "stop"),
        (124.0, "B", "p", "planned"),
        (124.0, "B", "", "up"),
    ]
    assert r.units.loc["A#2", "waiting_crew_h"] == 5.0
    assert r.units.loc["A#2", "repair_h"] == 10.0
    assert r.units.loc["B", "planned_h"] == 4.0
    assert r.units.loc["B", "waiting_crew_h"] == 0.0  # B ran while its job queued
    assert r.crew_busy_h == 24.0


def test_emergency_order_serves_the_failure_that_placed_it() -> None:
    # Shelf empty, (s, S) = (0, 1): the start-up review orders 1 (lead 500 h).
    # The failure at 100 finds no spare: one emergency order (24 h, premium 1000),
    # counted in the inventory position, so no second normal order.
    sc = scenario(
        [Machine("P1", 1, 1.0, 0.0, (pos("de"),))],
        stores={B: Stock(0, 0, 1, fixed(500.0), fixed(24.0), 1000.0)},
        crews=Crews(None, fixed(4.0), fixed(8.0)),
        horizon=700.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("P1", "de"): [100.0]}))
    assert r.event_log() == [
        (0.0, "", B, "order"),
        (100.0, "P1", "de", "failure"),
        (100.0, "P1", "de", "stockout"),
        (100.0, "P1", "de", "emergency_order"),
        (124.0, "", B, "delivery"),
        (124.0, "P1", "", "work"),
        (132.0, "P1", "de", "corrective"),
        (132.0, "P1", "", "up"),
        (500.0, "", B, "delivery"),
    ]
    assert r.units.loc["P1", "waiting_spare_h"] == 24.0
    assert r.spares.loc[B, "emergency_orders"] == 1
    assert r.spares.loc[B, "orders"] == 1
    assert r.costs["emergency"] == 1000.0
    assert r.counts["emergency_orders"] == 1


def test_age_replacement_at_the_interval_in_operating_hours() -> None:
    # Operating share 0.5: position a (age 100 h) is due at clock 100 = t 200.
    # b runs to failure at clock 130: the unit restarts at t 204 at clock 100,
    # so b fails at 204 + 30/0.5 = 264; repair 10 h. a is next due at clock 200:
    # 274 + (200 − 130)/0.5 = 414.
    sc = scenario(
        [Machine("U", 1, 0.5, 0.0, (pos("a", Policy("age", interval_h=100.0)), pos("b")))],
        crews=Crews(None, fixed(4.0), fixed(10.0)),
        costs=Costs(planned_replacement=50.0, failure=1000.0),
        horizon=450.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("U", "b"): [130.0]}))
    assert r.event_log() == [
        (200.0, "U", "", "stop"),
        (204.0, "U", "a", "planned"),
        (204.0, "U", "", "up"),
        (264.0, "U", "b", "failure"),
        (264.0, "U", "", "work"),
        (274.0, "U", "b", "corrective"),
        (274.0, "U", "", "up"),
        (414.0, "U", "", "stop"),
        (418.0, "U", "a", "planned"),
        (418.0, "U", "", "up"),
    ]
    u = r.units.loc["U"]
    assert (u["planned_h"], u["repair_h"], u["down_h"]) == (8.0, 10.0, 18.0)
    assert u["operating_h"] == pytest.approx(0.5 * (450.0 - 18.0))
    ages = r.positions["age_end_h"]
    assert ages.loc[("U", "a")] == pytest.approx(216.0 - 200.0)
    assert ages.loc[("U", "b")] == pytest.approx(216.0 - 130.0)
    assert r.costs["planned_labour"] == 2 * 50.0
    assert r.costs["failure_labour"] == 1050.0
    assert r.costs["parts"] == 3 * 100.0


def test_starting_age_counts_towards_the_age_interval() -> None:
    sc = scenario(
        [Machine("U", 1, 1.0, 60.0, (pos("a", Policy("age", interval_h=100.0)),))],
        horizon=150.0,
    )
    r = simulate(sc, 1, life_sampler=lives({}))
    assert r.event_log() == [
        (40.0, "U", "", "stop"),
        (40.0, "U", "a", "planned"),
        (40.0, "U", "", "up"),
        (140.0, "U", "", "stop"),
        (140.0, "U", "a", "planned"),
        (140.0, "U", "", "up"),
    ]


def test_block_replacement_changes_all_block_positions_of_the_unit() -> None:
    # a, b on a 300 h machine-wide block; c runs to failure. b fails at 250 and is
    # changed (repair 10 h); the block at 300 still changes a and b (blind to age).
    machine = Machine(
        "U", 1, 1.0, 0.0,
        (pos("a", Policy("block", interval_h=300.0)), pos("b", Policy("block", interval_h=300.0)),
         pos("c")),
    )  # fmt: skip
    sc = scenario([machine], crews=Crews(None, fixed(5.0), fixed(10.0)), horizon=550.0)
    r = simulate(sc, 1, life_sampler=lives({("U", "b"): [250.0]}))
    assert r.event_log() == [
        (250.0, "U", "b", "failure"),
        (250.0, "U", "", "work"),
        (260.0, "U", "b", "corrective"),
        (260.0, "U", "", "up"),
        (300.0, "U", "", "stop"),
        (305.0, "U", "a", "planned"),
        (305.0, "U", "b", "planned"),
        (305.0, "U", "", "up"),
    ]
    assert r.counts["planned"] == 2 and r.counts["failures"] == 1
    assert r.units.loc["U", "stops"] == 2


def test_block_per_position_keeps_separate_calendars() -> None:
    machine = Machine(
        "U", 1, 1.0, 0.0,
        (pos("a", Policy("block", interval_h=200.0, block_scope="position")),
         pos("b", Policy("block", interval_h=300.0, block_scope="position"))),
    )  # fmt: skip
    sc = scenario([machine], crews=Crews(None, fixed(5.0), fixed(10.0)), horizon=650.0)
    log = simulate(sc, 1, life_sampler=lives({})).event_log()
    planned = [(t, p) for t, _u, p, k in log if k == "planned"]
    assert planned == [(205.0, "a"), (305.0, "b"), (405.0, "a"), (605.0, "a"), (605.0, "b")]


def test_planned_job_waits_for_its_spare_while_the_unit_runs() -> None:
    # Age due at 100 with an empty shelf: the job waits for the delivery at 150
    # (the unit keeps running, no downtime), then stops.
    sc = scenario(
        [Machine("U", 1, 1.0, 0.0, (pos("a", Policy("age", interval_h=100.0)),))],
        stores={B: Stock(0, -1, 0, fixed(50.0))},
        crews=Crews(None, fixed(4.0), fixed(8.0)),
        horizon=200.0,
    )
    r = simulate(sc, 1, life_sampler=lives({}))
    assert r.event_log() == [
        (100.0, "U", "a", "stockout"),
        (100.0, "", B, "order"),
        (150.0, "", B, "delivery"),
        (150.0, "U", "", "stop"),
        (154.0, "U", "a", "planned"),
        (154.0, "U", "", "up"),
    ]
    assert r.units.loc["U", "waiting_spare_h"] == 0.0
    assert r.units.loc["U", "planned_h"] == 4.0


def test_queued_planned_job_does_not_hold_the_crew_for_a_late_spare() -> None:
    # One crew, busy on X from 90 to 140. U's position a falls due at 100 (spare on
    # hand) and queues for the crew; b (bearing FR-2, empty shelf, lead 100 h) falls
    # due at 110. At 140 the crew does a only; b follows when its spare arrives.
    sc = scenario(
        [
            Machine("X", 1, 1.0, 0.0, (pos("p"),)),
            Machine("U", 1, 1.0, 0.0, (pos("a", Policy("age", interval_h=100.0)),
                                       pos("b", Policy("age", interval_h=110.0), bearing=B2))),
        ],
        stores={B2: Stock(0, -1, 0, fixed(100.0))},
        crews=Crews(1, fixed(4.0), fixed(50.0)),
        horizon=230.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("X", "p"): [90.0]}))
    assert r.event_log() == [
        (90.0, "X", "p", "failure"),
        (90.0, "X", "", "work"),
        (110.0, "U", "b", "stockout"),
        (110.0, "", B2, "order"),
        (140.0, "X", "p", "corrective"),
        (140.0, "X", "", "up"),
        (140.0, "U", "", "stop"),
        (144.0, "U", "a", "planned"),
        (144.0, "U", "", "up"),
        (210.0, "", B2, "delivery"),
        (210.0, "U", "", "stop"),
        (214.0, "U", "b", "planned"),
        (214.0, "U", "", "up"),
    ]


def test_failure_while_planned_job_waits_takes_its_spare_request() -> None:
    # Age due at 100, shelf empty, order (lead 50) arrives 150; the bearing fails
    # at 120 (operating age 120): the failure takes over the waiting request
    # (no second demand) and waits for the same delivery.
    sc = scenario(
        [Machine("U", 1, 1.0, 0.0, (pos("a", Policy("age", interval_h=100.0)),))],
        stores={B: Stock(0, -1, 0, fixed(50.0))},
        crews=Crews(None, fixed(4.0), fixed(8.0)),
        horizon=200.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("U", "a"): [120.0]}))
    assert r.event_log() == [
        (100.0, "U", "a", "stockout"),
        (100.0, "", B, "order"),
        (120.0, "U", "a", "failure"),
        (150.0, "", B, "delivery"),
        (150.0, "U", "", "work"),
        (158.0, "U", "a", "corrective"),
        (158.0, "U", "", "up"),
    ]
    assert r.spares.loc[B, "demands"] == 1
    assert r.units.loc["U", "waiting_spare_h"] == 30.0
    assert r.counts["planned"] == 0


def test_detection_schedules_replacement_and_opportunistic_sibling() -> None:
    # de: condition monitoring every 100 h, P-F 150 h, perfect detection, respond
    # within 24 h. Its defect appears at 250 (failure would be at 400); the
    # inspection at 300 finds it; the stop at 324 also changes nde, whose age
    # (324 h) is beyond 0.5 × 400 h.
    cond = Policy("condition", inspection_every_h=100.0, detection=1.0, respond_within_h=24.0)
    opp = Policy("age", interval_h=400.0, opportunistic_share=0.5)
    sc = scenario(
        [Machine("U", 1, 1.0, 0.0, (pos("de", cond, pf=fixed(150.0)), pos("nde", opp)))],
        crews=Crews(1, fixed(6.0), fixed(10.0)),
        costs=Costs(inspection=20.0, planned_replacement=50.0),
        horizon=450.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("U", "de"): [250.0]}))
    assert r.event_log() == [
        (100.0, "U", "", "inspection"),
        (200.0, "U", "", "inspection"),
        (250.0, "U", "de", "defect"),
        (300.0, "U", "", "inspection"),
        (300.0, "U", "de", "detection"),
        (324.0, "U", "", "stop"),
        (330.0, "U", "de", "planned"),
        (330.0, "U", "nde", "opportunistic"),
        (330.0, "U", "", "up"),
        (400.0, "U", "", "inspection"),
    ]
    c = r.counts
    assert (c["inspections"], c["detections"], c["planned"], c["opportunistic"]) == (4, 1, 1, 1)
    assert (c["failures"], c["missed_defects"], c["defects"]) == (0, 0, 1)
    assert r.costs["inspection"] == 80.0
    assert r.costs["planned_labour"] == 100.0


def test_missed_defect_and_failure_after_detection() -> None:
    # Detection probability 0: the defect at 250 fails at 400 unseen. With a long
    # response (200 h) and perfect detection, it is found at 300 and fails at 400
    # before the planned change at 500.
    for detection, respond, missed, after in ((0.0, 24.0, 1, 0), (1.0, 200.0, 0, 1)):
        cond = Policy("condition", inspection_every_h=100.0, detection=detection,
                      respond_within_h=respond)
        sc = scenario([Machine("U", 1, 1.0, 0.0, (pos("de", cond, pf=fixed(150.0)),))],
                      crews=Crews(1, fixed(6.0), fixed(10.0)), horizon=450.0)
        r = simulate(sc, 1, life_sampler=lives({("U", "de"): [250.0]}))
        c = r.counts
        assert (c["failures"], c["missed_defects"], c["failures_after_detection"]) == (1, missed, after)
        assert c["planned"] == 0
        assert (400.0, "U", "de", "failure") in r.event_log()


def test_group_down_time_and_first_down_event() -> None:
    # 2-out-of-3 group. G#1 fails at 100 (repair 50 h → 150), G#2 at 120 (→ 170):
    # the group is down from 120 to 150; the fleet follows the group.
    sc = scenario(
        [Machine("G", 3, 1.0, 0.0, (pos("p"),)), Machine("X", 1, 1.0, 0.0, (pos("p"),))],
        groups=[Group("duty", ("G",), 2)],
        crews=Crews(None, fixed(5.0), fixed(50.0)),
        horizon=300.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("G#1", "p"): [100.0], ("G#2", "p"): [120.0],
                                            ("X", "p"): [10.0]}))
    g = r.groups
    assert g.loc["duty", "down_h"] == 30.0
    assert g.loc["duty", "down_events"] == 1
    assert g.loc["duty", "first_down_h"] == 120.0
    assert bool(g.loc["fleet", "had_down"]) and g.loc["fleet", "first_down_h"] == 120.0
    assert g.loc["fleet", "down_h"] == 30.0
    # Without groups the fleet is down whenever any unit is: X at 10–60, G#1 100–170.
    r2 = simulate(scenario(list(sc.machines), crews=sc.crews, horizon=300.0), 1,
                  life_sampler=lives({("G#1", "p"): [100.0], ("G#2", "p"): [120.0],
                                      ("X", "p"): [10.0]}))
    assert r2.groups.loc["fleet", "first_down_h"] == 10.0
    assert r2.groups.loc["fleet", "down_h"] == 50.0 + 70.0
    assert r2.groups.loc["fleet", "down_events"] == 2


def test_stop_in_progress_at_the_horizon_is_counted_up_to_the_horizon() -> None:
    sc = scenario([Machine("U", 1, 1.0, 0.0, (pos("p"),))],
                  crews=Crews(None, fixed(5.0), fixed(100.0)), horizon=150.0)
    r = simulate(sc, 1, life_sampler=lives({("U", "p"): [100.0]}))
    assert r.units.loc["U", "repair_h"] == 50.0
    assert r.units.loc["U", "availability"] == pytest.approx(100.0 / 150.0)


def test_same_seed_same_result_and_seed_not_consumed() -> None:
    life = LifeDistribution(shape=1.5, scale_h=300.0)
    m = Machine("U", 3, 0.8, 50.0, (Position("a", B, life, Policy("age", interval_h=250.0)),
                                    Position("b", B, life, Policy())))
    sc = scenario([m], stores={B: Stock(2, 1, 3, Duration("exponential", 60.0))},
                  crews=Crews(1, Duration("exponential", 5.0), Duration("lognormal", 8.0, 20.0)),
                  horizon=5000.0)
    seed = np.random.SeedSequence(1234)
    a = simulate(sc, seed)
    b = simulate(sc, seed)
    assert a.event_log() == b.event_log() and len(a.event_log()) > 50
    assert a.costs == b.costs
    c = simulate(sc, np.random.SeedSequence(1235))
    assert c.event_log() != a.event_log()
    quiet = simulate(sc, seed, keep_events=False)
    assert quiet.events.empty and quiet.counts == a.counts


def test_bad_scenarios_raise_input_error() -> None:
    with pytest.raises(InputError, match="interval"):
        simulate(scenario([Machine("U", 1, 1.0, 0.0, (pos("a", Policy("age")),))]), 1)
    with pytest.raises(InputError, match="need"):
        simulate(scenario([Machine("U", 2, 1.0, 0.0, (pos("a"),))],
                          groups=[Group("g", ("U",), 3)]), 1)
    with pytest.raises(InputError, match="bearing"):
        simulate(scenario([Machine("U", 1, 1.0, 0.0, (pos("a", bearing="nope"),))]), 1)
    with pytest.raises(InputError, match="horizon"):
        simulate(scenario([Machine("U", 1, 1.0, 0.0, (pos("a"),))]), 1, horizon_h=-1.0)


def test_block_opportunistic_on_the_calendar_clock_and_the_modified_block_rule() -> None:
    """Block replacement every 1000 h (calendar) with opportunistic share 0.5 and the
    modified block rule "skip positions fitted less than 500 h before" (Berg & Epstein
    1976, from memory), on a machine running half the time.

    b fails at 300 operating hours = calendar 600. In that stop a's *calendar* age
    (600 h) has reached 0.5 × 1000 h, so a is changed opportunistically (its operating
    age, 300 h, would not have reached it: the old mixed-clock rule never fired on
    such a machine). At the block date 1000 a is 390 h old (fitted at 610): younger
    than 500 h, so it is skipped and no stop is made; at 2000 it is changed.
    """
    blk = Policy("block", 1_000.0, opportunistic_share=0.5, skip_younger_than_h=500.0)
    sc = scenario(
        [Machine("U", 1, 0.5, 0.0, (pos("a", blk), pos("b")))],
        crews=Crews(None, fixed(4.0), fixed(10.0)),
        costs=Costs(planned_replacement=50.0),
        horizon=2_500.0,
    )
    r = simulate(sc, 1, life_sampler=lives({("U", "b"): [300.0]}))
    assert r.event_log() == [
        (600.0, "U", "b", "failure"),
        (600.0, "U", "", "work"),
        (610.0, "U", "b", "corrective"),
        (610.0, "U", "a", "opportunistic"),
        (610.0, "U", "", "up"),
        (2_000.0, "U", "", "stop"),
        (2_004.0, "U", "a", "planned"),
        (2_004.0, "U", "", "up"),
    ]
    assert (r.counts["planned"], r.counts["opportunistic"]) == (1, 1)
    # Without the skip rule the block date at 1000 changes a again, 390 h after fitting.
    plain = scenario(
        [Machine("U", 1, 0.5, 0.0, (pos("a", Policy("block", 1_000.0, opportunistic_share=0.5)),
                                    pos("b")))],
        crews=Crews(None, fixed(4.0), fixed(10.0)), horizon=2_500.0,
    )
    r = simulate(plain, 1, life_sampler=lives({("U", "b"): [300.0]}))
    assert [e for e in r.event_log() if e[3] == "planned"] == [
        (1_004.0, "U", "a", "planned"), (2_004.0, "U", "a", "planned")]


def test_a_block_date_during_a_stop_does_not_ask_again_for_what_the_stop_changes() -> None:
    """Block date 1000 falls inside the repair of a failure at 995 (10 h): a, changed
    opportunistically in that stop, is not requested again (no second spare, no
    second stop); the unlimited store issues exactly two spares."""
    blk = Policy("block", 1_000.0, opportunistic_share=0.5)
    sc = scenario([Machine("U", 1, 1.0, 0.0, (pos("a", blk), pos("b")))],
                  crews=Crews(None, fixed(4.0), fixed(10.0)), horizon=1_500.0)
    r = simulate(sc, 1, life_sampler=lives({("U", "b"): [995.0]}))
    assert [e for e in r.event_log() if e[2] == "a"] == [(1_005.0, "U", "a", "opportunistic")]
    assert r.spares.loc[B, "issued"] == 2
    assert r.counts["planned"] == 0


def test_downtime_is_charged_per_operating_hour_lost_and_group_down_per_hour() -> None:
    """A unit running 40 % of the time, down 10 h, loses 4 operating hours; a 1-of-1
    group over it is down those 10 calendar hours at its own rate."""
    sc = Scenario(
        study=Study("test", 500.0, 1, 0),
        costs=Costs(downtime_per_hour=100.0),
        bearings={B: Bearing(B, "ball", 10_000.0)},
        machines=(Machine("U", 1, 0.4, 0.0, (pos("a"),)),),
        groups=(Group("g", ("U",), 1, downtime_per_hour=1_000.0),),
        crews=Crews(None, fixed(0.0), fixed(10.0)),
    )
    r = simulate(sc, 1, life_sampler=lives({("U", "a"): [40.0]}))  # fails at calendar 100
    assert r.units.loc["U", "down_h"] == 10.0
    assert r.costs["downtime"] == pytest.approx(100.0 * 0.4 * 10.0)
    assert r.costs["group_downtime"] == pytest.approx(1_000.0 * 10.0)
    assert r.tally is not None
    f = figures_of(r.tally, sc)
    assert f["lost_operating_h"] == pytest.approx(4.0)
    assert f["cost_group_downtime"] == pytest.approx(10_000.0)
    assert f["cost_total"] == pytest.approx(400.0 + 10_000.0)


def _ordered_ahead(ahead: bool, lead_h: float, policy: Policy, horizon: float,
                   table: dict | None = None, share: float = 1.0) -> object:
    machine = Machine("U", 1, share, 0.0, (pos("a", policy), pos("b", policy)))
    sc = scenario([machine], stores={B: Stock(0, -1, 0, fixed(lead_h), order_ahead=ahead)},
                  crews=Crews(None, fixed(5.0), fixed(10.0)), horizon=horizon)
    return simulate(sc, 1, life_sampler=lives(table or {}))


def test_order_ahead_block_change_never_waits_when_the_lead_time_is_shorter_than_the_notice() -> None:
    # Block every 300 h, nothing stocked, lead 50 h < the 300 h notice (the next date is
    # known as soon as the previous one passes). Ordered at 300 − 50 = 250, the spares arrive
    # at 300, in time (an arrival at the due moment counts as in time): no stock-out.
    block = Policy("block", interval_h=300.0)
    r = _ordered_ahead(True, 50.0, block, 650.0)
    assert r.event_log() == [
        (250.0, "U", "a", "order_ahead"),
        (250.0, "U", "b", "order_ahead"),
        (300.0, "", B, "delivery"),
        (300.0, "", B, "delivery"),
        (300.0, "U", "", "stop"),
        (305.0, "U", "a", "planned"),
        (305.0, "U", "b", "planned"),
        (305.0, "U", "", "up"),
        (550.0, "U", "a", "order_ahead"),
        (550.0, "U", "b", "order_ahead"),
        (600.0, "", B, "delivery"),
        (600.0, "", B, "delivery"),
        (600.0, "U", "", "stop"),
        (605.0, "U", "a", "planned"),
        (605.0, "U", "b", "planned"),
        (605.0, "U", "", "up"),
    ]
    s = r.spares.loc[B]
    assert (s["demands"], s["issued"], s["stockouts"], s["fill_rate"]) == (4, 4, 0, 1.0)
    assert s["mean_on_hand"] == 0.0  # each spare arrives as its change falls due
    # Without ordering ahead the same block dates find the shelf empty and wait 50 h.
    r = _ordered_ahead(False, 50.0, block, 650.0)
    assert r.event_log()[:10] == [
        (300.0, "U", "a", "stockout"),
        (300.0, "", B, "order"),
        (300.0, "U", "b", "stockout"),
        (300.0, "", B, "order"),
        (350.0, "", B, "delivery"),
        (350.0, "", B, "delivery"),
        (350.0, "U", "", "stop"),
        (355.0, "U", "a", "planned"),
        (355.0, "U", "b", "planned"),
        (355.0, "U", "", "up"),
    ]
    assert r.spares.loc[B, "stockouts"] == 4  # the block at 600 waits too (spares at 650)


def test_order_ahead_with_a_lead_time_longer_than_the_notice_is_late() -> None:
    # Lead 400 h > the 300 h notice: ordered at once (t = 0), arrives at 400; the block
    # change at 300 is a stock-out and waits for its own spare.
    r = _ordered_ahead(True, 400.0, Policy("block", interval_h=300.0), 500.0)
    assert r.event_log() == [
        (0.0, "U", "a", "order_ahead"),
        (0.0, "U", "b", "order_ahead"),
        (300.0, "U", "a", "stockout"),
        (300.0, "U", "b", "stockout"),
        (300.0, "U", "a", "order_ahead"),  # the next date (600) is announced at once
        (300.0, "U", "b", "order_ahead"),
        (400.0, "", B, "delivery"),
        (400.0, "", B, "delivery"),
        (400.0, "U", "", "stop"),
        (405.0, "U", "a", "planned"),
        (405.0, "U", "b", "planned"),
        (405.0, "U", "", "up"),
    ]


def test_order_ahead_for_age_dues_and_a_failure_frees_the_spare_kept_for_it() -> None:
    # Age 200 h, lead 50 h, operating share 1: both dues are announced at the start
    # (orders at 150). Position a fails at 120 (nothing on the shelf: ordered, here at 170,
    # repair to 180). At its renewal a's kept spare is freed (it arrives at 200 into the free
    # stock) and its new due is announced: clock 120 at 180, due at operating hour 320 →
    # calendar 380 if the unit runs on, ordered at 330. b's due, delayed by a's 60 h stop,
    # falls at 260: its spare has waited on the shelf since 200. b is then due at operating
    # hour 400 (calendar 465 from 265, ordered at 415); a's due falls at 385 (b's stop froze
    # the clock for 5 h), its spare arrived at 380; a's stop 385–390 moves b's due to 470.
    r = _ordered_ahead(True, 50.0, Policy("age", interval_h=200.0), 500.0,
                       table={("U", "a"): [120.0]})
    assert r.event_log() == [
        (120.0, "U", "a", "failure"),
        (120.0, "U", "a", "stockout"),
        (120.0, "", B, "order"),
        (150.0, "U", "a", "order_ahead"),
        (150.0, "U", "b", "order_ahead"),
        (170.0, "", B, "delivery"),
        (170.0, "U", "", "work"),
        (180.0, "U", "a", "corrective"),
        (180.0, "U", "", "up"),
        (200.0, "", B, "delivery"),
        (200.0, "", B, "delivery"),
        (260.0, "U", "", "stop"),
        (265.0, "U", "b", "planned"),
        (265.0, "U", "", "up"),
        (330.0, "U", "a", "order_ahead"),
        (380.0, "", B, "delivery"),
        (385.0, "U", "", "stop"),
        (390.0, "U", "a", "planned"),
        (390.0, "U", "", "up"),
        (415.0, "U", "b", "order_ahead"),
        (465.0, "", B, "delivery"),
        (470.0, "U", "", "stop"),
        (475.0, "U", "b", "planned"),
        (475.0, "U", "", "up"),
    ]
    s = r.spares.loc[B]
    assert (s["demands"], s["stockouts"], s["orders"]) == (4, 1, 5)
    # On the shelf: b's kept spare 200–260, a's freed spare 200–500, a's 380–385, b's 465–470.
    assert s["mean_on_hand"] == pytest.approx((60.0 + 300.0 + 5.0 + 5.0) / 500.0)


def test_order_ahead_at_a_lower_operating_share_orders_by_the_calendar_date() -> None:
    # Share 0.5: the age due at 100 operating hours falls at calendar 200; ordered at 150.
    r = _ordered_ahead(True, 50.0, Policy("age", interval_h=100.0), 230.0, share=0.5)
    assert r.event_log()[:5] == [
        (150.0, "U", "a", "order_ahead"),
        (150.0, "U", "b", "order_ahead"),
        (200.0, "", B, "delivery"),
        (200.0, "", B, "delivery"),
        (200.0, "U", "", "stop"),
    ]
    assert r.spares.loc[B, "stockouts"] == 0


def test_order_ahead_a_late_spare_gives_way_to_a_free_one_on_the_shelf() -> None:
    # One free spare on the shelf, (s, S) = (0, 1), lead 400 h > the 300 h notice: both
    # spares for the block at 300 are ordered at once and arrive at 400. At 300 a takes the
    # free spare (its own, still on its way, will join the free stock: the inventory position
    # stays 1, no reorder); b finds none and waits for its own.
    machine = Machine("U", 1, 1.0, 0.0, (pos("a", Policy("block", interval_h=300.0)),
                                         pos("b", Policy("block", interval_h=300.0))))
    sc = scenario([machine], stores={B: Stock(1, 0, 1, fixed(400.0), order_ahead=True)},
                  crews=Crews(None, fixed(5.0), fixed(10.0)), horizon=500.0)
    r = simulate(sc, 1, life_sampler=lives({}))
    assert r.event_log() == [
        (0.0, "U", "a", "order_ahead"),
        (0.0, "U", "b", "order_ahead"),
        (300.0, "U", "b", "stockout"),
        (300.0, "U", "a", "order_ahead"),
        (300.0, "U", "b", "order_ahead"),
        (400.0, "", B, "delivery"),
        (400.0, "", B, "delivery"),
        (400.0, "U", "", "stop"),
        (405.0, "U", "a", "planned"),
        (405.0, "U", "b", "planned"),
        (405.0, "U", "", "up"),
    ]
    s = r.spares.loc[B]
    assert (s["demands"], s["stockouts"], s["orders"]) == (2, 1, 4)
    # On the shelf: the free spare 0–300, a's own (freed) from 400 to the horizon.
    assert s["mean_on_hand"] == pytest.approx((300.0 + 100.0) / 500.0)
    # The (s, S) stock served a's demand (met at once); b's was its own spare's (late).
    assert r.tally is not None
    f = figures_of(r.tally, sc)
    assert f[f"fill_rate:{B}"] == 0.5
    assert f[f"stock_demands:{B}"] == 1.0 and f[f"stock_fill_rate:{B}"] == 1.0

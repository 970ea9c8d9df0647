"""Run one replication of a fleet scenario with the discrete-event engine.

:func:`simulate` builds a fresh event loop (:class:`~fleetsim.sim.lean_env.LeanEnvironment`,
SimPy's rules without its machinery, or ``simpy.Environment`` itself with :data:`LEAN`
off), the stores, the crews and one process per machine unit, runs them from calendar hour 0 to the
horizon and returns a :class:`~fleetsim.sim.records.ReplicationResult`.
There is no global state: replications can run side by side, in threads or
processes, and the same seed always gives the same result.

Events falling exactly on the horizon are not processed (the interval
simulated is [0, horizon)).
"""

from __future__ import annotations

import dataclasses
import math
from os import PathLike
from typing import Any

import numpy as np
import simpy

from fleetsim.errors import InputError
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.sim.budget import check_calendar, event_budget, run_within_budget
from fleetsim.sim.crews import CrewPool
from fleetsim.sim.discount import discount_for
from fleetsim.sim.event_log import EventFile
from fleetsim.sim.gcpause import gc_paused
from fleetsim.sim.groups import GroupTracker
from fleetsim.sim.instants import last_instant
from fleetsim.sim.lean_env import AnyEnvironment, LeanEnvironment
from fleetsim.sim.policies import start_calendar_policies
from fleetsim.sim.quiet import quiet_process, step_quiet_fleet
from fleetsim.sim.records import (
    GROUP_COLUMNS,
    SPARE_COLUMNS,
    Recorder,
    ReplicationResult,
    Table,
)
from fleetsim.sim.setup import LifeSampler, MachineSetup, SimContext
from fleetsim.sim.stores import (
    SpareStore,
    StoreStats,
    UnlimitedSupply,
    bearing_tallies,
    build_stores,
    store_counts,
)
from fleetsim.sim.streams import Streams, as_seed_sequence
from fleetsim.sim.tally import (
    COUNTS,
    MachineTally,
    Tally,
    costs_of,
    group_tallies,
)
from fleetsim.sim.unit import UnitRunner, position_columns, unit_columns
from fleetsim.sim.years import YearBook

#: Run quiet units with :func:`~fleetsim.sim.quiet.quiet_process` (tests turn it off to
#: check that the general process gives the same result).
QUIET_PROCESS = True
#: Step a fleet of quiet units from :func:`~fleetsim.sim.quiet.step_quiet_fleet`'s own heap
#: of wake-up times, without SimPy (tests turn it off to check it against SimPy).
QUIET_STEPPER = True
#: Run the other fleets on :class:`~fleetsim.sim.lean_env.LeanEnvironment`, SimPy's rules
#: without its general machinery (tests turn it off to check it against SimPy).
LEAN = True


def _check(horizon_h: float) -> None:
    # Everything else is validated by the model objects on construction.
    if not (horizon_h > 0 and math.isfinite(horizon_h)):
        raise InputError("study.horizon", f"expected a finite horizon > 0 h, got {horizon_h}")


def simulate(
    scenario: Scenario,
    seed: np.random.SeedSequence | int,
    *,
    horizon_h: float | None = None,
    keep_events: bool = True,
    life_sampler: LifeSampler | None = None,
    events_to: str | PathLike[str] | None = None,
) -> ReplicationResult:
    """Simulate one replication of ``scenario``.

    Parameters
    ----------
    scenario
        The validated fleet.
    seed
        The replication's seed sequence (e.g. from
        :func:`fleetsim.study.seeds.replication_seed`) or an integer. It is
        not modified.
    horizon_h
        Calendar hours to simulate (default: ``scenario.study.horizon_h``).
    keep_events
        Keep the event log in memory, its first
        :data:`~fleetsim.sim.records.MAX_EVENTS_KEPT` events (turn off in
        large studies to save time and memory).
    life_sampler
        Optional ``f(unit_id, position_id, k) -> hours``: the operating hours
        from fitting to the first detectable defect of the k-th bearing of a
        position (k = 0: remaining life of the bearing fitted at the start).
        Replaces the random lives, e.g. for exact event-log tests.
    events_to
        Write every event to this CSV file as it happens
        (:class:`~fleetsim.sim.event_log.EventFile`: columns ``time_h, unit,
        position, kind``, memory bounded whatever the count) instead of
        holding them; the result's ``events`` table is then empty and its
        ``events_file`` names the file.

    Returns
    -------
    ReplicationResult
        Events, downtime by unit and cause, counts, spares, groups and costs.

    Raises
    ------
    InputError
        When the scenario cannot be simulated (missing interval, bad group, ...).
    """
    horizon = float(scenario.study.horizon_h if horizon_h is None else horizon_h)
    _check(horizon)
    root = as_seed_sequence(seed)
    if events_to is None:
        with gc_paused():
            return _run(scenario, root, horizon, keep_events, life_sampler)
    with EventFile(events_to) as sink, gc_paused():
        result = _run(scenario, root, horizon, True, life_sampler, sink)
    return dataclasses.replace(result, events_file=str(events_to))


def _run(
    scenario: Scenario,
    root: np.random.SeedSequence,
    horizon: float,
    keep_events: bool,
    life_sampler: LifeSampler | None,
    sink: EventFile | None = None,
) -> ReplicationResult:
    streams = Streams(root)
    env: AnyEnvironment = LeanEnvironment() if LEAN else simpy.Environment()
    discount = discount_for(scenario.costs.discount_rate_per_year)
    book = YearBook(horizon, discount)
    recorder = Recorder(keep_events, book, sink)
    log = recorder.log if recorder.keep_events else None

    stores = build_stores(scenario, env, streams, book, log)

    unit_index: dict[str, list[int]] = {}
    n_units = sum(m.count for m in scenario.machines)
    k = 0
    for m in scenario.machines:
        unit_index[m.id] = list(range(k, k + m.count))
        k += m.count
    groups = GroupTracker(
        [(g.id, g.need, scenario.group_members(g)) for g in scenario.groups],
        n_units,
        [g.hold_planned_work for g in scenario.groups],
        book,
    )
    ctx = SimContext(env, recorder, CrewPool(env, scenario.crews.count), scenario.crews,
                     stores, groups, streams, life_sampler, discount)
    units: list[UnitRunner] = []
    plans = []
    for mi, m in enumerate(scenario.machines):
        setup = MachineSetup(ctx, m, mi)
        for ui, uid in enumerate(m.unit_ids()):
            units.append(UnitRunner(ctx, setup, ui, unit_index[m.id][ui], uid))
            plans.append(setup.plan)

    budget = event_budget(scenario, horizon)
    check_calendar(scenario, horizon, budget)
    run_to = last_instant(horizon)  # (events a rounding before the horizon are at it)
    if QUIET_PROCESS and QUIET_STEPPER and all(u.quiet for u in units):
        groups.later = _stepper_restarts  # (the stepper restarts them as its clock moves on)
        step_quiet_fleet(units, run_to, budget, scenario.source, every=book.settle_full_blocks)
    else:
        if groups.by_groups:  # restarts after zero-length stops: after the instant's events
            groups.later = lambda callback: env.timeout(0.0).callbacks.append(callback)
        for unit, plan in zip(units, plans, strict=True):
            if unit.quiet and QUIET_PROCESS:
                env.process(quiet_process(unit))
            else:
                env.process(unit.run())  # type: ignore[arg-type]  # (either loop's events)
                start_calendar_policies(env, unit, plan)
        if isinstance(env, LeanEnvironment):
            env.run_within(run_to, budget, scenario.source, every=book.settle_full_blocks)
        else:
            run_within_budget(env, run_to, budget, scenario.source, every=book.settle_full_blocks)
    return _result(scenario, root, horizon, recorder, units, stores, groups, ctx.crews.busy_h)


def _stepper_restarts(_callback: Any) -> None:
    """The quiet stepper's ``GroupTracker.later``: it calls
    :meth:`~fleetsim.sim.groups.GroupTracker.restart_deferred` itself."""


def _result(
    scenario: Scenario,
    root: np.random.SeedSequence,
    horizon: float,
    recorder: Recorder,
    units: list[UnitRunner],
    stores: dict[str, SpareStore | UnlimitedSupply],
    groups: GroupTracker,
    crew_busy_h: float,
) -> ReplicationResult:
    for u in units:
        u.close(horizon)
    unit_table = unit_columns(units, horizon)
    years = horizon / HOURS_PER_YEAR
    spare_rows = []
    stats: dict[str, StoreStats] = {}
    for bid, store in stores.items():
        st = store.finish(horizon)
        stats[bid] = st
        spare_rows.append(
            {
                "bearing": bid,
                "demands": st.demands,
                "issued": st.issued,
                "stockouts": st.stockouts,
                "fill_rate": 1.0 - st.stockouts / st.demands if st.demands else math.nan,
                "orders": st.orders,
                "emergency_orders": st.emergency_orders,
                "ordered_units": st.ordered_units,
                "mean_on_hand": st.on_hand_area / horizon,
                "mean_backorders": st.backorder_area / horizon,
                "issued_per_year": st.issued / years,
            }
        )
    counts = recorder.counts
    counts.update(store_counts(stats))

    group_rows = groups.finish(horizon)
    tally = _tally(scenario, horizon, recorder, unit_table, stats, group_rows)
    costs = costs_of(tally, scenario)

    ev = recorder.events
    events: Table = {
        "time_h": [e[0] for e in ev],
        "unit": [e[1] for e in ev],
        "position": [e[2] for e in ev],
        "kind": [e[3] for e in ev],
    }
    seed_info: tuple[Any, tuple[int, ...]] = (root.entropy, tuple(root.spawn_key))
    return ReplicationResult(
        horizon_h=horizon,
        seed=seed_info,
        counts=dict(counts),
        costs=costs,
        crew_busy_h=crew_busy_h,
        discount_rate_per_year=scenario.costs.discount_rate_per_year,
        tables={
            "events": events,
            "units": unit_table,
            "positions": position_columns(units),
            "spares": _columns(spare_rows, SPARE_COLUMNS),
            "groups": _columns(group_rows, GROUP_COLUMNS),
        },
        tally=tally,
    )


def _tally(
    scenario: Scenario,
    horizon: float,
    recorder: Recorder,
    unit_table: Table,
    stats: dict[str, StoreStats],
    group_rows: list[dict[str, Any]],
) -> Tally:
    """The replication's :class:`~fleetsim.sim.tally.Tally`."""
    c = recorder.counts
    machines = {m.id: MachineTally(units=m.count) for m in scenario.machines}
    for mid, fails, down, lost in zip(unit_table["machine"], unit_table["failures"],
                                      unit_table["down_h"], unit_table["lost_operating_h"],
                                      strict=True):
        mt = machines[mid]
        mt.failures += fails
        mt.down_h += down
        mt.lost_operating_h += lost
    bearings = bearing_tallies(stats)
    groups = group_tallies(group_rows, horizon)
    counts = {name: float(c[name]) for name in COUNTS if name in c}
    counts["missed_defects"] = float(c["missed_defects"])
    counts["failures_after_detection"] = float(c["failures_after_detection"])
    return Tally(
        horizon_h=horizon,
        counts=counts,
        downtime_h={cause: float(sum(unit_table[col])) for cause, col in
                    (("crew", "waiting_crew_h"), ("spares", "waiting_spare_h"),
                     ("repair", "repair_h"), ("planned", "planned_h"))},
        machines=machines,
        bearings=bearings,
        groups=groups,
        book=recorder.book,
    )


def _columns(rows: list[dict[str, Any]], names: tuple[str, ...]) -> Table:
    return {name: [r[name] for r in rows] for name in names}

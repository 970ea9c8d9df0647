"""Run one replication of a fleet scenario with the discrete-event engine.

:func:`simulate` builds a fresh ``simpy.Environment``, the stores, the crews
and one process per machine unit, runs them from calendar hour 0 to the
horizon and returns a :class:`~fleetsim.sim.records.ReplicationResult`.
There is no global state: replications can run side by side, in threads or
processes, and the same seed always gives the same result.

Events falling exactly on the horizon are not processed (the interval
simulated is [0, horizon)).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import simpy

from fleetsim.errors import InputError
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.sim.crews import CrewPool
from fleetsim.sim.discount import discount_for
from fleetsim.sim.gcpause import gc_paused
from fleetsim.sim.groups import GroupTracker
from fleetsim.sim.policies import check_policy, start_calendar_policies
from fleetsim.sim.quiet import quiet_process
from fleetsim.sim.records import (
    GROUP_COLUMNS,
    SPARE_COLUMNS,
    Recorder,
    ReplicationResult,
    Table,
)
from fleetsim.sim.setup import LifeSampler, MachineSetup, SimContext
from fleetsim.sim.stores import SpareStore, StoreStats, UnlimitedSupply
from fleetsim.sim.streams import Streams, as_seed_sequence
from fleetsim.sim.unit import UnitRunner, position_columns, unit_columns

#: Run quiet units with :func:`~fleetsim.sim.quiet.quiet_process` (tests turn it off to
#: check that the general process gives the same result).
QUIET_PROCESS = True


def _check(scenario: Scenario, horizon_h: float) -> None:
    if not (horizon_h > 0 and math.isfinite(horizon_h)):
        raise InputError("study.horizon", f"expected a finite horizon > 0 h, got {horizon_h}")
    count = scenario.crews.count
    if count is not None and count < 1:
        raise InputError("crews.count", f"expected at least 1 crew (or none for unlimited), got {count}")
    for m in scenario.machines:
        where = f"machine {m.id!r}"
        if m.count < 1:
            raise InputError(f"{where}.count", f"expected at least 1 unit, got {m.count}")
        if not 0.0 <= m.operating_share <= 1.0:
            raise InputError(f"{where}.operating_hours_per_year",
                             f"expected an operating share between 0 and 1, got {m.operating_share}")
        if m.starting_age_h < 0:
            raise InputError(f"{where}.starting_age", f"expected an age >= 0 h, got {m.starting_age_h}")
        for p in m.positions:
            pw = f"{where}.position {p.id!r}"
            if p.bearing_id not in scenario.bearings:
                raise InputError(f"{pw}.bearing", f"expected a defined bearing, got {p.bearing_id!r}")
            check_policy(p.policy, pw)
    for bid, st in scenario.stores.items():
        if not (-1 <= st.reorder_point < st.order_up_to) or st.initial < 0:
            raise InputError(f"stores.{bid}",
                             "expected initial >= 0 and -1 <= reorder point < order-up-to, got "
                             f"{st.initial}, {st.reorder_point}, {st.order_up_to}")
    for g in scenario.groups:
        try:
            n = len(scenario.group_members(g))
        except KeyError as exc:
            raise InputError(
                f"group {g.id!r}.machines", f"expected defined machines or units, got {exc.args[0]!r}"
            ) from None
        if not 1 <= g.need <= n:
            raise InputError(f"group {g.id!r}.need", f"expected 1 <= need <= {n} units, got {g.need}")


def simulate(
    scenario: Scenario,
    seed: np.random.SeedSequence | int,
    *,
    horizon_h: float | None = None,
    keep_events: bool = True,
    life_sampler: LifeSampler | None = None,
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
        Keep the event log (turn off in large studies to save time and memory).
    life_sampler
        Optional ``f(unit_id, position_id, k) -> hours``: the operating hours
        from fitting to the first detectable defect of the k-th bearing of a
        position (k = 0: remaining life of the bearing fitted at the start).
        Replaces the random lives, e.g. for exact event-log tests.

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
    _check(scenario, horizon)
    root = as_seed_sequence(seed)
    with gc_paused():
        return _run(scenario, root, horizon, keep_events, life_sampler)


def _run(
    scenario: Scenario,
    root: np.random.SeedSequence,
    horizon: float,
    keep_events: bool,
    life_sampler: LifeSampler | None,
) -> ReplicationResult:
    streams = Streams(root)
    env = simpy.Environment()
    recorder = Recorder(keep_events)
    log = recorder.log if keep_events else None
    discount = discount_for(scenario.costs.discount_rate_per_year)

    bearing_ids = sorted(
        {p.bearing_id for m in scenario.machines for p in m.positions} | set(scenario.stores)
    )
    stores: dict[str, SpareStore | UnlimitedSupply] = {}
    for b, bid in enumerate(bearing_ids):
        stock = scenario.stores.get(bid)
        if stock is None:
            stores[bid] = UnlimitedSupply(bid, env, discount)
        else:
            emergency = streams.bearing(b, emergency=True) if stock.emergency_lead_time else None
            stores[bid] = SpareStore(env, bid, stock, streams.bearing(b), emergency, log, discount)

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
    )
    ctx = SimContext(env, recorder, CrewPool(env, scenario.crews.count), scenario.crews,
                     stores, groups, streams, life_sampler, discount)
    units: list[UnitRunner] = []
    for mi, m in enumerate(scenario.machines):
        setup = MachineSetup(ctx, m, mi)
        for ui, uid in enumerate(m.unit_ids()):
            unit = UnitRunner(ctx, setup, ui, unit_index[m.id][ui], uid)
            units.append(unit)
            if unit.quiet and QUIET_PROCESS:
                env.process(quiet_process(unit))
            else:
                env.process(unit.run())
                start_calendar_policies(env, unit)

    env.run(until=horizon)
    return _result(scenario, root, horizon, recorder, units, stores, groups, ctx.crews.busy_h)


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
    counts["stockouts"] = sum(s.stockouts for s in stats.values())
    counts["orders"] = sum(s.orders for s in stats.values())
    counts["emergency_orders"] = sum(s.emergency_orders for s in stats.values())

    c = scenario.costs
    price = {bid: (scenario.bearings[bid].price if bid in scenario.bearings else 0.0) for bid in stores}
    premium = {bid: scenario.stores[bid].emergency_premium if bid in scenario.stores else 0.0
               for bid in stores}
    if c.discount_rate_per_year > 0.0:  # present values (fleetsim.sim.discount)
        pv = recorder.pv
        changes, failures = pv["changes"], pv["failures"]
        inspections, down_h = pv["inspections"], pv["down_h"]
        issued = {bid: st.issued_pv for bid, st in stats.items()}
        on_hand_h = {bid: st.on_hand_pv_area for bid, st in stats.items()}
        emergency = {bid: st.emergency_pv for bid, st in stats.items()}
    else:
        changes = counts["planned"] + counts["opportunistic"]
        failures, inspections = counts["failures"], counts["inspections"]
        down_h = sum(unit_table["down_h"])
        issued = {bid: st.issued for bid, st in stats.items()}
        on_hand_h = {bid: st.on_hand_area for bid, st in stats.items()}
        emergency = {bid: st.emergency_orders for bid, st in stats.items()}
    costs = {
        "planned_labour": changes * c.planned_replacement,
        "failure_labour": failures * (c.planned_replacement + c.failure),
        "parts": sum(issued[bid] * price[bid] for bid in stats),
        "downtime": down_h * c.downtime_per_hour,
        "inspection": inspections * c.inspection,
        "holding": sum(c.holding_rate_per_year * price[bid] * on_hand_h[bid] / HOURS_PER_YEAR
                       for bid in stats),
        "emergency": sum(emergency[bid] * premium[bid] for bid in stats),
    }
    costs["total"] = sum(costs.values())

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
        discount_rate_per_year=c.discount_rate_per_year,
        tables={
            "events": events,
            "units": unit_table,
            "positions": position_columns(units),
            "spares": _columns(spare_rows, SPARE_COLUMNS),
            "groups": _columns(groups.finish(horizon), GROUP_COLUMNS),
        },
    )


def _columns(rows: list[dict[str, Any]], names: tuple[str, ...]) -> Table:
    return {name: [r[name] for r in rows] for name in names}

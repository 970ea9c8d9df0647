"""The vectorised engine's path for run-to-failure fleets coupled by stores and crews.

A stop freezes the ageing of every position of its unit, and under
run-to-failure nothing else changes a position's life: so on each unit's
*operating* clock every position is a renewal process whatever a stop lasts,
waits for spares and crews included. This path therefore draws every machine
type's stops on the operating clock exactly as the whole-cycle path does
(:func:`~fleetsim.sim.cycles.stops_on_clock`: the same tables, the same
merging of a unit's positions), and steps only what couples the units: the
placing of those stops on the calendar, one stop at a time, in time order.

The queue is the discrete-event engine's own rule, not a copy of it: the
stores are the engine's :class:`~fleetsim.sim.stores.SpareStore` (the (s, S)
review, lead times drawn from the same streams, emergency orders, first-come
backorders, the year book of parts) running on :class:`_Clock` in place of
SimPy; the groups' down time is replayed through the engine's
:class:`~fleetsim.sim.groups.GroupTracker`; the stops are booked in the year
book with the engine's conventions. What :class:`~fleetsim.sim.unit.UnitRunner`
does at a failure is done here in the same order: the unit stops, asks for one
spare per failed position (in position order), waits until all are issued,
asks for a crew (first come, first served: under run-to-failure every job is a
repair; :class:`~fleetsim.sim.crews.CrewCalendar` gives its start without an
event), is repaired for the stop's duration and runs again. Events of one
instant keep SimPy's order (the order they were scheduled in), so a
replication gives the discrete-event engine's figures
(``tests/test_engine_identity.py``).
"""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable
from heapq import heappop, heappush
from typing import Any

import numpy as np

from fleetsim.scenario.model import Scenario
from fleetsim.sim.budget import CHUNK_EVENTS, ROUND_EVENTS, EventBudget
from fleetsim.sim.crews import CrewCalendar
from fleetsim.sim.cycles import StopList, renewal_exact, stops_on_clock
from fleetsim.sim.gcpause import gc_paused
from fleetsim.sim.groups import replay_groups
from fleetsim.sim.instants import last_instant
from fleetsim.sim.stores import (
    Claim,
    SpareStore,
    UnlimitedSupply,
    bearing_tallies,
    build_stores,
    store_counts,
)
from fleetsim.sim.streams import Streams
from fleetsim.sim.tally import (
    COUNTS,
    FAILURES,
    LABOUR_H,
    MachineTally,
    Tally,
    group_tallies,
)
from fleetsim.sim.years import YearBook

# kinds of the placer's events
_ARRIVE, _WAKE, _CALLBACK = range(3)


def coupled_exact(scenario: Scenario) -> bool:
    """True when this path gives the discrete-event engine's figures for ``scenario``:
    finite stores or crews, every position run-to-failure (no opportunistic changes;
    no planned work, so no group's hold on it can bite)."""
    if scenario.independent_positions:
        return False
    return all(renewal_exact(m, scenario)
               and all(p.policy.kind == "run-to-failure" for p in m.positions)
               for m in scenario.machines)


class _Timeout:
    """What :meth:`_Clock.timeout` returns: callbacks fired when its time comes."""

    __slots__ = ("callbacks",)

    def __init__(self) -> None:
        self.callbacks: list[Callable[[Any], None]] = []


class _Clock:
    """The clock the stores run on in place of SimPy: ``now`` and :meth:`timeout`.

    Its queue holds the placer's events as ``(time, order, kind, what)``: the
    order they were scheduled in breaks ties, as in SimPy.
    """

    __slots__ = ("now", "queue", "tick")

    def __init__(self) -> None:
        self.now = 0.0
        self.queue: list[tuple[float, int, int, Any]] = []
        #: the order of scheduling: 0, 1, 2, ...
        self.tick = itertools.count().__next__

    def timeout(self, delay_h: float) -> _Timeout:
        """A wait of ``delay_h`` hours whose callbacks fire at ``now + delay_h``."""
        w = _Timeout()
        heappush(self.queue, (self.now + delay_h, self.tick(), _CALLBACK, w))
        return w


class CoupledResult:
    """What the placer adds to a replication's tally.

    Per machine type: failures and hours down (waiting for spares, for a crew,
    under repair); the units' stops for the groups (``intervals``, when kept)
    and the first stop of the fleet.
    """

    def __init__(self, n_machines: int) -> None:
        self.failures = [0.0] * n_machines
        self.spare_h = [0.0] * n_machines
        self.crew_h = [0.0] * n_machines
        self.repair_h = [0.0] * n_machines
        self.intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
        self.first_stop_h = math.inf


def place_coupled(scenario: Scenario, streams: Streams, horizon_h: float, book: YearBook,
                  budget: EventBudget | None = None
                  ) -> tuple[CoupledResult, dict[str, SpareStore | UnlimitedSupply]]:
    """Draw every machine type's stops and place them on the calendar (module docstring).

    Returns the per-machine sums and the stores (call ``finish`` for their counters).

    Only arrivals at stops, spares issued from backorders and the stores' own
    timeouts are events. The crews need none: jobs take crews first come,
    first served, and a job asks for a crew only once its spares are at hand,
    in time order, so each job's start is known when it asks — the later of
    now and the earliest time a crew comes free (the recursion of Kiefer and
    Wolfowitz for a first-come, first-served queue with several servers) —
    and with it the end of the stop and the unit's next arrival.
    """
    H = horizon_h
    H_ev = last_instant(H)
    clock = _Clock()
    stores = build_stores(scenario, clock, streams, book, None)
    n_units = sum(m.count for m in scenario.machines)
    out = CoupledResult(len(scenario.machines))

    # Every stop of the fleet, unit by unit (units numbered across machine types).
    lists: list[tuple[int, StopList]] = []
    for mi, m in enumerate(scenario.machines):
        stops = stops_on_clock(m, mi, scenario, streams, H, budget)
        if stops is not None:
            lists.append((mi, stops))
    if not lists:
        clock.now = H  # (nothing happens: the shelf stands still up to the horizon)
        return out, stores
    first_unit = np.cumsum([0] + [m.count for m in scenario.machines])
    ev_store: list[SpareStore | UnlimitedSupply] = []
    for mi, st in lists:
        by_pos = [stores[p.bearing_id] for p in scenario.machines[mi].positions]
        ev_store.extend(by_pos[j] for j in st.e_pos.tolist())
    unit_of = np.concatenate([st.unit + first_unit[mi] for mi, st in lists])
    machine_of_stop = np.concatenate([np.full(st.unit.size, mi) for mi, st in lists])
    dur = np.concatenate([st.duration_h for _, st in lists])
    clock_op = np.concatenate([st.clock for _, st in lists])
    per_stop = np.concatenate([np.ones(st.unit.size, dtype=np.int64) if st.stop_of is None
                               else np.bincount(st.stop_of, minlength=st.unit.size)
                               for _, st in lists])
    ev_hi = np.cumsum(per_stop)
    counts = np.bincount(unit_of, minlength=n_units)  # each unit's stops are contiguous
    u_hi = np.cumsum(counts)
    u_lo = u_hi - counts
    share_of_unit = np.repeat([m.operating_share for m in scenario.machines],
                              [m.count for m in scenario.machines])
    # Calendar hours from the end of each stop to the next stop of its unit (the unit runs
    # its operating-clock gap at its share; inf after its last stop), as the DES computes
    # them: (clock of the next stop − clock of this one) / share.
    s_share = share_of_unit[unit_of]
    nxt_clock = np.append(clock_op[1:], np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        gap_h = np.where(s_share > 0.0, (nxt_clock - clock_op) / s_share,
                         np.where(nxt_clock - clock_op <= 0.0, 0.0, np.inf))
    gap_h[u_hi[counts > 0] - 1] = np.inf
    #: per stop: repair hours, its first event, one past its last, hours to the next stop
    info = list(zip(dur.tolist(), (ev_hi - per_stop).tolist(), ev_hi.tolist(), gap_h.tolist(),
                    strict=True))
    nxt = u_lo.tolist()  # each unit's next stop
    arrived = [0.0] * n_units  # when each unit stopped last
    #: stop, stopped, spares at hand, crew starts: four numbers per stop given its spares
    done: list[float] = []
    record = done.extend
    waiting: list[list[Claim] | None] = [None] * n_units
    woken = [False] * n_units
    crew_start = CrewCalendar(scenario.crews.count).start
    queue = clock.queue
    tick = clock.tick

    def pokes(g: int) -> Callable[[], None]:
        def poke() -> None:  # a claim of unit g was filled: look again (once an instant)
            if not woken[g]:
                woken[g] = True
                heappush(queue, (clock.now, tick(), _WAKE, g))
        return poke

    notify = [pokes(g) for g in range(n_units)]

    # every unit starts running at hour 0: its first stop comes at its clock / share
    c0 = np.where(counts > 0, clock_op[np.minimum(u_lo, clock_op.size - 1)], np.inf)
    with np.errstate(divide="ignore", invalid="ignore"):
        first_h = np.where(share_of_unit > 0.0, c0 / share_of_unit,
                           np.where(c0 <= 0.0, 0.0, np.inf))
    for g, t0 in enumerate(first_h.tolist()):
        if t0 < H_ev:
            heappush(queue, (t0, tick(), _ARRIVE, g))

    left = CHUNK_EVENTS  # events to the next budget count and settling of the journals
    while queue:
        t, _, kind, g = heappop(queue)
        if not t < H_ev:  # events at the horizon are not processed
            break
        clock.now = t
        left -= 1
        if not left:
            left = CHUNK_EVENTS
            if budget is not None:
                budget.spend(CHUNK_EVENTS)
            book.settle_full_blocks()
        if kind == 0:  # _ARRIVE: the unit fails, stops and asks for a spare per failed position
            arrived[g] = t
            j = nxt[g]
            d, lo, hi, gap = info[j]
            if hi - lo == 1:  # one failed position (nearly every stop)
                c = ev_store[lo].demand("", "", notify[g], True)
                if not c.filled:
                    waiting[g] = [c]
                    continue
            else:  # (every event of a stop is a failure)
                claims = [c for c in (ev_store[e].demand("", "", notify[g], True)
                                      for e in range(lo, hi)) if not c.filled]
                if claims:
                    waiting[g] = claims
                    continue
        elif kind == 1:  # _WAKE: a spare came: all of them?
            woken[g] = False
            w = waiting[g]
            if w is None or not all(c.filled for c in w):
                continue
            waiting[g] = None
            j = nxt[g]
            d, lo, hi, gap = info[j]
        else:  # a store's timeout (a delivery)
            for cb in g.callbacks:
                cb(g)
            continue
        start = crew_start(t, d)  # spares at hand at t: the crew that comes free first
        record((j, arrived[g], t, start))
        up = start + d
        if up < H_ev:
            nxt[g] = j + 1
            nt = up + gap
            if nt < H_ev:
                heappush(queue, (nt, tick(), _ARRIVE, g))
    if budget is not None:
        budget.spend(max(CHUNK_EVENTS - left, ROUND_EVENTS))
    clock.now = H  # the run ends at the horizon (the stores accrue their shelf up to it)
    for g in range(n_units):  # units still waiting for spares at the horizon
        if waiting[g] is not None:
            record((nxt[g], arrived[g], math.inf, math.inf))
    if done:
        rows = np.fromiter(done, float, count=len(done)).reshape(-1, 4)
        j_of = rows[:, 0].astype(np.intp)
        _book_stops(scenario, book, out, H, rows[:, 1], rows[:, 2], rows[:, 3], dur[j_of],
                    per_stop[j_of], unit_of[j_of], machine_of_stop[j_of])
    return out, stores


def _book_stops(scenario: Scenario, book: YearBook, out: CoupledResult, H: float,
                at: np.ndarray, ready: np.ndarray, start: np.ndarray, dur: np.ndarray,
                failures: np.ndarray, unit: np.ndarray, machine: np.ndarray) -> None:
    """Book the stops reached within the horizon, with the DES's conventions.

    Per stop reached (in any order): when the unit stopped (``at``), had its
    spares (``ready``) and had a crew (``start``; inf: not by the horizon), its
    repair hours, failed
    positions, unit and machine type. Hours down are split into waiting for
    spares, waiting for a crew and repair, each cut at the horizon; a stop
    that ends within the horizon books its repair as crew hours, one still
    going at the horizon books none (as the DES, which books them at the end).
    """
    up = start + dur
    ready_c, start_c, up_c = np.minimum(ready, H), np.minimum(start, H), np.minimum(up, H)
    n_m = len(scenario.machines)

    def by_machine(x: np.ndarray) -> list[float]:
        return np.bincount(machine, weights=x, minlength=n_m).tolist()

    out.spare_h = by_machine(ready_c - at)
    out.crew_h = by_machine(start_c - ready_c)
    out.repair_h = by_machine(up_c - start_c)
    out.failures = by_machine(failures)
    book.at_many(FAILURES, np.repeat(at, failures))
    for mi, m in enumerate(scenario.machines):
        mine = machine == mi if n_m > 1 else slice(None)
        book.down_many(at[mine], up_c[mine], m.operating_share)
    worked = (up < last_instant(H)) & (up > start)  # repairs ended within the horizon (of some length)
    book.over_many(LABOUR_H, start[worked], up[worked])
    out.first_stop_h = float(at.min())
    if scenario.groups:
        out.intervals.append((unit, at, up_c))


def coupled_tally(scenario: Scenario, streams: Streams, horizon_h: float, book: YearBook,
                  budget: EventBudget | None = None) -> Tally:
    """One replication's :class:`~fleetsim.sim.tally.Tally` by this path
    (``scenario`` must pass :func:`coupled_exact`)."""
    H = horizon_h
    with gc_paused():  # (its small objects would trigger collections that find nothing)
        res, stores = place_coupled(scenario, streams, H, book, budget)
    stats = {b: s.finish(H) for b, s in stores.items()}  # (the clock stands at the horizon)
    machines: dict[str, MachineTally] = {}
    for mi, m in enumerate(scenario.machines):
        down = res.spare_h[mi] + res.crew_h[mi] + res.repair_h[mi]
        machines[m.id] = MachineTally(units=m.count, failures=res.failures[mi], down_h=down,
                                      lost_operating_h=down * m.operating_share)
    counts = {name: 0.0 for name in COUNTS}
    counts["failures"] = float(sum(res.failures))
    counts.update({k: float(v) for k, v in store_counts(stats).items()})
    return Tally(
        horizon_h=H,
        counts=counts,
        downtime_h={"crew": float(sum(res.crew_h)), "spares": float(sum(res.spare_h)),
                    "repair": float(sum(res.repair_h)), "planned": 0.0},
        machines=machines,
        bearings=bearing_tallies(stats),
        groups=group_tallies(replay_groups(scenario, res.intervals, H, book, res.first_stop_h), H),
        book=book,
    )

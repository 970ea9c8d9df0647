"""The process of a *quiet* machine unit: one that nothing outside can wake.

A unit is quiet when every position is run-to-failure or age-replaced without
a P-F interval, its spares are unlimited, crews are unlimited and no group
holds its planned work back. Then no store, crew, calendar or group can change
what the unit does next: it runs until the earliest failure or due age, stops,
is repaired and runs again. :func:`quiet_process` does exactly what
:meth:`UnitRunner.run <fleetsim.sim.unit.UnitRunner.run>` does for such a unit
(same event log, same records, bit for bit; ``tests/test_sim_quiet.py``
checks it), in one generator with the stop inlined, so a failure costs one
timeout and a handful of Python statements. It shares the general process's
helpers rather than copying them: the scan of the positions
(:func:`~fleetsim.sim.setup.scan`), the install rule
(:meth:`~fleetsim.sim.setup.PositionState.fit`) and the opportunistic rule
(:meth:`~fleetsim.sim.setup.PositionState.opportunity_due`). A fleet on
run-to-failure and age replacement without finite stores or crews is all quiet
units.

When **every** unit of a fleet is quiet, nothing but the units' own timeouts
ever happens, and :func:`step_quiet_fleet` steps their generators from a heap
of wake-up times instead of SimPy's event queue: the same order as SimPy's
(time, then the order the waits were scheduled in; every start before any
wait), the same clock arithmetic (``now + delay``), events at the horizon not
processed, so the same run bit for bit without an event object, callback or
scheduling call per wake-up (``tests/test_sim_quiet.py`` checks it against
SimPy stepping the same generators and against the general process).
"""

from __future__ import annotations

from collections.abc import Callable, Generator
from heapq import heappop, heappush
from typing import TYPE_CHECKING, Any

import simpy

from fleetsim.sim.budget import CHUNK_EVENTS, exceeded
from fleetsim.sim.groups import GroupTracker
from fleetsim.sim.lean_env import LeanEnvironment
from fleetsim.sim.setup import INF, scan
from fleetsim.sim.unit import PLANNED_WORK, REPAIR, RUNNING

if TYPE_CHECKING:
    from fleetsim.sim.unit import UnitRunner


class QuietClock:
    """The clock :func:`step_quiet_fleet` drives quiet processes with, in place of SimPy.

    ``now`` is the current time (hours); :meth:`timeout` hands the delay back to
    the stepper, which wakes the process ``now + delay`` later.
    """

    __slots__ = ("now",)

    def __init__(self) -> None:
        self.now = 0.0

    @staticmethod
    def timeout(delay_h: float) -> float:
        """The wait a quiet process yields: its delay in hours."""
        return delay_h


def quiet_process(u: UnitRunner, driver: QuietClock | None = None) -> Generator[Any, Any, None]:
    """The process of the quiet unit ``u`` (see the module docstring).

    With ``driver`` None it is a SimPy process of ``u.env`` (it yields timeouts);
    with a :class:`QuietClock` it yields its delays in hours to :func:`step_quiet_fleet`.
    """
    env: simpy.Environment | LeanEnvironment | QuietClock = u.env if driver is None else driver
    positions = u.positions
    share = u.share
    counts = u.counts
    log = u.log
    uid = u.id
    down, up = u.ctx.groups.switches(u.index)
    crews = u.ctx.crews
    unplanned = u.ctx.crews_spec.unplanned_repair
    planned = u.ctx.crews_spec.planned_repair
    sampler = u.ctx.life_sampler
    phase_h = u.phase_h
    opportunistic = u.opportunistic
    timeout = env.timeout
    failure_times = u.failure_times
    down_spans, labour_spans = u.down_spans, u.labour_spans
    change_times = u.change_times
    # fixed stop durations need no quantile per stop
    unplanned_h = unplanned.value_h if unplanned.kind == "fixed" else None
    planned_h = planned.value_h if planned.kind == "fixed" else None
    # The one scan of both processes; a quiet position's defect is its failure.
    heap = u.heap  # a unit with many positions scans its heap of next events
    failed, due, _defects, nxt = (scan(positions, u.clock_op) if heap is None
                                  else heap.scan(u.clock_op))
    while True:
        # Running, with the operating-hour clock synchronised to now.
        now = env.now
        clock = u.clock_op
        if due is not None:
            for p in due:
                p.pending = True
        if failed is None and due is None:
            if nxt == INF or not share > 0.0:
                return  # nothing more can happen to this unit (it may never age)
            delay = (now + (nxt - clock) / share) - now
            yield timeout(delay)
            u.t_sync = env.now
            ran = clock + share * delay
            u.clock_op = ran if ran > nxt else nxt  # land on the target despite rounding
            failed, due, _defects, nxt = (scan(positions, u.clock_op) if heap is None
                                          else heap.scan(u.clock_op))
            continue

        # Stop: a failure (repair) or due ages (planned work), crews and spares at hand.
        u.running = False
        phase_h[RUNNING] += now - u.phase_t
        u.phase_t = now
        u.stops += 1
        u.down_since = now
        down(now)
        if failed is not None:
            u.phase = REPAIR
            for p in failed:
                p.failed = True
                p.defects += 1
                p.failures += 1
                p.store.issue(now)  # type: ignore[union-attr]  # quiet: unlimited
                if log is not None:
                    log(now, uid, p.id, "failure")
            counts["defects"] += len(failed)
            counts["failures"] += len(failed)
            u.failures += len(failed)
            for _ in failed:  # one booking per failure, as the general process does
                failure_times.append(now)
            if log is not None:
                log(now, uid, "", "work")
            duration = (unplanned_h if unplanned_h is not None
                        else unplanned.quantile(failed[0].stop_u))
        else:
            u.phase = PLANNED_WORK
            if log is not None:
                log(now, uid, "", "stop")
            duration = (planned_h if planned_h is not None
                        else planned.quantile(due[0].stop_u))  # type: ignore[index]
        # The positions changed in this stop: failed, then due (pending) and opportunistic
        # ones in position order; a changed position neither failed nor pending is an
        # opportunistic change.
        work = failed if failed is not None else []
        if due is not None or opportunistic:
            work = list(work)
            for p in positions:
                if p.failed:
                    continue
                if p.pending:
                    p.store.issue(now)  # type: ignore[union-attr]  # quiet: unlimited
                    work.append(p)
                    continue
                if p.opp_age_h < INF and p.opportunity_due(clock, now):
                    p.store.issue(now)  # type: ignore[union-attr]  # quiet: unlimited
                    work.append(p)
        if duration > 0.0:
            yield timeout(duration)
            now = env.now
        for p in work:
            if p.failed:
                kind = "corrective"
            elif p.pending:
                kind = "planned"
                p.planned += 1
                counts["planned"] += 1
            else:
                kind = "opportunistic"
                p.opportunistic += 1
                counts["opportunistic"] += 1
            if kind != "corrective":
                change_times.append(now)
            if log is not None:
                log(now, uid, p.id, kind)
            # A new bearing, by the one install rule (PositionState.fit).
            p.fit(clock, now, float(sampler(uid, p.id, p.k)) if sampler is not None else None)
        crews.busy_h += duration
        u.t_sync = now
        u.running = True
        phase_h[u.phase] += now - u.phase_t
        u.phase = RUNNING
        u.phase_t = now
        if now > u.down_since:  # a quiet unit never waits: a crew works the whole stop
            down_spans.extend((u.down_since, now))
            labour_spans.extend((u.down_since, now))
        up(now)
        if log is not None:
            log(now, uid, "", "up")
        # The next event: after a stop for failures alone, the scan's own answer
        # over the positions not changed, and the new bearings' (the same minimum
        # as a new scan, without one); otherwise a new scan.
        if work is failed:  # failures alone: no due ages, no opportunistic changes
            for p in work:
                d = p.defect_op
                f = p.fail_op
                a = p.due_op
                if d <= clock or f <= clock or a <= clock:
                    break  # a new bearing already at its end: let the scan say what happens
                if d < nxt:
                    nxt = d
                if f < nxt:
                    nxt = f
                if a < nxt:
                    nxt = a
            else:
                failed = None
                continue
        failed, due, _defects, nxt = (scan(positions, clock) if heap is None
                                      else heap.scan(clock))


def step_quiet_fleet(
    units: list[UnitRunner],
    horizon_h: float,
    limit: int,
    source: str = "scenario",
    every: Callable[[], None] | None = None,
) -> None:
    """Run the quiet ``units`` from hour 0 to ``horizon_h`` without SimPy (module docstring).

    Counts what SimPy would step (each start, wake-up and end of a process)
    against the event budget ``limit`` (raising
    :class:`~fleetsim.sim.budget.EventBudgetExceeded` past it) and calls
    ``every`` after each :data:`~fleetsim.sim.budget.CHUNK_EVENTS` of them, as
    :func:`~fleetsim.sim.budget.run_within_budget` does.
    """
    driver = QuietClock()
    groups = units[0].ctx.groups if units else GroupTracker([], 0)
    queue: list[tuple[float, int, Generator[Any, Any, None]]] = []
    order = 0  # SimPy's tie-break: the order in which the waits were scheduled
    left = limit
    mark = max(limit - CHUNK_EVENTS, 0)  # call ``every`` (or stop) when ``left`` falls to it
    for u in units:  # SimPy starts every process at hour 0 before any wait ends
        gen = quiet_process(u, driver)
        left -= 1
        try:
            delay = next(gen)
        except StopIteration:
            left -= 1  # the process's end
            continue
        heappush(queue, (delay, order, gen))
        order += 1
    while queue:
        if left <= mark:
            if left <= 0:
                raise exceeded(limit, source)
            mark = max(mark - CHUNK_EVENTS, 0)
            if every is not None:
                every()
        t, _, gen = heappop(queue)
        if not t < horizon_h:  # events at the horizon are not processed
            return
        if groups.deferred and t > driver.now:  # the instant is over: zero-length stops end
            groups.restart_deferred()
        driver.now = t
        left -= 1
        try:
            delay = gen.send(None)
        except StopIteration:
            left -= 1
            continue
        heappush(queue, (t + delay, order, gen))
        order += 1
    if left <= 0:  # SimPy steps its stop at the horizon even when every process has ended
        raise exceeded(limit, source)

"""One machine unit and its bearing positions: ageing, failures, stops and renewals.

A unit is one SimPy process that alternates between running and stopped.

**Ageing.** The unit keeps an operating-hour clock that advances at
``operating_share`` per calendar hour while it runs and is frozen while it is
stopped; every position ages on it. Each life is stored as the clock values
at which the position reaches its first detectable defect (P), its
functional failure (F = P + P-F interval, also in operating hours: a defect
grows only while the machine runs) and, under age replacement, its due age.
The unit therefore only needs one timer, to the earliest of those values.

**Failure.** At F the unit stops. It waits for a spare for each failed
position (``waiting_spare``), then for a crew (``waiting_crew``, failures go
before planned work), then for the unplanned repair duration (``repair``),
and runs again. One repair duration covers the whole stop; it is the
quantile, under the stop's duration distribution, of a uniform drawn for the
life that ended (the first failed position's, or the first planned one's), so
the same life ending the same way gets the same stop duration under any
policy (common random numbers).

**Planned work** (age due, block date, detected defect) is requested while
the unit runs: the spares are requested at once, the unit keeps running until
they are all on hand, the start time has come (detection: ``respond_within_h``
after the inspection) and a crew is free; then it stops for one planned
repair duration (``planned``). If the unit fails meanwhile, the planned
positions whose spares are on hand are changed in the failure's stop.

**Opportunistic changes.** When a crew starts on a stopped unit, every other
position whose age has reached its opportunistic threshold (on the interval's
own clock, :mod:`fleetsim.sim.schedule`) is changed in the same stop if a
spare is on the shelf right now (opportunistic changes never wait for parts).
A block date that falls while a position is being changed does not ask for
it again.

**Renewal.** A replaced position is as good as new; its next life is the next
draw of its own life stream (or of ``life_sampler``).
"""

from __future__ import annotations

from collections.abc import Generator
from typing import Any

from fleetsim.sim import scan_heap
from fleetsim.sim.crews import PLANNED, UNPLANNED, CrewPool, CrewRequest
from fleetsim.sim.instants import TIE_H
from fleetsim.sim.lean_env import AnyEvent
from fleetsim.sim.setup import INF, MachineSetup, PositionState, SimContext, scan

_FAILURE, _PLANNED = 0, 1
# Phases of a unit, in the order of ReplicationResult.units' columns.
RUNNING, WAITING_SPARE, WAITING_CREW, REPAIR, PLANNED_WORK = range(5)

class UnitRunner:
    """The process of one machine unit.

    Parameters
    ----------
    ctx
        Shared state of the replication.
    setup
        What the units of its machine type share.
    unit_number
        Index of the unit within its machine type (keys the random streams).
    unit_index
        Index of the unit in the fleet (for groups).
    unit_id
        The unit's name.
    """

    # (slots: the hot path reads and writes these on every event)
    __slots__ = (
        "ctx", "env", "counts", "log", "machine", "id", "index", "share", "positions", "heap",
        "clock_op", "t_sync", "running", "pending", "failed_now", "start_at", "crew_asked",
        "crew_req", "wake", "_timer", "_timer_at", "_timer_op", "phase", "phase_t", "phase_h",
        "stops", "failures", "down_since", "discount", "book", "failure_times", "change_times",
        "inspection_times", "down_spans", "labour_spans", "random_stops", "opportunistic",
        "holds", "quiet", "repair_free", "dates",
    )  # fmt: skip

    def __init__(
        self,
        ctx: SimContext,
        setup: MachineSetup,
        unit_number: int,
        unit_index: int,
        unit_id: str,
    ) -> None:
        machine = setup.machine
        self.ctx = ctx
        self.env = ctx.env
        self.counts = ctx.recorder.counts
        self.log = ctx.recorder.log if ctx.recorder.keep_events else None
        self.machine = machine
        self.id = unit_id
        self.index = unit_index
        self.share = machine.operating_share
        streams = ctx.streams
        self.positions = [
            PositionState(p, setup, streams, unit_number, j) for j, p in enumerate(machine.positions)
        ]
        #: the scan of a unit with many positions (None: the linear scan)
        self.heap = (scan_heap.PositionHeap(self.positions)
                     if len(self.positions) > scan_heap.HEAP_SCAN_MIN else None)
        self.clock_op = 0.0
        self.t_sync = 0.0
        self.running = True
        self.pending: list[PositionState] = []
        #: the positions whose failure stopped the unit (set by the scan that found them)
        self.failed_now: list[PositionState] = []
        self.start_at = INF
        self.crew_asked = False
        self.crew_req: CrewRequest | None = None
        self.wake: AnyEvent | None = None
        self._timer: AnyEvent | None = None
        self._timer_at = INF
        self._timer_op: float | None = None
        self.phase = RUNNING
        self.phase_t = 0.0
        self.phase_h = [0.0] * 5
        self.stops = 0
        self.failures = 0
        self.down_since = 0.0
        self.discount = ctx.discount
        self.book = ctx.recorder.book
        # the year book's journals of single events (one append each)
        self.failure_times, self.change_times, self.inspection_times = setup.journals
        self.down_spans, self.labour_spans = setup.spans
        self.random_stops = setup.random_stops
        self.opportunistic = setup.opportunistic
        self.holds = ctx.groups.holds(unit_index)
        self.quiet = setup.quiet and not self.holds
        self.repair_free = setup.repair_free
        #: the unit's block calendars and inspection rounds (each with its ``next_h``)
        self.dates: list[Any] = []

    # --- clock, phases, timer ---------------------------------------------------------
    def _sync(self) -> None:
        now = self.env.now
        if self.running:
            self.clock_op += self.share * (now - self.t_sync)
        self.t_sync = now

    def _phase(self, phase: int) -> None:
        now = self.env.now
        self.phase_h[self.phase] += now - self.phase_t
        self.phase = phase
        self.phase_t = now

    def _poke(self) -> None:
        w = self.wake
        if w is not None and not w.triggered:
            w.succeed()

    def _arm(self, at: float, op_target: float | None) -> None:
        self._timer_op = op_target
        if self._timer is not None and self._timer_at == at:
            return
        t = self.env.timeout(at - self.env.now)
        t.callbacks.append(self._timer_fired)
        self._timer = t
        self._timer_at = at

    def _timer_fired(self, ev: AnyEvent) -> None:
        if ev is not self._timer:
            return  # superseded
        self._timer = None
        target = self._timer_op
        if target is not None and self.running:
            self._sync()
            if self.clock_op < target:  # rounding of (target − clock) / share
                self.clock_op = target
        self._poke()

    def _go_down(self, phase: int) -> None:
        now = self.env.now
        # _sync and _phase, inlined: this runs at every stop
        if self.running:
            self.clock_op += self.share * (now - self.t_sync)
        self.t_sync = now
        self.running = False
        self._timer = None
        self.phase_h[self.phase] += now - self.phase_t
        self.phase = phase
        self.phase_t = now
        self.stops += 1
        self.down_since = now
        self.ctx.groups.unit_down(self.index, now)

    def _go_up(self, worked_h: float = 0.0) -> None:
        """The unit runs again; a crew worked the last ``worked_h`` hours of the stop
        (booked as crew hours)."""
        now = self.env.now
        if worked_h > 0.0 and now > now - worked_h:
            self.labour_spans.extend((now - worked_h, now))
        self.t_sync = now  # not running while down: no operating hours to add
        self.running = True
        self.phase_h[self.phase] += now - self.phase_t
        self.phase = RUNNING
        self.phase_t = now
        if now > self.down_since:
            self.down_spans.extend((self.down_since, now))
        self.ctx.groups.unit_up(self.index, now)
        if self.log is not None:
            self.log(now, self.id, "", "up")

    # --- lives ---------------------------------------------------------------------
    def announce_age_due(self, p: PositionState) -> None:
        """Tell ``p``'s store when its age due falls, in calendar hours, for ordering ahead.

        The date assumes the unit runs from now on; stops only delay the due,
        so the spare ordered for this date is, if anything, early.
        """
        left = max(0.0, p.due_op - self.clock_op)
        due = self.env.now + (left / self.share if self.share > 0.0 else INF)
        p.store.plan_ahead(self.id, p.id, due)

    def _defect(self, p: PositionState) -> None:
        p.defect_seen = True
        p.defects += 1
        self.counts["defects"] += 1
        if self.log is not None and p.fail_op > p.defect_op:
            self.log(self.env.now, self.id, p.id, "defect")

    def _fail(self, p: PositionState) -> None:
        p.failed = True
        p.failures += 1
        self.failures += 1
        counts = self.counts
        counts["failures"] += 1
        self.failure_times.append(self.env.now)
        if p.is_condition:
            counts["failures_after_detection" if p.detected else "missed_defects"] += 1
        if self.log is not None:
            self.log(self.env.now, self.id, p.id, "failure")
        if p.claim is None:
            p.claim = p.store.demand(self.id, p.id, self._poke, failure=True)
        elif not p.claim.filled:  # a planned request was already waiting for a spare
            p.store.expedite(p.claim, self.id, p.id)

    # --- requests from policies --------------------------------------------------------
    def _request(self, p: PositionState, start_at: float) -> None:
        if p.failed or p.in_stop:
            return  # it is about to be changed anyway
        if p.pending:
            if start_at < p.start_at:
                p.start_at = start_at
                self.start_at = min(self.start_at, start_at)
            return
        p.pending = True
        p.start_at = start_at
        self.pending.append(p)
        if start_at < self.start_at:
            self.start_at = start_at
        if p.claim is None:
            p.claim = p.store.demand(self.id, p.id, self._poke)

    def request_planned(self, positions: list[PositionState], start_at: float) -> None:
        """Ask for planned replacement of ``positions`` at calendar hour ``start_at`` or later."""
        for p in positions:
            self._request(p, start_at)
        self._poke()

    def block_date(self, positions: list[PositionState]) -> None:
        """A block date of ``positions``: request those not fitted too recently (modified block).

        A position fitted at this instant (within :data:`TIE_H`: the stop that
        fitted it ended on the date) was changed in that stop, which the date
        falls in: it is not asked for again."""
        now = self.env.now
        due = [p for p in positions
               if now - p.installed_cal >= p.skip_younger_h - TIE_H and now - p.installed_cal > TIE_H]
        if due:
            self.request_planned(due, now)

    def inspect(self, positions: list[PositionState]) -> None:
        """One inspection visit of this unit, covering ``positions`` (skipped while stopped).

        A visit at the instant the unit starts again (within :data:`TIE_H`) falls
        in the stop, whichever of the two events comes first."""
        if not self.running or self.env.now - self.phase_t <= TIE_H:
            return
        self._sync()
        now = self.env.now
        self.counts["inspections"] += 1
        self.inspection_times.append(now)
        if self.log is not None:
            self.log(now, self.id, "", "inspection")
        clock = self.clock_op
        found = False
        for p in positions:
            if p.detected or p.failed or p.defect_op > clock or p.fail_op <= clock:
                continue
            p.looks += 1
            if p.looks >= p.looks_needed:
                p.detected = True
                p.detections += 1
                self.counts["detections"] += 1
                if self.log is not None:
                    self.log(now, self.id, p.id, "detection")
                self._request(p, now + p.policy.respond_within_h)
                found = True
            else:
                self.counts["missed_inspections"] += 1
        if found:
            self._poke()

    # --- the process ---------------------------------------------------------------
    def run(self) -> Generator[AnyEvent, Any, None]:
        """The unit's SimPy process: run, stop, repair, run again, ..."""
        while True:
            stop = yield from self._run()
            if stop == _FAILURE:
                yield from self._corrective_stop()
            else:
                yield from self._planned_stop()

    def _run(self) -> Generator[AnyEvent, Any, int]:
        env = self.env
        positions = self.positions
        share = self.share
        while True:
            now = env.now
            if self.running:  # _sync, inlined: this loop is the engine's hot path
                self.clock_op += share * (now - self.t_sync)
            self.t_sync = now
            clock = self.clock_op
            failed, due, defects, nxt = (scan(positions, clock) if self.heap is None
                                         else self.heap.scan(clock))
            if defects is not None:
                for p in defects:
                    self._defect(p)
            if due is not None:
                for p in due:
                    self._request(p, now)
            if failed is not None:
                for p in failed:
                    self._fail(p)
                self.failed_now = failed  # (in position order: the stop's failed positions)
                return _FAILURE
            hold = self.date_at_hand(now) if self.pending else INF
            if self.pending and hold == INF and self._job_ready(now):
                return _PLANNED
            at, op_target = INF, None
            if nxt < INF and share > 0.0:
                at, op_target = now + (nxt - clock) / share, nxt
            if self.pending and now < self.start_at < at:
                at, op_target = self.start_at, None
            if hold < at:
                at, op_target = hold, None
            if self.quiet and at < INF:
                self._timer = None
                yield env.timeout(at - now)
                if op_target is not None and self.running:
                    # the unit ran throughout: land exactly on the target (no rounding)
                    self.t_sync = env.now
                    self.clock_op = max(op_target, self.clock_op + share * (at - now))
                continue
            self.wake = env.event()
            if at < INF:
                self._arm(at, op_target)
            yield self.wake

    def date_at_hand(self, now: float) -> float:
        """The next date of the unit's calendars if one falls within :data:`TIE_H` of
        ``now`` (not yet passed), else inf.

        Planned work waits for it: a visit or block date at the instant a planned
        stop starts comes before the stop (a visit is made, a block date joins
        the stop), even when rounding puts the stop a hair earlier.
        """
        for d in self.dates:
            if d.next_h - now <= TIE_H:
                return float(d.next_h)
        return INF

    def _job_ready(self, now: float) -> bool:
        """Drive the pending planned job; True when the unit should stop for it now.

        The crew is asked for once every pending spare is on hand and the start
        time has come. Work requested after that (whose spare may still be on
        its way) does not hold the crew back: the stop changes what it can.
        Under a group that holds planned work, the group is asked both before
        the crew is and when the crew arrives: if a member went down while the
        crew was on its way, the crew is handed back and the job waits.
        """
        groups = self.ctx.groups
        if not self.crew_asked:
            for p in self.pending:
                if not p.claim.filled:  # type: ignore[union-attr]
                    return False
            if now + TIE_H < self.start_at:  # (a start a rounding ahead has come)
                return False
            if self.holds and not groups.may_stop(self.index, self._poke):
                return False  # a holding group cannot spare this unit now
            self.crew_asked = True
            self.crew_req = self.ctx.crews.request(PLANNED, self._poke)
        if not CrewPool.granted(self.crew_req):
            return False
        if self.holds and not groups.may_stop(self.index, self._poke):
            self.ctx.crews.withdraw(self.crew_req)  # the group lost a member meanwhile
            self.crew_asked = False
            self.crew_req = None
            return False
        return True

    def _corrective_stop(self) -> Generator[AnyEvent, Any, None]:
        env = self.env
        crews = self.ctx.crews
        # With unlimited spares and crews nothing can keep the repair waiting (unless
        # a planned job holds a crew request to give up first).
        waits = not (self.repair_free and not self.crew_asked)
        self._go_down(WAITING_SPARE if waits else REPAIR)
        failed = self.failed_now
        req = None
        if waits:
            if self.crew_asked:  # a planned job was queuing for a crew: give it up for now
                crews.withdraw(self.crew_req)
                self.crew_asked = False
                self.crew_req = None
            while not all(p.claim.filled for p in failed):  # type: ignore[union-attr]
                self.wake = env.event()
                yield self.wake
            self._phase(WAITING_CREW)
            req = crews.request(UNPLANNED)
            if req is not None and not req.triggered:
                yield req
            self._phase(REPAIR)
        if self.log is not None:
            self.log(env.now, self.id, "", "work")
        work = self._work_list(failed)
        for p, _ in work:
            p.in_stop = True  # a block date during the repair does not ask for it again
        duration = self.ctx.crews_spec.unplanned_repair.quantile(failed[0].stop_u)
        if duration > 0.0:
            yield env.timeout(duration)
        self._renew(work)
        crews.release(req, duration)
        self._go_up(duration)

    def _planned_stop(self) -> Generator[AnyEvent, Any, None]:
        env = self.env
        self._go_down(PLANNED_WORK)
        if self.log is not None:
            self.log(env.now, self.id, "", "stop")
        req = self.crew_req
        self.crew_asked = False
        self.crew_req = None
        work = self._work_list([])
        if not work:  # cannot happen: asked for a crew only with spares on hand
            self.ctx.crews.release(req, 0.0)
            self._go_up()
            return
        for p, _ in work:
            p.in_stop = True
        lead = next((p for p, kind in work if kind == "planned"), work[0][0])
        duration = self.ctx.crews_spec.planned_repair.quantile(lead.stop_u)
        if duration > 0.0:
            yield env.timeout(duration)
        self._renew(work)
        self.ctx.crews.release(req, duration)
        self._go_up(duration)

    def _work_list(self, failed: list[PositionState]) -> list[tuple[PositionState, str]]:
        """Positions changed in this stop: failed, planned with spares, opportunistic."""
        work = [(p, "corrective") for p in failed]
        if not self.pending and not self.opportunistic:
            return work  # nothing else can join this stop
        clock = self.clock_op
        now = self.env.now
        for p in self.positions:
            if p.failed:
                continue
            if p.pending:
                if p.claim is not None and p.claim.filled:
                    work.append((p, "planned"))
                continue
            if p.opp_age_h < INF and p.opportunity_due(clock, now) and p.store.try_issue():
                work.append((p, "opportunistic"))
        return work

    def _renew(self, work: list[tuple[PositionState, str]]) -> None:
        """Change the bearings of ``work``: each position's next life starts now."""
        now = self.env.now
        clock = self.clock_op
        counts = self.counts
        sampler = self.ctx.life_sampler
        for p, kind in work:
            if kind == "planned":
                p.planned += 1
                counts["planned"] += 1
            elif kind == "opportunistic":
                p.opportunistic += 1
                counts["opportunistic"] += 1
            if kind != "corrective":
                self.change_times.append(now)
            if self.log is not None:
                self.log(now, self.id, p.id, kind)
            # its k-th life (k >= 1), drawn by the one install rule
            p.fit(clock, now, float(sampler(self.id, p.id, p.k)) if sampler is not None else None)
            if p.store.order_ahead and p.age_due_h < INF:
                self.announce_age_due(p)
        if self.pending:
            self.pending = [p for p in self.pending if p.pending]
            self.start_at = min((p.start_at for p in self.pending), default=INF)

    # --- end of the run ----------------------------------------------------------------
    def close(self, horizon_h: float) -> None:
        """Close the books at the horizon: the operating clock and the current phase."""
        if self.running:
            self.clock_op += self.share * (horizon_h - self.t_sync)
        else:
            self.book.down(self.down_since, horizon_h, self.share)
        self.t_sync = horizon_h
        self.phase_h[self.phase] += horizon_h - self.phase_t
        self.phase_t = horizon_h


def unit_columns(units: list[UnitRunner], horizon_h: float) -> dict[str, list[Any]]:
    """The ``units`` table of :class:`~fleetsim.sim.records.ReplicationResult`, by column."""
    hours = [u.phase_h for u in units]
    down = [h[WAITING_SPARE] + h[WAITING_CREW] + h[REPAIR] + h[PLANNED_WORK] for h in hours]
    return {
        "unit": [u.id for u in units],
        "machine": [u.machine.id for u in units],
        "running_h": [h[RUNNING] for h in hours],
        "operating_h": [h[RUNNING] * u.share for u, h in zip(units, hours, strict=True)],
        "waiting_spare_h": [h[WAITING_SPARE] for h in hours],
        "waiting_crew_h": [h[WAITING_CREW] for h in hours],
        "repair_h": [h[REPAIR] for h in hours],
        "planned_h": [h[PLANNED_WORK] for h in hours],
        "down_h": down,
        "availability": [h[RUNNING] / horizon_h for h in hours],
        "failures": [u.failures for u in units],
        "stops": [u.stops for u in units],
        "lost_operating_h": [d * u.share for u, d in zip(units, down, strict=True)],
    }


def position_columns(units: list[UnitRunner]) -> dict[str, list[Any]]:
    """The ``positions`` table of :class:`~fleetsim.sim.records.ReplicationResult`, by column."""
    owner = [u for u in units for _ in u.positions]
    ps = [p for u in units for p in u.positions]
    return {
        "unit": [u.id for u in owner],
        "position": [p.id for p in ps],
        "machine": [u.machine.id for u in owner],
        "bearing": [p.bearing_id for p in ps],
        "policy": [p.policy.kind for p in ps],
        "failures": [p.failures for p in ps],
        "planned": [p.planned for p in ps],
        "opportunistic": [p.opportunistic for p in ps],
        "defects": [p.defects for p in ps],
        "detections": [p.detections for p in ps],
        "age_end_h": [u.clock_op - p.installed_op for u, p in zip(owner, ps, strict=True)],
    }

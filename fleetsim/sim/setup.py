"""What the units of one replication start from: shared context, machine types, positions.

:class:`SimContext` is what all units of a replication share (environment,
recorder, crews, stores, groups, random streams). :class:`MachineSetup` is
built once per machine type and draws, for all its units at once, the
bearings fitted at the start. :class:`PositionState` is the current bearing
of one position of one unit and its counters; :mod:`fleetsim.sim.unit` and
:mod:`fleetsim.sim.quiet` change it as the bearing ages, fails and is renewed.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from typing import TYPE_CHECKING

import numpy as np

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import Crews, Machine, Position
from fleetsim.sim.crews import CrewPool
from fleetsim.sim.discount import Discount
from fleetsim.sim.groups import GroupTracker
from fleetsim.sim.instants import TIE_H
from fleetsim.sim.lean_env import AnyEnvironment
from fleetsim.sim.records import Recorder
from fleetsim.sim.scan_heap import next_op
from fleetsim.sim.schedule import (
    MaintenancePlan,
    compile_plan,
    inspection_count,
    inspections_to_detect,
)
from fleetsim.sim.stores import Claim, SpareStore, UnlimitedSupply
from fleetsim.sim.streams import DETECTION, LIFE, PF, STOP, Streams, UniformTable
from fleetsim.sim.tally import CHANGES, FAILURES, INSPECTIONS, LABOUR_H

if TYPE_CHECKING:
    from fleetsim.sim.scan_heap import PositionHeap

INF = math.inf

#: ``life_sampler(unit_id, position_id, k)`` → operating hours from fitting to the
#: first detectable defect of the k-th bearing in that position (k = 0 is the
#: bearing fitted at the start: its *remaining* life beyond the starting age).
LifeSampler = Callable[[str, str, int], float]


@dataclass(slots=True)
class SimContext:
    """What all units of one replication share."""

    env: AnyEnvironment
    recorder: Recorder
    crews: CrewPool
    crews_spec: Crews
    stores: dict[str, SpareStore | UnlimitedSupply]
    groups: GroupTracker
    streams: Streams
    life_sampler: LifeSampler | None = None
    discount: Discount | None = None


class MachineSetup:
    """What every unit of one machine type shares in one replication.

    Built once per machine type by :func:`~fleetsim.sim.engine.simulate`, so a
    unit's own set-up is little more than its positions' states. It also draws,
    for the whole machine type at once, the bearings fitted at the start: their
    remaining lives beyond the starting ages (row k = 0 of the life table, or
    ``life_sampler(unit, position, 0)``), P-F intervals and stop quantiles.
    """

    __slots__ = ("machine", "index", "plan", "start_ages_h", "start_cal_h", "stores",
                 "life_table", "pf_table", "stop_table", "det_table", "random_stops",
                 "opportunistic", "repair_free", "quiet", "first_defect_h", "first_fail_h",
                 "first_stop_u", "first_looks", "slots", "journals", "spans")

    def __init__(self, ctx: SimContext, machine: Machine, machine_index: int) -> None:
        specs = machine.positions
        n_pos = len(specs)
        streams = ctx.streams
        crews = ctx.crews_spec
        self.machine = machine
        self.index = machine_index
        self.plan: MaintenancePlan = compile_plan(machine)
        plan = self.plan
        ages = machine.ages_h()
        #: starting ages in hours, [unit][position]
        self.start_ages_h: list[list[float]] = ages.tolist()
        #: calendar hours since the bearings fitted at the start were fitted, [unit][position]
        self.start_cal_h: list[list[float]] = start_calendar_ages(ages, machine.operating_share).tolist()
        self.stores = [ctx.stores[p.bearing_id] for p in specs]
        self.random_stops = crews.planned_repair.kind != "fixed" or crews.unplanned_repair.kind != "fixed"
        # Tables are keyed streams: leaving out the ones nothing reads shifts no other stream.
        self.life_table = streams.table(machine_index, machine.count, n_pos, LIFE)
        self.pf_table = (streams.table(machine_index, machine.count, n_pos, PF)
                         if plan.pf_given else None)
        self.stop_table = (streams.table(machine_index, machine.count, n_pos, STOP)
                           if self.random_stops else None)
        self.det_table = (streams.table(machine_index, machine.count, n_pos, DETECTION)
                          if plan.rounds else None)
        self.opportunistic = plan.opportunistic
        # Nothing can keep a repair waiting when spares and crews are unlimited.
        self.repair_free = ctx.crews.resource is None and not any(
            store.limited for store in self.stores)
        # Nothing outside a unit can wake it when, besides, every position is
        # run-to-failure or age-replaced without a P-F interval and no group holds its
        # planned work (the last is checked per unit).
        self.quiet = self.repair_free and all(
            p.policy.kind in ("run-to-failure", "age") and p.pf_interval is None for p in specs)
        # The bearings fitted at the start (k = 0), for all units at once.
        sampler = ctx.life_sampler
        if sampler is None:
            u0 = self.life_table.row(0)
            life = np.empty_like(u0)
            same_life: dict[LifeDistribution, list[int]] = {}
            for j, p in enumerate(specs):
                same_life.setdefault(p.life, []).append(j)
            for dist, cols in same_life.items():
                life[:, cols] = dist.lives_from_uniform(u0[:, cols], ages[:, cols])
        else:
            life = np.array([[float(sampler(uid, p.id, 0)) for p in specs]
                             for uid in machine.unit_ids()])
        fail = life + pf_hours(specs, self.pf_table, 0)
        #: operating hours to the first defect and to the failure, [unit][position]
        self.first_defect_h: list[list[float]] = life.tolist()
        self.first_fail_h: list[list[float]] = fail.tolist()
        self.first_stop_u: list[list[float]] | None = (
            self.stop_table.row(0).tolist() if self.stop_table is not None else None
        )
        #: inspections the first defects need to be found, [unit][position]
        self.first_looks: list[list[float]] | None = (
            looks_needed(plan, self.det_table, 0).tolist() if self.det_table is not None else None
        )
        #: the plan's rules of each position as Python values, [position]: (age due h,
        #: opportunistic age h, opportunistic on the calendar, skip younger than h,
        #: detection probability, inspected)
        book = ctx.recorder.book
        #: the year book's journals of failures, changes and inspections (one append each)
        self.journals = (book.journal(FAILURES), book.journal(CHANGES), book.journal(INSPECTIONS))
        #: and of the units' stops and crew work, (start, end) pairs (one extend each)
        self.spans = (book.down_journal(machine.operating_share), book.span_journal(LABOUR_H))
        self.slots: list[tuple[float, float, bool, float, float, bool]] = list(zip(
            plan.age_due_h.tolist(), plan.opportunistic_age_h.tolist(),
            [bool(x) for x in plan.opportunistic_calendar.tolist()], plan.skip_younger_h.tolist(),
            plan.detection.tolist(), [bool(x) for x in plan.inspected.tolist()], strict=True))


def start_calendar_ages(ages_h: np.ndarray, operating_share: float) -> np.ndarray:
    """Calendar hours since the bearings fitted at the start were fitted.

    Starting ages are operating hours; the calendar age is taken as the
    operating age over the machine's operating share (the operating age itself
    when the machine never runs).
    """
    return ages_h / operating_share if operating_share > 0 else ages_h.copy()


def pf_hours(specs: tuple[Position, ...], pf_table: UniformTable | None, k: int) -> np.ndarray:
    """P-F intervals in operating hours of the k-th bearings of every unit, (units, positions).

    Zero where a position has no P-F interval (or no position has one).
    """
    if pf_table is None:
        return np.zeros(1)
    u = pf_table.row(k)
    out = np.zeros_like(u)
    for j, p in enumerate(specs):
        if p.pf_interval is not None:
            out[:, j] = p.pf_interval.quantiles(u[:, j])
    return out


def looks_needed(plan: MaintenancePlan, det_table: UniformTable, k: int) -> np.ndarray:
    """Inspections the k-th defects of every unit need before one finds it, (units, positions)."""
    return inspections_to_detect(det_table.row(k), plan.detection[None, :])


def scan(
    positions: list[PositionState], clock_op: float
) -> tuple[list[PositionState] | None, list[PositionState] | None, list[PositionState] | None,
           float]:
    """The one scan of a unit's positions at operating clock ``clock_op`` (both processes).

    A unit with many positions asks its :class:`~fleetsim.sim.scan_heap.PositionHeap`
    instead (the same answer without a pass over every position).

    Returns ``(failed, due, defects, next_op)``: the positions whose failure has come,
    those whose age replacement fell due (their ``due_op`` is cleared: asked once),
    those whose defect appeared (marked seen), each None when empty, and the
    operating clock value of the next of these events (inf: none). A position
    whose :attr:`~PositionState.next_op` lies after ``clock_op`` has nothing come
    and adds only that value. An event within :data:`~fleetsim.sim.instants.TIE_H`
    after ``clock_op`` has come (the same instant up to rounding).
    """
    clock_op += TIE_H
    nxt = INF
    failed: list[PositionState] | None = None
    due: list[PositionState] | None = None
    defects: list[PositionState] | None = None
    for p in positions:
        t = p.next_op
        if t > clock_op:  # nothing of this position has come (nearly every one)
            if t < nxt:
                nxt = t
            continue
        if not p.defect_seen:
            if p.defect_op <= clock_op:
                p.defect_seen = True
                if defects is None:
                    defects = [p]
                else:
                    defects.append(p)
            elif p.defect_op < nxt:
                nxt = p.defect_op
        fail_op = p.fail_op
        if fail_op <= clock_op:
            if failed is None:
                failed = [p]
            else:
                failed.append(p)
            continue
        if fail_op < nxt:
            nxt = fail_op
        due_op = p.due_op
        if due_op <= clock_op:
            p.due_op = INF
            if due is None:
                due = [p]
            else:
                due.append(p)
        elif due_op < nxt:
            nxt = due_op
        p.next_op = next_op(p)  # what has come is marked or cleared now
    return failed, due, defects, nxt


class PositionState:
    """The current bearing of one position of one unit, and its counters."""

    __slots__ = (
        "id", "bearing_id", "policy", "life", "pf", "store", "age_due_h", "opp_age_h",
        "opp_calendar", "skip_younger_h", "detection", "is_condition",
        "life_table", "pf_table", "stop_table", "det_table", "machine_no", "unit_no", "slot",
        "k", "stop_u", "installed_op", "installed_cal", "defect_op", "fail_op", "due_op",
        "looks", "looks_needed", "defect_seen", "detected", "failed", "pending", "in_stop",
        "start_at", "claim", "failures", "planned", "opportunistic", "defects", "detections",
        "heap", "ver", "next_op",
    )  # fmt: skip

    def __init__(
        self, spec: Position, setup: MachineSetup, streams: Streams, unit_no: int, slot: int
    ) -> None:
        """The position with the bearing fitted at the start (drawn by ``setup``)."""
        self.id = spec.id
        self.bearing_id = spec.bearing_id
        self.policy = spec.policy
        self.life = spec.life
        self.pf = spec.pf_interval
        self.store = setup.stores[slot]
        (self.age_due_h, self.opp_age_h, self.opp_calendar, self.skip_younger_h,
         self.detection, self.is_condition) = setup.slots[slot]
        self.machine_no = setup.index
        self.unit_no = unit_no
        self.slot = slot
        self.life_table = setup.life_table
        self.pf_table = setup.pf_table
        self.stop_table = setup.stop_table
        self.det_table = setup.det_table
        self.k = 1
        stop_u = setup.first_stop_u
        self.stop_u = stop_u[unit_no][slot] if stop_u is not None else 0.5
        self.installed_op = -setup.start_ages_h[unit_no][slot]
        self.installed_cal = -setup.start_cal_h[unit_no][slot]
        self.defect_op = setup.first_defect_h[unit_no][slot]
        self.fail_op = setup.first_fail_h[unit_no][slot]
        self.due_op = self.installed_op + self.age_due_h
        looks = setup.first_looks
        self.looks = 0
        self.looks_needed = looks[unit_no][slot] if looks is not None else INF
        self.defect_seen = self.detected = self.failed = self.pending = self.in_stop = False
        self.start_at = INF
        self.claim: Claim | None = None
        self.failures = self.planned = self.opportunistic = self.defects = self.detections = 0
        #: the unit's heap of next events when it has many positions (scan_heap.py)
        self.heap: PositionHeap | None = None
        self.ver = 0
        #: operating clock of its next event: min(unseen defect, failure, age due)
        self.next_op = next_op(self)

    def fit(self, clock_op: float, now_h: float, life_h: float | None = None) -> None:
        """Fit the next bearing (its k-th life, k >= 1) at operating clock ``clock_op``.

        The one install rule of both unit processes (:mod:`fleetsim.sim.unit`,
        :mod:`fleetsim.sim.quiet`). ``life_h``: the life to the defect from a
        ``life_sampler``; None draws it from the life table.
        """
        k = self.k
        u, j = self.unit_no, self.slot
        if life_h is None:
            life_h = self.life.life_from_uniform(self.life_table.get(k, u, j))
        defect_op = self.defect_op = clock_op + life_h
        pf = self.pf
        fail_op = self.fail_op = (defect_op + pf.quantile(self.pf_table.get(k, u, j))  # type: ignore[union-attr]
                                  if pf is not None else defect_op)
        if self.stop_table is not None:
            self.stop_u = self.stop_table.get(k, u, j)
        if self.det_table is not None:
            self.looks_needed = inspection_count(self.det_table.get(k, u, j), self.detection)
            self.looks = 0
        self.k = k + 1
        self.installed_op = clock_op
        self.installed_cal = now_h
        due_op = self.due_op = clock_op + self.age_due_h
        self.defect_seen = self.detected = self.failed = self.pending = self.in_stop = False
        self.start_at = INF
        self.claim = None
        # next_op(self), inlined (every fit): min(defect, failure, age due)
        t = fail_op if fail_op < defect_op else defect_op
        self.next_op = due_op if due_op < t else t
        if self.heap is not None:
            self.heap.push(self)

    def opportunity_due(self, clock_op: float, now_h: float) -> bool:
        """True when the position's age has reached its opportunistic threshold.

        The age is on the interval's own clock: calendar hours since fitting
        under block replacement, operating hours otherwise; an age a rounding
        short of the threshold has reached it (:data:`~fleetsim.sim.instants.TIE_H`).
        """
        if self.opp_calendar:
            return now_h - self.installed_cal >= self.opp_age_h - TIE_H
        return clock_op - self.installed_op >= self.opp_age_h - TIE_H

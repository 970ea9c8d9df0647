"""The vectorised engine: every unit of a machine type stepped at once with numpy.

For fleets whose positions are not coupled through finite stores or crews, a
replication is simulated without SimPy. The units of one machine type are
*lanes* of numpy arrays of shape (units, positions); each step takes, for every
lane still inside the horizon, its next event (a functional failure, an age
due, a block date, an inspection round, the start of requested planned work)
and processes all lanes together with masks. Positions of one unit stay
coupled exactly as in the discrete-event engine: a stop freezes the ageing of
the whole unit. Inspection visits that find nothing are not steps: they are
counted in bulk up to the visit that finds a defect (:mod:`fleetsim.sim.visits`).
Lanes of units past the horizon are dropped from the arrays as they finish,
so a late step costs what its lanes need.

The engine reads what the discrete-event engine reads: the machine type's
compiled :class:`~fleetsim.sim.schedule.MaintenancePlan` (so mixed policies
and inspection intervals on one machine follow the same rules), the same
random tables U[k, unit, position] (lives, P-F intervals, stop durations,
inspections to detect; :mod:`fleetsim.sim.streams`), the same life inverse
transform (:meth:`fleetsim.life.LifeDistribution.lives_from_uniform`) and the
same conventions (a spare is issued when it is asked for, a change counts when
its stop ends before the horizon, a stop's duration is drawn for the life that
ended). It fills the same :class:`~fleetsim.sim.tally.Tally`, so on the same
seed both engines give the same figures (``tests/test_engine_identity.py``).

When every position of a machine type is run-to-failure or age-replaced
without opportunistic changes, each position is an ordinary renewal process on
its unit's operating clock (a stop freezes the clock, whatever its duration),
and the whole-cycle path :func:`fleetsim.sim.cycles.renewal_cycles` draws the cycles directly,
merges each unit's events into stops and places the stops on the calendar
with a segmented cumulative sum: repairs, planned work and several positions
per unit stay in arrays. Block replacement on one interval beside
run-to-failure takes the same path block period by block period
(:func:`fleetsim.sim.block_cycles.block_cycles`).
"""

from __future__ import annotations

import math

import numpy as np

from fleetsim.scenario.model import Machine, Scenario
from fleetsim.sim.allocator import keep_freed_memory
from fleetsim.sim.block_cycles import block_cycles, block_exact
from fleetsim.sim.budget import ROUND_EVENTS, EventBudget, check_calendar, event_budget
from fleetsim.sim.coupled import coupled_exact, coupled_tally
from fleetsim.sim.cycles import renewal_cycles, renewal_exact
from fleetsim.sim.discount import discount_for
from fleetsim.sim.groups import replay_groups
from fleetsim.sim.instants import TIE_H, last_instant
from fleetsim.sim.lane_arrays import LaneSums, draw_lives, draw_pf, stop_hours
from fleetsim.sim.schedule import compile_plan, inspections_to_detect
from fleetsim.sim.streams import DETECTION, LIFE, PF, STOP, Streams
from fleetsim.sim.tally import (
    CHANGES,
    FAILURES,
    INSPECTIONS,
    BearingTally,
    MachineTally,
    Tally,
    group_tallies,
)
from fleetsim.sim.visits import detection_times, visits_before, window_index, window_visits
from fleetsim.sim.years import YearBook

INF = math.inf
#: When the lanes still inside the horizon are at most this share of those held, the
#: others are dropped from the arrays (a late step then costs what its lanes need)...
COMPACT_SHARE = 0.75
#: ... and at least this many lanes go (below it the copying costs more than it saves).
COMPACT_MIN = 64
#: The per-lane state, gathered when the finished lanes are dropped.
_LANE_STATE = ("t", "age", "fitted_cal", "k", "defect_age", "fail_age", "stop_u", "looks",
               "looks_needed", "detected", "pending", "start_at", "next_block", "next_insp",
               "unit")


class _Lanes:
    """State of all units of one machine type in one replication (the general path)."""

    def __init__(self, machine: Machine, index: int, scenario: Scenario, streams: Streams,
                 horizon_h: float, book: YearBook, keep_intervals: bool,
                 budget: EventBudget | None = None) -> None:
        self.m = machine
        #: counts what a step does beyond one event a lane: visits counted in bulk, block
        #: dates inside a stop (each one event of the discrete-event engine)
        self.budget = budget
        self.H = horizon_h
        self.H_ev = last_instant(horizon_h)  # events from here on are at the horizon
        self.book = book
        plan = self.plan = compile_plan(machine)
        U, P = machine.count, len(machine.positions)
        self.U, self.P = U, P
        self.share = machine.operating_share
        self.crews = scenario.crews
        random_stops = self.crews.planned_repair.kind != "fixed" or \
            self.crews.unplanned_repair.kind != "fixed"
        self.T_life = streams.table(index, U, P, LIFE)
        self.T_pf = streams.table(index, U, P, PF) if plan.pf_given else None
        self.T_stop = streams.table(index, U, P, STOP) if random_stops else None
        self.T_det = streams.table(index, U, P, DETECTION) if plan.rounds else None
        self.sums = LaneSums(machine, keep_intervals, book)
        #: the unit of each lane (lanes of finished units are dropped, see _compact)
        self.unit = np.arange(U)
        self.t = np.zeros(U)
        age0 = machine.ages_h()
        self.age = age0.copy()
        share = self.share
        self.fitted_cal = -(age0 / share if share > 0 else age0.copy())
        self.k = np.zeros((U, P), dtype=np.int64)
        self.defect_age = np.empty((U, P))
        self.fail_age = np.empty((U, P))
        self.stop_u = np.full((U, P), 0.5)
        self.looks = np.zeros((U, P))
        self.looks_needed = np.full((U, P), INF)
        self.detected = np.zeros((U, P), dtype=bool)
        self.pending = np.zeros((U, P), dtype=bool)
        self.start_at = np.full((U, P), INF)
        self.next_block = np.array([[j.every_h for j in plan.blocks]] * U).reshape(U, -1)
        self.next_insp = np.array([[r.every_h for r in plan.rounds]] * U).reshape(U, -1)
        self.has_age = bool(np.isfinite(plan.age_due_h).any())
        self.round_cols = [self._columns(r.positions) for r in plan.rounds]
        #: visits that find nothing are counted in bulk between events (fleetsim.sim.visits;
        #: a unit that never runs has no clock to place its windows on: visit by visit)
        self.bulk_visits = bool(plan.rounds) and share > 0
        self._windows: list[tuple[np.ndarray, np.ndarray]] = []
        self.block_cols = [self._columns(j.positions) for j in plan.blocks]
        uu, pp = np.indices((U, P))
        self._draw(uu.ravel(), pp.ravel(), age0.ravel())

    def _columns(self, positions: tuple[int, ...]) -> np.ndarray:
        cols = np.zeros(self.P, dtype=bool)
        cols[list(positions)] = True
        return cols

    # --- draws -------------------------------------------------------------------------
    def _draw(self, u: np.ndarray, p: np.ndarray, age: np.ndarray | float = 0.0) -> None:
        """Draw the k-th life of positions (u, p) (their age now ``age``)."""
        if u.size == 0:
            return
        k = self.k[u, p]
        m = self.m
        unit = self.unit[u]  # (the tables are by unit)
        defect = np.asarray(age) + draw_lives(m, self.T_life.take(k, unit, p), p, age)
        self.defect_age[u, p] = defect
        pf_u = self.T_pf.take(k, unit, p) if self.T_pf is not None else None
        self.fail_age[u, p] = defect + draw_pf(m, pf_u, p)
        if self.T_stop is not None:
            self.stop_u[u, p] = self.T_stop.take(k, unit, p)
        if self.T_det is not None:
            self.looks_needed[u, p] = inspections_to_detect(self.T_det.take(k, unit, p),
                                                            self.plan.detection[p])
            self.looks[u, p] = 0.0

    def _request(self, mask: np.ndarray, at: np.ndarray, asked: np.ndarray | None = None) -> None:
        """Ask, at ``asked`` (default: now), for planned changes of ``mask`` to start at ``at``.

        ``at`` is per lane (units,) or per position (units, positions); ``asked``
        per lane. The spare is issued when it is asked for.
        """
        if not np.count_nonzero(mask):
            return
        new = mask & ~self.pending
        start = at[:, None] if at.ndim == 1 else at
        np.copyto(self.start_at, np.minimum(self.start_at, start), where=mask)
        if np.count_nonzero(new):
            self.pending |= new
            u, p = np.nonzero(new)
            when = self.t if asked is None else asked
            self.sums.issue(p, when[u])

    # --- stepping ----------------------------------------------------------------------
    def step(self) -> bool:
        """Process the next event of every active lane; False when all are done.

        (Tests of "any lane" use ``np.count_nonzero``: on the small arrays of one
        step it costs a third of ``.any()``, and a step makes dozens.)
        """
        H, H_ev = self.H, self.H_ev
        active = self.t < H_ev
        n_active = np.count_nonzero(active)
        if not n_active:
            return False
        if n_active <= COMPACT_SHARE * self.U and self.U - n_active >= COMPACT_MIN:
            self._compact(active)
            active = np.ones(self.U, dtype=bool)
        plan = self.plan
        share = self.share
        t = self.t
        with np.errstate(divide="ignore", invalid="ignore"):
            t_fail = (t[:, None] + (self.fail_age - self.age) / share).min(axis=1) if share > 0 \
                else np.full(self.U, INF)
            if share > 0 and self.has_age:
                due = np.where(self.pending, INF, plan.age_due_h[None, :] - self.age)
                t_next = np.minimum(t_fail, (t[:, None] + due / share).min(axis=1))
            else:
                t_next = t_fail  # (a new array: the steps below may write into it)
        if plan.blocks:
            np.minimum(t_next, self.next_block.min(axis=1), out=t_next)
        if self.bulk_visits:  # the next visit that finds a defect
            np.minimum(t_next, self._next_detection(), out=t_next)
        elif plan.rounds:
            np.minimum(t_next, self.next_insp.min(axis=1), out=t_next)
        t_plan = self.start_at.min(axis=1)
        np.minimum(t_next, t_plan, out=t_next)
        t_next = np.where(active, np.maximum(t_next, t), t)
        live = active & (t_next < H_ev)
        new_t = np.where(live, t_next, np.where(active, H, t))
        if self.bulk_visits:
            self._visits_before(active, live, new_t)
        self.age += (share * (new_t - t))[:, None]
        self.t = new_t
        if not np.count_nonzero(live):
            return False
        now = self.t
        L = live[:, None]
        failed = L & (self.fail_age <= self.age + TIE_H)
        is_fail = np.asarray(failed.any(axis=1), dtype=bool)
        # age dues become requests for now
        if self.has_age:
            self._request(L & ~failed & (self.age >= plan.age_due_h[None, :] - TIE_H), now)
        # block dates: request the positions of each due job that are old enough
        for j, job in enumerate(plan.blocks):
            lanes = live & (self.next_block[:, j] <= now + TIE_H)
            if np.count_nonzero(lanes):
                self._block_date(lanes, j, job.positions, self.next_block[:, j].copy(),
                                 ~failed)
                self.next_block[:, j] = np.where(lanes, self.next_block[:, j] + job.every_h,
                                                 self.next_block[:, j])
        # inspection rounds of running units
        for r, job in enumerate(plan.rounds):
            lanes = live & (self.next_insp[:, r] <= now + TIE_H) & ~is_fail
            if np.count_nonzero(lanes):
                self._inspect(lanes, r)
            due = live & (self.next_insp[:, r] <= now + TIE_H)
            self.next_insp[:, r] = np.where(due, self.next_insp[:, r] + job.every_h,
                                            self.next_insp[:, r])
        # (the requests of this step may have moved start dates earlier)
        is_plan = live & ~is_fail & (self.start_at.min(axis=1) <= now + TIE_H)
        stops = is_fail | is_plan
        if np.count_nonzero(stops):  # failures (repair) and planned work, lane by lane
            self._stop(stops, failed)
        return True

    def _compact(self, active: np.ndarray) -> None:
        """Drop the lanes of units past the horizon (their sums are in ``self.sums``)."""
        keep = np.flatnonzero(active)
        for name in _LANE_STATE:
            setattr(self, name, getattr(self, name)[keep])
        self.U = keep.size

    def _block_date(self, lanes: np.ndarray, j: int, positions: tuple[int, ...],
                    date: np.ndarray, allowed: np.ndarray) -> None:
        cols = self.block_cols[j]
        old = (date[:, None] - self.fitted_cal) >= self.plan.skip_younger_h[None, :] - TIE_H
        self._request(lanes[:, None] & cols[None, :] & old & allowed, date, date)

    def _next_detection(self) -> np.ndarray:
        """Per lane, the calendar hour of the first visit that finds a defect if the unit
        runs until then (inf: none); keeps each round's window indexes for
        :meth:`_visits_before`."""
        out = np.full(self.U, INF)
        self._windows = []
        t, share = self.t, self.share
        with np.errstate(divide="ignore", invalid="ignore"):
            for r, job in enumerate(self.plan.rounds):
                nv = self.next_insp[:, r]
                j_in, j_out = window_index(t, nv, job.every_h, self.defect_age, self.fail_age,
                                           self.age, share)
                self._windows.append((j_in, j_out))
                watched = self.round_cols[r][None, :] & ~self.detected
                np.minimum(out, detection_times(nv, job.every_h, j_in, j_out, self.looks,
                                                self.looks_needed, watched), out=out)
        return out

    def _visits_before(self, active: np.ndarray, live: np.ndarray, new_t: np.ndarray) -> None:
        """Count the visits that find nothing before each lane's next step (before the
        horizon for lanes that end): the visits, their year book and the looks inside
        the windows; the visit at the step itself is made by :meth:`step`."""
        limit = np.where(live, new_t - TIE_H, np.where(active, self.H_ev, -INF))
        for r, job in enumerate(self.plan.rounds):
            nv = self.next_insp[:, r]
            n = visits_before(nv, job.every_h, limit)
            lanes = np.flatnonzero(n)
            if not lanes.size:
                continue
            per = n[lanes].astype(np.int64)
            if self.budget is not None:  # (before the arrays of their dates are made)
                self.budget.spend(int(per.sum()))
            self.sums.inspections += float(per.sum())
            j = np.arange(int(per.sum())) - np.repeat(np.cumsum(per) - per, per)
            self.book.at_later(INSPECTIONS, np.repeat(nv[lanes], per) + j * job.every_h)
            j_in, j_out = self._windows[r]
            watched = self.round_cols[r][None, :] & ~self.detected
            self.looks += np.where(watched, window_visits(n, j_in, j_out), 0.0)
            self.next_insp[:, r] = nv + n * job.every_h

    def _inspect(self, lanes: np.ndarray, r: int) -> None:
        s = self.sums
        s.inspections += float(np.count_nonzero(lanes))
        self.book.at_later(INSPECTIONS, self.t[lanes])
        cols = self.round_cols[r]
        window = (lanes[:, None] & cols[None, :] & ~self.detected
                  & (self.defect_age <= self.age) & (self.fail_age > self.age))
        if not np.count_nonzero(window):
            return
        self.looks += window
        found = window & (self.looks >= self.looks_needed)
        if np.count_nonzero(found):
            self.detected |= found
            s.detections += float(np.count_nonzero(found))
            # each found position asks to start at its own response time
            self._request(found, self.t[:, None] + self.plan.respond_h[None, :])

    def _stop(self, lanes: np.ndarray, failed: np.ndarray | None) -> None:
        """The units ``lanes`` stop: repair of ``failed`` (None: planned work) and what joins."""
        s = self.sums
        plan = self.plan
        u = np.nonzero(lanes)[0]
        t0 = self.t[u]
        if failed is None:
            failed = np.zeros((self.U, self.P), dtype=bool)
        fu = failed[u]
        n_fail = fu.sum(axis=1)
        if np.count_nonzero(n_fail):
            s.failures[self.unit[u]] += n_fail
            self.book.at_later(FAILURES, np.repeat(t0, n_fail))
            watched = fu & plan.inspected[None, :]
            if np.count_nonzero(watched):
                found_first = watched & self.detected[u]
                n_found = float(np.count_nonzero(found_first))
                s.missed_defects += float(np.count_nonzero(watched)) - n_found
                s.failures_after_detection += n_found
            new_claim = fu & ~self.pending[u]
            ui, pi = np.nonzero(new_claim)
            s.issue(pi, t0[ui])
        pend = self.pending[u] & ~fu
        if plan.opportunistic:
            cal_age = t0[:, None] - self.fitted_cal[u]
            age = np.where(plan.opportunistic_calendar[None, :], cal_age, self.age[u])
            chance = ~fu & ~pend & (age >= plan.opportunistic_age_h[None, :] - TIE_H)
            ui, pi = np.nonzero(chance)
            s.issue(pi, t0[ui])
            opp: np.ndarray | None = chance
            changed = pend | chance
        else:
            opp, changed = None, pend
        work = fu | changed
        # one duration per stop, from the life that ended (first failed, else first planned)
        lead = np.where(n_fail > 0, np.argmax(fu, axis=1), np.argmax(pend, axis=1))
        su = self.stop_u[u, lead]
        d: np.ndarray | float
        if np.count_nonzero(n_fail):
            d = np.where(n_fail > 0, stop_hours(self.crews.unplanned_repair, su),
                         stop_hours(self.crews.planned_repair, su))
        else:
            d = stop_hours(self.crews.planned_repair, su)
        end = t0 + d
        shown = np.minimum(end, self.H)
        held = shown - t0
        s.down_repair_h += float(held[n_fail > 0].sum())
        s.down_planned_h += float(held[n_fail == 0].sum())
        done = end < self.H_ev  # the changes count when the stop ends inside the horizon
        # crews worked the stops ended within the horizon: their hours are crew hours
        self.book.down_later(t0, shown, self.share, worked=done)
        s.stopped(self.unit[u], t0, shown)
        n_planned = pend.sum(axis=1)
        s.planned += float(n_planned[done].sum())
        if opp is not None:
            n_opp = opp.sum(axis=1)
            s.opportunistic += float(n_opp[done].sum())
            n_changes = n_planned + n_opp
        else:
            n_changes = n_planned
        self.book.at_later(CHANGES, np.repeat(end[done], n_changes[done]))
        # calendar jobs that fell inside the stop: block dates ask for what is not being
        # changed; inspections of a stopped unit are skipped
        whole = np.zeros((self.U, self.P), dtype=bool)
        whole[u] = work
        for j, job in enumerate(plan.blocks):
            nb = self.next_block[u, j]
            while True:
                # a date at the restart instant falls in the stop (as in the DES); dates from
                # the horizon on never come
                inside = (nb <= end + TIE_H) & (nb < self.H_ev)
                n_inside = int(np.count_nonzero(inside))
                if not n_inside:
                    break
                if self.budget is not None:
                    self.budget.spend(max(n_inside, ROUND_EVENTS))
                lanes_j = np.zeros(self.U, dtype=bool)
                lanes_j[u[inside]] = True
                date = np.full(self.U, INF)
                date[u] = nb
                self._block_date(lanes_j, j, job.positions, date, ~whole)
                nb = np.where(inside, nb + job.every_h, nb)
            self.next_block[u, j] = nb
        for r, job in enumerate(plan.rounds):
            ni = self.next_insp[u, r]
            # a visit at the restart instant is skipped too (as in the DES)
            late = ni <= end + TIE_H
            steps = np.where(late, np.floor((end - ni) / job.every_h) + 1.0, 0.0)
            ni = ni + steps * job.every_h
            ni = np.where(late & (ni <= end + TIE_H), ni + job.every_h, ni)
            self.next_insp[u, r] = ni
        self.t[u] = end
        # renewals at the end of the stop
        ren = whole.copy()
        ren[u[~done]] = False
        ru, rp = np.nonzero(ren)
        if ru.size:
            self.k[ru, rp] += 1
            self.age[ru, rp] = 0.0
            self.fitted_cal[ru, rp] = self.t[ru]
            self.detected[ru, rp] = False
            self.pending[ru, rp] = False
            self.start_at[ru, rp] = INF
            self._draw(ru, rp)
        gone = np.zeros(self.U, dtype=bool)
        gone[u[~done]] = True
        self.t[gone] = self.H


def simulate_machine(machine: Machine, index: int, scenario: Scenario, streams: Streams,
                     horizon_h: float, book: YearBook, keep_intervals: bool | None = None,
                     budget: EventBudget | None = None) -> LaneSums:
    """Simulate all units of one machine type for one replication.

    ``keep_intervals``: keep every unit's stops (unit, start, end), by default when
    the scenario has groups (they are replayed through the group tracker).
    ``budget``: counts the events (one per unit and step, one per position and
    renewal round, at least ``ROUND_EVENTS`` a step); see :mod:`fleetsim.sim.budget`.
    """
    keep = bool(scenario.groups) if keep_intervals is None else keep_intervals
    if renewal_exact(machine, scenario):
        return renewal_cycles(machine, index, scenario, streams, horizon_h, book, keep, budget)
    if block_exact(machine, scenario):
        by_periods = block_cycles(machine, index, scenario, streams, horizon_h, book, keep, budget)
        if by_periods is not None:
            return by_periods
    lanes = _Lanes(machine, index, scenario, streams, horizon_h, book, keep, budget)
    while lanes.step():
        if budget is not None:
            budget.spend(max(machine.count, ROUND_EVENTS))
    return lanes.sums


def simulate_vector(scenario: Scenario, seed: np.random.SeedSequence,
                    horizon_h: float | None = None) -> Tally:
    """One replication with the vectorised engine.

    Parameters
    ----------
    scenario
        A scenario without finite stores or crews (:attr:`Scenario.independent_positions`),
        or one whose positions are all run-to-failure (:func:`~fleetsim.sim.coupled.coupled_exact`).
    seed
        The replication's seed sequence.
    horizon_h
        Calendar horizon in hours (default: the study's).

    Returns
    -------
    Tally
        The replication's tally, the same structure the discrete-event engine fills.
    """
    if scenario.holding_groups:
        raise ValueError("groups that hold planned work back need the discrete-event engine")
    if not (scenario.independent_positions or coupled_exact(scenario)):
        raise ValueError("the vectorised engine needs unlimited spares and crews, "
                         "or every position on run-to-failure")
    keep_freed_memory()  # its arrays reuse freed memory (allocator.py), once per process
    H = float(scenario.study.horizon_h if horizon_h is None else horizon_h)
    book = YearBook(H, discount_for(scenario.costs.discount_rate_per_year))
    streams = Streams(seed)
    budget = EventBudget(event_budget(scenario, H), scenario.source)
    check_calendar(scenario, H, budget.limit)
    if not scenario.independent_positions:
        return coupled_tally(scenario, streams, H, book, budget)
    sums = [simulate_machine(m, i, scenario, streams, H, book, budget=budget)
            for i, m in enumerate(scenario.machines)]
    machines: dict[str, MachineTally] = {}
    issued: dict[str, float] = {b: 0.0 for b in scenario.bearings}
    intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]] = []
    offset = 0
    for m, s in zip(scenario.machines, sums, strict=True):
        down = s.down_repair_h + s.down_planned_h
        machines[m.id] = MachineTally(units=m.count, failures=float(s.failures.sum()),
                                      down_h=down, lost_operating_h=down * m.operating_share)
        for j, pos in enumerate(m.positions):
            issued[pos.bearing_id] += float(s.issued[j])
        intervals.extend((u + offset, a, b) for u, a, b in s.intervals)
        offset += m.count
    rows = replay_groups(scenario, intervals, H, book, min(s.first_stop_h for s in sums))
    total = {name: sum(getattr(s, name) for s in sums) for name in (
        "planned", "opportunistic", "inspections", "detections", "missed_defects",
        "failures_after_detection", "down_repair_h", "down_planned_h")}
    counts = {
        "failures": float(sum(float(s.failures.sum()) for s in sums)),
        "planned": total["planned"], "opportunistic": total["opportunistic"],
        "inspections": total["inspections"], "detections": total["detections"],
        "missed_defects": total["missed_defects"],
        "failures_after_detection": total["failures_after_detection"],
        "orders": 0.0, "emergency_orders": 0.0, "stockouts": 0.0,
    }
    groups = group_tallies(rows, H)
    return Tally(
        horizon_h=H,
        counts=counts,
        downtime_h={"crew": 0.0, "spares": 0.0, "repair": total["down_repair_h"],
                    "planned": total["down_planned_h"]},
        machines=machines,
        bearings={b: BearingTally(issued=n, fill_rate=1.0) for b, n in issued.items()},
        groups=groups,
        book=book,
    )

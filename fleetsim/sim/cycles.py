"""The vectorised engine's whole-cycle path: run-to-failure and age replacement.

A stop freezes the ageing of every position of its unit, so on the unit's
operating clock each position is an ordinary renewal process whatever the
stop durations; :func:`renewal_cycles` draws the cycles on that clock and only
then places the stops on the calendar (see its docstring).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fleetsim.scenario.model import Machine, Scenario
from fleetsim.sim.budget import ROUND_EVENTS, EventBudget
from fleetsim.sim.instants import last_instant
from fleetsim.sim.lane_arrays import LaneSums, draw_lives, draw_pf, stop_hours
from fleetsim.sim.schedule import compile_plan
from fleetsim.sim.streams import LIFE, PF, STOP, Streams
from fleetsim.sim.tally import CHANGES, FAILURES
from fleetsim.sim.years import YearBook

INF = math.inf
_NONE = np.empty(0)  # no stop quantiles (fixed stop durations)


def renewal_cycles(machine: Machine, index: int, scenario: Scenario, streams: Streams,
                   horizon_h: float, book: YearBook, keep_intervals: bool,
                   budget: EventBudget | None = None) -> LaneSums:
    """Whole-cycle path: run-to-failure and age replacement, any stop durations.

    A stop freezes the ageing of every position of its unit, so on the unit's
    *operating* clock each position is an ordinary renewal process (cycle =
    min(life to F, T)) whatever the stops. The path draws every position's
    cycles on that clock in rounds (round k uses row k of the tables), merges
    the events of a unit's positions by operating clock (events at the same
    clock value are one stop, as in the discrete-event engine: a failure's stop
    if any position failed), and only then places the stops on the calendar:
    stop j of a unit starts at c_j / share + the durations of the stops before
    it (a segmented cumulative sum). Nothing is stepped event by event.
    """
    P = len(machine.positions)
    crews = scenario.crews
    random_stops = crews.unplanned_repair.kind != "fixed" or crews.planned_repair.kind != "fixed"
    s = LaneSums(machine, keep_intervals, book)
    H = horizon_h
    share = machine.operating_share
    instant = (not random_stops and crews.unplanned_repair.value_h == 0.0
               and crews.planned_repair.value_h == 0.0)
    # With one position a unit, or stops of no duration, a stop delays nothing but its own
    # position: its calendar time follows round by round, and no merging is needed.
    alone = P == 1 or instant
    if alone:
        parts = _rounds(machine, index, scenario, streams, horizon_h, budget, alone=True)
        if not parts:
            return s
        e_idx = np.concatenate([x[0] for x in parts])
        e_fail = np.concatenate([x[2] for x in parts])
        e_unit, e_pos = _unit_and_position(e_idx, P)
        # every event is its own stop
        d = np.concatenate([x[3] for x in parts])
        t0 = np.concatenate([x[4] for x in parts])
        st_unit, st_fail, stop_of = e_unit, e_fail, None
    else:
        stops = stops_on_clock(machine, index, scenario, streams, horizon_h, budget)
        if stops is None:
            return s
        e_unit, e_pos, e_fail, stop_of = stops.e_unit, stops.e_pos, stops.e_fail, stops.stop_of
        st_unit, st_fail, d = stops.unit, stops.failed, stops.duration_h
        # calendar start of each stop: operating clock / share + earlier stops of its unit
        with np.errstate(divide="ignore", invalid="ignore"):
            run_h = stops.clock / share if share > 0 else np.zeros_like(stops.clock)
        t0 = run_h + earlier_stops_h(st_unit, d)
    end = t0 + d
    H_ev = last_instant(H)
    live = t0 < H_ev  # stops the horizon reaches (and every event in them)
    done = end < H_ev  # stops whose changes are made within the horizon
    ev_live, ev_t0 = (live, t0) if stop_of is None else (live[stop_of], t0[stop_of])
    # counts and the year book, with the DES's conventions
    every_failed = bool(e_fail.all())  # (run-to-failure: no planned change to count)
    t_live = ev_t0[ev_live]
    failed_ev = ev_live if every_failed else e_fail & ev_live
    s.failures += np.bincount(e_unit[failed_ev], minlength=machine.count)
    book.at_many(FAILURES, t_live if every_failed else ev_t0[failed_ev])
    s.issue(e_pos[ev_live], t_live)  # asked for at the failure or the due age
    if not every_failed:
        ev_done, ev_end = (done, end) if stop_of is None else (done[stop_of], end[stop_of])
        planned_ev = ~e_fail & ev_done
        s.planned += float(np.count_nonzero(planned_ev))
        book.at_many(CHANGES, ev_end[planned_ev])
    if not instant:
        shown = np.minimum(end, H)
        held = np.where(live, shown - t0, 0.0)
        s.down_repair_h += float(held[st_fail].sum())
        s.down_planned_h += float(held[~st_fail].sum())
        t0_live, shown_live = t0[live], shown[live]
        # crews worked the stops ended within the horizon: their hours are crew hours
        book.down_many(t0_live, shown_live, share, worked=done[live])
        s.stopped(st_unit[live], t0_live, shown_live)
    else:
        t0_live = t0[live]
        s.stopped(st_unit[live], t0_live, t0_live)
    return s


def earlier_stops_h(unit: np.ndarray, duration_h: np.ndarray) -> np.ndarray:
    """Per stop, the hours of the earlier stops of its unit (stops sorted by unit, then
    time): a cumulative sum restarted at each unit's first stop."""
    before = np.cumsum(duration_h) - duration_h
    first = np.ones(unit.size, dtype=bool)
    first[1:] = unit[1:] != unit[:-1]
    # ``before`` at the first stop of each stop's unit, repeated over the unit's stops
    at = np.flatnonzero(first)
    return before - np.repeat(before[at], np.diff(at, append=first.size))


def _rounds(machine: Machine, index: int, scenario: Scenario, streams: Streams,
            horizon_h: float, budget: EventBudget | None, alone: bool
            ) -> list[tuple[np.ndarray, ...]]:
    """Every position's cycles on its unit's operating clock, round by round.

    Round k draws the k-th life of every position still inside the horizon (row
    k of the tables). Each part: event index (unit · P + position), operating
    clock, failed, then, ``alone``, the stop duration and calendar start (each
    stop delays only its own position), else the stop quantile (empty with
    fixed durations).
    """
    U, P = machine.count, len(machine.positions)
    n = U * P
    plan = compile_plan(machine)
    share = machine.operating_share
    crews = scenario.crews
    random_stops = crews.unplanned_repair.kind != "fixed" or crews.planned_repair.kind != "fixed"
    T_life = streams.table(index, U, P, LIFE)
    T_pf = streams.table(index, U, P, PF) if plan.pf_given else None
    T_stop = streams.table(index, U, P, STOP) if random_stops else None
    H = horizon_h
    H_ev = last_instant(H)
    c_max = share * H  # no unit runs more operating hours than this within the horizon
    d_fail, d_plan = crews.unplanned_repair, crews.planned_repair
    instant = not random_stops and d_fail.value_h == 0.0 and d_plan.value_h == 0.0
    idx = np.arange(n)
    pos = np.tile(np.arange(P), U)
    cut0 = plan.age_due_h[pos]
    a0 = machine.ages_h().reshape(-1)
    clock = np.zeros(n)  # operating clock at the current fitting of each position
    delay = np.zeros(n)  # hours the position's own earlier stops took (when alone)
    u_due = (_due_uniforms(machine, plan.age_due_h)
             if T_pf is None and np.isfinite(plan.age_due_h).any() else None)
    if u_due is not None and u_due[u_due <= 1.0].max() > _DUE_SHARE_MAX:
        u_due = None  # most cycles fail before their due age: computing every life costs less
    parts: list[tuple[np.ndarray, ...]] = []
    k = 0
    while idx.size:
        if budget is not None:
            budget.spend(max(idx.size, ROUND_EVENTS))
        age: np.ndarray | float
        if k == 0:  # every position (idx is 0 .. n-1): the arrays themselves, no gathers
            p, age, u = pos, a0, T_life.row(0).reshape(-1)
            u_pf = T_pf.row(0).reshape(-1) if T_pf is not None else None
            cut = np.maximum(cut0 - a0, 0.0)
        else:
            p, age, u = pos[idx], 0.0, T_life.row(k).reshape(-1)[idx]
            u_pf = T_pf.row(k).reshape(-1)[idx] if T_pf is not None else None
            cut = cut0[idx]
        if u_due is not None and (k > 0 or not a0.any()):
            failed, c = _cycle_ends(machine, u, p, cut, clock, u_due)
        else:
            life = draw_lives(machine, u, p, age)
            if u_pf is not None:
                life = life + draw_pf(machine, u_pf, p)
            failed = life <= cut  # a failure at the due age is a failure, as in the DES
            c = clock + np.minimum(life, cut)
        if alone:
            with np.errstate(divide="ignore", invalid="ignore"):
                t0 = (c / share if share > 0 else np.zeros_like(c)) + delay
            if instant:
                d = np.zeros(idx.size)
            elif T_stop is not None:
                su = T_stop.row(k).reshape(-1)[idx]
                d = np.where(failed, stop_hours(d_fail, su), stop_hours(d_plan, su))
            else:
                d = np.where(failed, d_fail.value_h, d_plan.value_h)
            inside = t0 < H_ev
            keep = inside & (t0 + d < H_ev)  # renewed within the horizon: it goes on
            parts.append((idx[inside], c[inside], failed[inside], d[inside], t0[inside]))
            idx, clock, delay = idx[keep], c[keep], (delay + d)[keep]
        else:
            inside = (c < c_max) | (c <= 0.0)  # (a position due at the start stops at once)
            su = T_stop.row(k).reshape(-1)[idx] if T_stop is not None else _NONE
            if not inside.all():
                sel = np.flatnonzero(inside)
                idx, c, failed = idx.take(sel), c.take(sel), failed.take(sel)
                su = su.take(sel) if su.size else su
            parts.append((idx, c, failed, su))
            clock = c
        k += 1
    return [x for x in parts if x[0].size] if sum(x[0].size for x in parts) else []


#: Uniforms this close to F(due age) have their lives computed to tell a failure at the
#: due age from a change (far more than the few ulps the inverse transform can be off).
_DUE_GUARD = 1e-9
#: Above this share of cycles failing before the due age, the masks cost more than the
#: lives they save (benchmarks/bench_sweep.py's short intervals gain, its long ones would not).
_DUE_SHARE_MAX = 0.5


_DUE_U: dict[int, tuple[Machine, np.ndarray]] = {}


def _due_uniforms(machine: Machine, age_due_h: np.ndarray) -> np.ndarray:
    """Per position, the uniform whose life is its due age, F(due age) (2: never due;
    cached per machine type).

    Lives grow with their uniforms (inverse transform), so a uniform below it
    (less the guard) ends its cycle in a failure and one above it (plus the
    guard) in a change at the due age, whatever its life.
    """
    hit = _DUE_U.get(id(machine))
    if hit is not None and hit[0] is machine:
        return hit[1]
    if len(_DUE_U) > 256:
        _DUE_U.clear()
    out = np.full(len(machine.positions), 2.0)
    for j, pos in enumerate(machine.positions):
        if math.isfinite(float(age_due_h[j])):
            out[j] = float(pos.life.cdf(float(age_due_h[j])))
    _DUE_U[id(machine)] = (machine, out)
    return out


def _cycle_ends(machine: Machine, u: np.ndarray, p: np.ndarray, cut: np.ndarray,
                clock: np.ndarray, u_due: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """(failed, clock at the cycle's end) of new bearings (no P-F interval), with the
    lives computed only where a uniform can end its cycle before the due age ``cut``
    (:func:`_due_uniforms`): the same values as computing every life."""
    need = np.flatnonzero(u <= u_due[p] + _DUE_GUARD)
    failed = np.zeros(u.size, dtype=bool)
    c = clock + cut
    if need.size:
        life = draw_lives(machine, u.take(need), p.take(need))
        cut_n = cut.take(need)
        failed[need] = life <= cut_n  # a failure at the due age is a failure, as in the DES
        c[need] = clock.take(need) + np.minimum(life, cut_n)
    return failed, c


def _unit_and_position(e_idx: np.ndarray, P: int) -> tuple[np.ndarray, np.ndarray]:
    if P & (P - 1) == 0:  # a power of two: shifts, the same values
        return e_idx >> (P.bit_length() - 1), e_idx & (P - 1)
    return np.divmod(e_idx, P)


@dataclass
class StopList:
    """A machine type's stops on its units' operating clocks, by unit, then clock.

    Events are the positions changed (``e_unit``, ``e_pos``, ``e_fail``), in
    the order of their stops and, inside a stop, its lead first (the first
    failed position in position order, else the first position: the DES's
    ``stop_u`` choice); ``stop_of`` gives each event's stop (None: every event is
    a stop of its own, the usual case with continuous lives). Per stop: its
    unit, operating clock, whether any position failed, and its repair or
    planned duration in hours.
    """

    e_unit: np.ndarray
    e_pos: np.ndarray
    e_fail: np.ndarray
    stop_of: np.ndarray | None
    unit: np.ndarray
    clock: np.ndarray
    failed: np.ndarray
    duration_h: np.ndarray


def stops_on_clock(machine: Machine, index: int, scenario: Scenario, streams: Streams,
                   horizon_h: float, budget: EventBudget | None = None) -> StopList | None:
    """The stops of every unit of ``machine`` on its operating clock (None: no stop).

    Events at the same clock value of one unit are one stop, as in the
    discrete-event engine (a failure's stop if any position failed). Where
    the stops fall on the calendar is left to the caller: it depends on their
    durations and, in a coupled fleet, on the waits for spares and crews.
    """
    parts = _rounds(machine, index, scenario, streams, horizon_h, budget, alone=False)
    if not parts:
        return None
    P = len(machine.positions)
    crews = scenario.crews
    d_fail, d_plan = crews.unplanned_repair, crews.planned_repair
    e_idx = np.concatenate([x[0] for x in parts])
    e_fail = np.concatenate([x[2] for x in parts])
    e_unit, e_pos = _unit_and_position(e_idx, P)
    e_clock = np.concatenate([x[1] for x in parts])
    order, e_unit, e_clock = _stop_order(e_unit, e_clock, e_fail, e_pos, P)
    e_pos, e_fail = e_pos[order], e_fail[order]
    same = (e_unit[1:] == e_unit[:-1]) & (e_clock[1:] == e_clock[:-1])
    if not same.any():  # every event its own stop (the usual case): no gathers
        stop_of, starts = None, None
        st_unit, st_clock, st_fail, lead = e_unit, e_clock, e_fail, order
    else:
        new = np.ones(e_unit.size, dtype=bool)
        new[1:] = ~same
        starts = np.flatnonzero(new)
        stop_of = np.cumsum(new) - 1  # stop index of every event
        st_unit, st_clock = e_unit[starts], e_clock[starts]
        st_fail = e_fail[starts]  # the lead failed iff any position of the stop failed
        lead = order[starts]
    if parts[0][3].size == 0:  # fixed durations
        d = np.where(st_fail, d_fail.value_h, d_plan.value_h)
    else:
        lead_u = np.concatenate([x[3] for x in parts])[lead]
        d = np.where(st_fail, stop_hours(d_fail, lead_u), stop_hours(d_plan, lead_u))
    return StopList(e_unit, e_pos, e_fail, stop_of, st_unit, st_clock, st_fail,
                    np.asarray(d, dtype=float))


def _stop_order(unit: np.ndarray, clock: np.ndarray, failed: np.ndarray, pos: np.ndarray,
                P: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The order of ``np.lexsort((pos, ~failed, clock, unit))``, in about half its time,
    with ``unit`` and ``clock`` in that order.

    One sort by clock, then a stable sort by unit (a radix sort for up to
    65,535 units) groups each unit's events by clock; only then are the few
    events that share a unit and a clock value (one stop) put in the order
    failed first, then by position, with a small lexsort of those events
    alone. Events of one stop have the same unit and clock, so the order of
    ties in the first sort is never seen.
    """
    order, su, sc = _by_unit_then_clock(unit, clock)
    tied = np.zeros(order.size, dtype=bool)
    same = (su[1:] == su[:-1]) & (sc[1:] == sc[:-1])
    tied[1:] |= same
    tied[:-1] |= same
    at = np.flatnonzero(tied)
    if at.size:  # the events of shared stops, by (stop, failed first, position)
        stop = np.cumsum(~same[at[1:] - 1])  # at[i] continues the stop of at[i-1] iff same
        stop = np.concatenate(([0], stop))
        ev = order[at]
        order[at] = ev[np.lexsort((pos[ev], ~failed[ev], stop))]  # (su, sc stay as they are)
    return order, su, sc


#: Events from which :func:`_by_unit_then_clock` tries one sort (below, the two sorts'
#: fewer numpy calls cost less than the sorting itself).
ONE_SORT_MIN = 2048
#: Fewest bits of the clock in the one sort's packed key (else the two sorts).
_CLOCK_BITS_MIN = 20


def _by_unit_then_clock(unit: np.ndarray, clock: np.ndarray
                        ) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """An order of the events by unit, then clock (ties in any order), and the sorted keys.

    From :data:`ONE_SORT_MIN` events, one sort of integers packing, from the top
    bit down, the unit, the clock rounded down to a fixed step (the clocks
    scaled by a power of two, so rounding is the only error) and the event's
    index, which the sorted integers then give back: sorting the values of an
    array costs less than an argsort. Where two different clocks of one unit
    fall in one step, the order is checked and, if wrong, made again as below.
    Otherwise a sort by clock and a stable sort by unit (a radix sort for up to
    65,535 units).
    """
    n = unit.size
    if n == 0:
        return np.zeros(0, dtype=np.intp), unit, clock
    if n >= ONE_SORT_MIN:  # (small: the two sorts)
        top, low = float(clock.max()), float(clock.min())
        index_bits = (n - 1).bit_length()
        clock_bits = 63 - index_bits - max(1, int(unit.max()).bit_length())
        # clock · 2^(bits − e) < 2^bits for every clock (top < 2^e); truncation floors
        shift = clock_bits - math.frexp(top)[1] if math.isfinite(top) else 0
        if (math.isfinite(top) and low >= 0.0 and clock_bits >= _CLOCK_BITS_MIN
                and shift < 1000):  # (clocks of a few 1e-300 h: the two sorts)
            steps = (clock * 2.0 ** shift).astype(np.int64)
            key = np.left_shift(unit, clock_bits, dtype=np.int64)
            key |= steps
            key <<= index_bits
            key |= np.arange(n)
            key.sort()
            order = (key & ((1 << index_bits) - 1)).astype(np.intp, copy=False)
            su, sc = (key >> (clock_bits + index_bits)).astype(unit.dtype), clock[order]
            if not ((su[1:] == su[:-1]) & (sc[1:] < sc[:-1])).any():
                return order, su, sc
    by_clock = np.argsort(clock)
    u = unit.astype(np.uint16 if int(unit.max()) < 65_536 else np.int64)
    order = by_clock[np.argsort(u[by_clock], kind="stable")]
    return order, unit[order], clock[order]


def renewal_exact(machine: Machine, scenario: Scenario) -> bool:
    """True when every position is run-to-failure or age-replaced without opportunistic
    changes: each is then a renewal process on its unit's operating clock."""
    if not {p.policy.kind for p in machine.positions} <= {"run-to-failure", "age"}:
        return False
    return all(p.policy.opportunistic_share is None for p in machine.positions)

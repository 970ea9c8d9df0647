"""The vectorised engine's whole-cycle path for block replacement.

Between two block dates nothing but failures and due ages changes a unit's
positions, and a stop freezes the unit's operating clock whatever it lasts:
so over one block period every position is a renewal process on that clock
(cycle = min(life to F, due age)), as on the whole-cycle path of
:mod:`fleetsim.sim.cycles`. This path takes the periods one after another,
every unit at once: it draws each position's cycles on the operating clock
up to the most the unit can run before the next date, merges a unit's
events at one clock value into one stop (a failure's if any position
failed, led by the first failed position, else the first), places the stops
on the calendar with a segmented cumulative sum of the stops before them,
keeps those that start before the date, and then makes the block stop of
every unit in arrays, with the discrete-event engine's rules
(:mod:`fleetsim.sim.unit`, :mod:`fleetsim.sim.policies`):

* a unit running at the date stops at once for one planned duration and has
  every block position changed that was fitted at least its skip interval
  before (the modified block rule; the duration is the quantile, under the
  planned-work duration, of the stop uniform of the first position's life);
  with none to change it runs on;
* a unit stopped at the date (a date at the restart instant counts) has the
  positions of that stop left out, and stops for the others as it ends; one
  stopped past the horizon asks for their spares and stops no more;
* spares are issued at the failure, the due age or the block date; changes
  count when their stop ends within the horizon; lives go on by their own
  table rows (row k for a position's k-th life), so the figures are the lane
  path's.

It serves machine types whose positions are run-to-failure, age-replaced or
block-replaced (any intervals, either scope, any skip rule), without
opportunistic changes, on a machine that runs (:func:`block_exact`). A
replication where a stop spans two dates or a block stop reaches the next
date returns None, and the lane path runs it instead.
"""

from __future__ import annotations

import numpy as np

from fleetsim.scenario.model import Machine, Scenario
from fleetsim.sim.budget import ROUND_EVENTS, EventBudget
from fleetsim.sim.cycles import _stop_order, earlier_stops_h
from fleetsim.sim.instants import TIE_H, last_instant
from fleetsim.sim.lane_arrays import LaneSums, draw_lives, draw_pf, stop_hours
from fleetsim.sim.schedule import compile_plan
from fleetsim.sim.streams import LIFE, PF, STOP, Streams
from fleetsim.sim.tally import CHANGES, FAILURES
from fleetsim.sim.years import YearBook

INF = np.inf


def block_exact(machine: Machine, scenario: Scenario) -> bool:
    """True when :func:`block_cycles` serves ``machine``: positions run-to-failure,
    age- or block-replaced, no opportunistic changes, a machine that runs
    (operating share > 0), positions not coupled."""
    plan = compile_plan(machine)
    if not plan.blocks or machine.operating_share <= 0 or not scenario.independent_positions:
        return False
    if plan.opportunistic:
        return False
    return {p.policy.kind for p in machine.positions} <= {"run-to-failure", "age", "block"}


class _Draws:
    """Lives to F and stop uniforms of one machine type, by table row."""

    def __init__(self, machine: Machine, index: int, scenario: Scenario, streams: Streams) -> None:
        U, P = machine.count, len(machine.positions)
        crews = scenario.crews
        self.machine = machine
        self.T_life = streams.table(index, U, P, LIFE)
        self.T_pf = streams.table(index, U, P, PF) if compile_plan(machine).pf_given else None
        random = crews.unplanned_repair.kind != "fixed" or crews.planned_repair.kind != "fixed"
        self.T_stop = streams.table(index, U, P, STOP) if random else None

    def lives(self, k: np.ndarray, u: np.ndarray, p: np.ndarray,
              age: np.ndarray | float = 0.0) -> np.ndarray:
        """Operating hours from now to F of the k-th lives of (u, p), aged ``age``."""
        m = self.machine
        life = draw_lives(m, self.T_life.take(k, u, p), p, age)
        pf_u = self.T_pf.take(k, u, p) if self.T_pf is not None else None
        return life + draw_pf(m, pf_u, p)

    def stop_u(self, k: np.ndarray, u: np.ndarray, p: np.ndarray) -> np.ndarray:
        """Stop uniforms of the k-th lives of (u, p) (0.5 with fixed durations)."""
        return self.T_stop.take(k, u, p) if self.T_stop is not None else np.full(u.size, 0.5)


def block_cycles(machine: Machine, index: int, scenario: Scenario, streams: Streams,
                 horizon_h: float, book: YearBook, keep_intervals: bool,
                 budget: EventBudget | None = None) -> LaneSums | None:
    """One replication of ``machine`` (it must pass :func:`block_exact`) by block
    periods (module docstring); None when the lane path must run it."""
    plan = compile_plan(machine)
    U, P = machine.count, len(machine.positions)
    H, share = horizon_h, machine.operating_share
    H_ev = last_instant(H)
    # the block calendars by interval (positions on one interval share its dates, either
    # scope); each date is the running sum of its interval, as each calendar counts it
    jobs: dict[float, np.ndarray] = {}
    for jb in plan.blocks:
        jobs.setdefault(jb.every_h, np.zeros(P, dtype=bool))[list(jb.positions)] = True
    next_date = {every: every for every in jobs}
    d_fail, d_plan = scenario.crews.unplanned_repair, scenario.crews.planned_repair
    draws = _Draws(machine, index, scenario, streams)
    uu, pp = np.indices((U, P))
    k = np.zeros((U, P), dtype=np.int64)  # table row of each position's current life
    age0 = machine.ages_h()
    due_h = plan.age_due_h  # (inf: not age-replaced)
    has_age = bool(np.isfinite(due_h).any())
    life0 = draws.lives(k.ravel(), uu.ravel(), pp.ravel(), age0.ravel()).reshape(U, P)
    due0 = np.maximum(due_h[None, :] - age0, 0.0)
    F = np.minimum(life0, due0)  # operating clock at the end of each position's cycle
    Ff = life0 <= due0  # ... and whether it ends in a failure
    fitted = np.broadcast_to(-(age0 / share), (U, P)).copy()  # calendar hour of each fit
    skip = plan.skip_younger_h[None, :]
    S = np.zeros(U)  # calendar start of the unit's period
    C = np.zeros(U)  # its operating clock then
    active = np.ones(U, dtype=bool)
    # to book: stops of failures and due ages (start, end, unit, failed), their events
    # (start, end, unit, position, failed), block stops (start, end, unit, changes) and
    # spares of block changes (position, date)
    s_parts: list[tuple[np.ndarray, ...]] = []
    e_parts: list[tuple[np.ndarray, ...]] = []
    b_parts: list[tuple[np.ndarray, ...]] = []
    issue_parts: list[tuple[np.ndarray, np.ndarray]] = []
    while active.any():
        date = min(next_date.values())
        # the calendars due at this date (within the lane path's tolerance) and the next date
        due = [every for every, d in next_date.items() if d <= date + TIE_H]  # one date
        job = np.logical_or.reduce([jobs[every] for every in due])
        after = min(next_date[e] + e if e in due else next_date[e] for e in jobs)
        cut = min(date, H_ev)
        if budget is not None:  # the date is an event of every unit still running
            budget.spend(max(int(np.count_nonzero(active)), ROUND_EVENTS))
        # (and a rounding past it: a stop on the date is seen, see below)
        c_max = np.where(active, C + share * (cut + TIE_H - S), -INF)
        # every position's cycles (to a failure, or to its due age) up to the most the
        # unit can run before the cut
        rounds, ends_failed = [np.where(active[:, None], F, INF)], [Ff]
        while True:
            if budget is not None:
                budget.spend(max(int(np.count_nonzero(rounds[-1] < c_max[:, None])),
                                 ROUND_EVENTS))
            ui, pi = np.nonzero(rounds[-1] < c_max[:, None])
            if not ui.size:
                break
            life = draws.lives(k[ui, pi] + len(rounds), ui, pi)
            nxt = np.full((U, P), INF)
            if has_age:
                nxt[ui, pi] = rounds[-1][ui, pi] + np.minimum(life, due_h[pi])
                fl = np.zeros((U, P), dtype=bool)
                fl[ui, pi] = life <= due_h[pi]  # a failure at the due age is a failure
                ends_failed.append(fl)
            else:
                nxt[ui, pi] = rounds[-1][ui, pi] + life
            rounds.append(nxt)
        R = np.stack(rounds)
        er, eu, ep = np.nonzero(R < c_max[None, :, None])
        ec = R[er, eu, ep]
        RF = np.stack(ends_failed) if has_age else None
        ef = RF[er, eu, ep] if RF is not None else np.ones(ec.size, dtype=bool)
        # events of a unit at one clock value are one stop (a failure's if any failed; its
        # lead: the first failed position, else the first), as in the discrete-event engine
        order, eu, ec = _stop_order(eu, ec, ef, ep, P)
        er, ep, ef = er[order], ep[order], ef[order]
        new = np.ones(eu.size, dtype=bool)
        new[1:] = (eu[1:] != eu[:-1]) | (ec[1:] != ec[:-1])
        stop_of: np.ndarray | None = None  # each event's stop (None: every event is one)
        if new.all():  # the usual case with continuous lives and no due ages shared
            s_unit, s_clock, s_fail, lead_p, lead_r = eu, ec, ef, ep, er
        else:
            starts = np.flatnonzero(new)
            stop_of = np.cumsum(new) - 1
            s_unit, s_clock, s_fail = eu[starts], ec[starts], ef[starts]
            lead_p, lead_r = ep[starts], er[starts]
        lead_u = draws.stop_u(k[s_unit, lead_p] + lead_r, s_unit, lead_p)
        d = (np.where(s_fail, stop_hours(d_fail, lead_u), stop_hours(d_plan, lead_u)) if has_age
             else stop_hours(d_fail, lead_u))  # (no due age: every stop is a failure's)
        d = np.broadcast_to(np.asarray(d, dtype=float), s_unit.shape)
        # calendar starts: the clock run at the share, plus the unit's earlier stops
        t0 = S[s_unit] + (s_clock - C[s_unit]) / share + earlier_stops_h(s_unit, d)
        if date < H_ev and (np.abs(t0 - date) <= TIE_H).any():
            return None  # a failure or due age on the date joins its stop (the lane path's rule)
        kept = t0 < cut  # (a prefix of each unit's stops)
        if stop_of is None:
            ev_kept = kept
        else:
            ev_kept = kept[stop_of]
            stop_of = (np.cumsum(kept) - 1)[stop_of[ev_kept]]
        er, eu, ep, ef = er[ev_kept], eu[ev_kept], ep[ev_kept], ef[ev_kept]
        s_unit, s_clock, s_fail, t0, d = (s_unit[kept], s_clock[kept], s_fail[kept], t0[kept],
                                          d[kept])
        end = t0 + d
        e_t0, e_end = (t0, end) if stop_of is None else (t0[stop_of], end[stop_of])
        s_parts.append((t0, end, s_unit, s_fail))
        e_parts.append((e_t0, e_end, eu, ep, ef))
        # each position's cycle after the period: the first one not ended in it
        n = np.bincount(eu * P + ep, minlength=U * P).reshape(U, P)
        nth = np.minimum(n, R.shape[0] - 1)
        F = R[nth, uu, pp]
        if RF is not None:
            Ff = RF[nth, uu, pp]
        k += n
        np.maximum.at(fitted, (eu, ep), e_end)  # fitted again as each stop ended
        # the unit's last stop: its end, clock and positions (else: none)
        last = np.full(U, -1)
        if s_unit.size:
            last_of = np.flatnonzero(np.append(s_unit[1:] != s_unit[:-1], True))
            last[s_unit[last_of]] = last_of
        has = last >= 0
        li = np.where(has, last, 0)
        last_end = np.where(has, end[li] if end.size else 0.0, -INF)
        if date >= H_ev:  # the horizon comes first: nothing more to do
            break
        # the block date: a unit under repair then stops for the others as it ends
        straddle = active & has & (last_end >= date - TIE_H)  # (a restart on the date: in it)
        if (straddle & (last_end >= after)).any() and after < H_ev:
            return None  # a stop over two dates (the lane path asks at each)
        gone = straddle & (last_end >= H_ev)  # under repair at the horizon: asks, stops no more
        changed = job[None, :] & active[:, None] & (date - fitted >= skip - TIE_H)
        if straddle.any():  # the positions of the stop under way are left out
            in_last = np.zeros((U, P), dtype=bool)
            e_stop = np.arange(eu.size) if stop_of is None else stop_of
            ev = straddle[eu] & (e_stop == last[eu])
            in_last[eu[ev], ep[ev]] = True
            changed = changed & ~in_last
        ip = np.nonzero(changed)[1]
        issue_parts.append((ip, np.full(ip.size, date)))
        stop = active & ~gone & changed.any(axis=1)
        su_b = np.flatnonzero(stop)
        if su_b.size:
            strad = straddle[su_b]
            tb = np.where(strad, last_end[su_b], date)
            # the clock at the block stop: frozen since the straddling failure, else run on
            ran_from_t = np.where(has[su_b], last_end[su_b], S[su_b])
            ran_from_c = np.where(has[su_b], s_clock[li[su_b]] if s_clock.size else 0.0,
                                  C[su_b])
            cb = np.where(strad, ran_from_c, ran_from_c + share * (date - ran_from_t))
            ch = changed[su_b]
            lead = np.argmax(ch, axis=1)  # the first position changed
            dp = np.asarray(stop_hours(d_plan, draws.stop_u(k[su_b, lead], su_b, lead)),
                            dtype=float)
            eb = tb + dp
            if (eb >= after).any() and after < H_ev:
                return None  # a block stop that reaches the next date
            n_ch = np.count_nonzero(ch, axis=1)
            b_parts.append((tb, eb, su_b, n_ch))
            done = eb < H_ev
            # renew the changed positions of the stops ended within the horizon
            ru, rp = np.nonzero(ch & done[:, None])
            units = su_b[ru]
            k[units, rp] += 1
            life = draws.lives(k[units, rp], units, rp)
            F[units, rp] = cb[ru] + np.minimum(life, due_h[rp])
            Ff[units, rp] = life <= due_h[rp]
            fitted[units, rp] = eb[ru]
            S[su_b], C[su_b] = eb, cb
            active[su_b[~done]] = False
        # a unit that ran through the date (nothing to change) runs on from its last
        # repair's end, or from the period's start
        rest = active & ~stop
        if rest.any():
            ru = np.flatnonzero(rest & has)
            S[ru], C[ru] = last_end[ru], s_clock[last[ru]]
        active &= ~gone
        for every in due:
            next_date[every] += every
    return _book(machine, book, keep_intervals, H, share, s_parts, e_parts, b_parts, issue_parts)


def _book(machine: Machine, book: YearBook, keep_intervals: bool, H: float, share: float,
          s_parts: list[tuple[np.ndarray, ...]], e_parts: list[tuple[np.ndarray, ...]],
          b_parts: list[tuple[np.ndarray, ...]],
          issue_parts: list[tuple[np.ndarray, np.ndarray]]) -> LaneSums:
    """Book the stops with the lane path's conventions."""
    H_ev = last_instant(H)
    s = LaneSums(machine, keep_intervals, book)
    t0, end, su, sf = (np.concatenate([x[i] for x in s_parts]) for i in range(4))
    et0, eend, eu, ep, ef = (np.concatenate([x[i] for x in e_parts]) for i in range(5))
    eu, ep, su = eu.astype(np.intp), ep.astype(np.intp), su.astype(np.intp)
    s.failures += np.bincount(eu[ef], minlength=machine.count)
    book.at_many(FAILURES, et0[ef])
    s.issue(ep, et0)  # asked for at the failure or the due age
    planned = ~ef & (eend < H_ev)  # changes at the due age count when their stop ends in time
    if b_parts:
        tb, eb, ub, nb = (np.concatenate([x[i] for x in b_parts]) for i in range(4))
    else:
        tb = eb = np.zeros(0)
        ub = nb = np.zeros(0, dtype=np.intp)
    ip = np.concatenate([x[0] for x in issue_parts]) if issue_parts else np.zeros(0, np.intp)
    it = np.concatenate([x[1] for x in issue_parts]) if issue_parts else np.zeros(0)
    s.issue(ip.astype(np.intp), it)
    done_b = eb < H_ev
    s.planned += float(nb[done_b].sum()) + float(np.count_nonzero(planned))
    book.at_many(CHANGES, np.concatenate([eend[planned], np.repeat(eb[done_b], nb[done_b])]))
    starts = np.concatenate([t0, tb])
    ends = np.concatenate([end, eb])
    shown = np.minimum(ends, H)
    held = shown - starts
    s.down_repair_h += float(held[:t0.size][sf].sum())
    s.down_planned_h += float(held[:t0.size][~sf].sum()) + float(held[t0.size:].sum())
    book.down_many(starts, shown, share, worked=ends < H_ev)
    s.stopped(np.concatenate([su, ub.astype(np.intp)]), starts, shown)
    return s

"""The vectorised engine's whole-cycle path for block replacement.

Between two block dates nothing but failures changes a unit's positions, and
a stop freezes the unit's operating clock whatever it lasts: so over one
block period every position is a renewal process on that clock, as on the
whole-cycle path of :mod:`fleetsim.sim.cycles`. This path takes the periods
one after another, every unit at once: it draws each position's failures on
the operating clock up to the most the unit can run before the next date,
places them on the calendar with a segmented cumulative sum of the repairs
before them, keeps those that start before the date, and then makes the
block stop of every unit in arrays, with the discrete-event engine's rules
(:mod:`fleetsim.sim.unit`, :mod:`fleetsim.sim.policies`):

* a unit running at the date stops at once for one planned duration and has
  every block position changed that was fitted at least its skip interval
  before (the modified block rule; the duration is the quantile, under the
  planned-work duration, of the stop uniform of the first position's life);
  with none to change it runs on;
* a unit under repair at the date (a date at the restart instant counts)
  has the positions of that repair left out, and stops for the others as the
  repair ends; one whose repair runs past the horizon asks for their spares
  and stops no more;
* spares of a block change are issued at the date; changes count when their
  stop ends within the horizon; lives go on by their own table rows (row k
  for a position's k-th life), so the figures are the lane path's.

It serves machine types whose positions are run-to-failure or block-replaced
(any intervals, either scope, any skip rule), without opportunistic changes, on a
machine that runs (:func:`block_exact`). A replication where two events of a
unit fall on one clock value, a repair spans two dates or a block stop
reaches the next date returns None, and the lane path runs it instead.
"""

from __future__ import annotations

import numpy as np

from fleetsim.scenario.model import Machine, Scenario
from fleetsim.sim.budget import ROUND_EVENTS, EventBudget
from fleetsim.sim.cycles import _by_unit_then_clock
from fleetsim.sim.lane_arrays import LaneSums, draw_lives, draw_pf, stop_hours
from fleetsim.sim.schedule import compile_plan
from fleetsim.sim.streams import LIFE, PF, STOP, Streams
from fleetsim.sim.tally import CHANGES, FAILURES
from fleetsim.sim.years import YearBook

INF = np.inf
#: Block dates of different intervals this close are one date (as on the lane path).
_SAME_DATE_H = 1e-9


def block_exact(machine: Machine, scenario: Scenario) -> bool:
    """True when :func:`block_cycles` serves ``machine``: positions run-to-failure or
    block-replaced, no opportunistic changes, a machine that runs
    (operating share > 0), positions not coupled."""
    plan = compile_plan(machine)
    if not plan.blocks or machine.operating_share <= 0 or not scenario.independent_positions:
        return False
    if plan.opportunistic:
        return False
    return {p.policy.kind for p in machine.positions} <= {"run-to-failure", "block"}


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
    F = draws.lives(k.ravel(), uu.ravel(), pp.ravel(), age0.ravel()).reshape(U, P)
    fitted = np.broadcast_to(-(age0 / share), (U, P)).copy()  # calendar hour of each fit
    skip = plan.skip_younger_h[None, :]
    S = np.zeros(U)  # calendar start of the unit's period
    C = np.zeros(U)  # its operating clock then
    active = np.ones(U, dtype=bool)
    # stops to book: failures (start, end, unit, position) and block stops (start, end,
    # unit, changes), spares of block changes (position, date)
    f_parts: list[tuple[np.ndarray, ...]] = []
    b_parts: list[tuple[np.ndarray, ...]] = []
    issue_parts: list[tuple[np.ndarray, np.ndarray]] = []
    while active.any():
        date = min(next_date.values())
        # the calendars due at this date (within the lane path's tolerance) and the next date
        due = [every for every, d in next_date.items() if d <= date + _SAME_DATE_H]
        job = np.logical_or.reduce([jobs[every] for every in due])
        after = min(next_date[e] + e if e in due else next_date[e] for e in jobs)
        cut = min(date, H)
        c_max = np.where(active, C + share * (cut - S), -INF)
        # every position's failures up to the most the unit can run before the cut
        rounds = [np.where(active[:, None], F, INF)]
        while True:
            if budget is not None:
                budget.spend(max(int(np.count_nonzero(rounds[-1] < c_max[:, None])),
                                 ROUND_EVENTS))
            ui, pi = np.nonzero(rounds[-1] < c_max[:, None])
            if not ui.size:
                break
            nxt = np.full((U, P), INF)
            nxt[ui, pi] = rounds[-1][ui, pi] + draws.lives(k[ui, pi] + len(rounds), ui, pi)
            rounds.append(nxt)
        R = np.stack(rounds)
        er, eu, ep = np.nonzero(R < c_max[None, :, None])
        ec = R[er, eu, ep]
        if ec.size:
            order, su, sc = _by_unit_then_clock(eu, ec)
            if ((su[1:] == su[:-1]) & (sc[1:] == sc[:-1])).any():
                return None  # two events of a unit on one clock value: one stop (lane path)
            er, eu, ep, ec = er[order], su, ep[order], sc
            d = np.asarray(stop_hours(d_fail, draws.stop_u(k[eu, ep] + er, eu, ep)), dtype=float)
            d = np.broadcast_to(d, ec.shape)
            before = np.cumsum(d) - d
            first = np.ones(eu.size, dtype=bool)
            first[1:] = eu[1:] != eu[:-1]
            at = np.flatnonzero(first)
            base = np.repeat(before[at], np.diff(at, append=eu.size))
            t0 = S[eu] + (ec - C[eu]) / share + (before - base)
            kept = t0 < cut
            er, eu, ep, ec, t0, d = er[kept], eu[kept], ep[kept], ec[kept], t0[kept], d[kept]
        else:
            t0 = d = ec
        end = t0 + d
        f_parts.append((t0, end, eu, ep))
        # each position's lives after the period: the first one not ended in it
        n = np.bincount(eu * P + ep, minlength=U * P).reshape(U, P)
        F = R[np.minimum(n, R.shape[0] - 1), uu, pp]
        k += n
        np.maximum.at(fitted, (eu, ep), end)  # fitted again as each repair ended
        # the unit's last stop: its end, clock and failed position (else: none)
        last = np.full(U, -1)
        if eu.size:
            last_of = np.flatnonzero(np.append(eu[1:] != eu[:-1], True))
            last[eu[last_of]] = last_of
        has = last >= 0
        li = np.where(has, last, 0)
        last_end = np.where(has, end[li] if end.size else 0.0, -INF)
        if date >= H:  # the horizon comes first: nothing more to do
            break
        # the block date: a unit under repair then stops for the others as it ends
        straddle = active & has & (last_end >= date)
        if (straddle & (last_end >= after)).any() and after < H:
            return None  # a repair over two dates (the lane path asks at each)
        gone = straddle & (last_end >= H)  # under repair at the horizon: asks, stops no more
        changed = job[None, :] & active[:, None] & (date - fitted >= skip)
        if straddle.any():
            failed_last = np.zeros((U, P), dtype=bool)
            su_ = np.flatnonzero(straddle)
            failed_last[su_, ep[last[su_]]] = True
            changed = changed & ~failed_last
        iu, ip = np.nonzero(changed)
        issue_parts.append((ip, np.full(ip.size, date)))
        stop = active & ~gone & changed.any(axis=1)
        su_b = np.flatnonzero(stop)
        if su_b.size:
            strad = straddle[su_b]
            tb = np.where(strad, last_end[su_b], date)
            # the clock at the block stop: frozen since the straddling failure, else run on
            ran_from_t = np.where(has[su_b], last_end[su_b], S[su_b])
            ran_from_c = np.where(has[su_b], ec[li[su_b]] if ec.size else 0.0, C[su_b])
            cb = np.where(strad, ran_from_c, ran_from_c + share * (date - ran_from_t))
            ch = changed[su_b]
            lead = np.argmax(ch, axis=1)  # the first position changed
            dp = np.asarray(stop_hours(d_plan, draws.stop_u(k[su_b, lead], su_b, lead)),
                            dtype=float)
            eb = tb + dp
            if (eb >= after).any() and after < H:
                return None  # a block stop that reaches the next date
            n_ch = np.count_nonzero(ch, axis=1)
            b_parts.append((tb, eb, su_b, n_ch))
            done = eb < H
            # renew the changed positions of the stops ended within the horizon
            ru, rp = np.nonzero(ch & done[:, None])
            units = su_b[ru]
            k[units, rp] += 1
            F[units, rp] = cb[ru] + draws.lives(k[units, rp], units, rp)
            fitted[units, rp] = eb[ru]
            S[su_b], C[su_b] = eb, cb
            active[su_b[~done]] = False
        # a unit that ran through the date (nothing to change) runs on from its last
        # repair's end, or from the period's start
        rest = active & ~stop
        if rest.any():
            ru = np.flatnonzero(rest & has)
            S[ru], C[ru] = last_end[ru], ec[last[ru]]
        active &= ~gone
        for every in due:
            next_date[every] += every
    return _book(machine, book, keep_intervals, H, share, f_parts, b_parts, issue_parts)


def _book(machine: Machine, book: YearBook, keep_intervals: bool, H: float, share: float,
          f_parts: list[tuple[np.ndarray, ...]], b_parts: list[tuple[np.ndarray, ...]],
          issue_parts: list[tuple[np.ndarray, np.ndarray]]) -> LaneSums:
    """Book the stops with the lane path's conventions."""
    s = LaneSums(machine, keep_intervals, book)
    t0, end, eu, ep = (np.concatenate([x[i] for x in f_parts]) for i in range(4))
    eu, ep = eu.astype(np.intp), ep.astype(np.intp)
    s.failures += np.bincount(eu, minlength=machine.count)
    book.at_many(FAILURES, t0)
    s.issue(ep, t0)
    if b_parts:
        tb, eb, ub, nb = (np.concatenate([x[i] for x in b_parts]) for i in range(4))
    else:
        tb = eb = np.zeros(0)
        ub = nb = np.zeros(0, dtype=np.intp)
    ip = np.concatenate([x[0] for x in issue_parts]) if issue_parts else np.zeros(0, np.intp)
    it = np.concatenate([x[1] for x in issue_parts]) if issue_parts else np.zeros(0)
    s.issue(ip.astype(np.intp), it)
    done_b = eb < H
    s.planned += float(nb[done_b].sum())
    book.at_many(CHANGES, np.repeat(eb[done_b], nb[done_b]))
    starts = np.concatenate([t0, tb])
    ends = np.concatenate([end, eb])
    shown = np.minimum(ends, H)
    held = shown - starts
    s.down_repair_h += float(held[:t0.size].sum())
    s.down_planned_h += float(held[t0.size:].sum())
    book.down_many(starts, shown, share, worked=ends < H)
    s.stopped(np.concatenate([eu, ub.astype(np.intp)]), starts, shown)
    return s

"""Per-calendar-year sums of one replication, kept by both engines.

A :class:`YearBook` holds, for every quantity the cost model charges and the
year-by-year plan shows, two arrays over the calendar years of the horizon
(year k is [k·8766 h, (k+1)·8766 h); the last may be partial): the plain
amount (events, or hours × weight for quantities accrued over time) and its
present value at the study's discount rate (:mod:`fleetsim.sim.discount`;
equal to the plain amount at rate 0). An event is booked in the year it
happens (one within :data:`~fleetsim.sim.instants.TIE_H` before a year's end
is at the end, so in the next year: the engines may compute the same whole
hour a rounding apart); an amount accrued over an interval (downtime, spares on the shelf, a
group being down, crew work) is split at the year boundaries.

The discrete-event engine books each event as it happens (:meth:`at`,
:meth:`over`), or, on its hot paths, appends the time of a single event to the
key's *journal* (:meth:`journal`: a plain list, one C-level append per event),
which the book settles with :meth:`at_many` in fixed blocks of
:data:`JOURNAL_BLOCK` entries and before anything is read, so the sums depend
only on the sequence of events, not on when they are settled; the vectorised
engine books arrays of events at once (:meth:`at_many`, :meth:`over_many`). Totals are sums over the years, so the
year-by-year plan adds up to the horizon totals by construction.
"""

from __future__ import annotations

import math

import numpy as np

from fleetsim.scenario.model import HOURS_PER_YEAR
from fleetsim.sim.discount import Discount
from fleetsim.sim.instants import TIE_H

#: The keys :meth:`YearBook.down` books (the same as :mod:`fleetsim.sim.tally`'s).
DOWN_KEY, LOST_KEY, LABOUR_KEY = "down_h", "lost_operating_h", "labour_h"
#: Journal entries settled at a time (:meth:`YearBook.settle_full_blocks`), by key.
JOURNAL_BLOCK = 1 << 16


def year_count(horizon_h: float) -> int:
    """Number of calendar years (the last one possibly partial) in a horizon of ``horizon_h``."""
    return max(1, math.ceil(horizon_h / HOURS_PER_YEAR - 1e-9))


class YearBook:
    """Per-year plain and present-value sums, by key (see the module docstring).

    The rows are plain Python lists: the discrete-event engine books one event
    at a time, where list arithmetic is several times faster than numpy scalars.

    Parameters
    ----------
    horizon_h
        Calendar horizon in hours.
    discount
        The study's discount (rate 0: the identity).
    """

    __slots__ = ("discount", "n", "_amount", "_pv", "_plain", "_journal", "_later", "_later_n")

    def __init__(self, horizon_h: float, discount: Discount) -> None:
        self.discount = discount
        self.n = year_count(horizon_h)
        self._amount: dict[str, list[float]] = {}
        self._pv: dict[str, list[float]] = {}
        self._plain = discount.delta_h == 0.0
        #: events and intervals not booked yet (see :meth:`journal`), by (kind, key, share)
        self._journal: dict[tuple[str, str, float], list[float]] = {}
        #: arrays not booked yet (see :meth:`at_later`): (what, key, arrays...)
        self._later: list[tuple[str, str, np.ndarray, np.ndarray | None, float,
                                np.ndarray | None]] = []
        self._later_n = 0

    @property
    def amount(self) -> dict[str, list[float]]:
        """Plain amounts per year, by key (the journal settled first)."""
        self.settle()
        return self._amount

    @property
    def pv(self) -> dict[str, list[float]]:
        """Present values per year, by key (the same list as the amount at rate 0)."""
        self.settle()
        return self._pv

    def journal(self, key: str) -> list[float]:
        """The list to append the calendar hour of each single event of ``key`` to.

        Appending ``t_h`` books what ``at(key, t_h)`` books, later: the journal is
        settled in blocks of :data:`JOURNAL_BLOCK` (:meth:`settle_full_blocks`)
        and in full before any sum is read. Hold the list, never replace it.
        """
        return self._journal_of(("at", key, 0.0))

    def span_journal(self, key: str) -> list[float]:
        """The list to extend with ``(start_h, end_h)`` of each interval of ``key``
        (weight 1): what ``over(key, start_h, end_h)`` books, later."""
        return self._journal_of(("over", key, 0.0))

    def weighted_journal(self, key: str) -> list[float]:
        """The list to extend with ``(start_h, end_h, weight)`` of each interval of
        ``key``: what ``over(key, start_h, end_h, weight)`` books, later."""
        return self._journal_of(("overw", key, 0.0))

    def down_journal(self, share: float) -> list[float]:
        """The list to extend with ``(start_h, end_h)`` of each stop of a unit with
        operating ``share``: what ``down(start_h, end_h, share)`` books, later."""
        return self._journal_of(("down", "", float(share)))

    def _journal_of(self, what: tuple[str, str, float]) -> list[float]:
        j = self._journal.get(what)
        if j is None:
            j = self._journal[what] = []
        return j

    def _book_journal(self, what: tuple[str, str, float], entries: list[float]) -> None:
        kind, key, share = what
        if kind == "at":
            self.at_many(key, np.array(entries))
            return
        if kind == "overw":
            rows = np.array(entries).reshape(-1, 3)
            self.over_many(key, rows[:, 0], rows[:, 1], rows[:, 2])
            return
        pairs = np.array(entries).reshape(-1, 2)
        if kind == "over":
            self.over_many(key, pairs[:, 0], pairs[:, 1])
        else:
            self.down_many(pairs[:, 0], pairs[:, 1], share)

    def settle_full_blocks(self) -> None:
        """Book the full blocks of :data:`JOURNAL_BLOCK` entries (events or intervals)
        of every journal (keeps memory bounded during a long run; the rest stays
        journaled). The blocks fall at fixed places in each journal, so the sums do
        not depend on when this is called."""
        for what, entries in self._journal.items():
            block = JOURNAL_BLOCK * {"at": 1, "overw": 3}.get(what[0], 2)
            full = len(entries) - len(entries) % block
            if full:
                for start in range(0, full, block):
                    self._book_journal(what, entries[start:start + block])
                del entries[:full]

    def at_later(self, key: str, t_h: np.ndarray) -> None:
        """:meth:`at_many` of single events at ``t_h``, booked with others of ``key`` later.

        The vectorised engine's steps each give a few events of a key; one
        :meth:`at_many` per key at the end costs less than one per step.
        """
        if t_h.size:
            self._queue(("at", key, t_h, None, 0.0, None))

    def down_later(self, start_h: np.ndarray, end_h: np.ndarray, share: float,
                   worked: np.ndarray | None = None) -> None:
        """:meth:`down_many` (with ``worked``), booked with other stops of the same
        ``share`` later."""
        if start_h.size:
            self._queue(("down", "", start_h, end_h, share, worked))

    def _queue(self, item: tuple[str, str, np.ndarray, np.ndarray | None, float,
                                 np.ndarray | None]) -> None:
        self._later.append(item)
        self._later_n += item[2].size
        if self._later_n > JOURNAL_BLOCK * 16:  # bounded memory in long runs
            self._settle_later()

    def _settle_later(self) -> None:
        """Book what :meth:`at_later` and :meth:`down_later` queued:
        one array call per kind and key, in the order queued."""
        groups: dict[tuple[str, str, float],
                     list[tuple[np.ndarray, np.ndarray | None, np.ndarray | None]]] = {}
        for what, key, a, b, share, w in self._later:
            groups.setdefault((what, key, share), []).append((a, b, w))
        self._later.clear()
        self._later_n = 0
        for (what, key, share), parts in groups.items():
            first = np.concatenate([a for a, _, _ in parts])
            if what == "at":
                self.at_many(key, first)
                continue
            second = np.concatenate([b for _, b, _ in parts])
            worked = None if all(w is None for _, _, w in parts) else np.concatenate(
                [np.zeros(a.size, dtype=bool) if w is None else w for a, _, w in parts])
            self.down_many(first, second, share, worked=worked)

    def settle(self) -> None:
        """Book every journaled or queued event (journals in blocks, as
        :meth:`settle_full_blocks`)."""
        if self._later:
            self._settle_later()
        if not any(self._journal.values()):
            return
        self.settle_full_blocks()
        for what, entries in self._journal.items():
            if entries:
                self._book_journal(what, entries)
                entries.clear()

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, YearBook):
            return NotImplemented
        return self.n == other.n and self.amount == other.amount and self.pv == other.pv

    __hash__ = None  # type: ignore[assignment]  # mutable

    def _rows(self, key: str) -> tuple[list[float], list[float]]:
        a = self._amount.get(key)
        if a is None:
            a = self._amount[key] = [0.0] * self.n
            # at rate 0 the present value *is* the amount: one list, booked once
            self._pv[key] = a if self._plain else [0.0] * self.n
        return a, self._pv[key]

    def at(self, key: str, t_h: float, n: float = 1.0) -> None:
        """Book ``n`` events of ``key`` at calendar hour ``t_h``."""
        a = self._amount.get(key)
        if a is None:
            a = self._rows(key)[0]
        y = int((t_h + TIE_H) / HOURS_PER_YEAR)
        if y >= self.n:
            y = self.n - 1
        a[y] += n
        if not self._plain:
            self._pv[key][y] += n * self.discount.factor(t_h)

    def over(self, key: str, start_h: float, end_h: float, weight: float = 1.0) -> None:
        """Book ``weight`` × hours of ``key`` over [start_h, end_h), split by year."""
        if not end_h > start_h:
            return
        a, p = self._rows(key)
        n = self.n
        y = int(start_h / HOURS_PER_YEAR)
        last = int(end_h / HOURS_PER_YEAR)
        y = y if y < n else n - 1
        last = last if last < n else n - 1
        plain = self._plain
        d = self.discount
        while True:
            stop = end_h if y == last else (y + 1) * HOURS_PER_YEAR
            a[y] += weight * (stop - start_h)
            if not plain:
                p[y] += weight * d.integral(start_h, stop)
            if y == last:
                return
            start_h, y = stop, y + 1

    def down(self, start_h: float, end_h: float, share: float, worked: bool = False) -> None:
        """A unit down over [start_h, end_h): its hours down and, × ``share``, its
        operating hours lost (one call for the keys of every stop); with ``worked``,
        a crew worked the whole stop (crew hours too)."""
        if not end_h > start_h:
            return
        if worked:
            self.over(LABOUR_KEY, start_h, end_h)
        if int(start_h / HOURS_PER_YEAR) == int(end_h / HOURS_PER_YEAR) < self.n:
            # inside one year (nearly every stop): book both without splitting
            y = int(start_h / HOURS_PER_YEAR)
            hours = end_h - start_h
            down, lost = self._amount.get(DOWN_KEY), self._amount.get(LOST_KEY)
            if down is None or lost is None:
                down, lost = self._rows(DOWN_KEY)[0], self._rows(LOST_KEY)[0]
            down[y] += hours
            lost[y] += share * hours
            if not self._plain:
                v = self.discount.integral(start_h, end_h)
                self._pv[DOWN_KEY][y] += v
                self._pv[LOST_KEY][y] += share * v
            return
        self.over(DOWN_KEY, start_h, end_h)
        self.over(LOST_KEY, start_h, end_h, share)

    def down_many(self, start_h: np.ndarray, end_h: np.ndarray, share: float,
                  worked: np.ndarray | None = None) -> None:
        """:meth:`down` for arrays of stops (hours down, and × ``share`` operating hours lost).

        ``worked`` (booleans, one a stop) marks the stops a crew worked whole: their
        hours are crew hours too, the same sums as :meth:`over_many` of ``labour_h``
        over those stops alone (the other stops add zeros), from one split of the
        intervals at the year ends.
        """
        s = np.asarray(start_h, dtype=float)
        if s.size == 0:
            return
        if worked is not None and not worked.any():
            worked = None  # (no crew hours: no row, as over_many of no intervals)
        weights: tuple[np.ndarray | float, ...] = (1.0,) if worked is None else (
            1.0, np.asarray(worked, dtype=float))
        spread = self._spread(s, np.asarray(end_h, dtype=float), weights)
        plain, present = spread[0]
        self._add(DOWN_KEY, plain, present)
        self._add(LOST_KEY, plain * share, None if present is None else present * share)
        if worked is not None:
            self._add(LABOUR_KEY, *spread[1])

    def _add(self, key: str, plain: np.ndarray, present: np.ndarray | None) -> None:
        a, p = self._rows(key)
        for y, v in enumerate(plain.tolist()):
            a[y] += v
        if not self._plain:
            assert present is not None
            for y, v in enumerate(present.tolist()):
                p[y] += v

    def at_many(self, key: str, t_h: np.ndarray, n: np.ndarray | float = 1.0) -> None:
        """:meth:`at` for arrays of times (and counts)."""
        t = np.asarray(t_h, dtype=float)
        if t.size == 0:
            return
        y = np.minimum(((t + TIE_H) / HOURS_PER_YEAR).astype(np.int64), self.n - 1)
        if np.ndim(n) == 0:
            plain: np.ndarray = np.bincount(y, minlength=self.n).astype(float) * float(n)
            w: np.ndarray | float = float(n)
        else:
            w = np.asarray(n, dtype=float)
            plain = np.bincount(y, weights=w, minlength=self.n)
        present = None if self._plain else np.bincount(
            y, weights=w * self.discount.factors(t), minlength=self.n)
        self._add(key, plain, present)

    def over_many(self, key: str, start_h: np.ndarray, end_h: np.ndarray,
                  weight: np.ndarray | float = 1.0) -> None:
        """:meth:`over` for arrays of intervals (and weights)."""
        s = np.asarray(start_h, dtype=float)
        if s.size == 0:
            return
        self._add(key, *self._spread(s, np.asarray(end_h, dtype=float), (weight,))[0])

    def _spread(self, s: np.ndarray, e: np.ndarray, weights: tuple[np.ndarray | float, ...]
                ) -> list[tuple[np.ndarray, np.ndarray | None]]:
        """Per-year sums of weight × hours of the intervals [s, e), and their present
        values (None at rate 0), each interval split at the year ends: one pair for
        each of ``weights`` (a number, or one weight an interval).

        An interval across year ends becomes its piece in its first year, its piece
        in its last year and whole years between (counted with a difference array),
        so no year is visited one by one. The split is made once for all weights.
        """
        n = self.n
        y0 = (s / HOURS_PER_YEAR).astype(np.int64)
        np.minimum(y0, n - 1, out=y0)
        y1 = (e / HOURS_PER_YEAR).astype(np.int64)
        np.minimum(y1, n - 1, out=y1)
        cross = np.flatnonzero(y0 != y1)  # (few: most intervals lie inside one year)
        if cross.size:
            cy0, cy1 = y0[cross], y1[cross]
            ends = e[cross]
            e = e.copy()
            e[cross] = (cy0 + 1) * HOURS_PER_YEAR  # the piece in the first year
            # the piece in the last year, booked apart below
            t_span, t_pv = self._span(cy1 * HOURS_PER_YEAR, ends)
            inner = cy1 - cy0 > 1
            whole_years = bool(inner.any())
        span, pv = self._span(s, e)
        out: list[tuple[np.ndarray, np.ndarray | None]] = []
        for weight in weights:
            w = None if np.ndim(weight) == 0 else np.broadcast_to(
                np.asarray(weight, dtype=float), s.shape)
            plain, present = self._pieces(y0, span, pv, w)
            if cross.size:
                cw = np.ones(cross.size) if w is None else w[cross]
                tp, tv = self._pieces(cy1, t_span, t_pv, cw)
                plain += tp
                if present is not None and tv is not None:
                    present += tv
            if w is None:
                plain *= float(weight)
                if present is not None:
                    present *= float(weight)
            if cross.size and whole_years:
                # the weight of the intervals covering each whole year
                diff = np.zeros(n + 1)
                np.add.at(diff, cy0[inner] + 1, cw[inner])
                np.add.at(diff, cy1[inner], -cw[inner])
                full = np.cumsum(diff[:n])
                if w is None:
                    full = full * float(weight)
                plain += full * HOURS_PER_YEAR
                if present is not None:
                    edges = np.arange(n + 1) * HOURS_PER_YEAR
                    present += full * self.discount.integrals(edges[:-1], edges[1:])
            out.append((plain, present))
        return out

    def _span(self, s: np.ndarray, e: np.ndarray) -> tuple[np.ndarray, np.ndarray | None]:
        """Hours of the pieces [s, e) (0 where e < s), and their present values (None at
        rate 0)."""
        span = e - s
        np.maximum(span, 0.0, out=span)
        return span, None if self._plain else self.discount.integrals(s, e)

    def _pieces(self, y: np.ndarray, span: np.ndarray, pv: np.ndarray | None,
                w: np.ndarray | None) -> tuple[np.ndarray, np.ndarray | None]:
        """Per-year sums of w × hours of pieces in years ``y`` (w None: 1) and of their
        present values ``pv`` (None at rate 0)."""
        plain = np.bincount(y, weights=span if w is None else w * span, minlength=self.n)
        if pv is None:
            return plain, None
        return plain, np.bincount(y, weights=pv if w is None else w * pv, minlength=self.n)

    def total(self, key: str, present: bool = True) -> float:
        """Sum over the years of ``key`` (present value by default; 0 for a key never booked)."""
        rows = self.pv if present else self.amount
        return float(sum(rows[key])) if key in rows else 0.0

    def years(self, key: str, present: bool = True) -> np.ndarray:
        """Per-year sums of ``key`` (zeros for a key never booked)."""
        rows = self.pv if present else self.amount
        return np.array(rows[key], dtype=float) if key in rows else np.zeros(self.n)

"""Per-calendar-year sums of one replication, kept by both engines.

A :class:`YearBook` holds, for every quantity the cost model charges and the
year-by-year plan shows, two arrays over the calendar years of the horizon
(year k is [k·8766 h, (k+1)·8766 h); the last may be partial): the plain
amount (events, or hours × weight for quantities accrued over time) and its
present value at the study's discount rate (:mod:`fleetsim.sim.discount`;
equal to the plain amount at rate 0). An event is booked in the year it
happens; an amount accrued over an interval (downtime, spares on the shelf, a
group being down, crew work) is split at the year boundaries.

The discrete-event engine books each event as it happens (:meth:`at`,
:meth:`over`); the vectorised engine books arrays of events at once
(:meth:`at_many`, :meth:`over_many`). Totals are sums over the years, so the
year-by-year plan adds up to the horizon totals by construction.
"""

from __future__ import annotations

import math

import numpy as np

from fleetsim.scenario.model import HOURS_PER_YEAR
from fleetsim.sim.discount import Discount


def year_count(horizon_h: float) -> int:
    """Number of calendar years (the last one possibly partial) in a horizon of ``horizon_h``."""
    return max(1, math.ceil(horizon_h / HOURS_PER_YEAR - 1e-9))


class YearBook:
    """Per-year plain and present-value sums, by key (see the module docstring).

    Parameters
    ----------
    horizon_h
        Calendar horizon in hours.
    discount
        The study's discount (rate 0: the identity).
    """

    __slots__ = ("discount", "n", "amount", "pv")

    def __init__(self, horizon_h: float, discount: Discount) -> None:
        self.discount = discount
        self.n = year_count(horizon_h)
        #: plain amounts per year, by key
        self.amount: dict[str, np.ndarray] = {}
        #: present values per year, by key
        self.pv: dict[str, np.ndarray] = {}

    def __eq__(self, other: object) -> bool:
        if not isinstance(other, YearBook):
            return NotImplemented
        return (self.n == other.n and self.amount.keys() == other.amount.keys()
                and all(np.array_equal(v, other.amount[k]) and np.array_equal(self.pv[k], other.pv[k])
                        for k, v in self.amount.items()))

    __hash__ = None  # type: ignore[assignment]  # mutable

    def _rows(self, key: str) -> tuple[np.ndarray, np.ndarray]:
        a = self.amount.get(key)
        if a is None:
            a = self.amount[key] = np.zeros(self.n)
            self.pv[key] = np.zeros(self.n)
        return a, self.pv[key]

    def _year(self, t_h: float) -> int:
        y = int(t_h / HOURS_PER_YEAR)
        return y if y < self.n else self.n - 1

    def at(self, key: str, t_h: float, n: float = 1.0) -> None:
        """Book ``n`` events of ``key`` at calendar hour ``t_h``."""
        a, p = self._rows(key)
        y = self._year(t_h)
        a[y] += n
        p[y] += n * self.discount.factor(t_h)

    def over(self, key: str, start_h: float, end_h: float, weight: float = 1.0) -> None:
        """Book ``weight`` × hours of ``key`` over [start_h, end_h), split by year."""
        if not end_h > start_h:
            return
        a, p = self._rows(key)
        y, last = self._year(start_h), self._year(end_h)
        d = self.discount
        while True:
            stop = end_h if y == last else (y + 1) * HOURS_PER_YEAR
            a[y] += weight * (stop - start_h)
            p[y] += weight * d.integral(start_h, stop)
            if y == last:
                return
            start_h, y = stop, y + 1

    def at_many(self, key: str, t_h: np.ndarray, n: np.ndarray | float = 1.0) -> None:
        """:meth:`at` for arrays of times (and counts)."""
        t = np.asarray(t_h, dtype=float)
        if t.size == 0:
            return
        a, p = self._rows(key)
        y = np.minimum((t / HOURS_PER_YEAR).astype(np.int64), self.n - 1)
        if np.ndim(n) == 0:
            plain: np.ndarray = np.bincount(y, minlength=self.n).astype(float) * float(n)
            w: np.ndarray | float = float(n)
        else:
            w = np.asarray(n, dtype=float)
            plain = np.bincount(y, weights=w, minlength=self.n)
        a += plain
        if self.discount.delta_h == 0.0:
            p += plain  # rate 0: the present value is the amount
        else:
            p += np.bincount(y, weights=w * self.discount.factors(t), minlength=self.n)

    def over_many(self, key: str, start_h: np.ndarray, end_h: np.ndarray,
                  weight: np.ndarray | float = 1.0) -> None:
        """:meth:`over` for arrays of intervals (and weights)."""
        s = np.asarray(start_h, dtype=float)
        if s.size == 0:
            return
        e = np.asarray(end_h, dtype=float)
        w = np.broadcast_to(np.asarray(weight, dtype=float), s.shape)
        scalar = np.ndim(weight) == 0
        a, p = self._rows(key)
        y0 = np.minimum((s / HOURS_PER_YEAR).astype(np.int64), self.n - 1)
        y1 = np.minimum((e / HOURS_PER_YEAR).astype(np.int64), self.n - 1)
        one = y0 == y1  # most intervals lie inside one year: no splitting
        if one.any():
            every = bool(one.all())
            so, eo, yo = (s, e, y0) if every else (s[one], e[one], y0[one])
            span = np.maximum(eo - so, 0.0)
            if scalar:
                plain: np.ndarray = np.bincount(yo, weights=span, minlength=self.n) * float(weight)
            else:
                wo = w if every else w[one]
                plain = np.bincount(yo, weights=wo * span, minlength=self.n)
            a += plain
            if self.discount.delta_h == 0.0:
                p += plain  # rate 0: the present value is the amount
            else:
                v = self.discount.integrals(so, eo)
                p += np.bincount(yo, weights=(v * float(weight)) if scalar else (wo * v),
                                 minlength=self.n)
            if every:
                return
            s, e, w, y0, y1 = s[~one], e[~one], w[~one], y0[~one], y1[~one]
        for y in range(int(y0.min()), int(y1.max()) + 1):
            lo = np.maximum(s, y * HOURS_PER_YEAR)
            hi = e if y == self.n - 1 else np.minimum(e, (y + 1) * HOURS_PER_YEAR)
            inside = (y0 <= y) & (y1 >= y) & (hi > lo)
            if inside.any():
                a[y] += float((w * (hi - lo))[inside].sum())
                p[y] += float((w * self.discount.integrals(lo, hi))[inside].sum())

    def total(self, key: str, present: bool = True) -> float:
        """Sum over the years of ``key`` (present value by default; 0 for a key never booked)."""
        rows = self.pv if present else self.amount
        return float(rows[key].sum()) if key in rows else 0.0

    def years(self, key: str, present: bool = True) -> np.ndarray:
        """Per-year sums of ``key`` (zeros for a key never booked)."""
        rows = self.pv if present else self.amount
        return rows[key].copy() if key in rows else np.zeros(self.n)

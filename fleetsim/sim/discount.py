"""Discounting costs to their present value at the start of a study.

With ``costs.discount_rate`` r > 0 (an annual effective rate), a cost c paid
at calendar hour t is worth c·v(t) at the start, with the continuous discount
factor

    v(t) = (1 + r)^(−t / 8766 h) = exp(−δ t),   δ = ln(1 + r) / 8766 per hour.

A cost paid *at a rate* (downtime per hour, holding per year) is integrated:
∫ c v(t) dt = c (v(a) − v(b)) / δ over [a, b]. The engines charge each cost
when it is incurred:

* a failure's labour and failure cost at the failure;
* a planned or opportunistic change's labour when the change is made (the
  end of the stop);
* a bearing's price when the spare is issued from the store;
* downtime over the hours each unit is stopped, holding over the hours each
  spare is on the shelf;
* an inspection at the visit, an emergency premium when the order is placed.

``cost_per_year`` is then the *equivalent annual cost*: the level payment per
year, paid continuously over the horizon T, with the same present value,
PV·δ_y / (1 − e^(−δ_y T)) with δ_y = ln(1 + r) (the annuity of any
engineering-economics text, e.g. Park, *Contemporary Engineering Economics*,
continuous compounding; from memory). With r = 0 every formula reduces to the
undiscounted one (v = 1, cost per year = total / years): an undiscounted study
is the identity :class:`Discount`, not a second path through the engines.
"""

from __future__ import annotations

import math

import numpy as np

from fleetsim.scenario.model import HOURS_PER_YEAR


class Discount:
    """Discount factors at an annual effective rate ``rate`` (>= 0; 0 is the identity)."""

    __slots__ = ("rate", "delta_h")

    def __init__(self, rate: float) -> None:
        if not (rate >= 0.0 and math.isfinite(rate)):
            raise ValueError(f"a finite discount rate >= 0 is needed, got {rate}")
        self.rate = float(rate)
        #: continuous discount rate per calendar hour
        self.delta_h = math.log1p(rate) / HOURS_PER_YEAR

    def factor(self, t_h: float) -> float:
        """v(t): what 1 paid at calendar hour ``t_h`` is worth at hour 0."""
        return math.exp(-self.delta_h * t_h)

    def integral(self, a_h: float, b_h: float) -> float:
        """∫ v(t) dt over [a_h, b_h] in hours (0 when b_h <= a_h)."""
        if b_h <= a_h:
            return 0.0
        d = self.delta_h
        if d == 0.0:
            return b_h - a_h
        return math.exp(-d * a_h) * -math.expm1(-d * (b_h - a_h)) / d

    def factors(self, t_h: np.ndarray) -> np.ndarray:
        """:meth:`factor` for an array of hours."""
        return np.exp(-self.delta_h * np.asarray(t_h, dtype=float))

    def integrals(self, a_h: np.ndarray, b_h: np.ndarray) -> np.ndarray:
        """:meth:`integral` for arrays of interval ends."""
        a = np.asarray(a_h, dtype=float)
        span = np.maximum(np.asarray(b_h, dtype=float) - a, 0.0)
        d = self.delta_h
        if d == 0.0:
            return span
        return np.exp(-d * a) * -np.expm1(-d * span) / d


def discount_for(rate: float) -> Discount:
    """The :class:`Discount` of a study (rate 0: the identity, v(t) = 1)."""
    return Discount(rate)


def per_year(total: float, years: float, rate: float) -> float:
    """Cost per year: ``total / years``, or with ``rate`` > 0 the equivalent annual
    cost of the present value ``total`` (see the module docstring)."""
    if not rate > 0.0:
        return total / years
    d = math.log1p(rate)
    return total * d / -math.expm1(-d * years)

"""One tally per replication, filled by both engines, and the one cost model.

Both engines (:mod:`fleetsim.sim.engine`, :mod:`fleetsim.sim.vector`) reduce
a replication to a :class:`Tally`: counts, downtime by cause, per machine
type, per bearing kind and per group, and a :class:`~fleetsim.sim.years.YearBook`
of the quantities that costs are charged on, per calendar year (plain and
present values at the study's discount rate; with rate 0 they coincide, see
:mod:`fleetsim.sim.discount`). :func:`costs_of` is
the only cost model; :func:`fleetsim.study.figures.figures_of` the only
reduction of a tally to a study's figures.

Cost conventions (one place):

* a planned or opportunistic change: ``planned_replacement`` labour, charged
  when the change is made (the end of the stop);
* a failure: ``planned_replacement`` + ``failure``, charged at the failure;
* a bearing's price when the spare is issued from the store;
* downtime: ``downtime_per_hour`` per *operating hour lost*: a unit down for
  d calendar hours loses ``operating_share × d`` hours of production (a unit
  that would have been idle loses nothing);
* a group being down (fewer than ``need`` units up): the group's own
  ``downtime_per_hour`` per hour, reported as ``cost_group_downtime``;
* inspections per visit, spares holding per part-year on the shelf, emergency
  premiums per order.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.sim.years import DOWN_KEY, LABOUR_KEY, LOST_KEY, YearBook

#: Causes of downtime, in unit-hours (calendar hours a unit is down).
DOWN_CAUSES = ("crew", "spares", "repair", "planned")
#: Counted events of a tally.
COUNTS = ("failures", "planned", "opportunistic", "inspections", "detections", "missed_defects",
          "failures_after_detection", "orders", "emergency_orders", "stockouts")


@dataclass
class MachineTally:
    """One machine type: its units' failures, calendar hours down and operating hours lost."""

    units: int
    failures: float = 0.0
    down_h: float = 0.0
    lost_operating_h: float = 0.0


@dataclass
class BearingTally:
    """One bearing kind: spares issued and the share of demands met from stock at once.

    ``stock_demands`` and ``stock_fill_rate`` count only the demands the (s, S)
    stock serves: planned changes met by their own spare ordered ahead are left
    out (None: every demand, the same as ``issued`` and ``fill_rate``).
    """

    issued: float = 0.0
    fill_rate: float = 1.0
    stock_demands: float | None = None
    stock_fill_rate: float | None = None


@dataclass
class GroupTally:
    """One k-out-of-n group, or the fleet (``id == "fleet"``)."""

    id: str
    had_down: bool
    first_down_h: float  # horizon when never down
    down_h: float


def group_tallies(rows: list[dict], horizon_h: float) -> list[GroupTally]:
    """The :class:`GroupTally` of each row of ``GroupTracker.finish`` (a group never
    down has its first down at the horizon)."""
    out = []
    for r in rows:
        first = float(r["first_down_h"])
        out.append(GroupTally(str(r["group"]), bool(r["had_down"]),
                              first if math.isfinite(first) else horizon_h, float(r["down_h"])))
    return out


# Keys of the year book (fleetsim.sim.years) that costs are charged on, shared by both engines.
CHANGES, FAILURES, INSPECTIONS = "changes", "failures", "inspections"
DOWN_H, LOST_OPERATING_H, LABOUR_H = DOWN_KEY, LOST_KEY, LABOUR_KEY


def issued_key(bearing: str) -> str:
    """Year-book key of the spares of ``bearing`` issued from the store."""
    return f"issued:{bearing}"


def ordered_key(bearing: str) -> str:
    """Year-book key of the spares of ``bearing`` ordered from a (s, S) store.

    A bearing without a store entry buys exactly what it issues; it books only
    :func:`issued_key` (see :func:`bought_by_year`).
    """
    return f"ordered:{bearing}"


def bought_by_year(tally: Tally, scenario: Scenario, bearing: str) -> np.ndarray:
    """Spares of ``bearing`` bought per year: ordered from its store, or issued when unlimited."""
    if bearing in scenario.stores:
        return tally.book.years(ordered_key(bearing), False)
    return tally.book.years(issued_key(bearing), False)


def on_hand_key(bearing: str) -> str:
    """Year-book key of the part-hours of ``bearing`` on the shelf."""
    return f"on_hand:{bearing}"


def emergency_key(bearing: str) -> str:
    """Year-book key of the emergency orders of ``bearing``."""
    return f"emergency:{bearing}"


def group_down_key(group: str) -> str:
    """Year-book key of the hours group ``group`` is down."""
    return f"group_down:{group}"


@dataclass
class Tally:
    """Everything one replication produced that a study reads (both engines fill it)."""

    horizon_h: float
    counts: dict[str, float]
    downtime_h: dict[str, float]
    machines: dict[str, MachineTally]
    bearings: dict[str, BearingTally]
    groups: list[GroupTally]
    book: YearBook

    @property
    def years(self) -> float:
        """The horizon in years of 8766 h."""
        return self.horizon_h / HOURS_PER_YEAR


def costs_by_year(tally: Tally, scenario: Scenario) -> dict[str, np.ndarray]:
    """The costs of a replication by category and calendar year (present values when discounted).

    Categories: ``planned_labour``, ``failure_labour``, ``parts``, ``downtime``,
    ``group_downtime``, ``inspection``, ``holding``, ``emergency``; each an array
    over the years of :attr:`Tally.book`.
    """
    c = scenario.costs
    book = tally.book
    pv = book.years
    zero = np.zeros(book.n)
    bearings = sorted(set(scenario.bearings) | set(scenario.stores))
    price = {b: scenario.bearings[b].price if b in scenario.bearings else 0.0 for b in bearings}
    premium = {b: s.emergency_premium for b, s in scenario.stores.items()}
    return {
        "planned_labour": pv(CHANGES) * c.planned_replacement,
        "failure_labour": pv(FAILURES) * (c.planned_replacement + c.failure),
        "parts": sum((pv(issued_key(b)) * price[b] for b in bearings), zero),
        "downtime": pv(LOST_OPERATING_H) * c.downtime_per_hour,
        "group_downtime": sum((pv(group_down_key(g.id)) * g.downtime_per_hour
                               for g in scenario.groups), zero),
        "inspection": pv(INSPECTIONS) * c.inspection,
        "holding": sum((pv(on_hand_key(b)) * (c.holding_rate_per_year * price[b] / HOURS_PER_YEAR)
                        for b in bearings), zero),
        "emergency": sum((pv(emergency_key(b)) * premium.get(b, 0.0) for b in bearings), zero),
    }


def costs_of(tally: Tally, scenario: Scenario) -> dict[str, float]:
    """The costs of a replication by category, and ``total`` (present value when discounted).

    The sums over the years of :func:`costs_by_year`.
    """
    out = {k: float(v.sum()) for k, v in costs_by_year(tally, scenario).items()}
    out["total"] = sum(out.values())
    return out

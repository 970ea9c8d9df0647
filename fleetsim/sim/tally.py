"""One tally per replication, filled by both engines, and the one cost model.

Both engines (:mod:`fleetsim.sim.engine`, :mod:`fleetsim.sim.vector`) reduce
a replication to a :class:`Tally`: counts, downtime by cause, per machine
type, per bearing kind and per group, and the *charged* quantities that
costs are computed from (present values at the study's discount rate; with
rate 0 the plain sums, see :mod:`fleetsim.sim.discount`). :func:`costs_of` is
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

from dataclasses import dataclass, field

from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario

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
    """One bearing kind: spares issued and the share of demands met from stock at once."""

    issued: float = 0.0
    fill_rate: float = 1.0


@dataclass
class GroupTally:
    """One k-out-of-n group, or the fleet (``id == "fleet"``)."""

    id: str
    had_down: bool
    first_down_h: float  # horizon when never down
    down_h: float


@dataclass
class Charged:
    """What costs are charged on: present values (plain sums at rate 0).

    ``changes`` planned and opportunistic changes; ``failures``;
    ``inspections``; ``lost_operating_h`` operating hours lost;
    per bearing: ``issued`` spares, ``on_hand_h`` part-hours on the shelf,
    ``emergency`` emergency orders; per group: ``group_down_h`` hours down.
    """

    changes: float = 0.0
    failures: float = 0.0
    inspections: float = 0.0
    lost_operating_h: float = 0.0
    issued: dict[str, float] = field(default_factory=dict)
    on_hand_h: dict[str, float] = field(default_factory=dict)
    emergency: dict[str, float] = field(default_factory=dict)
    group_down_h: dict[str, float] = field(default_factory=dict)


@dataclass
class Tally:
    """Everything one replication produced that a study reads (both engines fill it)."""

    horizon_h: float
    counts: dict[str, float]
    downtime_h: dict[str, float]
    machines: dict[str, MachineTally]
    bearings: dict[str, BearingTally]
    groups: list[GroupTally]
    charged: Charged

    @property
    def years(self) -> float:
        """The horizon in years of 8766 h."""
        return self.horizon_h / HOURS_PER_YEAR


def costs_of(tally: Tally, scenario: Scenario) -> dict[str, float]:
    """The costs of a replication by category, and ``total`` (present value when discounted).

    Categories: ``planned_labour``, ``failure_labour``, ``parts``, ``downtime``,
    ``group_downtime``, ``inspection``, ``holding``, ``emergency``.
    """
    c = scenario.costs
    ch = tally.charged
    price = {b: scenario.bearings[b].price if b in scenario.bearings else 0.0 for b in ch.issued}
    premium = {b: s.emergency_premium for b, s in scenario.stores.items()}
    group_rate = {g.id: g.downtime_per_hour for g in scenario.groups}
    out = {
        "planned_labour": ch.changes * c.planned_replacement,
        "failure_labour": ch.failures * (c.planned_replacement + c.failure),
        "parts": sum(n * price[b] for b, n in ch.issued.items()),
        "downtime": ch.lost_operating_h * c.downtime_per_hour,
        "group_downtime": sum(h * group_rate.get(g, 0.0) for g, h in ch.group_down_h.items()),
        "inspection": ch.inspections * c.inspection,
        "holding": sum(c.holding_rate_per_year * price.get(b, 0.0) * h / HOURS_PER_YEAR
                       for b, h in ch.on_hand_h.items()),
        "emergency": sum(n * premium.get(b, 0.0) for b, n in ch.emergency.items()),
    }
    out["total"] = sum(out.values())
    return out

"""What one replication records, and the frozen result it hands back.

During the run, counters are plain Python integers and floats and the event
log is a list of tuples; the pandas tables are built once, at the end.

Event kinds (``events`` table, columns ``time_h, unit, position, kind``):

=====================  =========================================================
kind                   meaning (``unit``, ``position``)
=====================  =========================================================
``defect``             the life ended: first detectable defect P (only logged
                       when a P-F interval follows)
``failure``            functional failure F; the unit stops
``inspection``         one inspection of a running unit (position ``""``)
``detection``          an inspection found the defect of this position
``stockout``           a request for a spare found the shelf empty
``order``              a normal replenishment order (unit ``""``, position = bearing)
``emergency_order``    an emergency order placed for this failed position
``delivery``           an order arrived (unit ``""``, position = bearing)
``stop``               the unit stops for planned work (position ``""``)
``work``               a crew starts the repair of a failed unit (position ``""``)
``corrective``         the failed position was replaced (at the end of the work)
``planned``            planned replacement (age, block, detection) at the end of the work
``opportunistic``      opportunistic replacement in the same stop
``up``                 the unit runs again (position ``""``)
=====================  =========================================================

Cost categories (money in the scenario's currency; present values at the start
when ``costs.discount_rate`` > 0, see :mod:`fleetsim.sim.discount`):

* ``planned_labour`` = planned and opportunistic changes × ``costs.planned_replacement``;
* ``failure_labour`` = failures × (``costs.planned_replacement`` + ``costs.failure``):
  a failed bearing is changed like a planned one, plus the failure's own cost
  (secondary damage, call-out);
* ``parts`` = spares issued × bearing price;
* ``downtime`` = machine-hours stopped × ``costs.downtime_per_hour``;
* ``inspection`` = inspections × ``costs.inspection`` (one per unit visit);
* ``holding`` = ``holding_rate_per_year`` × price × time-average stock on hand × years;
* ``emergency`` = emergency orders × ``emergency_premium``.

So a planned change costs c_p = planned_replacement + price and a failure
c_f = planned_replacement + failure + price (+ downtime in both cases).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from fleetsim.scenario.model import HOURS_PER_YEAR
from fleetsim.sim.discount import per_year

EVENT_COLUMNS = ("time_h", "unit", "position", "kind")
DOWN_CAUSES = ("waiting_spare_h", "waiting_crew_h", "repair_h", "planned_h")
UNIT_COLUMNS = (
    "unit", "machine", "running_h", "operating_h", *DOWN_CAUSES, "down_h", "availability",
    "failures", "stops",
)  # fmt: skip
POSITION_COLUMNS = (
    "unit", "position", "machine", "bearing", "policy", "failures", "planned", "opportunistic",
    "defects", "detections", "age_end_h",
)  # fmt: skip
SPARE_COLUMNS = (
    "bearing", "demands", "issued", "stockouts", "fill_rate", "orders", "emergency_orders",
    "ordered_units", "mean_on_hand", "mean_backorders", "issued_per_year",
)  # fmt: skip
GROUP_COLUMNS = (
    "group", "need", "units", "down_h", "down_share", "down_events", "had_down", "first_down_h",
)  # fmt: skip
COUNT_NAMES = (
    "failures",
    "planned",
    "opportunistic",
    "defects",
    "inspections",
    "detections",
    "missed_inspections",
    "missed_defects",
    "failures_after_detection",
    "stockouts",
    "orders",
    "emergency_orders",
)


class Recorder:
    """Mutable counters and the event log of a running replication."""

    __slots__ = ("keep_events", "events", "counts", "pv")

    def __init__(self, keep_events: bool) -> None:
        self.keep_events = keep_events
        self.events: list[tuple[float, str, str, str]] = []
        self.counts: dict[str, int] = dict.fromkeys(COUNT_NAMES, 0)
        #: with discounting (:mod:`fleetsim.sim.discount`): the sum of discount factors of
        #: failures, planned and opportunistic changes and inspections, and the integral
        #: of the discount factor over every unit's stopped hours (``down_h``)
        self.pv: dict[str, float] = dict.fromkeys(("failures", "changes", "inspections", "down_h"),
                                                  0.0)

    def log(self, time_h: float, unit: str, position: str, kind: str) -> None:
        """Append one event to the log."""
        self.events.append((time_h, unit, position, kind))


#: A table as columns: ``{column: [values...]}`` (the first column is the index).
Table = dict[str, list[Any]]

_INDEX = {"units": ["unit"], "positions": ["unit", "position"], "spares": ["bearing"],
          "groups": ["group"], "events": []}


@dataclass(frozen=True)
class ReplicationResult:
    """Everything one replication recorded.

    The tables are kept as plain columns and turned into pandas DataFrames on
    first access, so reducing a replication to :meth:`figures` costs no pandas
    work at all.

    Attributes
    ----------
    horizon_h
        Calendar hours simulated.
    seed
        ``(entropy, spawn_key)`` of the replication's seed sequence.
    counts
        Fleet totals: failures, planned, opportunistic, defects, inspections,
        detections, missed_inspections (an inspection inside the P-F window
        that did not find the defect), missed_defects (failures of
        condition-monitored positions never detected),
        failures_after_detection, stockouts, orders, emergency_orders.
    costs
        Cost by category and ``total`` (see the module docstring).
    crew_busy_h
        Crew-hours worked.
    discount_rate_per_year
        The rate the costs are discounted at (0: undiscounted).
    tables
        The raw columns of ``events``, ``units``, ``positions``, ``spares`` and
        ``groups`` (use the DataFrame properties below).

    DataFrames (properties)
    -----------------------
    events
        ``time_h, unit, position, kind`` (empty when events were not kept).
    units
        One row per machine unit (index ``unit``): ``machine, running_h,
        operating_h`` and down hours by cause ``waiting_spare_h,
        waiting_crew_h, repair_h, planned_h``, ``down_h``, ``availability``,
        ``failures, stops``.
    positions
        One row per (unit, position): ``machine, bearing, policy, failures,
        planned, opportunistic, defects, detections, age_end_h``.
    spares
        One row per bearing kind (index ``bearing``): ``demands, issued,
        stockouts, fill_rate, orders, emergency_orders, ordered_units,
        mean_on_hand, mean_backorders, issued_per_year``.
    groups
        One row per group and a last row ``fleet`` (index ``group``):
        ``need, units, down_h, down_share, down_events, had_down,
        first_down_h`` (NaN when no down event).
    """

    horizon_h: float
    seed: tuple[Any, tuple[int, ...]]
    counts: dict[str, int]
    costs: dict[str, float]
    crew_busy_h: float
    tables: dict[str, Table] = field(repr=False)
    discount_rate_per_year: float = 0.0

    def _frame(self, name: str) -> pd.DataFrame:
        cache = self.__dict__.setdefault("_frames", {})
        if name not in cache:
            frame = pd.DataFrame(self.tables[name])
            if _INDEX[name]:
                frame = frame.set_index(_INDEX[name])
            cache[name] = frame
        return cache[name]

    @property
    def events(self) -> pd.DataFrame:
        """The event log (see the module docstring for the kinds)."""
        return self._frame("events")

    @property
    def units(self) -> pd.DataFrame:
        """One row per machine unit: running, operating and down hours by cause."""
        return self._frame("units")

    @property
    def positions(self) -> pd.DataFrame:
        """One row per (unit, position): replacements by kind and final age."""
        return self._frame("positions")

    @property
    def spares(self) -> pd.DataFrame:
        """One row per bearing kind: demands, stock-outs, fill rate, orders, stock."""
        return self._frame("spares")

    @property
    def groups(self) -> pd.DataFrame:
        """One row per group and one for the fleet: down time and down events."""
        return self._frame("groups")

    @property
    def years(self) -> float:
        """Horizon in years of 8766 h."""
        return self.horizon_h / HOURS_PER_YEAR

    @property
    def availability(self) -> float:
        """Mean availability of the fleet's units (share of calendar time running)."""
        a = self.tables["units"]["availability"]
        return sum(a) / len(a) if a else math.nan

    @property
    def downtime_by_cause(self) -> dict[str, float]:
        """Machine-hours down by cause, summed over the fleet."""
        u = self.tables["units"]
        return {cause: float(sum(u[cause])) for cause in DOWN_CAUSES}

    def event_log(self) -> list[tuple[float, str, str, str]]:
        """The events as a list of ``(time_h, unit, position, kind)`` tuples."""
        e = self.tables["events"]
        return list(zip(e["time_h"], e["unit"], e["position"], e["kind"], strict=True))

    def figures(self) -> dict[str, float]:
        """A flat ``{figure: value}`` summary for replication tables (no pandas).

        Keys: every count; ``cost.<category>``; ``cost.per_year`` and
        ``cost.per_operating_h``; ``downtime.<cause>`` and ``downtime.total_h``;
        ``availability`` and ``availability.<unit>``; ``operating_h``;
        ``crew_busy_h``; ``spares.<bearing>.{issued,per_year,stockouts,
        fill_rate,emergency_orders,mean_on_hand}``; ``group.<id>.{down_h,
        down_events,had_down,first_down_h}`` including ``group.fleet``.
        """
        out: dict[str, float] = {k: float(v) for k, v in self.counts.items()}
        for k, v in self.costs.items():
            out[f"cost.{k}"] = float(v)
        u = self.tables["units"]
        operating = float(sum(u["operating_h"]))
        total = self.costs.get("total", 0.0)
        out["cost.per_year"] = per_year(total, self.years, self.discount_rate_per_year)
        out["cost.per_operating_h"] = total / operating if operating > 0 else math.nan
        out["operating_h"] = operating
        out["crew_busy_h"] = self.crew_busy_h
        for cause, hours in self.downtime_by_cause.items():
            out[f"downtime.{cause}"] = hours
        out["downtime.total_h"] = float(sum(u["down_h"]))
        out["availability"] = self.availability
        for unit, a in zip(u["unit"], u["availability"], strict=True):
            out[f"availability.{unit}"] = float(a)
        sp = self.tables["spares"]
        for i, bearing in enumerate(sp["bearing"]):
            for col, name in (("issued", "issued"), ("issued_per_year", "per_year"),
                              ("stockouts", "stockouts"), ("fill_rate", "fill_rate"),
                              ("emergency_orders", "emergency_orders"),
                              ("mean_on_hand", "mean_on_hand")):
                out[f"spares.{bearing}.{name}"] = float(sp[col][i])
        g = self.tables["groups"]
        for i, group in enumerate(g["group"]):
            for col in ("down_h", "down_events", "had_down", "first_down_h"):
                out[f"group.{group}.{col}"] = float(g[col][i])
        return out

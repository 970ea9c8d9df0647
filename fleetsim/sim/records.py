"""What one replication records, and the frozen result it hands back.

During the run, counters are plain Python integers and floats and the event
log is a list of tuples (the first :data:`MAX_EVENTS_KEPT`), or, given an
:class:`~fleetsim.sim.event_log.EventFile`, rows written to a file as they
happen (every event, in bounded memory); the pandas tables are built once, at
the end.

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

Costs (``costs``) come from the one cost model,
:func:`fleetsim.sim.tally.costs_of`, applied to the replication's
:class:`~fleetsim.sim.tally.Tally` (``tally``), which the vectorised engine
fills too; see :mod:`fleetsim.sim.tally` for the conventions.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from fleetsim.scenario.model import HOURS_PER_YEAR
from fleetsim.sim.event_log import EVENT_COLUMNS as EVENT_COLUMNS
from fleetsim.sim.event_log import EventFile
from fleetsim.sim.tally import Tally
from fleetsim.sim.years import YearBook

DOWN_CAUSES = ("waiting_spare_h", "waiting_crew_h", "repair_h", "planned_h")
UNIT_COLUMNS = (
    "unit", "machine", "running_h", "operating_h", *DOWN_CAUSES, "down_h", "availability",
    "failures", "stops", "lost_operating_h",
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


#: Most events kept in a replication's in-memory event log (the counts include every
#: event; an :class:`~fleetsim.sim.event_log.EventFile` keeps them all).
MAX_EVENTS_KEPT = 200_000


class Recorder:
    """Mutable counters and the event log of a running replication.

    With ``sink`` (an :class:`~fleetsim.sim.event_log.EventFile`) every event
    goes to the file and none is held; without it the first
    :data:`MAX_EVENTS_KEPT` are held in :attr:`events`.
    """

    __slots__ = ("keep_events", "events", "counts", "book", "truncated", "sink")

    def __init__(self, keep_events: bool, book: YearBook, sink: EventFile | None = None) -> None:
        self.keep_events = keep_events or sink is not None
        self.truncated = False
        self.sink = sink
        self.events: list[tuple[float, str, str, str]] = []
        self.counts: dict[str, int] = dict.fromkeys(COUNT_NAMES, 0)
        #: what costs are charged on, per calendar year (:mod:`fleetsim.sim.years`)
        self.book = book

    def log(self, time_h: float, unit: str, position: str, kind: str) -> None:
        """Log one event: to the sink, else to the in-memory log (the first
        :data:`MAX_EVENTS_KEPT`; a warning after)."""
        if self.sink is not None:
            self.sink.write(time_h, unit, position, kind)
        elif len(self.events) < MAX_EVENTS_KEPT:
            self.events.append((time_h, unit, position, kind))
        elif not self.truncated:
            self.truncated = True
            warnings.warn(f"the event log keeps only the first {MAX_EVENTS_KEPT:,} events of "
                          "the replication in memory (write it to a file to keep them all)",
                          stacklevel=2)


#: A table as columns: ``{column: [values...]}`` (the first column is the index).
Table = dict[str, list[Any]]

_INDEX = {"units": ["unit"], "positions": ["unit", "position"], "spares": ["bearing"],
          "groups": ["group"], "events": []}


@dataclass(frozen=True)
class ReplicationResult:
    """Everything one replication recorded.

    The tables are kept as plain columns and turned into pandas DataFrames on
    first access; a study reads only ``tally``, which costs no pandas work.

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
        Cost by category and ``total`` (:func:`fleetsim.sim.tally.costs_of`).
    tally
        The :class:`~fleetsim.sim.tally.Tally` both engines fill (what a study reads).
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
        ``failures, stops``, ``lost_operating_h`` (down hours × operating share).
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
    tally: Tally | None = field(default=None, repr=False)
    #: the file the event log was written to (then ``events`` is empty), or None
    events_file: str | None = None

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

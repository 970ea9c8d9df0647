"""Calendar-driven policies: block replacement dates and inspection rounds.

Age replacement and run-to-failure need no process of their own (the unit's
operating-hour clock drives them, see :mod:`fleetsim.sim.unit`). Two
policies run on the calendar:

* **Block replacement** every ``interval_h`` calendar hours from the start,
  whatever the age (a position fitted less than ``skip_younger_than`` before
  is skipped). With ``block_scope = "machine"`` all the unit's block
  positions with the same interval are requested together (one planned stop);
  with ``"position"`` each position keeps its own calendar. Work for the
  same unit that falls due at the same time is done in one stop either way.
* **Ordering ahead** (stores with ``order_ahead``): each block calendar
  announces its next date to the stores of its positions as soon as the
  previous one has passed (at the start for the first); age dues are
  announced when a bearing is fitted (:meth:`UnitRunner.announce_age_due`).
* **Condition monitoring**: a unit's condition-monitored positions with the
  same ``inspection_every_h`` are inspected together, every that many
  calendar hours from the start; one visit costs one ``costs.inspection``.
  A unit that is stopped when its inspection falls due is not inspected.
"""

from __future__ import annotations

from typing import Any

from fleetsim.sim.lean_env import AnyEnvironment, at_start
from fleetsim.sim.schedule import INF, MaintenancePlan
from fleetsim.sim.setup import PositionState
from fleetsim.sim.unit import UnitRunner


class _BlockCalendar:
    """The block dates of some positions of one unit: every ``interval_h`` from the start,
    the unit is asked for them (:meth:`UnitRunner.block_date`), and each next date is
    announced to the stores that order ahead as soon as the previous one has passed.

    A chain of timeouts with a callback rather than a process: the same events in the
    same order, without resuming a generator at every date."""

    __slots__ = ("env", "unit", "interval_h", "positions", "ahead", "next_h")

    def __init__(self, env: AnyEnvironment, unit: UnitRunner, interval_h: float,
                 positions: list[PositionState]) -> None:
        self.env = env
        self.unit = unit
        self.interval_h = interval_h
        self.positions = positions
        self.ahead = [p for p in positions if p.store.order_ahead]
        #: the calendar hour of the next date (:meth:`UnitRunner.date_at_hand` reads it)
        self.next_h = interval_h
        unit.dates.append(self)
        at_start(env, self._next)

    def _next(self, _event: Any) -> None:
        env = self.env
        for p in self.ahead:  # the next block date is known now: order its spares ahead
            p.store.plan_ahead(self.unit.id, p.id, env.now + self.interval_h)
        self.next_h = env.now + self.interval_h
        env.timeout(self.interval_h).callbacks.append(self._date)

    def _date(self, event: Any) -> None:
        self.unit.block_date(self.positions)
        self._next(event)


class _InspectionRound:
    """The inspection visits of some positions of one unit, every ``every_h`` from the
    start (:meth:`UnitRunner.inspect`); a chain of timeouts, as :class:`_BlockCalendar`."""

    __slots__ = ("env", "unit", "every_h", "positions", "next_h")

    def __init__(self, env: AnyEnvironment, unit: UnitRunner, every_h: float,
                 positions: list[PositionState]) -> None:
        self.env = env
        self.unit = unit
        self.every_h = every_h
        self.positions = positions
        #: the calendar hour of the next visit (:meth:`UnitRunner.date_at_hand` reads it)
        self.next_h = every_h
        unit.dates.append(self)
        at_start(env, self._next)

    def _next(self, _event: Any) -> None:
        self.next_h = self.env.now + self.every_h
        self.env.timeout(self.every_h).callbacks.append(self._visit)

    def _visit(self, _event: Any) -> None:
        self.unit.inspect(self.positions)
        env = self.env  # (_next, inlined: this runs at every visit)
        self.next_h = env.now + self.every_h
        env.timeout(self.every_h).callbacks.append(self._visit)


def start_calendar_policies(env: AnyEnvironment, unit: UnitRunner, plan: MaintenancePlan) -> None:
    """Start the block calendars and inspection rounds of one unit (from its machine's plan),
    and announce the first age dues to stores that order ahead."""
    for p in unit.positions:
        if p.store.order_ahead and p.age_due_h < INF:
            unit.announce_age_due(p)
    for job in plan.blocks:
        _BlockCalendar(env, unit, job.every_h, [unit.positions[j] for j in job.positions])
    for job in plan.rounds:
        _InspectionRound(env, unit, job.every_h, [unit.positions[j] for j in job.positions])

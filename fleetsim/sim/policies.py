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

from collections.abc import Generator
from typing import Any

import simpy

from fleetsim.sim.lean_env import AnyEvent, LeanEnvironment
from fleetsim.sim.schedule import INF, MaintenancePlan
from fleetsim.sim.setup import PositionState
from fleetsim.sim.unit import UnitRunner


def _block_calendar(
    env: simpy.Environment | LeanEnvironment, unit: UnitRunner, interval_h: float, positions: list[PositionState]
) -> Generator[AnyEvent, Any, None]:
    ahead = [p for p in positions if p.store.order_ahead]
    while True:
        for p in ahead:  # the next block date is known now: order its spares ahead
            p.store.plan_ahead(unit.id, p.id, env.now + interval_h)
        yield env.timeout(interval_h)
        unit.block_date(positions)


def _inspection_round(
    env: simpy.Environment | LeanEnvironment, unit: UnitRunner, every_h: float, positions: list[PositionState]
) -> Generator[AnyEvent, Any, None]:
    while True:
        yield env.timeout(every_h)
        unit.inspect(positions)


def start_calendar_policies(env: simpy.Environment | LeanEnvironment, unit: UnitRunner, plan: MaintenancePlan) -> None:
    """Start the block calendars and inspection rounds of one unit (from its machine's plan),
    and announce the first age dues to stores that order ahead."""
    for p in unit.positions:
        if p.store.order_ahead and p.age_due_h < INF:
            unit.announce_age_due(p)
    # (each loop's processes yield its own events: SimPy's types name only SimPy's)
    for job in plan.blocks:
        env.process(_block_calendar(env, unit, job.every_h,  # type: ignore[arg-type]
                                    [unit.positions[j] for j in job.positions]))
    for job in plan.rounds:
        env.process(_inspection_round(env, unit, job.every_h,  # type: ignore[arg-type]
                                      [unit.positions[j] for j in job.positions]))

"""Calendar-driven policies: block replacement dates and inspection rounds.

Age replacement and run-to-failure need no process of their own (the unit's
operating-hour clock drives them, see :mod:`fleetsim.sim.unit`). Two
policies run on the calendar:

* **Block replacement** every ``interval_h`` calendar hours from the start,
  whatever the age. With ``block_scope = "machine"`` all the unit's block
  positions with the same interval are requested together (one planned stop);
  with ``"position"`` each position keeps its own calendar. Work for the
  same unit that falls due at the same time is done in one stop either way.
* **Condition monitoring**: a unit's condition-monitored positions with the
  same ``inspection_every_h`` are inspected together, every that many
  calendar hours from the start; one visit costs one ``costs.inspection``.
  A unit that is stopped when its inspection falls due is not inspected.
"""

from __future__ import annotations

from collections.abc import Generator
from typing import Any

import simpy

from fleetsim.errors import InputError
from fleetsim.scenario.model import Policy
from fleetsim.sim.setup import PositionState
from fleetsim.sim.unit import UnitRunner


def check_policy(policy: Policy, where: str) -> None:
    """Raise :class:`InputError` when a policy lacks what its kind needs."""
    if policy.kind in ("age", "block"):
        if policy.interval_h is None or not policy.interval_h > 0:
            raise InputError(f"{where}.policy.interval",
                             f"a {policy.kind} policy needs an interval > 0 h, got {policy.interval_h}")
    if policy.kind == "condition":
        every = policy.inspection_every_h
        if every is None or not every > 0:
            raise InputError(f"{where}.policy.inspection_every",
                             f"a condition policy needs an inspection interval > 0 h, got {every}")
        if not 0.0 <= policy.detection <= 1.0:
            raise InputError(f"{where}.policy.detection",
                             f"expected a probability between 0 and 1, got {policy.detection}")
        if policy.respond_within_h < 0:
            raise InputError(f"{where}.policy.respond_within",
                             f"expected a response time >= 0 h, got {policy.respond_within_h}")
    share = policy.opportunistic_share
    if share is not None and share < 0:
        raise InputError(f"{where}.policy.opportunistic_age", f"expected a share >= 0, got {share}")


def _block_calendar(
    env: simpy.Environment, unit: UnitRunner, interval_h: float, positions: list[PositionState]
) -> Generator[simpy.Event, Any, None]:
    while True:
        yield env.timeout(interval_h)
        unit.request_planned(positions, env.now)


def _inspection_round(
    env: simpy.Environment, unit: UnitRunner, every_h: float, positions: list[PositionState]
) -> Generator[simpy.Event, Any, None]:
    while True:
        yield env.timeout(every_h)
        unit.inspect(positions)


def start_calendar_policies(env: simpy.Environment, unit: UnitRunner) -> None:
    """Start the block calendars and inspection rounds of one unit."""
    blocks: dict[tuple[float, str], list[PositionState]] = {}
    rounds: dict[float, list[PositionState]] = {}
    for p in unit.positions:
        pol = p.policy
        if pol.kind == "block":
            assert pol.interval_h is not None
            key = (pol.interval_h, "" if pol.block_scope == "machine" else p.id)
            blocks.setdefault(key, []).append(p)
        elif pol.kind == "condition":
            assert pol.inspection_every_h is not None
            rounds.setdefault(pol.inspection_every_h, []).append(p)
    for (interval_h, _), positions in blocks.items():
        env.process(_block_calendar(env, unit, interval_h, positions))
    for every_h, positions in rounds.items():
        env.process(_inspection_round(env, unit, every_h, positions))

"""The event budget of one replication: event storms stop with one line, not a full memory.

A scenario whose lives or inspection intervals are far shorter than its
horizon (1 h lives with 0 h repairs; an inspection every minute for ten
years) would make an engine process millions of events per position, holding
them in memory. Each replication may therefore process at most

    max(MIN_EVENTS, EVENTS_PER_POSITION_YEAR × positions × horizon in years)

events (1,000 events per bearing position and simulated year, and at least
1,000,000), far above any real plant (a weekly inspection is 52 a year); past
it the replication stops with an :class:`EventBudgetExceeded`, an
:class:`~fleetsim.errors.InputError` naming the scenario and the likely cause.
The discrete-event engine counts the events its loop steps
(:meth:`~fleetsim.sim.lean_env.LeanEnvironment.run_within`, or SimPy's in
:func:`run_within_budget`: the same count),
the vectorised engine the position-events of its rounds, each round at least
:data:`ROUND_EVENTS` (its fixed cost, whatever the number of lanes).
"""

from __future__ import annotations

from collections.abc import Callable

import simpy
from simpy.core import StopSimulation
from simpy.events import URGENT

from fleetsim.errors import InputError
from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario

#: Events allowed per bearing position and simulated year.
EVENTS_PER_POSITION_YEAR = 1000
#: Events always allowed per replication.
MIN_EVENTS = 1_000_000
#: What one round (step) of the vectorised engine counts at least.
ROUND_EVENTS = 64


def calendar_events(scenario: Scenario, horizon_h: float) -> int:
    """The block dates and inspection visits of every unit within the horizon: events both
    engines meet whatever the lives (the discrete-event engine's calendars fire each one)."""
    from fleetsim.sim.schedule import compile_plan

    total = 0
    for m in scenario.machines:
        plan = compile_plan(m)
        total += m.count * sum(int(horizon_h // job.every_h) for job in (*plan.blocks, *plan.rounds))
    return total


def check_calendar(scenario: Scenario, horizon_h: float, limit: int) -> None:
    """Raise :class:`EventBudgetExceeded` at once when the calendars alone exceed ``limit``
    (a block date or an inspection every few seconds), instead of after ``limit`` events."""
    if calendar_events(scenario, horizon_h) > limit:
        raise exceeded(limit, scenario.source)


class EventBudgetExceeded(InputError):
    """A replication needed more events than its budget."""


def event_budget(scenario: Scenario, horizon_h: float) -> int:
    """The number of events one replication of ``scenario`` may process."""
    positions = sum(m.count * len(m.positions) for m in scenario.machines)
    years = horizon_h / HOURS_PER_YEAR
    return max(MIN_EVENTS, int(EVENTS_PER_POSITION_YEAR * positions * years))


class EventBudget:
    """Counts events against a budget; :meth:`spend` raises when it is used up."""

    __slots__ = ("limit", "left", "source")

    def __init__(self, limit: int, source: str = "scenario") -> None:
        self.limit = limit
        self.left = limit
        self.source = source

    def spend(self, events: int) -> None:
        """Count ``events``; raise :class:`EventBudgetExceeded` past the budget."""
        self.left -= events
        if self.left < 0:
            raise exceeded(self.limit, self.source)


def exceeded(limit: int, source: str) -> EventBudgetExceeded:
    """The one-line error of a replication past its budget."""
    return EventBudgetExceeded(
        source,
        f"more than {limit:,} events in one replication: a life or inspection interval is "
        "far shorter than the horizon (the budget is "
        f"{EVENTS_PER_POSITION_YEAR:,} events per bearing position and simulated year)",
    )


#: Events stepped between two calls of ``every`` in :func:`run_within_budget`.
CHUNK_EVENTS = 1 << 16


def run_within_budget(
    env: simpy.Environment,
    horizon_h: float,
    limit: int,
    source: str = "scenario",
    every: Callable[[], None] | None = None,
) -> None:
    """``env.run(until=horizon_h)``, stopping with :class:`EventBudgetExceeded` after ``limit`` events.

    The same loop as SimPy's own ``run`` (the stop at the horizon is scheduled
    before all regular events at that time, exactly as ``run(until=...)``
    does), but it steps at most ``limit`` events: the budget is the loop's own
    count, so an event costs nothing extra, and a storm of events at one
    instant is stopped as surely as one spread over the horizon. ``every`` is
    called after each :data:`CHUNK_EVENTS` events (the year book settles its
    journal there, so memory stays bounded).
    """
    if not horizon_h > env.now:
        raise ValueError(f"horizon ({horizon_h}) must be after the current time ({env.now})")
    stop = simpy.Event(env)
    stop._ok = True  # a triggered event with no value, as ``run(until=...)`` makes it
    stop._value = None
    env.schedule(stop, URGENT, horizon_h - env.now)
    stop.callbacks.append(StopSimulation.callback)
    step = env.step
    left = limit
    try:
        while left > 0:
            chunk = CHUNK_EVENTS if left > CHUNK_EVENTS else left
            for _ in range(chunk):
                step()
            left -= chunk
            if every is not None:
                every()
    except StopSimulation:
        return
    raise exceeded(limit, source)

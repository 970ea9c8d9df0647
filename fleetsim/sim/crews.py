"""Maintenance crews: a shared pool that repair and planned jobs queue for.

Conventions:

* ``Crews.count`` crews work in parallel (a ``simpy.PriorityResource``);
  ``None`` means as many as needed (no queue).
* One crew does one stop of one machine unit, whatever the number of
  bearings changed in that stop; it is held for the stop's repair duration.
* Jobs wait first come, first served, except that repairs of failed units
  go before planned work (priority 0 before 1). A planned job is never
  interrupted once started.
* A planned job asks for a crew only once its spares are on hand and its
  start time has come; the machine keeps running while it waits. A failed
  machine asks for a crew once the spares for its failed positions are on
  hand (the crew is not tied up waiting for parts).
"""

from __future__ import annotations

from collections.abc import Callable
from heapq import heapreplace
from typing import Any

import simpy
from simpy.resources.resource import PriorityRequest

from fleetsim.sim.lean_env import AnyEnvironment, LeanEnvironment, LeanPriorityResource, LeanRequest

#: A crew request of either event loop.
CrewRequest = PriorityRequest | LeanRequest

UNPLANNED = 0
PLANNED = 1


class CrewPool:
    """The crews of one replication.

    Parameters
    ----------
    env
        The replication's environment.
    count
        Number of crews, or None for unlimited.
    """

    __slots__ = ("env", "resource", "busy_h")

    def __init__(self, env: AnyEnvironment, count: int | None) -> None:
        self.env = env
        #: ``simpy.PriorityResource`` or, on the lean loop, its twin (None: unlimited)
        self.resource: Any = (
            None if count is None
            else LeanPriorityResource(env, count) if isinstance(env, LeanEnvironment)
            else simpy.PriorityResource(env, count))
        self.busy_h = 0.0

    def request(self, priority: int, notify: Callable[[], None] | None = None) -> CrewRequest | None:
        """Ask for a crew; None means granted at once (unlimited crews).

        ``notify`` is called when a queued request is granted.
        """
        if self.resource is None:
            return None
        req = self.resource.request(priority=priority)
        if notify is not None and not req.triggered:
            req.callbacks.append(lambda _ev: notify())
        return req

    @staticmethod
    def granted(req: CrewRequest | None) -> bool:
        """True when the request holds a crew."""
        return req is None or req.triggered

    def withdraw(self, req: CrewRequest | None) -> None:
        """Give up a request: leave the queue, or hand the crew back if already granted."""
        if req is None or self.resource is None:
            return
        if req.triggered:
            self.resource.release(req)
        else:
            req.cancel()

    def release(self, req: CrewRequest | None, worked_h: float) -> None:
        """Hand a crew back after ``worked_h`` hours of work."""
        self.busy_h += worked_h
        if req is not None and self.resource is not None:
            self.resource.release(req)


class CrewCalendar:
    """The same crews, first come, first served, for a queue whose jobs ask in time order
    and know their hours when they ask (every job a repair, none withdrawn).

    Then no event is needed when a crew comes free: a job asking at ``now`` starts
    at the later of ``now`` and the earliest time a crew comes free, and that crew
    is busy until the start plus the job's hours (the recursion of Kiefer and
    Wolfowitz for a first-come, first-served queue with several servers). It
    gives the start :class:`CrewPool` gives such a job (the vectorised engine's
    coupled path, :mod:`fleetsim.sim.coupled`; ``tests/test_engine_identity.py``).
    """

    __slots__ = ("free_at",)

    def __init__(self, count: int | None) -> None:
        #: when each crew comes free, a heap (None: unlimited crews, every job starts at once)
        self.free_at = [0.0] * count if count is not None else None

    def start(self, now: float, hours: float) -> float:
        """The calendar hour the job asking at ``now`` for ``hours`` of work starts."""
        free_at = self.free_at
        if free_at is None:
            return now
        first = free_at[0]
        start = first if first > now else now
        heapreplace(free_at, start + hours)
        return start

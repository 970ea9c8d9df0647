"""The discrete-event engine's event loop without SimPy's general machinery.

:class:`LeanEnvironment` runs the engine's processes and callbacks (:class:`~fleetsim.sim.unit.UnitRunner`,
the calendars of :mod:`fleetsim.sim.policies`, the stores of :mod:`fleetsim.sim.stores`)
unchanged, with SimPy's rules for the few kinds of event they use:

* the queue is ordered by (time, priority, order of scheduling), with SimPy's
  two priorities (``URGENT`` before ``NORMAL`` at one instant);
* an event's callbacks run when it is taken from the queue, in the order they
  were added; a timeout is scheduled when it is made, an event when it succeeds;
* a process starts with an ``URGENT`` event at the instant it is made and
  resumes when the event it yielded is processed (at once, if that event has
  been processed already);
* :class:`LeanPriorityResource` is ``simpy.PriorityResource``: requests wait in
  the order (priority, time of request, order of request), a new request and a
  processed release each look at the head of the queue only, a grant and a
  release are events of their own.

Events scheduled for the current instant with NORMAL priority (every ``succeed``, a
timeout of no delay) skip the heap: they come after everything already on it for
this instant (scheduled earlier, so numbered lower) and among themselves first come
first, which a FIFO gives at the cost of an append.

So a replication gives SimPy's figures bit for bit
(``tests/test_sim_lean_env.py`` runs both on the engine-identity scenarios),
while an event costs a heap entry (or an append) and a few attribute reads: no
``Timeout``/``Initialize`` class hierarchy, no failure handling, no
interruption (an exception in a process goes straight up). The engine runs on it by
default (:data:`fleetsim.sim.engine.LEAN`). A ``simpy.Event`` put on the queue with
:meth:`LeanEnvironment.schedule` (the stores' early arrivals) works too: the loop
runs an event's callbacks as SimPy's ``step`` does.
"""

from __future__ import annotations

from collections import deque
from collections.abc import Callable, Generator
from heapq import heappop, heappush
from itertools import count
from typing import Any

import simpy
from simpy.events import NORMAL, URGENT

from fleetsim.sim.budget import CHUNK_EVENTS, exceeded


class LeanEvent:
    """An event: ``callbacks`` (None once processed), ``triggered``, :meth:`succeed`."""

    __slots__ = ("env", "callbacks", "_value", "triggered")

    def __init__(self, env: LeanEnvironment) -> None:
        self.env = env
        #: (None once processed, as in SimPy)
        self.callbacks: list[Callable[[Any], None]] = []
        self._value: Any = None
        #: True once the event has succeeded (it may not have been processed yet)
        self.triggered = False

    def succeed(self, value: Any = None) -> LeanEvent:
        """Trigger the event now (its callbacks run when it is taken from the queue)."""
        if self.triggered:
            raise RuntimeError(f"{self!r} has already been triggered")
        self.triggered = True
        self._value = value
        self.env._soon.append(self)
        return self


#: An event of either loop (what the engine's processes yield).
AnyEvent = simpy.Event | LeanEvent


class LeanProcess(LeanEvent):
    """A generator stepped from event to event (the event itself: triggered when it ends)."""

    __slots__ = ("_generator",)

    def __init__(self, env: LeanEnvironment, generator: Generator[Any, Any, Any]) -> None:
        super().__init__(env)
        self._generator = generator
        start = LeanEvent(env)  # SimPy's Initialize: URGENT, at once
        start.triggered = True
        start.callbacks.append(self._resume)
        heappush(env._queue, (env.now, URGENT, env._eid(), start))

    def _resume(self, event: Any) -> None:
        send = self._generator.send
        while True:
            try:
                event = send(event._value)
            except StopIteration as stop:
                self.triggered = True
                self._value = stop.value
                self.env._soon.append(self)
                return
            if event.callbacks is not None:
                event.callbacks.append(self._resume)
                return


class LeanRequest(LeanEvent):
    """A request for a crew of :class:`LeanPriorityResource` (SimPy's ``PriorityRequest``)."""

    __slots__ = ("resource", "cancelled")

    def __init__(self, resource: LeanPriorityResource, priority: int) -> None:
        super().__init__(resource.env)
        self.resource = resource
        self.cancelled = False
        # SimPy sorts by (priority, time of request), stably: first asked, first among equals
        heappush(resource.put_queue, (priority, resource.env.now, resource.asked(), self))
        resource._trigger_put()

    def cancel(self) -> None:
        """Leave the queue (a request not granted yet)."""
        if not self.triggered:
            self.cancelled = True  # (dropped when it reaches the head)


class LeanPriorityResource:
    """``simpy.PriorityResource`` on a :class:`LeanEnvironment` (module docstring).

    Its queue is a heap of (priority, time of request, order of request, request);
    a cancelled request stays on it, marked, until it comes to the head.
    """

    __slots__ = ("env", "capacity", "users", "put_queue", "asked")

    def __init__(self, env: LeanEnvironment, capacity: int) -> None:
        self.env = env
        self.capacity = capacity
        self.users: list[LeanRequest] = []
        self.put_queue: list[tuple[int, float, int, LeanRequest]] = []
        #: numbers the requests in the order they are made
        self.asked = count().__next__

    def request(self, priority: int = 0) -> LeanRequest:
        """Ask for one unit of the resource."""
        return LeanRequest(self, priority)

    def release(self, request: LeanRequest) -> LeanEvent:
        """Hand ``request``'s unit back; the queue's head is looked at when the release
        is processed (as SimPy's ``Release`` does)."""
        try:
            self.users.remove(request)
        except ValueError:
            pass
        ev = LeanEvent(self.env)
        ev.callbacks.append(self._released)
        ev.succeed()
        return ev

    def _released(self, _event: Any) -> None:
        self._trigger_put()

    def _trigger_put(self) -> None:
        # SimPy's Resource._trigger_put: only the head of the queue is tried
        queue = self.put_queue
        while queue and queue[0][3].cancelled:
            heappop(queue)
        if queue and len(self.users) < self.capacity:
            head = heappop(queue)[3]
            self.users.append(head)
            head.succeed()


class LeanEnvironment:
    """The clock and event queue (module docstring): ``now``, :meth:`timeout`,
    :meth:`event`, :meth:`process`, :meth:`schedule`, :meth:`run_within`."""

    __slots__ = ("now", "_queue", "_eid", "_soon")

    def __init__(self) -> None:
        self.now = 0.0
        self._queue: list[tuple[float, int, int, Any]] = []
        self._eid = count().__next__
        #: NORMAL events scheduled for the current instant, in order (see run_within)
        self._soon: deque[Any] = deque()

    def timeout(self, delay: float, value: Any = None) -> LeanEvent:
        """An event processed ``delay`` hours from now."""
        if delay < 0:
            raise ValueError(f"negative delay {delay}")
        ev = LeanEvent(self)
        ev.triggered = True
        ev._value = value
        at = self.now + delay
        if at == self.now:
            self._soon.append(ev)
        else:
            heappush(self._queue, (at, NORMAL, self._eid(), ev))
        return ev

    def event(self) -> LeanEvent:
        """An event to trigger later with :meth:`LeanEvent.succeed`."""
        return LeanEvent(self)

    def process(self, generator: Generator[Any, Any, Any]) -> LeanProcess:
        """Start ``generator`` as a process (its first step comes at once, ``URGENT``)."""
        return LeanProcess(self, generator)

    def schedule(self, event: Any, priority: int = NORMAL, delay: float = 0.0) -> None:
        """Put ``event`` on the queue ``delay`` hours from now (SimPy's ``schedule``)."""
        at = self.now + delay
        if at == self.now and priority == NORMAL:
            self._soon.append(event)
        else:
            heappush(self._queue, (at, priority, self._eid(), event))

    def run_within(self, horizon_h: float, limit: int, source: str = "scenario",
                   every: Callable[[], None] | None = None) -> None:
        """Process every event before ``horizon_h`` (events at the horizon are not),
        stopping with :class:`~fleetsim.sim.budget.EventBudgetExceeded` after ``limit``
        events; ``every`` is called after each
        :data:`~fleetsim.sim.budget.CHUNK_EVENTS` events. The counting is
        :func:`~fleetsim.sim.budget.run_within_budget`'s (the stop at the horizon is
        one of the events)."""
        queue = self._queue
        soon = self._soon
        pop_soon = soon.popleft
        left = limit
        while left > 0:
            chunk = CHUNK_EVENTS if left > CHUNK_EVENTS else left
            for _ in range(chunk):
                # The events of this instant in SimPy's order: those already on the heap
                # (URGENT ones, and NORMAL ones scheduled at an earlier instant, so with
                # lower scheduling numbers), then the NORMAL ones scheduled during this
                # instant, first come first (a heap push and pop saved for each).
                if queue and (queue[0][0] <= self.now or not soon):
                    if not queue[0][0] < horizon_h:
                        self.now = horizon_h
                        return
                    t, _, _, event = heappop(queue)
                    self.now = t
                elif soon:
                    event = pop_soon()
                else:
                    self.now = horizon_h
                    return
                callbacks, event.callbacks = event.callbacks, None
                for callback in callbacks:
                    callback(event)
            left -= chunk
            if every is not None:
                every()
        raise exceeded(limit, source)


#: Either event loop.
AnyEnvironment = simpy.Environment | LeanEnvironment


def at_start(env: AnyEnvironment, callback: Callable[[Any], None]) -> None:
    """Call ``callback`` at the current instant as a process starts there: from an
    ``URGENT`` event, triggered with no value (SimPy's ``Initialize``), on either loop."""
    ev: Any = env.event()
    if isinstance(env, LeanEnvironment):
        ev.triggered = True
    else:
        ev._ok = True
        ev._value = None
    ev.callbacks.append(callback)
    env.schedule(ev, URGENT)

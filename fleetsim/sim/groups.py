"""k-out-of-n groups and the fleet: down time and down events.

A group is up while at least ``need`` of its ``n`` units run; it is *down*
while more than ``n − need`` units are stopped, for any reason (failure,
waiting, repair or planned work). A *down event* is a transition from up to
down, even one of zero length (a failure repaired in zero time still brought
the group down). Stops of zero length at one instant overlap: each unit
restarts after every stop of that instant (the discrete-event engine defers
such a restart to an event after those already due at the instant; the
replay of the vectorised engine sorts it after the instant's stops).

The **fleet** is down while any group is down; a scenario without groups has
one implicit series system instead, down while any unit is stopped. Its first
down event gives the system-reliability curve (probability of no down event
by time t).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass
from functools import partial
from typing import Any

import numpy as np

from fleetsim.scenario.model import Scenario
from fleetsim.sim.tally import group_down_key
from fleetsim.sim.years import YearBook


@dataclass(slots=True)
class _State:
    name: str
    need: int
    size: int
    down_units: int = 0
    down: bool = False
    since: float = 0.0
    down_h: float = 0.0
    events: int = 0
    first_h: float = math.nan
    book: YearBook | None = None  # the replication's year book (hours down by year)


class GroupTracker:
    """Tracks every group and the fleet as units stop and restart.

    Parameters
    ----------
    groups
        ``(name, need, [unit indexes])`` for each group.
    n_units
        Number of units in the fleet.
    """

    FLEET = "fleet"
    __slots__ = ("states", "hold", "any_hold", "waiting", "unit_groups", "by_groups", "fleet",
                 "later", "down_at", "deferred")

    def __init__(self, groups: list[tuple[str, int, list[int]]], n_units: int,
                 hold_planned: list[bool] | None = None, book: YearBook | None = None,
                 later: Callable[[Callable[[Any], None]], None] | None = None) -> None:
        self.states = [_State(name, need, len(members), book=book)
                       for name, need, members in groups]
        self.hold = list(hold_planned) if hold_planned is not None else [False] * len(groups)
        self.any_hold = any(self.hold)
        self.waiting: list[list[Callable[[], None]]] = [[] for _ in groups]
        self.unit_groups: list[list[int]] = [[] for _ in range(n_units)]
        for g, (_name, _need, members) in enumerate(groups):
            for u in members:
                self.unit_groups[u].append(g)
        self.by_groups = bool(groups)
        # Fleet: down while any group is down (or any unit, without groups).
        self.fleet = _State(self.FLEET, 1, len(groups) if groups else n_units)
        self.fleet.need = self.fleet.size  # down as soon as one member is down
        #: ``later(callback)`` calls back after the events already due at this instant
        #: (the live engine's; None: restarts apply at once, as in the sorted replay)
        self.later = later if groups else None  # (set by the engine once it has its loop)
        #: when each unit stopped last, and restarts of zero-length stops not applied yet
        self.down_at = [math.nan] * n_units
        self.deferred: list[tuple[int, float]] = []

    @staticmethod
    def _member_down(st: _State, now: float) -> bool:
        st.down_units += 1
        if not st.down and st.down_units > st.size - st.need:
            st.down = True
            st.since = now
            st.events += 1
            if st.events == 1:
                st.first_h = now
            return True
        return False

    @staticmethod
    def _member_up(st: _State, now: float) -> bool:
        st.down_units -= 1
        if st.down and st.down_units <= st.size - st.need:
            st.down = False
            st.down_h += now - st.since
            if st.book is not None:
                st.book.over(group_down_key(st.name), st.since, now)
            return True
        return False

    def unit_down(self, unit: int, now: float) -> None:
        """Unit ``unit`` stopped at calendar hour ``now``."""
        self.down_at[unit] = now
        if self.by_groups:
            for g in self.unit_groups[unit]:
                if self._member_down(self.states[g], now):
                    self._member_down(self.fleet, now)
        else:
            self._member_down(self.fleet, now)

    def unit_up(self, unit: int, now: float) -> None:
        """Unit ``unit`` restarted at calendar hour ``now`` (after a stop of zero length:
        once the events already due at this instant have run, see the module docstring)."""
        if self.later is not None and self.down_at[unit] == now:
            self.deferred.append((unit, now))
            if len(self.deferred) == 1:
                self.later(self.restart_deferred)
            return
        self._restart(unit, now)

    def restart_deferred(self, _event: Any = None) -> None:
        """Apply the restarts deferred after stops of zero length."""
        deferred, self.deferred = self.deferred, []
        for unit, now in deferred:
            self._restart(unit, now)

    def _restart(self, unit: int, now: float) -> None:
        if self.by_groups:
            for g in self.unit_groups[unit]:
                if self._member_up(self.states[g], now):
                    self._member_up(self.fleet, now)
                if self.waiting[g]:  # planned work held back for this group may go now
                    waiting, self.waiting[g] = self.waiting[g], []
                    for wake in waiting:
                        wake()
        else:
            self._member_up(self.fleet, now)

    def switches(self, unit: int) -> tuple[Callable[[float], object], Callable[[float], object]]:
        """``(down(now), up(now))``: :meth:`unit_down` and :meth:`unit_up` for one unit.

        Without groups they go straight to the fleet's counter (one call less per stop).
        """
        if self.by_groups:
            return partial(self.unit_down, unit), partial(self.unit_up, unit)
        return partial(self._member_down, self.fleet), partial(self._member_up, self.fleet)

    def holds(self, unit: int) -> bool:
        """True when a group of ``unit`` holds planned work back (see :meth:`may_stop`)."""
        return self.any_hold and any(self.hold[g] for g in self.unit_groups[unit])

    def may_stop(self, unit: int, wake: Callable[[], None]) -> bool:
        """May ``unit`` stop for planned work now without taking a holding group down?

        When not, ``wake`` is called once a member of the blocking group restarts.
        """
        for g in self.unit_groups[unit]:
            st = self.states[g]
            if self.hold[g] and st.down_units + 1 > st.size - st.need:
                self.waiting[g].append(wake)
                return False
        return True

    def finish(self, horizon_h: float) -> list[dict[str, float | int | str | bool]]:
        """One row per group and a last row for the fleet."""
        rows: list[dict[str, float | int | str | bool]] = []
        self.restart_deferred()  # (restarts at the horizon's last instant)
        for st in [*self.states, self.fleet]:
            down_h = st.down_h + (horizon_h - st.since if st.down else 0.0)
            if st.down and st.book is not None:
                st.book.over(group_down_key(st.name), st.since, horizon_h)
            rows.append(
                {
                    "group": st.name,
                    "need": st.need,
                    "units": st.size,
                    "down_h": down_h,
                    "down_share": down_h / horizon_h,
                    "down_events": st.events,
                    "had_down": st.events > 0,
                    "first_down_h": st.first_h,
                }
            )
        return rows


def replay_groups(scenario: Scenario, intervals: list[tuple[np.ndarray, np.ndarray, np.ndarray]],
                  horizon_h: float, book: YearBook, first_stop_h: float) -> list[dict]:
    """The rows of :meth:`GroupTracker.finish` from the units' stops, replayed in time order.

    ``intervals``: ``(unit, start_h, end_h)`` arrays of the stops (units numbered
    across machine types; a stop not ended by the horizon ends at or after it).
    Without groups only the fleet's first down (``first_stop_h``) is reported.
    The vectorised engine's paths use it in place of the live calls of the
    discrete-event engine.
    """
    n = sum(m.count for m in scenario.machines)
    groups = [(g.id, g.need, scenario.group_members(g)) for g in scenario.groups]
    if not groups:
        # The fleet is down while any unit is down; only its first down event is reported.
        down = first_stop_h < horizon_h
        return [{"group": "fleet", "had_down": down,
                 "first_down_h": first_stop_h if down else math.nan, "down_h": math.nan}]
    tracker = GroupTracker(groups, n, book=book)
    if intervals:
        unit = np.concatenate([iv[0] for iv in intervals])
        start = np.concatenate([iv[1] for iv in intervals])
        end = np.concatenate([iv[2] for iv in intervals])
        if groups:
            members = np.zeros(n, dtype=bool)
            for _, _, m in groups:
                members[m] = True
            keep = members[unit]
            unit, start, end = unit[keep], start[keep], end[keep]
        # events: (time, code, unit, +1 down / -1 up); a stop of zero length restarts after
        # every stop of the same instant, so simultaneous instant stops overlap.
        zero = end <= start
        times = np.concatenate([start, end])
        codes = np.concatenate([np.ones(start.size), np.where(zero, 2, 0)])
        units = np.concatenate([unit, unit])
        kinds = np.concatenate([np.ones(start.size, dtype=int), -np.ones(end.size, dtype=int)])
        order = np.lexsort((codes, times))
        for i in order:
            if kinds[i] > 0:
                tracker.unit_down(int(units[i]), float(times[i]))
            elif times[i] < horizon_h:
                tracker.unit_up(int(units[i]), float(times[i]))
    return tracker.finish(horizon_h)

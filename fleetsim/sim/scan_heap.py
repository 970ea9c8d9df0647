"""The scan of a unit with many positions: a heap of next events, not a pass over all.

:func:`fleetsim.sim.setup.scan` looks at every position of a unit at every
event, which is what a pump with four bearing positions wants and what a
machine with 100,000 positions cannot afford (work per event proportional to
its positions, per replication to their square). :class:`PositionHeap` gives
exactly the same answer — the same positions failed, due and with a defect
come, in position order, the same next operating-clock value, the same
positions marked — in time logarithmic in the positions: it keeps each
position's next event, min(unseen defect, failure, age due), in a heap, and
looks only at the positions whose next event has come. A position's entry is
renewed whenever its times change: by the scan itself, and by the one install
rule :meth:`~fleetsim.sim.setup.PositionState.fit`. Entries outdated by a
renewal carry an older version and are skipped.

Units with more than :data:`HEAP_SCAN_MIN` positions use it, in both unit
processes; ``tests/test_scan_heap.py`` checks, with the threshold at 0, that
every unit gives exactly the events and tallies of the linear scan.
"""

from __future__ import annotations

import math
from heapq import heapify, heappop, heappush
from typing import TYPE_CHECKING

from fleetsim.sim.instants import TIE_H

if TYPE_CHECKING:
    from fleetsim.sim.setup import PositionState

INF = math.inf
#: Units with more positions than this scan through a :class:`PositionHeap`.
HEAP_SCAN_MIN = 32


def next_op(p: PositionState) -> float:
    """Operating-clock value of the next event of ``p``: min(unseen defect, failure, age due)."""
    d = INF if p.defect_seen else p.defect_op
    f = p.fail_op
    a = p.due_op
    return min(d, f, a)


class PositionHeap:
    """The next events of one unit's positions, in a heap (see the module docstring)."""

    __slots__ = ("positions", "heap", "stuck")

    def __init__(self, positions: list[PositionState]) -> None:
        self.positions = positions
        for p in positions:
            p.heap = self
        self.heap: list[tuple[float, int, int]] = [(next_op(p), p.slot, p.ver) for p in positions]
        heapify(self.heap)
        #: positions found failed and not fitted since, with the version they had then
        self.stuck: list[tuple[PositionState, int]] = []

    def push(self, p: PositionState) -> None:
        """Renew the entry of ``p`` (its times changed)."""
        p.ver += 1
        t = next_op(p)
        if t < INF:
            heappush(self.heap, (t, p.slot, p.ver))

    def scan(self, clock_op: float) -> tuple[list[PositionState] | None, list[PositionState] | None,
                                              list[PositionState] | None, float]:
        """:func:`~fleetsim.sim.setup.scan` of the unit at ``clock_op``, the same result."""
        clock_op += TIE_H  # (events a rounding ahead have come, as in the linear scan)
        heap = self.heap
        positions = self.positions
        come: list[PositionState] = [p for p, v in self.stuck if p.ver == v]
        while heap and heap[0][0] <= clock_op:
            _t, j, v = heappop(heap)
            p = positions[j]
            if p.ver == v:
                come.append(p)
        self.stuck = []
        failed: list[PositionState] | None = None
        due: list[PositionState] | None = None
        defects: list[PositionState] | None = None
        if len(come) > 1:
            come.sort(key=_slot)
        for p in come:  # the linear scan's rule, for the positions whose event has come
            if not p.defect_seen and p.defect_op <= clock_op:
                p.defect_seen = True
                if defects is None:
                    defects = [p]
                else:
                    defects.append(p)
            if p.fail_op <= clock_op:
                if failed is None:
                    failed = [p]
                else:
                    failed.append(p)
                self.stuck.append((p, p.ver))
                continue
            if p.due_op <= clock_op:
                p.due_op = INF
                if due is None:
                    due = [p]
                else:
                    due.append(p)
            self.push(p)
        while heap and heap[0][2] != positions[heap[0][1]].ver:
            heappop(heap)  # outdated entries on top
        return failed, due, defects, (heap[0][0] if heap else INF)


def _slot(p: PositionState) -> int:
    return p.slot

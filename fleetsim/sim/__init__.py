"""The discrete-event fleet engine (SimPy): policies, stores, crews, records.

One call of :func:`simulate` runs one replication of a scenario with its own
environment and random streams (common random numbers by position, see
:mod:`fleetsim.sim.streams`) and returns a :class:`ReplicationResult`.
Knows nothing of files or plots.
"""

from fleetsim.sim.engine import simulate
from fleetsim.sim.records import COUNT_NAMES, DOWN_CAUSES, EVENT_COLUMNS, ReplicationResult
from fleetsim.sim.setup import LifeSampler

__all__ = [
    "COUNT_NAMES",
    "DOWN_CAUSES",
    "EVENT_COLUMNS",
    "LifeSampler",
    "ReplicationResult",
    "simulate",
]

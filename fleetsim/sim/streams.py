"""Random-number streams of one replication, laid out for common random numbers.

Every source of randomness has its own generator, derived from the
replication's :class:`numpy.random.SeedSequence` by a fixed *key* rather than
by the order in which the simulation happens to ask for it:

========================  =====================================================
stream                    key appended to the replication's ``spawn_key``
========================  =====================================================
life of a position        ``(0, machine, unit, position, 0)``
P-F interval of it        ``(0, machine, unit, position, 1)``
detection draws of it     ``(0, machine, unit, position, 2)``
stop durations of it      ``(0, machine, unit, position, 3)`` (one uniform per life)
normal lead times         ``(2, bearing, 0)`` (bearing = index in sorted ids)
emergency lead times      ``(2, bearing, 1)``
========================  =====================================================

So the k-th life of a position is the k-th draw of its own generator whatever
the policy, the crews or the stores (and so are its k-th P-F interval and the
uniform that sets the duration of the stop ending its k-th life): two policies simulated on the same seed
see the same underlying lives (common random numbers), and adding a machine
or a bearing kind does not shift the streams of the others. Generators are
created on first use (creating one costs tens of microseconds).

The keys are derived with ``SeedSequence(entropy, spawn_key=...)`` directly,
so :func:`simulate` never calls ``spawn`` on the caller's seed sequence (which
would change its state and break "same seed, same result").
"""

from __future__ import annotations

import numpy as np

LIFE, PF, DETECTION, STOP = 0, 1, 2, 3
_POSITION, _BEARING = 0, 2


def as_seed_sequence(seed: np.random.SeedSequence | int) -> np.random.SeedSequence:
    """The replication's seed sequence, from a ``SeedSequence`` or an integer."""
    if isinstance(seed, np.random.SeedSequence):
        return seed
    if isinstance(seed, bool) or not isinstance(seed, int | np.integer):
        raise TypeError(f"seed must be an int or a numpy.random.SeedSequence, got {type(seed)!r}")
    return np.random.SeedSequence(int(seed))


class Streams:
    """Factory of the per-purpose generators of one replication.

    Parameters
    ----------
    root
        The replication's seed sequence.
    """

    __slots__ = ("_root",)

    def __init__(self, root: np.random.SeedSequence) -> None:
        self._root = root

    def _generator(self, key: tuple[int, ...]) -> np.random.Generator:
        root = self._root
        ss = np.random.SeedSequence(
            entropy=root.entropy, spawn_key=tuple(root.spawn_key) + key, pool_size=root.pool_size
        )
        return np.random.Generator(np.random.PCG64(ss))

    def position(self, machine: int, unit: int, position: int, purpose: int) -> np.random.Generator:
        """Generator of one position for ``purpose`` (LIFE, PF, DETECTION or STOP)."""
        return self._generator((_POSITION, machine, unit, position, purpose))

    def bearing(self, bearing: int, emergency: bool = False) -> np.random.Generator:
        """Generator of the normal (or emergency) lead times of one bearing kind."""
        return self._generator((_BEARING, bearing, 1 if emergency else 0))

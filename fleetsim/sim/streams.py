"""Random-number streams of one replication, laid out for common random numbers.

Every source of randomness has its own generator, derived from the
replication's :class:`numpy.random.SeedSequence` by a fixed *key* rather than
by the order in which the simulation happens to ask for it:

========================  =====================================================
stream                    key appended to the replication's ``spawn_key``
========================  =====================================================
lives of a machine type   ``(3, machine, 0)``: a :class:`UniformTable`
P-F intervals             ``(3, machine, 1)``: a :class:`UniformTable`
stop-duration quantiles   ``(3, machine, 5)``: a :class:`UniformTable`
detection draws           ``(0, machine, unit, position, 2)``: a generator
normal lead times         ``(2, bearing, 0)`` (bearing = index in sorted ids)
emergency lead times      ``(2, bearing, 1)``
========================  =====================================================

A :class:`UniformTable` holds uniforms U[k, unit, position] drawn row block by
row block from one generator: the k-th life of a position uses U[k, unit,
position] whatever the policy, the crews or the stores, so two policies
simulated on the same seed see the same underlying lives (common random
numbers), and adding a machine or a bearing kind does not shift the streams of
the others. The vectorised engine reads the same tables, so both engines draw
the same lives. Generators are created on first use.

The keys are derived with ``SeedSequence(entropy, spawn_key=...)`` directly,
so :func:`simulate` never calls ``spawn`` on the caller's seed sequence (which
would change its state and break "same seed, same result").
"""

from __future__ import annotations

import numpy as np

LIFE, PF, DETECTION, STOP = 0, 1, 2, 5
_POSITION, _BEARING, _TABLE = 0, 2, 3
#: Rows drawn at a time by a :class:`UniformTable`.
BLOCK_ROWS = 4


class UniformTable:
    """Uniforms U[k, unit, position] of one machine type, grown in blocks of rows.

    Row k serves the k-th renewal of every position. The rows are the
    generator's stream in C order, so U[k, u, p] does not depend on how many
    rows were ever drawn.
    """

    __slots__ = ("rng", "shape", "_blocks", "_data", "_rows", "_lists")

    def __init__(self, rng: np.random.Generator, units: int, positions: int) -> None:
        self.rng = rng
        self.shape = (units, positions)
        #: rows drawn so far, in the chunks they were drawn in (joined when ``data`` is read)
        self._blocks: list[np.ndarray] = [rng.random((BLOCK_ROWS, units, positions))]
        self._data: np.ndarray | None = self._blocks[0]
        self._rows = BLOCK_ROWS
        #: rows as nested Python lists, made on first use by :meth:`get` (a list index
        #: is several times cheaper than a numpy scalar)
        self._lists: list[list[list[float]] | None] = [None] * BLOCK_ROWS

    @property
    def data(self) -> np.ndarray:
        """All rows drawn so far, shape (rows, units, positions)."""
        if self._data is None:
            self._data = np.concatenate(self._blocks)
            self._blocks = [self._data]
        return self._data

    def _grow(self, rows: int, double: bool = True) -> None:
        if rows <= self._rows:
            return
        # The generator's doubles in C order: the values do not depend on how the rows
        # are drawn in chunks. At least double, in whole blocks, for the array reads
        # (amortised linear time in the rows used); only the rows asked for by
        # :meth:`row`, which reads a chunk in place (the vectorised engine's rounds: a
        # late round reads few values of a row, and drawing rows ahead costs time).
        target = -(-max(rows, 2 * self._rows) // BLOCK_ROWS) * BLOCK_ROWS if double else rows
        self._blocks.append(self.rng.random((target - self._rows, *self.shape)))
        self._data = None
        self._lists.extend([None] * (target - self._rows))
        self._rows = target

    def get(self, k: int, unit: int, position: int) -> float:
        """U[k, unit, position] as a float."""
        if k >= self._rows:
            self._grow(k + 1)
        row = self._lists[k]
        if row is None:
            row = self._lists[k] = self.data[k].tolist()
        return row[unit][position]

    def take(self, k: np.ndarray, unit: np.ndarray, position: np.ndarray) -> np.ndarray:
        """U[k, unit, position] for arrays of indexes."""
        self._grow(int(k.max(initial=0)) + 1)
        return self.data[k, unit, position]

    def row(self, k: int) -> np.ndarray:
        """Row k, shape (units, positions)."""
        self._grow(k + 1, double=False)
        if self._data is not None:
            return self._data[k]
        for block in self._blocks:
            if k < block.shape[0]:
                return block[k]
            k -= block.shape[0]
        raise IndexError(k)  # (never: the table was grown to hold row k)


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

    __slots__ = ("_root", "_tables")

    def __init__(self, root: np.random.SeedSequence) -> None:
        self._root = root
        self._tables: dict[tuple[int, int], UniformTable] = {}

    def generator(self, key: tuple[int, ...]) -> np.random.Generator:
        """The generator keyed ``key`` below the replication's seed."""
        return self._generator(key)

    def table(self, machine: int, units: int, positions: int, purpose: int) -> UniformTable:
        """The uniform table of one machine type for ``purpose`` (LIFE, PF or STOP)."""
        key = (machine, purpose)
        t = self._tables.get(key)
        if t is None:
            t = self._tables[key] = UniformTable(
                self._generator((_TABLE, machine, purpose)), units, positions
            )
        return t

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

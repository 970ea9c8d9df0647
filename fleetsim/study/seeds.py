"""Seeds of replications: one ``SeedSequence`` child per replication.

Replication ``i`` of a study with seed ``s`` always gets
``SeedSequence(s, spawn_key=(i,))`` — the same stream as
``SeedSequence(s).spawn(n)[i]`` — so results do not depend on how
replications are split among workers, and two policies compared on the same
seed see the same underlying random numbers (common random numbers).
"""

from __future__ import annotations

import numpy as np

from fleetsim.seed import check_seed

__all__ = ["check_seed", "replication_seed"]


def replication_seed(seed: int, index: int) -> np.random.SeedSequence:
    """The seed sequence of replication ``index`` (0-based) of a study seeded ``seed``.

    Raises :class:`~fleetsim.errors.InputError` for a seed that
    :func:`~fleetsim.seed.check_seed` refuses.
    """
    if index < 0:
        raise ValueError(f"replication index must be >= 0, got {index}")
    return np.random.SeedSequence(entropy=check_seed(seed), spawn_key=(index,))

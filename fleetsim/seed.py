"""The rule of a study seed, written once for the scenario, the library and the CLI.

A study seed is a whole number >= 0 (``numpy.random.SeedSequence`` takes any
such integer as entropy). Booleans, floats such as ``1.0``, strings and
negative numbers are refused with an :class:`~fleetsim.errors.InputError`
naming where the seed came from (a scenario key path, ``"--seed"`` or the
``seed`` argument of a library function).
"""

from __future__ import annotations

import numbers

from fleetsim.errors import InputError

#: What a seed is, in the words of the error messages.
SEED_EXPECTED = "a seed (a whole number >= 0)"


def check_seed(seed: object, where: str = "seed") -> int:
    """The seed as a Python ``int``, or an :class:`InputError` at ``where``.

    Parameters
    ----------
    seed
        The value given (numpy integers are accepted; ``bool`` is not).
    where
        What the user wrote it in, for the message.

    Returns
    -------
    int
        The validated seed.

    Raises
    ------
    InputError
        For a negative, non-integer or boolean seed.
    """
    if isinstance(seed, bool) or not isinstance(seed, numbers.Integral):
        raise InputError(where, f"expected {SEED_EXPECTED}, got {seed!r}")
    value = int(seed)
    if value < 0:
        raise InputError(where, f"expected {SEED_EXPECTED}, got {value}")
    return value

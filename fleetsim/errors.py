"""Exceptions raised by fleetsim for bad user input.

The command line turns an :class:`InputError` into one line on standard error
and exit code 2; library users catch it like any ``ValueError``.
"""

from __future__ import annotations


class InputError(ValueError):
    """A value supplied by the user is missing, malformed or out of range.

    Parameters
    ----------
    where
        What the user wrote it in: a command-line option (``"--radial-load"``),
        a scenario key path (``"pumps.toml: machine[0].position[1].speed"``) or a
        file name.
    expected
        What was expected, in plain words, including what was found.
    """

    def __init__(self, where: str, expected: str) -> None:
        self.where = where
        self.expected = expected
        super().__init__(f"{where}: {expected}")


class LifeModelWarning(UserWarning):
    """A life calculation went outside the range of its tables or formulas."""

"""Errors and warnings of the fitting package."""

from __future__ import annotations

from fleetsim.errors import InputError


class FitError(InputError):
    """A fit could not be made from the records given.

    Raised when the optimiser does not converge, when the information matrix
    is singular (a zero or undefined standard error), or when the records do
    not hold enough failures for the model. It is an :class:`InputError`
    because the cure lies in the data, so the command line reports it on one
    line with exit code 2.
    """


class FitWarning(UserWarning):
    """A fit was made but needs care (few failures, a model left out, a flat profile)."""

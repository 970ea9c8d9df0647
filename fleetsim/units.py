"""Quantities with units, parsed with pint.

Inside the library every quantity is a float in a fixed unit: newtons for
forces, revolutions per minute for speeds, hours for durations. Users write
quantities as strings with a unit ("4.5 kN", "1100 lbf", "1480 rpm",
"21 d", "15 years"); :func:`parse_quantity` converts them and names the option
or key in its error.
"""

from __future__ import annotations

import re
from functools import lru_cache
from typing import Literal

import pint

from fleetsim.errors import InputError

_ANGLE_UNITS = re.compile(r"turn|revolution|radian|degree|rpm|cycle")

_LEADING_NUMBER = re.compile(r"^\s*[-+]?(\d|\.\d)")

Kind = Literal["force", "speed", "time"]

#: The library's unit for each kind of quantity, and an example for messages.
CANONICAL: dict[str, tuple[str, str, str]] = {
    # kind: (pint dimensionality, internal unit, example)
    "force": ("[force]", "newton", "'4.5 kN' or '1100 lbf'"),
    "speed": ("1 / [time]", "revolution / minute", "'1480 rpm'"),
    "time": ("[time]", "hour", "'20000 h', '21 d' or '15 years'"),
}


@lru_cache(maxsize=1)
def registry() -> pint.UnitRegistry:
    """The one unit registry of fleetsim (created lazily)."""
    ureg = pint.UnitRegistry()
    return ureg


def parse_quantity(text: str | float | int, kind: Kind, where: str) -> float:
    """Parse a quantity with a unit and return it in the library's unit.

    Parameters
    ----------
    text
        For example ``"4.5 kN"``. A bare number is refused: the unit is required.
    kind
        ``"force"`` (returns N), ``"speed"`` (returns rev/min) or ``"time"``
        (returns hours).
    where
        The option or key path, used in the error message.

    Returns
    -------
    float
        The magnitude in newtons, rev/min or hours.

    Raises
    ------
    InputError
        When the text is not a quantity, has no unit, or has a unit of another kind.
    """
    dim, unit, example = CANONICAL[kind]
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise InputError(where, f"expected a {kind} with a unit such as {example}, got {text!r}")
    if isinstance(text, (int, float)):
        raise InputError(where, f"missing unit: expected a {kind} such as {example}, got {text!r}")
    if not _LEADING_NUMBER.match(text):
        raise InputError(
            where, f"expected a {kind} with a number and a unit such as {example}, got {text!r}"
        )
    ureg = registry()
    try:
        q = ureg.Quantity(text.strip())
    except Exception:
        raise InputError(
            where, f"expected a {kind} with a unit such as {example}, got {text!r}"
        ) from None
    if not isinstance(q, pint.Quantity) or q.dimensionless:
        raise InputError(where, f"missing unit: expected a {kind} such as {example}, got {text!r}")
    try:
        if kind == "speed" and not _ANGLE_UNITS.search(str(q.units)):
            # "25 Hz" or "1500 1/min" mean revolutions per unit time, not radians.
            value = q.to("1 / minute").magnitude
        else:
            value = q.to(unit).magnitude
    except pint.DimensionalityError:
        raise InputError(
            where, f"expected a {kind} such as {example}, got {text!r} (a different kind of unit)"
        ) from None
    return float(value)

"""Quantities with units, read by a strict grammar (nothing is ever evaluated).

Inside the library every quantity is a float in a fixed unit: newtons for
forces, revolutions per minute for speeds, hours for durations. Users write
quantities as strings with a unit ("4.5 kN", "1100 lbf", "1480 rpm",
"21 d", "15 years"); :func:`parse_quantity` converts them and names the option
or key in its error.

The grammar is one number and one unit name from :data:`UNITS`::

    quantity := space* number space* unit space*
    number   := [+-]? (digits ["." digits*] | "." digits) [("e"|"E") [+-]? digits]
    unit     := one of the names in UNITS (case-sensitive: "kN", not "KN")

Nothing else is accepted: no arithmetic (``"9**9**9 h"``), no compound units
(``"kN/h"``), no thousands separators. A **decimal comma is refused**
(``"30,7 kN"`` could mean 30.7 or 307): the message asks for a decimal point.
A quantity is at most :data:`MAX_LENGTH` characters.
"""

from __future__ import annotations

import difflib
import math
import re
from typing import Literal

from fleetsim.bounds import HOURS_PER_YEAR, check_quantity
from fleetsim.errors import InputError

Kind = Literal["force", "speed", "time"]

#: Longest quantity text read (characters); longer text is refused unread.
MAX_LENGTH = 64

_HOUR_S = 3600.0
#: Newtons per pound-force: 0.45359237 kg (international pound) × 9.80665 m/s²
#: (standard gravity), both exact by definition (NIST SP 811, appendix B).
_LBF_N = 0.45359237 * 9.80665
#: Hours per year: the Julian year of 365.25 days (IAU).
_YEAR_H = HOURS_PER_YEAR

#: Unit name → (kind, factor to the library's unit: N, rev/min, h).
UNITS: dict[str, tuple[Kind, float]] = {
    # forces, to newtons
    "N": ("force", 1.0),
    "newton": ("force", 1.0),
    "newtons": ("force", 1.0),
    "mN": ("force", 1e-3),  # the smallest non-zero force of fleetsim.bounds is 1 mN
    "daN": ("force", 10.0),
    "kN": ("force", 1e3),
    "kilonewton": ("force", 1e3),
    "kilonewtons": ("force", 1e3),
    "MN": ("force", 1e6),
    "lbf": ("force", _LBF_N),
    "kip": ("force", 1e3 * _LBF_N),
    "kgf": ("force", 9.80665),  # standard gravity, exact (CGPM 1901)
    # speeds, to revolutions per minute
    "rpm": ("speed", 1.0),
    "rev/min": ("speed", 1.0),
    "r/min": ("speed", 1.0),
    "1/min": ("speed", 1.0),
    "min^-1": ("speed", 1.0),
    "rps": ("speed", 60.0),
    "rev/s": ("speed", 60.0),
    "r/s": ("speed", 60.0),
    "1/s": ("speed", 60.0),
    "Hz": ("speed", 60.0),  # revolutions per second
    "rad/s": ("speed", 60.0 / (2.0 * math.pi)),
    # durations, to hours
    "s": ("time", 1.0 / _HOUR_S),
    "sec": ("time", 1.0 / _HOUR_S),
    "second": ("time", 1.0 / _HOUR_S),
    "seconds": ("time", 1.0 / _HOUR_S),
    "min": ("time", 1.0 / 60.0),
    "minute": ("time", 1.0 / 60.0),
    "minutes": ("time", 1.0 / 60.0),
    "h": ("time", 1.0),
    "hr": ("time", 1.0),
    "hour": ("time", 1.0),
    "hours": ("time", 1.0),
    "d": ("time", 24.0),
    "day": ("time", 24.0),
    "days": ("time", 24.0),
    "week": ("time", 168.0),
    "weeks": ("time", 168.0),
    "wk": ("time", 168.0),
    "month": ("time", _YEAR_H / 12.0),
    "months": ("time", _YEAR_H / 12.0),
    "year": ("time", _YEAR_H),
    "years": ("time", _YEAR_H),
    "yr": ("time", _YEAR_H),
    "a": ("time", _YEAR_H),
}

#: The library's unit for each kind of quantity, and an example for messages.
CANONICAL: dict[str, tuple[str, str]] = {
    "force": ("N", "'4.5 kN' or '1100 lbf'"),
    "speed": ("rpm", "'1480 rpm'"),
    "time": ("h", "'20000 h', '21 d' or '15 years'"),
}

_QUANTITY = re.compile(
    r"\s*(?P<number>[-+]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][-+]?\d+)?)\s*(?P<unit>\S.*?)?\s*"
)
_DECIMAL_COMMA = re.compile(r"\s*[-+]?\d*,\d")


def unit_names(kind: Kind) -> list[str]:
    """The unit names accepted for one kind of quantity."""
    return [name for name, (k, _) in UNITS.items() if k == kind]


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
        The magnitude in newtons, rev/min or hours, finite and within the
        bounds of its kind (:func:`fleetsim.bounds.check_quantity`).

    Raises
    ------
    InputError
        When the text is not one number and one known unit of this kind, or
        the value lies outside the bounds of its kind.
    """
    _, example = CANONICAL[kind]
    if isinstance(text, bool) or not isinstance(text, (str, int, float)):
        raise InputError(where, f"expected a {kind} with a unit such as {example}, got {_show(text)}")
    if isinstance(text, (int, float)):
        raise InputError(where, f"missing unit: expected a {kind} such as {example}, got {text!r}")
    if len(text) > MAX_LENGTH:
        raise InputError(
            where, f"expected a {kind} such as {example}, got a text of {len(text)} characters"
        )
    if _DECIMAL_COMMA.match(text):
        raise InputError(
            where,
            f"use a decimal point, not a comma (got {text!r}; "
            "a comma is read neither as a decimal nor as a thousands separator)",
        )
    m = _QUANTITY.fullmatch(text)
    if not m:
        raise InputError(
            where, f"expected a {kind} as a number and a unit such as {example}, got {text!r}"
        )
    unit = m["unit"]
    if unit is None:
        raise InputError(where, f"missing unit: expected a {kind} such as {example}, got {text!r}")
    if unit not in UNITS:
        names = unit_names(kind)
        close = difflib.get_close_matches(unit, names, n=1, cutoff=0.5)
        folded = [n for n in names if n.lower() == unit.lower()]
        hint = folded[0] if folded else (close[0] if close else None)
        tip = f"; did you mean {hint!r}?" if hint else f"; expected one of: {', '.join(names)}"
        raise InputError(where, f"unknown {kind} unit {unit!r} in {text!r}{tip}")
    unit_kind, factor = UNITS[unit]
    if unit_kind != kind:
        raise InputError(
            where,
            f"expected a {kind} such as {example}, got {text!r} "
            f"(a {unit_kind}, a different kind of unit)",
        )
    return check_quantity(float(m["number"]) * factor, kind, where, text)


def _show(value: object) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."

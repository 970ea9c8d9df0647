"""The bounds of every value a user gives: one table, read by the scenario reader and the CLI.

A value outside these bounds is refused with one line naming the key or
option (an :class:`~fleetsim.errors.InputError`). They are fleetsim's own
limits, wide enough for every real plant and narrow enough that no
calculation overflows (see ``docs/scenario-format.md``, "Bounds"):

========================  ==========================================================
quantity                  bounds
========================  ==========================================================
horizon                   1 h to 1,000 years
any other time            0, or 1 s to 1,000 years (lead times, repairs, intervals,
                          ages, P-F intervals, lognormal p90, field-life scale)
lognormal spread          p90 at most 1,000 × the median
force                     0, or 1 mN to 1e9 N (loads, ratings, fatigue limit)
speed                     0.01 rpm to 1,000,000 rpm
Weibull shape             0.1 to 20 (lives, life models, durations)
application factor a_f    1 to 10 (common practice: 1 for smooth running, up to
                          about 3 for heavy shocks)
rotation factor V         1 to 10 (1 for a rotating inner ring, 1.2 for an outer ring)
field factor              0.001 to 1,000
viscosity ratio κ         0.01 to 100 (a_ISO clips it to 0.1–4 with a warning)
money                     0 to 1e12 per amount
replications              1 to 1,000,000
units of a machine,       1 to 100,000 each
positions of an entry
========================  ==========================================================

The scenario reader checks each value where it reads it (naming the key path
and showing the text written); the frozen model objects
(:mod:`fleetsim.scenario.model`, :class:`~fleetsim.life.LifeDistribution`,
:class:`~fleetsim.scenario.duration.Duration`) check the same bounds, with the
same helpers below, in their construction, so a scenario built in Python gets
the same one-line errors, naming the field (``Study.horizon_h``).
"""

from __future__ import annotations

import math
import numbers
from dataclasses import dataclass

from fleetsim.errors import InputError

#: Hours per year: the Julian year of 365.25 days (IAU).
HOURS_PER_YEAR = 365.25 * 24.0

#: Longest time of any kind, hours (1,000 years).
MAX_TIME_H = 1000.0 * HOURS_PER_YEAR
#: Shortest non-zero time, hours (one second).
MIN_TIME_H = 1.0 / 3600.0
#: Shortest horizon, hours.
MIN_HORIZON_H = 1.0
#: Largest p90 / median of a lognormal duration.
MAX_LOGNORMAL_SPREAD = 1000.0
#: Largest force, N.
MAX_FORCE_N = 1e9
#: Smallest non-zero force, N (one millinewton: C/P stays below 1e12, so L10 is finite).
MIN_FORCE_N = 1e-3
#: Speed range, rev/min.
MIN_SPEED_RPM = 0.01
MAX_SPEED_RPM = 1e6
#: Largest amount of money.
MAX_MONEY = 1e12
#: Most replications of one study.
MAX_REPLICATIONS = 1_000_000
#: Most units of one machine type, and most positions of one position entry.
MAX_COUNT = 100_000


@dataclass(frozen=True)
class Range:
    """A closed range ``[low, high]`` of a bare number, with its name for messages."""

    low: float
    high: float
    what: str

    def check(self, value: float, where: str) -> float:
        """``value`` when finite and inside the range, else an :class:`InputError` at ``where``."""
        if isinstance(value, bool) or not isinstance(value, numbers.Real):
            raise InputError(where, f"expected {self.what} (a number), got {value!r}")
        if not (math.isfinite(value) and self.low <= value <= self.high):
            raise InputError(
                where, f"expected {self.what} from {self.low:g} to {self.high:g}, got {value:g}"
            )
        return value


WEIBULL_SHAPE = Range(0.1, 20.0, "a Weibull shape")
LOGNORMAL_SIGMA = Range(0.01, 10.0, "a lognormal σ of ln(life − location)")
APPLICATION_FACTOR = Range(1.0, 10.0, "an application factor a_f")
ROTATION_FACTOR = Range(1.0, 10.0, "a rotation factor V")
FIELD_FACTOR = Range(1e-3, 1e3, "a field factor")
VISCOSITY_RATIO = Range(0.01, 100.0, "a viscosity ratio κ")
MONEY = Range(0.0, MAX_MONEY, "an amount of money")
SHARE = Range(0.0, 1.0, "a share")
PROBABILITY = Range(0.0, 1.0, "a probability")

_UNIT = {"force": "N", "speed": "rpm", "time": "h"}


def check_quantity(
    value: float, kind: str, where: str, text: object = None, *, positive: bool = False
) -> float:
    """Check a quantity (N, rev/min or h) against the bounds of its kind.

    Zero passes unless ``positive``; the sign is the caller's business (the
    bounds are on the magnitude). ``text`` is what the user wrote, shown in the
    message (else the value and its unit).
    """
    shown = f"{text!r}" if isinstance(text, str) else f"{value:g} {_UNIT.get(kind, '')}".strip()
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise InputError(where, f"expected a {kind} in {_UNIT.get(kind, '')}, got {value!r}")
    if not math.isfinite(value):
        raise InputError(where, f"expected a finite {kind}, got {shown}")
    if kind == "time" and value != 0 and not MIN_TIME_H <= abs(value) <= MAX_TIME_H:
        raise InputError(where, f"expected a time of 0 or from 1 s to 1000 years, got {shown}")
    if kind == "force" and value != 0 and not MIN_FORCE_N <= abs(value) <= MAX_FORCE_N:
        raise InputError(
            where,
            f"expected a force of 0 or from {MIN_FORCE_N:g} N to {MAX_FORCE_N:g} N, got {shown}",
        )
    if kind == "speed" and value != 0 and not MIN_SPEED_RPM <= abs(value) <= MAX_SPEED_RPM:
        raise InputError(
            where,
            f"expected a speed from {MIN_SPEED_RPM:g} to {MAX_SPEED_RPM:,.0f} rpm, got {shown}",
        )
    if positive and not value > 0:
        raise InputError(where, f"expected a {kind} > 0, got {shown}")
    return value


def _not_negative(value: float, kind: str, where: str, positive: bool) -> float:
    check_quantity(value, kind, where, positive=positive)
    if value < 0:
        raise InputError(where, f"expected a {kind} >= 0, got {value:g} {_UNIT[kind]}")
    return value


def check_time(value_h: float, where: str, *, positive: bool = False) -> float:
    """A time in hours: 0 (unless ``positive``) or from 1 s to 1,000 years."""
    return _not_negative(value_h, "time", where, positive)


def check_force(value_N: float, where: str, *, positive: bool = False) -> float:
    """A force in N: 0 (unless ``positive``) or from 1 mN to 1e9 N."""
    return _not_negative(value_N, "force", where, positive)


def check_horizon(value_h: float, where: str, text: object = None) -> float:
    """A study horizon in hours: from 1 h to 1,000 years."""
    check_quantity(value_h, "time", where, text, positive=True)
    if value_h < MIN_HORIZON_H:
        shown = repr(text) if isinstance(text, str) else f"{value_h:g} h"
        raise InputError(where, f"expected a horizon of at least {MIN_HORIZON_H:g} h, got {shown}")
    return value_h


def check_count(value: object, where: str, low: int, high: int, what: str) -> int:
    """A whole number (not a boolean) from ``low`` to ``high``."""
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise InputError(where, f"expected {what} (a whole number), got {value!r}")
    if not low <= int(value) <= high:
        raise InputError(where, f"expected {what} from {low:,} to {high:,}, got {value}")
    return int(value)

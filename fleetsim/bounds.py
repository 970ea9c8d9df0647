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
force                     at most 1e9 N (loads, ratings, fatigue limit)
speed                     0.01 rpm to 1,000,000 rpm
Weibull shape             0.1 to 20 (lives, life models, durations)
application factor a_f    1 to 10 (common practice: 1 for smooth running, up to
                          about 3 for heavy shocks)
rotation factor V         1 to 10 (1 for a rotating inner ring, 1.2 for an outer ring)
field factor              0.001 to 1,000
viscosity ratio κ         0.01 to 100 (a_ISO clips it to 0.1–4 with a warning)
money                     0 to 1e12 per amount
replications              1 to 1,000,000
========================  ==========================================================
"""

from __future__ import annotations

import math
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
#: Speed range, rev/min.
MIN_SPEED_RPM = 0.01
MAX_SPEED_RPM = 1e6
#: Largest amount of money.
MAX_MONEY = 1e12
#: Most replications of one study.
MAX_REPLICATIONS = 1_000_000


@dataclass(frozen=True)
class Range:
    """A closed range ``[low, high]`` of a bare number, with its name for messages."""

    low: float
    high: float
    what: str

    def check(self, value: float, where: str) -> float:
        """``value`` when finite and inside the range, else an :class:`InputError` at ``where``."""
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

_UNIT = {"force": "N", "speed": "rpm", "time": "h"}


def check_quantity(value: float, kind: str, where: str, text: object = None) -> float:
    """Check a parsed quantity (N, rev/min or h) against the bounds of its kind.

    Zero passes (callers that need a positive value say so themselves).
    """
    shown = f"{text!r}" if isinstance(text, str) else f"{value:g} {_UNIT.get(kind, '')}".strip()
    if not math.isfinite(value):
        raise InputError(where, f"expected a finite {kind}, got {shown}")
    if kind == "time" and value != 0 and not MIN_TIME_H <= abs(value) <= MAX_TIME_H:
        raise InputError(where, f"expected a time of 0 or from 1 s to 1000 years, got {shown}")
    if kind == "force" and abs(value) > MAX_FORCE_N:
        raise InputError(where, f"expected a force of at most {MAX_FORCE_N:g} N, got {shown}")
    if kind == "speed" and value != 0 and not MIN_SPEED_RPM <= abs(value) <= MAX_SPEED_RPM:
        raise InputError(
            where,
            f"expected a speed from {MIN_SPEED_RPM:g} to {MAX_SPEED_RPM:,.0f} rpm, got {shown}",
        )
    return value

"""Numbers for people: the one formatter of money, counts, hours, loads and shares.

Every number that the report, the command line and the figures show goes
through this module, so one rule holds everywhere:

* no scientific notation for magnitudes from 1e-6 to below 1e9 (money and
  loads included); thousands separators; about three significant digits, but
  whole numbers at and above 100 keep all their digits (``30,217``);
* a mean shown with its confidence interval gets the digits the interval's
  width supports: the last digit shown is the second significant digit of the
  width (``0.402 [0.374, 0.430]``, ``10,020 [9,720, 10,320]``), the same for
  the mean and both ends (shares near 100 % are not capped, up to four decimals);
* a share is shown in percent and never rounds to 0 % or 100 % unless it is
  exactly that (``99.97 %``);
* a count of things takes the singular or plural (``1 machine type``).

Percent signs and units follow their number after a no-break space, so a line
break never separates them.
"""

from __future__ import annotations

import math

NBSP = "\u00a0"
#: Magnitudes at or above this are written in scientific notation.
LARGE = 1e9
#: Magnitudes below this (and not zero) are written in scientific notation.
SMALL = 1e-6


def _finite(value: float | None) -> bool:
    return value is not None and math.isfinite(value)


def _fixed(value: float, decimals: int) -> str:
    """``value`` with ``decimals`` decimals (negative: rounded to tens, hundreds...)."""
    if decimals < 0:
        value = round(value, decimals)
        decimals = 0
    text = f"{value:,.{decimals}f}"
    return "0" if text.strip("-0.,") == "" else text  # no "-0"


def number(value: float | None, *, sig: int = 3) -> str:
    """A plain number: thousands separators, about ``sig`` significant digits.

    Whole numbers keep all their digits; from 100 up no decimals are shown.
    None and NaN give ``"n/a"``.
    """
    if not _finite(value):
        return "n/a"
    assert value is not None
    a = abs(value)
    if a >= LARGE or (0 < a < SMALL):
        return f"{value:.{sig}g}"
    if value == int(value):
        return f"{int(value):,}"
    decimals = max(0, sig - 1 - math.floor(math.log10(a)))
    return _fixed(value, decimals)


def with_unit(text: str, unit: str) -> str:
    """``text`` followed by ``unit`` after a no-break space (nothing added for no unit)."""
    if not unit:
        return text
    return f"{text}{NBSP}{unit}" if unit != "%" else f"{text}{NBSP}%"


def money(value: float | None, currency: str = "") -> str:
    """An amount of money, e.g. ``"10,020 EUR"`` (never in scientific notation below 1e9)."""
    return with_unit(number(value), currency) if _finite(value) else "n/a"


def hours(value_h: float | None) -> str:
    """A duration in hours, e.g. ``"40,000 h"``."""
    return with_unit(number(value_h), "h") if _finite(value_h) else "n/a"


def load(value_N: float | None) -> str:
    """A force in N, e.g. ``"40,000 N"`` (never ``4e+04 N``)."""
    return with_unit(number(value_N), "N") if _finite(value_N) else "n/a"


def percent_decimals(value_pct: float, decimals: int = 1, most: int = 4) -> int:
    """Decimals at least ``decimals`` so that a share strictly inside (0, 100) % stays inside."""
    d = decimals
    while d < most and 0 < value_pct < 100 and round(value_pct, d) in (0.0, 100.0):
        d += 1
    return d


def percent(share: float | None, *, decimals: int = 1, sign: bool = True) -> str:
    """A share (0–1) in percent, e.g. ``"99.97 %"``; never rounded to 0 or 100 when it is not."""
    if not _finite(share):
        return "n/a"
    assert share is not None
    v = 100.0 * share
    text = _fixed(v, percent_decimals(v, decimals))
    return with_unit(text, "%") if sign else text


def interval_decimals(low: float, high: float, centre: float | None = None) -> int | None:
    """Decimals that show an interval of this width: its second significant digit.

    Negative values round to tens, hundreds, ... None when the width is zero
    or undefined. With ``centre``, never more than four significant digits of
    the centre (but always down to whole units).
    """
    if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
        return None
    width = high - low
    decimals = 1 - math.floor(math.log10(width))
    if centre is not None and math.isfinite(centre) and centre != 0:
        decimals = min(decimals, max(0, 3 - math.floor(math.log10(abs(centre)))))
    return decimals


def estimate_parts(
    mean: float | None, low: float | None, high: float | None, *, share: bool = False
) -> tuple[str, str | None, str | None]:
    """Mean and interval ends as text, all with the digits the interval supports.

    Parameters
    ----------
    mean, low, high
        The estimate and its interval (None or NaN where undefined).
    share
        The values are shares (0–1): shown as percent numbers, without the sign.

    Returns
    -------
    (str, str or None, str or None)
        The mean and the two ends (None when the interval is undefined).
    """
    scale = 100.0 if share else 1.0
    m = mean * scale if _finite(mean) else math.nan  # type: ignore[operator]
    lo = low * scale if _finite(low) else math.nan  # type: ignore[operator]
    hi = high * scale if _finite(high) else math.nan  # type: ignore[operator]
    if not math.isfinite(m):
        return "n/a", None, None
    big = max(abs(m), abs(lo) if math.isfinite(lo) else 0.0, abs(hi) if math.isfinite(hi) else 0.0)
    # A share near 100 % needs all the digits its interval supports (99.9915 against 99.9750),
    # so only other numbers are capped at four significant digits.
    d = interval_decimals(lo, hi, None if share else m)
    if share and d is not None:
        d = min(d, 4)
    if d is None or big >= LARGE:
        text = percent(m / 100.0, sign=False) if share else number(m)
        if math.isfinite(lo) and math.isfinite(hi):
            # a zero-width interval: show its ends like the mean
            f = (lambda v: percent(v / 100.0, sign=False)) if share else number
            return text, f(lo), f(hi)
        return text, None, None
    if share:
        d = max(d, 0)
        d = max(d, percent_decimals(m, d), percent_decimals(lo, d), percent_decimals(hi, d))
    return _fixed(m, d), _fixed(lo, d), _fixed(hi, d)


def estimate(
    mean: float | None,
    low: float | None,
    high: float | None,
    *,
    share: bool = False,
    unit: str = "",
    style: str = "words",
) -> str:
    """A mean with its 95 % confidence interval.

    ``style="words"`` gives ``"10,020 EUR/year (95 % CI 9,720 to 10,320)"``;
    ``style="brackets"`` gives ``"10,020 [9,720, 10,320]"`` (no unit, for tables).
    Shares are in percent (the sign is the unit).
    """
    m, lo, hi = estimate_parts(mean, low, high, share=share)
    if share:
        unit = "%"
    if style == "brackets":
        return m if lo is None else f"{m} [{lo}, {hi}]"
    text = with_unit(m, unit) if m != "n/a" else m
    return text if lo is None else f"{text} (95{NBSP}% CI {lo} to {hi})"


def interval(low: float | None, high: float | None, *, share: bool = False) -> str:
    """``"low to high"`` with the digits the interval supports (``"n/a"`` when undefined)."""
    if not (_finite(low) and _finite(high)):
        return "n/a"
    assert low is not None and high is not None
    _, lo, hi = estimate_parts((low + high) / 2, low, high, share=share)
    if lo is None:
        return "n/a"
    return f"{lo} to {hi}" + (f"{NBSP}%" if share else "")


def plural(n: float, singular: str, plural_form: str | None = None) -> str:
    """``"1 machine type"``, ``"3 machine types"``: a count and the word in the right number."""
    word = singular if n == 1 else (plural_form or _plural(singular))
    return f"{number(n)} {word}"


def _plural(word: str) -> str:
    head, sep, tail = word.rpartition(" ")
    last = tail or word
    if last.endswith(("s", "x", "ch", "sh")):
        last += "es"
    elif last.endswith("y") and last[-2:-1] not in ("a", "e", "i", "o", "u"):
        last = last[:-1] + "ies"
    else:
        last += "s"
    return f"{head}{sep}{last}" if sep else last

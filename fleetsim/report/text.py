"""Plain-text helpers of the report: number formats, variant labels, safe figure text."""

from __future__ import annotations

import math
from collections.abc import Sequence

from fleetsim.study.result import StudyResult


def fmt_number(value: float | None, *, percent: bool = False) -> str:
    """A number for people: thousands separators, about three significant digits.

    Parameters
    ----------
    value
        The number (None or NaN gives ``"n/a"``).
    percent
        Show a share (0–1) as a percentage with two decimals.
    """
    if value is None or not math.isfinite(value):
        return "n/a"
    if percent:
        return f"{100.0 * value:.2f}\u00a0%"  # no-break space: the sign stays with its number
    a = abs(value)
    if value == int(value) and a < 1e15:
        return f"{int(value):,}"
    if a >= 100:
        return f"{value:,.0f}"
    if a >= 10:
        return f"{value:.1f}"
    if a >= 1:
        return f"{value:.2f}"
    return f"{value:.3g}"


def fmt_interval(low: float | None, high: float | None, *, percent: bool = False) -> str:
    """``"low to high"`` for a confidence interval (``"n/a"`` when undefined)."""
    if low is None or high is None or not (math.isfinite(low) and math.isfinite(high)):
        return "n/a"
    return f"{fmt_number(low, percent=percent)} to {fmt_number(high, percent=percent)}"


def fmt_estimate(
    mean: float | None,
    low: float | None,
    high: float | None,
    *,
    percent: bool = False,
    unit: str = "",
) -> str:
    """``"mean unit (95 % CI low to high)"``."""
    text = fmt_number(mean, percent=percent) + (f" {unit}" if unit else "")
    ci = fmt_interval(low, high, percent=percent)
    return text if ci == "n/a" else f"{text} (95 % CI {ci})"


def variant_labels(results: Sequence[StudyResult]) -> list[str]:
    """One unique, non-empty label per result, in order.

    An empty label becomes the study name (or ``"variant k"``); repeated
    labels get `` (2)``, `` (3)``, ... appended.
    """
    out: list[str] = []
    for k, r in enumerate(results, start=1):
        base = r.label.strip() or r.scenario.study.name.strip() or f"variant {k}"
        label, n = base, 2
        while label in out:
            label, n = f"{base} ({n})", n + 1
        out.append(label)
    return out


def mpl_text(text: str) -> str:
    """Text safe to give matplotlib: no mathtext from ``$``, no hidden ``_`` legend labels."""
    safe = text.replace("$", r"\$")
    if safe.startswith("_"):
        safe = " " + safe
    return safe

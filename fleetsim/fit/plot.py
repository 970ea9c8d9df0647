"""Weibull probability plot of field records and fitted lives.

On Weibull paper a two-parameter Weibull is a straight line:
ln(−ln(1 − F)) against ln t, slope β. Failures are plotted at median ranks
with Bernard's approximation F ≈ (j − 0.3)/(n + 0.4), where j is Johnson's
adjusted rank, which lets suspensions push later failures up (Abernethy,
*The New Weibull Handbook*; Johnson, *Theory and Technique of Variation
Research*): going through all n records in order of age (a failure before a
suspension at the same age), the k-th failure gets

    j_k = j_{k−1} + (n + 1 − j_{k−1}) / (1 + number of records at or beyond it),

with j_0 = 0. Failures found at inspection are ranked and plotted at the
midpoint of their interval (open markers, the interval drawn as a bar).

The function draws on the axes given, or on a new matplotlib ``Figure``
that belongs to nobody (no pyplot state, nothing shown); it returns the axes.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from fleetsim.fit.fitting import FitResult
from fleetsim.fit.sample import CensoredSample

_PERCENT_TICKS = (0.1, 0.5, 1, 2, 5, 10, 20, 30, 50, 63.2, 80, 90, 95, 99, 99.9)


def weibull_y(fraction_failed: np.ndarray | float) -> np.ndarray:
    """Weibull-paper ordinate ln(−ln(1 − F))."""
    f = np.asarray(fraction_failed, dtype=float)
    return np.log(-np.log1p(-f))


def plotting_positions(sample: CensoredSample) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Median-rank plotting positions of the failures (Johnson's ranks, Bernard's formula).

    Returns
    -------
    (hours, fraction_failed, found_at_inspection)
        For every failure in order of age: its age in hours (interval
        midpoint for a failure found at inspection), F, and a bool mask of
        failures found at inspection.
    """
    mids = 0.5 * (sample.interval_lower_h + sample.interval_upper_h)
    t = np.concatenate([sample.failures_h, mids, sample.suspensions_h])
    failed = np.concatenate(
        [np.ones(sample.n_failures, bool), np.zeros(sample.n_suspensions, bool)]
    )
    inspected = np.concatenate(
        [
            np.zeros(sample.n_exact, bool),
            np.ones(sample.n_intervals, bool),
            np.zeros(sample.n_suspensions, bool),
        ]
    )
    order = np.lexsort((~failed, t))  # by age; a failure before a suspension at the same age
    t, failed, inspected = t[order], failed[order], inspected[order]
    n = t.size
    reverse = n - np.arange(n)  # records at or beyond each position
    ranks = np.empty(n)
    prev = 0.0
    for i in range(n):
        if failed[i]:
            prev += (n + 1.0 - prev) / (1.0 + reverse[i])
        ranks[i] = prev
    f = (ranks[failed] - 0.3) / (n + 0.4)
    return t[failed], f, inspected[failed]


def probability_plot(
    result: FitResult,
    ax: Any = None,
    *,
    label: str | None = None,
    show: str = "best",
) -> Any:
    """Plot the records on Weibull paper with the fitted life distribution(s).

    Parameters
    ----------
    result
        A fit from :func:`fleetsim.fit.fit_records`.
    ax
        Matplotlib axes to draw on; a new figure (not registered with
        pyplot) when None.
    label
        Prefix for the legend entries (e.g. the group name).
    show
        ``"best"`` draws the best candidate, ``"all"`` every candidate.

    Returns
    -------
    matplotlib.axes.Axes
    """
    from matplotlib.ticker import FixedLocator, FuncFormatter, NullLocator

    if ax is None:
        from matplotlib.figure import Figure

        ax = Figure(figsize=(7.0, 5.0), layout="constrained").add_subplot()
    sample = result.sample
    prefix = f"{label}: " if label else ""
    hours, frac, inspected = plotting_positions(sample)
    y = weibull_y(frac)
    (pts,) = ax.plot(
        hours[~inspected], y[~inspected], "o", ms=4, label=f"{prefix}failures (median ranks)"
    )
    color = pts.get_color()
    if inspected.any():
        order = np.argsort(sample.interval_lower_h + sample.interval_upper_h, kind="stable")
        lo, hi = sample.interval_lower_h[order], sample.interval_upper_h[order]
        yi = y[inspected]
        ax.hlines(yi, np.maximum(lo, hours.min() * 0.5), hi, color=color, lw=0.8, alpha=0.6)
        ax.plot(
            hours[inspected],
            yi,
            "o",
            ms=4,
            mfc="none",
            color=color,
            label=f"{prefix}found failed at inspection",
        )
    # fitted lines over the failures' range, where 0.1 % <= F <= 99.9 %
    t_lo = float(np.min(hours)) / 3.0
    t_hi = 2.0 * float(max(hours.max(), sample.suspensions_h.max(initial=0.0)))
    if show == "all":
        cands = list(result.candidates)
    else:
        cands = [result.best]
        if result.best_weibull is not None and result.best_weibull is not result.best:
            cands.append(result.best_weibull)
    styles = ("-", "--", ":", "-.")
    for i, c in enumerate(cands):
        d = c.distribution
        grid = np.geomspace(max(t_lo, d.location_h * 1.0001 + 1e-9), t_hi, 300)
        cdf = np.asarray(d.cdf(grid), dtype=float)
        keep = (cdf >= 1e-3) & (cdf <= 0.999)
        ax.plot(
            grid[keep],
            weibull_y(cdf[keep]),
            styles[i % len(styles)],
            color=color,
            lw=1.2,
            label=f"{prefix}{c.label}" + (" (best)" if c is result.best else ""),
        )
    ax.set_xscale("log")
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:,.0f}"))
    ax.set_xlabel("operating hours")
    ax.set_ylabel("fraction failed (Weibull scale), %")
    # fixed ticks that do not widen the view (unlike set_yticks)
    ax.yaxis.set_major_locator(FixedLocator(weibull_y(np.array(_PERCENT_TICKS) / 100.0).tolist()))
    ax.yaxis.set_major_formatter(
        FuncFormatter(lambda v, _pos: f"{100.0 * -math.expm1(-math.exp(v)):.3g}")
    )
    ax.yaxis.set_minor_locator(NullLocator())
    ax.grid(True, which="both", lw=0.4, alpha=0.5)
    ax.set_title("Weibull probability plot")
    ax.legend(fontsize="small", loc="upper left")
    return ax

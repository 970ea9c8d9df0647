"""Summaries of per-replication figures: mean, spread and confidence intervals.

A study produces one row per replication and one column per figure. The
summary gives, for each figure, the mean, the standard deviation, the standard
error and a two-sided confidence interval for the mean from Student's t
distribution (replications are independent), plus percentiles across
replications.

A figure that cannot be negative (a count, hours, a cost) or lies between 0
and 1 (a share) has its interval cut to that range: on a figure that is zero
in most replications the t-interval can reach below zero, which no mean of
that figure can (common practice; the cut interval covers the true mean
whenever the uncut one does).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy import stats

from fleetsim.study.figures import range_of


@dataclass(frozen=True)
class Estimate:
    """A mean with its confidence interval.

    Attributes
    ----------
    mean, low, high
        The sample mean and the confidence interval for the mean.
    sem
        Standard error of the mean.
    n
        Number of replications.
    """

    mean: float
    low: float
    high: float
    sem: float
    n: int

    def as_dict(self) -> dict[str, float | int]:
        """``{mean, low, high, sem, n}``."""
        return {"mean": self.mean, "low": self.low, "high": self.high, "sem": self.sem, "n": self.n}


def estimate(
    values: np.ndarray | pd.Series,
    confidence: float = 0.95,
    within: tuple[float, float] | None = None,
) -> Estimate:
    """Mean and Student-t confidence interval of independent replications.

    ``within = (low, high)``: the range the quantity can take; the interval is
    cut to it.
    """
    x = np.asarray(values, dtype=float)
    x = x[np.isfinite(x)]
    n = x.size
    if n == 0:
        nan = float("nan")
        return Estimate(nan, nan, nan, nan, 0)
    mean = float(x.mean())
    if n == 1:
        return Estimate(mean, float("nan"), float("nan"), float("nan"), 1)
    sem = float(x.std(ddof=1) / np.sqrt(n))
    half = float(stats.t.ppf(0.5 + confidence / 2, n - 1)) * sem
    low, high = mean - half, mean + half
    if within is not None:
        low, high = max(low, within[0]), min(high, within[1])
    return Estimate(mean, low, high, sem, n)


def figure_estimate(values: np.ndarray | pd.Series, figure: str,
                    confidence: float = 0.95) -> Estimate:
    """:func:`estimate` of a study figure, its interval cut to the figure's range."""
    return estimate(values, confidence, range_of(figure))


def summarise(table: pd.DataFrame, confidence: float = 0.95) -> pd.DataFrame:
    """Summary of every numeric column of a per-replication table.

    Parameters
    ----------
    table
        One row per replication, one column per figure.
    confidence
        Level of the confidence interval for the mean.

    Returns
    -------
    pandas.DataFrame
        Indexed by figure, columns ``mean, std, sem, ci_low, ci_high, p05, p50,
        p95, n``.
    """
    rows = {}
    for col in table.columns:
        if not pd.api.types.is_numeric_dtype(table[col]):
            continue
        x = table[col].to_numpy(dtype=float)
        est = estimate(x, confidence, range_of(str(col)))
        finite = x[np.isfinite(x)]
        pct = np.percentile(finite, [5, 50, 95]) if finite.size else [np.nan] * 3
        rows[col] = {
            "mean": est.mean,
            "std": float(finite.std(ddof=1)) if finite.size > 1 else float("nan"),
            "sem": est.sem,
            "ci_low": est.low,
            "ci_high": est.high,
            "p05": float(pct[0]),
            "p50": float(pct[1]),
            "p95": float(pct[2]),
            "n": est.n,
        }
    return pd.DataFrame.from_dict(rows, orient="index")


def paired_difference(a: pd.Series, b: pd.Series, confidence: float = 0.95) -> Estimate:
    """Mean of a − b over the same replications (common random numbers)."""
    return estimate(np.asarray(a, dtype=float) - np.asarray(b, dtype=float), confidence)

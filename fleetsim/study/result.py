"""Typed results of a study: per-replication figures, summaries, curves.

A :class:`StudyResult` holds everything a report needs and nothing of the
engine's internals: the per-replication table (one column per figure of
:mod:`fleetsim.study.figures`), its summary with confidence intervals, the
system-reliability curves and, optionally, the event log of the first
replication.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np
import pandas as pd
from scipy import stats

from fleetsim.scenario.model import HOURS_PER_YEAR, Scenario
from fleetsim.study.figures import split
from fleetsim.study.summary import summarise


def survival_curve(
    first_down_h: np.ndarray, horizon_h: float, points: int = 101, confidence: float = 0.95
) -> pd.DataFrame:
    """Probability of no down event by time t, with a Clopper–Pearson band.

    Parameters
    ----------
    first_down_h
        Time of the first down event of each replication (``>= horizon_h`` if none).
    horizon_h
        Study horizon, hours.
    points
        Number of time points from 0 to the horizon.
    confidence
        Level of the exact binomial (Clopper–Pearson) interval.

    Returns
    -------
    pandas.DataFrame
        Columns ``time_h, reliability, low, high``.
    """
    x = np.asarray(first_down_h, dtype=float)
    # The engines record the horizon (or NaN) for "no down event": never down within it.
    x = np.where(np.isnan(x) | (x >= horizon_h), np.inf, x)
    n = x.size
    t = np.linspace(0.0, horizon_h, points)
    up = np.array([(x > ti).sum() for ti in t])
    alpha = 1.0 - confidence
    with np.errstate(invalid="ignore"):
        low = np.where(up > 0, stats.beta.ppf(alpha / 2, up, n - up + 1), 0.0)
        high = np.where(up < n, stats.beta.ppf(1 - alpha / 2, up + 1, n - up), 1.0)
    return pd.DataFrame({"time_h": t, "reliability": up / n, "low": low, "high": high})


@dataclass(frozen=True)
class StudyResult:
    """Result of running a scenario for many replications.

    Attributes
    ----------
    scenario
        The scenario that was run.
    replications
        One row per replication: ``replication`` and one column per figure.
    seed
        Study seed.
    engine
        ``"des"`` or ``"vector"``.
    elapsed_s
        Wall-clock time of the run, seconds.
    workers
        Processes used.
    events
        Event log of the first replication (``time_h, unit, position, kind``) or None.
    events_file
        The CSV file the first replication's event log was written to
        (:class:`~fleetsim.sim.event_log.EventFile`; ``events`` is then None), or None.
    label
        Name of the variant (policy, interval, ...) for comparisons.
    view
        ``"budget"``: from today's fleet over the horizon; ``"policy"``: the
        long-run view of :mod:`fleetsim.study.policy_view`.
    notes
        How the figures were obtained (the policy view's window), for reports.
    """

    scenario: Scenario
    replications: pd.DataFrame
    seed: int
    engine: str
    elapsed_s: float = 0.0
    workers: int = 1
    events: pd.DataFrame | None = None
    label: str = ""
    view: str = "budget"
    notes: tuple[str, ...] = ()
    events_file: Path | None = None
    _cache: dict[str, Any] = field(default_factory=dict, repr=False, compare=False)

    @property
    def horizon_h(self) -> float:
        """Study horizon, hours."""
        return self.scenario.study.horizon_h

    @property
    def horizon_years(self) -> float:
        """Study horizon, years of 8766 h."""
        return self.horizon_h / HOURS_PER_YEAR

    @property
    def summary(self) -> pd.DataFrame:
        """Mean, spread and 95 % confidence interval of every figure."""
        if "summary" not in self._cache:
            self._cache["summary"] = summarise(self.replications.drop(columns="replication"))
        return self._cache["summary"]

    def extended(self, more: StudyResult) -> StudyResult:
        """This study with the further replications of ``more`` (same scenario and seed) appended."""
        if more.seed != self.seed or more.engine != self.engine:
            raise ValueError("extended: the further replications must share the seed and engine")
        table = pd.concat([self.replications, more.replications], ignore_index=True)
        if table["replication"].duplicated().any():
            raise ValueError("extended: replications overlap")
        return dataclasses.replace(self, replications=table,
                                   elapsed_s=self.elapsed_s + more.elapsed_s, _cache={})

    def figure(self, name: str) -> pd.Series:
        """The per-replication values of one figure."""
        return self.replications[name]

    def keys(self, prefix: str) -> list[str]:
        """Keys present for a keyed figure family, e.g. bearing ids for ``spares_per_year``."""
        out = []
        for col in self.replications.columns:
            p, k = split(col)
            if p == prefix and k is not None:
                out.append(k)
        return out

    def reliability_curve(self, group: str | None = None, points: int = 101) -> pd.DataFrame:
        """Probability of no down event (of ``group``, or of the fleet) against time."""
        col = "fleet_first_down_h" if group is None else f"group_first_down_h:{group}"
        return survival_curve(self.replications[col].to_numpy(), self.horizon_h, points)

"""Headline figures of a study with their confidence intervals, and comparisons.

The headline figures are what a plant manager asks first: cost per year,
availability, failures and planned replacements per year, downtime by cause,
spares of each bearing per year and the probability of getting through the
horizon without a down event.

* Means of per-replication figures carry the Student-t interval of
  :func:`fleetsim.study.summary.estimate`; a figure "per year" is the
  figure over the horizon divided by the horizon in years, and so is its
  interval (a linear change of scale).
* The probability of no down event is a binomial proportion over the
  replications; it carries the exact Clopper–Pearson interval.
* A difference between two variants is paired (common random numbers) when
  both were run with the same seed over the same replications, otherwise
  Welch's unequal-variance interval.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np
from scipy import stats

from fleetsim.study.result import StudyResult
from fleetsim.study.summary import Estimate, estimate, paired_difference

CONFIDENCE = 0.95

#: Figures shown per year: (column, label, unit).
PER_YEAR: tuple[tuple[str, str, str], ...] = (
    ("failures", "Failures per year", "failures/year"),
    ("planned_replacements", "Planned replacements per year", "changes/year"),
    ("downtime_crew_h", "Downtime waiting for a crew", "unit-h/year"),
    ("downtime_spares_h", "Downtime waiting for a spare", "unit-h/year"),
    ("downtime_repair_h", "Downtime in unplanned repair", "unit-h/year"),
    ("downtime_planned_h", "Downtime for planned work", "unit-h/year"),
)

#: Inspection figures, shown per year when the study inspected anything.
INSPECTION_PER_YEAR: tuple[tuple[str, str, str], ...] = (
    ("inspections", "Inspections per year", "inspections/year"),
    ("detections", "Defects detected per year", "detections/year"),
    ("missed_defects", "Defects missed per year", "defects/year"),
)

#: Downtime causes: (column, short name).
CAUSES: tuple[tuple[str, str], ...] = (
    ("downtime_crew_h", "waiting for a crew"),
    ("downtime_spares_h", "waiting for a spare"),
    ("downtime_repair_h", "unplanned repair"),
    ("downtime_planned_h", "planned work"),
)


@dataclass(frozen=True)
class Headline:
    """One headline figure with its confidence interval.

    Attributes
    ----------
    figure
        Key, e.g. ``"cost_per_year"``, ``"failures_per_year"``,
        ``"spares_per_year:FB-207"``, ``"fleet_no_down"``.
    label
        Plain-words name.
    unit
        Unit (``"share"`` for probabilities and availability).
    mean, ci_low, ci_high
        Estimate and its 95 % confidence interval (NaN when undefined).
    n
        Replications behind it.
    method
        ``"student-t"`` or ``"clopper-pearson"``.
    """

    figure: str
    label: str
    unit: str
    mean: float
    ci_low: float
    ci_high: float
    n: int
    method: str = "student-t"

    @property
    def is_share(self) -> bool:
        """True for figures shown as percentages."""
        return self.unit == "share"

    def as_dict(self) -> dict[str, object]:
        """JSON-ready mapping (NaN becomes None)."""
        return {
            "figure": self.figure,
            "label": self.label,
            "unit": self.unit,
            "mean": _num(self.mean),
            "ci_low": _num(self.ci_low),
            "ci_high": _num(self.ci_high),
            "n": int(self.n),
            "method": self.method,
        }


def _num(x: float) -> float | None:
    x = float(x)
    return x if math.isfinite(x) else None


def _from_summary(
    result: StudyResult, column: str, figure: str, label: str, unit: str, scale: float = 1.0
) -> Headline | None:
    summary = result.summary
    if column not in summary.index:
        return None
    row = summary.loc[column]
    return Headline(
        figure=figure,
        label=label,
        unit=unit,
        mean=float(row["mean"]) * scale,
        ci_low=float(row["ci_low"]) * scale,
        ci_high=float(row["ci_high"]) * scale,
        n=int(row["n"]),
    )


def no_down_probability(down: np.ndarray, confidence: float = CONFIDENCE) -> Estimate:
    """Share of replications without a down event and its Clopper–Pearson interval.

    Parameters
    ----------
    down
        One value per replication, non-zero when a down event happened.
    """
    d = np.asarray(down, dtype=float)
    d = d[np.isfinite(d)]
    n = int(d.size)
    if n == 0:
        nan = float("nan")
        return Estimate(nan, nan, nan, nan, 0)
    k = int((d == 0).sum())
    ci = stats.binomtest(k, n).proportion_ci(confidence_level=confidence, method="exact")
    p = k / n
    return Estimate(p, float(ci.low), float(ci.high), math.sqrt(p * (1 - p) / n), n)


def _down_flags(result: StudyResult, flag: str, first_down: str) -> np.ndarray | None:
    reps = result.replications
    if flag in reps.columns:
        return reps[flag].to_numpy(dtype=float)
    if first_down in reps.columns:
        t = reps[first_down].to_numpy(dtype=float)
        return (t < result.horizon_h).astype(float)  # NaN (no event) compares False
    return None


def _no_down(
    result: StudyResult, figure: str, label: str, flag: str, first: str
) -> Headline | None:
    down = _down_flags(result, flag, first)
    if down is None:
        return None
    est = no_down_probability(down)
    return Headline(figure, label, "share", est.mean, est.low, est.high, est.n, "clopper-pearson")


def has_inspections(result: StudyResult) -> bool:
    """True when any replication of the study inspected a machine."""
    reps = result.replications
    return "inspections" in reps.columns and bool((reps["inspections"].fillna(0) > 0).any())


def headline_figures(result: StudyResult) -> list[Headline]:
    """The headline figures of one study, in report order.

    Returns
    -------
    list of Headline
        Cost per year, availability, per-year counts and downtime by cause,
        inspection figures (when the study inspected), spares of each bearing
        per year, and the probability of no down event over the horizon for
        the fleet and each group. Figures missing from the study are left out.
    """
    currency = result.scenario.costs.currency
    years = result.horizon_years
    out: list[Headline | None] = [
        _from_summary(
            result, "cost_per_year", "cost_per_year", "Cost per year", f"{currency}/year"
        ),
        _from_summary(result, "availability", "availability", "Availability", "share"),
    ]
    specs = PER_YEAR + (INSPECTION_PER_YEAR if has_inspections(result) else ())
    for column, label, unit in specs:
        out.append(_from_summary(result, column, f"{column}_per_year", label, unit, 1.0 / years))
    for bearing in result.keys("spares_per_year"):
        col = f"spares_per_year:{bearing}"
        out.append(_from_summary(result, col, col, f"Spares of {bearing} per year", "count/year"))
    horizon = f"{years:.3g} years"
    out.append(
        _no_down(
            result,
            "fleet_no_down",
            f"Probability of no fleet down event in {horizon}",
            "fleet_down",
            "fleet_first_down_h",
        )
    )
    for group in result.keys("group_first_down_h") or result.keys("group_down"):
        out.append(
            _no_down(
                result,
                f"group_no_down:{group}",
                f"Probability of no down event of group {group} in {horizon}",
                f"group_down:{group}",
                f"group_first_down_h:{group}",
            )
        )
    return [h for h in out if h is not None]


def difference(
    a: StudyResult, b: StudyResult, column: str, confidence: float = CONFIDENCE
) -> tuple[Estimate, str]:
    """Mean of ``a − b`` for one figure, with its confidence interval.

    Returns
    -------
    (Estimate, str)
        The estimate and the method: ``"paired"`` when both studies share the
        seed and the replication numbers (common random numbers), else
        ``"welch"``.
    """
    ra = a.replications.set_index("replication")[column]
    rb = b.replications.set_index("replication")[column]
    if a.seed == b.seed and len(ra) == len(rb) and set(ra.index) == set(rb.index):
        rb = rb.loc[ra.index]
        return paired_difference(ra, rb, confidence), "paired"
    ea, eb = estimate(ra, confidence), estimate(rb, confidence)
    mean = ea.mean - eb.mean
    if ea.n < 2 or eb.n < 2:
        nan = float("nan")
        return Estimate(mean, nan, nan, nan, min(ea.n, eb.n)), "welch"
    va, vb = ea.sem**2, eb.sem**2
    se = math.sqrt(va + vb)
    if se == 0:
        return Estimate(mean, mean, mean, 0.0, min(ea.n, eb.n)), "welch"
    df = (va + vb) ** 2 / (va**2 / (ea.n - 1) + vb**2 / (eb.n - 1))
    half = float(stats.t.ppf(0.5 + confidence / 2, df)) * se
    return Estimate(mean, mean - half, mean + half, se, min(ea.n, eb.n)), "welch"


def recommended_index(results: Sequence[StudyResult]) -> int:
    """Index of the variant with the lowest mean cost per year (the first on ties)."""
    best, best_cost = 0, math.inf
    for k, r in enumerate(results):
        if "cost_per_year" not in r.replications.columns:
            continue
        cost = float(r.summary.loc["cost_per_year", "mean"])
        if math.isfinite(cost) and cost < best_cost:
            best, best_cost = k, cost
    return best


def per_year(result: StudyResult, column: str) -> Headline | None:
    """Mean and interval of a figure over the horizon divided by the horizon in years."""
    return _from_summary(
        result, column, f"{column}_per_year", column, "per year", 1.0 / result.horizon_years
    )


def mean_ci(result: StudyResult, column: str) -> Headline | None:
    """Mean and interval of a figure as it is (None when the study lacks it)."""
    return _from_summary(result, column, column, column, "")

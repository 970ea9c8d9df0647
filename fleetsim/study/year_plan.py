"""The year-by-year plan of a study: what the plant spends and does in each calendar year.

For next year and each year after, over the study's replications: failures,
planned changes, inspections, spares issued and bought per bearing, crew hours,
machine hours down and cost (present value when the study is discounted),
each as P10, P50 and P90 across the replications and as a mean. This is the
*budget view*: the fleet as it is today, run forward, year by year. The means
add up to the horizon totals (the engines book every quantity by calendar
year, :mod:`fleetsim.sim.years`); percentiles, of course, do not.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from fleetsim.study.figures import YEAR_FAMILIES, split
from fleetsim.study.result import StudyResult

#: Quantities of the plan: (figure family, label, unit), in the order a planner reads them.
PLAN_ROWS: tuple[tuple[str, str, str], ...] = (
    ("failures_in_year", "failures", "count"),
    ("changes_in_year", "planned changes", "count"),
    ("inspections_in_year", "inspections", "count"),
    ("spares_issued_in_year", "spares issued", "count"),
    ("spares_ordered_in_year", "spares bought", "count"),
    ("labour_h_in_year", "crew hours", "h"),
    ("downtime_h_in_year", "machine hours down", "h"),
    ("cost_in_year", "cost", "currency"),
)
PERCENTILES = (10, 50, 90)


def year_plan(result: StudyResult) -> pd.DataFrame:
    """The plan as a long table, one row per (year, quantity, bearing).

    Returns
    -------
    pandas.DataFrame
        Columns ``year`` (1 = the first year from the start), ``quantity``,
        ``bearing`` ("" for fleet-wide rows), ``unit``, ``p10``, ``p50``,
        ``p90``, ``mean``. Empty when the replications carry no per-year figures.
    """
    reps = result.replications
    labels = {family: (label, unit) for family, label, unit in PLAN_ROWS}
    order = {family: i for i, (family, _, _) in enumerate(PLAN_ROWS)}
    rows = []
    for col in reps.columns:
        family, key = split(str(col))
        if family not in YEAR_FAMILIES or key is None:
            continue
        bearing, _, year = key.rpartition("@")
        x = reps[col].to_numpy(dtype=float)
        p10, p50, p90 = np.percentile(x, PERCENTILES)
        label, unit = labels[family]
        rows.append({"year": int(year), "quantity": label, "bearing": bearing, "unit": unit,
                     "p10": float(p10), "p50": float(p50), "p90": float(p90),
                     "mean": float(x.mean()), "_order": order[family]})
    if not rows:
        return pd.DataFrame(columns=["year", "quantity", "bearing", "unit", "p10", "p50", "p90",
                                     "mean"])
    frame = pd.DataFrame(rows).sort_values(["year", "_order", "bearing"], kind="stable")
    return frame.drop(columns="_order").reset_index(drop=True)

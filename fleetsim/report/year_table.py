"""The year-by-year plan on the page: a table per year and a figure of the cost by year.

Reads :func:`fleetsim.study.year_plan.year_plan` (the budget view: today's
fleet run forward, each quantity per calendar year as P10, P50, P90 and mean
over the replications) and lays the fleet-wide quantities out as one row per
year, each cell the mean with its P10–P90 range.
"""

from __future__ import annotations

from collections.abc import Sequence
from typing import TYPE_CHECKING

from fleetsim import numbers as fmt
from fleetsim.report.figures import new_axes
from fleetsim.report.palette import report_style, series_colour
from fleetsim.report.retrofit_table import DecisionTable
from fleetsim.report.text import mpl_text
from fleetsim.study.result import StudyResult
from fleetsim.study.year_plan import PLAN_ROWS, year_plan

if TYPE_CHECKING:
    from matplotlib.axes import Axes


def year_table(result: StudyResult, label: str) -> DecisionTable | None:
    """The fleet-wide plan of one variant: one row per year, cells ``mean (P10–P90)``.

    None when the study carries no per-year figures.
    """
    plan = year_plan(result)
    if plan.empty:
        return None
    fleet = plan[plan["bearing"] == ""]
    currency = result.scenario.costs.currency
    quantities = [label for _, label, _ in PLAN_ROWS if label in set(fleet["quantity"])]
    units = {label: unit for _, label, unit in PLAN_ROWS}
    columns = ["Year"] + [
        f"{q} ({currency if units[q] == 'currency' else units[q]})" if units[q] != "count" else q
        for q in quantities
    ]
    rows = []
    for year, part in fleet.groupby("year", sort=True):
        by = part.set_index("quantity")
        cells = [str(int(year))]
        for q in quantities:
            if q not in by.index:
                cells.append("–")
                continue
            r = by.loc[q]
            cells.append(f"{fmt.number(float(r['mean']))} ({fmt.number(float(r['p10']))}–"
                         f"{fmt.number(float(r['p90']))})")
        rows.append(cells)
    discounted = result.scenario.costs.discount_rate_per_year > 0
    return DecisionTable(
        title=f"Year by year: {label} (budget view)",
        columns=columns,
        rows=rows,
        note="Each cell is the mean over the replications, with the range from P10 to P90 (eight "
        "replications in ten fall inside it). The means add up to the horizon totals; the "
        "ranges do not. Year 1 is the first year from the start of the study; spares per "
        "bearing, issued and bought, are in year_plan.csv"
        + ("; costs are present values at the start." if discounted else "."),
    )


def plot_cost_by_year(
    results: Sequence[StudyResult],
    ax: Axes | None = None,
    *,
    labels: Sequence[str],
    variants: Sequence[int],
) -> Axes:
    """Cost in each calendar year: the mean and the P10–P90 band over the replications."""
    with report_style():
        ax = new_axes(ax)
        currency = results[0].scenario.costs.currency
        for j, k in enumerate(variants):
            plan = year_plan(results[k])
            cost = plan[(plan["quantity"] == "cost") & (plan["bearing"] == "")].sort_values("year")
            if cost.empty:
                continue
            x = cost["year"].to_numpy(int)
            colour = series_colour(j)
            ax.fill_between(x, cost["p10"], cost["p90"], color=colour, alpha=0.15, lw=0)
            ax.plot(x, cost["mean"], "o-", color=colour, label=mpl_text(labels[k]), markersize=4)
        ax.set_xlabel("Year from the start of the study")
        ax.set_ylabel(f"Cost in the year ({mpl_text(currency)})")
        from matplotlib.ticker import FuncFormatter, MaxNLocator

        ax.xaxis.set_major_locator(MaxNLocator(integer=True))
        ax.yaxis.set_major_formatter(FuncFormatter(lambda v, _p: fmt.number(v)))
        ax.set_ylim(bottom=0.0)
        ax.set_title("Cost by year (mean; band: P10 to P90 of the replications)")
        if ax.get_legend_handles_labels()[0]:
            ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0))
    return ax

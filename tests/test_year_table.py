"""The year-by-year table of the page adds up to the horizon totals, within its rounding."""

from __future__ import annotations

import math

from fleetsim.report.year_table import year_table
from fleetsim.scenario import load_scenario
from fleetsim.study import run_study


def _value(cell: str) -> float:
    return float(cell.split(" (")[0].replace(",", ""))


def _half_step(cell: str) -> float:
    # half of the last digit shown: three significant digits, whole numbers from 100 up
    mean = cell.split(" (")[0]
    decimals = len(mean.split(".")[1]) if "." in mean else 0
    return 0.5 * 10.0 ** (-decimals)


def test_the_year_table_sums_to_the_horizon_totals() -> None:
    sc = load_scenario("scenarios/pump_stations.toml")
    result = run_study(sc, replications=4, seed=7)
    table = year_table(result, "today")
    assert table is not None
    years = math.ceil(result.horizon_years - 1e-9)
    assert [row[0] for row in table.rows] == [str(y) for y in range(1, years + 1)]
    reps = result.replications
    for column, total in (("cost (EUR)", "cost_total"), ("failures", "failures"),
                          ("planned changes", "planned_replacements")):
        k = table.columns.index(column)
        cells = [row[k] for row in table.rows]
        shown = sum(_value(c) for c in cells)
        rounding = sum(_half_step(c) for c in cells)
        assert abs(shown - float(reps[total].mean())) <= rounding + 1e-9, column

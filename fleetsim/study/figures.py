"""The figures of one replication: names, units and meanings.

Both engines fill one :class:`~fleetsim.sim.tally.Tally` per replication;
:func:`figures_of` is the one reduction of a tally to the flat mapping
``{figure: float}`` with the names below, so studies, sweeps and reports read
the same columns whatever engine produced them (the engines do not know these
names). Per-item figures carry the item after a colon:
``"spares_per_year:KB-40"``, ``"availability:pump-A"``,
``"group_down:station-1"``.

Fleet-wide figures (:data:`FLEET_FIGURES`) are always present; the keyed
families (:data:`KEYED_FIGURES`) are present for every bearing, machine or
group of the scenario.
"""

from __future__ import annotations

import math
from typing import TYPE_CHECKING

import numpy as np

if TYPE_CHECKING:
    from fleetsim.scenario.model import Scenario
    from fleetsim.sim.tally import Tally

#: Fleet-wide figures: name → (unit, meaning).
FLEET_FIGURES: dict[str, tuple[str, str]] = {
    "failures": ("count", "functional failures over the horizon"),
    "planned_replacements": ("count", "planned bearing changes (age, block, condition, opportunistic)"),
    "opportunistic_replacements": ("count", "planned changes made in another job's stop"),
    "inspections": ("count", "inspections of machine units"),
    "detections": ("count", "defects found by inspection"),
    "missed_defects": ("count", "failures of condition-monitored positions never detected"),
    "failures_after_detection": ("count", "failures of a detected defect before its planned change"),
    "downtime_h": ("unit-hours", "machine-unit hours down, all causes"),
    "downtime_crew_h": ("unit-hours", "down waiting for a crew"),
    "downtime_spares_h": ("unit-hours", "down waiting for a spare"),
    "downtime_repair_h": ("unit-hours", "down during unplanned repair"),
    "downtime_planned_h": ("unit-hours", "down for planned work"),
    "lost_operating_h": ("h", "operating hours lost: down hours × each unit's operating share"),
    "availability": ("share", "1 − downtime / (units × horizon)"),
    "cost_total": ("currency", "all costs over the horizon (present value when discounted)"),
    "cost_per_year": ("currency/year",
                      "cost_total / horizon in years (equivalent annual cost when discounted)"),
    "cost_parts": ("currency", "bearing prices of every change"),
    "cost_planned": ("currency", "labour of planned changes"),
    "cost_failure": ("currency", "failure costs (secondary damage, call-out, labour)"),
    "cost_downtime": ("currency", "downtime cost (per operating hour lost)"),
    "cost_group_downtime": ("currency", "cost of k-out-of-n groups being down (per group-hour)"),
    "cost_inspection": ("currency", "inspection cost"),
    "cost_holding": ("currency", "holding cost of spares"),
    "cost_emergency": ("currency", "emergency order premiums"),
    "orders": ("count", "replenishment orders placed"),
    "emergency_orders": ("count", "emergency orders placed"),
    "stockouts": ("count", "demands that found no spare on hand"),
    "fleet_down": ("0/1", "1 if any group (or, with no groups, any unit) had a down event"),
    "fleet_first_down_h": ("h", "time of the first fleet down event (horizon if none)"),
}

#: Keyed figure families: prefix → (key kind, unit, meaning).
KEYED_FIGURES: dict[str, tuple[str, str, str]] = {
    "spares_issued": ("bearing", "count", "spares of the bearing issued over the horizon"),
    "spares_per_year": ("bearing", "count/year", "spares of the bearing issued per year"),
    "fill_rate": ("bearing", "share", "share of demands for the bearing met from stock at once"),
    "stock_demands": ("bearing", "count", "demands the (s, S) stock serves (planned changes met "
                                          "by their own spare ordered ahead left out)"),
    "stock_fill_rate": ("bearing", "share", "share of the demands the (s, S) stock serves met at once"),
    "failures": ("machine", "count", "failures of the machine type's units"),
    "downtime_h": ("machine", "unit-hours", "down time of the machine type's units"),
    "availability": ("machine", "share", "availability of the machine type's units"),
    "group_down": ("group", "0/1", "1 if the group had a down event"),
    "group_downtime_h": ("group", "h", "time the group was down"),
    "group_first_down_h": ("group", "h", "time of the group's first down event (horizon if none)"),
    # the year-by-year plan: key = calendar year from the start, 1, 2, ... (the last may be
    # partial); with a bearing, "<bearing>@<year>"
    "cost_in_year": ("year", "currency", "all costs in the year (present value when discounted)"),
    "failures_in_year": ("year", "count", "functional failures in the year"),
    "changes_in_year": ("year", "count", "planned and opportunistic changes made in the year"),
    "inspections_in_year": ("year", "count", "inspections in the year"),
    "labour_h_in_year": ("year", "crew-hours", "crew hours of repair and planned work in the year"),
    "downtime_h_in_year": ("year", "unit-hours", "machine-unit hours down in the year"),
    "spares_issued_in_year": ("bearing@year", "count", "spares of the bearing issued in the year"),
    "spares_ordered_in_year": ("bearing@year", "count",
                               "spares of the bearing bought in the year (ordered; issued, "
                               "when supply is unlimited)"),
}

#: The families of the year-by-year plan (sums over the years are the horizon totals).
YEAR_FAMILIES = ("cost_in_year", "failures_in_year", "changes_in_year", "inspections_in_year",
                 "labour_h_in_year", "downtime_h_in_year", "spares_issued_in_year",
                 "spares_ordered_in_year")


def year_key(year: int, bearing: str | None = None) -> str:
    """Key of a year-by-year figure: ``"3"``, or ``"WB-50@3"`` with a bearing (years from 1)."""
    return f"{year}" if bearing is None else f"{bearing}@{year}"


def keyed(prefix: str, key: str) -> str:
    """Column name of a keyed figure, e.g. ``keyed("spares_per_year", "KB-40")``."""
    if prefix not in KEYED_FIGURES:
        raise KeyError(f"unknown figure family {prefix!r}")
    return f"{prefix}:{key}"


def split(column: str) -> tuple[str, str | None]:
    """``"spares_per_year:KB-40"`` → ``("spares_per_year", "KB-40")``; fleet figures → ``(name, None)``."""
    prefix, sep, key = column.partition(":")
    return (prefix, key) if sep else (column, None)


def unit_of(column: str) -> str:
    """Unit of a figure column."""
    prefix, key = split(column)
    if key is None:
        return FLEET_FIGURES[prefix][0]
    return KEYED_FIGURES[prefix][1]


#: Units of figures that lie between 0 and 1; every other figure is >= 0.
_UNIT_SHARES = ("share", "0/1")


def range_of(column: str) -> tuple[float, float] | None:
    """The values a figure can take: ``(0, 1)`` for shares, ``(0, inf)`` for the rest.

    None for a column that is not a figure of this module.
    """
    try:
        unit = unit_of(column)
    except KeyError:
        return None
    return (0.0, 1.0) if unit in _UNIT_SHARES else (0.0, float("inf"))


def figures_of(tally: Tally, scenario: Scenario) -> dict[str, float]:
    """The study's figures of one replication, from the tally either engine filled.

    The one reduction (and, through :func:`fleetsim.sim.tally.costs_of`, the
    one cost model) behind every study, sweep and report.
    """
    from fleetsim.sim.discount import per_year
    from fleetsim.sim.tally import (
        CHANGES,
        DOWN_H,
        FAILURES,
        INSPECTIONS,
        LABOUR_H,
        bought_by_year,
        costs_by_year,
        issued_key,
    )

    H = tally.horizon_h
    c = tally.counts
    down = tally.downtime_h
    out: dict[str, float] = {
        "failures": c["failures"],
        "planned_replacements": c["planned"] + c["opportunistic"],
        "opportunistic_replacements": c["opportunistic"],
        "inspections": c["inspections"],
        "detections": c["detections"],
        "missed_defects": c["missed_defects"],
        "failures_after_detection": c["failures_after_detection"],
        "orders": c["orders"],
        "emergency_orders": c["emergency_orders"],
        "stockouts": c["stockouts"],
        "downtime_crew_h": down["crew"],
        "downtime_spares_h": down["spares"],
        "downtime_repair_h": down["repair"],
        "downtime_planned_h": down["planned"],
    }
    out["downtime_h"] = sum(down.values())
    n_units = sum(mt.units for mt in tally.machines.values())
    out["availability"] = 1.0 - out["downtime_h"] / (n_units * H)
    out["lost_operating_h"] = sum(mt.lost_operating_h for mt in tally.machines.values())
    for m in scenario.machines:
        mt = tally.machines[m.id]
        out[f"failures:{m.id}"] = mt.failures
        out[f"downtime_h:{m.id}"] = mt.down_h
        out[f"availability:{m.id}"] = 1.0 - mt.down_h / (m.count * H)
    by_year = costs_by_year(tally, scenario)
    costs = {k: float(v.sum()) for k, v in by_year.items()}
    costs["total"] = sum(costs.values())
    for name in ("parts", "planned", "failure", "downtime", "group_downtime", "inspection",
                 "holding", "emergency"):
        key = {"planned": "planned_labour", "failure": "failure_labour"}.get(name, name)
        out[f"cost_{name}"] = costs[key]
    out["cost_total"] = costs["total"]
    out["cost_per_year"] = per_year(costs["total"], tally.years, scenario.costs.discount_rate_per_year)
    for b in scenario.bearings:
        bt = tally.bearings.get(b)
        issued = bt.issued if bt is not None else 0.0
        out[f"spares_issued:{b}"] = issued
        out[f"spares_per_year:{b}"] = issued / tally.years
        fill = bt.fill_rate if bt is not None else 1.0
        out[f"fill_rate:{b}"] = fill if math.isfinite(fill) else 1.0
        served = bt.stock_demands if bt is not None and bt.stock_demands is not None else issued
        stock_fill = (bt.stock_fill_rate if bt is not None and bt.stock_fill_rate is not None
                      else out[f"fill_rate:{b}"])
        out[f"stock_demands:{b}"] = served
        out[f"stock_fill_rate:{b}"] = stock_fill if math.isfinite(stock_fill) else 1.0
    book = tally.book
    year_cost = np.sum(list(by_year.values()), axis=0)
    plain = {"failures_in_year": book.years(FAILURES, False),
             "changes_in_year": book.years(CHANGES, False),
             "inspections_in_year": book.years(INSPECTIONS, False),
             "labour_h_in_year": book.years(LABOUR_H, False),
             "downtime_h_in_year": book.years(DOWN_H, False)}
    for y in range(book.n):
        key = year_key(y + 1)
        out[f"cost_in_year:{key}"] = float(year_cost[y])
        for family, values in plain.items():
            out[f"{family}:{key}"] = float(values[y])
    for b in scenario.bearings:
        issued_y, ordered_y = book.years(issued_key(b), False), bought_by_year(tally, scenario, b)
        for y in range(book.n):
            out[f"spares_issued_in_year:{year_key(y + 1, b)}"] = float(issued_y[y])
            out[f"spares_ordered_in_year:{year_key(y + 1, b)}"] = float(ordered_y[y])
    for g in tally.groups:
        if g.id == "fleet":
            out["fleet_down"] = float(g.had_down)
            out["fleet_first_down_h"] = g.first_down_h
        else:
            out[f"group_down:{g.id}"] = float(g.had_down)
            out[f"group_downtime_h:{g.id}"] = g.down_h
            out[f"group_first_down_h:{g.id}"] = g.first_down_h
    return {k: float(v) for k, v in out.items()}

"""The figures of one replication: names, units and meanings.

Every engine reduces a replication to one flat mapping ``{figure: float}``
with the names below, so studies, sweeps and reports read the same columns
whatever engine produced them. Per-item figures carry the item after a colon:
``"spares_per_year:KB-40"``, ``"availability:pump-A"``,
``"group_down:station-1"``.

Fleet-wide figures (:data:`FLEET_FIGURES`) are always present; the keyed
families (:data:`KEYED_FIGURES`) are present for every bearing, machine or
group of the scenario.
"""

from __future__ import annotations

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
    "availability": ("share", "1 − downtime / (units × horizon)"),
    "cost_total": ("currency", "all costs over the horizon (present value when discounted)"),
    "cost_per_year": ("currency/year",
                      "cost_total / horizon in years (equivalent annual cost when discounted)"),
    "cost_parts": ("currency", "bearing prices of every change"),
    "cost_planned": ("currency", "labour of planned changes"),
    "cost_failure": ("currency", "failure costs (secondary damage, call-out, labour)"),
    "cost_downtime": ("currency", "downtime cost"),
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
    "failures": ("machine", "count", "failures of the machine type's units"),
    "downtime_h": ("machine", "unit-hours", "down time of the machine type's units"),
    "availability": ("machine", "share", "availability of the machine type's units"),
    "group_down": ("group", "0/1", "1 if the group had a down event"),
    "group_downtime_h": ("group", "h", "time the group was down"),
    "group_first_down_h": ("group", "h", "time of the group's first down event (horizon if none)"),
}


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

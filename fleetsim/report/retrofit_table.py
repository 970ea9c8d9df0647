"""The before/after table of a retrofit: what each bearing position has, needs and gets.

One row per bearing position (positions alike on several machines share a
row): today's bearing and its C, the C the target needs, the chosen bearing and its C, whether it is kept or changed, and the
position's reliability over the target period before and after (its life at
the machine's operating hours in that period).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass, field

from fleetsim import numbers as fmt
from fleetsim.scenario.model import Scenario
from fleetsim.study.retrofit import PositionChoice


@dataclass(frozen=True)
class DecisionTable:
    """A titled table shown in the executive summary of a report."""

    title: str
    columns: list[str]
    rows: list[list[str]]
    changed: list[bool] = field(default_factory=list)
    note: str = ""


def _reliability(scenario: Scenario, machine: str, position: str, period_h: float) -> float | None:
    for m in scenario.machines:
        if m.id == machine:
            for p in m.positions:
                if p.id == position:
                    return float(p.life.reliability(period_h * m.operating_share))
    return None


def retrofit_table(
    today: Scenario,
    new: Scenario,
    choices: Sequence[PositionChoice],
    period_h: float,
    target: float,
) -> DecisionTable:
    """The before/after table of a retrofit plan.

    Parameters
    ----------
    today, new
        The scenario with today's bearings and with the new selection.
    choices
        The plan's choice for each position.
    period_h
        The target period, calendar hours.
    target
        The machine-level reliability target over the period (0–1).
    """
    def kn(value_N: float | None) -> str:
        return "–" if value_N is None else fmt.with_unit(fmt.number(value_N / 1e3), "kN")

    merged: dict[tuple[str, ...], list[str]] = {}
    order: list[tuple[str, ...]] = []
    for c in choices:
        before = _reliability(today, c.machine, c.position, period_h)
        after = _reliability(new, c.machine, c.position, period_h)
        b_now = today.bearings.get(c.current_bearing)
        c_now = b_now.dynamic_rating_N if b_now is not None else None
        swap = c.selected is not None and c.selected != c.current_bearing
        kept = c.note if c.note.startswith("kept") else ("kept: " + c.note if c.note else "kept")
        key = (
            c.position,
            f"{c.current_bearing} ({kn(c_now)})" if c_now else c.current_bearing,
            kn(c.required_rating_N),
            f"{c.selected} ({kn(c.selected_rating_N)})" if swap else "–",
            "changed" if swap else kept,
            fmt.percent(before) if before is not None else "–",
            fmt.percent(after) if after is not None else "–",
        )
        if key not in merged:
            merged[key] = []
            order.append(key)
        merged[key].append(c.machine)
    # Positions alike on several machines (same bearing, need, choice and reliabilities) share a row.
    rows = [[key[0], ", ".join(merged[key]), *key[1:]] for key in order]
    changed = [key[4] == "changed" for key in order]
    years = period_h / 8766.0
    return DecisionTable(
        title="Bearing selection: before and after",
        columns=["Position", "Machines", "Today's bearing (C)", "Needed C", "Chosen bearing (C)",
                 "Kept or changed", "Reliability before", "Reliability after"],
        rows=rows,
        changed=changed,
        note=(f"Reliability of each position over {fmt.number(years)} years of calendar time at its "
              f"machine's operating share; the machine target is {fmt.percent(target)} with its "
              "positions in series."),
    )

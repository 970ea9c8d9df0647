"""The before/after table of a retrofit: what each bearing position has, needs and gets.

One row per machine position: today's bearing and its C, the C the target
needs, the chosen bearing and its C, whether it is kept or changed, and the
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
    rows, changed = [], []
    for c in choices:
        before = _reliability(today, c.machine, c.position, period_h)
        after = _reliability(new, c.machine, c.position, period_h)
        c_now = today.bearings[c.current_bearing].dynamic_rating_N if c.current_bearing in today.bearings else None
        swap = c.selected is not None and c.selected != c.current_bearing
        rows.append(
            [
                f"{c.machine} / {c.position}",
                f"{c.current_bearing} ({fmt.load(c_now)})" if c_now else c.current_bearing,
                fmt.load(c.required_rating_N) if c.required_rating_N is not None else "–",
                f"{c.selected} ({fmt.load(c.selected_rating_N)})" if swap else "–",
                "changed" if swap else ("kept" + (f": {c.note}" if c.note else "")),
                fmt.percent(before) if before is not None else "–",
                fmt.percent(after) if after is not None else "–",
            ]
        )
        changed.append(swap)
    years = period_h / 8766.0
    return DecisionTable(
        title="Bearing selection: before and after",
        columns=["Position", "Today's bearing (C)", "Needed C", "Chosen bearing (C)",
                 "Kept or changed", "Reliability before", "Reliability after"],
        rows=rows,
        changed=changed,
        note=(f"Reliability of each position over {fmt.number(years)} years of calendar time at its "
              f"machine's operating share; the machine target is {fmt.percent(target)} with its "
              "positions in series, shared equally among them."),
    )

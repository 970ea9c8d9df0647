"""Further results as readable tables, never as raw key paths.

Commands hand the report JSON-like results besides the study (stock advice,
what a sweep varied, a retrofit's choices). This module lays each top-level
entry out as a titled block: scalars as a two-column list, a list of records
as a table with one column per field, a mapping of records as a table with one
row per key. Key names become words ("lead_time_h" → "lead time (h)"); nested
structure deeper than that is written inline as "name: value" text.
"""

from __future__ import annotations

import re
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from typing import Any

from fleetsim import numbers as fmt

#: Key names that read better spelled out.
WORDS: dict[str, str] = {
    "recommended_stock_95pct_fill_rate": "Recommended stock for a 95 % fill rate",
    "base_stock": "base stock S (on hand + on order)",
    "current_order_up_to": "today's S",
    "demand_per_year": "demand per year",
    "fill_rate": "fill rate",
    "required_rating_N": "needed C (N)",
    "selected_rating_N": "chosen C (N)",
    "current_rating_N": "today's C (N)",
    "current_bearing": "today's bearing",
    "selected": "chosen bearing",
    "required_reliability": "needed reliability",
    "meets_target": "meets the target",
    "engine_choice": "engine",
    "scenario_file": "scenario file",
    "best_variant": "best variant",
    "best_at_edge_of_range": "best at the edge of the range",
    "analytic_optimum_interval_h": "closed-form optimum interval (h)",
    "analytic_optimum_cost_per_year": "closed-form optimum cost per year",
    "analytic_optimum_at_edge": "closed-form optimum at the edge of the range",
    "analytic_note": "closed form",
    "cost_basis": "cost basis",
    "period_h": "period (h)",
    "levels": "bearing",
    "today": "today",
    "new": "new selection",
}

#: Keys whose values are shares (0–1), shown in percent.
SHARES = {"fill_rate", "required_reliability", "today", "new", "target", "target_fill_rate",
          "simulated_fill_rate"}

_UNIT_SUFFIX = {"_h": "h", "_N": "N", "_s": "s", "_pct": "%"}


def words(key: str) -> str:
    """A key name in words: known names spelled out, units in brackets."""
    if key in WORDS:
        return WORDS[key]
    for suffix, unit in _UNIT_SUFFIX.items():
        if key.endswith(suffix) and len(key) > len(suffix):
            return f"{words(key[: -len(suffix)])} ({unit})"
    return re.sub(r"[_.]+", " ", key).strip()


def value_text(value: Any, key: str = "") -> str:
    """One value as display text; nested data inline as ``name: value`` pairs."""
    if value is None:
        return "–"
    if isinstance(value, bool):
        return "yes" if value else "no"
    if key in SHARES and isinstance(value, int | float):
        return fmt.percent(float(value))
    if isinstance(value, int | float):
        return fmt.number(float(value)) if isinstance(value, float) else fmt.number(value)
    if isinstance(value, Mapping):
        return "; ".join(f"{words(str(k))}: {value_text(v, str(k))}" for k, v in value.items())
    if isinstance(value, list | tuple):
        return ", ".join(value_text(v) for v in value)
    return str(value)


@dataclass
class Block:
    """A titled block of the page: a key/value list and/or a table."""

    title: str
    pairs: list[tuple[str, str]] = field(default_factory=list)
    columns: list[str] = field(default_factory=list)
    rows: list[list[str]] = field(default_factory=list)


def _table(title: str, records: Sequence[Mapping[str, Any]], first: str = "") -> Block:
    keys: list[str] = []
    for rec in records:
        keys += [k for k in rec if k not in keys]
    block = Block(title, columns=[first if k == "" else words(k) for k in keys])
    block.rows = [[value_text(rec.get(k), k) for k in keys] for rec in records]
    return block


def _is_records(value: Any) -> bool:
    return isinstance(value, list) and bool(value) and all(isinstance(v, Mapping) for v in value)


def _is_keyed_records(value: Any) -> bool:
    return isinstance(value, Mapping) and bool(value) and all(
        isinstance(v, Mapping) for v in value.values()
    )


def _keyed(value: Mapping[str, Any]) -> list[dict[str, Any]]:
    return [{"": name, **rec} for name, rec in value.items()]


def _title(key: str) -> str:
    text = words(key)
    return text[:1].upper() + text[1:]


def blocks(extra: Mapping[str, Any] | None) -> list[Block]:
    """The blocks that show ``extra``: loose scalars first under "Notes", then one per entry."""
    if not extra:
        return []
    notes = Block("Notes")
    out: list[Block] = []
    for key, value in extra.items():
        if _is_records(value):
            out.append(_table(_title(key), value))
        elif _is_keyed_records(value):
            out.append(_table(_title(key), _keyed(value)))
        elif isinstance(value, Mapping):
            head = Block(_title(key))
            tables = []
            for k, v in value.items():
                if _is_keyed_records(v):
                    tables.append(_table(f"{head.title}: {words(str(k))}", _keyed(v), words(str(k))))
                elif _is_records(v):
                    tables.append(_table(f"{head.title}: {words(str(k))}", v))
                else:
                    head.pairs.append((_title(str(k)), value_text(v, str(k))))
            if head.pairs:
                out.append(head)
            out += tables
        else:
            notes.pairs.append((_title(key), value_text(value, key)))
    return ([notes] if notes.pairs else []) + out

"""Swept settings in words: variant labels, sweep titles and the user's own time unit.

A sweep's variants are named from what was set ("replace at 40,000 h", not
``policy.interval=40000 h``), its title names what was swept and over which
range, and an optimum is given back in the unit the user swept in (weeks in,
weeks out).
"""

from __future__ import annotations

import re
from collections.abc import Sequence
from typing import Any

from fleetsim import numbers as fmt

#: Known key paths: (words before the value, words after it).
PHRASES: dict[str, tuple[str, str]] = {
    "policy.interval": ("replace at", ""),
    "policy.inspection_every": ("inspect every", ""),
    "policy.kind": ("", ""),
    "policy.pf_interval": ("P-F interval", ""),
    "policy.detection": ("detection", ""),
    "policy.opportunistic_age": ("opportunistic change past", ""),
    "costs.failure": ("failure cost", ""),
    "costs.planned_replacement": ("planned replacement cost", ""),
    "costs.downtime_per_hour": ("downtime cost", "per hour"),
    "costs.inspection": ("inspection cost", ""),
    "crews.count": ("", "crews"),
    "study.horizon": ("horizon", ""),
}

#: What a swept key is, for titles and axes.
NAMES: dict[str, str] = {
    "policy.interval": "replacement interval",
    "policy.inspection_every": "inspection interval",
    "policy.kind": "policy",
    "crews.count": "number of crews",
}

_QUANTITY = re.compile(r"^\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([^\d\s].*)?$")


def value_words(value: Any) -> str:
    """A value as people write it: ``"40000 h"`` → ``"40,000 h"``, ``"run-to-failure"`` → ``"run to failure"``."""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int | float):
        return fmt.number(value)
    if isinstance(value, dict):
        return ", ".join(f"{key_words(str(k))} {value_words(v)}" for k, v in value.items())
    text = str(value)
    m = _QUANTITY.match(text)
    if m:
        unit = (m.group(2) or "").strip()
        return fmt.with_unit(fmt.number(float(m.group(1))), unit)
    return text.replace("-", " ") if re.fullmatch(r"[a-z]+(-[a-z]+)+", text) else text


def key_words(key: str) -> str:
    """What a key path is, in words (``"stores.WB-50.order_up_to"`` → ``"WB-50 order up to"``)."""
    if key in NAMES:
        return NAMES[key]
    parts = [p for p in key.split(".") if p not in ("policy", "costs", "stores", "crews", "study")]
    return " ".join(p.replace("_", " ") for p in parts) or key


def setting_words(key: str, value: Any) -> str:
    """One setting in words, e.g. ``"replace at 40,000 h"`` or ``"failure cost 5,500"``."""
    before, after = PHRASES.get(key, (key_words(key), ""))
    if key.startswith("stores.") and key.endswith(".order_up_to"):
        before = f"{key.split('.')[1]}: S ="
    elif key.startswith("stores.") and key.endswith(".reorder_point"):
        before = f"{key.split('.')[1]}: s ="
    return " ".join(p for p in (before, value_words(value), after) if p)


def variant_words(pairs: Sequence[tuple[str, Any]]) -> str:
    """A variant's label from its settings, joined with semicolons."""
    return "; ".join(setting_words(k, v) for k, v in pairs)


def sweep_title(study: str, swept: Sequence[tuple[str, Sequence[Any]]]) -> str:
    """``"Pump stations: replacement interval from 20,000 h to 100,000 h"``."""
    if not swept:
        return f"{study}: sweep"
    parts = []
    for key, values in swept:
        if len(values) > 2:
            parts.append(f"{key_words(key)} from {value_words(values[0])} to {value_words(values[-1])}")
        else:
            parts.append(f"{key_words(key)}: " + " or ".join(value_words(v) for v in values))
    return f"{study}: " + "; ".join(parts)


def user_unit(values: Sequence[Any]) -> str | None:
    """The time unit the user wrote the swept values in (``"weeks"``), or None for bare numbers."""
    units = set()
    for v in values:
        m = _QUANTITY.match(str(v))
        if m is None or not m.group(2):
            return None
        units.add(m.group(2).strip())
    return units.pop() if len(units) == 1 else None

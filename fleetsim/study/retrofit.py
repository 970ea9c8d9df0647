"""Reliability target → bearing ratings → a new selection, ready to simulate.

For a machine-level target — reliability R over a calendar period t, the
machine's positions in series — the target is allocated equally to the n
positions (each needs R^(1/n) over its operating hours t·share), the dynamic
rating each position needs follows from its equivalent load and speed through
:func:`fleetsim.life.required_dynamic_rating` (crediting the position's a_ISO
and field factor as they are today), and the smallest adequate bearing of the
same type is picked from a catalogue. The selection is written back into the
scenario document as new ``[[bearing]]`` entries (prices from the catalogue,
lead times and stock policy copied from the bearing they replace), so the
current and the new selection can be simulated side by side on common random
numbers.

Positions whose life is given explicitly (a field distribution) or whose
bearing type the catalogue lacks keep their bearing; the result says so.
"""

from __future__ import annotations

import copy
from collections.abc import Mapping, Sequence
from dataclasses import dataclass
from typing import Any

from fleetsim.errors import InputError
from fleetsim.life import (
    CatalogueEntry,
    allocate_reliability,
    required_dynamic_rating,
    select_bearing,
    series_reliability,
)
from fleetsim.scenario.model import Scenario


@dataclass(frozen=True)
class PositionChoice:
    """What one bearing position needs and gets.

    Attributes
    ----------
    machine, position
        Ids (a position with ``count`` copies appears once, without ``#k``).
    current_bearing
        Bearing id today.
    required_reliability
        Its allocated share of the machine target.
    required_rating_N
        Basic dynamic rating needed, N (None when not derivable).
    selected
        Catalogue designation chosen, or None (kept).
    selected_rating_N
        Its rating, N.
    note
        Why a position keeps its bearing, or "".
    """

    machine: str
    position: str
    current_bearing: str
    required_reliability: float
    required_rating_N: float | None
    selected: str | None
    selected_rating_N: float | None
    note: str = ""


@dataclass(frozen=True)
class RetrofitPlan:
    """The selection for a target, and the scenario document carrying it.

    Attributes
    ----------
    target
        Machine reliability target over ``period_h``.
    period_h
        Calendar period, hours.
    choices
        One row per distinct position.
    document
        The scenario document with the new selection.
    """

    target: float
    period_h: float
    choices: tuple[PositionChoice, ...]
    document: dict[str, Any]


def _base_id(position_id: str) -> str:
    return position_id.split("#", 1)[0]


def machine_reliability(scenario: Scenario, period_h: float) -> dict[str, float]:
    """Reliability of each machine unit over ``period_h`` calendar hours (positions in series)."""
    return {
        m.id: series_reliability(
            float(p.life.reliability(period_h * m.operating_share)) for p in m.positions
        )
        for m in scenario.machines
    }


def plan_retrofit(
    scenario: Scenario,
    document: Mapping[str, Any],
    catalogue: Sequence[CatalogueEntry],
    target: float,
    period_h: float,
    machines: Sequence[str] | None = None,
) -> RetrofitPlan:
    """Choose bearings so that each machine meets ``target`` over ``period_h`` calendar hours.

    Parameters
    ----------
    scenario
        The validated scenario (for the derived loads, speeds and lives).
    document
        Its parsed TOML document (changed in a copy).
    catalogue
        Bearings to choose from.
    target
        Machine reliability over the period, in (0, 1).
    period_h
        Calendar hours.
    machines
        Machine ids to treat (default: all).
    """
    if not 0.0 < target < 1.0:
        raise InputError("--reliability", f"expected a target strictly between 0 and 1, got {target}")
    if not period_h > 0:
        raise InputError("--life", f"expected a period > 0, got {period_h} h")
    doc = copy.deepcopy(dict(document))
    bearings_doc = doc.setdefault("bearing", [])
    stores_doc = doc.get("stores", {})
    added: dict[str, str] = {}
    choices: list[PositionChoice] = []
    wanted = set(machines) if machines else None
    if wanted is not None:
        unknown = wanted - {m.id for m in scenario.machines}
        if unknown:
            raise InputError("--machine", f"no machine {sorted(unknown)[0]!r} in the scenario")
    for mi, m in enumerate(scenario.machines):
        if wanted is not None and m.id not in wanted:
            continue
        t_op = period_h * m.operating_share
        r_each = allocate_reliability(target, len(m.positions))
        m_doc = doc["machine"][mi]
        seen: set[str] = set()
        for pos in m.positions:
            base = _base_id(pos.id)
            if base in seen:
                continue
            seen.add(base)
            bearing = scenario.bearings[pos.bearing_id]
            derived = pos.derived
            if derived is None:
                choices.append(PositionChoice(m.id, base, bearing.id, r_each, None, None, None,
                                              "life given explicitly: kept"))
                continue
            credit = (derived.a_iso or 1.0) * pos.field_factor
            need = required_dynamic_rating(
                derived.equivalent_load_N, derived.speed_rpm, t_op, r_each,
                bearing_type=bearing.bearing_type, model=derived.model, a_iso=credit,
            )
            pick = select_bearing(catalogue, need, bearing.bearing_type)
            if pick is None:
                choices.append(PositionChoice(
                    m.id, base, bearing.id, r_each, need, None, None,
                    f"no {bearing.bearing_type.value} bearing in the catalogue is enough: kept"))
                continue
            new_id = _add_bearing(bearings_doc, stores_doc, bearing.id, pick, added)
            for p_doc in m_doc.get("position", []):
                if p_doc.get("id") == base:
                    p_doc["bearing"] = new_id
            choices.append(PositionChoice(m.id, base, bearing.id, r_each, need,
                                          pick.designation, pick.dynamic_rating_N))
    used = {p.get("bearing") for m_doc in doc.get("machine", []) for p in m_doc.get("position", [])}
    for bid in [b for b in list(stores_doc) if b not in used]:
        del stores_doc[bid]  # no position uses it any more: no stock to hold
    return RetrofitPlan(target, period_h, tuple(choices), doc)


def _add_bearing(bearings_doc: list[dict[str, Any]], stores_doc: dict[str, Any], old_id: str,
                 pick: CatalogueEntry, added: dict[str, str]) -> str:
    """Add the catalogue bearing to the document once (keyed by designation)."""
    if pick.designation in added:
        return added[pick.designation]
    existing = {b.get("id") for b in bearings_doc}
    new_id = pick.designation if pick.designation not in existing else f"{pick.designation}-new"
    old = next((b for b in bearings_doc if b.get("id") == old_id), {})
    entry: dict[str, Any] = {
        "id": new_id,
        "type": pick.bearing_type.value,
        "dynamic_rating": f"{pick.dynamic_rating_N / 1e3:.6g} kN",
    }
    if pick.static_rating_N is not None:
        entry["static_rating"] = f"{pick.static_rating_N / 1e3:.6g} kN"
    if pick.fatigue_limit_N is not None:
        entry["fatigue_limit"] = f"{pick.fatigue_limit_N / 1e3:.6g} kN"
    elif "fatigue_limit" in old:
        entry["fatigue_limit"] = old["fatigue_limit"]
    if pick.factors is not None:
        entry.update(e=pick.factors.e, X=pick.factors.X, Y=pick.factors.Y)
    if pick.price is not None:
        entry["price"] = pick.price
    elif "price" in old:
        entry["price"] = old["price"]
    if "lead_time" in old:
        entry["lead_time"] = old["lead_time"]
    bearings_doc.append(entry)
    if old_id in stores_doc and new_id not in stores_doc:
        stores_doc[new_id] = copy.deepcopy(stores_doc[old_id])
    added[pick.designation] = new_id
    return new_id

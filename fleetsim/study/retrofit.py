"""Reliability target → bearing ratings → a new selection, ready to simulate.

For a machine-level target — reliability R over a calendar period t, the
machine's positions in series — the positions split into those that cannot
change (a life given explicitly as a field distribution, or no catalogue
bearing of its type and bore) and those that can. The fixed positions keep
their reliability R_fixed over their operating hours t·share; the rest of the
target is allocated equally over the n positions that can change: each needs
(R / R_fixed)^(1/n) (equal apportionment of a series system; any reliability
text). A position that meets its share with today's bearing keeps it
("kept"), its reliability joins R_fixed and the share of the others is worked
out again, until no other position meets it (a machine that meets the target
today keeps everything). Each remaining position takes the smallest adequate
catalogue bearing: of the same type, of
today's bore unless told otherwise (``bore="any"`` or a bore in mm; when
today's bore is unknown, any bore), rated at least as high as today's, and
adequate when the position's life with *that* bearing — its own static rating,
fatigue limit and so a_ISO, the position's duty, arrangement and field factor —
gives the position's share over the period. The selection is written back into
the scenario document as new ``[[bearing]]`` entries (prices and bores from
the catalogue, lead times and stock policy copied from the bearing they
replace), so the current and the new selection can be simulated side by side
on common random numbers.

Instead of equal shares, ``allocation="cost"`` looks at every combination of
today's bearing and the candidates at the positions that can change and takes
the one with the lowest purchase price that meets the target.
"""

from __future__ import annotations

import copy
import itertools
import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, replace
from typing import Any

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life import (
    BearingRating,
    CatalogueEntry,
    PositionLife,
    position_life,
    series_reliability,
)
from fleetsim.scenario.model import Bearing, Machine, Position, Scenario

#: Bore choices: keep today's bore, allow any bore, or a bore in mm.
BoreChoice = str | float

#: How the target is shared among the positions that can change.
ALLOCATIONS = ("equal", "cost")

#: Most combinations the cost allocation enumerates for one machine.
MAX_COMBINATIONS = 200_000


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
        Its allocated share of the machine target over the period (None for a
        position that cannot change); with the cost allocation, the
        reliability its choice gives.
    required_rating_N
        Basic dynamic rating needed with the chosen (or today's) bearing's own
        a_ISO and field factor, N (None when not derivable, and with the cost
        allocation).
    selected
        Catalogue designation chosen, or None (today's bearing stays).
    selected_rating_N
        Its rating, N.
    note
        ``"kept: ..."`` when today's bearing stays, or "".
    reliability_today
        The position's reliability over its operating hours of the period today.
    reliability_selected
        The same with the selected bearing (today's when it stays).
    """

    machine: str
    position: str
    current_bearing: str
    required_reliability: float | None
    required_rating_N: float | None
    selected: str | None
    selected_rating_N: float | None
    note: str = ""
    reliability_today: float | None = None
    reliability_selected: float | None = None


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


def _bore_of(bearing: Bearing, bore: BoreChoice) -> float | None:
    """The bore a candidate must have (None: any)."""
    if bore == "keep":
        return bearing.bore_mm
    if bore == "any":
        return None
    return float(bore)


def _candidates(
    catalogue: Sequence[CatalogueEntry], bearing: Bearing, bore_mm: float | None
) -> list[CatalogueEntry]:
    """Catalogue bearings that may replace ``bearing``: same type and bore, C >= today's."""
    fits = [
        b
        for b in catalogue
        if b.bearing_type is bearing.bearing_type
        and b.dynamic_rating_N >= bearing.dynamic_rating_N
        and (bore_mm is None or (b.bore_mm is not None and math.isclose(b.bore_mm, bore_mm)))
    ]
    return sorted(fits, key=lambda b: (b.dynamic_rating_N, b.price if b.price is not None else 0.0))


def _life_with(
    entry: CatalogueEntry, bearing: Bearing, derived: PositionLife
) -> PositionLife | None:
    """The position's life with a catalogue bearing in place of today's.

    None when the position credits a_ISO and the catalogue gives no fatigue
    limit for the bearing (its own a_ISO is unknown).
    """
    assert derived.inputs is not None
    if derived.inputs.lubrication is not None and entry.fatigue_limit_N is None:
        return None
    factors = entry.factors if entry.factors is not None else bearing.factors
    rating = BearingRating(entry.bearing_type, entry.dynamic_rating_N, entry.static_rating_N,
                           entry.fatigue_limit_N, factors)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)  # about candidates, not the plant
        return position_life(rating, **derived.inputs.as_kwargs())


def _reliability(life: PositionLife, field_factor: float, hours: float) -> float:
    return float(life.distribution.scaled(field_factor).reliability(hours))


def _needed_rating(rating_N: float, life: PositionLife, field_factor: float, hours: float,
                   share: float, exponent: float) -> float:
    """C that gives reliability ``share`` at ``hours``: lives scale as C^p at fixed loads."""
    l10 = (life.modified_life_h or life.rating_life_h) * field_factor
    needed = hours / float(life.model.life_ratio(share))
    return rating_N * (needed / l10) ** (1.0 / exponent)


def _changeable(pos: Position, scenario: Scenario, catalogue: Sequence[CatalogueEntry],
                bore: BoreChoice) -> bool:
    if pos.derived is None or pos.derived.inputs is None:
        return False
    bearing = scenario.bearings[pos.bearing_id]
    return bool(_candidates(catalogue, bearing, _bore_of(bearing, bore)))


def plan_retrofit(
    scenario: Scenario,
    document: Mapping[str, Any],
    catalogue: Sequence[CatalogueEntry],
    target: float,
    period_h: float,
    machines: Sequence[str] | None = None,
    *,
    bore: BoreChoice = "keep",
    allocation: str = "equal",
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
    bore
        ``"keep"`` (today's bore where the scenario gives it), ``"any"``, or a
        bore in mm for every changed position.
    allocation
        ``"equal"`` (shares as in the module docstring) or ``"cost"``: of all
        combinations of today's bearing and the candidates at the positions
        that can change, the one with the lowest purchase price (catalogue
        price × number of positions) that meets the target; candidates without
        a price are left out.
    """
    if not 0.0 < target < 1.0:
        raise InputError("--reliability", f"expected a target strictly between 0 and 1, got {target}")
    if not period_h > 0:
        raise InputError("--life", f"expected a period > 0, got {period_h} h")
    if not (bore in ("keep", "any") or (isinstance(bore, (int, float)) and bore > 0)):
        raise InputError("--bore", f"expected keep, any or a bore in mm > 0, got {bore!r}")
    if allocation not in ALLOCATIONS:
        raise InputError("--allocation", f"expected one of {', '.join(ALLOCATIONS)}, "
                                         f"got {allocation!r}")
    plan_machine = _plan_machine if allocation == "equal" else _plan_machine_by_cost
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
        for choice, new_bearing in plan_machine(scenario, m, catalogue, target, period_h, bore):
            choices.append(choice)
            if new_bearing is None:
                continue
            new_id = _add_bearing(bearings_doc, stores_doc, choice.current_bearing, new_bearing,
                                  added)
            for p_doc in doc["machine"][mi].get("position", []):
                if p_doc.get("id") == choice.position:
                    p_doc["bearing"] = new_id
    used = {p.get("bearing") for m_doc in doc.get("machine", []) for p in m_doc.get("position", [])}
    for bid in [b for b in list(stores_doc) if b not in used]:
        del stores_doc[bid]  # no position uses it any more: no stock to hold
    return RetrofitPlan(target, period_h, tuple(choices), doc)


def _plan_machine(
    scenario: Scenario,
    m: Machine,
    catalogue: Sequence[CatalogueEntry],
    target: float,
    period_h: float,
    bore: BoreChoice,
) -> list[tuple[PositionChoice, CatalogueEntry | None]]:
    """The choice for each distinct position of one machine.

    Positions that cannot change, then those that meet their share today, are
    kept and their reliability is taken out of the target; the rest share what
    is left equally, so the machine meets the target when each of them gets a
    bearing that meets its share.
    """
    t_op = period_h * m.operating_share
    groups: dict[str, list[Position]] = {}
    for pos in m.positions:
        groups.setdefault(_base_id(pos.id), []).append(pos)
    r_now = {b: float(ps[0].life.reliability(t_op)) for b, ps in groups.items()}
    decided: dict[str, PositionChoice] = {}
    picks: dict[str, CatalogueEntry] = {}
    held = 1.0  # reliability of the positions kept so far
    open_: list[str] = []
    for base, ps in groups.items():
        pos = ps[0]
        bearing = scenario.bearings[pos.bearing_id]
        kept = PositionChoice(m.id, base, bearing.id, None, None, None, None, "",
                              r_now[base], r_now[base])
        if pos.derived is None or pos.derived.inputs is None:
            decided[base] = replace(kept, note="kept: life given explicitly")
        elif not _changeable(pos, scenario, catalogue, bore):
            limit = _bore_of(bearing, bore)
            where = "" if limit is None else f" of bore {limit:g} mm"
            decided[base] = replace(kept, note=f"kept: no {bearing.bearing_type.value} bearing"
                                               f"{where} rated at least today's in the catalogue")
        else:
            open_.append(base)
            continue
        held *= r_now[base] ** len(ps)
    share = None
    while open_ and held >= target:
        share = (target / held) ** (1.0 / sum(len(groups[b]) for b in open_))
        meeting = [b for b in open_ if r_now[b] >= share]
        if not meeting:
            break
        for base in meeting:
            decided[base] = _kept_choice(scenario, m, groups[base][0], base, share, t_op,
                                         r_now[base], "kept: meets its share today")
            held *= r_now[base] ** len(groups[base])
            open_.remove(base)
    for base in open_:
        pos = groups[base][0]
        if share is None or held < target:
            decided[base] = _kept_choice(
                scenario, m, pos, base, None, t_op, r_now[base],
                "kept: the positions that cannot change already miss the target")
            continue
        choice, entry = _choose(scenario, m, pos, base, share, t_op, r_now[base], catalogue, bore)
        decided[base] = choice
        if entry is not None:
            picks[base] = entry
    return [(decided[b], picks.get(b)) for b in groups]


def _plan_machine_by_cost(
    scenario: Scenario,
    m: Machine,
    catalogue: Sequence[CatalogueEntry],
    target: float,
    period_h: float,
    bore: BoreChoice,
) -> list[tuple[PositionChoice, CatalogueEntry | None]]:
    """The cheapest combination of bearings that meets the target (see :func:`plan_retrofit`)."""
    t_op = period_h * m.operating_share
    groups: dict[str, list[Position]] = {}
    for pos in m.positions:
        groups.setdefault(_base_id(pos.id), []).append(pos)
    r_now = {b: float(ps[0].life.reliability(t_op)) for b, ps in groups.items()}
    decided: dict[str, PositionChoice] = {}
    held = 1.0
    # options per position: (entry or None for today's, reliability, price of all copies)
    options: dict[str, list[tuple[CatalogueEntry | None, float, float]]] = {}
    for base, ps in groups.items():
        pos = ps[0]
        bearing = scenario.bearings[pos.bearing_id]
        kept = PositionChoice(m.id, base, bearing.id, None, None, None, None, "",
                              r_now[base], r_now[base])
        if pos.derived is None or pos.derived.inputs is None:
            decided[base] = replace(kept, note="kept: life given explicitly")
            held *= r_now[base] ** len(ps)
            continue
        opts: list[tuple[CatalogueEntry | None, float, float]] = [(None, r_now[base], 0.0)]
        for entry in _candidates(catalogue, bearing, _bore_of(bearing, bore)):
            life = _life_with(entry, bearing, pos.derived)
            if life is None or entry.price is None:
                continue
            opts.append((entry, _reliability(life, pos.field_factor, t_op),
                         entry.price * len(ps)))
        if len(opts) == 1:
            decided[base] = replace(kept, note="kept: no priced candidate in the catalogue")
            held *= r_now[base] ** len(ps)
        else:
            options[base] = opts
    bases = list(options)
    count = math.prod(len(options[b]) for b in bases)
    if count > MAX_COMBINATIONS:
        raise InputError("--allocation", f"machine {m.id!r} has {count} combinations of "
                                         f"candidates (at most {MAX_COMBINATIONS}); use equal")
    best: tuple[float, float, tuple[int, ...]] | None = None
    for combo in itertools.product(*(range(len(options[b])) for b in bases)):
        r = held * math.prod(options[b][i][1] ** len(groups[b]) for b, i in zip(bases, combo,
                                                                                 strict=True))
        if r < target:
            continue
        cost = sum(options[b][i][2] for b, i in zip(bases, combo, strict=True))
        if best is None or (cost, -r) < (best[0], -best[1]):
            best = (cost, r, combo)
    picks: dict[str, CatalogueEntry] = {}
    for k, base in enumerate(bases):
        bearing = scenario.bearings[groups[base][0].bearing_id]
        if best is None:
            note = "kept: no combination of catalogue bearings meets the target"
            decided[base] = PositionChoice(m.id, base, bearing.id, None, None, None, None, note,
                                           r_now[base], r_now[base])
            continue
        pick, r_opt, _ = options[base][best[2][k]]
        if pick is None:
            decided[base] = PositionChoice(m.id, base, bearing.id, r_opt, None, None, None,
                                           "kept: the cheapest combination keeps it",
                                           r_now[base], r_now[base])
        else:
            decided[base] = PositionChoice(m.id, base, bearing.id, r_opt, None,
                                           pick.designation, pick.dynamic_rating_N, "",
                                           r_now[base], r_opt)
            picks[base] = pick
    return [(decided[b], picks.get(b)) for b in groups]


def _kept_choice(scenario: Scenario, m: Machine, pos: Position, base: str, share: float | None,
                 t_op: float, r_now: float, note: str) -> PositionChoice:
    bearing = scenario.bearings[pos.bearing_id]
    need = None
    if share is not None and pos.derived is not None:
        need = _needed_rating(bearing.dynamic_rating_N, pos.derived, pos.field_factor, t_op,
                              share, bearing.bearing_type.life_exponent)
    return PositionChoice(m.id, base, bearing.id, share, need, None, None, note, r_now, r_now)


def _choose(scenario: Scenario, m: Machine, pos: Position, base: str, share: float,
            t_op: float, r_now: float, catalogue: Sequence[CatalogueEntry],
            bore: BoreChoice) -> tuple[PositionChoice, CatalogueEntry | None]:
    """The smallest candidate whose own life gives the position its share."""
    bearing = scenario.bearings[pos.bearing_id]
    derived = pos.derived
    assert derived is not None
    for entry in _candidates(catalogue, bearing, _bore_of(bearing, bore)):
        life = _life_with(entry, bearing, derived)
        if life is None:
            continue
        r_new = _reliability(life, pos.field_factor, t_op)
        if r_new >= share:
            need = _needed_rating(entry.dynamic_rating_N, life, pos.field_factor, t_op, share,
                                  bearing.bearing_type.life_exponent)
            return PositionChoice(m.id, base, bearing.id, share, need, entry.designation,
                                  entry.dynamic_rating_N, "", r_now, r_new), entry
    limit = _bore_of(bearing, bore)
    where = "" if limit is None else f" of bore {limit:g} mm"
    note = (f"kept: no {bearing.bearing_type.value} bearing{where} in the catalogue meets its "
            "share")
    return _kept_choice(scenario, m, pos, base, share, t_op, r_now, note), None


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
    elif all(k in old for k in ("e", "X", "Y")):
        entry.update({k: old[k] for k in ("e", "X", "Y", "X1", "Y1", "X0", "Y0",
                                          "induced_thrust_factor") if k in old})
    if pick.bore_mm is not None:
        entry["bore_mm"] = pick.bore_mm
    elif "bore_mm" in old:
        entry["bore_mm"] = old["bore_mm"]
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

"""Each record's catalogue life, from the scenario the records belong to.

A record names its position (``position``), the bearing fitted there
(``bearing``) and, optionally, the machine (``machine``). The scenario's
positions with that position id (``"drive-end"`` also matches the expanded
``"drive-end#2"``), that bearing, and — when the record's machine is one of
the scenario's machine ids or unit names — that machine, are the positions
the record describes. Their catalogue life is the scenario's own life model
scaled by the rating life, **with a_ISO when the scenario uses it**: the
position's life before any ``field_factor``. So a factor fitted against it
does not count lubrication twice, and replaces (does not multiply) a factor
the scenario already has.

When the positions a record may describe have different catalogue lives
(same position name, different loads), the record is ambiguous and the
machine column must say which; that is an error, never a silent average.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from fleetsim.errors import InputError
from fleetsim.fit.records import FieldRecords
from fleetsim.life import WeibullShape
from fleetsim.scenario.model import Position, Scenario


@dataclass(frozen=True)
class CatalogueLife:
    """The catalogue life of a group of records, from the scenario.

    Attributes
    ----------
    model
        The scenario's life model in units of L10 (shape, location, scale).
    l10_h
        Catalogue L10 per record, hours (a_ISO·L10 where the scenario uses
        a_ISO), aligned with the group's records.
    basic_l10_h
        The basic rating life L10 per record, hours (without a_ISO).
    a_iso
        a_ISO of the positions, or None when the scenario does not use it.
    positions
        ``"machine/position"`` of every scenario position the records describe.
    field_factor_now
        The factor those positions have in the scenario today (1 = none).
    bearings
        Bearing ids of those positions.
    """

    model: WeibullShape
    l10_h: np.ndarray
    basic_l10_h: np.ndarray
    a_iso: float | None
    positions: tuple[str, ...]
    field_factor_now: float
    bearings: tuple[str, ...]

    @property
    def typical_l10_h(self) -> float:
        """The group's catalogue L10, hours (the geometric mean when records differ)."""
        return float(np.exp(np.mean(np.log(self.l10_h))))

    @property
    def mixed(self) -> bool:
        """True when the group's records have different catalogue lives."""
        return bool(np.ptp(self.l10_h) > 1e-9 * self.l10_h.max())


def _base(position_id: str) -> str:
    return position_id.split("#", 1)[0]


def _unit_names(machine_id: str, count: int) -> set[str]:
    return {machine_id} | {f"{machine_id}#{k}" for k in range(1, count + 1)}


def _key(p: Position) -> tuple[float, float, float, float, float]:
    d = p.derived
    assert d is not None
    life = d.distribution
    return (life.shape, life.scale_h, life.location_h, d.rating_life_h, d.a_iso or 0.0)


def catalogue_lives(records: FieldRecords, scenario: Scenario, group: str) -> CatalogueLife:
    """The catalogue life of every record of one group.

    Raises
    ------
    InputError
        Naming the records file, row and column: a record matches no scenario
        position, matches positions of different catalogue lives, or matches a
        position with an explicit ``life`` (no catalogue life), or the group's
        positions differ in life model or a_ISO use.
    """
    src = records.source
    cols = set(records.columns)
    machines = {m.id: m for m in scenario.machines}
    l10, basic = [], []
    found: dict[str, Position] = {}
    keys: set[tuple[float, ...]] = set()
    for _, rec in records.table.iterrows():
        row = int(rec["row"])
        cands: list[tuple[str, Position]] = []
        rec_machine = str(rec["machine"]) if "machine" in cols else ""
        named = [
            mid for mid, m in machines.items() if rec_machine in _unit_names(mid, m.count)
        ]
        for mid, m in machines.items():
            if named and mid not in named:
                continue
            for p in m.positions:
                if "position" in cols and _base(p.id) != rec["position"]:
                    continue
                if "bearing" in cols and rec["bearing"] and p.bearing_id != rec["bearing"]:
                    continue
                cands.append((f"{mid}/{p.id}", p))
        what = ", ".join(
            f"{c} {rec[c]!r}" for c in ("machine", "position", "bearing") if c in cols and rec[c]
        )
        if not cands:
            raise InputError(
                f"{src}: row {row}",
                f"no position of the scenario {scenario.source} matches {what}",
            )
        explicit = [w for w, p in cands if p.derived is None]
        if explicit:
            raise InputError(
                f"{src}: row {row}",
                f"the scenario position {explicit[0]} has an explicit life, so no catalogue life "
                "to compare with",
            )
        distinct = {_key(p) for _, p in cands}
        if len(distinct) > 1:
            lives = sorted({f"{p.derived.rating_life_h:,.0f} h" for _, p in cands if p.derived})
            raise InputError(
                f"{src}: row {row}",
                f"{what} matches scenario positions of different catalogue lives "
                f"(L10 {', '.join(lives)}); add a machine column naming the scenario's machines",
            )
        keys |= distinct
        p0 = cands[0][1]
        assert p0.derived is not None
        l10.append(float(p0.derived.distribution.life_at_reliability(0.9)))
        basic.append(p0.derived.rating_life_h)
        found.update(cands)
    derived = [p.derived for p in found.values() if p.derived is not None]
    models = {d.model for d in derived}
    isos = {d.a_iso is not None for d in derived}
    if len(models) > 1 or len(isos) > 1:
        raise InputError(
            f"{src}: {group}",
            "the group's scenario positions differ in life model or in the use of a_ISO; "
            "group the records so that each group shares one life model",
        )
    factors = {p.field_factor for p in found.values()}
    a_isos = {d.a_iso for d in derived}
    return CatalogueLife(
        model=next(iter(models)),
        l10_h=np.array(l10),
        basic_l10_h=np.array(basic),
        a_iso=next(iter(a_isos)) if len(a_isos) == 1 else math.nan,
        positions=tuple(found),
        field_factor_now=next(iter(factors)) if len(factors) == 1 else math.nan,
        bearings=tuple(dict.fromkeys(p.bearing_id for p in found.values())),
    )

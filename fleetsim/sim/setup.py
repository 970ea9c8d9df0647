"""What the units of one replication start from: shared context, machine types, positions.

:class:`SimContext` is what all units of a replication share (environment,
recorder, crews, stores, groups, random streams). :class:`MachineSetup` is
built once per machine type and draws, for all its units at once, the
bearings fitted at the start. :class:`PositionState` is the current bearing
of one position of one unit and its counters; :mod:`fleetsim.sim.unit` and
:mod:`fleetsim.sim.quiet` change it as the bearing ages, fails and is renewed.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import simpy

from fleetsim.life import LifeDistribution
from fleetsim.scenario.model import Crews, Machine, Position
from fleetsim.sim.crews import CrewPool
from fleetsim.sim.discount import Discount
from fleetsim.sim.groups import GroupTracker
from fleetsim.sim.records import Recorder
from fleetsim.sim.stores import Claim, SpareStore, UnlimitedSupply
from fleetsim.sim.streams import DETECTION, LIFE, PF, STOP, Streams

INF = math.inf

#: ``life_sampler(unit_id, position_id, k)`` → operating hours from fitting to the
#: first detectable defect of the k-th bearing in that position (k = 0 is the
#: bearing fitted at the start: its *remaining* life beyond the starting age).
LifeSampler = Callable[[str, str, int], float]


@dataclass
class SimContext:
    """What all units of one replication share."""

    env: simpy.Environment
    recorder: Recorder
    crews: CrewPool
    crews_spec: Crews
    stores: dict[str, SpareStore | UnlimitedSupply]
    groups: GroupTracker
    streams: Streams
    life_sampler: LifeSampler | None = None
    discount: Discount | None = None


class MachineSetup:
    """What every unit of one machine type shares in one replication.

    Built once per machine type by :func:`~fleetsim.sim.engine.simulate`, so a
    unit's own set-up is little more than its positions' states. It also draws,
    for the whole machine type at once, the bearings fitted at the start: their
    remaining lives beyond the starting ages (row k = 0 of the life table, or
    ``life_sampler(unit, position, 0)``), P-F intervals and stop quantiles.
    """

    __slots__ = ("machine", "index", "start_ages_h", "stores", "life_table", "pf_table",
                 "stop_table", "random_stops", "opportunistic", "quiet",
                 "first_defect_h", "first_fail_h", "first_stop_u")

    def __init__(self, ctx: SimContext, machine: Machine, machine_index: int) -> None:
        specs = machine.positions
        n_pos = len(specs)
        streams = ctx.streams
        crews = ctx.crews_spec
        self.machine = machine
        self.index = machine_index
        ages = machine.ages_h()
        #: starting ages in hours, [unit][position]
        self.start_ages_h: list[list[float]] = ages.tolist()
        self.stores = [ctx.stores[p.bearing_id] for p in specs]
        self.random_stops = crews.planned_repair.kind != "fixed" or crews.unplanned_repair.kind != "fixed"
        # Tables are keyed streams: leaving out the ones nothing reads shifts no other stream.
        self.life_table = streams.table(machine_index, machine.count, n_pos, LIFE)
        self.pf_table = (streams.table(machine_index, machine.count, n_pos, PF)
                         if any(p.policy.pf_interval is not None for p in specs) else None)
        self.stop_table = (streams.table(machine_index, machine.count, n_pos, STOP)
                           if self.random_stops else None)
        self.opportunistic = any(p.policy.opportunistic_share is not None for p in specs)
        # Nothing outside a unit can wake it when every position is run-to-failure or
        # age-replaced without a P-F interval, spares are unlimited, crews too, and no
        # group holds its planned work (the last is checked per unit).
        self.quiet = ctx.crews.resource is None and all(
            p.policy.kind in ("run-to-failure", "age") and p.policy.pf_interval is None
            and not store.limited
            for p, store in zip(specs, self.stores, strict=True)
        )
        # The bearings fitted at the start (k = 0), for all units at once.
        sampler = ctx.life_sampler
        if sampler is None:
            u0 = self.life_table.row(0)
            life = np.empty_like(u0)
            same_life: dict[LifeDistribution, list[int]] = {}
            for j, p in enumerate(specs):
                same_life.setdefault(p.life, []).append(j)
            for dist, cols in same_life.items():
                life[:, cols] = dist.lives_from_uniform(u0[:, cols], ages[:, cols])
        else:
            life = np.array([[float(sampler(uid, p.id, 0)) for p in specs]
                             for uid in machine.unit_ids()])
        fail = life.copy()
        if self.pf_table is not None:
            pf0 = self.pf_table.row(0)
            for j, p in enumerate(specs):
                if p.policy.pf_interval is not None:
                    fail[:, j] += p.policy.pf_interval.quantiles(pf0[:, j])
        #: operating hours to the first defect and to the failure, [unit][position]
        self.first_defect_h: list[list[float]] = life.tolist()
        self.first_fail_h: list[list[float]] = fail.tolist()
        self.first_stop_u: list[list[float]] | None = (
            self.stop_table.row(0).tolist() if self.stop_table is not None else None
        )


class PositionState:
    """The current bearing of one position of one unit, and its counters."""

    __slots__ = (
        "id", "bearing_id", "policy", "life", "store", "interval_h", "is_age", "is_condition",
        "life_table", "pf_table", "stop_table", "machine_no", "unit_no", "slot", "_det_rng",
        "_streams", "k", "stop_u", "installed_op", "defect_op", "fail_op", "due_op", "defect_seen",
        "detected", "failed", "pending", "start_at", "claim",
        "failures", "planned", "opportunistic", "defects", "detections",
    )  # fmt: skip

    def __init__(
        self, spec: Position, setup: MachineSetup, streams: Streams, unit_no: int, slot: int
    ) -> None:
        """The position with the bearing fitted at the start (drawn by ``setup``)."""
        policy = spec.policy
        self.id = spec.id
        self.bearing_id = spec.bearing_id
        self.policy = policy
        self.life = spec.life
        self.store = setup.stores[slot]
        self.interval_h = policy.interval_h
        self.is_age = policy.kind == "age"
        self.is_condition = policy.kind == "condition"
        self._streams = streams
        self.machine_no = setup.index
        self.unit_no = unit_no
        self.slot = slot
        self.life_table = setup.life_table
        self.pf_table = setup.pf_table
        self.stop_table = setup.stop_table
        self._det_rng: np.random.Generator | None = None
        self.k = 1
        stop_u = setup.first_stop_u
        self.stop_u = stop_u[unit_no][slot] if stop_u is not None else 0.5
        self.installed_op = -setup.start_ages_h[unit_no][slot]
        self.defect_op = setup.first_defect_h[unit_no][slot]
        self.fail_op = setup.first_fail_h[unit_no][slot]
        self.due_op = self.installed_op + self.interval_h if self.is_age and self.interval_h else INF
        self.defect_seen = self.detected = self.failed = self.pending = False
        self.start_at = INF
        self.claim: Claim | None = None
        self.failures = self.planned = self.opportunistic = self.defects = self.detections = 0

    @property
    def det_rng(self) -> np.random.Generator:
        """Generator of this position's detection draws (created on first use)."""
        if self._det_rng is None:
            self._det_rng = self._streams.position(self.machine_no, self.unit_no, self.slot,
                                                   DETECTION)
        return self._det_rng

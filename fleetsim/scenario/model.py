"""The validated fleet model: frozen objects the engine and the planners read.

A scenario file is parsed and validated (:mod:`fleetsim.scenario.loader`)
into a :class:`Scenario`. Every quantity is in the library's units: hours for
durations and ages, newtons for forces, rev/min for speeds, money in the
scenario's currency. Nothing here reads files or simulates.

Semantics (also stated in the README):

* A position's life is a :class:`~fleetsim.life.LifeDistribution` in
  operating hours; it ages only while its machine runs. A machine runs a share
  ``operating_share`` of calendar time, modelled as ageing at that rate per
  calendar hour while the machine is up.
* The life ends at the first detectable defect (P), the rating life's
  criterion; functional failure (F) follows after the position's P-F interval
  (:attr:`Position.pf_interval`, zero when none is given) under *every*
  policy. A policy only decides inspections and responses: a condition policy
  that never detects gives exactly the run-to-failure failures.
* Replacement restores a position to new (renewal).
* A :class:`Group` is a k-out-of-n set of machine units: up while at least
  ``need`` of its units are up.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Literal

import numpy as np

from fleetsim.bounds import (
    FIELD_FACTOR,
    MAX_COUNT,
    MAX_REPLICATIONS,
    MONEY,
    PROBABILITY,
    SHARE,
    Range,
    check_count,
    check_force,
    check_horizon,
    check_time,
)
from fleetsim.errors import InputError
from fleetsim.life import BearingType, LifeDistribution, LoadFactors, PositionLife
from fleetsim.scenario.duration import Duration

HOURS_PER_YEAR = 8766.0  # 365.25 days
PolicyKind = Literal["run-to-failure", "age", "block", "condition"]


@dataclass(frozen=True)
class Study:
    """Run settings: name, horizon in hours, replications, seed."""

    name: str
    horizon_h: float
    replications: int
    seed: int

    def __post_init__(self) -> None:
        from fleetsim.seed import check_seed

        check_horizon(self.horizon_h, "Study.horizon_h")
        check_count(self.replications, "Study.replications", 1, MAX_REPLICATIONS,
                    "a number of replications")
        check_seed(self.seed, "Study.seed")


@dataclass(frozen=True)
class Costs:
    """Money per event, in the scenario's currency.

    Attributes
    ----------
    currency
        Currency label, e.g. ``"EUR"``.
    planned_replacement
        Labour and consumables of a planned bearing change (the bearing's own
        price is added separately).
    failure
        Extra cost of a functional failure: secondary damage and call-out.
    downtime_per_hour
        Lost production per machine-hour down.
    inspection
        Cost of one inspection of one machine.
    holding_rate_per_year
        Holding cost of spares as a share of part value per year.
    discount_rate_per_year
        Annual discount rate (0 = undiscounted).
    """

    currency: str = "EUR"
    planned_replacement: float = 0.0
    failure: float = 0.0
    downtime_per_hour: float = 0.0
    inspection: float = 0.0
    holding_rate_per_year: float = 0.0
    discount_rate_per_year: float = 0.0

    def __post_init__(self) -> None:
        for name in ("planned_replacement", "failure", "downtime_per_hour", "inspection"):
            MONEY.check(getattr(self, name), f"Costs.{name}")
        Range(0.0, 1.0, "a share of part value per year").check(
            self.holding_rate_per_year, "Costs.holding_rate_per_year")
        rate = Range(0.0, 1.0, "a discount rate per year").check(
            self.discount_rate_per_year, "Costs.discount_rate_per_year")
        if rate >= 1.0:
            raise InputError("Costs.discount_rate_per_year",
                             f"expected a discount rate per year below 1, got {rate:g}")


@dataclass(frozen=True)
class Bearing:
    """A bearing kind of the plant (a catalogue entry and its commercial data).

    Attributes
    ----------
    id
        The plant's designation (invented in demos).
    bearing_type
        Kind of bearing.
    dynamic_rating_N, static_rating_N, fatigue_limit_N
        C, C0, Cu in N (C0 and Cu may be None).
    price
        Unit price in the scenario's currency.
    factors
        e, X, Y (X1, Y1, X0, Y0) for contact-angle bearings.
    bore_mm
        Bore diameter, mm (None if not given).
    """

    id: str
    bearing_type: BearingType
    dynamic_rating_N: float
    static_rating_N: float | None = None
    fatigue_limit_N: float | None = None
    price: float = 0.0
    factors: LoadFactors | None = None
    bore_mm: float | None = None

    def __post_init__(self) -> None:
        check_force(self.dynamic_rating_N, "Bearing.dynamic_rating_N", positive=True)
        for name in ("static_rating_N", "fatigue_limit_N"):
            if getattr(self, name) is not None:
                check_force(getattr(self, name), f"Bearing.{name}", positive=True)
        MONEY.check(self.price, "Bearing.price")


@dataclass(frozen=True)
class Policy:
    """The maintenance policy of a position.

    Attributes
    ----------
    kind
        ``"run-to-failure"``, ``"age"`` (replace at ``interval_h`` operating
        hours or at failure), ``"block"`` (replace on a calendar interval
        ``interval_h`` whatever the age) or ``"condition"`` (inspect every
        ``inspection_every_h`` calendar hours).
    interval_h
        Replacement interval in hours (operating hours for age, calendar for block).
    block_scope
        For block replacement: ``"machine"`` (all positions of the machine unit
        at once) or ``"position"`` (each position on its own calendar).
    inspection_every_h
        Calendar hours between inspections (condition policy).
    detection
        Probability that one inspection inside the P-F window finds the defect.
    respond_within_h
        Hours from detection to the planned replacement.
    opportunistic_share
        When the machine stops, also replace this position if its age has
        reached this share of ``interval_h``, both on the interval's own clock
        (:attr:`opportunistic_age_h`): operating hours under age replacement,
        calendar hours since the bearing was fitted under block replacement
        (None: never).
    skip_younger_than_h
        Block replacement only: at a block date, a position whose bearing was
        fitted (after a failure or an opportunistic change) less than this
        many calendar hours before is not changed; it waits for the next block
        date. This is the modified block replacement policy (Berg, M. and
        Epstein, B., "A modified block replacement policy", Naval Research
        Logistics Quarterly 23 (1976) 15-24; from memory). 0 (the default) is
        the plain block policy.

    Raises
    ------
    InputError
        On construction, when the policy lacks what its kind needs or a value
        is out of range (a policy built in Python gets the same one-line
        errors as one read from a scenario file).
    """

    kind: PolicyKind = "run-to-failure"
    interval_h: float | None = None
    block_scope: Literal["machine", "position"] = "machine"
    inspection_every_h: float | None = None
    detection: float = 1.0
    respond_within_h: float = 0.0
    opportunistic_share: float | None = None
    skip_younger_than_h: float = 0.0

    def __post_init__(self) -> None:
        kinds = ("run-to-failure", "age", "block", "condition")
        if self.kind not in kinds:
            raise InputError("Policy.kind", f"expected one of {', '.join(kinds)}, got {self.kind!r}")
        if self.kind in ("age", "block"):
            if self.interval_h is None:
                raise InputError("Policy.interval_h",
                                 f"a {self.kind} policy needs an interval > 0 h, got None")
            check_time(self.interval_h, "Policy.interval_h", positive=True)
        if self.block_scope not in ("machine", "position"):
            raise InputError("Policy.block_scope",
                             f"expected 'machine' or 'position', got {self.block_scope!r}")
        if self.kind == "condition":
            if self.inspection_every_h is None:
                raise InputError("Policy.inspection_every_h",
                                 "a condition policy needs an inspection interval > 0 h, got None")
            check_time(self.inspection_every_h, "Policy.inspection_every_h", positive=True)
        PROBABILITY.check(self.detection, "Policy.detection")
        check_time(self.respond_within_h, "Policy.respond_within_h")
        share = self.opportunistic_share
        if share is not None:
            SHARE.check(share, "Policy.opportunistic_share")
        skip = check_time(self.skip_younger_than_h, "Policy.skip_younger_than_h")
        if skip > 0 and self.kind != "block":
            raise InputError("Policy.skip_younger_than_h",
                             f"applies to block policies only, not {self.kind!r}")

    @property
    def opportunistic_age_h(self) -> float:
        """Age at which the position is changed in another job's stop, hours (inf: never).

        Operating hours for an age policy, calendar hours since fitting for a
        block policy: the threshold and the age it is compared with are on the
        interval's own clock.
        """
        if self.opportunistic_share is None or self.interval_h is None:
            return math.inf
        return self.opportunistic_share * self.interval_h


@dataclass(frozen=True)
class Position:
    """A bearing position of a machine.

    Attributes
    ----------
    id
        Position name, unique within its machine (e.g. ``"drive-end"``).
    bearing_id
        The :class:`Bearing` fitted here.
    life
        Life to the first detectable defect, operating hours (field factor applied).
    policy
        Maintenance policy of this position.
    derived
        The ratings-and-duty derivation (P, L10, ...), or None when the life
        was given explicitly.
    field_factor
        Multiplier already applied to the catalogue life (1 = catalogue).
    pf_interval
        P-F interval: operating hours from the first detectable defect (P) to
        functional failure (F). It belongs to the failure process, so it is the
        same under every policy. None means zero (the defect is the failure).
    """

    id: str
    bearing_id: str
    life: LifeDistribution
    policy: Policy
    derived: PositionLife | None = None
    field_factor: float = 1.0
    pf_interval: Duration | None = None

    def __post_init__(self) -> None:
        where = f"Position {self.id!r}"
        if not isinstance(self.life, LifeDistribution):
            raise InputError(f"{where}.life", f"expected a LifeDistribution, got {self.life!r}")
        if not isinstance(self.policy, Policy):
            raise InputError(f"{where}.policy", f"expected a Policy, got {self.policy!r}")
        FIELD_FACTOR.check(self.field_factor, f"{where}.field_factor")
        if self.pf_interval is not None and not isinstance(self.pf_interval, Duration):
            raise InputError(f"{where}.pf_interval",
                             f"expected a Duration or None, got {self.pf_interval!r}")


@dataclass(frozen=True)
class Machine:
    """A machine type with ``count`` identical units.

    Attributes
    ----------
    id
        Machine name; units are named ``f"{id}#{k}"`` for k = 1..count (just
        ``id`` when count is 1).
    count
        Number of identical units.
    operating_share
        Share of calendar time the machine runs (operating hours per year / 8766).
    starting_age_h
        Operating age of every position at the start, hours (the default of
        positions without an age of their own in ``position_ages_h``).
    positions
        The bearing positions.
    position_ages_h
        Operating age at the start of each position of each unit, hours, shape
        ``count × len(positions)`` in unit and position order (row ``u`` is
        unit ``unit_ids()[u]``); None: every position is ``starting_age_h`` old.
    ages_source
        File the ages came from (for messages and the ``check`` output), or None.
    """

    id: str
    count: int
    operating_share: float
    starting_age_h: float
    positions: tuple[Position, ...]
    position_ages_h: tuple[tuple[float, ...], ...] | None = None
    ages_source: str | None = None

    def __post_init__(self) -> None:
        where = f"Machine {self.id!r}"
        check_count(self.count, f"{where}.count", 1, MAX_COUNT, "a number of units")
        SHARE.check(self.operating_share, f"{where}.operating_share")
        check_time(self.starting_age_h, f"{where}.starting_age_h")
        if not self.positions:
            raise InputError(f"{where}.positions", "expected at least one bearing position")
        ages = self.position_ages_h
        if ages is None:
            return
        n_pos = len(self.positions)
        if len(ages) != self.count or any(len(row) != n_pos for row in ages):
            raise InputError(
                f"{where}.position_ages_h",
                f"expected {self.count} rows (units) of {n_pos} ages (positions)",
            )
        # finite and >= 0 only: the stationary ages of the policy view
        # (fleetsim.study.policy_view) may lie beyond 1,000 years
        a = np.array(ages, dtype=float).reshape(self.count, n_pos)
        with np.errstate(invalid="ignore"):
            ok = np.isfinite(a) & (a >= 0)
        if not ok.all():
            u, k = np.argwhere(~ok)[0]
            raise InputError(f"{where}.position_ages_h[{u}][{k}]",
                             f"expected a finite age >= 0 h, got {a[u, k]:g} h")

    def unit_ids(self) -> list[str]:
        """Names of the machine's units."""
        if self.count == 1:
            return [self.id]
        return [f"{self.id}#{k}" for k in range(1, self.count + 1)]

    def age_h(self, unit_number: int, position_index: int) -> float:
        """Operating age in hours at the start of one position of one unit.

        Parameters
        ----------
        unit_number
            Index of the unit, from 0 (unit ``unit_ids()[unit_number]``).
        position_index
            Index of the position in :attr:`positions`, from 0.
        """
        if self.position_ages_h is None:
            return self.starting_age_h
        return self.position_ages_h[unit_number][position_index]

    def ages_h(self) -> np.ndarray:
        """Starting ages of every position of every unit, hours, shape (count, positions)."""
        if self.position_ages_h is None:
            return np.full((self.count, len(self.positions)), float(self.starting_age_h))
        return np.array(self.position_ages_h, dtype=float).reshape(self.count, len(self.positions))


@dataclass(frozen=True)
class Group:
    """A k-out-of-n group of machine units: up while at least ``need`` units are up.

    With ``hold_planned_work``, planned work on a member waits while stopping it
    would leave fewer than ``need`` units running (as a planner would schedule
    it); failures still stop units whenever they happen.
    """

    id: str
    machines: tuple[str, ...]
    need: int
    hold_planned_work: bool = False
    #: lost production per hour the group is down (fewer than ``need`` units up)
    downtime_per_hour: float = 0.0

    def __post_init__(self) -> None:
        check_count(self.need, f"Group {self.id!r}.need", 1, MAX_COUNT * 1000,
                    "a number of units")
        MONEY.check(self.downtime_per_hour, f"Group {self.id!r}.downtime_per_hour")


@dataclass(frozen=True)
class Stock:
    """Stores policy of one bearing kind: (s, S) with lead times.

    Attributes
    ----------
    initial
        Spares on hand at the start.
    reorder_point
        s: order when the inventory position (on hand + on order − backorders)
        falls to s or below.
    order_up_to
        S: order enough to bring the inventory position back to S.
    lead_time
        Normal replenishment lead time.
    emergency_lead_time
        Lead time of an emergency order placed when a failure finds no spare
        (None: no emergency orders).
    emergency_premium
        Extra cost of one emergency order.
    order_ahead
        Order the spare of every planned change (age due, block date) one
        planning lead time (:attr:`order_ahead_h`) before it falls due, kept
        for that change, instead of drawing on the (s, S) stock
        (:mod:`fleetsim.sim.stores`).
    """

    initial: int
    reorder_point: int
    order_up_to: int
    lead_time: Duration
    emergency_lead_time: Duration | None = None
    emergency_premium: float = 0.0
    order_ahead: bool = False

    @property
    def order_ahead_h(self) -> float:
        """Planning lead time in hours: how long before a planned change its spare is ordered.

        The lead time itself when it is fixed, else its 90th percentile (nine
        orders in ten arrive in time).
        """
        return float(self.lead_time.quantile(0.9))

    def __post_init__(self) -> None:
        most = 1_000_000_000
        check_count(self.initial, "Stock.initial", 0, most, "a number of bearings")
        check_count(self.reorder_point, "Stock.reorder_point", -1, most, "a number of bearings")
        check_count(self.order_up_to, "Stock.order_up_to", 0, most, "a number of bearings")
        if not self.reorder_point < self.order_up_to:
            raise InputError("Stock.reorder_point",
                             f"expected reorder point s < order-up-to S, got s = "
                             f"{self.reorder_point} and S = {self.order_up_to}")
        for name in ("lead_time", "emergency_lead_time"):
            value = getattr(self, name)
            if not isinstance(value, Duration) and not (value is None and name != "lead_time"):
                raise InputError(f"Stock.{name}", f"expected a Duration, got {value!r}")
        MONEY.check(self.emergency_premium, "Stock.emergency_premium")


@dataclass(frozen=True)
class Crews:
    """Maintenance crews: ``count`` (None = unlimited) and repair durations."""

    count: int | None = None
    planned_repair: Duration = field(default_factory=lambda: Duration.fixed(0.0))
    unplanned_repair: Duration = field(default_factory=lambda: Duration.fixed(0.0))

    def __post_init__(self) -> None:
        if self.count is not None:
            check_count(self.count, "Crews.count", 1, 1_000_000, "a number of crews")
        for name in ("planned_repair", "unplanned_repair"):
            if not isinstance(getattr(self, name), Duration):
                raise InputError(f"Crews.{name}",
                                 f"expected a Duration, got {getattr(self, name)!r}")


@dataclass(frozen=True)
class Scenario:
    """A whole validated fleet study.

    Attributes
    ----------
    study, costs, crews
        Settings.
    bearings
        Bearing kinds by id.
    machines
        Machine types (each with ``count`` units).
    groups
        k-out-of-n groups.
    stores
        Stock policy by bearing id; a bearing without an entry has unlimited spares.
    life_model
        Name of the default life model (``"iso281"``, ``"textbook"`` or ``"custom"``).
    source
        File the scenario came from (for messages), or ``"<memory>"``.
    digest
        SHA-256 of the source text (for the run summary).
    """

    study: Study
    costs: Costs
    bearings: dict[str, Bearing]
    machines: tuple[Machine, ...]
    groups: tuple[Group, ...] = ()
    stores: dict[str, Stock] = field(default_factory=dict)
    crews: Crews = field(default_factory=Crews)
    life_model: str = "iso281"
    source: str = "<memory>"
    digest: str = ""

    def __post_init__(self) -> None:
        for m in self.machines:
            for p in m.positions:
                if p.bearing_id not in self.bearings:
                    raise InputError(f"machine {m.id!r}.position {p.id!r}.bearing",
                                     f"expected a defined bearing, got {p.bearing_id!r}")
        for g in self.groups:
            try:
                n = len(self.group_members(g))
            except KeyError as exc:
                raise InputError(f"group {g.id!r}.machines",
                                 f"expected defined machines or units, got {exc.args[0]!r}") from None
            if not 1 <= g.need <= n:
                raise InputError(f"group {g.id!r}.need", f"expected 1 <= need <= {n} units, got {g.need}")

    def machine(self, machine_id: str) -> Machine:
        """The machine type named ``machine_id`` (KeyError if none)."""
        for m in self.machines:
            if m.id == machine_id:
                return m
        raise KeyError(machine_id)

    def unit_index(self) -> dict[str, int]:
        """Global index of every machine unit (machines in order, units 1..count)."""
        out: dict[str, int] = {}
        for m in self.machines:
            for uid in m.unit_ids():
                out[uid] = len(out)
        return out

    def group_members(self, group: Group) -> list[int]:
        """Global unit indexes of a group's members.

        A member may name a machine type (all its units) or one unit
        (``"pump#2"``).
        """
        units = self.unit_index()
        out: list[int] = []
        for name in group.machines:
            if name in units:
                out.append(units[name])
            else:
                m = self.machine(name)  # KeyError for an unknown name
                out.extend(units[u] for u in m.unit_ids())
        return out

    @property
    def position_count(self) -> int:
        """Number of bearing positions in the whole fleet (units × positions)."""
        return sum(m.count * len(m.positions) for m in self.machines)

    @property
    def holding_groups(self) -> list[str]:
        """Ids of the groups whose hold on planned work can delay some: ``hold_planned_work``
        and a member with planned work (an age, block or condition position). A unit
        whose positions all run to failure asks for no planned stop: a hold changes
        nothing there."""
        held = [g for g in self.groups if g.hold_planned_work]
        if not held:
            return []
        planned = [any(p.policy.kind != "run-to-failure" for p in m.positions)
                   for m in self.machines for _ in range(m.count)]
        return [g.id for g in held if any(planned[u] for u in self.group_members(g))]

    @property
    def independent_positions(self) -> bool:
        """True when no stores or crews couple the positions (vector engine possible)."""
        return not self.stores and self.crews.count is None

"""``[[machine]]`` tables and their ``[[machine.position]]`` entries.

A position's life is derived from its bearing's ratings and its loads, speed
or duty cycle through :func:`fleetsim.life.position_life`, or given
explicitly as a field distribution in operating hours; errors raised by
:mod:`fleetsim.life` are re-raised with the scenario key path in front.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

from fleetsim.bounds import (
    APPLICATION_FACTOR,
    FIELD_FACTOR,
    MAX_COUNT,
    MIN_TIME_H,
    ROTATION_FACTOR,
    VISCOSITY_RATIO,
)
from fleetsim.errors import InputError
from fleetsim.life import (
    Arrangement,
    BearingRating,
    DutyStep,
    LifeDistribution,
    Lubrication,
    PositionLife,
    WeibullShape,
    position_life,
)
from fleetsim.scenario.model import HOURS_PER_YEAR, Bearing, Duration, Machine, Policy, Position
from fleetsim.scenario.policies import read_policy
from fleetsim.scenario.reader import Table, join, show, suggest

MACHINE_KEYS = ("id", "count", "operating_hours_per_year", "starting_age", "ages", "position")
POSITION_KEYS = (
    "id",
    "count",
    "bearing",
    "radial_load",
    "radial_load_b",
    "axial_load",
    "arrangement",
    "speed",
    "duty",
    "application_factor",
    "rotation_factor",
    "viscosity_ratio",
    "contamination",
    "life",
    "field_factor",
    "policy",
    "pf_interval",
)
DUTY_KEYS = ("share", "radial_load", "radial_load_b", "axial_load", "speed", "viscosity_ratio")
FIELD_LIFE_KEYS = ("shape", "scale", "location")
# Keys that describe loads; not allowed next to an explicit life.
_LOAD_KEYS = (
    "radial_load",
    "radial_load_b",
    "axial_load",
    "arrangement",
    "speed",
    "duty",
    "application_factor",
    "rotation_factor",
    "viscosity_ratio",
    "contamination",
)


@dataclass(frozen=True)
class LifeDefaults:
    """Scenario-wide ``[life]`` settings: the model in units of L10, κ and e_C (or None)."""

    model: WeibullShape
    viscosity_ratio: float | None
    contamination: float | None
    #: default P-F interval of every position (None: zero)
    pf_interval: Duration | None = None


@dataclass(frozen=True)
class BearingIndex:
    """Bearings by id and the key path where each was defined."""

    bearings: dict[str, Bearing]
    paths: dict[str, str]
    #: P-F interval given on the [[bearing]] (the default of its positions)
    pf_intervals: dict[str, Duration] = field(default_factory=dict)


def read_machines(
    tables: list[Table],
    index: BearingIndex,
    defaults: LifeDefaults,
    default_policy: Policy,
) -> tuple[Machine, ...]:
    """Validate the ``[[machine]]`` tables into machines with expanded positions."""
    machines: list[Machine] = []
    seen: dict[str, str] = {}
    for t in tables:
        mid = t.identifier()
        if mid in seen:
            raise t.error("id", f"duplicate machine id {mid!r} (first defined at {seen[mid]})")
        seen[mid] = t.path
        count = t.integer("count", 1, minimum=1, maximum=MAX_COUNT, what="a number of units")
        hours = t.quantity("operating_hours_per_year", "time", HOURS_PER_YEAR, positive=True)
        if hours > HOURS_PER_YEAR * (1 + 1e-9):
            raise t.error(
                "operating_hours_per_year",
                f"expected running hours per year of 365.25 d, at most {HOURS_PER_YEAR:g} h, "
                f"got {show(t.raw('operating_hours_per_year'))} = {hours:g} h",
            )
        age = t.quantity("starting_age", "time", 0.0)
        positions: list[Position] = []
        pos_seen: dict[str, str] = {}
        for p in t.tables("position", POSITION_KEYS, required=True):
            for pos in _positions(p, index, defaults, default_policy):
                if pos.id in pos_seen:
                    raise p.error(
                        "id",
                        f"duplicate position id {pos.id!r} in machine {mid!r} "
                        f"(first defined at {pos_seen[pos.id]})",
                    )
                pos_seen[pos.id] = p.path
                positions.append(pos)
        machines.append(
            t.build(
                Machine,
                {"count": "count", "operating_share": "operating_hours_per_year",
                 "starting_age_h": "starting_age", "positions": "position"},
                id=mid,
                count=count,
                operating_share=min(hours / HOURS_PER_YEAR, 1.0),
                starting_age_h=age,
                positions=tuple(positions),
            )
        )
    return tuple(machines)


def _positions(
    t: Table, index: BearingIndex, defaults: LifeDefaults, default_policy: Policy
) -> list[Position]:
    pid = t.identifier()
    count = t.integer("count", 1, minimum=1, maximum=MAX_COUNT, what="a number of positions")
    bid = t.text("bearing")
    if bid not in index.bearings:
        raise t.error("bearing", f"no [[bearing]] with id {bid!r}{suggest(bid, index.bearings)}")
    bearing = index.bearings[bid]
    field_factor = t.number("field_factor", 1.0, within=FIELD_FACTOR)
    policy = default_policy
    if t.has("policy"):
        policy = read_policy(t.raw("policy"), join(t.path, "policy"), t.source)
    derived: PositionLife | None
    if t.has("life"):
        for key in _LOAD_KEYS:
            if t.has(key):
                raise t.error(
                    key,
                    "not used with an explicit life = {shape, scale, location}; "
                    "give either an explicit life or the loads and speed, not both",
                )
        life = _field_life(Table(t.raw("life"), join(t.path, "life"), t.source,
                                 (*FIELD_LIFE_KEYS, "family")))
        derived = None
    else:
        derived = _derive(t, bearing, index.paths[bid], defaults)
        life = derived.distribution
    if field_factor != 1.0:
        try:
            life = life.scaled(field_factor)
        except InputError as exc:
            raise t.error(
                "field_factor", f"the scaled life is out of range ({exc.expected})"
            ) from None
    pf = t.duration("pf_interval", None, positive=True)
    if pf is None:
        pf = index.pf_intervals.get(bid, defaults.pf_interval)
    if pf is None and policy.kind == "condition":
        raise t.error(
            "pf_interval",
            "a condition-monitored position needs a P-F interval (the window in which an "
            "inspection can find the defect): give pf_interval on the position, its "
            "[[bearing]] or in [life], e.g. pf_interval = '8 weeks'",
        )
    ids = [pid] if count == 1 else [f"{pid}#{k}" for k in range(1, count + 1)]
    return [
        Position(
            id=i,
            bearing_id=bid,
            life=life,
            policy=policy,
            derived=derived,
            field_factor=field_factor,
            pf_interval=pf,
        )
        for i in ids
    ]


def _field_life(t: Table) -> LifeDistribution:
    family = t.text("family", "weibull", choices=("weibull", "lognormal"))
    return t.build(
        LifeDistribution,
        {"shape": "shape", "scale_h": "scale", "location_h": "location"},
        shape=t.number("shape", what="a Weibull shape" if family == "weibull" else
                       "a lognormal σ of ln(life − location)"),
        scale_h=t.quantity("scale", "time", positive=True),
        location_h=t.quantity("location", "time", 0.0),
        family=family,
    )


def _duty(t: Table) -> list[DutyStep]:
    for key in ("radial_load", "radial_load_b", "axial_load", "speed"):
        if t.has(key):
            raise t.error(
                key, "give either duty = [...] or radial_load/axial_load/speed, not both"
            )
    raw = t.raw("duty")
    if not isinstance(raw, list) or not raw:
        raise t.error(
            "duty", "expected an array of steps [{share, radial_load, axial_load, speed}, ...]"
        )
    path = join(t.path, "duty")
    steps = [Table(v, join(path, i), t.source, DUTY_KEYS) for i, v in enumerate(raw)]
    out = []
    for s in steps:
        share = s.number(
            "share", minimum=0.0, exclusive_minimum=True, maximum=1.0, what="a share of time"
        )
        out.append(
            DutyStep(
                share=share,
                radial_load_N=s.quantity("radial_load", "force", 0.0),
                axial_load_N=s.quantity("axial_load", "force", 0.0),
                speed_rpm=s.quantity("speed", "speed", positive=True),
                radial_load_b_N=s.quantity("radial_load_b", "force", None),
                viscosity_ratio=s.number("viscosity_ratio", None, within=VISCOSITY_RATIO),
            )
        )
        if out[-1].radial_load_N == 0 and out[-1].axial_load_N == 0:
            raise s.error(
                "radial_load",
                "expected a positive radial or axial load, got both zero (or missing)",
            )
    total = sum(st.share for st in out)
    if abs(total - 1.0) > 0.01:
        raise t.error("duty", f"expected the shares to add up to 1, got {total:g}")
    return [
        DutyStep(st.share / total, st.radial_load_N, st.axial_load_N, st.speed_rpm,
                 st.radial_load_b_N, st.viscosity_ratio)
        for st in out
    ]


def _derive(t: Table, bearing: Bearing, bearing_path: str, defaults: LifeDefaults) -> PositionLife:
    if t.has("duty"):
        steps = _duty(t)
    else:
        radial = t.quantity("radial_load", "force")
        axial = t.quantity("axial_load", "force", 0.0)
        if radial == 0 and axial == 0:
            raise t.error("radial_load", "expected a positive radial or axial load, got both zero")
        steps = [
            DutyStep(
                1.0, radial, axial, t.quantity("speed", "speed", positive=True),
                t.quantity("radial_load_b", "force", None),
            )
        ]
    arrangement = t.text("arrangement", Arrangement.SINGLE.value,
                         choices=[a.value for a in Arrangement])
    application = t.number("application_factor", 1.0, within=APPLICATION_FACTOR)
    rotation = t.number("rotation_factor", 1.0, within=ROTATION_FACTOR)
    kappa = t.number("viscosity_ratio", defaults.viscosity_ratio, within=VISCOSITY_RATIO)
    e_c = t.probability("contamination", defaults.contamination, what="a contamination factor e_C")
    lubrication = None
    if kappa is None and e_c is not None and steps and all(
        st.viscosity_ratio is not None for st in steps
    ):
        kappa = steps[0].viscosity_ratio  # every step gives its own κ
    if e_c is None and any(st.viscosity_ratio is not None for st in steps):
        raise t.error(
            "contamination",
            "a duty step's viscosity_ratio needs contamination (on the position or in [life])",
        )
    if (kappa is None) != (e_c is None):
        missing = "contamination" if e_c is None else "viscosity_ratio"
        raise t.error(
            missing,
            "a_ISO needs both viscosity_ratio and contamination (on the position or in "
            f"[life]); only {'viscosity_ratio' if e_c is None else 'contamination'} is given",
        )
    if kappa is not None and e_c is not None:
        lubrication = Lubrication(viscosity_ratio=kappa, contamination=e_c)
    rating = BearingRating(
        bearing_type=bearing.bearing_type,
        dynamic_rating_N=bearing.dynamic_rating_N,
        static_rating_N=bearing.static_rating_N,
        fatigue_limit_N=bearing.fatigue_limit_N,
        factors=bearing.factors,
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            result = position_life(
                rating,
                steps,
                model=defaults.model,
                rotation_factor=rotation,
                application_factor=application,
                lubrication=lubrication,
                arrangement=arrangement,
            )
        except InputError as exc:
            raise _relabel(exc, t, bearing, bearing_path) from None
        except ArithmeticError:
            raise t.error(
                None, "the loads and speed give a rating life out of range; check their values"
            ) from None
    for w in caught:
        warnings.warn(f"{t.where()}: {w.message}", w.category, stacklevel=4)
    if not (math.isfinite(result.rating_life_h) and result.rating_life_h > 0):
        raise t.error(
            None, f"the rating life is not a positive number ({result.rating_life_h:g} h)"
        )
    if result.distribution.scale_h < MIN_TIME_H:
        # lives far below a second: an event storm at best, and their powers overflow
        raise t.error(
            None,
            f"the loads and speed give a rating life of {result.rating_life_h:.3g} h, below "
            "1 s; check the loads, speed and the bearing's dynamic_rating",
        )
    return result


_POSITION_WHERE = {
    "radial load": "radial_load",
    "radial load b": "radial_load_b",
    "arrangement": "arrangement",
    "axial load": "axial_load",
    "speed": "speed",
    "equivalent load": "radial_load",
    "rotation factor": "rotation_factor",
    "application factor": "application_factor",
    "viscosity ratio": "viscosity_ratio",
    "contamination": "contamination",
}
_BEARING_WHERE = {
    "static rating": "static_rating",
    "fatigue limit": "fatigue_limit",
    "dynamic rating": "dynamic_rating",
    "bearing": "type",
}


def _relabel(exc: InputError, t: Table, bearing: Bearing, bearing_path: str) -> InputError:
    """Put the scenario key path in front of an error raised by :mod:`fleetsim.life`."""
    where = exc.where
    if where in _BEARING_WHERE:
        path = join(bearing_path, _BEARING_WHERE[where])
        return InputError(
            f"{t.source}: {path}",
            f"{exc.expected} (bearing {bearing.id!r}, needed by {t.path})",
        )
    if where == "rating life":
        return InputError(t.where(), f"{exc.expected}; check the loads and speed")
    if where.startswith("duty["):
        return InputError(f"{t.where()}.{where}", exc.expected)
    key = _POSITION_WHERE.get(where)
    if key is None:
        return InputError(f"{t.where()}.{where.replace(' ', '_')}", exc.expected)
    if t.has("duty") and key in ("radial_load", "radial_load_b", "axial_load", "speed"):
        key = "duty"
    return InputError(t.where(key), exc.expected)

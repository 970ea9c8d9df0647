"""Read a scenario file (TOML) into the validated, frozen :class:`Scenario`.

The format is documented key by key in ``docs/scenario-format.md``. In short:
every physical quantity is a string with a unit (``"4.5 kN"``, ``"1480 rpm"``,
``"21 d"``); bare numbers only for counts, shares, probabilities, money,
κ, e_C and factors. Unknown keys are errors with a did-you-mean. Every error
is one :class:`~fleetsim.errors.InputError` whose ``where`` is
``"<file>: <key path>"`` (for example
``"pumps.toml: machine[0].position[1].radial_load"``).

Decisions fixed here:

* ``operating_hours_per_year`` is a time quantity meaning hours of running per
  year of 365.25 days (``"6000 h"``), at most 8766 h; default continuous.
* A position's explicit ``life = {shape, scale, location}`` is a field
  distribution in operating hours: ``scale`` and ``location`` carry time
  units. The ``[life] model`` table, by contrast, is in units of L10 (bare
  numbers).
* ``count`` on a position expands it into ``count`` identical positions named
  ``"<id>#1" … "<id>#<count>"``. Names may not contain ``#``.
* A position's ``policy`` table replaces the default ``[policy]`` entirely.
* A group's ``machines`` lists machine ids; the group's n is the sum of their
  ``count`` (all units of each machine belong to it). :attr:`Group.machines`
  holds those machine ids.
* ``field_factor`` multiplies every life of the position (scale and location),
  whether derived from ratings or given explicitly.
* ``[[field_factor]]`` entries (in the file or in the files of a top-level
  ``include = [...]``) set ``field_factor`` on the positions they name
  (:mod:`fleetsim.scenario.field_factors`), before the machines are read.
* A machine's ``ages = "file.csv"`` names a CSV of current position ages
  (:mod:`fleetsim.scenario.ages`), relative to the scenario file. Files are
  read after the whole document has been validated.
"""

from __future__ import annotations

import hashlib
import tomllib
import warnings
from collections.abc import Mapping
from os import PathLike
from pathlib import Path
from typing import Any

from fleetsim.bounds import (
    MAX_REPLICATIONS,
    MONEY,
    VISCOSITY_RATIO,
    WEIBULL_SHAPE,
)
from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life import BearingType, LoadFactors, WeibullShape, life_shape
from fleetsim.scenario.ages import apply_ages, scenario_folder
from fleetsim.scenario.field_factors import apply_field_factors, resolve_includes
from fleetsim.scenario.machines import (
    FIELD_LIFE_KEYS,
    MACHINE_KEYS,
    BearingIndex,
    LifeDefaults,
    read_machines,
)
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Scenario,
    Stock,
    Study,
)
from fleetsim.scenario.policies import read_policy
from fleetsim.scenario.reader import NumberOptions, Table, join, show, suggest
from fleetsim.seed import SEED_EXPECTED, check_seed

SECTIONS = (
    "study", "costs", "life", "bearing", "machine", "group", "policy", "stores", "crews",
    "variant",  # read by fleetsim.study.variants
)
STUDY_KEYS = ("name", "horizon", "replications", "seed")
COSTS_KEYS = (
    "currency",
    "planned_replacement",
    "failure",
    "downtime_per_hour",
    "inspection",
    "holding_rate",
    "discount_rate",
)
LIFE_KEYS = ("model", "viscosity_ratio", "contamination", "pf_interval")
BEARING_KEYS = (
    "id",
    "type",
    "dynamic_rating",
    "static_rating",
    "fatigue_limit",
    "price",
    "lead_time",
    "pf_interval",
    "e",
    "X",
    "Y",
    "X1",
    "Y1",
    "X0",
    "Y0",
    "induced_thrust_factor",
    "bore_mm",
)
# Catalogue factors of contact-angle bearings beyond e, X and Y.
_EXTRA_FACTOR_KEYS = ("X1", "Y1", "X0", "Y0", "induced_thrust_factor")
GROUP_KEYS = ("id", "machines", "need", "hold_planned_work", "downtime_per_hour")
STOCK_KEYS = (
    "initial",
    "reorder_point",
    "order_up_to",
    "lead_time",
    "emergency_lead_time",
    "emergency_premium",
    "order_ahead",
)
CREW_KEYS = ("count", "planned_repair", "unplanned_repair")


# ---------------------------------------------------------------------------------------
# entry points
# ---------------------------------------------------------------------------------------
def load_scenario(path: str | PathLike[str]) -> Scenario:
    """Read and validate a scenario file.

    Parameters
    ----------
    path
        A TOML file. Messages name it as given.

    Returns
    -------
    Scenario

    Raises
    ------
    InputError
        When the file cannot be read, is not TOML, or fails validation.
    """
    name = str(path)
    return parse_scenario(read_text(path), source=name)


def read_text(path: str | PathLike[str]) -> str:
    """The text of a scenario file (UTF-8; a leading byte-order mark is dropped).

    A BOM is accepted as in the CSV files (:mod:`fleetsim.csvtable`).
    """
    name = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(name, "scenario file not found") from None
    except IsADirectoryError:
        raise InputError(name, "expected a scenario file, found a directory") from None
    except UnicodeDecodeError:
        raise InputError(name, "expected a UTF-8 text file (TOML)") from None
    except OSError as exc:
        raise InputError(name, f"cannot read the scenario file ({exc.strerror or exc})") from None
    return text


#: Deepest nesting of arrays and tables accepted in a scenario document.
MAX_DEPTH = 32


def parse_toml(text: str, source: str) -> dict[str, Any]:
    """Parse TOML text (a leading byte-order mark ignored), at most :data:`MAX_DEPTH` deep."""
    try:
        document = tomllib.loads(text.removeprefix("\ufeff"))
    except tomllib.TOMLDecodeError as exc:
        raise InputError(source, f"TOML syntax error: {exc}") from None
    except RecursionError:
        raise InputError(
            source, f"arrays or tables nested too deeply (expected at most {MAX_DEPTH} levels)"
        ) from None
    stack: list[tuple[Any, int]] = [(document, 1)]
    while stack:
        node, depth = stack.pop()
        if depth > MAX_DEPTH:
            raise InputError(
                source, f"arrays or tables nested too deeply (expected at most {MAX_DEPTH} levels)"
            )
        children = node.values() if isinstance(node, dict) else node
        stack.extend((c, depth + 1) for c in children if isinstance(c, (dict, list)))
    return document


def parse_scenario(text: str, source: str = "<memory>") -> Scenario:
    """Parse and validate scenario text (TOML).

    Parameters
    ----------
    text
        The document.
    source
        Name used in messages and kept in :attr:`Scenario.source`.

    Returns
    -------
    Scenario
        With :attr:`Scenario.digest` the SHA-256 of ``text`` (UTF-8).
    """
    document = parse_toml(text, source)
    return build_scenario(document, source=source, digest=text_digest(text))


def text_digest(text: str) -> str:
    """SHA-256 of a scenario's text (UTF-8), its fingerprint in reports and checkpoints."""
    return hashlib.sha256(text.encode("utf-8", "surrogatepass")).hexdigest()


def build_scenario(
    document: Mapping[str, Any],
    source: str = "<memory>",
    digest: str = "",
    base_dir: str | PathLike[str] | None = None,
) -> Scenario:
    """Validate an already parsed document (a dict shaped like the TOML file).

    Useful from a notebook; :func:`parse_scenario` calls it after parsing.
    File names in the document (a machine's ``ages``) are relative to
    ``base_dir``, by default the folder of ``source`` when it names a file
    (see :func:`fleetsim.scenario.ages.scenario_folder`).
    """
    folder = scenario_folder(source, base_dir)
    document, included = resolve_includes(document, source, folder)
    document = apply_field_factors(document, source)
    if included and digest:
        digest = hashlib.sha256((digest + included).encode()).hexdigest()
    root = Table(document, "", source, SECTIONS)
    study = _study(root.table("study", STUDY_KEYS, required=True), source)
    costs = _costs(root.table("costs", COSTS_KEYS))
    defaults = _life_defaults(root.table("life", LIFE_KEYS))
    bearings, bearing_paths, bearing_lead, pf_intervals = _bearings(
        root.tables("bearing", BEARING_KEYS, required=True)
    )
    default_policy = Policy()
    if root.has("policy"):
        default_policy = read_policy(root.raw("policy"), "policy", source)
    machine_tables = root.tables("machine", MACHINE_KEYS, required=True)
    machines = read_machines(
        machine_tables,
        BearingIndex(bearings, bearing_paths, pf_intervals),
        defaults,
        default_policy,
    )
    groups = _groups(root.tables("group", GROUP_KEYS), machines)
    stores = _stores(root, bearings, bearing_lead)
    crews = _crews(root.table("crews", CREW_KEYS))
    machines = apply_ages(machine_tables, machines, folder)
    aged = [(m.id, m.position_ages_h) for m in machines if m.position_ages_h is not None]
    if aged and digest:
        # the ages files change results: make them part of the scenario's fingerprint
        digest = hashlib.sha256((digest + repr(aged)).encode()).hexdigest()
    return Scenario(
        study=study,
        costs=costs,
        bearings=bearings,
        machines=machines,
        groups=groups,
        stores=stores,
        crews=crews,
        life_model=defaults.model.name,
        source=source,
        digest=digest,
    )


# ---------------------------------------------------------------------------------------
# settings sections
# ---------------------------------------------------------------------------------------
def _study(t: Table | None, source: str) -> Study:
    assert t is not None
    stem = Path(source).stem if not source.startswith("<") else "scenario"
    name = t.text("name", stem or "scenario")
    horizon = t.quantity("horizon", "time", positive=True)
    reps = t.integer(
        "replications", 100, minimum=1, maximum=MAX_REPLICATIONS, what="a number of replications"
    )
    seed = check_seed(t.raw("seed", 0, SEED_EXPECTED), where=t.where("seed"))
    return t.build(Study, {"horizon_h": "horizon", "replications": "replications", "seed": "seed"},
                   name=name, horizon_h=horizon, replications=reps, seed=seed)


def _costs(t: Table | None) -> Costs:
    if t is None:
        return Costs()
    money: NumberOptions = {"within": MONEY}
    keys = {"holding_rate_per_year": "holding_rate", "discount_rate_per_year": "discount_rate"}
    return t.build(
        Costs,
        {k: k for k in COSTS_KEYS} | keys,
        currency=t.text("currency", "EUR"),
        planned_replacement=t.number("planned_replacement", 0.0, **money),
        failure=t.number("failure", 0.0, **money),
        downtime_per_hour=t.number("downtime_per_hour", 0.0, **money),
        inspection=t.number("inspection", 0.0, **money),
        holding_rate_per_year=t.number(
            "holding_rate", 0.0, minimum=0.0, maximum=1.0, what="a share of part value per year"
        ),
        discount_rate_per_year=t.number(
            "discount_rate",
            0.0,
            minimum=0.0,
            maximum=1.0,
            exclusive_maximum=True,
            what="a discount rate per year",
        ),
    )


def _life_defaults(t: Table | None) -> LifeDefaults:
    if t is None:
        return LifeDefaults(life_shape("iso281"), None, None)
    model: WeibullShape
    raw = t.raw("model", "iso281")
    if isinstance(raw, Mapping):
        m = Table(raw, join(t.path, "model"), t.source, FIELD_LIFE_KEYS)
        l10 = "(in units of L10, a bare number)"
        model = WeibullShape(
            shape=m.number("shape", within=WEIBULL_SHAPE),
            location=m.number("location", minimum=0.0, what=f"a location {l10}"),
            scale=m.number("scale", minimum=0.0, exclusive_minimum=True, what=f"a scale {l10}"),
        )
        f10 = model.failure_at_l10()
        if abs(f10 - 0.10) > 0.01:
            warnings.warn(
                f"{m.where()}: this model gives F(L10) = {f10:.3f}, not 0.10; "
                "its lives will not match the rating life L10",
                LifeModelWarning,
                stacklevel=2,
            )
    else:
        name = t.text("model", "iso281", choices=("iso281", "textbook"))
        model = life_shape(name)
    return LifeDefaults(
        model=model,
        viscosity_ratio=t.number("viscosity_ratio", None, within=VISCOSITY_RATIO),
        contamination=t.probability("contamination", None, what="a contamination factor e_C"),
        pf_interval=t.duration("pf_interval", None, positive=True),
    )


def _bearings(
    tables: list[Table],
) -> tuple[dict[str, Bearing], dict[str, str], dict[str, Any], dict[str, Duration]]:
    bearings: dict[str, Bearing] = {}
    paths: dict[str, str] = {}
    lead: dict[str, Any] = {}
    pf: dict[str, Duration] = {}
    for t in tables:
        bid = t.identifier()
        if bid in bearings:
            raise t.error("id", f"duplicate bearing id {bid!r} (first defined at {paths[bid]})")
        kind = BearingType(t.text("type", choices=[k.value for k in BearingType]))
        factors = None
        if kind.needs_catalogue_factors:
            factors = LoadFactors(
                e=t.number("e", minimum=0.0, exclusive_minimum=True, what="the catalogue factor e"),
                X=t.number("X", minimum=0.0, what="the catalogue factor X"),
                Y=t.number("Y", minimum=0.0, what="the catalogue factor Y"),
                X1=t.number("X1", 1.0, minimum=0.0, what="the catalogue factor X1"),
                Y1=t.number("Y1", 0.0, minimum=0.0, what="the catalogue factor Y1"),
                X0=t.number("X0", None, minimum=0.0, what="the static factor X0"),
                Y0=t.number("Y0", None, minimum=0.0, what="the static factor Y0"),
                induced_thrust_factor=t.number(
                    "induced_thrust_factor", None, minimum=0.0, exclusive_minimum=True,
                    what="an induced axial force per unit radial load"),
            )
        else:
            for key in ("e", "X", "Y", *_EXTRA_FACTOR_KEYS):
                if t.has(key):
                    raise t.error(
                        key,
                        f"catalogue factors (e, X, Y, X1, Y1, X0, Y0, induced_thrust_factor) "
                        f"apply only to angular-contact-ball and tapered-roller bearings; a "
                        f"{kind.value} bearing takes them from the ISO tables",
                    )
        bearings[bid] = t.build(
            Bearing,
            {"dynamic_rating_N": "dynamic_rating", "static_rating_N": "static_rating",
             "fatigue_limit_N": "fatigue_limit", "price": "price", "bore_mm": "bore_mm"},
            id=bid,
            bearing_type=kind,
            dynamic_rating_N=t.quantity("dynamic_rating", "force", positive=True),
            static_rating_N=t.quantity("static_rating", "force", None, positive=True),
            fatigue_limit_N=t.quantity("fatigue_limit", "force", None, positive=True),
            price=t.number("price", 0.0, within=MONEY),
            factors=factors,
            bore_mm=t.number("bore_mm", None, minimum=0.0, exclusive_minimum=True,
                             what="a bore diameter in mm"),
        )
        paths[bid] = t.path
        lead[bid] = t.duration("lead_time", None)
        if t.has("pf_interval"):
            pf[bid] = t.duration("pf_interval", positive=True)
    return bearings, paths, lead, pf


# ---------------------------------------------------------------------------------------
# groups, stores, crews
# ---------------------------------------------------------------------------------------
def _groups(tables: list[Table], machines: tuple[Machine, ...]) -> tuple[Group, ...]:
    by_id = {m.id: m for m in machines}
    groups: list[Group] = []
    seen: dict[str, str] = {}
    for t in tables:
        gid = t.identifier()
        if gid in seen:
            raise t.error("id", f"duplicate group id {gid!r} (first defined at {seen[gid]})")
        seen[gid] = t.path
        names = t.raw("machines", what="an array of machine ids")
        if not isinstance(names, list) or not names:
            raise t.error(
                "machines", f"expected a non-empty array of machine ids, got {show(names)}"
            )
        members: list[str] = []
        path = join(t.path, "machines")
        for i, name in enumerate(names):
            where = f"{t.source}: {join(path, i)}"
            if not isinstance(name, str):
                raise InputError(where, f"expected a machine id (text), got {show(name)}")
            if name not in by_id:
                hint = suggest(name.split("#")[0], by_id)
                if "#" in name and name.split("#")[0] in by_id:
                    hint = (
                        "; a group takes whole machines (all their units): give the units "
                        "that form a group their own [[machine]]"
                    )
                raise InputError(where, f"no [[machine]] with id {name!r}{hint}")
            if name in members:
                raise InputError(where, f"machine {name!r} is listed twice in group {gid!r}")
            members.append(name)
        n = sum(by_id[name].count for name in members)
        need = t.integer("need", what="the number of units the group needs up (k of k-out-of-n)")
        if not 1 <= need <= n:
            raise t.error(
                "need",
                f"expected 1 <= need <= {n} (the group has {n} machine units), got {need}",
            )
        hold = t.raw("hold_planned_work", False, what="true or false")
        if not isinstance(hold, bool):
            raise t.error("hold_planned_work", f"expected true or false, got {show(hold)}")
        groups.append(t.build(
            Group, {"need": "need", "downtime_per_hour": "downtime_per_hour"},
            id=gid, machines=tuple(members), need=need, hold_planned_work=hold,
            downtime_per_hour=t.number("downtime_per_hour", 0.0,
                                       what="a cost per hour the group is down")))
    return tuple(groups)


def _stores(root: Table, bearings: dict[str, Bearing], lead: dict[str, Any]) -> dict[str, Stock]:
    if not root.has("stores"):
        return {}
    raw = root.raw("stores")
    if not isinstance(raw, Mapping):
        raise root.error(
            "stores", f"expected a table of [stores.<bearing id>] tables, got {show(raw)}"
        )
    stores: dict[str, Stock] = {}
    for bid in raw:
        if bid not in bearings:
            raise InputError(
                f"{root.source}: {join('stores', bid)}",
                f"no [[bearing]] with id {bid!r}{suggest(bid, bearings)}",
            )
        t = Table(raw[bid], join("stores", bid), root.source, STOCK_KEYS)
        count = "a number of bearings"
        s = t.integer("reorder_point", minimum=-1, what=count)
        big_s = t.integer("order_up_to", minimum=0, what=count)
        if not s < big_s:
            raise t.error(
                "reorder_point",
                f"expected reorder_point s < order_up_to S, got s = {s} and S = {big_s}",
            )
        initial = t.integer("initial", big_s, minimum=0, what=count)
        lead_time = t.duration("lead_time", lead.get(bid))
        if lead_time is None:
            raise t.error(
                "lead_time",
                f"missing required key 'lead_time': give it here or on the bearing {bid!r}",
            )
        emergency = t.duration("emergency_lead_time", None)
        premium = t.number("emergency_premium", 0.0, within=MONEY)
        if emergency is None and t.has("emergency_premium"):
            raise t.error("emergency_premium", "an emergency premium needs emergency_lead_time")
        ahead = t.raw("order_ahead", False, what="true or false")
        if not isinstance(ahead, bool):
            raise t.error("order_ahead", f"expected true or false, got {show(ahead)}")
        stores[bid] = t.build(
            Stock,
            {k: k for k in STOCK_KEYS},
            initial=initial,
            reorder_point=s,
            order_up_to=big_s,
            lead_time=lead_time,
            emergency_lead_time=emergency,
            emergency_premium=premium,
            order_ahead=ahead,
        )
    return stores


def _crews(t: Table | None) -> Crews:
    if t is None:
        return Crews()
    return t.build(
        Crews,
        {k: k for k in CREW_KEYS},
        count=t.integer("count", None, minimum=1, what="a number of crews"),
        planned_repair=t.duration("planned_repair", Crews().planned_repair),
        unplanned_repair=t.duration("unplanned_repair", Crews().unplanned_repair),
    )

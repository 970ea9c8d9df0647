"""Scenario files → validated model: derived values, units, errors, demo plants."""

from __future__ import annotations

import math
import warnings
from pathlib import Path

import pytest

from fleetsim.errors import InputError, LifeModelWarning
from fleetsim.life import (
    BearingRating,
    BearingType,
    DutyStep,
    Lubrication,
    life_modification_factor,
    position_life,
)
from fleetsim.scenario import (
    HOURS_PER_YEAR,
    Duration,
    Scenario,
    build_scenario,
    load_scenario,
    parse_scenario,
)

ROOT = Path(__file__).resolve().parents[1]
DEMOS = [ROOT / "scenarios" / "pump_stations.toml", ROOT / "scenarios" / "conveyor.toml"]

LBF_N = 0.45359237 * 9.80665  # 1 lbf in N, exact by definition (NIST SP 811)

BASE = """\
[study]
name = "test plant"
horizon = "10 years"
replications = 50
seed = 7

[costs]
currency = "EUR"
planned_replacement = 500
failure = 4000
downtime_per_hour = 120
holding_rate = 0.2

[[bearing]]
id = "TB-1"
type = "ball"
dynamic_rating = "30.7 kN"
static_rating = "19 kN"
fatigue_limit = "0.8 kN"
price = 120
lead_time = "2 weeks"

[[bearing]]
id = "TR-2"
type = "roller"
dynamic_rating = "120 kN"
static_rating = "150 kN"
fatigue_limit = "15 kN"
price = 300

[policy]
kind = "age"
interval = "20000 h"

[[machine]]
id = "fan"
count = 2
operating_hours_per_year = "6000 h"
starting_age = "1000 h"

  [[machine.position]]
  id = "de"
  bearing = "TB-1"
  radial_load = "3.2 kN"
  speed = "1480 rpm"

  [[machine.position]]
  id = "nde"
  bearing = "TR-2"
  radial_load = "10 kN"
  speed = "1480 rpm"
  viscosity_ratio = 1.5
  contamination = 0.5
  policy = { kind = "run-to-failure" }

[[group]]
id = "fans"
machines = ["fan"]
need = 1

[stores.TB-1]
reorder_point = 1
order_up_to = 3

[crews]
count = 1
planned_repair = "6 h"
unplanned_repair = { kind = "lognormal", median = "8 h", p90 = "20 h" }
"""


def edit(text: str, old: str, new: str, nth: int = 0) -> str:
    """Replace the ``nth`` occurrence of ``old`` (which must exist)."""
    start = -1
    for _ in range(nth + 1):
        start = text.index(old, start + 1)
    return text[:start] + new + text[start + len(old) :]


def load(text: str) -> Scenario:
    return parse_scenario(text, source="plant.toml")


def error_of(text: str) -> InputError:
    with pytest.raises(InputError) as info:
        load(text)
    exc = info.value
    assert "\n" not in str(exc)
    return exc


# ---------------------------------------------------------------------------------------
# derived values, cross-checked by hand and against direct fleetsim.life calls
# ---------------------------------------------------------------------------------------
def test_base_scenario_settings() -> None:
    s = load(BASE)
    assert s.source == "plant.toml"
    assert len(s.digest) == 64
    assert s.study.name == "test plant"
    # fleetsim's year is the Julian year of 365.25 d (from memory): 10 years = 87,660 h.
    assert s.study.horizon_h == pytest.approx(10 * 365.25 * 24, rel=1e-12)
    assert (s.study.replications, s.study.seed) == (50, 7)
    assert s.costs.currency == "EUR"
    assert (s.costs.planned_replacement, s.costs.failure) == (500.0, 4000.0)
    assert s.costs.downtime_per_hour == 120.0
    assert s.costs.holding_rate_per_year == 0.2
    fan = s.machine("fan")
    assert fan.count == 2
    assert fan.operating_share == pytest.approx(6000 / 8766, rel=1e-12)
    assert fan.starting_age_h == 1000.0
    assert [p.id for p in fan.positions] == ["de", "nde"]
    assert s.position_count == 4
    assert s.groups[0].machines == ("fan",)
    assert s.groups[0].need == 1
    stock = s.stores["TB-1"]
    assert (stock.initial, stock.reorder_point, stock.order_up_to) == (3, 1, 3)
    assert stock.lead_time == Duration.fixed(14 * 24)  # from the bearing's lead_time
    assert stock.emergency_lead_time is None
    assert s.crews.count == 1
    assert s.crews.planned_repair == Duration.fixed(6.0)
    rep = s.crews.unplanned_repair
    assert (rep.kind, rep.value_h, rep.p90_h) == ("lognormal", 8.0, 20.0)
    assert s.bearings["TB-1"].price == 120.0
    assert s.life_model == "iso281"
    assert not s.independent_positions


def test_ball_position_by_hand() -> None:
    de = load(BASE).machine("fan").positions[0]
    d = de.derived
    assert d is not None
    # No axial load: P = Fr (X = 1, Y = 0).
    assert d.equivalent_load_N == pytest.approx(3200.0, rel=1e-12)
    # L10 = (C/P)^3 million revolutions; L10h = 1e6·L10/(60·n) (ISO 281:2007).
    l10_mrev = (30700 / 3200) ** 3
    l10_h = l10_mrev * 1e6 / (60 * 1480)
    assert d.rating_life_Mrev == pytest.approx(l10_mrev, rel=1e-12)
    assert d.rating_life_h == pytest.approx(l10_h, rel=1e-12)
    assert d.a_iso is None
    # ISO 281:2007 a1 = 0.95·(ln(1/R)/ln(1/0.9))^(2/3) + 0.05 (from memory) is the life
    # ratio of a Weibull with shape 1.5, location 0.05·L10, scale 0.95·L10/ln(1/0.9)^(2/3).
    assert de.life.shape == 1.5
    assert de.life.location_h == pytest.approx(0.05 * l10_h, rel=1e-12)
    assert de.life.scale_h == pytest.approx(0.95 * l10_h / math.log(1 / 0.9) ** (2 / 3), rel=1e-12)
    assert de.life.cdf(l10_h) == pytest.approx(0.10, rel=1e-12)
    assert de.policy.kind == "age"
    assert de.policy.interval_h == 20000.0
    assert de.field_factor == 1.0
    assert de.bearing_id == "TB-1"


def test_roller_position_with_a_iso_matches_direct_life_calls() -> None:
    nde = load(BASE).machine("fan").positions[1]
    d = nde.derived
    assert d is not None
    # Roller bearings: L10 = (C/P)^(10/3) (ISO 281:2007).
    l10_h = (120 / 10) ** (10 / 3) * 1e6 / (60 * 1480)
    assert d.rating_life_h == pytest.approx(l10_h, rel=1e-12)
    # a_ISO for radial roller bearings, κ >= 1 (ISO 281:2007, from memory):
    # a = 0.1·[1 − (1.5859 − 1.2348/κ^0.071739)·(e_C·Cu/P)^0.4]^(−9.185).
    kappa, e_c, cu, p = 1.5, 0.5, 15000.0, 10000.0
    a_hand = 0.1 * (1 - (1.5859 - 1.2348 / kappa**0.071739) * (e_c * cu / p) ** 0.4) ** -9.185
    assert d.a_iso == pytest.approx(a_hand, rel=1e-12)
    assert d.a_iso == pytest.approx(life_modification_factor(kappa, e_c, cu, p, roller=True))
    direct = position_life(
        BearingRating(BearingType.ROLLER, 120e3, 150e3, 15e3),
        [DutyStep(1.0, 10e3, 0.0, 1480.0)],
        lubrication=Lubrication(kappa, e_c),
    )
    assert nde.life == direct.distribution
    assert nde.life.cdf(a_hand * l10_h) == pytest.approx(0.10, rel=1e-12)
    assert nde.policy.kind == "run-to-failure"  # the override replaces the default


ANGULAR = """
[[bearing]]
id = "AC-9"
type = "angular-contact-ball"
dynamic_rating = "52 kN"
static_rating = "38 kN"
e = 1.14
X = 0.35
Y = 0.57
"""


def test_angular_contact_and_application_factor_by_hand() -> None:
    text = edit(BASE, "[policy]", ANGULAR + "\n[policy]")
    text = edit(
        text,
        '  radial_load = "3.2 kN"',
        '  radial_load = "2 kN"\n  axial_load = "4.2 kN"\n  application_factor = 1.2',
    )
    text = edit(text, 'bearing = "TB-1"', 'bearing = "AC-9"')
    d = load(text).machine("fan").positions[0].derived
    assert d is not None
    # Fa/Fr = 2.1 > e = 1.14, so P = a_f·(X·Fr + Y·Fa) with the catalogue X, Y.
    p = 1.2 * (0.35 * 2000 + 0.57 * 4200)
    assert d.equivalent_load_N == pytest.approx(p, rel=1e-12)
    assert d.rating_life_h == pytest.approx((52000 / p) ** 3 * 1e6 / (60 * 1480), rel=1e-12)


def test_duty_cycle_by_hand() -> None:
    duty = (
        '  duty = [\n    { share = 0.6, radial_load = "2 kN", speed = "1000 rpm" },\n'
        '    { share = 0.4, radial_load = "4 kN", speed = "1500 rpm" },\n  ]'
    )
    text = edit(BASE, '  radial_load = "3.2 kN"\n  speed = "1480 rpm"', duty)
    d = load(text).machine("fan").positions[0].derived
    assert d is not None
    # Variable conditions (ISO 281:2007): P = (Σ P_i^3 n_i t_i / Σ n_i t_i)^(1/3),
    # mean speed n_m = Σ n_i t_i.
    revs = [0.6 * 1000, 0.4 * 1500]
    p = ((2000**3 * revs[0] + 4000**3 * revs[1]) / sum(revs)) ** (1 / 3)
    n_m = sum(revs)
    assert d.equivalent_load_N == pytest.approx(p, rel=1e-12)
    assert d.speed_rpm == pytest.approx(1200.0, rel=1e-12)
    assert d.rating_life_h == pytest.approx((30700 / p) ** 3 * 1e6 / (60 * n_m), rel=1e-12)


def test_explicit_life_with_field_factor_and_position_count() -> None:
    extra = """
  [[machine.position]]
  id = "idler"
  count = 3
  bearing = "TB-1"
  life = { shape = 1.3, scale = "50000 h", location = "1000 h" }
  field_factor = 0.5
"""
    text = edit(BASE, "\n[[group]]", extra + "\n[[group]]")
    fan = load(text).machine("fan")
    assert [p.id for p in fan.positions] == ["de", "nde", "idler#1", "idler#2", "idler#3"]
    idler = fan.positions[2]
    assert idler.derived is None
    assert (idler.life.shape, idler.life.scale_h, idler.life.location_h) == (1.3, 25000.0, 500.0)
    assert idler.field_factor == 0.5
    assert load(text).position_count == 10


def test_group_of_several_machines_and_durations() -> None:
    extra = """
[[machine]]
id = "spare-fan"
  [[machine.position]]
  id = "de"
  bearing = "TB-1"
  radial_load = "1 kN"
  speed = "1000 rpm"
"""
    text = edit(BASE, "\n[[group]]", extra + "\n[[group]]")
    text = edit(text, 'machines = ["fan"]\nneed = 1', 'machines = ["fan", "spare-fan"]\nneed = 3')
    text = edit(
        text,
        'planned_repair = "6 h"',
        'planned_repair = { kind = "weibull", shape = 2, scale = "1 d" }',
    )
    text = edit(
        text,
        "order_up_to = 3",
        'order_up_to = 3\ninitial = 0\nlead_time = { kind = "exponential", mean = "21 d" }\n'
        'emergency_lead_time = { kind = "fixed", value = "36 h" }\nemergency_premium = 250\n'
        "order_ahead = true",
    )
    s = load(text)
    assert s.groups[0].machines == ("fan", "spare-fan")
    assert s.groups[0].need == 3  # n = 2 + 1 units
    assert s.crews.planned_repair == Duration("weibull", 24.0, shape=2.0)
    stock = s.stores["TB-1"]
    assert stock.initial == 0
    assert stock.lead_time == Duration("exponential", 21 * 24.0)
    assert stock.emergency_lead_time == Duration.fixed(36.0)
    assert stock.emergency_premium == 250.0
    assert stock.order_ahead is True
    assert stock.order_ahead_h == pytest.approx(-21 * 24.0 * math.log(0.1))  # exponential P90


def test_condition_and_block_policies() -> None:
    text = edit(
        BASE,
        'policy = { kind = "run-to-failure" }',
        'policy = { kind = "condition", inspection_every = "4 weeks", detection = 0.8, '
        'respond_within = "3 d" }\n'
        '  pf_interval = { kind = "lognormal", median = "60 d", p90 = "120 d" }',
    )
    text = edit(
        text, 'kind = "age"', 'kind = "block"\nblock_scope = "position"\nopportunistic_share = 0.5'
    )
    s = load(text)
    de, nde = s.machine("fan").positions
    assert (de.policy.kind, de.policy.block_scope, de.policy.interval_h) == (
        "block",
        "position",
        20000.0,
    )
    assert de.policy.opportunistic_share == 0.5
    pol = nde.policy
    assert pol.kind == "condition"
    assert pol.inspection_every_h == 28 * 24.0
    assert pol.detection == 0.8
    assert pol.respond_within_h == 72.0
    assert nde.pf_interval == Duration("lognormal", 60 * 24.0, p90_h=120 * 24.0)
    assert de.pf_interval is None


def test_pf_interval_belongs_to_the_position_bearing_or_life_section() -> None:
    """The P-F interval is part of the failure process: read from the position, else
    its [[bearing]], else [life]; the same under every policy."""
    text = edit(BASE, 'price = 300', 'price = 300\npf_interval = "10 d"')
    text = edit(text, '[[bearing]]\nid = "TB-1"', '[life]\npf_interval = "3 d"\n\n[[bearing]]\nid = "TB-1"')
    s = load(text)
    de, nde = s.machine("fan").positions
    assert de.pf_interval == Duration.fixed(72.0)  # [life] default
    assert nde.pf_interval == Duration.fixed(240.0)  # its bearing's
    s = load(edit(text, '  policy = { kind = "run-to-failure" }',
                  '  policy = { kind = "run-to-failure" }\n  pf_interval = "1 d"'))
    assert s.machine("fan").positions[1].pf_interval == Duration.fixed(24.0)
    assert s.machine("fan").positions[1].policy.kind == "run-to-failure"


def test_a_policy_that_gives_a_pf_interval_is_refused() -> None:
    text = edit(BASE, '{ kind = "run-to-failure" }',
                '{ kind = "condition", inspection_every = "30 d", pf_interval = "60 d" }')
    with pytest.raises(InputError, match="belongs to the failure process"):
        load(text)


def test_defaults_when_sections_are_absent() -> None:
    minimal = """
[study]
horizon = "1 year"
[[bearing]]
id = "B"
type = "ball"
dynamic_rating = "10 kN"
[[machine]]
id = "m"
  [[machine.position]]
  id = "p"
  bearing = "B"
  radial_load = "1 kN"
  speed = "1000 rpm"
"""
    s = parse_scenario(minimal, source="small.toml")
    assert s.study.name == "small"
    assert (s.study.replications, s.study.seed) == (100, 0)
    assert s.machine("m").operating_share == 1.0
    assert s.machine("m").positions[0].policy.kind == "run-to-failure"
    assert s.stores == {} and s.crews.count is None and s.groups == ()
    assert s.independent_positions


# ---------------------------------------------------------------------------------------
# units
# ---------------------------------------------------------------------------------------
def test_same_scenario_in_newtons_and_pound_force() -> None:
    metric = edit(BASE, '"3.2 kN"', '"4893.04377678655 N"')  # = 1100 lbf (1100 × 4.4482216152605)
    assert 1100 * LBF_N == pytest.approx(4893.04377678655, rel=1e-15)
    imperial = edit(BASE, '"3.2 kN"', '"1100 lbf"')
    imperial = edit(imperial, '"30.7 kN"', f'"{30700 / LBF_N!r} lbf"')
    imperial = edit(imperial, '"1480 rpm"', '"24.666666666666668 Hz"')  # 1480/60 rev/s
    imperial = edit(imperial, '"6000 h"', '"250 d"')
    imperial = edit(imperial, '"2 weeks"', '"336 h"')
    a, b = load(metric), load(imperial)
    pa, pb = a.machine("fan").positions[0], b.machine("fan").positions[0]
    assert pa.derived is not None and pb.derived is not None
    assert pb.derived.equivalent_load_N == pytest.approx(1100 * LBF_N, rel=1e-12)
    assert pb.derived.rating_life_h == pytest.approx(pa.derived.rating_life_h, rel=1e-12)
    assert pb.life.scale_h == pytest.approx(pa.life.scale_h, rel=1e-12)
    assert b.machine("fan").operating_share == pytest.approx(a.machine("fan").operating_share)
    assert b.stores["TB-1"].lead_time == a.stores["TB-1"].lead_time
    assert a.digest != b.digest


# ---------------------------------------------------------------------------------------
# errors: file and key path in `where`, what was expected and found in the message
# ---------------------------------------------------------------------------------------
POS0 = "machine[0].position[0]"
POS1 = "machine[0].position[1]"

ERRORS = [
    # unknown keys with a did-you-mean
    (
        '  radial_load = "3.2 kN"',
        '  radial_lod = "3.2 kN"',
        f"{POS0}.radial_lod",
        "did you mean 'radial_load'",
    ),
    ("[policy]", "[polcy]", "polcy", "did you mean 'policy'"),
    ("holding_rate = 0.2", "holding_rat = 0.2", "costs.holding_rat", "did you mean 'holding_rate'"),
    # wrong and missing units, signs
    ('"3.2 kN"', '"3.2 rpm"', f"{POS0}.radial_load", "different kind of unit"),
    ('"3.2 kN"', "3200", f"{POS0}.radial_load", "missing unit"),
    ('"3.2 kN"', '"-3.2 kN"', f"{POS0}.radial_load", "force >= 0, got '-3.2 kN'"),
    ('"1480 rpm"', '"0 rpm"', f"{POS0}.speed", "speed > 0, got '0 rpm'"),
    ('"30.7 kN"', '"0 kN"', "bearing[0].dynamic_rating", "force > 0"),
    ('horizon = "10 years"', 'horizon = "10 kN"', "study.horizon", "different kind of unit"),
    ('starting_age = "1000 h"', 'starting_age = "-5 h"', "machine[0].starting_age", ">= 0"),
    ('"6000 h"', '"9000 h"', "machine[0].operating_hours_per_year", "at most 8766 h"),
    # wrong types
    ("replications = 50", 'replications = "50"', "study.replications", "got '50'"),
    ("count = 2", "count = 2.5", "machine[0].count", "whole number"),
    ("failure = 4000", 'failure = "4000 EUR"', "costs.failure", "bare number"),
    ("failure = 4000", "failure = nan", "costs.failure", "finite"),
    ('type = "ball"', 'type = "needle"', "bearing[0].type", "expected one of"),
    # references between sections
    (
        'bearing = "TB-1"',
        'bearing = "TB-11"',
        f"{POS0}.bearing",
        "no [[bearing]] with id 'TB-11'; did you mean 'TB-1'?",
    ),
    ('machines = ["fan"]', 'machines = ["fane"]', "group[0].machines[0]", "did you mean 'fan'"),
    (
        'machines = ["fan"]',
        'machines = ["fan#2"]',
        "group[0].machines[0]",
        "no [[machine]] with id 'fan#2'; a group takes whole machines",
    ),
    ('machines = ["fan"]', 'machines = ["fan", "fan"]', "group[0].machines[1]", "listed twice"),
    (
        "need = 1",
        "need = 3",
        "group[0].need",
        "1 <= need <= 2 (the group has 2 machine units), got 3",
    ),
    ("[stores.TB-1]", "[stores.TB-9]", "stores.TB-9", "did you mean 'TB-1'"),
    # duplicate ids and reserved characters
    ('id = "TR-2"', 'id = "TB-1"', "bearing[1].id", "duplicate bearing id 'TB-1'"),
    ('id = "nde"', 'id = "de"', f"{POS1}.id", "duplicate position id 'de'"),
    ('id = "fan"', 'id = "fan#1"', "machine[0].id", "without '#'"),
    # policies
    ('interval = "20000 h"', "", "policy.interval", "needs its replacement interval"),
    (
        '{ kind = "run-to-failure" }',
        '{ kind = "block" }',
        f"{POS1}.policy.interval",
        "needs its replacement interval",
    ),
    (
        '{ kind = "run-to-failure" }',
        '{ kind = "condition", detection = 0.5 }',
        f"{POS1}.policy.inspection_every",
        "inspection interval",
    ),
    (
        'interval = "20000 h"',
        'interval = "20000 h"\ninspection_every = "30 d"',
        "policy.inspection_every",
        "does not apply to kind = 'age'",
    ),
    ('kind = "age"', 'kind = "agе"', "policy.kind", "did you mean 'age'"),
    (
        'kind = "age"',
        'kind = "block"\nblock_scope = "fleet"',
        "policy.block_scope",
        "expected one of 'machine', 'position'",
    ),
    # probabilities and shares outside [0, 1]
    ("contamination = 0.5", "contamination = 1.5", f"{POS1}.contamination", "<= 1, got 1.5"),
    (
        '{ kind = "run-to-failure" }',
        '{ kind = "condition", inspection_every = "30 d", detection = 1.2 }',
        f"{POS1}.policy.detection",
        "probability >= 0 and <= 1, got 1.2",
    ),
    (
        'kind = "age"',
        'kind = "age"\nopportunistic_share = -0.1',
        "policy.opportunistic_share",
        ">= 0 and <= 1",
    ),
    ("holding_rate = 0.2", "holding_rate = 20", "costs.holding_rate", "<= 1, got 20"),
    ("viscosity_ratio = 1.5\n", "", f"{POS1}.viscosity_ratio", "a_ISO needs both"),
    # stores
    (
        "reorder_point = 1",
        "reorder_point = 4",
        "stores.TB-1.reorder_point",
        "reorder_point s < order_up_to S, got s = 4 and S = 3",
    ),
    ("reorder_point = 1", "reorder_point = 3", "stores.TB-1.reorder_point", "got s = 3 and S = 3"),
    (
        "[stores.TB-1]",
        "[stores.TR-2]",
        "stores.TR-2.lead_time",
        "give it here or on the bearing 'TR-2'",
    ),
    (
        "order_up_to = 3",
        "order_up_to = 3\nemergency_premium = 10",
        "stores.TB-1.emergency_premium",
        "needs emergency_lead_time",
    ),
    ("order_up_to = 3", 'order_up_to = 3\norder_ahead = "yes"', "stores.TB-1.order_ahead",
     "expected true or false"),
    # durations
    ('p90 = "20 h"', 'p90 = "5 h"', "crews.unplanned_repair.p90", "expected p90 > median (8 h)"),
    (
        'planned_repair = "6 h"',
        'planned_repair = { kind = "gamma", mean = "6 h" }',
        "crews.planned_repair.kind",
        "expected one of",
    ),
    (
        'planned_repair = "6 h"',
        'planned_repair = { kind = "exponential", median = "6 h" }',
        "crews.planned_repair.median",
        "did you mean 'mean'",
    ),
    # bearings
    ("price = 120", "price = 120\ne = 0.3", "bearing[0].e", "apply only to angular-contact-ball"),
    ('type = "roller"', 'type = "tapered-roller"', "bearing[1].e", "missing required key 'e'"),
    # positions: explicit life vs loads, duty shares
    (
        '  speed = "1480 rpm"\n',
        '  speed = "1480 rpm"\n  life = { shape = 1.2, scale = "9000 h" }\n',
        f"{POS0}.radial_load",
        "not used with an explicit life",
    ),
    (
        '  radial_load = "3.2 kN"\n  speed = "1480 rpm"',
        '  duty = [{ share = 0.5, radial_load = "1 kN", speed = "900 rpm" }, { share = 0.4, radial_load = "2 kN", speed = "900 rpm" }]',
        f"{POS0}.duty",
        "add up to 1, got 0.9",
    ),
    (
        '  radial_load = "3.2 kN"\n  speed = "1480 rpm"',
        '  duty = [{ share = 1, radial_load = "1 kN", speed = "900 rpm", torque = "1 N m" }]',
        f"{POS0}.duty[0].torque",
        "unknown key",
    ),
    (
        '  bearing = "TB-1"',
        '  bearing = "TB-1"\n  life = { shape = 1.2, scale = "9000" }',
        f"{POS0}.radial_load",
        "explicit life",
    ),
    # life derivation errors, re-raised with the key path
    (
        '  radial_load = "10 kN"',
        '  radial_load = "10 kN"\n  axial_load = "1 kN"',
        f"{POS1}.axial_load",
        "radial load only",
    ),
    (
        'fatigue_limit = "15 kN"\n',
        "",
        "bearing[1].fatigue_limit",
        f"fatigue load limit Cu (bearing 'TR-2', needed by {POS1})",
    ),
    (
        ('static_rating = "19 kN"\n', '  radial_load = "3.2 kN"'),
        ("", '  radial_load = "3.2 kN"\n  axial_load = "1 kN"'),
        "bearing[0].static_rating",
        f"needs its static rating C0 (bearing 'TB-1', needed by {POS0})",
    ),
    # structure
    (
        '[study]\nname = "test plant"\nhorizon = "10 years"\nreplications = 50\nseed = 7\n',
        "",
        "study",
        "missing required table [study]",
    ),
    ("[[group]]", "[group]", "group", "expected an array of tables [[group]]"),
    # the study seed (fleetsim.seed.check_seed)
    ("seed = 7", "seed = -1", "study.seed", "expected a seed (a whole number >= 0), got -1"),
    ("seed = 7", "seed = 7.0", "study.seed", "expected a seed (a whole number >= 0), got 7.0"),
    ("seed = 7", "seed = true", "study.seed", "expected a seed (a whole number >= 0), got True"),
    ("seed = 7", 'seed = "7"', "study.seed", "expected a seed (a whole number >= 0), got '7'"),
]


@pytest.mark.parametrize(
    ("old", "new", "path", "message"), ERRORS, ids=[f"{e[2]}:{e[3][:24]}" for e in ERRORS]
)
def test_error_names_file_key_and_expectation(
    old: str | tuple[str, ...], new: str | tuple[str, ...], path: str, message: str
) -> None:
    text = BASE
    pairs = zip(old, new, strict=True) if isinstance(old, tuple) else [(old, new)]
    for o, n in pairs:
        text = edit(text, o, n)
    exc = error_of(text)
    assert exc.where == f"plant.toml: {path}"
    assert message in exc.expected


def test_explicit_life_needs_time_units() -> None:
    text = edit(
        BASE,
        '  radial_load = "3.2 kN"\n  speed = "1480 rpm"',
        "  life = { shape = 1.2, scale = 9000 }",
    )
    exc = error_of(text)
    assert exc.where == f"plant.toml: {POS0}.life.scale"
    assert "missing unit" in exc.expected


def test_toml_syntax_error_names_the_line() -> None:
    exc = error_of(edit(BASE, 'name = "test plant"', 'name = "test plant'))
    assert exc.where == "plant.toml"
    assert "TOML syntax error" in exc.expected and "line 2" in exc.expected


def test_load_scenario_file_errors(tmp_path: Path) -> None:
    with pytest.raises(InputError) as info:
        load_scenario(tmp_path / "absent.toml")
    assert info.value.where == str(tmp_path / "absent.toml")
    assert "not found" in info.value.expected
    with pytest.raises(InputError):
        load_scenario(tmp_path)  # a directory
    bad = tmp_path / "latin1.toml"
    bad.write_bytes('name = "Müller"'.encode("latin-1"))
    with pytest.raises(InputError, match="UTF-8"):
        load_scenario(bad)
    good = tmp_path / "plant.toml"
    good.write_text(BASE, encoding="utf-8")
    s = load_scenario(good)
    assert s.source == str(good) and s.digest == load(BASE).digest


def test_digest_is_sha256_of_the_text() -> None:
    import hashlib

    assert load(BASE).digest == hashlib.sha256(BASE.encode()).hexdigest()


def test_life_warnings_carry_the_key_path() -> None:
    # Fa/C0 = 100/19000 is below the X/Y table's first row (0.014).
    text = edit(
        BASE, '  radial_load = "3.2 kN"', '  radial_load = "3.2 kN"\n  axial_load = "0.1 kN"'
    )
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        load(text)
    messages = [str(w.message) for w in caught if issubclass(w.category, LifeModelWarning)]
    assert messages and messages[0].startswith(f"plant.toml: {POS0}: Fa/C0")


def test_custom_life_model_inconsistent_with_l10_warns() -> None:
    text = edit(
        BASE, "[policy]", "[life]\nmodel = { shape = 1.5, location = 0, scale = 1 }\n\n[policy]"
    )
    with pytest.warns(LifeModelWarning, match=r"F\(L10\) = 0\.632"):
        s = load(text)
    assert s.life_model == "custom"


def test_build_scenario_from_a_dict() -> None:
    import tomllib

    doc = tomllib.loads(BASE)
    s = build_scenario(doc, source="dict")
    assert s.position_count == 4 and s.digest == ""
    doc["machine"][0]["position"][0]["speed"] = "fast"
    with pytest.raises(InputError, match="number and a unit"):
        build_scenario(doc, source="dict")


# ---------------------------------------------------------------------------------------
# the demo plants
# ---------------------------------------------------------------------------------------
@pytest.mark.parametrize("path", DEMOS, ids=lambda p: p.name)
def test_demo_scenarios_load_and_look_like_real_plants(path: Path) -> None:
    with warnings.catch_warnings():
        warnings.simplefilter("error", LifeModelWarning)  # demos stay inside the tables
        s = load_scenario(path)
    assert s.study.replications == 200
    assert s.study.horizon_h == pytest.approx(10 * HOURS_PER_YEAR)
    assert set(s.stores) <= set(s.bearings)
    used = {p.bearing_id for m in s.machines for p in m.positions}
    assert used == set(s.bearings)
    for m in s.machines:
        for p in m.positions:
            # Weibull shape of bearing lives about 1.1–1.5 (TYPICAL-VALUES.md; ISO 281 implies 1.5).
            assert 1.1 <= p.life.shape <= 1.5
            if p.derived is not None and path.name == "pump_stations.toml":
                # Process-pump bearings: L10 >= 25,000 h (common practice).
                assert p.derived.rating_life_h >= 25_000


def test_pump_station_demo_structure() -> None:
    s = load_scenario(DEMOS[0])
    assert s.position_count == 36
    units = [sum(s.machine(m).count for m in g.machines) for g in s.groups]
    assert [g.need for g in s.groups] == [2, 2, 2] and units == [3, 3, 3]
    assert all(p.policy.kind in ("age", "run-to-failure") for m in s.machines for p in m.positions)


def test_conveyor_demo_structure() -> None:
    s = load_scenario(DEMOS[1])
    (conveyor,) = s.machines
    ids = [p.id for p in conveyor.positions]
    assert ids[:2] == ["carry-idler#1", "carry-idler#2"] and "carry-idler#96" in ids
    assert sum(i.startswith(("carry-idler#", "return-idler#")) for i in ids) == 120
    assert s.position_count == 127
    assert s.life_model == "textbook"


def test_the_documented_example_loads() -> None:
    import re

    doc = (ROOT / "docs" / "scenario-format.md").read_text(encoding="utf-8")
    example = re.search(r"```toml\n(.*?)```", doc[doc.index("## Example"):], re.S)
    assert example is not None
    s = parse_scenario(example.group(1), source="example.toml")
    assert s.position_count == 3 and s.groups[0].need == 2

"""The documented bounds (fleetsim/bounds.py) enforced by the model objects themselves.

A scenario built in Python gets the same one-line InputError as one read from
TOML, naming the field; read from a file, the error names the TOML key path
(the reader builds the objects and relabels their errors, issue 17).
"""

from __future__ import annotations

import re
from collections.abc import Callable
from pathlib import Path
from typing import Any

import pytest
from cli_cases import expect_one_line_error, tiny

from fleetsim.errors import InputError
from fleetsim.life import BearingType, LifeDistribution, WeibullShape
from fleetsim.scenario import parse_scenario
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Position,
    Stock,
    Study,
)

LIFE = LifeDistribution(shape=1.5, scale_h=20_000.0)


def _position(**kw: Any) -> Position:
    return Position(**({"id": "de", "bearing_id": "B1", "life": LIFE, "policy": Policy()} | kw))


def _machine(**kw: Any) -> Machine:
    base = {"id": "pump", "count": 2, "operating_share": 0.7, "starting_age_h": 0.0,
            "positions": (_position(),)}
    return Machine(**(base | kw))


CASES: dict[str, tuple[Callable[[], object], str]] = {
    # (build, field the message must name)
    "horizon 1e-300 h": (lambda: Study("s", 1e-300, 10, 0), "Study.horizon_h"),
    "horizon 30 min": (lambda: Study("s", 0.5, 10, 0), "Study.horizon_h"),
    "horizon 1e6 years": (lambda: Study("s", 8766e6, 10, 0), "Study.horizon_h"),
    "replications 0": (lambda: Study("s", 8766.0, 0, 0), "Study.replications"),
    "replications 1e7": (lambda: Study("s", 8766.0, 10_000_000, 0), "Study.replications"),
    "seed -1": (lambda: Study("s", 8766.0, 10, -1), "Study.seed"),
    "failure cost 1e308": (lambda: Costs(failure=1e308), "Costs.failure"),
    "downtime cost inf": (lambda: Costs(downtime_per_hour=float("inf")), "Costs.downtime_per_hour"),
    "negative inspection cost": (lambda: Costs(inspection=-1.0), "Costs.inspection"),
    "discount rate 1": (lambda: Costs(discount_rate_per_year=1.0), "Costs.discount_rate_per_year"),
    "life shape 0.001": (lambda: LifeDistribution(0.001, 20_000.0), "LifeDistribution.shape"),
    "life shape 50": (lambda: LifeDistribution(50.0, 20_000.0), "LifeDistribution.shape"),
    "lognormal sigma 50": (lambda: LifeDistribution(50.0, 20_000.0, family="lognormal"),
                           "LifeDistribution.shape"),
    "life scale 0": (lambda: LifeDistribution(1.5, 0.0), "LifeDistribution.scale_h"),
    "life location nan": (lambda: LifeDistribution(1.5, 1.0, float("nan")),
                          "LifeDistribution.location_h"),
    "life model shape 0.001": (lambda: WeibullShape(0.001, 0.0, 1.0), "WeibullShape.shape"),
    "a life scaled by 0": (lambda: LIFE.scaled(0.0), "LifeDistribution.scale_h"),
    "weibull lead time shape 1e-6": (lambda: Duration("weibull", 120.0, shape=1e-6),
                                     "Duration.shape"),
    "lognormal lead time p90 1e30 h": (lambda: Duration("lognormal", 120.0, p90_h=1e30),
                                       "Duration.p90_h"),
    "lognormal spread 2000": (lambda: Duration("lognormal", 1.0, p90_h=2000.0), "Duration.p90_h"),
    "fixed duration 1e-300 h": (lambda: Duration.fixed(1e-300), "Duration.value_h"),
    "exponential mean 0": (lambda: Duration("exponential", 0.0), "Duration.value_h"),
    "duration kind": (lambda: Duration("gamma", 1.0), "Duration.kind"),  # type: ignore[arg-type]
    "age interval 1e-300 h": (lambda: Policy("age", interval_h=1e-300), "Policy.interval_h"),
    "inspection every 1e12 h": (lambda: Policy("condition", inspection_every_h=1e12),
                                "Policy.inspection_every_h"),
    "detection 1.5": (lambda: Policy("condition", inspection_every_h=100.0, detection=1.5),
                      "Policy.detection"),
    "response nan": (lambda: Policy(respond_within_h=float("nan")), "Policy.respond_within_h"),
    "rating 1e-300 N": (lambda: Bearing("B1", BearingType.BALL, 1e-300), "Bearing.dynamic_rating_N"),
    "rating 1e12 N": (lambda: Bearing("B1", BearingType.BALL, 1e12), "Bearing.dynamic_rating_N"),
    "bearing price 1e308": (lambda: Bearing("B1", BearingType.BALL, 3e4, price=1e308),
                            "Bearing.price"),
    "field factor 1e6": (lambda: _position(field_factor=1e6), "Position 'de'.field_factor"),
    "machine count 0": (lambda: _machine(count=0), "Machine 'pump'.count"),
    "machine count 1e6": (lambda: _machine(count=1_000_000), "Machine 'pump'.count"),
    "starting age 1e12 h": (lambda: _machine(starting_age_h=1e12), "Machine 'pump'.starting_age_h"),
    "a position age of -5 h": (
        lambda: _machine(position_ages_h=((0.0,), (-5.0,))), "Machine 'pump'.position_ages_h[1][0]"),
    "group downtime cost 1e308": (lambda: Group("g", ("pump",), 1, downtime_per_hour=1e308),
                                  "Group 'g'.downtime_per_hour"),
    "emergency premium inf": (
        lambda: Stock(1, 0, 2, Duration.fixed(24.0), Duration.fixed(2.0), float("inf")),
        "Stock.emergency_premium"),
    "stock s >= S": (lambda: Stock(1, 2, 2, Duration.fixed(24.0)), "Stock.reorder_point"),
    "crews 0": (lambda: Crews(count=0), "Crews.count"),
}


@pytest.mark.parametrize("case", sorted(CASES))
def test_python_built_objects_refuse_values_out_of_bounds(case: str) -> None:
    build, field = CASES[case]
    with pytest.raises(InputError) as caught:
        build()
    message = str(caught.value)
    assert message.startswith(f"{field}: "), message
    assert "\n" not in message and "expected" in message


def test_values_at_the_bounds_are_accepted() -> None:
    # the ends of the documented ranges (docs/scenario-format.md, "Bounds")
    Study("s", 1.0, 1, 0)
    Study("s", 1000 * 8766.0, 1_000_000, 0)
    Costs(failure=1e12, holding_rate_per_year=1.0)
    LifeDistribution(0.1, 1.0)
    LifeDistribution(20.0, 1e40)  # a derived rating life may be far beyond 1,000 years
    LifeDistribution(10.0, 1.0, family="lognormal")
    Duration("weibull", 1 / 3600, shape=0.1)
    Duration("lognormal", 1.0, p90_h=1000.0)
    Duration.fixed(0.0)
    Policy("age", interval_h=8766e3)
    Bearing("B1", BearingType.BALL, 1e9, price=1e12)
    _machine(count=100_000, starting_age_h=8766e3)


# --- the same checks read from a file name the key path ---------------------------------
FILE_CASES = {
    # (edit of the tiny scenario, key path the message must name)
    "horizon 30 min": ([('horizon = "2 years"', 'horizon = "30 min"')], "study.horizon"),
    "group downtime cost 1e308": (
        [],
        "group[0].downtime_per_hour"),
    "weibull lead time shape": (
        [('lead_time = "5 d"', 'lead_time = { kind = "weibull", shape = 1e-6, scale = "5 d" }')],
        "bearing[0].lead_time.shape"),
    "lognormal lead time spread": (
        [('lead_time = "5 d"', 'lead_time = { kind = "lognormal", median = "1 h", p90 = "2000 h" }')],
        "bearing[0].lead_time.p90"),
    "life shape 0.001": (
        [('  radial_load = "3 kN"\n  speed = "1480 rpm"\n',
          '  life = { shape = 0.001, scale = "20000 h" }\n')],
        "machine[0].position[0].life.shape"),
    "lognormal life sigma 50": (
        [('  radial_load = "3 kN"\n  speed = "1480 rpm"\n',
          '  life = { family = "lognormal", shape = 50, scale = "20000 h" }\n')],
        "machine[0].position[0].life.shape"),
    "crews 0": ([("[policy]", "[crews]\ncount = 0\n\n[policy]")], "crews.count"),
}
_GROUP = '\n[[group]]\nid = "g"\nmachines = ["pump"]\nneed = 1\ndowntime_per_hour = 1e308\n'


@pytest.mark.parametrize("case", sorted(FILE_CASES))
def test_the_file_path_names_the_key(tmp_path: Path, case: str) -> None:
    edits, key = FILE_CASES[case]
    path = tiny(tmp_path, edits, extra=_GROUP if "group" in case else "")
    with pytest.raises(InputError) as caught:
        parse_scenario(path.read_text(encoding="utf-8"), source=path.name)
    assert re.match(rf"{re.escape(path.name)}: {re.escape(key)}: expected", str(caught.value)), \
        str(caught.value)
    message = expect_one_line_error(["check", str(path)], cwd=tmp_path)
    assert f"{path}: {key}: " in message, message

"""Reliability target → ratings → a new selection (fleetsim.study.retrofit, size --scenario)."""

from __future__ import annotations

import json
import math

import pytest

from fleetsim.cli import main
from fleetsim.life import read_catalogue
from fleetsim.scenario import build_scenario, load_scenario
from fleetsim.study.retrofit import machine_reliability, plan_retrofit
from fleetsim.study.variants import read_document

PUMPS = "scenarios/pump_stations.toml"
CATALOGUE = "scenarios/catalogue.csv"


def test_every_choice_is_adequate_and_machines_meet_the_target() -> None:
    scenario = load_scenario(PUMPS)
    document, _ = read_document(PUMPS)
    period_h = 5 * 8766.0
    plan = plan_retrofit(scenario, document, read_catalogue(CATALOGUE), 0.9, period_h)
    # Equal allocation to n positions in series: R_i = R^(1/n) (any reliability text).
    for c in plan.choices:
        assert math.isclose(c.required_reliability, 0.9 ** (1 / 4), rel_tol=1e-12)
        assert c.selected is not None and c.selected_rating_N >= c.required_rating_N
    new = build_scenario({k: v for k, v in plan.document.items() if k != "variant"})
    for machine, r in machine_reliability(new, period_h).items():
        # Each position at least R_i with the credit it had (a larger bearing only
        # raises a_ISO through Cu), so the series product is at least the target.
        assert r >= 0.9, machine
    # The plan left the original document alone and dropped stock of unused bearings.
    assert {b["id"] for b in document["bearing"]} <= {b["id"] for b in plan.document["bearing"]}
    used = {p["bearing"] for m in plan.document["machine"] for p in m["position"]}
    assert set(plan.document["stores"]) <= used


def test_required_rating_matches_the_single_position_calculation() -> None:
    # The same figure as `fleetsim size` for that position's load and speed, with the
    # operating hours of the period and the position's a_ISO × field factor credited.
    scenario = load_scenario(PUMPS)
    document, _ = read_document(PUMPS)
    plan = plan_retrofit(scenario, document, read_catalogue(CATALOGUE), 0.95, 3 * 8766.0,
                         machines=["hill-pump-1"])
    m = scenario.machine("hill-pump-1")
    pos = m.positions[0]
    d = pos.derived
    assert d is not None
    from fleetsim.life import required_dynamic_rating

    expected = required_dynamic_rating(
        d.equivalent_load_N, d.speed_rpm, 3 * 8766.0 * m.operating_share, 0.95 ** (1 / 4),
        bearing_type=scenario.bearings[pos.bearing_id].bearing_type, model=d.model,
        a_iso=(d.a_iso or 1.0) * pos.field_factor)
    first = next(c for c in plan.choices if c.position == pos.id)
    assert math.isclose(first.required_rating_N, expected, rel_tol=1e-12)
    assert {c.machine for c in plan.choices} == {"hill-pump-1"}


def test_size_scenario_json(capsys, tmp_path) -> None:
    code = main(["size", "--scenario", PUMPS, "--reliability", "0.9", "--life", "5 years",
                 "--catalog", CATALOGUE, "--machine", "hill-pump-1", "--replications", "20",
                 "--out", str(tmp_path / "r"), "--json", "--quiet"])
    assert code == 0
    obj = json.loads(capsys.readouterr().out)
    assert obj["machine_reliability"]["hill-pump-1"]["meets_target"] is True
    assert set(obj["cost_per_year"]) == {"Today's bearings", "New selection"}
    assert (tmp_path / "r" / "report.html").exists()


@pytest.mark.parametrize("extra, option", [
    ([], "--catalog"),
    (["--catalog", CATALOGUE, "--load", "4 kN"], "--load"),
    (["--catalog", CATALOGUE, "--machine", "nope"], "--machine"),
])
def test_size_scenario_bad_input(extra, option, capsys) -> None:
    code = main(["size", "--scenario", PUMPS, "--reliability", "0.9", "--life", "5 years", *extra])
    err = capsys.readouterr().err
    assert code == 2 and option in err and err.count("\n") == 1

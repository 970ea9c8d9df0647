"""Reliability target → ratings → a new selection (fleetsim.study.retrofit, size --scenario)."""

from __future__ import annotations

import copy
import json
import math
import warnings

import pytest

from fleetsim.cli import main
from fleetsim.errors import LifeModelWarning
from fleetsim.life import read_catalogue
from fleetsim.scenario import build_scenario
from fleetsim.study.retrofit import machine_reliability, plan_retrofit
from fleetsim.study.variants import read_document

PUMPS = "scenarios/pump_stations.toml"
CATALOGUE = "scenarios/catalogue.csv"
YEARS_5 = 5 * 8766.0


def _plan(document, target=0.9, period_h=YEARS_5, **kwargs):
    doc = {k: v for k, v in document.items() if k != "variant"}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        scenario = build_scenario(doc)
    return scenario, plan_retrofit(scenario, doc, read_catalogue(CATALOGUE), target, period_h,
                                   **kwargs)


def _build(doc):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", LifeModelWarning)
        return build_scenario({k: v for k, v in doc.items() if k != "variant"})


def test_pump_demo_keeps_what_meets_its_share_and_never_changes_a_bore() -> None:
    document, _ = read_document(PUMPS)
    scenario, plan = _plan(document)
    catalogue = {c.designation: c for c in read_catalogue(CATALOGUE)}
    # Equal allocation to the n positions in series that can change: R_i = R^(1/n)
    # (any reliability text); every pump position can change here or is kept.
    changed = [c for c in plan.choices if c.selected is not None]
    kept = [c for c in plan.choices if c.selected is None]
    assert changed and kept
    for c in kept:
        assert c.note.startswith("kept")
        if c.note == "kept: meets its share today":
            assert c.reliability_today >= c.required_reliability
    for c in plan.choices:
        if c.selected is None and c.required_reliability is not None:
            # A position below its share is changed whenever the catalogue can.
            assert c.reliability_today >= c.required_reliability or "no " in c.note
    for c in changed:
        today = scenario.bearings[c.current_bearing]
        pick = catalogue[c.selected]
        assert pick.dynamic_rating_N >= today.dynamic_rating_N  # never a lower rating
        assert pick.bore_mm == today.bore_mm  # today's bore unless told otherwise
        assert c.reliability_selected >= c.required_reliability
        assert c.selected_rating_N >= c.required_rating_N
    # The hill pumps meet 0.90 over 5 years today: nothing of theirs changes.
    rel_today = machine_reliability(scenario, YEARS_5)
    for m in ("hill-pump-1", "hill-pump-2", "hill-pump-3"):
        assert rel_today[m] >= 0.9
        assert all(c.selected is None for c in plan.choices if c.machine == m)
    # The new document simulates what the plan says: each machine's reliability is the
    # product of its positions' (positions in series).
    new = _build(plan.document)
    rel_new = machine_reliability(new, YEARS_5)
    for m in new.machines:
        product = math.prod(next(c.reliability_selected for c in plan.choices
                                 if c.machine == m.id and c.position == p.id.split("#")[0])
                            for p in m.positions)
        assert math.isclose(rel_new[m.id], product, rel_tol=1e-9)
    # The plan left the original document alone and dropped stock of unused bearings.
    assert {b["id"] for b in document["bearing"]} <= {b["id"] for b in plan.document["bearing"]}
    used = {p["bearing"] for m in plan.document["machine"] for p in m["position"]}
    assert set(plan.document["stores"]) <= used


def test_a_bore_changes_only_when_allowed() -> None:
    document, _ = read_document(PUMPS)
    scenario, keep = _plan(document, target=0.99, machines=["north-pump-1"])
    _, free = _plan(document, target=0.99, machines=["north-pump-1"], bore="any")
    catalogue = {c.designation: c for c in read_catalogue(CATALOGUE)}
    bores = {c.position: (scenario.bearings[c.current_bearing].bore_mm,
                          catalogue[c.selected].bore_mm if c.selected else None)
             for c in free.choices}
    assert any(new is not None and new != old for old, new in bores.values())
    for c in keep.choices:
        if c.selected is not None:
            assert catalogue[c.selected].bore_mm == scenario.bearings[c.current_bearing].bore_mm


def test_share_is_spread_over_the_positions_that_can_change() -> None:
    # A position with a field life cannot change, and one that meets its share keeps
    # its bearing: the positions changed share what is left equally,
    # R_i = (R / Π R_kept)^(1/n) (apportionment of a series system; any reliability text).
    document, _ = read_document(PUMPS)
    doc = copy.deepcopy(document)
    m_doc = next(m for m in doc["machine"] if m["id"] == "north-pump-1")
    nde = next(p for p in m_doc["position"] if p["id"] == "motor-nde")
    for key in ("radial_load", "axial_load", "speed"):
        nde.pop(key)
    nde["life"] = {"shape": 1.5, "scale": "400000 h"}
    scenario, plan = _plan(doc, target=0.85, machines=["north-pump-1"], bore="any")
    m = scenario.machine("north-pump-1")
    t_op = YEARS_5 * m.operating_share
    nde_choice = next(c for c in plan.choices if c.position == "motor-nde")
    assert nde_choice.required_reliability is None
    assert nde_choice.note == "kept: life given explicitly"
    assert math.isclose(nde_choice.reliability_today,
                        float(next(p for p in m.positions if p.id == "motor-nde")
                              .life.reliability(t_op)), rel_tol=1e-12)
    changed = [c for c in plan.choices if c.selected is not None]
    kept = [c for c in plan.choices if c.selected is None]
    assert changed
    held = math.prod(c.reliability_today for c in kept)
    for c in changed:
        assert math.isclose(c.required_reliability, (0.85 / held) ** (1 / len(changed)),
                            rel_tol=1e-12)
    for c in kept:
        if c.note == "kept: meets its share today":
            assert c.reliability_today >= c.required_reliability
    assert machine_reliability(_build(plan.document), YEARS_5)["north-pump-1"] >= 0.85


def test_each_candidate_is_credited_its_own_a_iso() -> None:
    # With κ and e_C the candidate's life uses its own fatigue limit Cu: the selected
    # bearing's reliability equals that of the new scenario built from the document
    # (ISO 281 a_ISO depends on e_C·Cu/P).
    document, _ = read_document(PUMPS)
    doc = copy.deepcopy(document)
    doc["life"] = {"model": "iso281", "viscosity_ratio": 1.0, "contamination": 0.3}
    _, plan = _plan(doc, target=0.97, machines=["river-pump-1"])
    new = _build(plan.document)
    m = new.machine("river-pump-1")
    t_op = YEARS_5 * m.operating_share
    assert any(c.selected for c in plan.choices)
    for c in plan.choices:
        pos = next(p for p in m.positions if p.id == c.position)
        assert math.isclose(float(pos.life.reliability(t_op)), c.reliability_selected,
                            rel_tol=1e-9)
        if c.selected:
            assert c.reliability_selected >= c.required_reliability


def test_size_scenario_json(capsys, tmp_path) -> None:
    code = main(["size", "--scenario", PUMPS, "--reliability", "0.9", "--life", "5 years",
                 "--catalog", CATALOGUE, "--machine", "north-pump-1", "--replications", "20",
                 "--out", str(tmp_path / "r"), "--json", "--quiet"])
    assert code == 0
    obj = json.loads(capsys.readouterr().out)
    assert set(obj["cost_per_year"]) == {"Today's bearings", "New selection"}
    assert (tmp_path / "r" / "report.html").exists()
    assert all({"note", "reliability_today", "reliability_selected"} <= set(r)
               for r in obj["positions"])


@pytest.mark.parametrize("extra, option", [
    ([], "--catalog"),
    (["--catalog", CATALOGUE, "--load", "4 kN"], "--load"),
    (["--catalog", CATALOGUE, "--machine", "nope"], "--machine"),
    (["--catalog", CATALOGUE, "--bore", "wide"], "--bore"),
    (["--catalog", CATALOGUE, "--allocation", "random"], "--allocation"),
])
def test_size_scenario_bad_input(extra, option, capsys) -> None:
    code = main(["size", "--scenario", PUMPS, "--reliability", "0.9", "--life", "5 years", *extra])
    err = capsys.readouterr().err
    assert code == 2 and option in err and err.count("\n") == 1


def _price(plan, scenario) -> float:
    catalogue = {c.designation: c for c in read_catalogue(CATALOGUE)}
    total = 0.0
    for c in plan.choices:
        if c.selected is not None:
            m = scenario.machine(c.machine)
            copies = sum(p.id.split("#")[0] == c.position for p in m.positions)
            total += catalogue[c.selected].price * copies
    return total


@pytest.mark.parametrize("machine, target, bore", [
    ("north-pump-1", 0.9, "keep"), ("river-pump-1", 0.95, "any")])
def test_cost_allocation_meets_the_target_for_no_more_than_equal_shares(machine, target,
                                                                         bore) -> None:
    # The cheapest feasible combination costs no more than any other feasible one, in
    # particular the equal-share plan, and it still meets the target.
    document, _ = read_document(PUMPS)
    scenario, equal = _plan(document, target=target, machines=[machine], bore=bore)
    _, cheap = _plan(document, target=target, machines=[machine], allocation="cost", bore=bore)
    assert machine_reliability(_build(equal.document), YEARS_5)[machine] >= target
    assert machine_reliability(_build(cheap.document), YEARS_5)[machine] >= target
    assert _price(cheap, scenario) <= _price(equal, scenario)
    catalogue = {c.designation: c for c in read_catalogue(CATALOGUE)}
    for c in cheap.choices:
        if c.selected is not None:
            today = scenario.bearings[c.current_bearing]
            assert catalogue[c.selected].dynamic_rating_N >= today.dynamic_rating_N
            if bore == "keep":
                assert catalogue[c.selected].bore_mm == today.bore_mm


def test_cost_allocation_finds_a_plan_where_equal_shares_cannot() -> None:
    # At 0.92 with today's bores a motor bearing cannot reach an equal share, so the
    # equal plan misses; the cheapest combination lets the others carry more.
    document, _ = read_document(PUMPS)
    _, equal = _plan(document, target=0.92, machines=["north-pump-1"])
    _, cheap = _plan(document, target=0.92, machines=["north-pump-1"], allocation="cost")
    assert machine_reliability(_build(equal.document), YEARS_5)["north-pump-1"] < 0.92
    assert machine_reliability(_build(cheap.document), YEARS_5)["north-pump-1"] >= 0.92

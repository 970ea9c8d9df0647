"""The retrofit's before/after table agrees with the plan it shows."""

from __future__ import annotations

from fleetsim.life import read_catalogue
from fleetsim.report.retrofit_table import retrofit_table
from fleetsim.scenario import build_scenario
from fleetsim.study.retrofit import plan_retrofit
from fleetsim.study.variants import read_document


def test_before_after_rows_follow_the_plan_and_changed_positions_meet_their_share() -> None:
    path = "scenarios/pump_stations.toml"
    document, _ = read_document(path)
    doc = {k: v for k, v in document.items() if k != "variant"}
    today = build_scenario(doc, source=path)
    period_h, target = 5 * 8766.0, 0.9
    plan = plan_retrofit(today, document, read_catalogue("scenarios/catalogue.csv"), target,
                         period_h)
    new = build_scenario({k: v for k, v in plan.document.items() if k != "variant"}, source=path)
    table = retrofit_table(today, new, plan.choices, period_h, target)
    assert all(len(row) == len(table.columns) for row in table.rows)
    choice = {(c.machine, c.position): c for c in plan.choices}
    shown = set()
    for row, changed in zip(table.rows, table.changed, strict=True):
        assert row[5].startswith("changed" if changed else "kept")
        assert not row[5].startswith("kept: kept")
        for machine in row[1].split(", "):
            c = choice[(machine, row[0])]
            shown.add((machine, row[0]))
            assert changed == (c.selected is not None and c.selected != c.current_bearing)
            if changed:
                # A bearing chosen for the target gives its position at least its share of
                # the machine target (the share the plan allocated to it).
                after = float(row[7].split("\u00a0")[0]) / 100
                assert after >= c.required_reliability - 0.0005  # shown to 0.1 %
    assert shown == set(choice)  # every position of the plan is in the table, once
    assert len(table.rows) < len(plan.choices)  # alike positions share a row
    assert "90.0" in table.note

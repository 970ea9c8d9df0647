"""The retrofit's before/after table agrees with the plan it shows."""

from __future__ import annotations

import math

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
    assert len(table.rows) == len(plan.choices)
    assert all(len(row) == len(table.columns) for row in table.rows)
    for row, changed, choice in zip(table.rows, table.changed, plan.choices, strict=True):
        assert row[0] == f"{choice.machine} / {choice.position}"
        assert row[4].startswith("changed" if changed else "kept")
        if changed:
            # A bearing chosen for the target gives its position at least the allocated
            # share of the machine target (equal allocation over positions in series).
            after = float(row[6].split("\u00a0")[0].replace(",", "")) / 100
            assert after >= choice.required_reliability - 0.0005  # shown to 0.1 %
            assert math.isfinite(choice.required_reliability)
    assert "90.0" in table.note

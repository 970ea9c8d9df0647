"""``fleetsim run`` and ``fleetsim sweep``: outputs, variants, resume, bad input."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from fleetsim.cli import main
from fleetsim.study.variants import parse_values, set_path

SMALL = """
[study]
name = "Small <plant>"
horizon = "5 years"
replications = 12
seed = 5

[costs]
planned_replacement = 300
failure = 2000
downtime_per_hour = 50

[[bearing]]
id = "QB-1"
type = "ball"
dynamic_rating = "30 kN"
static_rating = "18 kN"
price = 60

[[machine]]
id = "fan"
count = 4
  [[machine.position]]
  id = "de"
  bearing = "QB-1"
  radial_load = "4 kN"
  speed = "1500 rpm"
  [[machine.position]]
  id = "nde"
  bearing = "QB-1"
  radial_load = "3 kN"
  speed = "1500 rpm"

[policy]
kind = "age"
interval = "12000 h"

[crews]
planned_repair = "4 h"
unplanned_repair = "10 h"

[[variant]]
name = "Run to failure"
set = { policy = { kind = "run-to-failure" } }
"""


@pytest.fixture()
def small(tmp_path: Path) -> Path:
    p = tmp_path / "small.toml"
    p.write_text(SMALL)
    return p


def test_run_writes_the_report_and_json(small: Path, tmp_path: Path, capsys) -> None:
    out = tmp_path / "rep"
    code = main(["run", str(small), "--out", str(out), "--json", "--quiet"])
    assert code == 0
    obj = json.loads(capsys.readouterr().out)
    assert (out / "report.html").exists() and (out / "summary.json").exists()
    assert (out / "replications.csv").exists()
    text = (out / "report.html").read_text()
    assert "Small &lt;plant&gt;" in text and "<plant>" not in text
    assert "qualified, licensed engineer" in text
    assert obj["report"].endswith("report.html")
    # The same seed gives the same summary.json.
    first = (out / "summary.json").read_bytes()
    assert main(["run", str(small), "--out", str(out), "--quiet", "--workers", "2"]) == 0
    capsys.readouterr()
    assert (out / "summary.json").read_bytes() == first


def test_run_table_output_names_both_variants(small: Path, tmp_path: Path, capsys) -> None:
    assert main(["run", str(small), "--out", str(tmp_path / "r"), "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "Today's practice" in out and "Run to failure" in out and "Report:" in out


def test_sweep_marks_the_best_and_the_analytic_optimum(small: Path, tmp_path: Path, capsys) -> None:
    code = main(["sweep", str(small), "--vary", "policy.interval=6000:18000:6000 h",
                 "--out", str(tmp_path / "s"), "--quiet", "--replications", "8"])
    assert code == 0
    out = capsys.readouterr().out
    # The recommendation and its evidence come first.
    assert out.startswith("Recommended on cost per year (policy view")
    assert "Closed-form optimum interval" in out
    assert (tmp_path / "s" / "figures" / "cost_rate_sweep.png").exists()


@pytest.mark.parametrize(
    "args, fragment",
    [
        (["run", "missing.toml"], "missing.toml"),
        (["sweep", "{small}", "--vary", "policy.interval"], "--vary"),
        (["sweep", "{small}", "--vary", "machine[9].count=2"], "no entry [9]"),
        (["sweep", "{small}", "--vary", "policy.interval=5 kN"], "policy.interval"),
        (["run", "{small}", "--engine", "vector", "--replications", "0"], "--replications"),
        (["run", "{small}", "--workers", "-1"], "--workers"),
        (["run", "{small}", "--seed", "-1"], "--seed: expected a seed (a whole number >= 0), got -1"),
        (["sweep", "{small}", "--vary", "policy.interval=6000 h", "--seed", "-1"], "--seed"),
    ],
)
def test_bad_input_is_one_line(args, fragment, small: Path, tmp_path: Path, capsys,
                               monkeypatch) -> None:
    monkeypatch.chdir(tmp_path)
    code = main([a.replace("{small}", str(small)) for a in args])
    err = capsys.readouterr().err
    assert code == 2
    assert err.startswith("fleetsim: error:") and err.count("\n") == 1
    assert fragment in err


def test_key_paths_and_values() -> None:
    doc = {"machine": [{"id": "a", "count": 1, "position": [{"id": "x"}]}], "policy": {"kind": "age"}}
    assert set_path(doc, "machine[a].position[x].speed", "5 rpm")["machine"][0]["position"][0]["speed"] == "5 rpm"
    assert set_path(doc, "machine[0].count", 3)["machine"][0]["count"] == 3
    assert set_path(doc, "policy.interval", "1 h")["policy"] == {"kind": "age", "interval": "1 h"}
    assert doc["policy"] == {"kind": "age"}  # not modified
    assert parse_values("1:3:1", "x") == [1, 2, 3]
    assert parse_values("10:20:5 h", "x") == ["10 h", "15 h", "20 h"]
    assert parse_values("8000, 16000 h", "x") == ["8000 h", "16000 h"]  # the unit applies to all
    assert parse_values("8000 h, 2 years", "x") == ["8000 h", "2 years"]
    assert parse_values("1, 2.5", "x") == [1, 2.5]
    assert parse_values('"a", {kind = "age", interval = "5 h"}', "x") == [
        "a", {"kind": "age", "interval": "5 h"}]


def test_interrupted_run_resumes_to_the_same_result(small: Path, tmp_path: Path, capsys,
                                                    monkeypatch) -> None:
    import fleetsim.study.study as study_mod

    clean = tmp_path / "clean"
    assert main(["run", str(small), "--out", str(clean), "--quiet"]) == 0
    real = study_mod.replicate
    calls = {"n": 0}

    def flaky(payload, seed):  # type: ignore[no-untyped-def]
        calls["n"] += 1
        if calls["n"] == 17:  # during the second variant
            raise KeyboardInterrupt
        return real(payload, seed)

    out = tmp_path / "resumed"
    monkeypatch.setattr(study_mod, "replicate", flaky)
    assert main(["run", str(small), "--out", str(out), "--quiet"]) == 130
    assert not (out / "summary.json").exists()
    checkpoints = list((tmp_path / ".resumed.checkpoints").glob("*.jsonl"))
    assert len(checkpoints) == 2
    resumed_calls = {"n": 0}

    def counting(payload, seed):  # type: ignore[no-untyped-def]
        resumed_calls["n"] += 1
        return real(payload, seed)

    monkeypatch.setattr(study_mod, "replicate", counting)
    assert main(["run", str(small), "--out", str(out), "--quiet", "--resume"]) == 0
    # 2 variants × 12 replications; 16 had finished before the interruption.
    assert resumed_calls["n"] == 24 - 16
    capsys.readouterr()
    assert (out / "summary.json").read_bytes() == (clean / "summary.json").read_bytes()
    assert not (tmp_path / ".resumed.checkpoints").exists()


def test_a_discounted_study_says_so_everywhere(tmp_path: Path, capsys) -> None:
    p = tmp_path / "disc.toml"
    p.write_text(SMALL.replace("downtime_per_hour = 50", "downtime_per_hour = 50\ndiscount_rate = 0.07"))
    out = tmp_path / "r"
    assert main(["run", str(p), "--out", str(out), "--replications", "4"]) == 0
    text = " ".join(capsys.readouterr().out.split())  # the terminal wraps its lines
    assert "discounted at 7 % a year" in text and "equivalent annual cost" in text
    summary = json.loads((out / "summary.json").read_text())
    assert "7 %" in summary["extra"]["cost_basis"]
    assert "discounted at 7 %" in (out / "report.html").read_text()
    # the sweep leaves out its undiscounted closed-form curve, and says why
    code = main(["sweep", str(p), "--vary", "policy.interval=8000,16000 h", "--json", "--quiet",
                 "--out", str(tmp_path / "s"), "--replications", "4"])
    assert code == 0
    sweep = json.loads(capsys.readouterr().out)
    assert "undiscounted" in sweep["extra"]["analytic_note"]
    assert "analytic_optimum_interval_h" not in sweep["extra"]


def test_an_inspection_sweep_draws_its_cost_curve_and_names_only_what_varies(
        small: Path, tmp_path: Path, capsys) -> None:
    out = tmp_path / "insp"
    code = main(["sweep", str(small), "--json", "--quiet", "--out", str(out), "--replications", "4",
                 "--vary", 'policy={kind = "condition", inspection_every = "2 weeks", '
                           'detection = 0.9}', "--vary", "life.pf_interval=3 weeks",
                 "--vary", "policy.inspection_every=1,4 weeks", "--vary", "costs.inspection=20"])
    assert code == 0
    sweep = json.loads(capsys.readouterr().out)
    # The file's base case (age replacement, no inspections) is simulated beside the grid.
    assert sweep["baseline"] == "Today's practice"
    assert sweep["extra"]["best_variant"] in ("inspect every 1\u00a0weeks",
                                              "inspect every 4\u00a0weeks",
                                              "Today's practice")
    assert (out / "figures" / "cost_rate_sweep.png").exists()
    assert "Cost rate against inspection interval" in (out / "report.html").read_text()
    assert "analytic_optimum_interval_h" not in sweep["extra"]  # age replacement's closed form


DEMOS = Path(__file__).resolve().parent.parent / "scenarios"


def test_the_pump_demo_sweep_decides_on_the_policy_view_against_the_base_case(
        tmp_path: Path, capsys) -> None:
    code = main(["sweep", str(DEMOS / "pump_stations.toml"), "--json", "--quiet",
                 "--vary", "policy.interval=20000,30000,60000 h", "--replications", "6",
                 "--out", str(tmp_path / "pump")])
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    # The file's base case (30,000 h) is the baseline, found among the swept values.
    assert doc["baseline"] == "replace at 30,000\u00a0h (the file's base case)"  # in words
    rec = doc["recommended"]
    assert rec["view"] == "policy" and rec["objective"] == "cost"
    assert rec["variant"] in [v["variant"] for v in doc["variants"]]
    assert rec["variant"] in doc["indistinguishable_from_best"]
    for v in doc["variants"]:
        pv = v["policy_view"]["cost_per_year"]
        assert pv["ci_low"] <= pv["mean"] <= pv["ci_high"]
    stock = doc["stock_advice"]
    assert {a["bearing"] for a in stock} == {"WB-50", "WB-36", "WB-30", "CR-60", "AC-45"}
    for a in stock:
        assert set(a) >= {"bearing", "reorder_point", "order_up_to", "target_fill_rate",
                          "simulated_fill_rate", "sized_for_variant"}
        assert a["sized_for_variant"] == rec["variant"]
        assert set(a["simulated_fill_rate"]) >= {"mean", "ci_low", "ci_high"}
        assert a["reorder_point"] < a["order_up_to"]


def test_run_prints_its_recommendation_first_and_keeps_the_contract(
        small: Path, tmp_path: Path, capsys) -> None:
    assert main(["run", str(small), "--out", str(tmp_path / "r"), "--quiet",
                 "--replications", "6"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("Recommended on cost per year (policy view")
    assert main(["run", str(small), "--out", str(tmp_path / "r"), "--quiet", "--json",
                 "--replications", "6", "--objective", "availability",
                 "--baseline", "Run to failure"]) == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["baseline"] == "Run to failure"
    assert doc["recommended"]["objective"] == "availability"
    assert doc["recommended"]["view"] == "policy"
    assert doc["stock_advice"] == []  # nothing is stocked in this plant


def test_a_cost_sweep_is_a_sensitivity_study(small: Path, tmp_path: Path, capsys) -> None:
    code = main(["sweep", str(small), "--json", "--quiet", "--replications", "4",
                 "--vary", "costs.failure=500,4000", "--out", str(tmp_path / "c")])
    assert code == 0
    doc = json.loads(capsys.readouterr().out)
    assert doc["recommended"]["variant"] is None
    assert doc["baseline"] == "Today's practice"
    assert [r["setting"] for r in doc["sensitivity"]] == ["costs.failure=500", "costs.failure=4000"]
    code = main(["sweep", str(small), "--quiet", "--replications", "4",
                 "--vary", "costs.failure=500,4000", "--out", str(tmp_path / "c")])
    assert capsys.readouterr().out.startswith("Sensitivity study of costs.failure")


def test_an_unknown_baseline_is_a_one_line_error(small: Path, tmp_path: Path, capsys) -> None:
    code = main(["run", str(small), "--baseline", "Nope", "--out", str(tmp_path / "x")])
    assert code == 2
    err = capsys.readouterr().err
    assert "--baseline" in err and "Nope" in err and "Traceback" not in err


def test_size_scenario_prints_its_answer_first_and_the_decision_contract(
        tmp_path: Path, capsys) -> None:
    args = ["size", "--scenario", str(DEMOS / "pump_stations.toml"), "--reliability", "0.9",
            "--life", "5 years", "--catalog", str(DEMOS / "catalogue.csv"),
            "--machine", "north-pump-1", "--replications", "6", "--out", str(tmp_path / "r"),
            "--quiet"]
    assert main(args) == 0
    out = capsys.readouterr().out
    assert out.startswith("north-pump-1: reliability over the period")
    assert "Recommended on cost per year (policy view" in out.split("Target:")[0]
    assert main([*args, "--json"]) == 0
    obj = json.loads(capsys.readouterr().out)
    assert obj["baseline"] == "Today's bearings"
    assert obj["recommended"]["view"] == "policy"
    assert set(obj["policy_view"]) == {"Today's bearings", "New selection"}


def test_until_resolved_adds_replications_and_says_how_it_ended(
        small: Path, tmp_path: Path, capsys) -> None:
    assert main(["run", str(small), "--out", str(tmp_path / "r"), "--quiet", "--json",
                 "--replications", "6", "--until-resolved", "--indifference-zone", "5 %",
                 "--replication-budget", "24"]) == 0
    doc = json.loads(capsys.readouterr().out)
    seq = doc["sequential"]
    assert seq["replication_budget"] == 24 and 6 <= seq["replications"] <= 24
    assert seq["survivors"] and set(seq["survivors"]) <= {v["variant"] for v in doc["variants"]}
    assert seq["resolved"] or seq["replications"] == 24
    assert doc["selection"]["replications"] == seq["replications"]
    assert all(f["view"] in ("budget", "policy", "life") for f in doc["figures"])
    # Bad settings are one-line errors before any work.
    for bad in (["--indifference-zone", "lots"], ["--replication-budget", "3"]):
        assert main(["run", str(small), "--out", str(tmp_path / "x"), "--quiet",
                     "--replications", "6", "--until-resolved", *bad]) == 2

"""Swept settings in words, sweep titles, the user's unit and one report folder per sweep."""

from __future__ import annotations

from fleetsim.cli.study import sweep_folder
from fleetsim.report.settings_words import (
    setting_words,
    sweep_title,
    user_unit,
    value_words,
    variant_words,
)


def test_settings_read_as_words() -> None:
    assert setting_words("policy.interval", "40000 h") == "replace at 40,000\u00a0h"
    assert setting_words("policy.inspection_every", "4 weeks") == "inspect every 4\u00a0weeks"
    assert setting_words("policy.kind", "run-to-failure") == "run to failure"
    assert setting_words("stores.WB-50.order_up_to", 3) == "WB-50: S = 3"
    assert value_words("1e5 h") == "100,000\u00a0h"  # never scientific notation
    assert variant_words([("policy.interval", "20000 h"), ("crews.count", 2)]) == (
        "replace at 20,000\u00a0h; 2 crews"
    )


def test_a_sweep_title_names_what_was_swept_and_its_range() -> None:
    title = sweep_title("Pumps", [("policy.interval", ["20000 h", "30000 h", "40000 h"])])
    assert title == "Pumps: replacement interval from 20,000\u00a0h to 40,000\u00a0h"
    assert sweep_title("Pumps", [("crews.count", [1, 2])]) == "Pumps: number of crews: 1 or 2"


def test_the_users_unit_is_found_only_when_every_value_shares_it() -> None:
    assert user_unit(["4 weeks", "8 weeks"]) == "weeks"
    assert user_unit(["4 weeks", "800 h"]) is None
    assert user_unit(["4", "8"]) is None


def test_two_sweeps_of_one_scenario_get_two_folders() -> None:
    a = sweep_folder("Pump stations", ["policy.interval=20000:100000:10000 h"])
    b = sweep_folder("Pump stations", ["policy.inspection_every=2,4 weeks"])
    assert a != b and a.startswith("pump-stations-sweep-") and b.startswith("pump-stations-sweep-")
    assert sweep_folder("Pump stations", ["policy.interval=20000:100000:10000 h"]) == a
    long = ["stores.WB-50.order_up_to=1,2,3,4,5,6,7,8,9,10,11,12,13,14,15,16,17,18,19,20"]
    other = [long[0] + ",21"]
    assert len(sweep_folder("P", long)) < 90 and sweep_folder("P", long) != sweep_folder("P", other)


def test_pdf_without_a_browser_is_one_line_before_any_work(monkeypatch, tmp_path, capsys) -> None:
    import fleetsim.report.pdf as pdf
    from fleetsim.cli import main

    monkeypatch.setattr(pdf, "find_browser", lambda: None)
    code = main(["run", "scenarios/pump_stations.toml", "--pdf", "--out", str(tmp_path / "r"),
                 "--quiet"])
    err = capsys.readouterr().err.strip().splitlines()
    assert code == 2 and len(err) == 1 and "--pdf" in err[0] and "Chromium" in err[0]
    assert not (tmp_path / "r").exists()

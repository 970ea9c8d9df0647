"""``fleetsim check``: the table, the JSON object and one-line errors with exit code 2."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from fleetsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
PUMPS = ROOT / "scenarios" / "pump_stations.toml"
CONVEYOR = ROOT / "scenarios" / "conveyor.toml"

# Motor drive end of the pump-station demo: C = 48 kN, Fr = 3.0 kN, a_f = 1.1, 1480 rpm.
# L10h = (C/P)^3 · 1e6 / (60 n) with P = a_f · Fr (ISO 281:2007).
MOTOR_DE_P = 1.1 * 3000.0
MOTOR_DE_L10 = (48000 / MOTOR_DE_P) ** 3 * 1e6 / (60 * 1480)


def test_check_prints_the_life_table(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(PUMPS)]) == 0
    out, err = capsys.readouterr()
    assert err == ""
    assert "Pump stations, age replacement" in out
    assert "north-station (2 of 3)" in out
    lines = [
        line for line in out.splitlines() if line.startswith("north-pump-1 ") and "motor-de" in line
    ]
    assert len(lines) == 1
    cells = lines[0].split()
    assert f"{MOTOR_DE_P:,.0f}" in cells and f"{MOTOR_DE_L10:,.0f}" in cells
    assert "age 30,000 h" in lines[0]
    assert "Planning estimates only" in out


def test_check_folds_numbered_positions(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(CONVEYOR)]) == 0
    out = capsys.readouterr().out
    assert "carry-idler#1–96" in out and "return-idler#1–24" in out
    assert "carry-idler#2 " not in out
    assert "127 bearing positions" in out


def test_check_json(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(PUMPS), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["study"]["replications"] == 200
    assert len(data["sha256"]) == 64
    # One row per position of each machine (here nine pumps of one unit each).
    assert len(data["positions"]) == 36
    assert sum(r["units"] for r in data["positions"]) == 36
    row = next(
        r
        for r in data["positions"]
        if r["machine"] == "north-pump-1" and r["position"] == "motor-de"
    )
    assert row["equivalent_load_N"] == pytest.approx(MOTOR_DE_P, rel=1e-12)
    assert row["rating_life_h"] == pytest.approx(MOTOR_DE_L10, rel=1e-12)
    assert row["a_iso"] is None
    # ISO 281 preset: location 0.05·L10, shape 1.5.
    assert row["life"]["location_h"] == pytest.approx(0.05 * MOTOR_DE_L10, rel=1e-12)
    assert row["life"]["shape"] == 1.5
    assert row["policy"]["kind"] == "age" and row["policy"]["interval_h"] == 30000.0
    groups = {g["id"]: g for g in data["groups"]}
    assert groups["north-station"] == {
        "id": "north-station",
        "need": 2,
        "machines": ["north-pump-1", "north-pump-2", "north-pump-3"],
        "units": 3,
    }


def test_check_json_of_given_lives(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(CONVEYOR), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    idler = next(r for r in data["positions"] if r["position"] == "carry-idler#7")
    assert idler["life_source"] == "given" and idler["rating_life_h"] is None
    assert idler["life"] == {"shape": 1.3, "scale_h": 60000.0, "location_h": 0.0}
    assert idler["policy"]["kind"] == "block"


@pytest.mark.parametrize(
    ("text", "fragment"),
    [
        ('[study]\nhorizon = "-1 years"\n', "bad.toml: study.horizon: expected a time > 0"),
        ("[study\n", "bad.toml: TOML syntax error"),
        (
            '[stdy]\nhorizon = "1 year"\n',
            "bad.toml: stdy: unknown key 'stdy'; did you mean 'study'?",
        ),
    ],
)
def test_check_bad_file_gives_one_line_and_exit_2(
    tmp_path: Path, capsys: pytest.CaptureFixture[str], text: str, fragment: str
) -> None:
    bad = tmp_path / "bad.toml"
    bad.write_text(text, encoding="utf-8")
    assert main(["check", str(bad)]) == 2
    out, err = capsys.readouterr()
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("fleetsim: error: ")
    assert fragment in err


def test_check_missing_file(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["check", str(tmp_path / "none.toml")]) == 2
    err = capsys.readouterr().err
    assert "none.toml: scenario file not found" in err and err.count("\n") == 1

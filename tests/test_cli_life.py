"""The ``fleetsim life`` and ``fleetsim size`` commands: outputs and bad input."""

from __future__ import annotations

import json
import math

import pytest

from fleetsim.cli import main

BASE = ["life", "--type", "ball", "--dynamic-rating", "30.7 kN", "--static-rating", "19 kN",
        "--radial-load", "3.2 kN", "--axial-load", "1.1 kN", "--speed", "1480 rpm"]


def run(args, capsys):
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_life_json_has_the_contract_keys(capsys) -> None:
    code, out, _ = run(BASE + ["--reliability", "0.95", "--at", "20000 h", "--json"], capsys)
    assert code == 0
    obj = json.loads(out)
    for key in ["equivalent_load_N", "e", "X", "Y", "rating_life_Mrev", "rating_life_h",
                "reliability", "a1", "life_at_reliability_h", "weibull", "reliability_at",
                "a_iso", "modified_life_h"]:
        assert key in obj
    assert set(obj["weibull"]) == {"shape", "scale_h", "location_h"}
    assert obj["a_iso"] is None and obj["modified_life_h"] is None
    # Hand check: Fa/C0 = 1.1/19 = 0.0579 → between rows 0.056 and 0.070;
    # L10 = (C/P)^3 and L10h = 1e6 L10 / (60 n).
    assert math.isclose(obj["rating_life_Mrev"], (30_700 / obj["equivalent_load_N"]) ** 3, rel_tol=1e-12)
    assert math.isclose(obj["rating_life_h"], obj["rating_life_Mrev"] * 1e6 / (60 * 1480), rel_tol=1e-12)
    assert math.isclose(obj["life_at_reliability_h"], obj["a1"] * obj["rating_life_h"], rel_tol=1e-12)
    assert 0 < obj["reliability_at"] < 1


def test_life_table_and_modified_life(capsys) -> None:
    code, out, _ = run(BASE + ["--viscosity-ratio", "1.5", "--contamination", "0.5",
                               "--fatigue-limit", "0.8 kN"], capsys)
    assert code == 0
    assert "a_ISO" in out and "rating life L10" in out and "qualified, licensed engineer" in out


def test_life_in_pound_force_equals_newtons(capsys) -> None:
    _, out_n, _ = run(["life", "--type", "roller", "--dynamic-rating", "44.482216152605 kN",
                       "--radial-load", "4448.2216152605 N", "--speed", "1000 rpm", "--json"], capsys)
    _, out_l, _ = run(["life", "--type", "roller", "--dynamic-rating", "10000 lbf",
                       "--radial-load", "1000 lbf", "--speed", "1000 rpm", "--json"], capsys)
    a, b = json.loads(out_n), json.loads(out_l)
    assert math.isclose(a["rating_life_h"], b["rating_life_h"], rel_tol=1e-9)
    assert math.isclose(a["rating_life_Mrev"], 10 ** (10 / 3), rel_tol=1e-9)


@pytest.mark.parametrize(
    "change, option",
    [
        (["--radial-load", "5 rpm"], "--radial-load"),
        (["--radial-load", "5"], "--radial-load"),
        (["--radial-load", "-3 kN"], "--radial-load"),
        (["--dynamic-rating", "0 kN"], "--dynamic-rating"),
        (["--speed", "0 rpm"], "--speed"),
        (["--speed", "12 kN"], "--speed"),
        (["--reliability", "1.2"], "--reliability"),
        (["--reliability", "0"], "--reliability"),
        (["--type", "roller"], "--axial-load"),
        (["--viscosity-ratio", "1"], "--viscosity-ratio"),
        (["--model", "nonsense"], "--model"),
        (["--at", "12 kN"], "--at"),
    ],
)
def test_bad_input_is_one_line_exit_2(change, option, capsys) -> None:
    code, out, err = run(BASE + change, capsys)
    assert code == 2
    assert out == ""
    assert err.count("\n") == 1 and err.startswith("fleetsim: error:")
    assert option in err
    assert "Traceback" not in err


def test_load_above_c0_warns_but_runs(capsys) -> None:
    code, out, err = run(["life", "--type", "ball", "--dynamic-rating", "30 kN", "--static-rating",
                          "5 kN", "--radial-load", "8 kN", "--speed", "100 rpm", "--json"], capsys)
    assert code == 0 and "warning" in err and "static rating" in err


def test_size_with_catalogue(capsys, tmp_path) -> None:
    code, out, _ = run(["size", "--type", "ball", "--load", "4 kN", "--speed", "1480 rpm", "--life",
                        "25000 h", "--reliability", "0.99", "--catalog", "scenarios/catalogue.csv",
                        "--json"], capsys)
    assert code == 0
    obj = json.loads(out)
    # C = P (x_D / a1(0.99))^(1/3), x_D = 25000·60·1480/1e6 (ISO 281 a1 formula).
    a1 = 0.95 * (math.log(1 / 0.99) / math.log(1 / 0.9)) ** (2 / 3) + 0.05
    expected = 4000 * (25000 * 60 * 1480 / 1e6 / a1) ** (1 / 3)
    assert math.isclose(obj["required_dynamic_rating_N"], expected, rel_tol=1e-12)
    assert obj["selected"]["dynamic_rating_N"] >= expected
    bad = tmp_path / "cat.csv"
    bad.write_text("designation,type,dynamic_rating_kN\nX1,ball,abc\n")
    code, _, err = run(["size", "--type", "ball", "--load", "4 kN", "--speed", "1480 rpm", "--life",
                        "25000 h", "--reliability", "0.99", "--catalog", str(bad)], capsys)
    assert code == 2 and "cat.csv:2: dynamic_rating_kN" in err


def test_size_reports_when_nothing_fits(capsys) -> None:
    code, out, _ = run(["size", "--type", "roller", "--load", "400 kN", "--speed", "1480 rpm",
                        "--life", "25000 h", "--reliability", "0.99", "--catalog",
                        "scenarios/catalogue.csv"], capsys)
    assert code == 0 and "none of the roller bearings" in out


PAIR = ["life", "--type", "tapered-roller", "--dynamic-rating", "160 kN", "--static-rating",
        "190 kN", "--radial-load", "14 kN", "--radial-load-b", "11 kN", "--axial-load", "5 kN",
        "--speed", "380 rpm", "--e", "0.37", "--X", "0.4", "--Y", "1.6",
        "--arrangement", "face-to-face"]


def test_life_opposed_pair_json_contract(capsys) -> None:
    code, out, _ = run(PAIR + ["--json"], capsys)
    assert code == 0
    obj = json.loads(out)
    assert obj["arrangement"] == "face-to-face"
    assert [b["name"] for b in obj["bearings"]] == ["A", "B"]
    for b in obj["bearings"]:
        assert {"name", "axial_load_N", "equivalent_load_N", "rating_life_h"} <= set(b)
    # Induced thrust Fr/(2Y) (the standard tapered-roller rule, from memory):
    # FaA = 11/3.2 + 5 kN, FaB = 11/3.2 kN.
    assert math.isclose(obj["bearings"][0]["axial_load_N"], 11_000 / 3.2 + 5_000, rel_tol=1e-12)
    assert math.isclose(obj["bearings"][1]["axial_load_N"], 11_000 / 3.2, rel_tol=1e-12)
    assert obj["arrangement_life_h"] == obj["rating_life_h"]
    assert obj["arrangement_life_h"] < min(b["rating_life_h"] for b in obj["bearings"])
    # ISO 76 single-row tapered: P0 = max(Fr, 0.5 Fr + 0.22 cot α Fa), cot α = 1.5/e.
    p0 = max(14_000, 0.5 * 14_000 + 0.33 / 0.37 * (11_000 / 3.2 + 5_000))
    assert math.isclose(obj["static_equivalent_load_N"], p0, rel_tol=1e-12)
    assert math.isclose(obj["static_safety_factor"], 190_000 / p0, rel_tol=1e-12)
    code, out, _ = run(PAIR, capsys)
    assert code == 0 and "bearing A" in out and "in series" in out


def test_life_static_keys_for_a_single_ball_bearing(capsys) -> None:
    code, out, _ = run(BASE + ["--json"], capsys)
    obj = json.loads(out)
    # ISO 76: P0 = max(Fr, 0.6 Fr + 0.5 Fa) = 3.2 kN here (from memory).
    assert obj["static_equivalent_load_N"] == 3_200
    assert math.isclose(obj["static_safety_factor"], 19_000 / 3_200)
    assert obj["arrangement"] == "single" and len(obj["bearings"]) == 1


@pytest.mark.parametrize(
    "args, option",
    [
        (PAIR[:15] + PAIR[21:], "--e"),
        (BASE + ["--e", "0.3"], "--e"),
        (PAIR[:21] + ["--arrangement", "single"], "--radial-load-b"),
        (PAIR + ["--Y", "-1"], "--Y"),
        (PAIR[:9] + PAIR[11:], "--radial-load-b"),
    ],
)
def test_life_contact_angle_bad_input(args, option, capsys) -> None:
    code, out, err = run(args, capsys)
    assert code == 2 and out == "" and err.count("\n") == 1 and option in err


def test_reliability_outside_a1_range_warns_in_the_cli(capsys) -> None:
    code, _, err = run(BASE + ["--reliability", "0.5"], capsys)
    assert code == 0 and "warning" in err and "below 0.90" in err


def test_size_accepts_every_bearing_type(capsys) -> None:
    # C = P (x_D / a1)^(1/p), p = 10/3 for roller bearings (ISO 281), a1(0.9) = 1.
    code, out, _ = run(["size", "--type", "tapered-roller", "--load", "10 kN", "--speed",
                        "380 rpm", "--life", "40000 h", "--reliability", "0.9", "--json"], capsys)
    assert code == 0
    expected = 10_000 * (40_000 * 60 * 380 / 1e6) ** (3 / 10)
    assert math.isclose(json.loads(out)["required_dynamic_rating_N"], expected, rel_tol=1e-12)


def test_size_bore_filter(capsys) -> None:
    args = ["size", "--type", "ball", "--load", "2 kN", "--speed", "1480 rpm", "--life",
            "25000 h", "--reliability", "0.9", "--catalog", "scenarios/catalogue.csv", "--json"]
    code, out, _ = run(args + ["--bore", "50"], capsys)
    assert code == 0 and json.loads(out)["selected"]["bore_mm"] == 50
    code, _, err = run(args + ["--bore", "keep"], capsys)
    assert code == 2 and "--bore" in err and err.count("\n") == 1

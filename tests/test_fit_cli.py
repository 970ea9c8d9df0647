"""The ``fleetsim fit`` command: JSON and table outputs, the plot, and bad input."""

from __future__ import annotations

import json
import math
from pathlib import Path

import pytest

from fleetsim.cli import main

ROOT = Path(__file__).resolve().parents[1]
DEMO = str(ROOT / "scenarios" / "records" / "pump_bearings.csv")


def run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def test_fit_json_grouped_with_catalogue(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(
        ["fit", DEMO, "--group-by", "position", "--catalog-l10", "34650 h", "--json"], capsys
    )
    assert code == 0
    obj = json.loads(out)  # exactly one JSON object
    assert obj["group_by"] == "position" and obj["confidence"] == 0.9
    groups = {g["group"]: g for g in obj["groups"]}
    assert set(groups) == {"motor-de", "motor-nde"}
    for g in groups.values():
        ranks = [c["rank"] for c in g["candidates"]]
        assert ranks == list(range(1, len(ranks) + 1))
        assert sum(c["best"] for c in g["candidates"]) == 1
        best = g["candidates"][0]
        assert best["model"] == g["best"] and best["identifiable"]
        for key in ("B1_h", "B10_h"):
            b = best[key]
            assert b["lower"] < b["estimate"] < b["upper"]
        assert set(best["parameters"]) >= {"shape", "scale_h"}
        assert set(g["life_distribution"]) == {"shape", "scale_h", "location_h"}
        rec = next(c for c in g["candidates"] if c["model"] == g["recommended"])
        assert sum(c["recommended"] for c in g["candidates"]) == 1 and rec["recommended"]
        weights = g["akaike_weights"]
        assert set(weights) == {c["model"] for c in g["candidates"]}
        assert math.isclose(sum(weights.values()), 1.0, rel_tol=1e-12)
        cat = g["catalogue"]
        assert cat["catalog_l10_h"] == 34650.0
        assert math.isclose(cat["field_factor"], rec["B10_h"]["estimate"] / 34650.0, rel_tol=1e-12)
        assert "catalogue life" in cat["verdict"]
    de = groups["motor-de"]
    assert de["records"]["found_at_inspection"] > 0
    assert "qualified, licensed engineer" in obj["caution"]


def test_fit_default_table(capsys: pytest.CaptureFixture[str]) -> None:
    code, out, _ = run(["fit", DEMO, "--catalog-l10", "34650 h"], capsys)
    assert code == 0
    for words in ("rank", "AICc", "(recommended)", "weight", "Rule:", "Weibull 2P", "Weibull 3P", "lognormal 2P",
                  "shape β", "scale η", "B1", "B10", "Field factor", "catalogue life",
                  "qualified, licensed engineer"):  # fmt: skip
        assert words in out, words


def test_fit_writes_plot_atomically(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    png = tmp_path / "weibull.png"
    code, out, _ = run(["fit", DEMO, "--group-by", "bearing", "--plot", str(png)], capsys)
    assert code == 0 and "written to" in out
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert [p.name for p in tmp_path.iterdir()] == ["weibull.png"]  # no temporary left


@pytest.mark.parametrize(
    "args, words",
    [
        (["--catalog-l10", "34650"], "--catalog-l10"),
        (["--catalog-l10", "-5 h"], "--catalog-l10"),
        (["--group-by", "machine"], "--group-by"),
        (["--plot", "/no/such/folder/x.png"], "--plot"),
    ],
)
def test_fit_bad_options_exit_2(args: list[str], words: str, capsys: pytest.CaptureFixture[str]) -> None:
    code, out, err = run(["fit", DEMO, *args], capsys)
    assert code == 2 and out == ""
    assert err.startswith("fleetsim: error:") and words in err and err.count("\n") == 1


def test_fit_bad_records_exit_2(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    bad = tmp_path / "bad.csv"
    bad.write_text("position,hours,outcome\nDE,1200,failed\nDE,-3,failed\n", encoding="utf-8")
    code, _, err = run(["fit", str(bad)], capsys)
    assert code == 2
    assert f"{bad}: row 3, column hours" in err and err.count("\n") == 1
    one = tmp_path / "one.csv"
    one.write_text("hours,outcome\n1200,failed\n3000,still-running\n", encoding="utf-8")
    code, _, err = run(["fit", str(one), "--json"], capsys)
    assert code == 2 and "a single failure" in err and "Traceback" not in err
    code, _, err = run(["fit", str(tmp_path / "missing.csv")], capsys)
    assert code == 2 and "cannot read" in err


def test_fit_group_without_enough_failures_is_skipped_with_warning(
    tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    rec = tmp_path / "r.csv"
    rows = ["position,hours,outcome"]
    rows += [f"DE,{h},failed" for h in (900, 2100, 3300, 4100, 5200)]
    rows += ["DE,6000,still-running", "NDE,4000,failed", "NDE,7000,removed-while-good"]
    rec.write_text("\n".join(rows) + "\n", encoding="utf-8")
    code, out, err = run(["fit", str(rec), "--group-by", "position", "--json"], capsys)
    assert code == 0
    obj = json.loads(out)
    groups = {g["group"]: g for g in obj["groups"]}
    assert "candidates" in groups["DE"]
    assert "a single failure" in groups["NDE"]["error"]
    assert "warning" in err and "NDE" in err

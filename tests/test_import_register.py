"""``fleetsim import``: asset register (CSV, XLSX) → scenario, round trip against the shipped demo.

The reference is the shipped scenario itself (scenarios/conveyor.toml): the
register of the same plant, imported, must give the same model and, on the
same seed, the same simulated figures. The XLSX is written here by openpyxl
from the CSV, so both readers see the same table.
"""

from __future__ import annotations

import csv
import json
import math
from pathlib import Path

import pytest

from fleetsim.cli import main
from fleetsim.errors import InputError
from fleetsim.scenario import load_scenario
from fleetsim.scenario.register import import_register
from fleetsim.study import run_study

ROOT = Path(__file__).resolve().parents[1]
REC = ROOT / "scenarios" / "records"
ASSETS = REC / "conveyor_assets.csv"
CAT = REC / "conveyor_bearings.csv"
SETTINGS = REC / "conveyor_settings.toml"
SHIPPED = ROOT / "scenarios" / "conveyor.toml"


def run(args: list[str], capsys: pytest.CaptureFixture[str]) -> tuple[int, str, str]:
    code = main(args)
    out = capsys.readouterr()
    return code, out.out, out.err


def _xlsx(csv_path: Path, xlsx_path: Path, sheet: str = "assets") -> None:
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = sheet
    lines = [ln for ln in csv_path.read_text(encoding="utf-8").splitlines() if not ln.startswith("#")]
    for cells in csv.reader(lines):
        row: list[object] = []
        for c in cells:
            try:
                row.append(int(c) if c.isdigit() else float(c))
            except ValueError:
                row.append(c or None)
        ws.append(row)
    wb.save(xlsx_path)


def _model(path: Path) -> list[tuple]:
    sc = load_scenario(path)
    out = []
    for m in sc.machines:
        out.append((m.id, m.count, m.operating_share, m.position_ages_h is not None))
        for p in m.positions:
            out.append((p.id, p.bearing_id, p.life, p.policy, p.field_factor))
    out.append(sorted((k, v) for k, v in sc.stores.items()))
    out.append(sorted((k, v) for k, v in sc.bearings.items()))
    return out


@pytest.mark.parametrize("kind", ["csv", "xlsx"])
def test_conveyor_register_round_trips(
    kind: str, tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    src = ASSETS
    if kind == "xlsx":
        src = tmp_path / "assets.xlsx"
        _xlsx(ASSETS, src)
    out = tmp_path / "conveyor.toml"
    code, text, _ = run(["import", str(src), "--catalog", str(CAT), "--settings", str(SETTINGS),
                         "--out", str(out), "--json"], capsys)  # fmt: skip
    assert code == 0
    obj = json.loads(text)
    assert obj["machines"] == 1 and obj["positions"] == 7
    assert Path(obj["ages"]).name == "conveyor_ages.csv"
    assert _model(out) == _model(SHIPPED)
    new, old = load_scenario(out), load_scenario(SHIPPED)
    for m_new, m_old in zip(new.machines, old.machines, strict=True):
        assert m_new.position_ages_h is not None and m_old.position_ages_h is not None
        assert m_new.position_ages_h == m_old.position_ages_h
    if kind == "csv":  # the whole study on the same seed: the same figures
        a = run_study(new, replications=8, seed=5, keep_events=False).replications
        b = run_study(old, replications=8, seed=5, keep_events=False).replications
        assert a.equals(b)
    # check then reads the imported file
    code, _, _ = run(["check", str(out)], capsys)
    assert code == 0


def test_without_settings_a_study_to_edit_is_written(tmp_path: Path) -> None:
    res = import_register(ASSETS, CAT)
    assert "[study]" in res.scenario_toml and "# edit" in res.scenario_toml
    (tmp_path / "ages.csv").write_text(res.ages_csv or "", encoding="utf-8")
    scen = tmp_path / "s.toml"
    scen.write_text(res.scenario_toml, encoding="utf-8")
    sc = load_scenario(scen)
    assert len(sc.machines[0].positions) == 96 + 24 + 2 + 2 + 3
    assert math.isclose(sc.machines[0].operating_share, 7000 / 8766)


def test_bad_rows_name_file_sheet_row_and_column(tmp_path: Path) -> None:
    bad = tmp_path / "a.csv"
    bad.write_text("machine,position,bearing,radial_load_kN,speed_rpm\nm,de,IB-20,x,1480\n")
    with pytest.raises(InputError, match=r"a.csv: row 2, column radial_load_kn"):
        import_register(bad, CAT)
    bad.write_text("machine,position,bearing,radial_load_kN,speed_rpm\nm,de,ZZ-1,3,1480\n")
    with pytest.raises(InputError, match=r"row 2, column bearing.*no bearing 'ZZ-1'"):
        import_register(bad, CAT)
    bad.write_text("machine,position,bearng\nm,de,IB-20\n")
    with pytest.raises(InputError, match="did you mean 'bearing'"):
        import_register(bad, CAT)
    xl = tmp_path / "a.xlsx"
    from openpyxl import Workbook

    wb = Workbook()
    ws = wb.active
    ws.title = "plant"
    ws.append(["machine", "position", "bearing", "radial_load_kN", "speed_rpm"])
    ws.append(["m", "de", "IB-20", 3, -5])
    wb.save(xl)
    with pytest.raises(InputError, match=r"a.xlsx: sheet 'plant', row 2, column speed_rpm"):
        import_register(xl, CAT)
    with pytest.raises(InputError, match="no sheet 'plnt'.*did you mean 'plant'"):
        import_register(xl, CAT, sheet="plnt")


def test_import_refuses_to_overwrite(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    out = tmp_path / "x.toml"
    out.write_text("keep me")
    code, _, err = run(["import", str(ASSETS), "--catalog", str(CAT), "--out", str(out)], capsys)
    assert code == 2 and "--force" in err and out.read_text() == "keep me"


def test_cells_cannot_inject_toml(tmp_path: Path) -> None:
    from openpyxl import Workbook

    xl = tmp_path / "a.xlsx"
    wb = Workbook()
    ws = wb.active
    ws.append(["machine", "position", "bearing", "radial_load_kN", "speed_rpm", "note", "policy"])
    ws.append(["m", "de", "IB-20", 3, 1480, 'line one\n[study]\nname = "x"', "run-to-failure"])
    wb.save(xl)
    res = import_register(xl, CAT)
    assert "\n[study]\nname = \"x\"" not in res.scenario_toml
    assert "# line one [study] name = \"x\"" in res.scenario_toml
    for col, value in (("machine", 'm"x'), ("policy", 'age" }\n[x]'), ("policy", "{ kind = 'age' } \n[x]")):
        wb = Workbook()
        ws = wb.active
        ws.append(["machine", "position", "bearing", "radial_load_kN", "speed_rpm", "policy"])
        row = {"machine": "m", "policy": "run-to-failure", col: value}
        ws.append([row["machine"], "de", "IB-20", 3, 1480, row["policy"]])
        wb.save(xl)
        with pytest.raises(InputError, match=f"column {col}"):
            import_register(xl, CAT)

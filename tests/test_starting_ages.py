"""Fleets that are not new: per-position starting ages from a records file.

The loader (``ages = "file.csv"`` on a machine), its one-line errors naming
the file, row and column, the model's fallback to ``starting_age``, the
``check`` command's starting age and remaining L10, and exact event logs of
age replacement counted from each position's own age.
"""

from __future__ import annotations

import json
import tempfile
import tomllib
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from fleetsim.cli import main
from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.scenario import Machine, Policy, Position, build_scenario, load_scenario
from fleetsim.scenario.model import Bearing, Costs, Crews, Scenario, Study
from fleetsim.sim import simulate
from fleetsim.sim.vector import simulate_vector
from fleetsim.study.figures import figures_of

ROOT = Path(__file__).resolve().parents[1]

PLANT = """\
[study]
horizon = "5 years"

[[bearing]]
id = "FB-1"
type = "ball"
dynamic_rating = "30 kN"
static_rating = "19 kN"

[[machine]]
id = "pump"
count = 3
starting_age = "1000 h"
ages = "records/ages.csv"

  [[machine.position]]
  id = "de"
  bearing = "FB-1"
  radial_load = "3 kN"
  speed = "1480 rpm"

  [[machine.position]]
  id = "idler"
  count = 3
  bearing = "FB-1"
  life = { shape = 1.3, scale = "60000 h" }

[[machine]]
id = "fan"
ages = "records/ages.csv"

  [[machine.position]]
  id = "de"
  bearing = "FB-1"
  life = { shape = 1.5, scale = "40000 h" }
"""

# Rows listed from the most specific to the least, so that "specific wins" is
# not the same as "last row wins".
ROWS = [
    "pump#3,idler#2,700",  # one unit, one copy
    "pump#1,idler,4000",  # one unit, every copy
    "pump,idler#1,300",  # every unit, one copy
    "pump,idler,5000",  # every unit, every copy
    "pump#2,de,12000",
    "fan,de,2500",  # count = 1: the machine id is the unit
]
# units × positions (de, idler#1, idler#2, idler#3); "de" of pump#1 and #3 keep 1000 h.
EXPECTED = {
    "pump": [[1000, 4000, 4000, 4000], [12000, 300, 5000, 5000], [1000, 300, 700, 5000]],
    "fan": [[2500]],
}


def write_plant(folder: Path, rows: list[str], header: str = "unit,position,hours",
                toml: str = PLANT) -> Path:
    (folder / "records").mkdir(exist_ok=True)
    (folder / "records" / "ages.csv").write_text(
        "# invented ages\n" + header + "\n" + "\n".join(rows) + "\n", encoding="utf-8"
    )
    path = folder / "plant.toml"
    path.write_text(toml, encoding="utf-8")
    return path


def test_ages_file_sets_each_position_of_each_unit(tmp_path: Path) -> None:
    s = load_scenario(write_plant(tmp_path, ROWS))
    for m in s.machines:
        assert m.ages_h().tolist() == EXPECTED[m.id]
        assert m.ages_source == str(tmp_path / "records" / "ages.csv")
        for u in range(m.count):
            for j in range(len(m.positions)):
                assert m.age_h(u, j) == EXPECTED[m.id][u][j]


@settings(max_examples=25, deadline=None, derandomize=True)
@given(st.permutations(ROWS))
def test_row_order_does_not_matter(rows: list[str]) -> None:
    with tempfile.TemporaryDirectory() as folder:
        s = load_scenario(write_plant(Path(folder), rows))
    assert {m.id: m.ages_h().tolist() for m in s.machines} == EXPECTED


def test_without_ages_every_position_is_the_starting_age() -> None:
    doc = tomllib.loads(PLANT.replace('ages = "records/ages.csv"\n', ""))
    s = build_scenario(doc, source="plant.toml")
    pump = s.machine("pump")
    assert pump.position_ages_h is None and pump.ages_source is None
    assert pump.age_h(2, 3) == 1000.0
    assert pump.ages_h().shape == (3, 4) and np.all(pump.ages_h() == 1000.0)


def test_build_scenario_resolves_names_against_base_dir(tmp_path: Path) -> None:
    write_plant(tmp_path, ROWS)
    doc = tomllib.loads(PLANT)
    s = build_scenario(doc, source="<notebook>", base_dir=tmp_path)
    assert s.machine("fan").ages_h().tolist() == [[2500.0]]
    # a variant's label after the file name ("plant.toml [name]") still finds the folder
    s = build_scenario(doc, source=f"{tmp_path / 'plant.toml'} [run to failure / 2]")
    assert s.machine("fan").ages_h().tolist() == [[2500.0]]


def test_machine_checks_the_shape_of_its_ages() -> None:
    p = Position("a", "B", LifeDistribution(1.5, 1e4), Policy())
    with pytest.raises(InputError, match="expected 2 rows"):
        Machine("m", 2, 1.0, 0.0, (p,), position_ages_h=((1.0,),))
    with pytest.raises(InputError, match=">= 0"):
        Machine("m", 1, 1.0, 0.0, (p,), position_ages_h=((-1.0,),))
    m = Machine("m", 2, 1.0, 7.0, (p,), position_ages_h=((1.0,), (2.0,)))
    assert (m.age_h(0, 0), m.age_h(1, 0)) == (1.0, 2.0)


# --- errors: one line naming the file, the row (line number) and the column -------------
# The header is line 2 of the file (line 1 is a comment), so the first row is line 3.
CSV_ERRORS = [
    (["pump#2,de,-5"], None, "row 3, column hours", ">= 0"),
    (["pump#2,de,nan"], None, "row 3, column hours", ">= 0"),
    (["pump#2,de,12000 h"], None, "row 3, column hours", "no unit"),
    (["pump#2,de,"], None, "row 3, column hours", "empty cell"),
    (["fan,de,1", "pump#4,de,10"], None, "row 4, column unit", "no unit 'pump#4'"),
    (["pump#2,idler#4,10"], None, "row 3, column position",
     "no position 'idler#4' on machine 'pump'"),
    (["pump#2,Idler,10"], None, "row 3, column position", "did you mean 'idler'?"),
    (["pump#2,de,1", "fan,de,2", "pump#2,de,3"], None, "row 5, column position",
     "already given at row 3"),
    ([",de,1"], None, "row 3, column unit", "expected a unit id"),
    (["pump#2,de"], None, "row 3", "expected 3 values"),
    (["pump#2,de,1"], "unit,position,hour", "row 2", "did you mean 'hours'?"),
    (["pump#2,1"], "unit,hours", "row 2", "missing column(s) position"),
    ([], None, "", "has a header but no rows"),
]


@pytest.mark.parametrize("rows, header, where, message", CSV_ERRORS)
def test_bad_ages_file_gives_one_line(tmp_path: Path, rows, header, where, message) -> None:
    path = write_plant(tmp_path, rows, header or "unit,position,hours")
    with pytest.raises(InputError) as info:
        load_scenario(path)
    err = info.value
    csv_name = str(tmp_path / "records" / "ages.csv")
    assert err.where == (f"{csv_name}: {where}" if where else csv_name)
    assert message in err.expected
    assert "\n" not in str(err)


def test_a_unit_of_a_machine_that_does_not_read_the_file(tmp_path: Path) -> None:
    toml = PLANT.replace('id = "fan"\nages = "records/ages.csv"\n', 'id = "fan"\n')
    with pytest.raises(InputError) as info:
        load_scenario(write_plant(tmp_path, ["fan,de,10"], toml=toml))
    assert info.value.where.endswith("ages.csv: row 3, column unit")
    assert "belongs to machine 'fan', which does not take its ages" in info.value.expected


@pytest.mark.parametrize(
    "value, message",
    [('"records/missing.csv"', "no such file"), ('"records"', "no such file"),
     ("5", "expected text"), ('""', "expected the name of a CSV file")],
)
def test_bad_ages_key_is_an_error_at_the_key(tmp_path: Path, value: str, message: str) -> None:
    toml = PLANT.replace('ages = "records/ages.csv"', f"ages = {value}", 1)
    path = write_plant(tmp_path, ROWS, toml=toml)
    with pytest.raises(InputError) as info:
        load_scenario(path)
    assert info.value.where == f"{path}: machine[0].ages"
    assert message in info.value.expected


def test_an_ages_file_that_is_not_text(tmp_path: Path) -> None:
    path = write_plant(tmp_path, ROWS)
    (tmp_path / "records" / "ages.csv").write_bytes(b"unit,position,hours\n\xff\xfe,de,1\n")
    with pytest.raises(InputError, match="not UTF-8"):
        load_scenario(path)


def test_the_check_command_reports_the_ages_error_on_one_line(tmp_path: Path, capsys) -> None:
    path = write_plant(tmp_path, ["pump#2,idler#7,10"])
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "row 3, column position" in err and "idler#7" in err


# --- check: starting age and remaining L10 ----------------------------------------------
def scipy_remaining_l10(life: LifeDistribution, age_h: float) -> float:
    """Remaining life at 90 % reliability given the age, by scipy: sf(a + t) = 0.9·sf(a)."""
    w = stats.weibull_min(c=life.shape, loc=life.location_h, scale=life.scale_h)
    return float(w.isf(0.9 * w.sf(age_h))) - age_h


def test_check_json_gives_starting_age_and_remaining_l10(tmp_path: Path, capsys) -> None:
    path = write_plant(tmp_path, ROWS)
    assert main(["check", str(path), "--json"]) == 0
    data = json.loads(capsys.readouterr().out)
    pump = next(m for m in data["machines"] if m["id"] == "pump")
    assert pump["ages_file"] == str(tmp_path / "records" / "ages.csv")
    s = load_scenario(path)
    for row in data["positions"]:
        m = s.machine(row["machine"])
        j = [p.id for p in m.positions].index(row["position"])
        expected = [EXPECTED[m.id][u][j] for u in range(m.count)]
        assert row["starting_age_h"] == expected
        ref = [scipy_remaining_l10(m.positions[j].life, a) for a in expected]
        np.testing.assert_allclose(row["remaining_l10_h"], ref, rtol=1e-9)


def test_check_table_shows_age_ranges(tmp_path: Path, capsys) -> None:
    assert main(["check", str(write_plant(tmp_path, ROWS))]) == 0
    out = capsys.readouterr().out
    assert "age h" in out and "rem. L10 h" in out and "starting ages" in out
    idlers = next(line for line in out.splitlines() if "idler#1–3" in line)
    assert "300–5,000" in idlers  # the youngest and oldest idler bearing of the three pumps
    life = LifeDistribution(1.3, 60_000.0)
    low, high = scipy_remaining_l10(life, 5000.0), scipy_remaining_l10(life, 300.0)
    assert f"{low:,.0f}–{high:,.0f}" in idlers  # shape > 1: older bearings have less left


def test_conveyor_demo_reads_its_ages_file() -> None:
    s = load_scenario(ROOT / "scenarios" / "conveyor.toml")
    (conveyor,) = s.machines
    ages = dict(zip((p.id for p in conveyor.positions), conveyor.ages_h()[0], strict=True))
    assert ages["carry-idler#17"] == 2600 and ages["carry-idler#1"] == conveyor.starting_age_h
    assert ages["return-idler#3"] == 4100 and ages["return-idler#4"] == 21000
    assert ages["drive-pulley#1"] == ages["drive-pulley#2"] == 30500


# --- exact event logs: age replacement counts from each position's own age -------------
NEVER = LifeDistribution(shape=1.5, scale_h=1e12)


def two_position_unit(ages: tuple[float, float]) -> Scenario:
    age = Policy("age", interval_h=100.0)
    positions = (Position("a", "B", NEVER, age), Position("b", "B", NEVER, age))
    return Scenario(Study("ages", 150.0, 1, 0), Costs(), {"B": Bearing("B", "ball", 1e4)},
                    (Machine("U", 1, 1.0, 0.0, positions, position_ages_h=(ages,)),),
                    crews=Crews())


def test_age_replacement_falls_due_at_each_positions_own_age() -> None:
    # a is 60 h old: due at 40 h, then every 100 h (140 h); b is 10 h old: due at 90 h.
    r = simulate(two_position_unit((60.0, 10.0)), 1, life_sampler=lambda *_: 1e12)
    assert r.event_log() == [
        (40.0, "U", "", "stop"),
        (40.0, "U", "a", "planned"),
        (40.0, "U", "", "up"),
        (90.0, "U", "", "stop"),
        (90.0, "U", "b", "planned"),
        (90.0, "U", "", "up"),
        (140.0, "U", "", "stop"),
        (140.0, "U", "a", "planned"),
        (140.0, "U", "", "up"),
    ]
    sc = two_position_unit((60.0, 10.0))
    fig = figures_of(simulate_vector(sc, np.random.SeedSequence(1)), sc)
    assert fig["planned_replacements"] == 3 and fig["failures"] == 0


def test_a_position_past_its_interval_is_changed_at_the_start() -> None:
    r = simulate(two_position_unit((250.0, 0.0)), 1, life_sampler=lambda *_: 1e12)
    assert r.event_log()[:3] == [(0.0, "U", "", "stop"), (0.0, "U", "a", "planned"),
                                 (0.0, "U", "", "up")]
    sc = two_position_unit((250.0, 0.0))
    fig = figures_of(simulate_vector(sc, np.random.SeedSequence(1)), sc)
    assert fig["planned_replacements"] == 3  # a at 0 and 100, b at 100


def test_equal_ages_give_the_same_results_as_starting_age() -> None:
    # position_ages_h filled with the machine's starting age is the scalar case, draw for draw.
    life = LifeDistribution(shape=1.5, scale_h=8_000.0, location_h=400.0)
    positions = (Position("a", "B", life, Policy("age", interval_h=9_000.0)),
                 Position("b", "B", life.scaled(1.3), Policy()))
    base = Machine("M", 4, 0.8, 3_000.0, positions)
    same = Machine("M", 4, 0.8, 3_000.0, positions, position_ages_h=((3_000.0,) * 2,) * 4)
    common = dict(costs=Costs(failure=10.0), bearings={"B": Bearing("B", "ball", 1e4)})
    scs = [Scenario(Study("eq", 40_000.0, 1, 0), machines=(m,), **common) for m in (base, same)]
    des = [simulate(sc, 5) for sc in scs]
    assert des[0].event_log() == des[1].event_log() and len(des[0].event_log()) > 10
    vec = [figures_of(simulate_vector(sc, np.random.SeedSequence(5)), sc) for sc in scs]
    assert vec[0] == vec[1] and vec[0]["failures"] > 0

"""The event log of a replication streamed to a file: complete, in bounded memory (issue 17)."""

from __future__ import annotations

import csv
import json
import sys
import tracemalloc
from pathlib import Path

import pytest
from cli_cases import run_cli, tiny

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario import load_scenario
from fleetsim.scenario.model import Bearing, Costs, Machine, Policy, Position, Scenario, Study
from fleetsim.sim import records, simulate
from fleetsim.sim.event_log import CHUNK_ROWS, EventFile
from fleetsim.study.seeds import replication_seed


def _storm(years: float) -> Scenario:
    """Eight positions with 3 h lives run to failure, no repair time: ~50 failures a day each."""
    life = LifeDistribution(shape=1.5, scale_h=3.0)
    machine = Machine("U", 4, 1.0, 0.0, (Position("a", "B", life, Policy()),
                                         Position("=b", "B", life, Policy())))
    return Scenario(Study("storm", years * 8766.0, 1, 0), Costs(),
                    {"B": Bearing("B", BearingType.BALL, 3e4)}, (machine,))


def _rows(path: Path) -> list[tuple[float, str, str, str]]:
    with path.open(encoding="utf-8", newline="") as f:
        reader = csv.reader(f)
        assert next(reader) == ["time_h", "unit", "position", "kind"]
        return [(float(t), u, p, k) for t, u, p, k in reader]


def test_a_log_beyond_the_in_memory_cap_is_written_complete(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    sc = _storm(2.0)
    streamed = simulate(sc, 7, events_to=tmp_path / "events.csv")
    rows = _rows(tmp_path / "events.csv")
    assert len(rows) > records.MAX_EVENTS_KEPT  # more than the in-memory log keeps
    assert streamed.events.empty and streamed.events_file == str(tmp_path / "events.csv")
    # the same seed held in memory with the cap lifted: the very same events, in order
    monkeypatch.setattr(records, "MAX_EVENTS_KEPT", 10 * len(rows))
    held = simulate(sc, 7).event_log()
    assert len(held) == len(rows)
    assert [(t, u, "'" + p if p.startswith("=") else p, k) for t, u, p, k in held] == rows
    assert streamed.counts == simulate(sc, 7, keep_events=False).counts


def test_the_streamed_log_takes_bounded_memory(tmp_path: Path) -> None:
    """Peak memory of a streamed log of ~100,000 events over the same run keeping none.

    The bound is what the writer holds at most: one chunk of rows as the
    in-memory log holds them (a tuple and its float, and a list slot) and each
    row's CSV line up to three times over (the lines, their join, the file
    buffer), plus 256 KiB of slack. Holding the whole log would take
    ``rows × row_bytes``, more than five times the bound. The baseline is the
    same replication without a log, so whatever else the engine holds cancels.
    """
    row = (12345.678901234, "U#1", "a", "failure")
    line = "12345.678901234,U#1,a,failure\n"
    row_bytes = sys.getsizeof(row) + sys.getsizeof(row[0]) + 8
    bound = CHUNK_ROWS * (row_bytes + 3 * sys.getsizeof(line)) + 256 * 1024

    tracemalloc.start()
    try:
        simulate(_storm(1.0), 7, keep_events=False)
        _, baseline = tracemalloc.get_traced_memory()
        tracemalloc.reset_peak()
        simulate(_storm(1.0), 7, events_to=tmp_path / "events.csv")
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    rows = sum(1 for _ in (tmp_path / "events.csv").open(encoding="utf-8")) - 1
    assert rows * row_bytes > 5 * bound  # the test can tell holding from streaming
    assert peak - baseline < bound, (peak, baseline, bound)


def test_event_file_writes_what_it_holds_on_close(tmp_path: Path) -> None:
    with EventFile(tmp_path / "e.csv") as f:
        f.write(1.5, "pump#1", "+de", "failure")
        f.write(2.0, "pump, two", "", "up")
        assert f.rows == 0  # held until a chunk is full or the file closes
    assert f.rows == 2
    assert _rows(tmp_path / "e.csv") == [(1.5, "pump#1", "'+de", "failure"),
                                          (2.0, "pump, two", "", "up")]


def test_the_report_event_log_comes_from_the_streamed_file(tmp_path: Path) -> None:
    path = tiny(tmp_path)
    code, _, err = run_cli(["run", str(path), "--quiet", "--out", str(tmp_path / "r")],
                           cwd=tmp_path)
    assert code == 0, err
    manifest = json.loads((tmp_path / "r" / ".fleetsim-manifest.json").read_text())
    assert "events.csv" in manifest["files"]
    with (tmp_path / "r" / "events.csv").open(encoding="utf-8", newline="") as f:
        reader = csv.reader(f)
        assert next(reader) == ["variant", "time_h", "unit", "position", "kind"]
        got = [(v, float(t), u, p, k) for v, t, u, p, k in reader]
    sc = load_scenario(path)
    want = simulate(sc, replication_seed(sc.study.seed, 0)).event_log()
    assert got and {g[0] for g in got} == {"Today's practice"}
    assert [g[1:] for g in got] == want
    # the streamed copy went with the checkpoints
    assert not (tmp_path / ".r.checkpoints").exists()

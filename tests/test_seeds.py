"""The study seed: one rule (``fleetsim.seed.check_seed``) at every entry point."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fleetsim.errors import InputError
from fleetsim.scenario import load_scenario
from fleetsim.seed import check_seed
from fleetsim.sim.streams import UniformTable
from fleetsim.study import compare, replication_seed, run_replications, run_study

DEMO = Path(__file__).resolve().parents[1] / "scenarios" / "pump_stations.toml"
BAD = [-1, -(2**70), 1.0, 0.5, True, False, "3", None, np.float64(2.0)]


def _task(payload, seed_seq):
    return {"x": float(np.random.default_rng(seed_seq).random())}


@pytest.mark.parametrize("seed", [0, 7, 2**70, np.int64(5), np.uint32(9)])
def test_whole_numbers_from_zero_are_seeds(seed) -> None:
    value = check_seed(seed)
    assert value == int(seed) and type(value) is int


@pytest.mark.parametrize("seed", BAD, ids=repr)
def test_other_values_are_refused_with_where(seed) -> None:
    with pytest.raises(InputError) as info:
        check_seed(seed, where="--seed")
    assert info.value.where == "--seed"
    assert info.value.expected.startswith("expected a seed (a whole number >= 0), got ")


@pytest.mark.parametrize("seed", [-1, True, 2.0])
def test_library_entry_points_refuse_a_bad_seed(seed) -> None:
    with pytest.raises(InputError, match=r"^seed: expected a seed"):
        replication_seed(seed, 0)
    with pytest.raises(InputError, match=r"^seed: expected a seed"):
        run_replications(_task, None, replications=2, seed=seed)
    scenario = load_scenario(DEMO)
    with pytest.raises(InputError, match=r"^seed: expected a seed"):
        run_study(scenario, replications=1, seed=seed, keep_events=False)
    with pytest.raises(InputError, match=r"^seed: expected a seed"):
        compare({"a": scenario}, replications=1, seed=seed, keep_events=False)


def test_a_scenario_built_in_python_gets_the_same_check() -> None:
    scenario = load_scenario(DEMO)
    # the frozen Study checks it on construction (fleetsim.bounds, issue 17) ...
    with pytest.raises(InputError, match=r"^Study.seed: expected a seed .*got -4$"):
        dataclasses.replace(scenario.study, seed=-4)
    # ... and run_study checks a seed given to it
    with pytest.raises(InputError, match=r"^seed: expected a seed .*got -4$"):
        run_study(scenario, replications=1, seed=-4, keep_events=False)


@settings(max_examples=40, deadline=None)
@given(st.lists(st.tuples(st.sampled_from(["row", "take", "get"]), st.integers(0, 40)),
                min_size=1, max_size=12))
def test_a_table_value_does_not_depend_on_how_the_table_grew(
        reads: list[tuple[str, int]]) -> None:
    """U[k, unit, position] is the k-th row of the generator's stream in C order,
    however the rows were read (row by row in place, arrays of indexes, scalars)."""
    units, positions = 3, 2
    table = UniformTable(np.random.default_rng(11), units, positions)
    for how, k in reads:
        if how == "row":
            got = table.row(k)
        elif how == "take":
            u, p = np.indices((units, positions))
            got = table.take(np.full(u.shape, k), u, p)
        else:
            got = np.array([[table.get(k, u, p) for p in range(positions)]
                            for u in range(units)])
        rows = np.random.default_rng(11).random((k + 1, units, positions))
        np.testing.assert_array_equal(got, rows[k])

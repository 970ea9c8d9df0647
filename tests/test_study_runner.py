"""Replication runner and summaries: determinism, workers, checkpoints, intervals."""

from __future__ import annotations

import json

import numpy as np
import pytest
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.study.runner import run_replications
from fleetsim.study.seeds import replication_seed
from fleetsim.study.summary import estimate, summarise


def normal_task(payload, seed_seq):
    rng = np.random.default_rng(seed_seq)
    mu, sigma = payload
    return {"x": float(rng.normal(mu, sigma)), "y": float(rng.random())}


def test_replication_seed_equals_spawned_child() -> None:
    children = np.random.SeedSequence(42).spawn(5)
    for i, child in enumerate(children):
        a = np.random.default_rng(child).random(3)
        b = np.random.default_rng(replication_seed(42, i)).random(3)
        assert np.array_equal(a, b)


def test_same_result_whatever_the_workers() -> None:
    one = run_replications(normal_task, (1.0, 2.0), replications=40, seed=7, workers=1)
    two = run_replications(normal_task, (1.0, 2.0), replications=40, seed=7, workers=2, chunk_size=3)
    assert one.equals(two)
    other = run_replications(normal_task, (1.0, 2.0), replications=40, seed=8)
    assert not one.equals(other)


def test_checkpoint_resume_gives_the_uninterrupted_result(tmp_path) -> None:
    full = run_replications(normal_task, (0.0, 1.0), replications=30, seed=3)
    ck = tmp_path / "ck.jsonl"
    # Simulate an interruption: keep the header and the first 11 rows, and a cut line.
    run_replications(normal_task, (0.0, 1.0), replications=30, seed=3, checkpoint=ck, study_key="k")
    lines = ck.read_text().splitlines()
    ck.write_text("\n".join(lines[:12]) + '\n{"replication": 1')
    calls = []
    resumed = run_replications(normal_task, (0.0, 1.0), replications=30, seed=3, checkpoint=ck,
                               study_key="k", progress=lambda d, t: calls.append(d))
    assert calls[0] == 11
    assert np.allclose(resumed[["x", "y"]].to_numpy(), full[["x", "y"]].to_numpy(), rtol=0, atol=0)
    with pytest.raises(InputError, match="another study"):
        run_replications(normal_task, (0.0, 1.0), replications=30, seed=3, checkpoint=ck,
                         study_key="other")
    assert json.loads(ck.read_text().splitlines()[0]) == {"study_key": "k"}


def test_confidence_interval_is_student_t() -> None:
    # Textbook Student-t interval: mean ± t_{0.975, n−1} s/√n (scipy.stats.t).
    x = np.array([2.0, 4.0, 4.0, 5.0, 7.0, 8.0])
    est = estimate(x)
    half = stats.t.ppf(0.975, 5) * x.std(ddof=1) / np.sqrt(6)
    assert est.mean == pytest.approx(5.0)
    assert (est.low, est.high) == (pytest.approx(5 - half), pytest.approx(5 + half))


def test_interval_coverage_on_normal_replications() -> None:
    # Coverage of a 95 % interval over 400 studies of 30 replications: the count
    # covering the true mean is Binomial(400, 0.95); accept within 3 sd (fixed seed).
    rng = np.random.default_rng(np.random.SeedSequence(99))
    covered = 0
    for _ in range(400):
        e = estimate(rng.normal(10.0, 3.0, 30))
        covered += e.low <= 10.0 <= e.high
    sd = np.sqrt(400 * 0.95 * 0.05)
    assert abs(covered - 380) <= 3 * sd


def test_summarise_columns() -> None:
    table = run_replications(normal_task, (5.0, 1.0), replications=50, seed=1)
    s = summarise(table.drop(columns="replication"))
    assert list(s.index) == ["x", "y"]
    assert {"mean", "ci_low", "ci_high", "p05", "p50", "p95", "n"} <= set(s.columns)
    assert s.loc["x", "ci_low"] < s.loc["x", "mean"] < s.loc["x", "ci_high"]


def test_intervals_are_cut_to_the_figures_range() -> None:
    import pandas as pd

    # Stock-outs in 1 replication of 20, availability near 1: the t-interval of the
    # mean reaches below 0 and above 1, which no mean of these figures can.
    stockouts = np.array([0.0] * 19 + [6.0])
    availability = np.array([1.0] * 19 + [0.9])
    raw = estimate(stockouts)
    assert raw.low < 0.0  # the uncut t-interval
    s = summarise(pd.DataFrame({"stockouts": stockouts, "availability": availability,
                                "other": stockouts}))
    assert s.loc["stockouts", "ci_low"] == 0.0
    assert s.loc["stockouts", "ci_high"] == pytest.approx(raw.high)
    assert s.loc["availability", "ci_high"] == 1.0
    assert s.loc["availability", "ci_low"] == pytest.approx(estimate(availability).low)
    assert s.loc["other", "ci_low"] == pytest.approx(raw.low)  # not a figure: left alone


def test_guided_chunks_cover_every_replication_once() -> None:
    from fleetsim.study.runner import _guided_chunks

    for n, workers in ((1, 2), (7, 2), (200, 2), (1000, 8)):
        chunks = list(_guided_chunks(list(range(n)), workers))
        assert [i for c in chunks for i in c] == list(range(n))
        sizes = [len(c) for c in chunks]
        assert sizes == sorted(sizes, reverse=True) and sizes[-1] == 1


def test_dask_local_cluster_gives_the_same_result() -> None:
    one = run_replications(normal_task, (1.0, 2.0), replications=24, seed=11, workers=1)
    dask = run_replications(normal_task, (1.0, 2.0), replications=24, seed=11, workers=2,
                            cluster="local", chunk_size=5)
    assert one.equals(dask)


def test_engine_choice_says_why() -> None:
    from fleetsim.life import BearingType, LifeDistribution
    from fleetsim.scenario.model import (
        Bearing,
        Costs,
        Crews,
        Machine,
        Policy,
        Position,
        Scenario,
        Stock,
        Study,
    )
    from fleetsim.scenario.model import Duration as D
    from fleetsim.study import choose_engine

    life = LifeDistribution(1.5, 1e4)

    def sc(units: int, policy: Policy | None = None, **kw):  # type: ignore[no-untyped-def]
        pos = (Position("a", "B", life, Policy()), Position("b", "B", life, policy or Policy()))
        return Scenario(Study("s", 1e4, 1, 1), Costs(), {"B": Bearing("B", BearingType.BALL, 1e4)},
                        (Machine("m", units, 1.0, 0.0, pos),), **kw)

    # by the benchmarks' crossings (fleetsim.study.engines): from 20 positions ...
    assert choose_engine(sc(200))[0] == "vector"
    assert choose_engine(sc(10))[0] == "vector"
    assert choose_engine(sc(9))[0] == "des"
    # ... unless a machine type stepped event by event has few units
    cond = Policy("condition", inspection_every_h=700.0, detection=0.7)
    assert choose_engine(sc(15, cond)) == (
        "des", "machine type 'm' has 15 units on condition monitoring or opportunistic changes, "
               "which the vectorised engine steps event by event: the discrete-event engine is "
               "faster")
    assert choose_engine(sc(16, cond))[0] == "vector"
    assert choose_engine(sc(15, cond), "vector") == ("vector", "requested")
    # (one block interval beside run-to-failure runs by block periods, at any count)
    assert choose_engine(sc(10, Policy("block", 5e3)))[0] == "vector"
    age = Policy("age", 5e3)
    store = {"B": Stock(1, 0, 1, D.fixed(1.0))}
    # coupled, with a planned policy: the discrete-event engine
    assert choose_engine(sc(200, age, stores=store)) == (
        "des", "finite stores couple the positions: discrete-event engine")
    assert "finite crews" in choose_engine(sc(200, age, crews=Crews(1)))[1]
    with pytest.raises(InputError, match="--engine des"):
        choose_engine(sc(200, age, crews=Crews(1)), "vector")
    # coupled, every position run-to-failure: the vectorised engine's coupled path (on
    # request at any size)
    for kw in ({"stores": store}, {"crews": Crews(1)}):
        engine, why = choose_engine(sc(100, **kw))
        assert engine == "vector" and "run-to-failure" in why
        assert choose_engine(sc(9, **kw))[0] == "des"
        assert choose_engine(sc(9, **kw), "vector") == ("vector", "requested")
    # a group that holds planned work back: the DES, unless its members have no planned work
    from fleetsim.scenario.model import Group

    hold = (Group("g", ("m",), 50, hold_planned_work=True),)
    assert choose_engine(sc(200, age, groups=hold)) == (
        "des", "group 'g' holds planned work back: discrete-event engine")
    with pytest.raises(InputError, match="--engine des"):
        choose_engine(sc(200, age, groups=hold), "vector")
    assert choose_engine(sc(200, groups=hold))[0] == "vector"
    assert choose_engine(sc(100, groups=hold, stores=store))[0] == "vector"
    # few-unit machine types stepped event by event count by their share of the positions
    def two(small_units: int):  # type: ignore[no-untyped-def]
        big = Machine("big", 100, 1.0, 0.0, (Position("a", "B", life, Policy()),
                                              Position("b", "B", life, Policy())))
        small = Machine("small", small_units, 1.0, 0.0, (Position("a", "B", life, cond),
                                                          Position("b", "B", life, cond)))
        return Scenario(Study("s", 1e4, 1, 1), Costs(), {"B": Bearing("B", BearingType.BALL, 1e4)},
                        (big, small))

    assert choose_engine(two(10))[0] == "vector"  # 20 of 220 positions: under a tenth
    assert choose_engine(two(12))[1].startswith("machine type 'small' has 12 units")  # 24 of 224
    # a study's variants: the base's engine and why, a variant on the other engine named
    from fleetsim.study.engines import choose_engines

    assert choose_engines([("base", sc(9)), ("same", sc(8)), ("big", sc(200))]) == (
        "des", "positions are independent but fewer than 20: the discrete-event engine is as "
               "fast here; big: no finite stores or crews: positions are independent, "
               "vectorised engine")
    assert choose_engines([("base", sc(200)), ("also", sc(300))]) == choose_engine(sc(200))

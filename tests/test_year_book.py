"""The year-by-year plan: per-calendar-year sums that add up to the horizon totals.

Both engines book every charged quantity into a YearBook (fleetsim.sim.years):
events in the year they happen, amounts accrued over time split at the year
boundaries. The identity matrix (test_engine_identity.py) holds the two
engines to the same per-year figures; here the book itself is checked against
closed forms and an exact event log, and the per-year figures of a coupled
fleet (stores, crews, groups, discounting) against its horizon totals.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario.model import (
    HOURS_PER_YEAR,
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Position,
    Scenario,
    Stock,
    Study,
)
from fleetsim.sim import simulate
from fleetsim.sim.discount import Discount
from fleetsim.sim.years import YearBook, year_count
from fleetsim.study.figures import YEAR_FAMILIES, figures_of

Y = HOURS_PER_YEAR


def test_an_interval_across_year_ends_is_split_and_discounted_exactly() -> None:
    # ∫ v(t) dt over [a, b] = (v(a) − v(b)) / δ with v(t) = exp(−δ t), δ = ln(1 + r)/8766
    # (continuous discounting; any engineering-economics text).
    rate = 0.08
    d = Discount(rate)
    delta = math.log1p(rate) / Y
    book = YearBook(3.5 * Y, d)
    assert book.n == 4 and year_count(2 * Y) == 2
    a, b = 0.75 * Y, 2.25 * Y
    book.over("x", a, b, weight=2.0)
    # weight 2 × (0.25 Y, Y, 0.25 Y, 0)
    np.testing.assert_allclose(book.years("x", False), [0.5 * Y, 2 * Y, 0.5 * Y, 0.0], rtol=1e-12)
    exact = 2.0 * (math.exp(-delta * a) - math.exp(-delta * b)) / delta
    assert book.total("x") == pytest.approx(exact, rel=1e-12)
    first = 2.0 * (math.exp(-delta * a) - math.exp(-delta * Y)) / delta
    assert book.years("x")[0] == pytest.approx(first, rel=1e-12)
    # the array form books the same
    other = YearBook(3.5 * Y, d)
    other.over_many("x", np.array([a]), np.array([b]), 2.0)
    np.testing.assert_allclose(other.years("x"), book.years("x"), rtol=1e-12)
    other.at_many("e", np.array([10.0, Y + 1.0, 3.4 * Y]), np.array([1.0, 2.0, 1.0]))
    np.testing.assert_allclose(other.years("e", False), [1.0, 2.0, 0.0, 1.0])


def test_a_repair_across_the_year_end_is_booked_in_both_years() -> None:
    """A bearing fails at 8,700 h and is repaired for 100 h: 66 h of downtime and crew
    work fall in year 1, 34 h in year 2; the failure itself in year 1."""
    life = LifeDistribution(1.5, 1e9)
    sc = Scenario(Study("years", 2 * Y, 1, 0), Costs(failure=1_000.0, downtime_per_hour=10.0),
                  {"B": Bearing("B", BearingType.BALL, 1e4, price=50.0)},
                  (Machine("U", 1, 1.0, 0.0, (Position("p", "B", life, Policy()),)),),
                  crews=Crews(None, Duration.fixed(0.0), Duration.fixed(100.0)))
    r = simulate(sc, 1, life_sampler=lambda u, p, k: 8_700.0 if k == 0 else 1e12)
    assert r.tally is not None
    f = figures_of(r.tally, sc)
    assert (f["failures_in_year:1"], f["failures_in_year:2"]) == (1.0, 0.0)
    assert f["downtime_h_in_year:1"] == pytest.approx(Y - 8_700.0)
    assert f["downtime_h_in_year:2"] == pytest.approx(8_800.0 - Y)
    assert f["labour_h_in_year:1"] == pytest.approx(Y - 8_700.0)
    assert f["spares_issued_in_year:B@1"] == 1.0 and f["spares_ordered_in_year:B@1"] == 1.0
    assert f["cost_in_year:1"] == pytest.approx(1_000.0 + 50.0 + 10.0 * (Y - 8_700.0))
    assert f["cost_in_year:2"] == pytest.approx(10.0 * (8_800.0 - Y))


def test_the_years_add_up_to_the_horizon_totals_on_a_coupled_fleet() -> None:
    life = LifeDistribution(1.4, 9_000.0, 300.0)
    sc = Scenario(
        Study("years", 4.6 * Y, 1, 0),
        Costs(planned_replacement=200.0, failure=1_500.0, downtime_per_hour=40.0,
              inspection=20.0, holding_rate_per_year=0.2, discount_rate_per_year=0.07),
        {"B": Bearing("B", BearingType.BALL, 3e4, price=90.0),
         "C": Bearing("C", BearingType.ROLLER, 6e4, price=400.0)},
        (Machine("m", 6, 0.8, 2_000.0, (
            Position("a", "B", life, Policy("age", 6_000.0)),
            Position("b", "C", life.scaled(1.4), Policy("condition", inspection_every_h=700.0,
                                                        detection=0.8),
                     pf_interval=Duration.fixed(1_500.0)),
        )),),
        groups=(Group("g", ("m",), 5, downtime_per_hour=300.0),),
        stores={"C": Stock(1, 0, 2, Duration.fixed(600.0), Duration.fixed(48.0), 500.0)},
        crews=Crews(2, Duration("lognormal", 6.0, p90_h=12.0), Duration.fixed(16.0)),
    )
    for i in range(3):
        r = simulate(sc, np.random.SeedSequence(77, spawn_key=(i,)), keep_events=False)
        assert r.tally is not None
        f = figures_of(r.tally, sc)
        assert f["failures"] > 0 and f["stockouts"] >= 0
        years = [k for k in f if k.startswith("cost_in_year:")]
        assert len(years) == 5  # 4.6 years: the last one partial
        for family, total in (("cost_in_year", "cost_total"), ("failures_in_year", "failures"),
                              ("changes_in_year", "planned_replacements"),
                              ("inspections_in_year", "inspections"),
                              ("downtime_h_in_year", "downtime_h")):
            assert sum(f[f"{family}:{y}"] for y in range(1, 6)) == pytest.approx(f[total], rel=1e-9)
        for b in ("B", "C"):
            issued = sum(f[f"spares_issued_in_year:{b}@{y}"] for y in range(1, 6))
            assert issued == pytest.approx(f[f"spares_issued:{b}"])
        assert set(YEAR_FAMILIES) <= {k.partition(":")[0] for k in f}


def test_the_study_year_plan_sums_to_the_horizon_totals() -> None:
    """The year-by-year table's means add up to the horizon totals (within rounding),
    and P10 <= P50 <= P90 in every row."""
    from fleetsim.study import run_study
    from fleetsim.study.year_plan import year_plan

    life = LifeDistribution(1.5, 12_000.0)
    sc = Scenario(Study("plan", 3.3 * Y, 30, 5), Costs(planned_replacement=100.0, failure=900.0),
                  {"B": Bearing("B", BearingType.BALL, 3e4, price=60.0)},
                  (Machine("m", 40, 0.7, 0.0, (Position("p", "B", life, Policy("age", 9_000.0)),
                                               Position("q", "B", life, Policy()))),),
                  crews=Crews(None, Duration.fixed(4.0), Duration.fixed(10.0)))
    res = run_study(sc, seed=5, keep_events=False)
    plan = year_plan(res)
    assert sorted(plan["year"].unique()) == [1, 2, 3, 4]
    assert (plan["p10"] <= plan["p50"]).all() and (plan["p50"] <= plan["p90"]).all()
    mean = res.summary["mean"]
    for quantity, total in (("cost", "cost_total"), ("failures", "failures"),
                            ("planned changes", "planned_replacements"),
                            ("machine hours down", "downtime_h")):
        rows = plan[plan["quantity"] == quantity]
        assert rows["mean"].sum() == pytest.approx(mean[total], rel=1e-9), quantity
    spares = plan[(plan["quantity"] == "spares issued") & (plan["bearing"] == "B")]
    assert spares["mean"].sum() == pytest.approx(mean["spares_issued:B"], rel=1e-9)


def test_the_report_writes_the_year_plan_csv(tmp_path) -> None:
    import pandas as pd

    from fleetsim.report import write_report
    from fleetsim.study import run_study

    life = LifeDistribution(1.5, 12_000.0)
    sc = Scenario(Study("plan", 2.5 * Y, 8, 3), Costs(failure=900.0),
                  {"B": Bearing("B", BearingType.BALL, 3e4, price=60.0)},
                  (Machine("m", 20, 1.0, 0.0, (Position("p", "B", life, Policy()),)),))
    res = run_study(sc, seed=3, keep_events=False)
    paths = write_report([res], tmp_path / "report", title="plan")
    plan = pd.read_csv(paths.tables["year_plan"], keep_default_na=False)
    assert sorted(plan["year"].unique()) == [1, 2, 3]
    cost = plan[plan["quantity"] == "cost"]
    assert cost["mean"].sum() == pytest.approx(res.summary.loc["cost_total", "mean"], rel=1e-9)
    assert set(plan.columns) >= {"variant", "year", "quantity", "bearing", "p10", "p50", "p90"}


def test_journal_and_queued_arrays_book_what_at_and_down_book() -> None:
    """The hot paths' deferred bookings give the immediate bookings' sums: counts exactly,
    present values to rounding; the journal is settled in fixed blocks (bounded memory)."""
    import fleetsim.sim.years as years

    rng = np.random.default_rng(4)
    t = np.sort(rng.uniform(0.0, 3.5 * Y, 5_000))
    d = Discount(0.05)
    now, later = YearBook(3.5 * Y, d), YearBook(3.5 * Y, d)
    for x in t:
        now.at("e", float(x))
        now.down(float(x), float(x) + 7.0, 0.6)
    journal = later.journal("e")
    old_block = years.JOURNAL_BLOCK
    years.JOURNAL_BLOCK = 1024
    try:
        for x in t:
            journal.append(float(x))
            if len(journal) >= 1024:
                later.settle_full_blocks()
                assert len(journal) < 1024  # settled as it goes
        later.down_later(t[:2_500], t[:2_500] + 7.0, 0.6)
        later.down_later(t[2_500:], t[2_500:] + 7.0, 0.6)
    finally:
        years.JOURNAL_BLOCK = old_block
    assert later.years("e", False).tolist() == now.years("e", False).tolist()
    assert later.years("e", False).sum() == 5_000.0
    np.testing.assert_allclose(later.years("e"), now.years("e"), rtol=1e-12)
    for key in ("down_h", "lost_operating_h"):
        np.testing.assert_allclose(later.years(key, False), now.years(key, False), rtol=1e-12)
        np.testing.assert_allclose(later.years(key), now.years(key), rtol=1e-12)
    assert later == later and not journal  # reading settled everything


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 5.2 * Y), st.floats(0.0, 3.0 * Y),
                          st.floats(0.1, 5.0)), min_size=1, max_size=30),
       st.sampled_from([0.0, 0.08]), st.booleans())
def test_arrays_of_intervals_are_split_at_each_year_end_exactly(
        rows: list[tuple[float, float, float]], rate: float, weighted: bool) -> None:
    """over_many of many intervals (some across several year ends) books, year by
    year, the sum over the intervals of weight × hours in that year and weight ×
    ∫ v(t) dt with v(t) = exp(−δ t) (continuous discounting, as in the first test)."""
    H = 5.5 * Y
    book = YearBook(H, Discount(rate))
    s = np.array([r[0] for r in rows])
    e = np.minimum(s + np.array([r[1] for r in rows]), H)
    w = np.array([r[2] for r in rows]) if weighted else np.ones(len(rows))
    book.over_many("x", s, e, w if weighted else 1.0)
    delta = math.log1p(rate) / Y
    plain, pv = np.zeros(book.n), np.zeros(book.n)
    for a, b, wt in zip(s.tolist(), e.tolist(), w.tolist(), strict=True):
        for y in range(book.n):
            lo, hi = max(a, y * Y), b if y == book.n - 1 else min(b, (y + 1) * Y)
            if hi > lo:
                plain[y] += wt * (hi - lo)
                pv[y] += wt * ((hi - lo) if rate == 0.0 else
                               (math.exp(-delta * lo) - math.exp(-delta * hi)) / delta)
    np.testing.assert_allclose(book.years("x", False), plain, rtol=1e-10, atol=1e-6)
    np.testing.assert_allclose(book.years("x"), pv, rtol=1e-10, atol=1e-6)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.floats(0.0, 5.2 * Y), st.floats(0.0, 3.0 * Y), st.booleans()),
                min_size=1, max_size=30),
       st.sampled_from([0.0, 0.08]))
def test_stops_with_crew_hours_book_what_down_and_over_book_apart(
        rows: list[tuple[float, float, bool]], rate: float) -> None:
    """down_many with ``worked`` (one split of the stops at the year ends for hours
    down, operating hours lost and crew hours) gives bit for bit what down_many of
    the stops and over_many of labour_h over the worked stops alone give."""
    H = 5.5 * Y
    s = np.array([r[0] for r in rows])
    e = np.minimum(s + np.array([r[1] for r in rows]), H)
    worked = np.array([r[2] for r in rows])
    one, two = YearBook(H, Discount(rate)), YearBook(H, Discount(rate))
    one.down_many(s, e, 0.7, worked=worked)
    two.down_many(s, e, 0.7)
    two.over_many("labour_h", s[worked], e[worked])
    assert one.amount == two.amount and one.pv == two.pv
    # queued in two parts (the lane path's steps; a part without crew hours may say
    # None): the same sums
    queued, half = YearBook(H, Discount(rate)), len(rows) // 2
    queued.down_later(s[:half], e[:half], 0.7,
                      worked=worked[:half] if worked[:half].any() else None)
    queued.down_later(s[half:], e[half:], 0.7, worked=worked[half:])
    assert queued.amount == one.amount and queued.pv == one.pv
    assert ("labour_h" in one.amount) == bool(worked.any())

"""The vectorised engine against closed forms (fixed seeds, standard-error tolerances)."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import integrate, stats

from fleetsim.life import BearingType, LifeDistribution
from fleetsim.plan.delay_time import failure_share
from fleetsim.plan.renewal import renewal_count_variance, renewal_function
from fleetsim.scenario.model import (
    Bearing,
    Costs,
    Crews,
    Duration,
    Group,
    Machine,
    Policy,
    Position,
    Scenario,
    Study,
)
from fleetsim.sim import cycles
from fleetsim.sim.vector import simulate_vector
from fleetsim.study.figures import figures_of

LIFE = LifeDistribution(shape=1.5, scale_h=20_000.0, location_h=1_000.0)
H = 87_660.0
COSTS = Costs(planned_replacement=100.0, failure=500.0)


def fleet(policy: Policy, *, units: int = 50, positions: int = 4, life: LifeDistribution = LIFE,
          repair: Duration | None = None, costs: Costs | None = COSTS, groups=(),
          horizon_h: float = H, pf: Duration | None = None) -> Scenario:
    pos = tuple(Position(f"p{j}", "B1", life, policy, pf_interval=pf) for j in range(positions))
    rep = repair or Duration.fixed(0.0)
    return Scenario(
        Study("t", horizon_h, 100, 1),
        costs or Costs(),
        {"B1": Bearing("B1", BearingType.BALL, 1e4, price=40.0)},
        (Machine("m", units, 1.0, 0.0, pos),),
        groups=groups,
        crews=Crews(None, rep, rep),
    )


def run(scenario: Scenario, reps: int, seed: int = 1) -> dict[str, np.ndarray]:
    rows = [figures_of(simulate_vector(scenario, np.random.SeedSequence(seed, spawn_key=(i,))),
                       scenario) for i in range(reps)]
    return {k: np.array([r[k] for r in rows]) for k in rows[0]}


def test_same_seed_same_figures() -> None:
    sc = fleet(Policy("age", 12_000.0), repair=Duration("exponential", 8.0))
    a = simulate_vector(sc, np.random.SeedSequence(3))
    b = simulate_vector(sc, np.random.SeedSequence(3))
    assert a == b


def test_run_to_failure_matches_renewal_function_both_paths() -> None:
    # Renewal theory (Karlin & Taylor; Cox 1962): E N(t) = M(t), Var N(t) from the
    # second-moment equation; positions independent, so the fleet total has mean
    # n·M(t) and variance n·Var N(t).
    m, v = float(renewal_function(LIFE, H)), float(renewal_count_variance(LIFE, H))
    reps, n = 100, 200
    fast = run(fleet(Policy()), reps)["failures"]
    # A block interval beyond the horizon forces the lane engine with the same lives.
    lanes = run(fleet(Policy("block", 8_766_000.0)), reps)["failures"]
    se = math.sqrt(n * v / reps)
    assert abs(fast.mean() - n * m) < 4 * se
    assert abs(lanes.mean() - n * m) < 4 * se
    assert np.array_equal(fast, lanes)  # same lives, same counts: the two paths agree exactly


def test_age_replacement_cost_rate_matches_renewal_reward() -> None:
    # Barlow & Proschan: C(T) = [c_p R(T) + c_f F(T)] / ∫₀ᵀ R(t) dt (zero stop times).
    # Price 40 is part of both c_p and c_f (engine convention).
    T = 12_000.0
    costs = Costs(planned_replacement=100.0, failure=500.0)
    cp, cf = 100.0 + 40.0, 100.0 + 500.0 + 40.0
    r = float(LIFE.reliability(T))
    mean_cycle = integrate.quad(lambda t: float(LIFE.reliability(t)), 0, T, points=[1_000.0])[0]
    rate = (cp * r + cf * (1 - r)) / mean_cycle  # per position-hour
    out = run(fleet(Policy("age", T), costs=costs, horizon_h=200_000.0), 60)
    per_h = out["cost_total"] / (200 * 200_000.0)
    # Start-up transient: all positions start new, so over a finite horizon the
    # mean differs from the long-run rate by O(1/t); 200,000 h is ~16 cycles.
    se = per_h.std(ddof=1) / math.sqrt(per_h.size)
    assert abs(per_h.mean() - rate) < 4 * se + 0.01 * rate


def test_block_replacement_matches_renewal_function() -> None:
    # Barlow & Proschan: failures per block interval = M(T) for each position.
    T = 10_000.0
    blocks = 8
    out = run(fleet(Policy("block", T), horizon_h=T * blocks + 1.0), 60)
    m, v = float(renewal_function(LIFE, T)), float(renewal_count_variance(LIFE, T))
    n = 200 * blocks
    se = math.sqrt(n * v / 60)
    assert abs(out["failures"].mean() - n * m) < 4 * se
    assert (out["planned_replacements"] == 200 * blocks).all()


def test_condition_policy_matches_delay_time_model() -> None:
    # Christer's delay-time model: with defects arriving at random relative to the
    # inspections (exponential life, mean >> Δ) and perfect detection, the share of
    # defects that become failures is b(Δ) = (1/Δ)∫₀^Δ F_h(u) du; with detection
    # probability p the geometric extension of fleetsim.plan.delay_time applies.
    life = LifeDistribution(shape=1.0, scale_h=40_000.0)
    delta = 720.0
    for pf, p in [(Duration("exponential", 500.0), 1.0), (Duration("weibull", 900.0, shape=2.0), 0.6)]:
        policy = Policy("condition", inspection_every_h=delta, detection=p)
        out = run(fleet(policy, life=life, units=100, positions=2, horizon_h=200_000.0, pf=pf), 20)
        f, d = out["failures"].sum(), out["detections"].sum()
        share = f / (f + d)
        delay = stats.expon(scale=500.0) if pf.kind == "exponential" else stats.weibull_min(2.0, scale=900.0)
        b = float(failure_share(delay, delta, p))
        se = math.sqrt(b * (1 - b) / (f + d))
        assert abs(share - b) < 4 * se, (pf.kind, share, b, se)


def test_run_to_failure_is_the_limit_of_no_detection() -> None:
    # Detection probability 0 turns a condition policy into run-to-failure: same
    # failures as run-to-failure on the same seed (P-F interval zero).
    life = LifeDistribution(shape=1.3, scale_h=30_000.0)
    cond = run(fleet(Policy("condition", inspection_every_h=500.0, detection=0.0), life=life), 10)
    rtf = run(fleet(Policy("block", 8_766_000.0), life=life), 10)
    assert np.array_equal(cond["failures"], rtf["failures"])
    assert cond["detections"].sum() == 0 and cond["inspections"].sum() > 0


def test_common_random_numbers_shrink_paired_differences() -> None:
    # Same seed for two policies → the same k-th life of each position: the variance
    # of paired differences is far below that of independent runs. The ratio of the
    # two sample variances is tested against the F distribution's 0.1 % quantile
    # (independent streams would give a ratio near 1).
    reps = 40
    a = run(fleet(Policy()), reps, seed=9)["cost_total"]
    b = run(fleet(Policy("age", 30_000.0)), reps, seed=9)["cost_total"]
    b_other = run(fleet(Policy("age", 30_000.0)), reps, seed=10)["cost_total"]
    ratio = np.var(a - b, ddof=1) / np.var(a - b_other, ddof=1)
    assert ratio < stats.f.ppf(0.001, reps - 1, reps - 1)


def test_k_out_of_n_group_downtime_matches_binomial() -> None:
    # A 2-out-of-3 group of independent units, each down a share q of the time
    # (alternating renewal: q = E[repair] / (E[life] + E[repair])), is down a share
    # Σ_{j>=2} C(3,j) q^j (1−q)^{3−j} of the time in the long run (binomial sum).
    life = LifeDistribution(shape=1.0, scale_h=1_000.0)
    repair = Duration("exponential", 250.0)
    sc = fleet(Policy(), life=life, units=3, positions=1, repair=repair,
               groups=(Group("g", ("m",), 2),), horizon_h=400_000.0)
    out = run(sc, 30)
    q = 250.0 / 1_250.0
    expected = stats.binom.sf(1, 3, q)
    share = out["group_downtime_h:g"] / 400_000.0
    se = share.std(ddof=1) / math.sqrt(share.size)
    assert abs(share.mean() - expected) < 4 * se


def test_clocks_closer_than_the_sort_keys_rounding_are_still_ordered() -> None:
    """Two clocks of one unit one ulp apart fall in one step of the one sort's packed
    key (unit, clock rounded down, index); listed the later first, the one sort
    leaves them so and the check sorts again."""
    from fleetsim.sim.cycles import _by_unit_then_clock

    c = 1e5
    unit = np.array([60_000, 60_000, 3])
    clock = np.array([np.nextafter(c, np.inf), c, 5.0])
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(cycles, "ONE_SORT_MIN", 0)
        order, su, sc = _by_unit_then_clock(unit, clock)
    np.testing.assert_array_equal(order, [2, 1, 0])
    np.testing.assert_array_equal(sc, [5.0, c, np.nextafter(c, np.inf)])


@pytest.mark.parametrize("clock", [[1e-300, 2e-300, 0.0], [0.0, 0.0, 0.0], [np.inf, 1.0, 2.0],
                                   [3.0, -1.0, 2.0], [np.nan, 1.0, 2.0]])
def test_the_one_sort_falls_back_on_clocks_it_cannot_pack(clock: list[float]) -> None:
    """Clocks far below an hour's fraction (no power-of-two step fits), all zero,
    infinite, negative or NaN: the one sort either packs them exactly or leaves
    them to the two sorts; the order is numpy's (unit, clock) lexsort."""
    from fleetsim.sim.cycles import _by_unit_then_clock

    unit, c = np.array([1, 0, 1]), np.array(clock)
    with pytest.MonkeyPatch.context() as mp:
        mp.setattr(cycles, "ONE_SORT_MIN", 0)
        order, su, sc = _by_unit_then_clock(unit, c)
    expected = np.lexsort((c, unit))
    np.testing.assert_array_equal(su, unit[expected])
    np.testing.assert_array_equal(sc, c[expected])


@settings(max_examples=80, deadline=None)
@given(st.integers(1, 5), st.integers(1, 40), st.integers(0, 2**32 - 1))
def test_the_stop_order_is_the_four_key_lexsort(P: int, units: int, seed: int) -> None:
    """The whole-cycle path's event order (unit, clock, failed first, position) equals
    numpy's lexsort of those keys, with many events sharing a unit and a clock."""
    from fleetsim.sim.cycles import _stop_order

    rng = np.random.default_rng(seed)
    m = int(rng.integers(1, 200))
    # unit numbers up to 40,000: the sort key unit · 2^k + clock then rounds clocks
    # a few ulps apart together, and the order must still come out right
    unit = rng.integers(0, units, m) * int(rng.choice([1, 1000]))
    clock = rng.choice(np.array([0.0, 1.5, 2.0, 7.25, 1e4]), m)  # many ties
    clock = np.where(rng.random(m) < 0.5, clock, rng.random(m) * 10.0)
    clock = np.where(rng.random(m) < 0.2, np.nextafter(clock, np.inf), clock)  # near-ties
    failed = rng.random(m) < 0.5
    pos = rng.integers(0, P, m)
    expected = np.lexsort((pos, ~failed, clock, unit))
    for one_sort_min in (cycles.ONE_SORT_MIN, 0):  # the two sorts, then the one sort
        with pytest.MonkeyPatch.context() as mp:
            mp.setattr(cycles, "ONE_SORT_MIN", one_sort_min)
            got, unit_sorted, clock_sorted = _stop_order(unit, clock, failed, pos, P)
        for key in (unit, clock, failed, pos):
            np.testing.assert_array_equal(key[got], key[expected])
        np.testing.assert_array_equal(unit_sorted, unit[expected])
        np.testing.assert_array_equal(clock_sorted, clock[expected])


@settings(max_examples=60, deadline=None)
@given(shape=st.floats(0.3, 12.0), due=st.floats(10.0, 80_000.0), seed=st.integers(0, 2**32 - 1),
       lognormal=st.booleans())
def test_lives_are_skipped_only_where_they_cannot_matter(shape: float, due: float, seed: int,
                                                          lognormal: bool) -> None:
    """The whole-cycle path computes a life only where its uniform can end the cycle before
    the due age (below F(due) plus a guard): failed flags and cycle ends equal those from
    every life, also for uniforms within a few ulps of F(due) and at the guard's edges."""
    life = LifeDistribution(shape=min(shape, 3.0) if lognormal else shape, scale_h=20_000.0,
                            location_h=500.0, family="lognormal" if lognormal else "weibull")
    m = Machine("m", 1, 1.0, 0.0, (Position("a", "B1", life, Policy("age", due)),
                                    Position("b", "B1", life, Policy())))
    age_due = np.array([due, math.inf])
    u_due = cycles._due_uniforms(m, age_due)
    rng = np.random.default_rng(seed)
    at = u_due[0]
    near = at + np.array([-cycles._DUE_GUARD, cycles._DUE_GUARD, 0.0])
    near = np.concatenate([near, at + np.arange(-5, 6) * np.spacing(max(at, 1e-300))])
    u = np.clip(np.concatenate([rng.random(400), near]), 0.0, np.nextafter(1.0, 0.0))
    p = rng.integers(0, 2, u.size)
    cut = age_due[p]
    clock = rng.uniform(0.0, 5e4, u.size)
    failed, c = cycles._cycle_ends(m, u, p, cut, clock, u_due)
    lives = cycles.draw_lives(m, u, p)
    assert np.array_equal(failed, lives <= cut)
    assert np.array_equal(c, clock + np.minimum(lives, cut))


def test_dropping_finished_lanes_changes_no_figure(monkeypatch: pytest.MonkeyPatch) -> None:
    """The lane-stepping path drops the lanes of units past the horizon from its arrays
    (fleetsim.sim.vector.COMPACT_SHARE): on every case of the identity matrix that it
    steps, forced to drop at every step it can, the figures are those of never dropping,
    to the last bit (the dropped lanes have no events left; the tables are read by unit)."""
    import sys
    from pathlib import Path

    import fleetsim.sim.vector as vector

    sys.path.insert(0, str(Path(__file__).parent))
    from test_engine_identity import CASES

    stepped = [sc for sc in CASES.values() if sc.independent_positions
               and not all(cycles.renewal_exact(m, sc) for m in sc.machines)]
    assert len(stepped) >= 4
    for sc in stepped:
        seeds = [np.random.SeedSequence(91, spawn_key=(i,)) for i in range(3)]
        monkeypatch.setattr(vector, "COMPACT_SHARE", 0.0)
        never = [figures_of(simulate_vector(sc, s), sc) for s in seeds]
        monkeypatch.setattr(vector, "COMPACT_SHARE", 1.0)
        monkeypatch.setattr(vector, "COMPACT_MIN", 1)
        always = [figures_of(simulate_vector(sc, s), sc) for s in seeds]
        assert always == never


@pytest.mark.parametrize("policy", [Policy("block", 0.01),
                                    Policy("condition", inspection_every_h=1 / 60, detection=0.5)],
                         ids=["a block date every 36 s", "an inspection every minute"])
def test_storms_of_calendar_events_stop_at_the_budget(policy: Policy,
                                                      monkeypatch: pytest.MonkeyPatch) -> None:
    """Calendar events far denser than any plant's stop at the event budget as in the DES
    (fleetsim.sim.budget, each date or visit one event): the block dates that fall inside
    one stop (8 h here, 800 dates) and the visits counted in bulk between a lane's events
    are counted too, the visits before any array of their dates is made. (The check of
    the calendars before the run, below, is left out here: it would stop them first.)"""
    import fleetsim.sim.vector as vector
    from fleetsim.sim import budget

    monkeypatch.setattr(vector, "check_calendar", lambda *a: None)
    # more than a step a stop can count (11,000 stops × 64): the dates inside must count
    monkeypatch.setattr(budget, "MIN_EVENTS", 2_000_000)
    sc = fleet(policy, units=5, repair=Duration.fixed(8.0), pf=Duration.fixed(720.0))
    assert budget.event_budget(sc, H) == 2_000_000
    with pytest.raises(budget.EventBudgetExceeded, match="far shorter than the horizon"):
        simulate_vector(sc, np.random.SeedSequence(1))


@pytest.mark.parametrize("engine", ["des", "vector"])
def test_calendars_past_the_budget_stop_before_the_run(engine: str,
                                                       monkeypatch: pytest.MonkeyPatch) -> None:
    """Block dates every 1/16 h and inspections every 1/4 h are 1,402,560 + 350,640 events
    a unit over ten years (87,660 h), whatever the lives: both engines say so before
    they simulate anything (the run itself is replaced by a failure here)."""
    import fleetsim.sim.engine as des_engine
    import fleetsim.sim.vector as vector
    from fleetsim.sim import budget, simulate

    def ran(*a, **k):  # type: ignore[no-untyped-def]
        raise AssertionError("the replication ran")

    for mod, name in ((des_engine, "run_within_budget"), (des_engine, "step_quiet_fleet"),
                      (vector, "simulate_machine")):
        monkeypatch.setattr(mod, name, ran)
    pos = (Position("b", "B1", LIFE, Policy("block", 0.0625)),
           Position("c", "B1", LIFE, Policy("condition", inspection_every_h=0.25, detection=0.5),
                    pf_interval=Duration.fixed(500.0)))
    sc = Scenario(Study("t", H, 1, 1), COSTS, {"B1": Bearing("B1", BearingType.BALL, 1e4)},
                  (Machine("m", 3, 1.0, 0.0, pos),))
    assert budget.calendar_events(sc, H) == 3 * (1_402_560 + 350_640)
    with pytest.raises(budget.EventBudgetExceeded, match="more than 1,000,000 events"):
        if engine == "des":
            simulate(sc, np.random.SeedSequence(1), keep_events=False)
        else:
            simulate_vector(sc, np.random.SeedSequence(1))

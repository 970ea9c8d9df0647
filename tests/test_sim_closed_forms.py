"""The discrete-event engine against closed forms from the literature.

Every check uses fixed seeds and a tolerance of Z standard errors, the
standard error being computed in the test from the replications (or from the
binomial variance where outcomes are independent Bernoulli trials). With
about twenty such comparisons here, Z = 4 keeps the chance that a correct
engine fails any of them below 0.2 % while a bias of a few per cent is
caught. The reference values are computed here from the formulas, never from
the engine's own output (the renewal equation is solved in this file on
purpose, independently of :mod:`fleetsim.plan`).
"""

from __future__ import annotations

import math

import numpy as np
from scipy import integrate, stats

from fleetsim.life import LifeDistribution
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
    Stock,
    Study,
)
from fleetsim.sim import simulate

Z = 4.0
B = "FB-1"


def make(machines, *, stores=None, crews=None, groups=(), costs=None, horizon=1000.0, price=0.0):
    return Scenario(
        study=Study("closed-form", horizon, 1, 0),
        costs=costs or Costs(),
        bearings={B: Bearing(B, "ball", 10_000.0, price=price)},
        machines=tuple(machines),
        groups=tuple(groups),
        stores=stores or {},
        crews=crews or Crews(),
    )


def positions(n: int, life: LifeDistribution, policy: Policy | None = None) -> tuple[Position, ...]:
    return tuple(Position(f"p{j}", B, life, policy or Policy()) for j in range(n))


def seeds(reps: int, entropy: int):
    return [np.random.SeedSequence(entropy, spawn_key=(i,)) for i in range(reps)]


def within(estimate: float, reference: float, se: float) -> bool:
    return abs(estimate - reference) <= Z * se


def mean_se(x) -> tuple[float, float]:
    x = np.asarray(x, dtype=float)
    return float(x.mean()), float(x.std(ddof=1) / math.sqrt(x.size))


def renewal_function(cdf, t_max: float, steps: int = 2000) -> tuple[np.ndarray, np.ndarray]:
    """M(t) from M = F + M * dF, trapezoid rule on a uniform grid.

    Renewal equation M(t) = F(t) + ∫₀ᵗ M(t − x) dF(x) (e.g. Karlin & Taylor,
    *A First Course in Stochastic Processes*, ch. 5). With ΔF_j = F(t_j) − F(t_{j−1})
    and M(t_i − x) on [t_{j−1}, t_j] replaced by the mean of its end values,
    M_i (1 − ΔF_1/2) = F_i + M_{i−1} ΔF_1/2 + Σ_{j≥2} (M_{i−j} + M_{i−j+1}) ΔF_j/2.
    """
    t = np.linspace(0.0, t_max, steps + 1)
    f = np.asarray(cdf(t), dtype=float)
    df = np.diff(f)
    m = np.zeros_like(t)
    for i in range(1, steps + 1):
        acc = f[i] + 0.5 * m[i - 1] * df[0]
        if i >= 2:
            j = np.arange(2, i + 1)
            acc += 0.5 * np.dot(m[i - j] + m[i - j + 1], df[j - 1])
        m[i] = acc / (1.0 - 0.5 * df[0])
    return t, m


def test_reference_renewal_solver_on_the_poisson_case() -> None:
    # Exponential lives: M(t) = t/θ exactly (Poisson process).
    t, m = renewal_function(lambda x: -np.expm1(-x / 100.0), 500.0)
    assert np.allclose(m, t / 100.0, rtol=0, atol=2e-4)


# --- run to failure: renewal function -------------------------------------------------------
def test_run_to_failure_counts_follow_the_renewal_function() -> None:
    """Mean failures per position by t equal M(t) (renewal theory: Karlin & Taylor;
    Blischke & Murthy, *Case Studies in Reliability and Maintenance*).

    Zero repair time, operating share 1: each position is an ordinary renewal
    process. The life is the ISO 281 three-parameter Weibull (shape 1.5,
    location 0.05·L10). A second fleet starts at an operating age a and runs at
    share 0.5: its first life is the residual life, so the mean count by
    calendar t is the delayed renewal function M_a(t/2) = G(s) + ∫ M(s − x) dG(x),
    with G(x) = 1 − R(a + x)/R(a).
    """
    life = LifeDistribution.from_rating_life(1_000.0, "iso281")
    n_pos, reps, horizon = 100, 30, 10_000.0
    checks = (2_000.0, 5_000.0, 9_999.0)
    sc = make([Machine("M", 1, 1.0, 0.0, positions(n_pos, life))], horizon=horizon)
    aged = make([Machine("M", 1, 0.5, 3_000.0, positions(n_pos, life))], horizon=horizon)
    t, m = renewal_function(life.cdf, horizon, steps=2000)
    a = 3_000.0
    g = 1.0 - np.asarray(life.sf(a + t)) / float(life.sf(a))
    m_delayed = g.copy()  # G(s_i) + Σ_j M(s_i − x_j) ΔG_j (trapezoid in the same grid)
    dg = np.diff(g)
    for i in range(1, t.size):
        j = np.arange(1, i + 1)
        m_delayed[i] += 0.5 * np.dot(m[i - j] + m[i - j + 1], dg[j - 1])
    for scen, ref_t, ref_m, scale in ((sc, t, m, 1.0), (aged, t, m_delayed, 0.5)):
        per_rep = {c: [] for c in checks}
        for s in seeds(reps, 11):
            ev = simulate(scen, s).events
            times = ev.loc[ev["kind"] == "failure", "time_h"].to_numpy()
            for c in checks:
                per_rep[c].append(np.count_nonzero(times < c) / n_pos)
        for c in checks:
            est, se = mean_se(per_rep[c])
            ref = float(np.interp(c * scale, ref_t, ref_m))
            assert within(est, ref, se), (c, est, ref, se)


# --- age replacement: renewal-reward cost rate ---------------------------------------------
def test_age_replacement_cost_rate_matches_renewal_reward() -> None:
    """C(T) = [c_p R(T) + c_f F(T)] / ∫₀ᵀ R(t) dt (Barlow & Proschan, *Mathematical
    Theory of Reliability*, 1965), with c_p = planned labour + price and
    c_f = planned labour + failure cost + price (the engine's convention).

    Zero stop durations and operating share 1. The start-up bias of the
    finite-horizon rate is about half a cycle over ~600 cycles per position,
    well below one standard error; the share of cycles ending in a failure is
    F(T) exactly (binomial standard error).
    """
    life = LifeDistribution(shape=2.5, scale_h=1_000.0)
    interval = 500.0
    costs = Costs(planned_replacement=100.0, failure=900.0)
    price = 50.0
    c_p, c_f = 100.0 + price, 100.0 + 900.0 + price
    horizon, n_pos, reps = 300_000.0, 10, 10
    sc = make([Machine("M", 1, 1.0, 0.0, positions(n_pos, life, Policy("age", interval_h=interval)))],
              costs=costs, horizon=horizon, price=price)
    rates, fails, planned = [], 0, 0
    for s in seeds(reps, 21):
        r = simulate(sc, s, keep_events=False)
        rates.append(r.costs["total"] / (horizon * n_pos))
        fails += r.counts["failures"]
        planned += r.counts["planned"]
    f_t = float(life.cdf(interval))
    expected = (c_p * (1 - f_t) + c_f * f_t) / integrate.quad(life.sf, 0.0, interval)[0]
    est, se = mean_se(rates)
    assert within(est, expected, se), (est, expected, se)
    n = fails + planned
    assert within(fails / n, f_t, math.sqrt(f_t * (1 - f_t) / n))


# --- block replacement ---------------------------------------------------------------------
def test_block_replacement_cost_rate_matches_renewal_formula() -> None:
    """Block replacement at T, 2T, ...: [c_p + c_f M(T)] / T (Barlow & Proschan, 1965).

    The horizon is m·T with the block at m·T itself outside [0, m·T), so the
    expected cost is exactly (m − 1)·c_p + m·c_f·M(T) per position, and the
    failures per position and block interval average M(T).
    """
    life = LifeDistribution(shape=2.5, scale_h=1_000.0)
    interval, blocks = 700.0, 100
    costs = Costs(planned_replacement=100.0, failure=900.0)
    price = 50.0
    c_p, c_f = 100.0 + price, 100.0 + 900.0 + price
    horizon, n_pos, reps = blocks * interval, 20, 10
    sc = make([Machine("M", 1, 1.0, 0.0, positions(n_pos, life, Policy("block", interval_h=interval)))],
              costs=costs, horizon=horizon, price=price)
    rates, per_block = [], []
    for s in seeds(reps, 31):
        r = simulate(sc, s, keep_events=False)
        rates.append(r.costs["total"] / (horizon * n_pos))
        per_block.append(r.counts["failures"] / (n_pos * blocks))
        assert r.counts["planned"] == (blocks - 1) * n_pos
    t, m = renewal_function(life.cdf, interval, steps=1400)
    m_t = float(m[-1])
    est, se = mean_se(per_block)
    assert within(est, m_t, se), (est, m_t, se)
    expected = ((blocks - 1) * c_p + blocks * c_f * m_t) / horizon
    est, se = mean_se(rates)
    assert within(est, expected, se), (est, expected, se)
    # ... which is the long-run formula up to the one missing block at the end
    assert abs(expected - (c_p + c_f * m_t) / interval) <= c_p / horizon + 1e-12


# --- spares: Palm's theorem ------------------------------------------------------------------
def test_base_stock_fill_rate_backorders_and_stock_follow_palm() -> None:
    """One-for-one (S − 1, S) stock with Poisson demand λ and fixed lead time L:
    outstanding orders are Poisson(λL) (Palm's theorem; Feeney & Sherbrooke 1966), so
    fill rate = P(X ≤ S − 1), mean backorders = E[(X − S)+], mean on hand = E[(S − X)+].

    Demand: 1000 units with exponential lives (rate λ/1000 each), zero repair.
    Units waiting for a spare stop ageing, which lowers the demand rate by the
    share of units down (mean backorders / 1000 ≈ 0.04 %), negligible here.
    """
    n_units, theta = 1000, 100_000.0
    lam = n_units / theta  # 0.01 demands per hour
    lead, big_s = 300.0, 3
    life = LifeDistribution(shape=1.0, scale_h=theta)
    sc = make([Machine("M", n_units, 1.0, 0.0, positions(1, life))],
              stores={B: Stock(big_s, big_s - 1, big_s, Duration.fixed(lead))},
              horizon=150_000.0)
    fill, bo, oh = [], [], []
    for s in seeds(30, 41):  # enough replications for a stable standard error
        sp = simulate(sc, s, keep_events=False).spares.loc[B]
        fill.append(sp["fill_rate"])
        bo.append(sp["mean_backorders"])
        oh.append(sp["mean_on_hand"])
    x = stats.poisson(lam * lead)
    k = np.arange(0, 200)
    pk = x.pmf(k)
    for values, ref in (
        (fill, float(x.cdf(big_s - 1))),
        (bo, float(np.sum(np.maximum(k - big_s, 0) * pk))),
        (oh, float(np.sum(np.maximum(big_s - k, 0) * pk))),
    ):
        est, se = mean_se(values)
        assert within(est, ref, se), (est, ref, se)


# --- crews: finite-source queue ----------------------------------------------------------------
def machine_repair_distribution(n: int, c: int, rho: float) -> np.ndarray:
    """Stationary P(n units down) of the M/M/c//N machine-repair model (Gross & Harris,
    *Fundamentals of Queueing Theory*, finite-source queue): p_k ∝ N!/(N−k)! ρ^k / (k! for
    k ≤ c, c!·c^(k−c) beyond), ρ = λ/μ."""
    w = []
    for k in range(n + 1):
        num = math.factorial(n) / math.factorial(n - k) * rho**k
        den = math.factorial(k) if k <= c else math.factorial(c) * c ** (k - c)
        w.append(num / den)
    w = np.array(w)
    return w / w.sum()


def test_shared_crews_match_the_machine_repair_queue() -> None:
    n, c = 6, 2
    theta, repair = 1_000.0, 250.0  # λ = 1/θ per running unit, μ = 1/repair
    life = LifeDistribution(shape=1.0, scale_h=theta)
    horizon = 300_000.0
    sc = make([Machine("M", n, 1.0, 0.0, positions(1, life))],
              crews=Crews(c, Duration.fixed(0.0), Duration("exponential", repair)),
              horizon=horizon)
    down, queue, avail = [], [], []
    for s in seeds(8, 51):
        r = simulate(sc, s, keep_events=False)
        down.append(r.units["down_h"].sum() / horizon)
        queue.append(r.units["waiting_crew_h"].sum() / horizon)
        avail.append(r.availability)
    p = machine_repair_distribution(n, c, repair / theta)
    k = np.arange(n + 1)
    mean_down = float(np.dot(k, p))
    mean_queue = float(np.dot(np.maximum(k - c, 0), p))
    for values, ref in ((down, mean_down), (queue, mean_queue), (avail, 1 - mean_down / n)):
        est, se = mean_se(values)
        assert within(est, ref, se), (est, ref, se)


# --- the vectorised engine's coupled path against the same two closed forms ----------------------
def test_coupled_path_stock_follows_palm() -> None:
    """Palm's theorem as above, through the vectorised engine's path for run-to-failure
    fleets coupled by a store (fleetsim.sim.coupled), on seeds of its own: fill rate
    P(X ≤ S − 1) and mean on hand E[(S − X)+], X ~ Poisson(λL)."""
    from fleetsim.sim.tally import on_hand_key
    from fleetsim.study.engines import tally_of

    n_units, theta = 1000, 100_000.0
    lam = n_units / theta
    lead, big_s = 300.0, 3
    life = LifeDistribution(shape=1.0, scale_h=theta)
    horizon = 150_000.0
    sc = make([Machine("M", n_units, 1.0, 0.0, positions(1, life))],
              stores={B: Stock(big_s, big_s - 1, big_s, Duration.fixed(lead))}, horizon=horizon)
    fill, oh = [], []
    for s in seeds(30, 141):
        t = tally_of(sc, "vector", s)
        fill.append(t.bearings[B].fill_rate)
        oh.append(t.book.total(on_hand_key(B), present=False) / horizon)
    x = stats.poisson(lam * lead)
    k = np.arange(0, 200)
    pk = x.pmf(k)
    for values, ref in ((fill, float(x.cdf(big_s - 1))),
                        (oh, float(np.sum(np.maximum(big_s - k, 0) * pk)))):
        est, se = mean_se(values)
        assert within(est, ref, se), (est, ref, se)


def test_coupled_path_crews_match_the_machine_repair_queue() -> None:
    """The M/M/c//N machine-repair queue as above (Gross & Harris), through the vectorised
    engine's coupled path, whose crews take jobs first come, first served without events
    (each job starts at the later of its request and the earliest free crew)."""
    from fleetsim.study.engines import tally_of

    n, c = 6, 2
    theta, repair = 1_000.0, 250.0
    life = LifeDistribution(shape=1.0, scale_h=theta)
    horizon = 300_000.0
    sc = make([Machine("M", n, 1.0, 0.0, positions(1, life))],
              crews=Crews(c, Duration.fixed(0.0), Duration("exponential", repair)),
              horizon=horizon)
    down, queue = [], []
    for s in seeds(16, 151):
        t = tally_of(sc, "vector", s)
        down.append(sum(t.downtime_h.values()) / horizon)
        queue.append(t.downtime_h["crew"] / horizon)
    p = machine_repair_distribution(n, c, repair / theta)
    k = np.arange(n + 1)
    for values, ref in ((down, float(np.dot(k, p))),
                        (queue, float(np.dot(np.maximum(k - c, 0), p)))):
        est, se = mean_se(values)
        assert within(est, ref, se), (est, ref, se)


# --- k-out-of-n groups ----------------------------------------------------------------------
def test_two_out_of_three_stationary_down_share_is_the_binomial_sum() -> None:
    """Independent repairable units: unavailability q = MTTR / (MTTF + MTTR) (alternating
    renewal process), and a k-out-of-n group is down while more than n − k units are
    down: Σ_{j=n−k+1}^{n} C(n, j) q^j (1 − q)^(n−j) (any reliability text, e.g.
    Rausand & Høyland, *System Reliability Theory*)."""
    life = LifeDistribution(shape=1.5, scale_h=1_000.0, location_h=100.0)
    repair = Duration("lognormal", 80.0, 200.0)
    n, need = 3, 2
    q = repair.mean_h / (life.mean_h + repair.mean_h)
    horizon = 400_000.0
    sc = make([Machine(f"M{g}", n, 1.0, 0.0, positions(1, life)) for g in range(4)],
              groups=[Group(f"G{g}", (f"M{g}",), need) for g in range(4)],
              crews=Crews(None, Duration.fixed(0.0), repair), horizon=horizon)
    shares = []
    for s in seeds(6, 61):
        g = simulate(sc, s, keep_events=False).groups
        shares.append(g.loc[[f"G{i}" for i in range(4)], "down_share"].mean())
    ref = sum(math.comb(n, j) * q**j * (1 - q) ** (n - j) for j in range(n - need + 1, n + 1))
    est, se = mean_se(shares)
    assert within(est, ref, se), (est, ref, se)


def test_two_out_of_three_first_down_event_is_the_binomial_sum() -> None:
    """Without repair (repairs outlast the horizon) a 2-out-of-3 group has gone down by t
    iff at least 2 units have failed by t: Σ_{j≥2} C(3, j) F(t)^j R(t)^(3−j).
    Groups are independent, so the standard error is binomial."""
    life = LifeDistribution(shape=1.5, scale_h=1_000.0)
    n_groups, reps, horizon = 150, 4, 1_000.0
    sc = make([Machine(f"M{g}", 3, 1.0, 0.0, positions(1, life)) for g in range(n_groups)],
              groups=[Group(f"G{g}", (f"M{g}",), 2) for g in range(n_groups)],
              crews=Crews(None, Duration.fixed(0.0), Duration.fixed(8_766_000.0)), horizon=horizon)  # 1,000 years
    first = []
    for s in seeds(reps, 71):
        g = simulate(sc, s, keep_events=False).groups.drop(index="fleet")
        first.extend(g["first_down_h"].to_numpy())
    first = np.asarray(first)
    for t in (500.0, horizon):
        f = float(life.cdf(t))
        ref = 3 * f**2 * (1 - f) + f**3
        share = float(np.mean(first < t))  # NaN (no down event) compares False
        assert within(share, ref, math.sqrt(ref * (1 - ref) / first.size)), (t, share, ref)


# --- common random numbers ----------------------------------------------------------------------
def test_common_random_numbers_shrink_the_variance_of_policy_differences() -> None:
    """Run-to-failure vs age replacement on the same seed share each position's lives
    (and the stop duration of each life), so the paired cost differences vary much less
    than differences on independent seeds: an F-test of the two variances (Snedecor's
    F, one-sided at 0.1 %) must reject "no reduction"."""
    life = LifeDistribution(shape=2.0, scale_h=2_000.0)
    costs = Costs(planned_replacement=100.0, failure=600.0, downtime_per_hour=20.0)
    crews = Crews(2, Duration("exponential", 5.0), Duration("lognormal", 12.0, 30.0))

    def fleet(policy: Policy) -> Scenario:
        return make([Machine("M", 5, 0.8, 500.0, positions(4, life, policy))],
                    costs=costs, crews=crews, horizon=15_000.0, price=40.0)

    rtf, age = fleet(Policy()), fleet(Policy("age", interval_h=1_500.0))
    reps = 40
    a = np.array([simulate(rtf, s, keep_events=False).costs["total"] for s in seeds(reps, 81)])
    b_same = np.array([simulate(age, s, keep_events=False).costs["total"] for s in seeds(reps, 81)])
    b_other = np.array([simulate(age, s, keep_events=False).costs["total"] for s in seeds(reps, 82)])
    paired = np.var(a - b_same, ddof=1)
    independent = np.var(a - b_other, ddof=1)
    # Under "no variance reduction" the ratio is F(reps−1, reps−1); demand it far in the tail.
    assert paired / independent < stats.f.ppf(0.001, reps - 1, reps - 1), paired / independent

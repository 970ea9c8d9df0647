"""Age replacement against the `reliability` package, brute-force integration and Monte Carlo.

Model: Barlow & Proschan, *Mathematical Theory of Reliability* (1965), the
renewal-reward cost rate C(T) = [c_p R(T) + c_f F(T)] / ∫₀ᵀ R (from memory),
extended with stop durations and a downtime cost. Reference library: the
`reliability` package, ``Repairable_systems.optimal_replacement_time`` with
q=0 (as good as new), which evaluates C(T) on a 10,000-point grid from 1 to
3·alpha; we agree within two of its grid steps.
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate

from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.plan import (
    ReplacementCosts,
    ScipyLife,
    age_replacement_cost_rate,
    age_replacement_rates,
    optimal_age_replacement,
    run_to_failure_cost_rate,
)


@pytest.fixture(scope="module")
def reference_ort() -> Any:
    """The reference function, imported lazily with a headless backend.

    The package changes numpy's error state when imported; restore it.
    """
    import matplotlib

    matplotlib.use("Agg")
    saved = np.geterr()
    from reliability.Repairable_systems import optimal_replacement_time

    np.seterr(**saved)
    return optimal_replacement_time


@pytest.mark.parametrize(
    "alpha, beta, cost_pm, cost_cm",
    [
        (1000.0, 2.5, 1.0, 5.0),
        (5000.0, 1.5, 100.0, 1000.0),
    ],
)
def test_agrees_with_reliability_package(
    reference_ort: Any, alpha: float, beta: float, cost_pm: float, cost_cm: float
) -> None:
    saved = np.geterr()
    ref = reference_ort(
        cost_PM=cost_pm,
        cost_CM=cost_cm,
        weibull_alpha=alpha,
        weibull_beta=beta,
        show_time_plot=False,
        show_ratio_plot=False,
        print_results=False,
        q=0,
    )
    np.seterr(**saved)
    ours = optimal_age_replacement(
        LifeDistribution(shape=beta, scale_h=alpha), ReplacementCosts(cost_pm, cost_cm)
    )
    grid_step = (alpha * 3 - 1) / 9999  # reliability 0.9.0: np.linspace(1, 3 alpha, 10000)
    assert ours.has_optimum
    assert abs(ours.interval_h - ref.ORT) <= 2 * grid_step
    # C is flat at its minimum: the grid minimum is within 1e-6 of ours, never below it
    assert ours.cost_rate_per_h == pytest.approx(ref.min_cost, rel=1e-6)
    assert ours.cost_rate_per_h <= ref.min_cost * (1 + 1e-9)


def brute_force_cost_rate(life: LifeDistribution, t: np.ndarray, c: ReplacementCosts) -> np.ndarray:
    """C(T) written out from the renewal-reward formula, ∫R by scipy quad piece by piece."""
    b, eta, x0 = life.shape, life.scale_h, life.location_h

    def rel(x: float) -> float:
        return 1.0 if x <= x0 else math.exp(-(((x - x0) / eta) ** b))

    out, up, prev = [], 0.0, 0.0
    for x in t:  # t ascending
        pts = [x0] if prev < x0 < x else None
        up += integrate.quad(rel, prev, x, points=pts, epsabs=0.0, epsrel=1e-12)[0]
        prev = x
        r = rel(x)
        f = 1.0 - r
        cost = c.planned_replacement * r + c.failure * f
        cost += c.downtime_per_h * (c.planned_stop_h * r + c.failure_stop_h * f)
        out.append(cost / (up + c.planned_stop_h * r + c.failure_stop_h * f))
    return np.array(out)


def test_brute_force_with_downtime_and_location() -> None:
    # Invented pump bearing: L10 = 20,000 h, ISO 281 preset; 8 h planned change,
    # 24 h after a failure (Bloch's ~8 h change, from TYPICAL-VALUES), 300 per stop hour.
    life = LifeDistribution.from_rating_life(20_000.0, "iso281")
    costs = ReplacementCosts(
        planned_replacement=500.0,
        failure=2000.0,
        planned_stop_h=8.0,
        failure_stop_h=24.0,
        downtime_per_h=300.0,
    )
    grid = np.linspace(2_000.0, 120_000.0, 2_400)
    brute = brute_force_cost_rate(life, grid, costs)
    assert_allclose(age_replacement_cost_rate(life, grid, costs), brute, rtol=1e-9)
    k = int(np.argmin(brute))
    ours = optimal_age_replacement(life, costs)
    assert ours.has_optimum
    assert abs(ours.interval_h - grid[k]) <= grid[1] - grid[0]
    assert ours.cost_rate_per_h <= brute[k] * (1 + 1e-12)
    assert ours.cost_rate_per_h == pytest.approx(brute[k], rel=1e-6)
    # run-to-failure rate (c_f + c_d d_f) / (μ + d_f)
    rtf = (2000.0 + 300.0 * 24.0) / (life.mean_h + 24.0)
    assert ours.run_to_failure_cost_rate_per_h == pytest.approx(rtf, rel=1e-12)
    assert ours.saving_per_h == pytest.approx(rtf - ours.cost_rate_per_h, rel=1e-12)


def test_scipy_life_takes_the_quadrature_path() -> None:
    life = LifeDistribution(shape=2.2, scale_h=3000.0, location_h=200.0)
    wrapped = ScipyLife(life.frozen)
    costs = ReplacementCosts(1.0, 6.0, planned_stop_h=2.0, failure_stop_h=10.0, downtime_per_h=0.1)
    closed = optimal_age_replacement(life, costs)
    numeric = optimal_age_replacement(wrapped, costs)
    assert numeric.interval_h == pytest.approx(closed.interval_h, rel=1e-5)
    assert numeric.cost_rate_per_h == pytest.approx(closed.cost_rate_per_h, rel=1e-9)


def test_monte_carlo_cost_rate_at_the_optimum() -> None:
    # Renewal-reward by simulation: ratio of mean cycle cost to mean cycle length,
    # with a delta-method standard error.
    life = LifeDistribution(shape=2.5, scale_h=1000.0, location_h=100.0)
    costs = ReplacementCosts(1.0, 5.0, planned_stop_h=4.0, failure_stop_h=20.0, downtime_per_h=0.05)
    t_star = optimal_age_replacement(life, costs).interval_h
    rng = np.random.default_rng(np.random.SeedSequence(7))
    lives = life.sample(rng, 200_000)
    failed = lives < t_star
    cost = np.where(failed, costs.failure_total, costs.planned_total)
    length = np.minimum(lives, t_star) + np.where(failed, 20.0, 4.0)
    ratio = cost.mean() / length.mean()
    resid = cost - ratio * length
    se = resid.std(ddof=1) / math.sqrt(lives.size) / length.mean()
    assert abs(ratio - age_replacement_cost_rate(life, t_star, costs)) < 4 * se
    rates = age_replacement_rates(life, t_star, costs)
    se_f = failed.std(ddof=1) / math.sqrt(lives.size) / length.mean()
    assert abs(failed.mean() / length.mean() - rates.failures_per_h) < 4 * se_f
    assert rates.replacements_per_h == pytest.approx(
        1.0
        / (
            float(integrate.quad(life.sf, 0, t_star)[0])
            + 4.0 * life.sf(t_star)
            + 20.0 * life.cdf(t_star)
        ),
        rel=1e-7,
    )


@pytest.mark.parametrize("shape", [1.0, 0.8])
def test_no_optimum_when_hazard_does_not_rise(shape: float) -> None:
    # Barlow & Proschan: with a non-increasing hazard, age replacement never pays.
    life = LifeDistribution(shape=shape, scale_h=1000.0)
    res = optimal_age_replacement(life, ReplacementCosts(1.0, 10.0))
    assert not res.has_optimum
    assert res.interval_h is None
    assert res.saving_per_h == 0.0
    assert res.cost_rate_per_h == res.run_to_failure_cost_rate_per_h
    assert "shape" in res.reason and "run to failure" in res.reason


def test_no_optimum_when_failure_barely_costlier() -> None:
    life = LifeDistribution(shape=1.5, scale_h=1000.0)
    costs = ReplacementCosts(1.0, 1.001)
    res = optimal_age_replacement(life, costs)
    assert not res.has_optimum and res.interval_h is None
    assert "run to failure" in res.reason
    # the brute-force minimum over a wide grid saves less than 0.1 % (the threshold)
    grid = np.linspace(50.0, 8000.0, 800)
    brute = brute_force_cost_rate(life, grid, costs)
    rtf = 1.001 / life.mean_h
    assert (rtf - brute.min()) / rtf < 1e-3


def test_no_optimum_when_failure_is_cheaper() -> None:
    res = optimal_age_replacement(LifeDistribution(3.0, 1000.0), ReplacementCosts(5.0, 4.0))
    assert not res.has_optimum
    assert "no more than a planned replacement" in res.reason


def test_free_planned_replacement_is_refused() -> None:
    with pytest.raises(InputError):
        optimal_age_replacement(LifeDistribution(2.0, 100.0), ReplacementCosts(0.0, 4.0))
    with pytest.raises(InputError):
        ReplacementCosts(-1.0, 4.0)


def test_numpy_error_state_unchanged() -> None:
    saved = np.geterr()
    optimal_age_replacement(LifeDistribution(2.0, 100.0), ReplacementCosts(1.0, 4.0))
    assert np.geterr() == saved


@settings(max_examples=40, deadline=None)
@given(
    shape=st.floats(0.5, 4.0),
    scale=st.floats(100.0, 1e5),
    location_share=st.floats(0.0, 0.5),
    ratio=st.floats(1.0, 20.0),
    stop_h=st.floats(0.0, 50.0),
    probe=st.floats(0.01, 0.999),
)
def test_properties(
    shape: float, scale: float, location_share: float, ratio: float, stop_h: float, probe: float
) -> None:
    life = LifeDistribution(shape=shape, scale_h=scale, location_h=location_share * scale)
    costs = ReplacementCosts(
        1.0, ratio, planned_stop_h=stop_h, failure_stop_h=3 * stop_h, downtime_per_h=0.01
    )
    rtf = run_to_failure_cost_rate(life, costs)
    # C(T) tends to the run-to-failure rate as T grows
    far = float(life.ppf(1.0 - 1e-13))
    assert age_replacement_cost_rate(life, far, costs) == pytest.approx(rtf, rel=1e-8)
    res = optimal_age_replacement(life, costs)
    # the recommended policy is never worse than any probe interval, nor than run-to-failure
    probe_t = float(life.ppf(probe))
    assert res.cost_rate_per_h <= age_replacement_cost_rate(life, probe_t, costs) * (1 + 1e-9)
    assert res.cost_rate_per_h <= rtf
    if res.has_optimum:
        assert res.interval_h is not None and res.saving_fraction >= 1e-3
    else:
        assert res.interval_h is None and res.cost_rate_per_h == rtf

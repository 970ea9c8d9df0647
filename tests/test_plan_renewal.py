"""Renewal function M(t) and Var N(t) against closed forms, bounds and Monte Carlo.

Sources: the Poisson process (exponential life) M(t) = t/μ, Var N(t) = t/μ;
the Erlang-2 renewal function (Cox, *Renewal Theory*, 1962, from memory); the
second-order asymptote t/μ + (σ² − μ²)/(2μ²) (Smith's renewal theorem, from
memory); the bounds t/μ − 1 <= M(t) <= t/μ for a life that is new better than
used in expectation, e.g. Weibull shape >= 1 (Barlow & Proschan, *Mathematical
Theory of Reliability*, 1965, from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.plan import (
    ScipyLife,
    renewal_asymptote,
    renewal_count_variance,
    renewal_function,
    renewal_moments,
)


def erlang2_renewal(t: np.ndarray, phase_rate: float) -> np.ndarray:
    # Erlang-2 (gamma shape 2) life: M(t) = λt/2 − 1/4 + e^{−2λt}/4 (Cox 1962, from memory)
    return phase_rate * t / 2.0 - 0.25 + np.exp(-2.0 * phase_rate * t) / 4.0


def test_exponential_life_gives_poisson_mean_and_variance() -> None:
    # Poisson process: M(t) = t/μ and Var N(t) = t/μ exactly
    life = LifeDistribution(shape=1.0, scale_h=1000.0)
    t = np.array([0.0, 50.0, 500.0, 1000.0, 4000.0, 10000.0])
    mom = renewal_moments(life, t)
    assert_allclose(mom.mean, t / 1000.0, rtol=1e-5, atol=1e-12)
    assert_allclose(mom.variance, t / 1000.0, rtol=1e-4, atol=1e-12)


def test_erlang2_closed_form_and_scipy_distribution() -> None:
    # A frozen scipy gamma distribution goes through the ScipyLife adapter.
    life = ScipyLife(stats.gamma(a=2.0, scale=500.0))
    t = np.array([10.0, 200.0, 1000.0, 2500.0, 8000.0])
    assert_allclose(renewal_function(life, t), erlang2_renewal(t, 1 / 500.0), atol=2e-5)
    # the bare frozen distribution is wrapped automatically
    assert_allclose(
        renewal_function(stats.gamma(a=2.0, scale=500.0), t),
        erlang2_renewal(t, 1 / 500.0),
        atol=2e-5,
    )


def test_scheme_is_second_order() -> None:
    # Xie's mid-point scheme: halving the step divides the error by about four.
    life = ScipyLife(stats.gamma(a=2.0, scale=500.0))
    t = np.array([3000.0])
    exact = erlang2_renewal(t, 1 / 500.0)
    e1 = abs(renewal_function(life, t, steps=400) - exact)[0]
    e2 = abs(renewal_function(life, t, steps=800) - exact)[0]
    assert 3.5 < e1 / e2 < 4.5


def test_weibull_shape_two_meets_its_asymptote() -> None:
    life = LifeDistribution(shape=2.0, scale_h=1000.0)
    t = np.array([10.0, 20.0]) * life.mean_h
    assert_allclose(renewal_function(life, t), renewal_asymptote(life, t), atol=1e-4)
    # asymptote constant for shape 2: (σ² − μ²)/(2μ²) = (4/π − 2)/2 = 2/π − 1
    assert renewal_asymptote(life, 0.0) == pytest.approx(2.0 / math.pi - 1.0, rel=1e-12)


def test_monte_carlo_renewal_counts_three_parameter_weibull() -> None:
    # ISO 281 preset (shape 1.5, location 0.05 L10) at L10 = 20,000 h.
    life = LifeDistribution.from_rating_life(20_000.0, "iso281")
    times = np.array([0.5, 1.0, 2.0, 3.0]) * life.mean_h
    rng = np.random.default_rng(np.random.SeedSequence(20240611))
    n_paths, draws = 40_000, 16
    arrivals = np.cumsum(life.sample(rng, (n_paths, draws)), axis=1)
    assert np.all(arrivals[:, -1] > times[-1])  # enough draws for every path
    counts = (arrivals[:, :, None] <= times[None, None, :]).sum(axis=1)
    mom = renewal_moments(life, times)
    mean_mc = counts.mean(axis=0)
    var_mc = counts.var(axis=0, ddof=1)
    se_mean = counts.std(axis=0, ddof=1) / math.sqrt(n_paths)
    dev = counts - mean_mc
    se_var = np.sqrt(((dev**2 - var_mc) ** 2).mean(axis=0) / n_paths)
    assert np.all(np.abs(mean_mc - mom.mean) < 4 * se_mean)
    assert np.all(np.abs(var_mc - mom.variance) < 4 * se_var)


@settings(max_examples=25, deadline=None)
@given(
    shape=st.floats(1.0, 4.0),
    scale=st.floats(10.0, 1e5),
    t_over_mean=st.floats(0.01, 8.0),
)
def test_nbue_bounds(shape: float, scale: float, t_over_mean: float) -> None:
    # Weibull shape >= 1 is NBUE: t/μ − 1 <= M(t) <= t/μ (Barlow & Proschan, from memory)
    life = LifeDistribution(shape=shape, scale_h=scale)
    t = t_over_mean * life.mean_h
    m = renewal_function(life, t)
    slack = 1e-4
    assert t / life.mean_h - 1.0 - slack <= m <= t / life.mean_h + slack
    assert m >= float(life.cdf(t)) - slack  # M(t) >= F(t)


def test_renewal_function_is_non_decreasing_and_starts_at_zero() -> None:
    life = LifeDistribution(shape=3.0, scale_h=500.0, location_h=100.0)
    t = np.linspace(0.0, 5000.0, 300)
    m = renewal_function(life, t)
    assert m[0] == 0.0
    assert np.all(np.diff(m) >= -1e-12)
    assert np.all(m[t <= 100.0] == 0.0)  # no failure inside the failure-free life
    assert renewal_function(life, 0.0) == 0.0
    assert renewal_count_variance(life, 0.0) == 0.0


@pytest.mark.parametrize("bad", [-1.0, math.nan, math.inf])
def test_bad_times_raise_input_error(bad: float) -> None:
    with pytest.raises(InputError):
        renewal_function(LifeDistribution(2.0, 100.0), [1.0, bad])


def test_not_a_distribution_raises_input_error() -> None:
    with pytest.raises(InputError):
        renewal_function(object(), 10.0)

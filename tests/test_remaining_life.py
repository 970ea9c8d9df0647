"""Remaining life of a bearing already in service: conditional reliability.

R(t | a) = R(a + t) / R(a) for a bearing that has survived to age a (any
reliability text, e.g. Barlow & Proschan, *Mathematical Theory of
Reliability*), checked against scipy.stats.weibull_min's survival function,
round trips (hypothesis) and closed forms.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution

lives = st.builds(
    LifeDistribution,
    shape=st.floats(0.5, 4.0),
    scale_h=st.floats(1e2, 1e6),
    location_h=st.floats(0.0, 1e4),
)
reliabilities = st.floats(1e-6, 1 - 1e-6)


@settings(max_examples=200, deadline=None, derandomize=True)
@given(lives, reliabilities, st.floats(0.0, 3.0))
def test_remaining_life_round_trip(life: LifeDistribution, r: float, age_in_scales: float) -> None:
    age = life.location_h + age_in_scales * life.scale_h
    t = life.remaining_life_at_reliability(r, age)
    assert t >= 0
    assert life.conditional_reliability(t, age) == pytest.approx(r, rel=1e-9, abs=1e-12)


@settings(max_examples=100, deadline=None, derandomize=True)
@given(lives, reliabilities)
def test_at_age_zero_it_is_the_life_at_reliability(life: LifeDistribution, r: float) -> None:
    assert life.remaining_life_at_reliability(r, 0.0) == pytest.approx(
        life.life_at_reliability(r), rel=1e-12
    )
    assert life.conditional_reliability(1234.5, 0.0) == pytest.approx(
        life.reliability(1234.5), rel=1e-12
    )


@settings(max_examples=100, deadline=None, derandomize=True)
@given(lives, reliabilities, st.floats(0.0, 2.0))
def test_the_engines_residual_draw_is_the_same_quantile(
    life: LifeDistribution, r: float, age_in_scales: float
) -> None:
    # The engines draw the first remaining life by inverse transform with u = 1 − R.
    age = life.location_h + age_in_scales * life.scale_h
    assert life.life_from_uniform(1.0 - r, age) == pytest.approx(
        life.remaining_life_at_reliability(r, age), rel=1e-7, abs=1e-6
    )


@pytest.mark.parametrize(
    "shape, scale_h, location_h", [(1.5, 10_000.0, 500.0), (0.8, 50_000.0, 0.0), (3.0, 2e4, 1e3)]
)
def test_conditional_reliability_matches_scipy_sf_ratio(
    shape: float, scale_h: float, location_h: float
) -> None:
    life = LifeDistribution(shape, scale_h, location_h)
    ref = stats.weibull_min(c=shape, loc=location_h, scale=scale_h)  # reference: scipy
    ages = np.array([0.0, 300.0, 5_000.0, 20_000.0])[:, None]
    t = np.array([0.0, 100.0, 2_000.0, 15_000.0, 40_000.0])[None, :]
    expected = ref.sf(ages + t) / ref.sf(ages)
    np.testing.assert_allclose(life.conditional_reliability(t, ages), expected, rtol=1e-10)
    # remaining life at R: the t with sf(a + t) = R·sf(a), i.e. scipy's isf(R·sf(a)) − a
    for a in ages.ravel():
        for r in (0.99, 0.9, 0.5, 0.1):
            assert life.remaining_life_at_reliability(r, a) == pytest.approx(
                float(ref.isf(r * ref.sf(a))) - a, rel=1e-9
            )


def test_exponential_life_is_memoryless() -> None:
    # Shape 1: beyond the location the remaining life does not depend on the age
    # (memoryless exponential), remaining L10 = η·ln(1/0.9); before the location
    # it is the new bearing's L10 minus the age.
    life = LifeDistribution(1.0, 40_000.0, 2_000.0)
    l10 = 40_000.0 * math.log(1 / 0.9)
    for age in (2_000.0, 9_000.0, 150_000.0):
        assert life.remaining_life_at_reliability(0.9, age) == pytest.approx(l10, rel=1e-12)
    assert life.remaining_life_at_reliability(0.9, 500.0) == pytest.approx(
        2_000.0 + l10 - 500.0, rel=1e-12
    )


@settings(max_examples=100, deadline=None, derandomize=True)
@given(lives, st.floats(0.0, 2.0), st.floats(0.01, 2.0))
def test_wear_out_leaves_less_and_infant_mortality_more(
    life: LifeDistribution, a: float, da: float
) -> None:
    # Increasing hazard (shape > 1): an older bearing has less remaining life at a given
    # reliability; decreasing hazard (shape < 1): more (Barlow & Proschan, IFR/DFR).
    young = life.location_h + a * life.scale_h
    old = young + da * life.scale_h
    r_young = life.remaining_life_at_reliability(0.9, young)
    r_old = life.remaining_life_at_reliability(0.9, old)
    if life.shape > 1.001:
        assert r_old < r_young * (1 + 1e-9)
    elif life.shape < 0.999:
        assert r_old > r_young * (1 - 1e-9)


def test_stays_accurate_when_the_age_itself_is_very_unlikely() -> None:
    # At a = 100·η, R(a) = exp(-1000) underflows; the conditional reliability is
    # exp(-z(a)·[(1 + t/(a − x0))^b − 1]) with z(a) = ((a − x0)/η)^b (closed form).
    life = LifeDistribution(1.5, 10_000.0, 0.0)
    a, t = 1e6, 10.0
    z_a = (a / 1e4) ** 1.5
    expected = math.exp(-z_a * math.expm1(1.5 * math.log1p(t / a)))
    assert life.reliability(a) == 0.0
    assert life.conditional_reliability(t, a) == pytest.approx(expected, rel=1e-9)
    assert life.remaining_life_at_reliability(0.9, a) > 0


@pytest.mark.parametrize(
    "call",
    [
        lambda life: life.remaining_life_at_reliability(1.0, 0.0),
        lambda life: life.remaining_life_at_reliability(0.0, 0.0),
        lambda life: life.remaining_life_at_reliability(0.9, -1.0),
        lambda life: life.conditional_reliability(10.0, math.inf),
        lambda life: life.conditional_reliability(10.0, math.nan),
    ],
)
def test_bad_arguments_are_input_errors(call) -> None:
    with pytest.raises(InputError):
        call(LifeDistribution(1.5, 1e4))

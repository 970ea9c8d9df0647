"""Properties of the life models (hypothesis) and unit handling."""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose

from fleetsim.life import (
    BearingRating,
    BearingType,
    DutyStep,
    LifeDistribution,
    WeibullShape,
    duty_cycle,
    position_life,
    required_dynamic_rating,
)
from fleetsim.units import parse_quantity

reliabilities = st.floats(min_value=1e-6, max_value=1 - 1e-6)
shapes = st.floats(min_value=0.5, max_value=5.0)


@settings(max_examples=200, deadline=None)
@given(r=reliabilities, shape=shapes, loc=st.floats(0.0, 0.5), scale=st.floats(0.1, 20.0),
       l10=st.floats(10.0, 1e6))
def test_life_at_reliability_round_trip(r, shape, loc, scale, l10) -> None:
    d = LifeDistribution.from_rating_life(l10, WeibullShape(shape, loc, scale))
    t = d.life_at_reliability(r)
    assert_allclose(d.reliability(t), r, rtol=1e-9, atol=1e-12)
    assert_allclose(d.cdf(t) + d.reliability(t), 1.0, rtol=1e-12)


@pytest.mark.filterwarnings("ignore::fleetsim.errors.LifeModelWarning")  # P > 0.5 C is drawn
@settings(max_examples=100, deadline=None)
@given(r=st.floats(0.5, 0.9999), life_h=st.floats(100.0, 1e6), load=st.floats(10.0, 1e6),
       speed=st.floats(1.0, 1e4), kind=st.sampled_from(["ball", "roller"]),
       model=st.sampled_from(["iso281", "textbook"]))
def test_required_rating_gives_the_target_reliability(r, life_h, load, speed, kind, model) -> None:
    c = required_dynamic_rating(load, speed, life_h, r, bearing_type=kind, model=model)
    res = position_life(BearingRating(BearingType(kind), c), [DutyStep(1, load, 0, speed)], model=model)
    assert_allclose(res.distribution.reliability(life_h), r, rtol=1e-8)


@settings(max_examples=100, deadline=None)
@given(loads=st.lists(st.floats(10.0, 1e5), min_size=1, max_size=6),
       speeds=st.lists(st.floats(1.0, 5e3), min_size=6, max_size=6),
       shares=st.lists(st.floats(0.01, 1.0), min_size=6, max_size=6))
def test_duty_cycle_lies_between_extremes_and_preserves_damage(loads, speeds, shares) -> None:
    steps = [DutyStep(s, f, 0.0, n) for f, n, s in zip(loads, speeds, shares, strict=False)]
    res = duty_cycle("ball", steps)
    assert min(loads) * (1 - 1e-12) <= res.load_N <= max(loads) * (1 + 1e-12)
    # Miner's rule: the same fatigue damage per cycle as the steps (ISO 281 variable conditions).
    damage_steps = sum(st.share * st.speed_rpm * st.radial_load_N**3 for st in steps)
    total_time = sum(st.share for st in steps)
    assert_allclose(res.load_N**3 * res.speed_rpm * total_time, damage_steps, rtol=1e-9)


def test_same_case_in_newtons_and_pound_force() -> None:
    # 1 lbf = 4.4482216152605 N exactly (NIST SP 811).
    n_case = parse_quantity("4448.2216152605 N", "force", "x")
    lbf_case = parse_quantity("1000 lbf", "force", "x")
    assert_allclose(n_case, lbf_case, rtol=1e-12)
    a = position_life(BearingRating(BearingType.BALL, parse_quantity("11240 lbf", "force", "c")),
                      [DutyStep(1, parse_quantity("1100 lbf", "force", "fr"), 0, 1800)])
    b = position_life(BearingRating(BearingType.BALL, parse_quantity("49.998 kN", "force", "c")),
                      [DutyStep(1, parse_quantity("4.8930 kN", "force", "fr"), 0, 1800)])
    assert_allclose(a.rating_life_h, b.rating_life_h, rtol=1e-3)
    assert_allclose(parse_quantity("30 Hz", "speed", "s"), 1800.0)
    assert_allclose(parse_quantity("2 weeks", "time", "t"), 336.0)
    # fleetsim's year is the Julian year of 365.25 days (IAU), 8766 h.
    assert math.isclose(parse_quantity("1 year", "time", "t"), 8766.0, rel_tol=1e-12)


def test_sampling_uses_only_the_given_generator() -> None:
    d = LifeDistribution(1.5, 10_000.0, 500.0)
    a = d.sample(np.random.default_rng(7), 5)
    b = d.sample(np.random.default_rng(7), 5)
    assert np.array_equal(a, b)

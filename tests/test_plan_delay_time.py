"""Delay-time inspection model against closed forms and Monte Carlo.

Model: Christer & Waller (1984), *J. Operational Research Society* 35, the
basic delay-time model b(Δ) = (1/Δ)∫₀^Δ F_h(Δ − y) dy and its cost and
downtime per unit time (from memory). For an exponential delay of mean m,
b(Δ) = 1 − (1 − e^{−Δ/m})·m/Δ (direct integration of the formula above).
The imperfect-detection extension is checked by simulating the defects
themselves.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from numpy.testing import assert_allclose
from scipy import integrate, optimize, stats

from fleetsim.errors import InputError
from fleetsim.life import LifeDistribution
from fleetsim.plan import (
    DelayTimeModel,
    failure_share,
    inspection_cost_rate,
    inspection_downtime_fraction,
    optimal_inspection_interval,
)

MEAN_PF_H = 1000.0


def exponential_share(delta: np.ndarray, m: float) -> np.ndarray:
    return 1.0 - (1.0 - np.exp(-delta / m)) * m / delta


def test_exponential_delay_closed_form() -> None:
    delta = np.array([1.0, 10.0, 100.0, 500.0, 1000.0, 5000.0, 50000.0])
    assert_allclose(
        failure_share(stats.expon(scale=MEAN_PF_H), delta),
        exponential_share(delta, MEAN_PF_H),
        rtol=1e-9,  # the reference itself loses digits to cancellation at small Δ/m
    )


@pytest.mark.parametrize(
    "delay",
    [
        stats.weibull_min(2.0, scale=2000.0),
        stats.weibull_min(0.8, scale=500.0),
        stats.lognorm(0.6, scale=700.0),
        LifeDistribution(shape=1.5, scale_h=900.0, location_h=100.0),
    ],
)
def test_perfect_detection_is_the_basic_model(delay: object) -> None:
    for delta in (50.0, 400.0, 3000.0):
        basic = integrate.quad(delay.cdf, 0.0, delta, limit=400, epsabs=0, epsrel=1e-12)[0] / delta
        assert failure_share(delay, delta, 1.0) == pytest.approx(basic, rel=1e-9, abs=1e-14)


def test_small_detection_probability_means_nearly_every_defect_fails() -> None:
    delay = stats.expon(scale=MEAN_PF_H)
    assert failure_share(delay, 300.0, 0.0) == 1.0
    assert failure_share(delay, 300.0, 1e-6) == pytest.approx(1.0, abs=1e-5)
    shares = [failure_share(delay, 300.0, p) for p in (0.01, 0.1, 0.5, 0.9, 1.0)]
    assert all(a > b for a, b in zip(shares, shares[1:], strict=False))


def test_exponential_delay_with_imperfect_detection_series() -> None:
    # For an exponential delay the geometric series sums to
    # b = 1 − (p m/Δ)(1 − e^{−Δ/m}) / (1 − (1 − p) e^{−Δ/m}).
    delta = np.array([20.0, 300.0, 1000.0, 4000.0])
    for p in (0.3, 0.7, 0.95):
        e = np.exp(-delta / MEAN_PF_H)
        expected = 1.0 - (p * MEAN_PF_H / delta) * (1.0 - e) / (1.0 - (1.0 - p) * e)
        assert_allclose(failure_share(stats.expon(scale=MEAN_PF_H), delta, p), expected, rtol=1e-10)


@pytest.mark.parametrize("p, delta", [(0.6, 400.0), (0.85, 1500.0), (0.3, 150.0)])
def test_monte_carlo_imperfect_detection(p: float, delta: float) -> None:
    # Simulate defects: arrival uniform within an interval, Weibull P-F delay,
    # each inspection before failure finds the defect with probability p.
    delay = stats.weibull_min(1.8, scale=1200.0)
    rng = np.random.default_rng(np.random.SeedSequence([11, int(100 * p)]))
    n = 200_000
    u = rng.uniform(0.0, delta, n)  # time to the next inspection
    h = delay.rvs(size=n, random_state=rng)
    k = np.where(h > u, np.ceil((h - u) / delta), 0.0)  # inspections met before failing
    missed_all = rng.random(n) < (1.0 - p) ** k
    share = missed_all.mean()
    se = math.sqrt(share * (1 - share) / n)
    assert abs(share - failure_share(delay, delta, p)) < 4 * se


def pump_model(**kw: float) -> DelayTimeModel:
    # Invented plant: one defect per 2,000 h, exponential P-F interval of 1,000 h.
    base = dict(
        defect_rate_per_h=1 / 2000,
        delay=stats.expon(scale=MEAN_PF_H),
        inspection_cost=40.0,
        failure_cost=3000.0,
        defect_repair_cost=600.0,
        inspection_stop_h=0.5,
        failure_stop_h=16.0,
        downtime_per_h=100.0,
    )
    base.update(kw)
    return DelayTimeModel(**base)


def brute_cost(delta: np.ndarray, model: DelayTimeModel) -> np.ndarray:
    b = exponential_share(delta, MEAN_PF_H)
    lam = model.defect_rate_per_h
    cycle = delta + model.inspection_stop_h
    per = model.inspection_cost + model.downtime_per_h * model.inspection_stop_h
    fail = model.failure_cost + model.downtime_per_h * model.failure_stop_h
    return (per + lam * delta * (b * fail + (1 - b) * model.defect_repair_cost)) / cycle


def test_cost_rate_and_optimum_against_brute_force() -> None:
    model = pump_model()
    grid = np.linspace(5.0, 3000.0, 6000)
    brute = brute_cost(grid, model)
    assert_allclose(inspection_cost_rate(model, grid[::60]), brute[::60], rtol=1e-10)
    k = int(np.argmin(brute))
    res = optimal_inspection_interval(model)
    assert res.has_optimum and res.objective == "cost"
    assert abs(res.interval_h - grid[k]) <= grid[1] - grid[0]
    assert res.cost_rate_per_h == pytest.approx(brute[k], rel=1e-6)
    assert res.failure_share == pytest.approx(
        exponential_share(res.interval_h, MEAN_PF_H), rel=1e-9
    )
    # no inspection: λ (c_f + c_d d_f)
    assert res.no_inspection_cost_rate_per_h == pytest.approx((3000 + 1600) / 2000)
    assert inspection_cost_rate(model, 1e9) == pytest.approx(
        res.no_inspection_cost_rate_per_h, rel=1e-5
    )


def test_downtime_optimum_against_brute_force() -> None:
    # Christer's downtime model: D(Δ) = (d_i + λΔ b(Δ) d_f) / (Δ + d_i)
    model = pump_model()
    res = optimal_inspection_interval(model, objective="downtime")

    def downtime(delta: float) -> float:
        b = float(exponential_share(np.array(delta), MEAN_PF_H))
        return (0.5 + delta / 2000 * b * 16.0) / (delta + 0.5)

    ref = optimize.minimize_scalar(
        downtime, bounds=(1.0, 5000.0), method="bounded", options={"xatol": 1e-6}
    )
    assert res.has_optimum
    assert res.interval_h == pytest.approx(ref.x, rel=1e-4)
    assert res.downtime_fraction == pytest.approx(ref.fun, rel=1e-9)
    assert inspection_downtime_fraction(model, res.interval_h) == pytest.approx(ref.fun, rel=1e-9)


def test_no_optimum_when_inspection_dearer_than_failures() -> None:
    res = optimal_inspection_interval(pump_model(inspection_cost=50_000.0))
    assert not res.has_optimum and res.interval_h is None
    assert res.cost_rate_per_h == res.no_inspection_cost_rate_per_h
    assert "does not lower" in res.reason


def test_free_inspection_has_no_interior_optimum() -> None:
    res = optimal_inspection_interval(pump_model(inspection_cost=0.0, inspection_stop_h=0.0))
    assert not res.has_optimum and res.interval_h is None
    assert math.isnan(res.cost_rate_per_h)
    assert "more frequent" in res.reason


def test_bad_inputs() -> None:
    with pytest.raises(InputError):
        failure_share(object(), 10.0)
    with pytest.raises(InputError):
        failure_share(stats.expon(), 10.0, 1.5)
    with pytest.raises(InputError):
        failure_share(stats.expon(), -1.0)
    with pytest.raises(InputError):
        pump_model(defect_rate_per_h=0.0)
    with pytest.raises(InputError):
        optimal_inspection_interval(pump_model(), objective="profit")


@settings(max_examples=30, deadline=None)
@given(
    p=st.floats(0.05, 1.0),
    delta=st.floats(1.0, 1e4),
    factor=st.floats(1.1, 4.0),
)
def test_failure_share_grows_with_the_interval(p: float, delta: float, factor: float) -> None:
    delay = stats.weibull_min(1.5, scale=MEAN_PF_H)
    lo = failure_share(delay, delta, p)
    hi = failure_share(delay, delta * factor, p)
    assert 0.0 <= lo <= hi + 1e-12 <= 1.0 + 1e-12

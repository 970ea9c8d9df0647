"""A lognormal life (a family ``fleetsim fit`` ranks) against scipy.stats.lognorm.

Reference: scipy.stats.lognorm(s=σ, loc=x0, scale=median), the standard
three-parameter lognormal. The inverse transform both engines use must hold in
the far tails (q down to 1e-300) and for bearings aged far into their life.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import stats

from fleetsim.errors import InputError
from fleetsim.life import BearingType, LifeDistribution
from fleetsim.scenario.model import Bearing, Costs, Machine, Policy, Position, Scenario, Study
from fleetsim.sim import simulate

LOGN = LifeDistribution(shape=0.6, scale_h=25_000.0, location_h=1_000.0, family="lognormal")
REF = stats.lognorm(s=0.6, loc=1_000.0, scale=25_000.0)


def test_distribution_functions_match_scipy() -> None:
    t = np.array([500.0, 1_000.0, 2_000.0, 10_000.0, 26_000.0, 80_000.0, 300_000.0])
    np.testing.assert_allclose(LOGN.cdf(t), REF.cdf(t), rtol=1e-12, atol=1e-300)
    np.testing.assert_allclose(LOGN.sf(t), REF.sf(t), rtol=1e-10)
    np.testing.assert_allclose(LOGN.pdf(t), REF.pdf(t), rtol=1e-12)
    assert LOGN.mean_h == pytest.approx(REF.mean(), rel=1e-12)
    assert LOGN.variance_h2 == pytest.approx(REF.var(), rel=1e-12)
    q = np.array([1e-300, 1e-15, 1e-6, 0.1, 0.5, 0.9, 1 - 1e-9])
    np.testing.assert_allclose(LOGN.ppf(q), REF.ppf(q), rtol=1e-10)
    with pytest.raises(InputError):
        LifeDistribution(0.0, 1.0, family="lognormal")
    with pytest.raises(InputError):
        LifeDistribution(1.0, 1.0, family="gamma")


def test_inverse_transform_holds_in_the_tails_and_for_aged_bearings() -> None:
    u = np.array([1e-300, 1e-14, 0.3, 0.999999])
    for family, ref in (("lognormal", REF), ("weibull", stats.weibull_min(1.5, 1_000.0, 25_000.0))):
        d = LifeDistribution(0.6 if family == "lognormal" else 1.5, 25_000.0, 1_000.0, family)
        np.testing.assert_allclose(d.lives_from_uniform(u), ref.ppf(u), rtol=1e-9)
        # aged 60,000 h (R(a) ~ 7e-2 lognormal): R(a + t)/R(a) = 1 − u
        a = 60_000.0
        t = d.lives_from_uniform(u[1:], a)
        np.testing.assert_allclose(ref.sf(a + t) / ref.sf(a), 1 - u[1:], rtol=1e-7)
        assert d.life_from_uniform(0.3, a) == pytest.approx(float(t[1]), rel=1e-12)


def test_first_failures_of_the_des_follow_the_lognormal() -> None:
    """2,000 units run to failure: their first failures are a sample of the life
    (Kolmogorov–Smirnov against scipy's lognorm; fixed seed)."""
    m = Machine("m", 2_000, 1.0, 0.0, (Position("p", "B", LOGN, Policy()),))
    sc = Scenario(Study("ks", 600_000.0, 1, 0), Costs(), {"B": Bearing("B", BearingType.BALL, 1e4)},
                  (m,))
    first: dict[str, float] = {}
    for t, unit, _p, kind in simulate(sc, 7).event_log():
        if kind == "failure":
            first.setdefault(unit, t)
    assert len(first) == 2_000
    assert stats.kstest(list(first.values()), REF.cdf).pvalue > 0.01

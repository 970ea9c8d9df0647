"""Fitted lives against independent references: scipy, the reliability package, a published set.

Every reference value is computed here by other code than fleetsim's (scipy's
own fitters, a direct maximisation written in this file, the reliability
package called directly) or is a published figure marked "(from memory)".
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy import optimize, stats

from fleetsim.fit import CensoredSample, fit_records, plotting_positions
from fleetsim.fit.adapter import _fitters
from fleetsim.fit.likelihood import fit_lognormal, fit_weibull
from fleetsim.fit.location import fit_weibull_3p

# Lieblein & Zelen (1956) fatigue lives of 23 deep-groove ball bearings, millions of
# revolutions, as tabulated in Lawless, *Statistical Models and Methods for Lifetime
# Data*, example 1.1.1 (from memory).
BALL_BEARINGS_MREV = np.array(
    [17.88, 28.92, 33.00, 41.52, 42.12, 45.60, 48.48, 51.84, 51.96, 54.12, 55.56, 67.80,
     68.64, 68.64, 68.88, 84.12, 93.12, 98.64, 105.12, 105.84, 127.92, 128.04, 173.40]
)  # fmt: skip


def _censored_weibull(seed: int, n: int, shape: float, scale: float, censor_max: float):
    rng = np.random.default_rng(np.random.SeedSequence(seed))
    life = scale * rng.weibull(shape, n)
    cens = rng.uniform(0.0, censor_max, n)
    return life[life <= cens], cens[life > cens]


def _reliability_module():
    """reliability.Fitters imported through the adapter (numpy state restored)."""
    return _fitters()


# --- complete data: scipy's fitter ---------------------------------------------------------
def test_weibull_2p_complete_matches_scipy_fit() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(11))
    t = 25_000.0 * rng.weibull(1.4, 60)
    res = fit_records(CensoredSample.from_arrays(t), models=("weibull_2p",))
    c, loc, scale = stats.weibull_min.fit(t, floc=0)  # scipy reference
    best = res.best.distribution
    assert loc == 0
    assert_allclose(best.shape, c, rtol=2e-4)
    assert_allclose(best.scale_h, scale, rtol=2e-4)
    own = fit_weibull(CensoredSample.from_arrays(t))  # fleetsim's own maximiser
    assert_allclose(own.params["shape"], c, rtol=1e-6)
    assert_allclose(own.params["scale_h"], scale, rtol=1e-6)


def test_ball_bearing_data_published_estimates() -> None:
    # Lawless, example 5.2.1 (from memory): extreme-value MLEs u = 4.405, b = 0.476,
    # i.e. Weibull scale exp(u) and shape 1/b; lognormal MLEs mu = 4.150, sigma = 0.522.
    sample = CensoredSample.from_arrays(BALL_BEARINGS_MREV)
    res = fit_records(sample, models=("weibull_2p", "lognormal_2p"))
    w = res.candidate("weibull_2p").distribution
    ln = res.candidate("lognormal_2p").distribution
    assert abs(math.log(w.scale_h) - 4.405) < 0.0006
    assert abs(1.0 / w.shape - 0.476) < 0.0006
    assert abs(math.log(ln.scale_h) - 4.150) < 0.0006
    assert abs(ln.shape - 0.522) < 0.0006


# --- right censoring: a direct maximisation written here, and scipy's CensoredData ------------
def _direct_censored_weibull_mle(f: np.ndarray, s: np.ndarray) -> tuple[float, float]:
    """Maximise sum ln f(failures) + sum ln R(suspensions) with scipy.stats densities."""

    def neg(p: np.ndarray) -> float:
        c, scale = np.exp(p)
        return -(
            stats.weibull_min.logpdf(f, c, scale=scale).sum()
            + stats.weibull_min.logsf(s, c, scale=scale).sum()
        )

    x0 = np.log([1.0, np.mean(np.concatenate([f, s]))])
    r = optimize.minimize(neg, x0, method="Nelder-Mead", options={"xatol": 1e-10, "fatol": 1e-12})
    return float(np.exp(r.x[0])), float(np.exp(r.x[1]))


def test_weibull_2p_right_censored_matches_direct_maximisation() -> None:
    f, s = _censored_weibull(21, 120, 1.6, 30_000.0, 50_000.0)
    res = fit_records(CensoredSample.from_arrays(f, s), models=("weibull_2p",))
    c_ref, scale_ref = _direct_censored_weibull_mle(f, s)
    d = res.best.distribution
    assert "reliability" in res.best.method  # right-censored data go through the package
    assert_allclose(d.shape, c_ref, rtol=5e-4)
    assert_allclose(d.scale_h, scale_ref, rtol=5e-4)
    # scipy's own censored fitter agrees as well
    c2, _, scale2 = stats.weibull_min.fit(stats.CensoredData(uncensored=f, right=s), floc=0)
    assert_allclose(d.shape, c2, rtol=5e-4)
    assert_allclose(d.scale_h, scale2, rtol=5e-4)


def test_lognormal_right_censored_matches_scipy() -> None:
    f, s = _censored_weibull(22, 150, 1.3, 20_000.0, 40_000.0)
    res = fit_records(CensoredSample.from_arrays(f, s), models=("lognormal_2p",))
    sig, _, scale = stats.lognorm.fit(stats.CensoredData(uncensored=f, right=s), floc=0)
    d = res.best.distribution
    assert_allclose(d.shape, sig, rtol=5e-4)
    assert_allclose(d.scale_h, scale, rtol=5e-4)


def test_own_standard_errors_match_reliability_package() -> None:
    # fleetsim's observed information (central differences) against the package's
    # autograd Hessian on the same right-censored data.
    f, s = _censored_weibull(23, 200, 1.5, 40_000.0, 60_000.0)
    own = fit_weibull(CensoredSample.from_arrays(f, s))
    with np.errstate(all="ignore"):
        ref = _reliability_module().Fit_Weibull_2P(
            failures=f, right_censored=s, show_probability_plot=False, print_results=False
        )
    assert_allclose(own.params["scale_h"], ref.alpha, rtol=1e-4)
    assert_allclose(own.params["shape"], ref.beta, rtol=1e-4)
    assert_allclose(math.sqrt(own.covariance[0, 0]), ref.alpha_SE, rtol=2e-3)
    assert_allclose(math.sqrt(own.covariance[1, 1]), ref.beta_SE, rtol=2e-3)
    assert_allclose(own.covariance[0, 1], ref.Cov_alpha_beta, rtol=5e-3)
    own_ln = fit_lognormal(CensoredSample.from_arrays(f, s))
    with np.errstate(all="ignore"):
        ref_ln = _reliability_module().Fit_Lognormal_2P(
            failures=f, right_censored=s, show_probability_plot=False, print_results=False
        )
    assert_allclose(own_ln.params["mu"], ref_ln.mu, rtol=1e-5)
    assert_allclose(own_ln.params["sigma"], ref_ln.sigma, rtol=1e-4)
    assert_allclose(math.sqrt(own_ln.covariance[1, 1]), ref_ln.sigma_SE, rtol=2e-3)


@pytest.mark.parametrize("model", ["weibull_2p", "lognormal_2p"])
def test_b_life_bounds_match_reliability_quantile_bounds(model: str) -> None:
    # The package's quantile table (Fisher-matrix bounds on time) for the same fit.
    f, s = _censored_weibull(24, 150, 1.4, 30_000.0, 50_000.0)
    res = fit_records(CensoredSample.from_arrays(f, s), confidence=0.90, models=(model,))
    name = "Fit_Weibull_2P" if model == "weibull_2p" else "Fit_Lognormal_2P"
    with np.errstate(all="ignore"):
        ref = getattr(_reliability_module(), name)(
            failures=f, right_censored=s, show_probability_plot=False, print_results=False,
            CI=0.90, quantiles=[0.01, 0.10],
        )  # fmt: skip
    q = ref.quantiles
    for i, pc in enumerate((1, 10)):
        b = res.best.b_life(pc)
        assert_allclose(b.estimate, q["Point Estimate"][i], rtol=1e-4)
        assert_allclose(b.lower, q["Lower Estimate"][i], rtol=2e-3)
        assert_allclose(b.upper, q["Upper Estimate"][i], rtol=2e-3)


# --- interval censoring: scipy's CensoredData ----------------------------------------------
def test_interval_censored_fits_match_scipy() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(31))
    life = 30_000.0 * rng.weibull(1.5, 200)
    cens = rng.uniform(0.0, 60_000.0, 200)
    failed = life <= cens
    exact = failed & (rng.random(200) < 0.4)
    found = failed & ~exact
    lo = np.floor(life / 2_000.0) * 2_000.0  # monthly-ish route, found at the next visit
    hi = lo + 2_000.0
    sample = CensoredSample(life[exact], cens[~failed], lo[found], hi[found])
    res = fit_records(sample, models=("weibull_2p", "lognormal_2p"))
    data = stats.CensoredData(
        uncensored=life[exact], right=cens[~failed], interval=np.column_stack([lo[found], hi[found]])
    )
    with warnings.catch_warnings(), np.errstate(all="ignore"):
        warnings.simplefilter("ignore", RuntimeWarning)
        c, _, scale = stats.weibull_min.fit(data, floc=0)  # scipy reference
        sig, _, med = stats.lognorm.fit(data, floc=0)
    w = res.candidate("weibull_2p")
    assert "fleetsim" in w.method
    assert_allclose(w.distribution.shape, c, rtol=5e-4)
    assert_allclose(w.distribution.scale_h, scale, rtol=5e-4)
    ln = res.candidate("lognormal_2p").distribution
    assert_allclose(ln.shape, sig, rtol=5e-4)
    assert_allclose(ln.scale_h, med, rtol=5e-4)


# --- three-parameter Weibull against the package ----------------------------------------------
def test_weibull_3p_agrees_with_reliability_package_when_identified() -> None:
    rng = np.random.default_rng(np.random.SeedSequence(41))
    t = 6_000.0 + 15_000.0 * rng.weibull(1.6, 200)  # complete data, clear location
    fit, prof = fit_weibull_3p(CensoredSample.from_arrays(t))
    with np.errstate(all="ignore"):
        ref = _reliability_module().Fit_Weibull_3P(
            failures=t, show_probability_plot=False, print_results=False
        )
    assert prof.identifiable
    # our profile maximum is at least as high as the package's joint maximum
    assert fit.log_likelihood >= ref.loglik - 1e-6
    assert_allclose(fit.params["location_h"], ref.gamma, rtol=2e-3)
    assert_allclose(fit.params["shape"], ref.beta, rtol=5e-3)
    assert_allclose(fit.params["scale_h"], ref.alpha, rtol=5e-3)


# --- plotting positions -----------------------------------------------------------------------
def test_plotting_positions_small_hand_example() -> None:
    # Johnson's adjusted ranks by hand: F 10, S 20, F 30 (n = 3):
    # first failure rank 1 (increment 4/4); second: 1 + (4 - 1)/(1 + 1) = 2.5.
    # Bernard: (j - 0.3)/(n + 0.4).
    t, f, _ = plotting_positions(CensoredSample.from_arrays([10.0, 30.0], [20.0]))
    assert_allclose(t, [10.0, 30.0])
    assert_allclose(f, [(1 - 0.3) / 3.4, (2.5 - 0.3) / 3.4], rtol=1e-12)


def test_plotting_positions_match_reliability_package() -> None:
    f, s = _censored_weibull(51, 80, 1.3, 10_000.0, 15_000.0)
    s = np.concatenate([[1.0, 2.0], s])  # suspensions before the first failure too
    t, frac, _ = plotting_positions(CensoredSample.from_arrays(f, s))
    _reliability_module()  # first import through the adapter, which undoes its side effects
    from reliability.Probability_plotting import plotting_positions as ref_pp

    with np.errstate(all="ignore"):
        x_ref, y_ref = ref_pp(failures=f, right_censored=s, sort=True)
    assert_allclose(t, x_ref)
    assert_allclose(frac, y_ref, rtol=1e-12)
